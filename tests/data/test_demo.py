import pandas as pd
import pandas.testing as pdt

from figspec.demo import generate

from helpers import SPECS


def test_committed_demo_data_is_what_the_generator_makes():
    spikes, trials = generate()
    pdt.assert_frame_equal(trials, pd.read_csv(SPECS / "data" / "trials.csv"), check_dtype=False)
    pdt.assert_frame_equal(spikes, pd.read_csv(SPECS / "data" / "spikes.csv"), check_dtype=False)


def test_demo_has_low_level_trials_without_spikes():
    spikes, trials = generate()
    rel = spikes.merge(trials, on="trial")
    counted = rel.groupby(["unit", "trial"]).size()
    quiet = trials[trials["level_db"] == 0]["trial"]
    silent = [t for t in quiet if ("u3", t) not in counted.index]
    assert len(silent) > 0
