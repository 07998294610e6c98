"""A small notebook executed as Jupyter executes it (nbclient with an IPython kernel): a spec
given as TOML text with the demo's tables as DataFrames; the result cell shows the figure inline
(an image in the cell's HTML output) and the tables, and the notebook runs without an error."""

from __future__ import annotations

import pytest

from helpers import SPECS, demo_text

nbformat = pytest.importorskip("nbformat")
nbclient = pytest.importorskip("nbclient")
pytest.importorskip("ipykernel")


def test_a_notebook_shows_the_figure_and_tables_inline(tmp_path):
    spec = demo_text("level_grid")
    cells = [
        nbformat.v4.new_code_cell("import pandas as pd\nfrom figspec.notebook import tables"),
        nbformat.v4.new_code_cell(f"spikes = pd.read_csv({str(SPECS / 'data' / 'spikes.csv')!r})\n"
                                  f"trials = pd.read_csv({str(SPECS / 'data' / 'trials.csv')!r})\n"
                                  f"spec = {spec!r}"),
        nbformat.v4.new_code_cell("result = tables(spec, data={'midbrain': (spikes, trials)}, figure=True)\nresult"),
    ]
    notebook = nbformat.v4.new_notebook(cells=cells)
    nbclient.NotebookClient(notebook, timeout=300, kernel_name="python3",
                            resources={"metadata": {"path": str(tmp_path)}}).execute()
    [shown] = [o for o in notebook.cells[-1].outputs if o.get("output_type") == "execute_result"]
    page = shown["data"]["text/html"]
    assert '<img alt="figure" src="data:image/png;base64,' in page
    assert "rate: " in page and "<table" in page
