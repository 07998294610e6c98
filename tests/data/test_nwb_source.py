"""The NWB reader: lazy per-unit slices of the units table's ragged spike times, the trial key
from any trials-table column, and each trial's extent from start/stop or extent_ms. Files are
written by pynwb (the NWB reference API) and compared with what pynwb reads back."""

from datetime import datetime, timezone

import numpy as np
import pytest

from figspec.data.readers import load_source
from figspec.spec.sources import NwbSource

pynwb = pytest.importorskip("pynwb")
h5py = pytest.importorskip("h5py")

UNITS = {"a": [0.105, 0.130, 0.61, 0.70], "b": [0.12, 0.66], "c": [0.2, 0.3, 0.4, 0.9, 0.95, 1.1]}


@pytest.fixture
def nwb_file(tmp_path):
    nwb = pynwb.NWBFile(session_description="figspec NWB reader test", identifier="reader",
                        session_start_time=datetime(2026, 1, 1, tzinfo=timezone.utc))
    for column in ("level", "onset", "block_trial"):
        nwb.add_trial_column(name=column, description=column)
    for i, (start, level) in enumerate([(0.0, 10.0), (0.5, 20.0)]):
        nwb.add_trial(start_time=start, stop_time=start + 0.5, level=level, onset=start + 0.1, block_trial=f"b{i + 7}")
    nwb.add_unit_column(name="unit_name", description="unit name")
    for name, times in UNITS.items():
        nwb.add_unit(spike_times=times, unit_name=name)
    path = tmp_path / "s.nwb"
    with pynwb.NWBHDF5IO(str(path), "w") as io:
        io.write(nwb)
    return path


def source(**extra):
    columns = {"level": "level", "onset": "onset", **extra.pop("trial_columns", {})}
    return NwbSource.model_validate({"format": "nwb", "file": "s.nwb", "unit_names": "unit_name",
                                     "trial_columns": columns, **extra})


def test_only_the_units_used_are_read_one_slice_each(nwb_file, monkeypatch):
    from h5py._hl.dataset import Dataset

    read = []
    real = Dataset.__getitem__
    monkeypatch.setattr(Dataset, "__getitem__",
                        lambda self, key: read.append((self.name, np.size(real(self, key)))) or real(self, key))
    rec = load_source(source(), nwb_file.parent, ("sources", "n"), units={"b"})
    assert rec.units == ("b",) and rec.n_spikes == 2
    assert sum(n for name, n in read if name.endswith("/spike_times")) == len(UNITS["b"])
    # what pynwb itself reads back for unit b (the reference)
    with pynwb.NWBHDF5IO(str(nwb_file), "r") as io:
        expected = io.read().units["spike_times"][1]
    assert sorted(rec.ticks.tolist()) == sorted(np.rint((np.asarray(expected) - [0.1, 0.6]) * 1e6).astype(int).tolist())
    assert set(rec.all_units) == {"a", "b", "c"}


def test_the_trial_key_from_any_trials_column(nwb_file):
    rec = load_source(source(trial_columns={"trial": "block_trial"}), nwb_file.parent, ("sources", "n"))
    assert rec.trials["trial"].tolist() == ["b7", "b8"]


def test_extent_from_extent_ms_without_a_stop_column(nwb_file):
    # each trial is taken to span onset - 100 ms to onset + 300 ms: spikes of unit a at 0.61 s (trial 2,
    # 10 ms after its onset) and 0.70 s are inside, as is 0.105 s; with start/stop the same spikes fall so too
    by_extent = load_source(source(trial_columns={"stop": ""}, extent_ms=[-100, 300]), nwb_file.parent,
                            ("sources", "n"), units={"a"})
    by_stop = load_source(source(), nwb_file.parent, ("sources", "n"), units={"a"})
    assert by_extent.ticks.tolist() == by_stop.ticks.tolist() == [5_000, 30_000, 10_000, 100_000]
    assert by_extent.trials["extent_hi_ms"].tolist() == [300.0, 300.0]


def test_no_stop_and_no_extent_is_refused():
    from pydantic import ValidationError

    with pytest.raises(ValidationError, match="set extent_ms"):
        source(trial_columns={"stop": ""})
