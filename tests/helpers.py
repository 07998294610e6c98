"""Helpers shared by the tests: paths, small recordings, spec files."""

from __future__ import annotations

import contextlib
from pathlib import Path

import pandas as pd

ROOT = Path(__file__).resolve().parents[1]
SPECS = ROOT / "specs"
DEMO_SPEC = SPECS / "level_grid.toml"


def build_recording(spikes: list[tuple], trials: list[tuple], time_unit: str = "s"):
    """A recording from ``spikes`` = [(unit, trial, time)] and ``trials`` = [(trial, level, onset,
    offset)] on one session clock, through the same assembly every source uses."""
    from figspec.data.assemble import Layout, assemble

    spike_frame = pd.DataFrame(spikes, columns=["unit", "key0", "time"]).astype({"unit": str})
    trial_frame = pd.DataFrame(trials, columns=["key0", "level", "onset", "offset"])
    locs = {k: ("sources", "t", k) for k in ("unit", "key0", "time", "level", "onset", "offset")}
    return assemble(spike_frame, trial_frame, Layout(where="test", locs=locs, time_unit=time_unit, clock="session"))


def panel(kind: str, **keys):
    """A validated panel model of ``kind`` with test defaults."""
    from figspec.spec.panels import PsthPanel, RasterPanel

    model = {"raster": RasterPanel, "psth": PsthPanel}[kind]
    return model.model_validate({"name": "p", "kind": kind, "unit": "u1", **keys})


HOUSE_STYLE = ROOT / "styles" / "house.toml"


def demo_text(name: str) -> str:
    """A demo spec's text with its data and house style named by absolute path, so the spec
    can be written anywhere (a tmp folder) and still find them."""
    text = (SPECS / f"{name}.toml").read_text()
    return text.replace('"data/', f'"{SPECS / "data"}/').replace('style = "house"', f'style = "{HOUSE_STYLE}"')


def copy_project(folder: Path) -> Path:
    """Copy the demo specs and the house style beside them (the project layout), return specs/."""
    import shutil

    shutil.copytree(SPECS, folder / "specs")
    shutil.copytree(ROOT / "styles", folder / "styles")
    return folder / "specs"


def write_spec(folder: Path, text: str, name: str = "spec.toml") -> Path:
    """Write a spec file; ``@DATA@`` is replaced by the demo data folder."""
    path = folder / name
    path.write_text(text.replace("@DATA@", str(SPECS / "data")), encoding="utf-8")
    return path


MINIMAL_SPEC = """\
[figure]
title = "t"
width_mm = 100
height_mm = 120

[stimulus]
per_trial = true

[sources.demo]
spikes = "@DATA@/spikes.csv"
trials = "@DATA@/trials.csv"
spike_columns = { unit = "unit", trial = "trial", time = "time_s" }
clock = "session"
trial_columns = { trial = "trial", level = "level_db", onset = "onset_s", offset = "offset_s", start = "start_s", stop = "stop_s" }

[[panels]]
name = "spikes"
kind = "raster"
unit = "u2"

[[panels]]
name = "rate"
kind = "psth"
unit = "u2"
bin_ms = 10
"""


# the demo recording as one source, for specs written in tests (@DATA@ is the demo data folder)
DEMO_SOURCE = """[sources.demo]
spikes = "@DATA@/spikes.csv"
trials = "@DATA@/trials.csv"
clock = "session"
spike_columns = { unit = "unit", trial = "trial", time = "time_s" }
trial_columns = { trial = "trial", level = "level_db", onset = "onset_s", offset = "offset_s", start = "start_s", stop = "stop_s" }
"""


def level_head(width_mm: int = 183, height_mm: int = 90) -> str:
    """A spec's head for tests of level-dependent kinds: figure, levels as dB SPL with their
    pressure scale, per-trial stimuli, and 0-60 ms response and -60-0 ms baseline windows."""
    return f"""
[figure]
title = "t"
width_mm = {width_mm}
height_mm = {height_mm}

[levels]
quantity = "Sound level"
unit = "dB SPL"
scale = "pressure_db"

[stimulus]
per_trial = true

[analysis]
response_ms = [0, 60]
baseline_ms = [-60, 0]
"""


