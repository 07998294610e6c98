"""HTML pages for reviewers: the review page of ``diff`` and ``compare`` (old and new side by
side, the difference image, the verdict, the spec keys and source numbers that changed) and the
index page ``render`` writes into its output folder.

Pages are one file each and need no server and no network: the review page embeds its images
(``data:`` URIs, RFC 2397); the index page links the figures and tables beside it. Plain HTML
and CSS; the only script is the live preview's reload check, which loads a small script file
from the same folder (works from ``file://`` as well as over a local server).
"""

from __future__ import annotations

import base64
import html
from urllib.parse import quote
import json
import re
from dataclasses import dataclass, field
from pathlib import Path

from figspec.output.compare import TableDiff

STYLE = """
body { font: 15px/1.45 system-ui, sans-serif; margin: 1.5rem auto; max-width: 1500px; padding: 0 1rem;
       color: #1b1b1b; background: #fff; }
h1 { font-size: 1.5rem; margin: 0 0 .3rem; } h2 { font-size: 1.2rem; margin: 2rem 0 .4rem; }
h3 { font-size: 1rem; margin: 1rem 0 .3rem; }
.meta { color: #555; margin: 0 0 1rem; }
.pair { display: grid; grid-template-columns: 1fr 1fr; gap: 1rem; }
figure { margin: 0; border: 1px solid #ccc; padding: .5rem; background: #fff; }
figcaption { font-weight: 600; margin-bottom: .3rem; }
img { max-width: 100%; height: auto; display: block; }
.verdict { display: inline-block; padding: .1rem .5rem; border-radius: .25rem; font-weight: 700; }
.unchanged { background: #dcefe0; color: #114a1f; } .changed { background: #fbe0d2; color: #7a2600; }
.missing { background: #eee; color: #333; }
table { border-collapse: collapse; margin: .3rem 0 .8rem; font-size: .9rem; }
th, td { border: 1px solid #ccc; padding: .15rem .45rem; text-align: left; vertical-align: top; }
th { background: #f3f3f3; }
code, pre { font-family: ui-monospace, monospace; font-size: .9rem; }
pre { white-space: pre-wrap; background: #f7f7f7; padding: .5rem; border: 1px solid #e2e2e2; }
ul.files { padding-left: 1.2rem; } .legend li { margin-bottom: .2rem; }
.figure-card { border-top: 2px solid #ddd; padding-top: .5rem; }
"""


def data_uri(png: bytes) -> str:
    """A PNG as a ``data:`` URI (RFC 2397), so the page carries its own images."""
    return "data:image/png;base64," + base64.b64encode(png).decode("ascii")


def _e(text: object) -> str:
    return html.escape(str(text), quote=True)


def _page(title: str, body: list[str], head_extra: str = "") -> str:
    return ("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
            "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n"
            f"<title>{_e(title)}</title>\n<style>{STYLE}</style>\n{head_extra}</head>\n<body>\n"
            + "\n".join(body) + "\n</body>\n</html>\n")


@dataclass(frozen=True)
class FigureReview:
    """One figure on the review page."""

    name: str
    old_label: str
    new_label: str
    old_png: bytes | None
    new_png: bytes
    difference_png: bytes | None
    passed: bool
    verdict: str                      # e.g. "RMS 3.10 > tolerance 1"
    key_changes: list[str] = field(default_factory=list)
    tables: list[TableDiff] = field(default_factory=list)
    data_files: list[str] = field(default_factory=list)
    compare_keys: bool = True          # False: the page does not compare specs (compare against baselines)


def _cell(value: object) -> str:
    return f"{value:.6g}" if isinstance(value, float) else _e(value)


def _table_html(d: TableDiff, limit: int = 8) -> list[str]:
    if d.status in ("added", "removed", "columns"):
        return [f"<li><code>{_e(d.name)}</code>: {_e(d.lines()[0].split(': ', 1)[1])}</li>"]
    out = [f"<li><code>{_e(d.name)}</code>: {d.rows_old} rows before, {d.rows_new} after; rows matched on "
           f"{_e(', '.join(d.keys))}"]
    for label, rows in (("added", d.added), ("removed", d.removed)):
        if rows is not None and len(rows):
            shown = rows.head(limit)
            cells = "".join(f"<th>{_e(c)}</th>" for c in shown.columns)
            body = "".join("<tr>" + "".join(f"<td>{_cell(v)}</td>" for v in r) + "</tr>"
                           for r in shown.itertuples(index=False))
            more = f" (first {limit} shown)" if len(rows) > limit else ""
            out.append(f"<div>{len(rows)} rows {label}{more}</div><table><tr>{cells}</tr>{body}</table>")
    if d.columns:
        rows = "".join(f"<tr><td><code>{_e(c.column)}</code></td><td>{c.changed}</td>"
                       f"<td>{'' if c.largest is None else f'{c.largest:.6g}'}</td><td>{_e(c.at)}</td></tr>"
                       for c in d.columns)
        out.append("<table><tr><th>column</th><th>values changed</th><th>largest change</th>"
                   f"<th>at</th></tr>{rows}</table>")
    return out + ["</li>"]


