import numpy as np
import pytest
from scipy import stats
from scipy.ndimage import gaussian_filter1d


from helpers import build_recording, panel, compute_panel


def recording(rng, units=("u1",), n=30):
    trials, spikes = [], []
    for i in range(n):
        trials.append((i, 50, float(i), float(i) + 0.05))
        for u in units:
            for t in rng.uniform(-0.05, 0.15, rng.poisson(6)):
                spikes.append((u, i, i + t))
    return build_recording(spikes, trials)


def test_z_score_uses_pre_stimulus_bins(rng):
    rec = recording(rng)
    rate = compute_panel(rec, panel("psth", bin_ms=10))["rate"].to_numpy()
    z = compute_panel(rec, panel("psth", bin_ms=10, measure="z_score"))["rate"].to_numpy()
    base = rate[:5]                                           # bins [-50, 0)
    assert z == pytest.approx((rate - base.mean()) / base.std(ddof=1))


def test_gaussian_smoothing_of_the_rate_equals_scipy(rng):
    # reference: scipy.ndimage.gaussian_filter1d (mode='reflect') applied to the unsmoothed rate
    rec = recording(rng)
    raw = compute_panel(rec, panel("psth", bin_ms=2))["rate"].to_numpy()
    smooth = compute_panel(rec, panel("psth", bin_ms=2, smooth="gaussian", kernel_ms=5))["rate"].to_numpy()
    np.testing.assert_allclose(smooth, gaussian_filter1d(raw, 2.5, mode="reflect"), rtol=1e-12)


def test_population_is_mean_and_sem_across_units(rng):
    rec = recording(rng, units=("u1", "u2", "u3"))
    p = panel("psth", bin_ms=10, unit=None, units=["u1", "u2", "u3"])
    pop = compute_panel(rec, p)
    singles = np.vstack([compute_panel(rec, panel("psth", bin_ms=10, unit=u))["rate"] for u in ("u1", "u2", "u3")])
    assert pop["rate"].to_numpy() == pytest.approx(singles.mean(axis=0))
    assert pop["rate_sem"].to_numpy() == pytest.approx(stats.sem(singles, axis=0))   # scipy.stats.sem, ddof=1
    assert set(pop["n_units"]) == {3} and pop["unit"].iloc[0] == "mean of u1, u2, u3"


def test_auto_bin_width_is_reported_in_the_edges(rng):
    trials, spikes = [], []
    for i in range(300):
        trials.append((i, 50, float(i), float(i) + 0.05))
        times = np.r_[rng.uniform(-0.05, 0.15, rng.poisson(3)), rng.normal(0.02, 0.004, rng.poisson(5))]
        spikes += [("u1", i, i + t) for t in times]
    table = compute_panel(build_recording(spikes, trials), panel("psth", bin_ms="auto"))
    widths = (table["bin_stop_ms"] - table["bin_start_ms"]).round(9).unique()
    assert len(widths) == 1 and 1.0 <= widths[0] <= 50.0


@pytest.mark.parametrize("how", ["peak", "baseline"])
def test_a_normalised_population_divides_each_unit_by_its_own_rate_first(tmp_path, how):
    """The population mean of normalised rates equals the mean of each unit's rates divided by
    that unit's own peak (or baseline mean), computed here with pandas from the per-unit table."""
    from figspec import pipeline
    from helpers import demo_text, figspec_warnings, write_spec

    text = demo_text("level_summary")
    population = text.replace('name = "population"', 'name = "population"\nnormalise = "%s"' % how)
    per_unit = population.replace('normalise = "%s"' % how, 'normalise = "none"\nrepeat = "unit"\narrange = "overlay"')
    tables = {}
    for name, body in (("norm", population), ("raw", per_unit)):
        with figspec_warnings():                              # the demo's poorly constrained fits say so
            resolved = pipeline.check(write_spec(tmp_path, body, f"{name}.toml"))
            tables[name] = pipeline.compute(resolved).panels["population"]
    raw = tables["raw"]
    if how == "peak":
        divisor = raw.groupby("unit")["rate"].transform("max")
    else:
        before = raw["bin_stop_ms"] <= 0
        divisor = raw["unit"].map(raw[before].groupby("unit")["rate"].mean())
    expected = (raw.assign(rate=raw["rate"] / divisor).groupby(["level", "bin_start_ms"])["rate"].mean())
    got = tables["norm"].set_index(["level", "bin_start_ms"])["rate"]
    np.testing.assert_allclose(got.loc[expected.index].to_numpy(), expected.to_numpy(), rtol=1e-12)
    assert tables["norm"]["rate_unit"].iloc[0] == f"x unit's {how}"
