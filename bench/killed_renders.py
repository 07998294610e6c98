"""Kill renders with SIGKILL at random moments and check that every output set survives whole.

A copy of a demo spec is rendered once (the old set), then changed (another bin width) and
rendered again in a child process that is killed after a random delay drawn across the whole
length of a render (every other kill in its last fifth, where files are written). After each kill the folder is classified as figspec leaves it:

- ``old``: every output is the old render's and the manifest matches;
- ``new``: the kill came after the switch; every output is new;
- ``switching``: the kill came during the moves; a complete, committed new set waits in the
  staging folder (the next render finishes it).

Then the next render runs, and the folder must hold the complete new set, a matching manifest
and no staging or temporary files. Counts are printed.

    python bench/killed_renders.py [--kills 20] [--seed 1]
"""

from __future__ import annotations

import argparse
import hashlib
import os
import random
import shutil
import signal
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def spec_text(bin_ms: int) -> str:
    text = (ROOT / "specs" / "level_grid.toml").read_text()
    text = text.replace('"data/', f'"{ROOT / "specs" / "data"}/').replace(
        'style = "house"', f'style = "{ROOT / "styles" / "house.toml"}"')
    return text.replace("bin_ms = 5", f"bin_ms = {bin_ms}").replace('journal = "nature"', "")


def render(spec: Path, out: Path) -> subprocess.Popen:
    return subprocess.Popen([sys.executable, "-m", "figspec", "render", str(spec), "-o", str(out)],
                            stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)


def snapshot(out: Path) -> dict[str, str]:
    return {p.relative_to(out).as_posix(): hashlib.sha256(p.read_bytes()).hexdigest()
            for p in sorted(out.rglob("*")) if p.is_file()}


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--kills", type=int, default=20)
    parser.add_argument("--seed", type=int, default=1)
    args = parser.parse_args()
    sys.path.insert(0, str(ROOT))
    from figspec.output.output_set import set_state

    rng = random.Random(args.seed)
    work = Path(tempfile.mkdtemp(prefix="figspec-kills-"))
    spec = work / "fig.toml"
    references = {}
    for name, bin_ms in (("old", 5), ("new", 10)):
        spec.write_text(spec_text(bin_ms))
        start = time.perf_counter()
        assert render(spec, work / name).wait() == 0
        references[name] = snapshot(work / name)
        seconds = time.perf_counter() - start
    print(f"one render takes {seconds:.2f} s; killing at random moments in [0, {1.2 * seconds:.2f}] s")
    counts = {"old": 0, "new": 0, "switching": 0, "broken": 0}
    after_next = {"complete": 0, "not complete": 0}
    for i in range(args.kills):
        out = work / "figures"
        shutil.rmtree(out, ignore_errors=True)
        shutil.copytree(work / "old", out)
        spec.write_text(spec_text(10))
        child = render(spec, out)
        # every other kill aims at the end of the render, where the files are written
        time.sleep(rng.uniform(0, 1.2 * seconds) if i % 2 == 0 else rng.uniform(0.8 * seconds, 1.05 * seconds))
        child.send_signal(signal.SIGKILL)
        child.wait()
        visible = {k: v for k, v in snapshot(out).items() if not k.startswith(".figspec-")}
        staged = [p for p in out.iterdir() if p.name.startswith(".figspec-")]
        if visible == references["old"] and set_state(out, "fig") == "complete":
            state = "old"
        elif visible == references["new"] and set_state(out, "fig") == "complete":
            state = "new"
        elif any((p / "COMMITTED").is_file() for p in staged):
            state = "switching"
        else:
            state = "broken"
        counts[state] += 1
        assert render(spec, out).wait() == 0
        final = snapshot(out)
        whole = final == references["new"] and set_state(out, "fig") == "complete"
        after_next["complete" if whole else "not complete"] += 1
        print(f"kill {i + 1:2d}: {state:9s} (staging folders left: {len(staged)}); after the next render: "
              f"{'complete, nothing left over' if whole else 'NOT COMPLETE'}")
    print(f"states after the kill: {counts}")
    print(f"after the next render: {after_next}")
    shutil.rmtree(work, ignore_errors=True)
    if counts["broken"] or after_next["not complete"]:
        sys.exit(1)


if __name__ == "__main__":
    main()
