"""Build many specs: decide what is up to date, render the rest (in worker processes, or on a
Dask cluster), and report one line per spec as it finishes and a closing table.

A spec is up to date when its manifest's build record (the sha256 of the spec, every data and
style file it reads, the versions of figspec and the libraries that shape the bytes, and the
formats) equals today's, and every output the manifest lists is still there with its hash.
Outputs are byte-identical however many workers render them: each spec is rendered by one
process from its own files only.
"""

from __future__ import annotations

import os
import sys
import time
import traceback
import warnings
from dataclasses import dataclass, field
from pathlib import Path
from typing import Callable, Iterator, Sequence

EXIT_OK, EXIT_INTERNAL, EXIT_USER = 0, 1, 2


@dataclass
class SpecResult:
    """How one spec's build ended (everything the summary and the exit status need)."""

    spec: str
    status: str = "rendered"            # rendered | skipped | failed
    reason: str = ""                    # why it was rebuilt, or why it was skipped
    seconds: float = 0.0
    files: int = 0
    errors: list[str] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    findings: list[str] = field(default_factory=list)
    inputs: list[str] = field(default_factory=list)     # files the spec read (when it resolved)
    exit: int = EXIT_OK


Runner = Callable[[dict, "BuildOptions"], Iterator["SpecResult"]]


@dataclass(frozen=True)
class BuildOptions:
    outdir: str
    formats: tuple[str, ...] | None = None
    style: str | None = None
    profile: str | None = None
    strict: bool = False
    force: bool = False
    read_cache: str | None = None            # where reads shared by several specs are kept (a build sets it)
    shared_inputs: frozenset[str] = frozenset()   # the data files two or more specs of the build read


def build_record(spec_path: Path, formats: Sequence[str] | None, style: str | None) -> dict:
    """What decides a spec's outputs, without loading its data: input hashes, versions, formats."""
    from figspec.output.provenance import build_inputs, code_sha256, input_files, versions
    from figspec.spec.loader import load_spec
    from figspec.steps.resolve import load_style
    from figspec.steps.save import input_paths

    spec = load_spec(spec_path)
    own = load_style(spec, style)
    paths = [(role, path) for role, path in input_paths(spec, own.sources) if Path(path).is_file()]
    return {"inputs": build_inputs(input_files(paths)), "versions": versions(own.style), "code": code_sha256(),
            "formats": sorted(formats or spec.model.figure.formats)}


def up_to_date(spec_path: Path, options: BuildOptions) -> tuple[bool, str]:
    """(whether the spec's outputs in ``options.outdir`` are current, the reason)."""
    import json

    from figspec.errors import UserError
    from figspec.output.names import output_stem
    from figspec.output.output_set import set_state

    if options.force:
        return False, "--force"
    stem = output_stem(spec_path)
    manifest = Path(options.outdir) / f"{stem}_data" / "manifest.json"
    if not manifest.is_file():
        return False, "no earlier outputs"
    try:
        current = build_record(spec_path, options.formats, options.style)
    except (UserError, OSError):
        return False, "the spec does not load"            # the render says why
    try:
        stored = json.loads(manifest.read_text()).get("build", {})
    except ValueError:
        return False, "the manifest is unreadable"
    if stored.get("versions") != current["versions"]:
        return False, "another figspec or library version"
    if stored.get("code") != current["code"]:
        return False, "figspec's code changed"
    if stored.get("formats") != current["formats"]:
        return False, "other formats"
    old, new = stored.get("inputs", {}), current["inputs"]
    changed = sorted(role for role in set(old) | set(new) if old.get(role) != new.get(role))
    if changed:
        return False, "changed: " + ", ".join(changed)
    if set_state(Path(options.outdir), stem) != "complete":
        return False, "outputs changed or missing"
    return True, "unchanged"


