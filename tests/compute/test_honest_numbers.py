"""The numbers under a figure do not depend on how the data happen to be laid out, and say so
when they cannot be trusted."""

import io

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from figspec.compute.fit_tables import UnitPoints, fit_unit
from figspec.data.assemble import Layout, assemble
from figspec.output.files import table_bytes
from figspec.spec.models import LevelSpec
from figspec.spec.panels import LatencyPanel, LevelResponsePanel

from helpers import compute_panel

# generated spike trains often repeat one time many times: the warning about repeated spike rows
# is figspec working as it should, not what these tests are about
pytestmark = pytest.mark.filterwarnings("ignore:.*spike rows repeat another row")


def recording(rng, units=("u1", "u2"), order=None):
    """Two units, 3 levels x 15 trials on a trial clock (presentation order = row order)."""
    trials = pd.DataFrame({"key0": np.arange(45), "level": np.repeat([10.0, 40.0, 70.0], 15),
                           "onset": 100.0, "stop": 600.0})
    rows = []
    for u, gain in zip(units, (1.0, 0.6)):
        for t, lv in zip(trials["key0"], trials["level"]):
            k = rng.poisson(1 + gain * lv / 10)
            rows += [(u, t, 100.0 + x) for x in rng.uniform(-50, 60, k)]
    spikes = pd.DataFrame(rows, columns=["unit", "key0", "time"])
    if order is not None:
        trials = trials.iloc[order].reset_index(drop=True)
    layout = Layout(where="test", locs={}, time_unit="ms", clock="trial")
    return assemble(spikes, trials, layout)


PANELS = [LatencyPanel.model_validate({"name": "l", "kind": "latency", "unit": "u1", "resamples": 300}),
          LevelResponsePanel.model_validate({"name": "r", "kind": "level_response", "unit": "u1",
                                             "error": "bootstrap", "resamples": 300})]


@settings(max_examples=15, deadline=None)
@given(st.permutations(list(range(45))))
def test_bootstrap_intervals_do_not_depend_on_the_order_of_trial_rows(order):
    # on a trial clock the rows' order is the presentation order: the raster changes, the intervals may not
    plain = recording(np.random.default_rng(1))
    shuffled = recording(np.random.default_rng(1), order=np.asarray(order))
    for panel in PANELS:
        a, b = compute_panel(plain, panel)["points"], compute_panel(shuffled, panel)["points"]
        pd.testing.assert_frame_equal(a, b)


@settings(max_examples=10, deadline=None)
@given(st.integers(0, 10_000))
def test_a_units_intervals_do_not_depend_on_the_other_units_in_the_panel(seed):
    rec = recording(np.random.default_rng(seed))
    for panel in PANELS:
        alone = compute_panel(rec, panel)["points"]
        together = compute_panel(rec, panel.model_copy(update={"unit": None, "units": ["u2", "u1"]}))["points"]
        pd.testing.assert_frame_equal(alone.reset_index(drop=True),
                                      together[together["unit"] == "u1"].reset_index(drop=True), check_like=True)


def test_pieron_leaves_out_a_level_of_0_on_a_linear_scale_and_says_so(rng):
    trials = pd.DataFrame({"key0": np.arange(60), "level": np.repeat([0.0, 10.0, 30.0, 60.0, 100.0], 12)})
    rows = [("u", t, 20 + 200 / max(lv, 1) ** 0.8 + rng.normal(0, 1)) for t, lv in zip(trials["key0"], trials["level"])
            for _ in range(3)]
    rec = assemble(pd.DataFrame(rows, columns=["unit", "key0", "time"]), trials, Layout(where="t", locs={}, time_unit="ms"))
    panel = LatencyPanel.model_validate({"name": "l", "kind": "latency", "unit": "u", "fit": "pieron",
                                         "response_ms": [0, 300], "baseline_ms": [-50, 0], "fit_levels": "all"})
    tables = compute_panel(rec, panel, LevelSpec(unit="%", scale="linear"))
    zero = tables["points"].set_index("level").loc[0.0]
    assert not zero["in_fit"] and "level <= 0 on its linear scale" in zero["note"]
    assert tables["params"].set_index("quantity").loc["status", "note"].split(":")[0] in ("ok", "poorly constrained")


def test_a_curve_that_describes_the_points_poorly_is_not_ok():
    levels = np.arange(0.0, 81.0, 10.0)
    noise = np.array([30.0, 5, 40, 2, 35, 8, 45, 3, 38])                     # no level dependence at all
    data = UnitPoints(levels, [np.full(10, v) + np.arange(10) % 3 for v in noise], noise + 1, np.mean, np.full(9, 0.1))
    result, _ = fit_unit("naka_rushton", data, "pressure_db", 0.95, 100, 0, "u")
    assert result.status == "poorly constrained" and any("R^2" in r or "bound" in r for r in result.reasons)


def test_a_threshold_baseline_of_fewer_than_two_bins_is_refused():
    with pytest.raises(ValueError, match="at least two bins"):
        LatencyPanel.model_validate({"name": "l", "kind": "latency", "method": "threshold", "bin_ms": 5,
                                     "baseline_ms": [-8, 0]})


def test_source_data_round_trip_exactly():
    values = pd.DataFrame({"x": [0.1 + 0.2, 1 / 3, 2.0 ** -40, 123456789.123456789, np.nan]})
    back = pd.read_csv(io.BytesIO(table_bytes(values)))
    assert back["x"].tolist()[:4] == values["x"].tolist()[:4] and np.isnan(back["x"].iloc[4])
