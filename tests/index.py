"""The index from model id to the tests that check it (``tests/INDEX.md``).

Each test names the models it checks with ``@pytest.mark.model("quantity/model-id",
...)`` (a bare model id where only one model has it); this module reads those markers
from the test files (with ``ast``, without running anything) and writes the index::

    python tests/index.py            # rewrites tests/INDEX.md

``tests/behaviour/test_index.py`` checks that the index is current, that every marker
names a model of the catalogue, and that every model of the catalogue has a check.
``python tools/mark_checks.py`` proposes markers for new tests (review them).
"""

from __future__ import annotations

import ast
import sys
from collections import defaultdict
from pathlib import Path

HERE = Path(__file__).resolve().parent
INDEX = HERE / "INDEX.md"


def markers() -> dict[str, list[str]]:
    """Marker argument -> the tests (``path::function``) that carry it, from the files."""
    found: dict[str, list[str]] = defaultdict(list)
    for path in sorted(HERE.glob("*/test_*.py")):
        for node in ast.walk(ast.parse(path.read_text())):
            if not isinstance(node, ast.FunctionDef):
                continue
            for decorator in node.decorator_list:
                if isinstance(decorator, ast.Call) and ast.unparse(decorator.func).endswith(
                    "mark.model"
                ):
                    test = f"{path.relative_to(HERE).as_posix()}::{node.name}"
                    for argument in decorator.args:
                        found[ast.literal_eval(argument)].append(test)
    return dict(found)


def catalogue_models() -> list[str]:
    """``quantity/model-id`` of every model file in the main tree."""
    root = HERE.parent / "datasets" / "models"
    return sorted(f"{p.parent.name}/{p.stem}" for p in root.glob("*/*.toml"))


def resolve(marker: str, models: list[str]) -> list[str]:
    """The catalogue models a marker argument names (a bare id: every model with it)."""
    if "/" in marker:
        return [marker] if marker in models else []
    return [m for m in models if m.partition("/")[2] == marker]


def checks() -> dict[str, list[str]]:
    """``quantity/model-id`` -> the tests that check it (every model of the catalogue)."""
    models = catalogue_models()
    found: dict[str, list[str]] = {m: [] for m in models}
    for marker, tests in markers().items():
        for model in resolve(marker, models):
            found[model] += [t for t in tests if t not in found[model]]
    return found


def render() -> str:
    lines = [
        "# Index: model -> its checks",
        "",
        "Generated from the tests' `@pytest.mark.model(...)` markers by `python tests/index.py`;",
        "do not edit. Run one model's checks: `python -m pytest tests/<file>::<test>`.",
        "",
    ]
    for model, tests in checks().items():
        outside = [t for t in tests if t.startswith("outside/")]
        others = [t for t in tests if not t.startswith("outside/")]
        line = f"- `{model}`: " + (", ".join(outside + others) or "(no check)")
        lines.append(line)
    return "\n".join(lines) + "\n"


def main() -> int:
    INDEX.write_text(render())
    print(f"wrote {INDEX}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
