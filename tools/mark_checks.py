"""Mark each outside and regression test with the models it checks (a contributor's tool).

    python tools/mark_checks.py [tests/outside tests/regression]

Runs the given test folders once with a recorder: every call of a Silicon method that
serves a declared quantity, every bound kernel, model record or provenance asked for,
notes which models (``quantity/model-id``) the test evaluated (a derived quantity: the
models it is composed from). Then it adds ``@pytest.mark.model(...)`` above each test
function that has no such marker yet. Review the diff: a marker says what a test
checks, and a test that only touches a model in passing may deserve none.
``python tests/index.py`` then rewrites tests/INDEX.md from the markers.
"""

from __future__ import annotations

import ast
import sys
from collections import defaultdict
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


TESTS = str(ROOT / "tests")


_FAMILIES = {"carriers", "crystal", "optical", "transport", "recombination", "bound", "derived"}


def _asked_by_a_test() -> bool:
    """Whether the call being recorded came from a test (straight, or through a table,
    a comparison or a provenance record it asked for), not from inside matprops
    building a material or composing one quantity from others."""
    frame = sys._getframe(1)
    while frame is not None:
        filename = frame.f_code.co_filename
        if filename.startswith(TESTS):
            return True
        path = Path(filename)
        inside = (
            path.parent.name == "material" and path.stem in _FAMILIES
        ) or path.parent.name == "catalogue"
        if inside or frame.f_code.co_name in ("_bind", "__init__", "_restore"):
            if not filename.endswith("mark_checks.py"):
                return False
        frame = frame.f_back
    return False


class Recorder:
    """A pytest plugin: the models each test evaluates."""

    def __init__(self):
        self.found: dict[str, set[str]] = defaultdict(set)
        self.current: str | None = None

    def note(self, quantity: str, model_id: str | None) -> None:
        if self.current and model_id and model_id != "derived" and _asked_by_a_test():
            self.found[self.current].add(f"{quantity}/{model_id}")

    def note_quantity(self, si, name: str, fixed=None) -> None:
        from matprops.material.registry import REGISTRY

        declared = REGISTRY.get(name) if fixed is None else None
        if fixed is not None:
            declared = REGISTRY.for_method(name, fixed)
        if declared is None:
            return
        for quantity in declared.models:
            self.note(quantity, si.models.get(quantity))

    @pytest.hookimpl(hookwrapper=True)
    def pytest_runtest_call(self, item):
        self.current = item.nodeid
        yield
        self.current = None

    def install(self):
        import functools

        import matprops
        from matprops.catalogue import store
        from matprops.material.registry import REGISTRY

        silicon = matprops.Silicon
        recorder = self

        for method in REGISTRY.methods():
            original = getattr(silicon, method)

            @functools.wraps(original)
            def wrapped(self, *args, _original=original, _method=method, **kwargs):
                recorder.note_quantity(self, _method, kwargs)
                return _original(self, *args, **kwargs)

            setattr(silicon, method, wrapped)
        for door in ("kernel", "model", "provenance"):
            original = getattr(silicon, door)

            @functools.wraps(original)
            def wrapped(self, name, *args, _original=original, **kwargs):
                if isinstance(name, str):
                    recorder.note_quantity(self, REGISTRY.canonical(name))
                return _original(self, name, *args, **kwargs)

            setattr(silicon, door, wrapped)
        original_model = store.Catalogue.model

        def model(self, quantity, model_id):
            recorder.note(quantity, model_id)
            return original_model(self, quantity, model_id)

        store.Catalogue.model = model


def _has_marker(function: ast.FunctionDef) -> bool:
    return any("mark.model" in ast.unparse(d) for d in function.decorator_list)


def mark(found: dict[str, set[str]]) -> list[str]:
    """Add the markers to the test files; returns the files changed."""
    by_file: dict[Path, dict[str, set[str]]] = defaultdict(lambda: defaultdict(set))
    for nodeid, models in found.items():
        path, _, name = nodeid.partition("::")
        by_file[ROOT / path][name.partition("[")[0]] |= models
    changed = []
    for path, functions in sorted(by_file.items()):
        source = path.read_text()
        lines = source.splitlines(keepends=True)
        edits = []
        for node in ast.parse(source).body:
            if isinstance(node, ast.FunctionDef) and node.name in functions:
                if _has_marker(node) or not functions[node.name]:
                    continue
                first = min([d.lineno for d in node.decorator_list] + [node.lineno]) - 1
                models = sorted(functions[node.name])
                text = ", ".join(f'"{m}"' for m in models)
                line = f"@pytest.mark.model({text})\n"
                if len(line) > 100:
                    inner = "".join(f'    "{m}",\n' for m in models)
                    line = f"@pytest.mark.model(\n{inner})\n"
                edits.append((first, line))
        if not edits:
            continue
        for first, line in sorted(edits, reverse=True):
            lines.insert(first, line)
        text = "".join(lines)
        if "import pytest\n" not in text:
            text = text.replace("\nimport matprops\n", "\nimport pytest\n\nimport matprops\n", 1)
        path.write_text(text)
        changed.append(str(path.relative_to(ROOT)))
    return changed


def main(argv=None) -> int:
    folders = (argv if argv else None) or ["tests/outside", "tests/regression"]
    recorder = Recorder()
    recorder.install()
    code = pytest.main(["-q", "-p", "no:cacheprovider", *folders], plugins=[recorder])
    if code not in (0, 1):
        return int(code)
    for path in mark(recorder.found):
        print(f"marked {path}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
