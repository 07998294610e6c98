"""The package keeps its one-way flow: spec -> data -> compute -> draw -> output -> pipeline/cli."""

import ast
from pathlib import Path

import figspec

PACKAGE = Path(figspec.__file__).parent
ORDER = ["spec", "data", "compute", "draw", "output"]
THIRD_PARTY = {  # what each layer may import besides the standard library and earlier layers
    "spec": {"pydantic", "tomli"},
    "data": {"numpy", "pandas"},
    "compute": {"numpy", "pandas", "scipy"},
    "draw": {"numpy", "pandas", "matplotlib"},
    "output": {"numpy", "pandas", "matplotlib", "PIL"},   # numpy: colour arithmetic; PIL (a matplotlib
                                                          # dependency): side-by-side review images
}


def imports(path: Path) -> set[str]:
    tree = ast.parse(path.read_text())
    names = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            names |= {a.name for a in node.names}
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            names.add(node.module)
    return names


def test_no_layer_imports_a_later_layer_or_a_foreign_library():
    import sys

    stdlib = set(sys.stdlib_module_names) | {"__future__"}
    for i, layer in enumerate(ORDER):
        allowed_layers = {f"figspec.{name}" for name in ORDER[: i + 1]} | {"figspec.errors", "figspec"}
        for path in (PACKAGE / layer).glob("*.py"):
            for name in imports(path):
                top = name.split(".")[0]
                if top == "figspec":
                    owner = ".".join(name.split(".")[:2])
                    assert owner in allowed_layers, f"{path.name} imports {name}"
                else:
                    assert top in stdlib | THIRD_PARTY[layer], f"{layer}/{path.name} imports {name}"


def test_check_does_not_import_matplotlib():
    import subprocess
    import sys

    code = ("import sys, figspec.pipeline as p; from helpers import DEMO_SPEC; p.check(DEMO_SPEC); "
            "print('matplotlib' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         cwd=Path(__file__).parent)
    assert out.stdout.strip() == "False", out.stderr