def silencing_head(spikes: str = "@DATA@/silencing/s1_spikes.csv", trials: str = "@DATA@/silencing/s1_trials.csv",
                   height_mm: int = 90) -> str:
    """:func:`level_head` with the demo silencing session (a ``light`` column in its trial table)
    as the source ``s1``."""
    return level_head(height_mm=height_mm) + f"""
[sources.s1]
spikes = "{spikes}"
trials = "{trials}"
clock = "session"
spike_columns = {{ unit = "unit", trial = "trial", time = "time_s" }}
trial_columns = {{ trial = "trial", level = "level_db", onset = "onset_s", offset = "offset_s", start = "start_s", stop = "stop_s" }}
"""


def draw_now(fig):
    """Attach an Agg canvas and draw, so the layout engine has run and extents are final."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    FigureCanvasAgg(fig)
    fig.canvas.draw()
    return fig


def compute_panel(rec, panel_model, levels=None):
    """A panel's tables through its registry entry: the kind's write-back of automatic choices,
    then its compute function (what the pipeline does for each panel)."""
    from figspec.registry import kind_of
    from figspec.spec.models import LevelSpec

    levels = levels or LevelSpec()
    kind = kind_of(panel_model)
    return kind.compute(rec, kind.resolve(rec, panel_model, levels), levels)


# the minimal spec at two levels: a small figure for tests that render several times
SMALL_SPEC = MINIMAL_SPEC.replace('unit = "u2"\n', 'unit = "u2"\nlevels = [40, 80]\n')


@contextlib.contextmanager
def figspec_warnings():
    """Record the scientist-facing warnings a demo figure gives (e.g. a poorly constrained fit,
    which the figure and its legend also say), which the pytest configuration would otherwise
    raise; any other warning still raises."""
    import warnings

    from figspec.errors import FigspecWarning

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", FigspecWarning)
        yield caught


def invented_tables(rng, time_unit="s", clock="session", restart=False, names=None):
    """Invented (spike frame, trial frame) in a lab's layout: 4 levels x 10 trials of 0.5 s, a 50-ms stimulus 0.1 s in."""
    import numpy as np
    names = names or {}
    scale = 1.0 if time_unit == "s" else 1000.0
    levels = np.repeat([0.0, 20.0, 40.0, 60.0], 10)
    order = rng.permutation(levels.size)
    start = np.arange(levels.size) * 0.5 if clock == "session" else np.zeros(levels.size)
    onset = start + 0.1 + rng.uniform(0, 0.005, levels.size)
    trial_no = (np.tile(np.arange(1, 11), 4) if restart else np.arange(1, levels.size + 1))[order]
    lv = levels[order]
    trials = pd.DataFrame({names.get("trial", "trial"): trial_no, names.get("level", "level_db"): lv,
                           names.get("onset", "onset"): onset * scale, names.get("offset", "offset"): (onset + 0.05) * scale,
                           names.get("start", "start"): start * scale, names.get("stop", "stop"): (start + 0.5) * scale})
    rows = []
    for i in range(levels.size):
        n = rng.poisson(3 + lv[i] / 10)
        times = start[i] + rng.uniform(0, 0.5, n)
        rows += [("u7", trial_no[i], lv[i], t * scale) for t in times]
    spikes = pd.DataFrame(rows, columns=[names.get("unit", "unit"), names.get("trial", "trial"), "lvl_copy",
                                         names.get("time", "time")]).sample(frac=1, random_state=2)
    if restart:
        spikes = spikes.rename(columns={"lvl_copy": names.get("level", "level_db")})
    else:
        spikes = spikes.drop(columns="lvl_copy")
    return spikes, trials
