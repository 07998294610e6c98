"""The corpus of bad inputs in tests/bad_inputs/: every spec there (and the data file it reads)
is wrong in one way. Each must end as promised: exit 2, no traceback, and the problem line its
header names (``# expect: {spec}:LINE: key.path: message``; ``{corpus}`` is the corpus folder).
``# command:`` says whether ``check`` finds it or only ``render`` can (a tick step checked
against the range the data gave)."""

from __future__ import annotations

from pathlib import Path

import pytest

from helpers import ROOT

CORPUS = ROOT / "tests" / "bad_inputs"
SPECS = sorted(set((CORPUS / "specs").glob("*.toml")) | set((CORPUS / "specs").glob(".*.toml")))


def _header(spec: Path) -> tuple[str, list[str]]:
    command, expected = "check", []
    for line in spec.read_text(encoding="utf-8").splitlines():
        if not line.startswith("#"):
            break
        if line.startswith("# expect: "):
            expected.append(line[len("# expect: "):])
        elif line.startswith("# command: "):
            command = line[len("# command: "):].strip()
    return command, expected


def test_the_corpus_is_large_enough():
    data = [p for p in (CORPUS / "data").iterdir() if p.name not in ("spikes.csv", "trials.csv")]
    assert len(SPECS) >= 80 and len(data) >= 30
    named = {p.name for spec in SPECS for p in data if f"../data/{p.name}" in spec.read_text(encoding="utf-8")}
    assert named == {p.name for p in data}, "every bad data file is read by a corpus spec"


@pytest.mark.parametrize("spec", SPECS, ids=[p.stem or p.name for p in SPECS])
def test_bad_input_ends_cleanly_with_its_problem(spec, cli, tmp_path):
    command, expected = _header(spec)
    assert expected, f"{spec.name} names no expected problem"
    args = [command, spec.name] + (["-o", tmp_path / "figures"] if command == "render" else [])
    result = cli(*args, cwd=spec.parent)
    assert result.returncode == 2, result.stderr
    assert "Traceback" not in result.stderr
    lines = result.stderr.splitlines()
    for fragment in expected:
        wanted = fragment.replace("{spec}", spec.name).replace("{corpus}", str(CORPUS))
        assert any(line.startswith(wanted) for line in lines), f"{wanted!r} not in:\n{result.stderr}"
    if command == "render":
        assert not (tmp_path / "figures").exists() or not any((tmp_path / "figures").iterdir())
