"""The Parquet reader reads only the mapped columns and pushes the units the spec uses down to
the row groups (pyarrow.dataset: Dataset.scanner(columns=..., filter=...) and
ParquetFileFragment.split_by_row_group(filter), pyarrow docs "Tabular Datasets")."""

import pandas as pd
import pytest

from figspec.data.readers import load_source
from figspec.spec.sources import ParquetSource

from helpers import SPECS

pq = pytest.importorskip("pyarrow.parquet")
ds = pytest.importorskip("pyarrow.dataset")


def test_only_mapped_columns_and_used_units_are_read(tmp_path, monkeypatch):
    spikes = pd.read_csv(SPECS / "data" / "spikes.csv").assign(waveform_id=7)      # a column nobody maps
    spikes.sort_values("unit").to_parquet(tmp_path / "s.parquet", row_group_size=500, index=False)
    pd.read_csv(SPECS / "data" / "trials.csv").to_parquet(tmp_path / "t.parquet", index=False)
    src = ParquetSource.model_validate({"format": "parquet", "spikes": "s.parquet", "trials": "t.parquet",
                                        "clock": "session", "spike_columns": {"time": "time_s"},
                                        "trial_columns": {"level": "level_db", "onset": "onset_s"}})
    from figspec.data import parquet_source

    calls = []
    real = parquet_source.scanner
    monkeypatch.setattr(parquet_source, "scanner", lambda *args: calls.append(args) or real(*args))
    rec = load_source(src, tmp_path, ("sources", "p"), units={"u2"})
    assert calls[0][1:] == (["time_s", "trial", "unit"], "unit", ["u2"])
    assert rec.units == ("u2",) and rec.n_spikes == int((spikes["unit"] == "u2").sum())
    assert set(rec.unread_units) <= {"u1", "u3"}     # names met in the row groups read, for messages
    [fragment] = ds.dataset(tmp_path / "s.parquet").get_fragments()
    kept = fragment.split_by_row_group(ds.field("unit").isin(["u2"]))
    assert 0 < len(kept) < fragment.num_row_groups
    # the filter lets pyarrow skip the row groups whose statistics exclude u2
    groups = pq.ParquetFile(tmp_path / "s.parquet").metadata
    holding = sum(groups.row_group(i).column(0).statistics.min <= "u2" <= groups.row_group(i).column(0).statistics.max
                  for i in range(groups.num_row_groups))
    assert holding < groups.num_row_groups
