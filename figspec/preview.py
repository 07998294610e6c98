"""``figspec watch``: live preview of one spec while it is written.

Renders the spec, then watches the spec, its data files and its style files (the folders that
hold them, so editors that save by renaming a temporary file are seen too) with watchfiles, and
renders again after every save. A problem is printed as the usual one-line errors and shown on
the index page; the last figure that rendered stays in place (a failed render leaves the output
set untouched). The index page of the output folder reloads itself when ``preview.js`` changes.
"""

from __future__ import annotations

import threading
from pathlib import Path
from typing import Callable

from figspec.build import BuildOptions, render_one
from figspec.optional import require
from figspec.output.names import output_stem
from figspec.output.review_page import write_index
from figspec.output.output_set import output_folder
from figspec.output.safe_write import write_text


class Preview:
    """One spec's live preview: :meth:`render` once, then :meth:`watch` until ``stop`` is set."""

    def __init__(self, spec: Path, options: BuildOptions, say: Callable[[str], None] = print):
        self.spec, self.options, self.say = Path(spec), options, say
        self.outdir = Path(options.outdir)
        self.count = 0
        self.files: set[Path] = set()

    def render(self) -> bool:
        """Render the spec now; print its problems; refresh the index page and preview.js."""
        output_folder(self.outdir)
        result = render_one(str(self.spec), self.options, "watched file changed" if self.count else "")
        for line in result.errors + result.findings + [f"{self.spec}: warning: {w}" for w in result.warnings]:
            self.say(line)
        problem = "\n".join(result.errors) if result.status == "failed" else None
        if problem is None:
            self.say(f"{self.spec}: rendered in {result.seconds:.1f} s")
        else:
            self.say(f"{self.spec}: not rendered; the last good figure stays on the page")
        # the files the spec read; when it did not resolve, those of the last time it did (a broken
        # data file must still be watched, so that mending it renders again)
        self.files = {self.spec.resolve()} | ({Path(p) for p in result.inputs} if result.inputs else self.files)
        self.count += 1
        write_index(self.outdir, f"Live preview of {self.spec.name}", live=True,
                    problems={output_stem(self.spec): problem} if problem else None)
        write_text(self.outdir / "preview.js", f"window.figspecPreview = {self.count};\n", root=self.outdir)
        return problem is None

    def watch(self, stop: threading.Event | None = None, debounce_ms: int = 200) -> None:
        """Render again whenever a watched file changes, until ``stop`` is set (or Ctrl-C)."""
        watchfiles = require("watchfiles", "figspec watch")
        stop = stop or threading.Event()
        while not stop.is_set():
            folders = sorted({str(p.parent) for p in self.files if p.parent.is_dir()})
            if not folders:
                from figspec.errors import Problem, UserError

                raise UserError(Problem("the folder of this spec does not exist, so there is nothing to watch",
                                        file=str(self.spec)))
            wanted = {str(p) for p in self.files}
            changed = False
            for changes in watchfiles.watch(*folders, stop_event=stop, debounce=debounce_ms, rust_timeout=200,
                                            yield_on_timeout=True,
                                            watch_filter=lambda _, path: str(Path(path).resolve()) in wanted):
                if changes:
                    changed = True
                    break
            if changed and not stop.is_set():
                self.render()             # and watch again: the set of files may have changed
