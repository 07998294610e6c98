"""`figspec check` starts fast: it needs neither matplotlib nor scipy, so it imports neither.
A fresh process is the only way to see what importing figspec pulls in."""

import subprocess
import sys

from helpers import DEMO_SPEC, ROOT


def test_check_imports_neither_matplotlib_nor_scipy():
    code = ("import sys; from figspec.cli import run; code = run(['check', sys.argv[1]]); "
            "print(code, 'matplotlib' in sys.modules, 'scipy' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code, str(DEMO_SPEC)], capture_output=True, text=True, cwd=ROOT)
    assert out.stdout.strip().splitlines()[-1] == "0 False False", out.stderr


def test_render_imports_scipy_only_for_a_panel_that_needs_it(tmp_path):
    """A raster and a plain histogram need no scipy (only the panels that fit or test import it)."""
    from helpers import SMALL_SPEC, write_spec

    plain = write_spec(tmp_path, SMALL_SPEC, "plain.toml")
    code = ("import sys; from figspec.cli import run; code = run(['render', sys.argv[1], '-o', sys.argv[2], "
            "'--format', 'png', '--jobs', '1']); print(code, 'scipy' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code, str(plain), str(tmp_path / "out")], capture_output=True,
                         text=True, cwd=ROOT)
    assert out.stdout.strip().splitlines()[-1] == "0 False", out.stderr
