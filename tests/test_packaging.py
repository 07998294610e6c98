"""Every library figspec imports at run time is a declared dependency, or an optional one
imported only through figspec.optional.require behind an extra that pyproject.toml declares."""

import ast
import re
import sys
import tomllib
from pathlib import Path

import figspec
from figspec.optional import EXTRAS

from helpers import ROOT

PACKAGE = Path(figspec.__file__).parent
IMPORT_NAMES = {"pillow": "PIL"}        # distribution name -> import name, where they differ


def _dist(requirement: str) -> str:
    return re.split(r"[\s<>=!~;\[]", requirement, maxsplit=1)[0].lower()


def project():
    return tomllib.loads((ROOT / "pyproject.toml").read_text())["project"]


def third_party_imports():
    stdlib = set(sys.stdlib_module_names) | {"__future__", "figspec"}
    for path in PACKAGE.rglob("*.py"):
        tree = ast.parse(path.read_text())
        for node in ast.walk(tree):
            names = []
            if isinstance(node, ast.Import):
                names = [a.name for a in node.names]
            elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
                names = [node.module]
            for name in names:
                if name.split(".")[0] not in stdlib:
                    yield path.relative_to(PACKAGE), name.split(".")[0]


def required_modules():
    """The modules passed to figspec.optional.require anywhere in the package."""
    for path in PACKAGE.rglob("*.py"):
        for node in ast.walk(ast.parse(path.read_text())):
            if isinstance(node, ast.Call) and getattr(node.func, "id", getattr(node.func, "attr", "")) == "require":
                if node.args and isinstance(node.args[0], ast.Constant):
                    yield path.relative_to(PACKAGE), node.args[0].value


def test_every_import_is_a_declared_dependency():
    declared = {IMPORT_NAMES.get(d, d) for d in map(_dist, project()["dependencies"])}
    undeclared = sorted({f"{path}: {name}" for path, name in third_party_imports() if name not in declared})
    assert undeclared == []


def test_optional_libraries_are_required_through_an_extra():
    extras = {IMPORT_NAMES.get(_dist(r), _dist(r)): extra
              for extra, reqs in project().get("optional-dependencies", {}).items() for r in reqs}
    for path, module in required_modules():
        assert module in EXTRAS, f"{path}: require({module!r}) but figspec.optional.EXTRAS does not name it"
        top = module.split(".")[0]
        assert extras.get(top) == EXTRAS[module], f"{path}: {top} is not in the extra {EXTRAS[module]!r}"


def test_a_missing_optional_library_is_a_user_error_naming_the_install(monkeypatch):
    import pytest

    from figspec.errors import DataError
    from figspec.optional import require

    monkeypatch.setitem(EXTRAS, "figspec_no_such_module", "demo-extra")
    with pytest.raises(DataError) as info:
        require("figspec_no_such_module", "format = 'x'", ("sources", "s", "format"))
    [problem] = info.value.problems
    assert problem.loc == ("sources", "s", "format")
    assert "pip install 'figspec[demo-extra]'" in problem.message
