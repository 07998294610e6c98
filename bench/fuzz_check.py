"""Fuzz the spec loader and ``check`` for a while with the strategies of tests/spec_fuzzing.py.

Every example must end with the spec accepted or with user errors; anything else is printed
with the spec that caused it. Prints how many examples ran and how they ended.

    python bench/fuzz_check.py [--minutes 10]
"""

from __future__ import annotations

import argparse
import collections
import sys
import tempfile
import time
import traceback
import warnings
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--minutes", type=float, default=10.0)
    args = parser.parse_args()
    sys.path[:0] = [str(ROOT), str(ROOT / "tests")]
    from hypothesis import HealthCheck, given, settings

    from figspec import pipeline
    from figspec.errors import FigspecWarning, UserError
    from spec_fuzzing import specs

    outcomes: collections.Counter = collections.Counter()
    failures: list[tuple[str, str]] = []
    folder = Path(tempfile.mkdtemp(prefix="figspec-fuzz-"))

    @settings(max_examples=2000, deadline=None, database=None, derandomize=False,
              suppress_health_check=list(HealthCheck))
    @given(text=specs)
    def one(text: str) -> None:
        path = folder / "fuzzed.toml"
        path.write_text(text, encoding="utf-8", errors="surrogatepass")
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            try:
                pipeline.check(path)
                outcomes["accepted"] += 1
            except UserError:
                outcomes["user error"] += 1
            except Exception:                    # the promise is broken: keep the example
                outcomes["internal error"] += 1
                failures.append((text, traceback.format_exc()))

    stop = time.monotonic() + 60 * args.minutes
    while time.monotonic() < stop:
        one()
    total = sum(outcomes.values())
    print(f"{total} examples in {args.minutes:g} min: " + ", ".join(f"{k} {v}" for k, v in sorted(outcomes.items())))
    for text, trace in failures[:5]:
        print("-" * 60, "\n", text, "\n", trace)
    if outcomes["internal error"]:
        sys.exit(1)


if __name__ == "__main__":
    main()
