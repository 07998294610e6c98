"""Fuzz figspec for a while: specs mutated (values, keys, text) and data files damaged (bytes,
fields, lines, extreme values), with the strategies of tests/spec_fuzzing.py. A share of the
inputs that pass ``check`` is rendered too. Every input must end accepted or with user errors
(exit 2) within ``--timeout`` seconds; anything else (an internal error, a time-out) is saved
to tests/bad_inputs/found/ (the spec and its data files) so it joins the project's corpus, and
the run exits 1. Prints how many inputs ran and how they ended.

    python bench/fuzz_check.py [--minutes 10] [--timeout 30] [--render-share 0.1] [--seed N]

Each run prints its seed first; ``--seed`` with that number replays the same inputs in the same
order (on the same checkout and in the same folder layout), so a finding in a CI log can be
reproduced at a desk.
"""

from __future__ import annotations

import argparse
import collections
import hashlib
import shutil
import signal
import sys
import tempfile
import time
import traceback
import warnings
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
FOUND = ROOT / "tests" / "bad_inputs" / "found"
CORPUS_DATA = ROOT / "tests" / "bad_inputs" / "data"     # where the mutated specs read their data


class TimedOut(Exception):
    pass


def _alarm(signum, frame):
    raise TimedOut


def keep(folder: Path, kind: str, trace: str) -> Path:
    """Save a failing input (spec and data files) under tests/bad_inputs/found/<hash>/."""
    digest = hashlib.sha256(b"".join((folder / n).read_bytes() for n in ("fuzzed.toml", "spikes.csv", "trials.csv")
                                     if (folder / n).exists())).hexdigest()[:12]
    target = FOUND / f"{kind}-{digest}"
    target.mkdir(parents=True, exist_ok=True)
    for name in ("spikes.csv", "trials.csv"):
        if (folder / name).exists():
            shutil.copyfile(folder / name, target / name)
    # the spec as kept reads the copies beside it, not this checkout's corpus, so it replays anywhere
    text = (folder / "fuzzed.toml").read_text(encoding="utf-8", errors="surrogatepass")
    (target / "fuzzed.toml").write_text(text.replace(f"{CORPUS_DATA}/", ""), encoding="utf-8", errors="surrogatepass")
    (target / "trace.txt").write_text(trace.replace(f"{ROOT}/", "<checkout>/"))
    return target


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--minutes", type=float, default=10.0)
    parser.add_argument("--timeout", type=float, default=30.0, help="seconds one input may take")
    parser.add_argument("--render-share", type=float, default=0.1, help="share of accepted inputs also rendered")
    parser.add_argument("--seed", type=int, default=None, help="replay the inputs of an earlier run")
    args = parser.parse_args()
    sys.path[:0] = [str(ROOT), str(ROOT / "tests")]
    import random

    from hypothesis import HealthCheck, given, seed, settings
    from hypothesis import strategies as st

    from figspec import pipeline
    from figspec.errors import UserError
    from spec_fuzzing import DATA_SPEC, SPIKES, TRIALS, data_cases, specs

    outcomes: collections.Counter = collections.Counter()
    saved: list[Path] = []
    folder = Path(tempfile.mkdtemp(prefix="figspec-fuzz-"))
    signal.signal(signal.SIGALRM, _alarm)
    inputs = st.one_of(st.tuples(specs, st.just((SPIKES, TRIALS))), st.tuples(st.just(DATA_SPEC), data_cases))

    first = random.SystemRandom().randrange(2**32) if args.seed is None else args.seed
    print(f"seed {first}", flush=True)

    def one(case, render: float) -> None:
        text, (spikes, trials) = case
        (folder / "fuzzed.toml").write_text(text, encoding="utf-8", errors="surrogatepass")
        (folder / "spikes.csv").write_bytes(spikes)
        (folder / "trials.csv").write_bytes(trials)
        signal.setitimer(signal.ITIMER_REAL, args.timeout)
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                resolved = pipeline.check(folder / "fuzzed.toml")
                if render < args.render_share:
                    pipeline.render(folder / "fuzzed.toml", folder / "out", resolved=resolved)
                    outcomes["rendered"] += 1
                else:
                    outcomes["accepted"] += 1
        except UserError:
            outcomes["user error"] += 1
        except TimedOut:
            outcomes["time-out"] += 1
            saved.append(keep(folder, "timeout", f"took more than {args.timeout:g} s"))
        except Exception:                        # the promise is broken: keep the input
            outcomes["internal error"] += 1
            saved.append(keep(folder, "crash", traceback.format_exc()))
        finally:
            signal.setitimer(signal.ITIMER_REAL, 0)

    stop = time.monotonic() + 60 * args.minutes
    batch = settings(max_examples=500, deadline=None, database=None, suppress_health_check=list(HealthCheck))
    run = 0
    while time.monotonic() < stop:               # batches of 500, each with its own seed derived from the first
        seed(first + run)(batch(given(case=inputs, render=st.floats(0, 1))(one)))()
        run += 1
    total = sum(outcomes.values())
    print(f"{total} inputs in {args.minutes:g} min: " + ", ".join(f"{k} {v}" for k, v in sorted(outcomes.items())))
    for path in saved[:10]:
        print(f"kept {path.relative_to(ROOT)}")
    for path in saved[:3]:                       # enough to reproduce from a CI log alone
        for name in ("trace.txt", "fuzzed.toml"):
            print(f"--- {path.name}/{name}\n{(path / name).read_text(errors='replace')}")
    shutil.rmtree(folder, ignore_errors=True)
    if outcomes["internal error"] or outcomes["time-out"]:
        sys.exit(1)


if __name__ == "__main__":
    main()
