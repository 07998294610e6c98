"""figspec from Python: a spec (a file, or TOML text) with data given as pandas DataFrames
instead of files, returning the computed tables and, on request, the matplotlib Figure.

    import pandas as pd
    from figspec.notebook import tables

    spikes, trials = pd.read_csv("spikes.csv"), pd.read_csv("trials.csv")
    result = tables("specs/fig2.toml", data={"midbrain": (spikes, trials)}, figure=True)
    result.tables["rate"]          # the PSTH table, exactly what the figure draws
    result.figure                  # a matplotlib Figure in the spec's style

The DataFrames carry the columns the spec's ``spike_columns`` and ``trial_columns`` name;
every check and message is the same as for files.
"""

from __future__ import annotations

import tempfile
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

import pandas as pd

from figspec.steps.compute import compute
from figspec.steps.draw import draw
from figspec.steps.load import load
from figspec.steps.resolve import Resolved, resolve

if TYPE_CHECKING:
    from matplotlib.figure import Figure


@dataclass(frozen=True)
class NotebookResult:
    """The resolved spec, every source-data table by name (as exported), and the figure when
    asked for."""

    resolved: Resolved
    tables: dict[str, pd.DataFrame]
    figure: "Figure | None" = None

    DISPLAY_DPI = 150          # the inline picture; the files keep the spec's own png_dpi
    DISPLAY_ROWS = 8

    def _repr_html_(self) -> str:
        """What a notebook shows for a result: the figure inline (PNG, as the files draw it) and
        the first rows of every source-data table, each named with its size."""
        import base64
        import html

        from figspec.output.files import figure_files

        parts = []
        if self.figure is not None:
            png = figure_files(self.figure, self.resolved.style, ["png"], self.DISPLAY_DPI, "figspec")["png"]
            parts.append(f'<img alt="figure" src="data:image/png;base64,{base64.b64encode(png).decode()}">')
        for name, table in self.tables.items():
            parts.append(f"<details><summary>{html.escape(name)}: {len(table):,} rows × {len(table.columns)} "
                         f"columns</summary>{table.head(self.DISPLAY_ROWS).to_html(index=False)}</details>")
        return "\n".join(parts)


def tables(spec: str | Path, data: dict[str, tuple[pd.DataFrame, pd.DataFrame | None]] | None = None,
           figure: bool = False, folder: str | Path | None = None) -> NotebookResult:
    """Compute a spec's tables from DataFrames.

    Parameters
    ----------
    spec : a spec file, or the TOML text of one.
    data : source name -> (spike table, trial table or None), with the files' own column names;
        sources not given here are read from their files.
    figure : also draw the figure.
    folder : where relative file names (styles, files of sources not in ``data``) are looked up
        when ``spec`` is text (default: the working folder).
    """
    loaded = _load(spec, Path(folder) if folder else Path.cwd())
    resolved = resolve(loaded, frames=dict(data or {}))
    computed = compute(resolved)
    return NotebookResult(resolved, computed.for_export(), draw(resolved, computed) if figure else None)


def _load(spec: str | Path, folder: Path):
    if isinstance(spec, Path) or (isinstance(spec, str) and "\n" not in spec and spec.endswith(".toml")):
        return load(spec)
    with tempfile.TemporaryDirectory(dir=folder, prefix=".figspec-notebook-") as tmp:
        path = Path(tmp) / "notebook.toml"
        path.write_text(spec, encoding="utf-8")
        loaded = load(path)
    return _moved(loaded, folder)


def _moved(loaded: Any, folder: Path):
    """A spec loaded from a temporary file, as if it lived in ``folder`` (for relative names)."""
    from dataclasses import replace

    return replace(loaded, path=folder / "notebook.toml")