def render_one(spec: str, options: BuildOptions, reason: str = "") -> SpecResult:
    """Render (and journal-check) one spec; ``reason`` says why it is rebuilt. Never raises:
    a user error or an internal error is reported in the result."""
    from figspec import pipeline
    from figspec.errors import FigspecWarning, UserError

    from figspec.data import read_cache

    start = time.perf_counter()
    result = SpecResult(spec, reason=reason)
    with warnings.catch_warnings(record=True) as caught, read_cache.use(options.read_cache, options.shared_inputs):
        warnings.simplefilter("always", FigspecWarning)
        try:
            resolved = pipeline.check(spec, options.style)
            from figspec.steps.save import input_paths

            result.inputs = [str(Path(p).resolve()) for _, p in input_paths(resolved.spec, resolved.style_sources)]
            result.notes = [f"note: {n}" for n in pipeline.notes(resolved)]
            rendered = pipeline.render(spec, options.outdir, options.formats, resolved=resolved,
                                       profile=options.profile)
            result.files = len(rendered.files)
            result.findings = [f"{spec}: {f.format()}" for f in rendered.layout]
            if resolved.scale != 1.0:
                fig = resolved.spec.model.figure
                result.notes.append(f"note: {spec}: drawn {fig.width_mm:g} x {fig.height_mm:g} mm, the spec's page "
                                    f"scaled {resolved.scale:.2f}x with the text of style {options.style!r}")
            if options.strict and rendered.layout:
                result.exit = EXIT_USER
            if rendered.profile is not None:
                result.findings += [f"{spec}: {f.format(rendered.profile)}" for f in rendered.findings]
                count = len(rendered.findings)
                result.notes.append(f"{spec}: journal check {rendered.profile.name}: "
                                    f"{count} finding{'' if count == 1 else 's'}")
                if options.strict and rendered.findings:
                    result.exit = EXIT_USER
        except UserError as err:
            result.status, result.exit = "failed", EXIT_USER
            result.errors = [p.format() for p in err.problems]
        except Exception:                                 # a bug: keep the traceback for the report
            result.status, result.exit = "failed", EXIT_INTERNAL
            result.errors = [f"{spec}: internal error (please report it):\n{traceback.format_exc()}"]
        finally:
            result.warnings = list(dict.fromkeys(str(w.message) for w in caught
                                                 if issubclass(w.category, FigspecWarning)))
            result.seconds = time.perf_counter() - start
    return result


def worst(codes: Sequence[int]) -> int:
    """The exit status of a build: an internal error over a user error over success."""
    return EXIT_INTERNAL if EXIT_INTERNAL in codes else (EXIT_USER if EXIT_USER in codes else EXIT_OK)


def build(specs: Sequence[Path], options: BuildOptions, jobs: int = 1, runner: Runner | None = None,
          report: Callable[[SpecResult, int, int], None] | None = None) -> list[SpecResult]:
    """Build ``specs``: one by one (``jobs = 1``), in ``jobs`` worker processes, or with
    ``runner`` (e.g. :func:`figspec.cluster.run_on_cluster` bound to a scheduler address), which
    takes {spec: why it is rebuilt} and the options and yields results. ``report`` is called as
    each spec finishes."""
    names = [str(s) for s in specs]
    done: dict[str, SpecResult] = {}

    def finished(result: SpecResult) -> None:
        done[result.spec] = result
        if report is not None:
            report(result, len(done), len(names))

    stale: dict[str, str] = {}                     # spec -> why it is rebuilt (decided here, cheaply)
    for name in names:
        current, why = up_to_date(Path(name), options)
        if current:
            finished(SpecResult(name, "skipped", why))
        else:
            stale[name] = why
    options = with_read_cache(options, list(stale))
    if runner is not None and stale:
        for result in runner(stale, options):
            finished(result)
    elif jobs <= 1 or len(stale) <= 1:
        for name, why in stale.items():
            finished(render_one(name, options, why))
    else:
        import multiprocessing
        from concurrent.futures import ProcessPoolExecutor, as_completed

        context = multiprocessing.get_context("spawn")      # a fresh interpreter: no state shared
        pool = ProcessPoolExecutor(max_workers=min(jobs, len(stale)), mp_context=context,
                                   initializer=die_with_parent, initargs=(os.getpid(),))
        try:
            futures = [pool.submit(render_one, name, options, why) for name, why in stale.items()]
            for future in as_completed(futures):
                finished(future.result())
        except BaseException:                    # Ctrl-C, or a crash here: no worker outlives the build
            stop_workers(pool)
            raise
        pool.shutdown()
    if options.read_cache is not None:
        from figspec.data.read_cache import remove

        remove(Path(options.outdir))
    if Path(options.outdir).is_dir():
        from figspec.output.review_page import write_index

        write_index(Path(options.outdir))      # every figure of the folder, its legend and files
    return [done[name] for name in names]