def review_page(title: str, summary: str, figures: list[FigureReview]) -> str:
    """The review page of a ``diff`` or ``compare`` run (one self-contained HTML file)."""
    body = [f"<h1>{_e(title)}</h1>", f"<p class=\"meta\">{_e(summary)}</p>"]
    for f in figures:
        css = "unchanged" if f.passed else ("missing" if f.old_png is None else "changed")
        word = "unchanged" if f.passed else ("no baseline" if f.old_png is None else "changed")
        body += [f"<section class=\"figure-card\" id=\"{_e(f.name)}\">",
                 f"<h2>{_e(f.name)} <span class=\"verdict {css}\">{word}</span></h2>",
                 f"<p>{_e(f.verdict)}</p>"]
        panes = []
        if f.old_png is not None:
            panes.append((f"Old: {f.old_label}", f.old_png))
        panes.append((f"New: {f.new_label}", f.new_png))
        if f.difference_png is not None:
            panes.append(("Difference (black: equal; brightest: largest change)", f.difference_png))
        body.append("<div class=\"pair\">")
        body += [f"<figure><figcaption>{_e(label)}</figcaption><img src=\"{data_uri(png)}\" "
                 f"alt=\"{_e(label)}\"></figure>" for label, png in panes]
        body.append("</div>")
        if f.compare_keys:
            body.append("<h3>Spec keys that changed</h3>")
            body.append("<ul>" + "".join(f"<li><code>{_e(k)}</code></li>" for k in f.key_changes) + "</ul>"
                        if f.key_changes else "<p>none</p>")
        if f.tables:
            changed = [d for d in f.tables if d.status != "same"]
            body.append("<h3>Source data</h3>")
            body.append("<ul>" + "".join(line for d in changed for line in _table_html(d)) + "</ul>"
                        if changed else f"<p>all {len(f.tables)} tables the same</p>")
        if f.data_files:
            body.append("<h3>Data files read</h3><ul class=\"files\">"
                        + "".join(f"<li><code>{_e(p)}</code></li>" for p in f.data_files) + "</ul>")
        body.append("</section>")
    return _page(title, body)


def legend_html(markdown: str) -> str:
    """figspec's legend text (``**bold**``, ``*italic*``, ``- `` items) as HTML."""
    def inline(text: str) -> str:
        text = _e(text)
        text = re.sub(r"\*\*(.+?)\*\*", r"<strong>\1</strong>", text)
        return re.sub(r"(?<![\w*])\*(?!\s)(.+?)(?<!\s)\*(?![\w*])", r"<em>\1</em>", text)

    out, items = [], []
    for line in markdown.splitlines():
        if line.startswith("- "):
            items.append(f"<li>{inline(line[2:])}</li>")
            continue
        if items:
            out.append("<ul class=\"legend\">" + "".join(items) + "</ul>")
            items = []
        if line.strip():
            out.append(f"<p>{inline(line)}</p>")
    if items:
        out.append("<ul class=\"legend\">" + "".join(items) + "</ul>")
    return "\n".join(out)


@dataclass(frozen=True)
class IndexEntry:
    """One figure of an output folder on its index page (paths relative to the page)."""

    stem: str
    image: str | None                 # the PNG (or SVG) shown
    files: list[str]                  # every figure file
    tables: list[str]                 # source-data CSV files
    legend: str                       # legend text (markdown as figspec writes it)
    spec: str | None = None
    problem: str | None = None        # the live preview's last error, when there is one


