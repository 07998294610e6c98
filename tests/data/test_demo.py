import pandas as pd
import pandas.testing as pdt
import pytest

from figspec.demo import generate, write_all

from helpers import SPECS

CSV_FILES = ["spikes.csv", "trials.csv", "sorted_spikes.csv", "level_spikes.csv", "level_trials.csv",
             "day2_spikes.csv", "day2_trials.csv", "pressure_trials.csv"]


@pytest.fixture(scope="module")
def regenerated(tmp_path_factory):
    folder = tmp_path_factory.mktemp("demo")
    write_all(folder)
    return folder


@pytest.mark.parametrize("name", CSV_FILES)
def test_committed_demo_files_are_what_the_generator_writes(regenerated, name):
    assert (regenerated / name).read_bytes() == (SPECS / "data" / name).read_bytes()


def test_committed_parquet_and_nwb_hold_the_same_recording(regenerated):
    spikes = pd.read_csv(SPECS / "data" / "spikes.csv")
    pdt.assert_frame_equal(pd.read_parquet(SPECS / "data" / "spikes.parquet"), spikes, check_dtype=False)
    pynwb = pytest.importorskip("pynwb")
    with pynwb.NWBHDF5IO(str(SPECS / "data" / "session.nwb"), "r") as io:
        nwb = io.read()
        names = list(nwb.units["unit_name"].data[:])
        counts = pd.Series(nwb.units.spike_times_index.data[:]).diff().fillna(nwb.units.spike_times_index.data[0])
        assert names == ["u1", "u2", "u3"]
        assert counts.astype(int).tolist() == spikes.groupby("unit").size().tolist()
        assert len(nwb.trials) == 270


def test_demo_has_low_level_trials_without_spikes():
    spikes, trials = generate()
    rel = spikes.merge(trials, on="trial")
    counted = rel.groupby(["unit", "trial"]).size()
    quiet = trials[trials["level_db"] == 0]["trial"]
    silent = [t for t in quiet if ("u3", t) not in counted.index]
    assert len(silent) > 0
