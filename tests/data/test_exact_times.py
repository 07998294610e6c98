"""Times written as exact decimals, in s or ms, on any clock, bin exactly as integer arithmetic
says: a spike on an edge belongs to the bin that starts there (Hypothesis)."""

import numpy as np
import pandas as pd
from hypothesis import given, settings
from hypothesis import strategies as st

from figspec.compute.selection import select
from figspec.compute.trial_counts import level_bin_counts
from figspec.data.assemble import Layout, assemble
import pytest

# generated spike trains often repeat one time many times: the warning about repeated spike rows
# is figspec working as it should, not what these tests are about
pytestmark = pytest.mark.filterwarnings("ignore:.*spike rows repeat another row")

BIN_US = 5000
EDGES_MS = np.arange(-50, 151, 5, dtype=float)


def written(us: int, unit: str) -> str:
    return f"{us / 1e6:.6f}" if unit == "s" else f"{us / 1e3:.3f}"


@settings(max_examples=60, deadline=None)
@given(st.lists(st.integers(-50_000, 149_999).map(lambda v: v if v % 3 else v // BIN_US * BIN_US),
                min_size=1, max_size=40),
       st.integers(0, 10 ** 12), st.sampled_from(["s", "ms"]), st.sampled_from(["aligned", "trial", "session"]))
def test_exact_decimal_times_bin_as_integer_arithmetic(rel_us, onset_us, unit, clock):
    # on a trial clock the trial starts at 0, so the onset comes at least 50 ms after it
    onset = {"aligned": 0, "trial": 50_000 + onset_us % 10 ** 6, "session": onset_us}[clock]
    spikes = pd.DataFrame({"unit": "u", "key0": "1", "time": [written(onset + r, unit) for r in rel_us]})
    trials = pd.DataFrame({"key0": ["1"], "level": [10.0]})
    if clock != "aligned":
        trials["onset"] = [written(onset, unit)]
    locs = {}
    layout = Layout(where="test", locs=locs, time_unit=unit, clock=clock)
    rec = assemble(spikes, trials, layout)
    counts = level_bin_counts(select(rec, "u", (-50, 150)), EDGES_MS)[0]
    expected = np.bincount((np.asarray(rel_us) + 50_000) // BIN_US, minlength=EDGES_MS.size - 1)
    np.testing.assert_array_equal(counts, expected)
