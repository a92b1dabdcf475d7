"""The house rule: layers import only downward, and no module imports itself in a circle.

The import graph is read from the source with ``ast`` (every import, also those inside
functions and under ``if TYPE_CHECKING``), so an import hidden in a function counts.
"""

import ast
from pathlib import Path

import matprops

PACKAGE = Path(matprops.__file__).resolve().parent

# lowest first; a module may import its own layer or any layer below it
LAYERS = [
    ("errors", "_version", "vocabulary"),
    ("kernels",),
    ("units",),
    ("catalogue",),
    ("material", "optics"),
    ("outputs",),
    ("cli",),
]


def _module_name(path: Path) -> str:
    parts = path.relative_to(PACKAGE.parent).with_suffix("").parts
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


def _modules() -> dict[str, Path]:
    return {_module_name(p): p for p in PACKAGE.rglob("*.py")}


def _imports(name: str, path: Path, known: set[str]) -> set[str]:
    """matprops modules imported by one module (a name imported from a package counts
    as the submodule when there is one)."""
    package = name if path.name == "__init__.py" else name.rpartition(".")[0]
    found = set()
    for node in ast.walk(ast.parse(path.read_text())):
        if isinstance(node, ast.Import):
            targets = [alias.name for alias in node.names]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")[: len(package.split(".")) - node.level + 1]
                module = ".".join(base + ([node.module] if node.module else []))
            else:
                module = node.module or ""
            targets = [
                f"{module}.{alias.name}" if f"{module}.{alias.name}" in known else module
                for alias in node.names
            ]
        else:
            continue
        found |= {t for t in targets if t in known and t != name}
    return found


def _graph() -> dict[str, set[str]]:
    modules = _modules()
    known = set(modules)
    return {name: _imports(name, path, known) for name, path in modules.items()}


def _layer(module: str) -> int | None:
    """The layer index of a module (None for the package itself, which sits on top)."""
    if module == "matprops":
        return None
    first = module.split(".")[1]
    for index, members in enumerate(LAYERS):
        if first in members:
            return index
    raise AssertionError(f"{module}: in no layer; add its folder to LAYERS")


def test_every_module_belongs_to_a_layer():
    for module in _modules():
        _layer(module)


def test_imports_point_down_only():
    upward = [
        f"{module} (layer {_layer(module)}) imports {target} (layer {_layer(target)})"
        for module, targets in _graph().items()
        if _layer(module) is not None
        for target in targets
        if _layer(target) is None or _layer(target) > _layer(module)
    ]
    assert upward == []


def test_no_circular_imports():
    graph = _graph()
    cycles, state = [], {}

    def visit(node, stack):
        state[node] = "open"
        for target in sorted(graph[node]):
            if state.get(target) == "open":
                cycles.append(" -> ".join([*stack[stack.index(target) :], target]))
            elif target not in state:
                visit(target, [*stack, target])
        state[node] = "done"

    for node in sorted(graph):
        if node not in state:
            visit(node, [node])
    assert cycles == []


def test_the_check_sees_a_hidden_upward_import(tmp_path):
    # the rule bites: an import inside a function of a lower layer is found
    source = "def f():\n    from ..outputs import export\n"
    path = tmp_path / "probe.py"
    path.write_text(source)
    known = {"matprops.outputs.export", "matprops.catalogue.probe"}
    found = _imports("matprops.catalogue.probe", path, known)
    assert found == {"matprops.outputs.export"}
