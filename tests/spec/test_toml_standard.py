"""Every spec, style, journal profile and example the project ships is standard TOML 1.0, read by
Python's own tomllib (the TOML 1.0 reader of the standard library, PEP 680), so any editor or
validator reads them as figspec does. The one bad-input spec whose point is invalid TOML is the
exception, and must stay invalid; two whose point is nesting past any reader's limit must stay so."""

import re
import tomllib

import pytest

from helpers import ROOT

SHIPPED = sorted([*ROOT.glob("specs/*.toml"), *ROOT.glob("styles/*.toml"), *ROOT.glob("figspec/styles/**/*.toml"),
                  *ROOT.glob("tests/bad_inputs/specs/*.toml")])
NOT_TOML = {"toml_syntax.toml"}          # the bad-input case for a TOML syntax error
TOO_DEEP = {"nested_arrays.toml", "nested_inline_tables.toml"}   # nested past the readers' own limits on purpose


@pytest.mark.parametrize("path", SHIPPED, ids=[str(p.relative_to(ROOT)) for p in SHIPPED])
def test_shipped_files_are_toml_1_0(path):
    text = path.read_text(encoding="utf-8")
    if path.name in NOT_TOML:
        with pytest.raises(tomllib.TOMLDecodeError):
            tomllib.loads(text)
    elif path.name in TOO_DEEP:
        with pytest.raises((RecursionError, tomllib.TOMLDecodeError)):
            tomllib.loads(text)
    else:
        tomllib.loads(text)


def test_every_toml_block_of_the_documentation_is_toml_1_0():
    blocks = []
    for page in [ROOT / "README.md", ROOT / "DEVELOPERS.md", *sorted((ROOT / "docs").glob("*.md"))]:
        blocks += [(page.name, m.group(1)) for m in re.finditer(r"```toml\n(.*?)```", page.read_text(encoding="utf-8"),
                                                                 re.S)]
    assert len(blocks) >= 2
    for page, block in blocks:
        tomllib.loads(block)


def test_no_shipped_spec_breaks_an_inline_table_over_lines():
    """TOML 1.0 keeps an inline table on one line; the specs use sub-tables instead."""
    for path in SHIPPED:
        if path.name in NOT_TOML:
            continue
        for number, line in enumerate(path.read_text(encoding="utf-8").splitlines(), start=1):
            code = line.split("#", 1)[0]
            assert code.count("{") == code.count("}"), f"{path.name}:{number}: {line}"
