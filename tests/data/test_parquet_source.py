"""The Parquet reader reads only the mapped columns and pushes the units the spec uses down to
the row groups (pyarrow.parquet.read_table(columns=..., filters=...), pyarrow docs)."""

import pandas as pd
import pytest

from figspec.data.readers import load_source
from figspec.spec.sources import ParquetSource

from helpers import SPECS

pq = pytest.importorskip("pyarrow.parquet")


def test_only_mapped_columns_and_used_units_are_read(tmp_path, monkeypatch):
    spikes = pd.read_csv(SPECS / "data" / "spikes.csv").assign(waveform_id=7)      # a column nobody maps
    spikes.sort_values("unit").to_parquet(tmp_path / "s.parquet", row_group_size=500, index=False)
    pd.read_csv(SPECS / "data" / "trials.csv").to_parquet(tmp_path / "t.parquet", index=False)
    src = ParquetSource.model_validate({"format": "parquet", "spikes": "s.parquet", "trials": "t.parquet",
                                        "clock": "session", "spike_columns": {"time": "time_s"},
                                        "trial_columns": {"level": "level_db", "onset": "onset_s"}})
    calls = []
    real = pq.read_table
    monkeypatch.setattr(pq, "read_table", lambda path, **kw: calls.append(kw) or real(path, **kw))
    rec = load_source(src, tmp_path, ("sources", "p"), units={"u2"})
    assert calls[0]["columns"] == ["time_s", "trial", "unit"] and calls[0]["filters"] == [("unit", "in", ["u2"])]
    assert rec.units == ("u2",) and rec.n_spikes == int((spikes["unit"] == "u2").sum())
    # the filter lets pyarrow skip the row groups whose statistics exclude u2
    groups = pq.ParquetFile(tmp_path / "s.parquet").metadata
    holding = sum(groups.row_group(i).column(0).statistics.min <= "u2" <= groups.row_group(i).column(0).statistics.max
                  for i in range(groups.num_row_groups))
    assert holding < groups.num_row_groups