def with_read_cache(options: BuildOptions, specs: list[str]) -> BuildOptions:
    """The options with the read cache set up when two or more of ``specs`` read one data file
    (each spec's sources' files, found without reading any data)."""
    from dataclasses import replace

    from figspec.data.read_cache import FOLDER
    from figspec.errors import UserError
    from figspec.spec.loader import load_spec

    seen: dict[str, int] = {}
    for name in specs:
        try:
            spec = load_spec(Path(name))
        except (UserError, OSError):
            continue
        files = {str((spec.folder / path).resolve()) for src in spec.model.sources.values()
                 for role, path in src.files().items() if role in ("spikes", "trials")}
        for path in files:
            seen[path] = seen.get(path, 0) + 1
    shared = frozenset(path for path, n in seen.items() if n > 1)
    if not shared:
        return options
    return replace(options, read_cache=str(Path(options.outdir) / FOLDER), shared_inputs=shared)


def default_jobs() -> int:
    """Worker processes by default: the cores this process may use."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:
        return os.cpu_count() or 1


class Progress:
    """Lines as specs finish: a bar redrawn in place on a terminal, plain flushed lines when the
    output is piped (a log or CI)."""

    def __init__(self, outdir: str, out=None, err=None):
        self.outdir = outdir
        self.out, self.err = out or sys.stdout, err or sys.stderr
        self.tty = hasattr(self.err, "isatty") and self.err.isatty()

    def __call__(self, result: SpecResult, count: int, total: int) -> None:
        for line in result.errors + result.findings + [n for n in result.notes if n.startswith("note:")]:
            self._line(self.err, line)
        for line in result.warnings:
            self._line(self.err, f"{result.spec}: warning: {line}")
        what = {"rendered": f"wrote {result.files} files to {self.outdir} in {result.seconds:.1f} s",
                "skipped": f"skipped, {result.reason}", "failed": "failed"}[result.status]
        if result.status == "rendered" and result.reason:
            what += f" ({result.reason})"
        self._line(self.out, f"{result.spec}: {what}" + (f"  [{count}/{total}]" if total > 1 else ""))
        for line in result.notes:
            if not line.startswith("note:"):
                self._line(self.out, line)
        if self.tty and count < total:
            filled = round(30 * count / total)
            self.err.write(f"\r[{'#' * filled}{'.' * (30 - filled)}] {count}/{total} specs")
            self.err.flush()

    def _line(self, stream, text: str) -> None:
        if self.tty:
            self.err.write("\r\033[K")
            self.err.flush()
        stream.write(text + "\n")
        stream.flush()


def summary_table(results: Sequence[SpecResult]) -> str:
    """The closing table: spec, status, seconds, files and warnings of each spec."""
    rows = [("spec", "status", "seconds", "files", "warnings")]
    rows += [(r.spec, r.status, f"{r.seconds:.1f}", str(r.files), str(len(r.warnings))) for r in results]
    widths = [max(len(row[i]) for row in rows) for i in range(5)]
    lines = ["  ".join(cell.ljust(w) if i < 2 else cell.rjust(w) for i, (cell, w) in enumerate(zip(row, widths)))
             for row in rows]
    counts = {s: sum(r.status == s for r in results) for s in ("rendered", "skipped", "failed")}
    lines.append(", ".join(f"{n} {s}" for s, n in counts.items()) + f"; {sum(r.seconds for r in results):.1f} s of work")
    return "\n".join(lines)


WATCH_S = 0.5          # how often a worker checks that the build's main process still runs


def die_with_parent(parent: int) -> None:
    """Worker initializer: the worker ends when the build's main process is gone (killed or
    crashed), so no worker keeps rendering or holding memory after it. On Linux the kernel sends
    SIGKILL on the parent's death (prctl PR_SET_PDEATHSIG); everywhere a thread also checks the
    parent every half second. Ctrl-C in the terminal reaches the main process, which stops the
    workers (:func:`stop_workers`); the workers themselves ignore it."""
    import signal
    import threading
    import time

    signal.signal(signal.SIGINT, signal.SIG_IGN)
    if sys.platform.startswith("linux"):
        try:
            import ctypes

            ctypes.CDLL(None, use_errno=True).prctl(1, signal.SIGKILL)      # 1: PR_SET_PDEATHSIG
        except (OSError, AttributeError):
            pass
    if os.getppid() != parent:
        os._exit(1)

    def watch() -> None:
        while os.getppid() == parent:
            time.sleep(WATCH_S)
        os._exit(1)

    threading.Thread(target=watch, name="figspec-parent-watch", daemon=True).start()


def stop_workers(pool) -> None:
    """End a process pool now: queued renders cancelled, running workers terminated (their output
    sets are written whole or not at all, see output.output_set)."""
    pool.shutdown(wait=False, cancel_futures=True)
    for process in list(getattr(pool, "_processes", {}).values()):
        if process.is_alive():
            process.terminate()
    for process in list(getattr(pool, "_processes", {}).values()):
        process.join(timeout=5)
