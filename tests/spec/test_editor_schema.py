"""The shipped schema as an editor reads it: taplo (the toolkit behind the Even Better TOML editor
extension, run here as its command line, npm package @taplo/cli) accepts every demo spec through
its ``#:schema`` line, and for each of a dozen typical mistakes reports an error located on the
line of the offending key, not a whole panel "not valid under any of the schemas listed in oneOf".
Skipped where taplo is not installed; .ci/run installs it."""

from __future__ import annotations

import re
import shutil
import subprocess

import pytest

from helpers import ROOT, SPECS

TAPLO = shutil.which("taplo")
pytestmark = pytest.mark.skipif(TAPLO is None, reason="taplo is not installed (npm install -g @taplo/cli)")
SCHEMA = ROOT / "figspec" / "schema" / "spec.schema.json"


def lint(path):
    return subprocess.run([TAPLO, "lint", "--colors", "never", str(path)], capture_output=True, text=True,
                          timeout=120)


def test_every_demo_spec_passes_taplo_through_its_schema_line():
    for spec in sorted(SPECS.glob("*.toml")):
        assert spec.read_text().startswith("#:schema ../figspec/schema/spec.schema.json"), spec.name
        result = lint(spec)
        assert result.returncode == 0, f"{spec.name}:\n{result.stderr}"


# (what a lab would type, the line it replaces in specs/level_grid.toml, the key taplo must point at)
MISTAKES = [
    ('bin_ms = "5"', "bin_ms = 5", "bin_ms"),                                   # a number as text
    ('window_ms = [-50, "150"]', "window_ms = [-50, 150]", "window_ms"),        # half a pair as text
    ("window_ms = [-50]", "window_ms = [-50, 150]", "window_ms"),               # a pair of one
    ("bin_width = 5", "bin_ms = 5", "bin_width"),                               # a key figspec does not know
    ('measure = "rate"', 'measure = "spikes_per_s"', "measure"),                # a value not among the choices
    ('kind = "histogram"', 'kind = "psth"', "kind"),                            # a kind that does not exist
    ('lock_y = "yes"', 'measure = "spikes_per_s"', "lock_y"),                   # a boolean as text
    ("width_mm = -5", "width_mm = 183", "width_mm"),                            # below the minimum
    ('colour = "red"', "width_mm = 183", "colour"),                             # unknown key in [figure]
    ('order = "up"', 'order = "high_at_top"', "order"),                         # a [levels] choice
    ('clock = "wall"', 'clock = "session"', "clock"),                           # a source choice
    ("png_dpi = 10", "png_dpi = 300", "png_dpi"),                               # below the minimum
]


@pytest.mark.parametrize("wrong, right, key", MISTAKES, ids=[m[2] + ":" + m[0] for m in MISTAKES])
def test_taplo_names_the_key_of_each_typical_mistake(tmp_path, wrong, right, key):
    text = (SPECS / "level_grid.toml").read_text().replace("#:schema ../figspec/schema/spec.schema.json",
                                                          f"#:schema {SCHEMA}")
    if right not in text:                       # a key the demo leaves at its default: written in its table
        table = "[levels]" if right.startswith("order") else "[figure]"
        text = text.replace(table, f"{table}\n{right}", 1)
    text = text.replace(right, wrong, 1)
    spec = tmp_path / "fig.toml"
    spec.write_text(text)
    line = next(i for i, t in enumerate(text.splitlines(), 1) if t.startswith(wrong))
    result = lint(spec)
    assert result.returncode != 0
    located = {int(n) for n in re.findall(r"fig\.toml:(\d+):", result.stderr)}
    assert line in located, f"taplo did not point at line {line} ({wrong}):\n{result.stderr}"
    assert "oneOf" not in result.stderr