RELOAD_SCRIPT = """<script>
// Live preview: load preview.js (written after every render) every second; reload when its
// number changes. A script element works from file:// as well as from a local server.
(function () {
  var seen = null;
  function poll() {
    var s = document.createElement("script");
    s.src = "preview.js?" + Date.now();
    s.onload = function () {
      var now = window.figspecPreview;
      if (seen !== null && now !== seen) { location.reload(); }
      seen = now; s.remove();
    };
    s.onerror = function () { s.remove(); };
    document.head.appendChild(s);
  }
  setInterval(poll, 1000); poll();
})();
</script>
"""


def local_link(path: str) -> str:
    """A file of the output folder as a link that can only be that file: each part of the path
    percent-encoded (RFC 3986), so ``javascript:``, ``http:``, ``#``, ``?`` and ``%`` in a name
    stay part of the name, and prefixed ``./`` so the link is relative; empty for a path that
    would leave the folder (absolute, or with ``..``)."""
    text = str(path).replace("\\", "/")
    parts = text.split("/")
    if text.startswith("/") or ".." in parts or not text:
        return ""
    return "./" + "/".join(quote(part, safe="") for part in parts)


def index_page(title: str, entries: list[IndexEntry], live: bool = False) -> str:
    """The index page of an output folder: every figure, its legend and links to its files."""
    body = [f"<h1>{_e(title)}</h1>",
            f"<p class=\"meta\">{len(entries)} figure{'' if len(entries) == 1 else 's'}"
            + (" &middot; live preview: this page reloads when a figure changes" if live else "") + "</p>"]
    body.append("<ul>" + "".join(f"<li><a href=\"#{_e(quote(e.stem, safe=''))}\">{_e(e.stem)}</a></li>"
                                 for e in entries) + "</ul>")
    for e in entries:
        body += [f"<section class=\"figure-card\" id=\"{_e(e.stem)}\">", f"<h2>{_e(e.stem)}</h2>"]
        if e.spec:
            body.append(f"<p class=\"meta\">from <code>{_e(e.spec)}</code></p>")
        if e.problem:
            body.append(f"<pre class=\"verdict changed\">{_e(e.problem)}</pre>"
                        "<p>The figure below is the last one that rendered.</p>")
        if e.image and local_link(e.image):
            body.append(f"<figure><img src=\"{_e(local_link(e.image))}\" alt=\"{_e(e.stem)}\"></figure>")
        body.append(legend_html(e.legend))
        links = " &middot; ".join(f"<a href=\"{_e(local_link(p))}\">{_e(Path(p).name)}</a>" for p in e.files
                                  if local_link(p))
        tables = " &middot; ".join(f"<a href=\"{_e(local_link(p))}\">{_e(Path(p).name)}</a>" for p in e.tables
                                   if local_link(p))
        body.append(f"<p>Files: {links}</p><p>Source data: {tables or 'none'}</p></section>")
    return _page(title, body, RELOAD_SCRIPT if live else "")


def index_entries(folder: Path, problems: dict[str, str] | None = None) -> list[IndexEntry]:
    """An :class:`IndexEntry` for every figure figspec wrote into ``folder`` (found by its
    manifest, ``<stem>_data/manifest.json``), by stem."""
    folder, problems = Path(folder), problems or {}
    entries = []
    for manifest in sorted(folder.glob("*_data/manifest.json")):
        try:
            record = json.loads(manifest.read_text(encoding="utf-8"))
        except (OSError, ValueError):
            continue
        stem = manifest.parent.name[: -len("_data")]
        outputs = [o["path"] for o in record.get("outputs", []) if (folder / o["path"]).is_file()]
        figures = [p for p in outputs if "/" not in p]
        image = next((p for ext in (".png", ".svg") for p in figures if p.endswith(ext)), None)
        legend_path = manifest.parent / "legend.md"
        legend = legend_path.read_text(encoding="utf-8") if legend_path.is_file() else ""
        spec = next((i["path"] for i in record.get("inputs", []) if i.get("role") == "spec"), None)
        entries.append(IndexEntry(stem, image, figures, [p for p in outputs if p.endswith(".csv")], legend, spec,
                                  problems.get(stem)))
    return entries


def write_index(folder: Path, title: str | None = None, live: bool = False,
                problems: dict[str, str] | None = None) -> Path:
    """Write ``folder/index.html`` (through a temporary file and a rename, so a browser never
    reads half a page)."""
    folder = Path(folder)
    text = index_page(title or "Figures", index_entries(folder, problems), live)
    from figspec.output.safe_write import write_text

    return write_text(folder / "index.html", text, root=folder)
