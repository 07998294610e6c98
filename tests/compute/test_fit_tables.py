import numpy as np
import pytest

from figspec import pipeline
from figspec.compute import latency, level_response
from figspec.errors import FigspecWarning
from figspec.spec.models import LevelSpec
from figspec.spec.panels import LatencyPanel, LevelResponsePanel

from helpers import SPECS

DB = LevelSpec(unit="dB SPL", scale="pressure_db")


@pytest.fixture(scope="module")
def demo():
    return pipeline.resolve(pipeline.load(SPECS / "level_summary.toml")).recordings["midbrain"]


def test_demo_level_response_tables(demo):
    panel = LevelResponsePanel.model_validate({"name": "r", "kind": "level_response", "units": ["u1", "u3"],
                                               "response_ms": [0, 60], "baseline_ms": [-60, 0],
                                               "fit": "naka_rushton"})
    tables = level_response.compute(demo, panel, DB)
    points, curve, params = tables["points"], tables["fit"], tables["params"]
    assert len(points) == 2 * 9 and set(points["n_trials"]) == {30}
    assert set(curve["unit"]) == {"u1", "u3"} and len(curve) == 2 * 200
    p = params.set_index(["unit", "quantity"])
    for unit in ("u1", "u3"):
        assert p.loc[(unit, "status"), "note"] == "ok"
        n = p.loc[(unit, "n"), "value"]
        assert p.loc[(unit, "dynamic_range"), "value"] == pytest.approx(20 * np.log10(81) / n)
        assert p.loc[(unit, "L50"), "ci_low"] < p.loc[(unit, "L50"), "value"] < p.loc[(unit, "L50"), "ci_high"]
        significant = points[(points["unit"] == unit) & points["significant"]]["level"]
        assert p.loc[(unit, "threshold_by_test"), "value"] == significant.min()


def test_failed_fit_warns_and_leaves_no_curve(demo):
    panel = LatencyPanel.model_validate({"name": "l", "kind": "latency", "unit": "u1", "levels": [60, 70, 80],
                                         "fit": "pieron"})
    with pytest.warns(FigspecWarning, match="Piéron fit failed: 3 levels for 3 parameters"):
        tables = latency.compute(demo, panel, DB)
    assert tables["fit"].empty
    assert tables["params"].set_index("quantity").loc["status", "note"].startswith("failed")
    assert len(tables["points"]) == 3
