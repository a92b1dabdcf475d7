"""Every example in the README and the guides runs as written.

README: every ``python`` block (placeholders aside; a block whose first line is a
``# sketch:`` comment stands for the reader's own data and is run elsewhere, as it says)
and every ``matprops`` command of its command-line block run without a warning of any
kind. Guides (docs/guides/*.md):
each page's ``python`` blocks run in one namespace, its ``bash`` lines that start with
``matprops`` through the command's own entry point, and a ``toml`` block preceded by
``<!-- file: NAME -->`` is written to NAME first; a validity warning is allowed there
(the guides show what the flags mean), any other warning fails.
"""

import contextlib
import io
import os
import re
import shlex
import warnings
from pathlib import Path

import numpy as np
import pytest

import matprops
from matprops.cli import main

ROOT = Path(__file__).resolve().parents[2]
README = ROOT / "README.md"
GUIDES = sorted((ROOT / "docs" / "guides").glob("*.md"))
# README placeholders: names a reader replaces with their own arrays
PLACEHOLDERS = {
    "numpy_array_of_kelvin": "np.array([250.0, 300.0])",
    "mesh_temperatures": "np.array([250.0, 300.0])",
}


def blocks(path):
    """(language, body, file name or None) of each fenced block, in order."""
    found, lang, body, file, previous = [], None, [], None, ""
    for line in path.read_text(encoding="utf-8").splitlines():
        if lang is None:
            opening = re.match(r"^```(\S*)", line)
            if opening:
                lang, body = opening.group(1), []
                marker = re.match(r"^<!-- file: ([\w.-]+) -->$", previous)
                file = marker.group(1) if marker else None
            previous = line
            continue
        if re.match(r"^```\s*$", line):
            found.append((lang, "\n".join(body) + "\n", file))
            lang, previous = None, line
            continue
        body.append(line)
    return found


def commands(body):
    """``matprops ...`` lines of a shell block (continuations joined, comments cut)."""
    lines, current = [], ""
    for raw in body.splitlines():
        line = raw.rstrip()
        if line.endswith("\\"):
            current += line[:-1] + " "
            continue
        current += line
        text = current.strip()
        current = ""
        if text.startswith("matprops "):
            lines.extend(part.strip() for part in re.split(r";\s*(?=matprops )", text))
    return [shlex.split(line, comments=True)[1:] for line in lines]


def run_command(argv):
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(argv)
    return code, out.getvalue(), err.getvalue()


@pytest.fixture
def workdir(tmp_path):
    here = os.getcwd()
    os.chdir(tmp_path)
    try:
        yield tmp_path
    finally:
        os.chdir(here)


def test_readme_python_examples_run_without_warnings(workdir):
    namespace = {"np": np}
    ran = 0
    for lang, body, _ in blocks(README):
        if lang != "python" or body.startswith("# sketch:"):
            continue
        for placeholder, value in PLACEHOLDERS.items():
            body = body.replace(placeholder, value)
        with warnings.catch_warnings(), contextlib.redirect_stdout(io.StringIO()):
            warnings.simplefilter("error")
            exec(compile(body, "README.md", "exec"), namespace)
        ran += 1
    assert ran >= 2


def test_readme_commands_run_without_warnings(workdir):
    argvs = [argv for lang, body, _ in blocks(README) if lang == "" for argv in commands(body)]
    assert len(argvs) >= 15
    for argv in argvs:
        code, _, err = run_command(argv)
        assert code == 0, f"matprops {shlex.join(argv)}: {err}"
        assert "warning" not in err, f"matprops {shlex.join(argv)}: {err}"


@pytest.mark.parametrize("guide", GUIDES, ids=[g.stem for g in GUIDES])
def test_every_guide_block_runs(guide, workdir):
    namespace = {}
    count = 0
    for lang, body, file in blocks(guide):
        if lang == "toml" and file:
            (workdir / file).write_text(body, encoding="utf-8")
        elif lang == "python":
            with warnings.catch_warnings(), contextlib.redirect_stdout(io.StringIO()):
                warnings.simplefilter("error")
                warnings.simplefilter("ignore", matprops.ValidityWarning)
                exec(compile(body, str(guide), "exec"), namespace)
            count += 1
        elif lang == "bash":
            for argv in commands(body):
                code, _, err = run_command(argv)
                assert code == 0, f"{guide.name}: matprops {shlex.join(argv)}: {err}"
                count += 1
    assert count >= 3
