"""`figspec check` starts fast: it needs neither matplotlib nor scipy nor pandas (the data layer
reads and checks data with numpy), so it imports none of them. A fresh process is the only way
to see what importing figspec pulls in. pandas is deferred (figspec.optional.deferred): a
placeholder module may stand in sys.modules, so what is checked is that pandas never ran
(its submodule pandas.core.frame is imported by pandas' own __init__)."""

import subprocess
import sys

from helpers import DEMO_SPEC, ROOT


def test_check_imports_neither_matplotlib_nor_scipy_nor_pandas():
    code = ("import sys; from figspec.cli import run; code = run(['check', sys.argv[1]]); "
            "print(code, 'matplotlib' in sys.modules, 'scipy' in sys.modules, 'pandas.core.frame' in sys.modules, "
            "'pyarrow.csv' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code, str(DEMO_SPEC)], capture_output=True, text=True, cwd=ROOT)
    # pyarrow.csv is the CSV engine: it is imported, and must not pull in pandas
    assert out.stdout.strip().splitlines()[-1] == "0 False False False True", out.stderr


def test_a_deferred_pandas_works_once_used():
    """The placeholder becomes the real pandas on first use (render needs it for its tables)."""
    code = ("import sys; from figspec.steps.compute import pd; loaded = 'pandas.core.frame' in sys.modules; "
            "frame = pd.DataFrame({'a': [1]}); print(loaded, 'pandas.core.frame' in sys.modules, len(frame))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT)
    assert out.stdout.strip().splitlines()[-1] == "False True 1", out.stderr


def test_render_imports_scipy_only_for_a_panel_that_needs_it(tmp_path):
    """A raster and a plain histogram need no scipy (only the panels that fit or test import it)."""
    from helpers import SMALL_SPEC, write_spec

    plain = write_spec(tmp_path, SMALL_SPEC, "plain.toml")
    code = ("import sys; from figspec.cli import run; code = run(['render', sys.argv[1], '-o', sys.argv[2], "
            "'--format', 'png', '--jobs', '1']); print(code, 'scipy' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code, str(plain), str(tmp_path / "out")], capture_output=True,
                         text=True, cwd=ROOT)
    assert out.stdout.strip().splitlines()[-1] == "0 False", out.stderr
