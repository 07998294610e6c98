"""Review tools: store baseline images of chosen specs, compare fresh renders with them, and
show what changed between two versions of one spec.

Exit codes used by the CLI: 0 all the same, 3 a figure differs (2 stays for bad specs/data).
"""

from __future__ import annotations

import json
import os
import subprocess
import tempfile
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Sequence

import tomli

from figspec import pipeline
from figspec.output.names import output_stem
from figspec.errors import Problem, UserError
from figspec.output.compare import ImageResult, rms_difference, side_by_side, table_diffs
from figspec.output.files import write_all
from figspec.output.output_set import output_folder, output_problem
from figspec.output.safe_write import write_bytes, write_text
from figspec.output.report import sha256
from figspec.output.review_page import FigureReview, review_page
from figspec.spec.diff import key_changes
from figspec.steps.save import input_paths

FINGERPRINTS = "fingerprints.json"   # sha256 of every format of each baseline
FORMATS = ("png", "svg", "pdf")


def snapshot(specs: Sequence[Path], folder: Path) -> list[Path]:
    """Store ``<stem>.png`` of each spec in ``folder`` and the sha256 of every format in
    ``folder/fingerprints.json`` (exact bytes: comparable only within one set of versions)."""
    folder = Path(folder)
    hashes_path = folder / FINGERPRINTS
    hashes = json.loads(hashes_path.read_text()) if hashes_path.is_file() else {}
    payload = {}
    for spec in specs:
        files, _ = pipeline.render_in_memory(pipeline.check(spec), FORMATS)
        payload[folder / f"{output_stem(spec)}.png"] = files["png"]
        hashes[output_stem(spec)] = {fmt: sha256(data) for fmt, data in files.items()}
    payload[hashes_path] = (json.dumps(hashes, indent=2, sort_keys=True) + "\n").encode()
    return write_all(payload)


@dataclass(frozen=True)
class Comparison:
    image: ImageResult
    identical_bytes: dict[str, bool]

    @property
    def passed(self) -> bool:
        return self.image.passed


def compare(specs: Sequence[Path], folder: Path, tolerance: float, results: Path) -> list[Comparison]:
    """Render each spec again and compare with its baseline in ``folder``. Writes
    ``<stem>.new.png``, ``<stem>.baseline.png`` and (on a difference) ``<stem>.difference.png``
    to ``results``, plus ``summary.txt``."""
    folder, results = Path(folder), Path(results)
    output_folder(results)
    for pattern in ("*.new.png", "*.baseline.png", "*.difference.png", "summary.txt", PAGE):   # a run's own files
        for stale in results.glob(pattern):
            stale.unlink()
    stored = json.loads((folder / FINGERPRINTS).read_text()) if (folder / FINGERPRINTS).is_file() else {}
    out, reviews = [], []
    for spec in specs:
        stem = output_stem(spec)
        resolved = pipeline.check(spec)
        files, _ = pipeline.render_in_memory(resolved, FORMATS)
        actual = results / f"{stem}.new.png"
        write_all({actual: files["png"]})
        expected = folder / f"{stem}.png"
        data = _data_files(resolved)
        if not expected.is_file():
            result = Comparison(ImageResult(stem, None, False, f"no baseline {expected}"), {})
            out.append(result)
            reviews.append(FigureReview(stem, "", f"{spec} now", None, files["png"], None, False,
                                        result.image.message, data_files=data, compare_keys=False))
            continue
        write_bytes(results / f"{stem}.baseline.png", expected.read_bytes(), root=results)
        same = {fmt: stored.get(stem, {}).get(fmt) == sha256(data) for fmt, data in files.items()}
        difference = results / f"{stem}.difference.png"
        result = Comparison(rms_difference(expected, actual, tolerance, difference), same)
        out.append(result)
        reviews.append(FigureReview(stem, f"baseline {expected}", f"{spec} rendered now", expected.read_bytes(),
                                    files["png"], difference.read_bytes() if difference.is_file() else None,
                                    result.passed, result.image.message + "; identical bytes: " + _bytes_note(same),
                                    data_files=data, compare_keys=False))
    lines = [f"{c.image.name}: {'unchanged' if c.passed else 'CHANGED'} ({c.image.message}); identical bytes: "
             + _bytes_note(c.identical_bytes) for c in out]
    write_text(results / "summary.txt", "\n".join(lines) + "\n", root=results)
    changed = sum(not c.passed for c in out)
    page = review_page("figspec compare", f"{len(out)} figures against the baselines in {folder} (tolerance RMS "
                       f"{tolerance:g} on 0-255): {changed} changed, {len(out) - changed} unchanged", reviews)
    write_all({results / PAGE: page.encode("utf-8")})
    return out


PAGE = "review.html"


def _bytes_note(same: dict[str, bool]) -> str:
    return ", ".join(f"{fmt} {'yes' if ok else 'no'}" for fmt, ok in same.items()) or "-"


def _data_files(resolved) -> list[str]:
    """The data files a resolved spec read, as paths relative to the working folder where possible."""
    from figspec.output.provenance import shown_path

    return [shown_path(Path(path).resolve()) for role, path in input_paths(resolved.spec, resolved.style_sources)
            if role.startswith("data:")]


