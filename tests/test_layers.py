"""The package keeps its one-way flow, spec -> data -> compute -> draw -> output -> registry ->
steps -> pipeline -> review/draft/testing -> build -> preview -> cluster -> cli, with no cycle, and each layer uses only the
third-party libraries it is meant to."""

import ast
import sys
from pathlib import Path

import figspec

PACKAGE = Path(figspec.__file__).parent
# every module of the package belongs to one layer: a folder, or a top-level module
LAYERS = ["base", "spec", "data", "compute", "draw", "output", "registry", "steps", "pipeline", "notebook", "review",
          "draft", "testing", "build", "preview", "cluster", "demo", "cli"]
BASE = {"figspec", "figspec.errors", "figspec.optional", "figspec.__init__"}   # importable from every layer
THIRD_PARTY = {  # what each layer may import besides the standard library and earlier layers
    "spec": {"pydantic", "tomli"},
    "data": {"numpy", "pandas", "pyarrow", "h5py"},
    "compute": {"numpy", "pandas", "scipy"},
    "draw": {"numpy", "pandas", "matplotlib"},
    "output": {"numpy", "pandas", "matplotlib", "PIL"},
    "steps": {"numpy", "pandas", "matplotlib"},
    "notebook": {"pandas", "matplotlib"},
    "review": {"tomli"},
    "testing": {"pytest"},
    "cluster": {"distributed"},
    "demo": {"numpy", "pandas"},
}


def layer_of(module: str) -> str:
    """``figspec.compute.psth`` -> ``compute``; ``figspec.pipeline`` -> ``pipeline``."""
    if module in BASE:
        return "base"
    return module.split(".")[1]


def module_name(path: Path) -> str:
    rel = path.relative_to(PACKAGE.parent).with_suffix("")
    return ".".join(p for p in rel.parts if p != "__init__") if rel.name == "__init__" else ".".join(rel.parts)


def imports(path: Path) -> set[str]:
    """Absolute names a module imports; ``from figspec import pipeline`` counts as
    ``figspec.pipeline``."""
    names = set()
    for node in ast.walk(ast.parse(path.read_text())):
        if isinstance(node, ast.Import):
            names |= {a.name for a in node.names}
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            if node.module == "figspec":
                names |= {f"figspec.{a.name}" for a in node.names if a.name != "__version__"} or {"figspec"}
                if any(a.name == "__version__" for a in node.names):
                    names.add("figspec")
            else:
                names.add(node.module)
    return names


MODULES = {module_name(p): p for p in PACKAGE.rglob("*.py")}


def test_every_module_belongs_to_a_known_layer():
    unknown = sorted(m for m in MODULES if m != "figspec" and m != "figspec.__main__" and layer_of(m) not in LAYERS)
    assert unknown == []


def test_no_layer_imports_a_later_layer_or_a_foreign_library():
    stdlib = set(sys.stdlib_module_names) | {"__future__"}
    problems = []
    for name, path in MODULES.items():
        if name in ("figspec", "figspec.__main__"):
            continue
        layer = layer_of(name)
        rank = LAYERS.index(layer)
        for imported in imports(path):
            top = imported.split(".")[0]
            if top == "figspec":
                other = layer_of(imported) if imported != "figspec" else "base"
                if LAYERS.index(other) > rank:
                    problems.append(f"{name} ({layer}) imports {imported} ({other})")
            elif top not in stdlib and layer != "cli" and top not in THIRD_PARTY.get(layer, set()):
                problems.append(f"{name} ({layer}) imports {imported}")
    assert problems == []


def test_no_import_cycle_between_modules():
    graph = {name: {m for m in imports(path) if m in MODULES} for name, path in MODULES.items()}
    done, stack = set(), []

    def visit(node):
        if node in stack:
            raise AssertionError("import cycle: " + " -> ".join(stack[stack.index(node):] + [node]))
        if node in done:
            return
        stack.append(node)
        for nxt in graph[node]:
            visit(nxt)
        stack.pop()
        done.add(node)

    for node in graph:
        visit(node)
