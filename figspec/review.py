"""Review tools: store baseline images of chosen specs, compare fresh renders with them, and
show what changed between two versions of one spec.

Exit codes used by the CLI: 0 all the same, 3 a figure differs (2 stays for bad specs/data).
"""

from __future__ import annotations

import json
import shutil
import subprocess
from dataclasses import dataclass
from pathlib import Path
from typing import Sequence

import tomli

from figspec import pipeline
from figspec.output.names import output_stem
from figspec.errors import Problem, UserError
from figspec.output.compare import ImageResult, rms_difference, side_by_side, table_changes
from figspec.output.files import write_all
from figspec.output.report import sha256
from figspec.spec.diff import key_changes

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
    results.mkdir(parents=True, exist_ok=True)
    for pattern in ("*.new.png", "*.baseline.png", "*.difference.png", "summary.txt"):   # a run's own files
        for stale in results.glob(pattern):
            stale.unlink()
    stored = json.loads((folder / FINGERPRINTS).read_text()) if (folder / FINGERPRINTS).is_file() else {}
    out = []
    for spec in specs:
        stem = output_stem(spec)
        files, _ = pipeline.render_in_memory(pipeline.check(spec), FORMATS)
        actual = results / f"{stem}.new.png"
        write_all({actual: files["png"]})
        expected = folder / f"{stem}.png"
        if not expected.is_file():
            out.append(Comparison(ImageResult(stem, None, False, f"no baseline {expected}"), {}))
            continue
        shutil.copyfile(expected, results / f"{stem}.baseline.png")
        same = {fmt: stored.get(stem, {}).get(fmt) == sha256(data) for fmt, data in files.items()}
        out.append(Comparison(rms_difference(expected, actual, tolerance, results / f"{stem}.difference.png"), same))
    lines = [f"{c.image.name}: {'unchanged' if c.passed else 'CHANGED'} ({c.image.message}); identical bytes: "
             + ", ".join(f"{fmt} {'yes' if ok else 'no'}" for fmt, ok in c.identical_bytes.items()) for c in out]
    (results / "summary.txt").write_text("\n".join(lines) + "\n")
    return out


def _spec_at_revision(spec: Path, revision: str) -> str:
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
    ``old.png``, ``new.png``, ``side_by_side.png``, ``difference.png`` and ``summary.txt`` to
    ``outdir/<stem>_diff/``. Returns the summary lines. With a revision, the spec comes from
    git and the data files from the working tree."""
    new = Path(new)
    if old is not None:
        old_text = Path(old).read_text()
        old_files, old_tables = pipeline.render_in_memory(pipeline.check(old))
    else:
        old_text = _spec_at_revision(new, revision)
        hidden = new.parent / f".{output_stem(new)}.at-{revision.replace('/', '_')}.toml"  # beside it: same relative paths
        hidden.write_text(old_text)
        try:
            old_files, old_tables = pipeline.render_in_memory(pipeline.check(hidden))
        finally:
            hidden.unlink(missing_ok=True)
    new_files, new_tables = pipeline.render_in_memory(pipeline.check(new))
    folder = Path(outdir) / f"{output_stem(new)}_diff"
    pair, difference = side_by_side(old_files["png"], new_files["png"])
    write_all({folder / "old.png": old_files["png"], folder / "new.png": new_files["png"],
               folder / "side_by_side.png": pair, folder / "difference.png": difference})
    image = rms_difference(folder / "old.png", folder / "new.png", 0.0)
    against = f"{old}" if old is not None else f"{new} at {revision} (data from the working tree)"
    lines = [f"comparing {new} with {against}", "spec:"]
    lines += ["  " + line for line in key_changes(tomli.loads(old_text), tomli.loads(new.read_text()))] or ["  no change"]
    lines += ["source data:"]
    lines += ["  " + line for line in table_changes(old_tables.for_export(), new_tables.for_export())] or ["  no change"]
    lines += [f"image: {'identical' if image.passed else image.message}"]
    write_all({folder / "summary.txt": ("\n".join(lines) + "\n").encode()})
    return lines