def _spec_at_revision(spec: Path, revision: str) -> str:
    if not revision or revision.startswith("-") or any(c.isspace() or ord(c) < 32 for c in revision):
        raise UserError(Problem("a revision is a commit, branch or tag name (it cannot start with '-' or hold "
                                f"spaces): git would read {revision!r} as an option", file=str(spec)))
    root = subprocess.run(["git", "rev-parse", "--show-toplevel"], cwd=spec.parent, capture_output=True, text=True)
    if root.returncode != 0:
        raise UserError(Problem("not inside a git repository, so --rev cannot be used", file=str(spec)))
    rel = spec.resolve().relative_to(Path(root.stdout.strip()).resolve()).as_posix()
    shown = subprocess.run(["git", "show", f"{revision}:{rel}"], cwd=root.stdout.strip(), capture_output=True,
                           text=True)
    if shown.returncode != 0:
        raise UserError(Problem(f"git cannot show {rel} at {revision}: {shown.stderr.strip()}", file=str(spec)))
    return shown.stdout


def diff(new: Path, old: Path | None, revision: str | None, outdir: Path) -> list[str]:
    """Render two versions of a spec (``old`` file, or ``new`` at git ``revision``) and write
    ``old.png``, ``new.png``, ``side_by_side.png``, ``difference.png``, ``summary.txt`` and
    ``review.html`` to ``outdir/<stem>_diff/``. Returns the summary lines.

    The old version is read as if it stood where ``new`` stands: its data files and style are
    found relative to the spec under review (an old copy kept elsewhere, or a git revision of
    the file, reads the working tree's data). The summary names the data files each side read."""
    new = Path(new)
    for path in (new, old):
        if path is not None and not Path(path).is_file():
            raise UserError(Problem("spec file not found" if not Path(path).is_dir() else "a folder, not a spec file",
                                    file=str(path)))
    if old is not None:
        try:
            old_text, told = Path(old).read_text(encoding="utf-8"), f"{old}"
        except (OSError, UnicodeDecodeError) as err:
            raise UserError(Problem(f"cannot read it as UTF-8 text ({type(err).__name__})", file=str(old))) from None
    else:
        old_text, told = _spec_at_revision(new, revision), f"{new} at {revision}"
    tag = "old" if old is not None else f"at-{revision.replace('/', '_')}"
    # beside the new one (the same relative paths), under a new name of its own: a file or link
    # planted at a predictable name is never opened, let alone written through
    try:
        fd, name = tempfile.mkstemp(dir=new.parent, prefix=f".{output_stem(new)}.{tag}.", suffix=".toml")
        with os.fdopen(fd, "w", encoding="utf-8") as handle:
            handle.write(old_text)
    except OSError as err:
        raise output_problem(err, new.parent) from None
    hidden = Path(name)
    try:
        old_resolved = pipeline.check(hidden)
        old_files, old_tables = pipeline.render_in_memory(old_resolved)
        old_data = _data_files(old_resolved)
    except UserError as err:        # name the old version, not the hidden copy beside the new one
        raise type(err)([replace(p, file=f"{told} (old version)") for p in err.problems]) from None
    finally:
        hidden.unlink(missing_ok=True)
    new_resolved = pipeline.check(new)
    new_files, new_tables = pipeline.render_in_memory(new_resolved)
    new_data = _data_files(new_resolved)
    folder = Path(outdir) / f"{output_stem(new)}_diff"
    pair, difference = side_by_side(old_files["png"], new_files["png"], f"old: {told}", f"new: {new}")
    write_all({folder / "old.png": old_files["png"], folder / "new.png": new_files["png"],
               folder / "side_by_side.png": pair, folder / "difference.png": difference})
    image = rms_difference(folder / "old.png", folder / "new.png", 0.0, names=("old", "new"))
    keys = key_changes(tomli.loads(old_text), tomli.loads(new.read_text(encoding="utf-8")))
    tables = table_diffs(old_tables.for_export(), new_tables.for_export())
    lines = [f"comparing {new} with {told}", "spec:"]
    lines += ["  " + line for line in keys] or ["  no change"]
    lines += ["source data:"]
    lines += ["  " + line for d in tables for line in d.lines()] or ["  no change"]
    lines += ["data files: " + (", ".join(new_data) if old_data == new_data else
                                f"old {', '.join(old_data)}; new {', '.join(new_data)}")]
    verdict = "identical images" if image.passed else f"the images differ ({image.message})"
    lines += [f"image: {verdict}"]
    review = FigureReview(output_stem(new), told, str(new), old_files["png"], new_files["png"],
                          None if image.passed else difference, image.passed, verdict, keys, tables,
                          new_data if old_data == new_data else [f"old: {p}" for p in old_data] +
                          [f"new: {p}" for p in new_data])
    page = review_page(f"figspec diff: {new}", f"{new} compared with {told}", [review])
    write_all({folder / "summary.txt": ("\n".join(lines) + "\n").encode(), folder / PAGE: page.encode("utf-8")})
    return lines
