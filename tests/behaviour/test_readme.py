"""The README's usage example runs as written (placeholders replaced by small arrays)."""

import contextlib
import io
import warnings
from pathlib import Path

import numpy as np

import matprops

README = Path(__file__).resolve().parents[2] / "README.md"


def test_the_usage_example_runs():
    text = README.read_text()
    block = text.split("\n## Use\n", 1)[1].split("```python", 1)[1].split("```", 1)[0]
    for placeholder in ("numpy_array_of_kelvin", "mesh_temperatures"):
        block = block.replace(placeholder, "np.array([250.0, 300.0])")
    namespace = {"np": np}
    with warnings.catch_warnings(), contextlib.redirect_stdout(io.StringIO()):
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        exec(compile(block, "README.md (Use)", "exec"), namespace)
    assert namespace["si"].release.id == matprops.releases()[-1]


def test_the_reliability_section_names_tests_that_exist():
    text = README.read_text()
    section = text.split("\n## Reliability\n", 1)[1].split("\n## ", 1)[0]
    import re

    named = set(re.findall(r"`(tests/[\w/]+\.py)`", section))
    assert len(named) >= 10
    root = README.parent
    assert all((root / path).is_file() for path in named), named
