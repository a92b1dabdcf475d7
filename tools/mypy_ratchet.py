"""The type check's ratchet: mypy errors per module may only fall.

    python tools/mypy_ratchet.py            # check (CI's "types" stage)
    python tools/mypy_ratchet.py --update   # after fixing errors: lower the baseline

Runs mypy with the configuration in pyproject.toml, counts the errors of each module
and compares them with tools/mypy-baseline.json: a module with more errors than its
baseline (or a new module with any) fails, and so does any error in the modules held at
zero (ZERO). Fewer errors pass, with a reminder to lower the baseline; ``--update``
writes the current counts and refuses to raise any.
"""

from __future__ import annotations

import json
import re
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
BASELINE = ROOT / "tools" / "mypy-baseline.json"
#: modules that must stay free of type errors (prefixes of their paths)
ZERO = ("matprops/kernels/", "matprops/material/registry.py", "matprops/vocabulary.py")
ERROR = re.compile(r"^(?P<path>[\w./-]+\.py):\d+: error:")


def counts() -> tuple[dict[str, int], str]:
    """Errors per module, and mypy's summary line."""
    run = subprocess.run(
        [sys.executable, "-m", "mypy"], cwd=ROOT, capture_output=True, text=True, check=False
    )
    if run.returncode not in (0, 1):  # 2: mypy itself failed (a configuration error ...)
        sys.stderr.write(run.stdout + run.stderr)
        raise SystemExit(2)
    found: dict[str, int] = {}
    for line in run.stdout.splitlines():
        match = ERROR.match(line)
        if match:
            found[match["path"]] = found.get(match["path"], 0) + 1
    summary = run.stdout.strip().splitlines()[-1] if run.stdout.strip() else ""
    if not re.match(r"(Found \d+ errors? in|Success:)", summary):
        # mypy did not report (not installed in this Python, or crashed): never a pass
        sys.stderr.write(run.stdout + run.stderr)
        sys.stderr.write("types: mypy gave no summary (is it installed? pip install -e '.[dev]')\n")
        raise SystemExit(2)
    return dict(sorted(found.items())), summary


def main(argv: list[str]) -> int:
    update = "--update" in argv
    found, summary = counts()
    baseline = json.loads(BASELINE.read_text()) if BASELINE.is_file() else {}
    rose = {
        path: (baseline.get(path, 0), n) for path, n in found.items() if n > baseline.get(path, 0)
    }
    zero = {path: n for path, n in found.items() if path.startswith(ZERO)}
    fell = {path: (n, found.get(path, 0)) for path, n in baseline.items() if found.get(path, 0) < n}
    print(f"mypy: {summary}")
    for path, (old, new) in rose.items():
        print(f"  {path}: {new} errors, the baseline allows {old}")
    for path, n in zero.items():
        print(f"  {path}: {n} errors in a module held at zero")
    if update and not BASELINE.is_file() and not zero:  # the first baseline
        rose = {}
    if rose or zero:
        print("types: FAILED (fix the new errors; the baseline may only fall)")
        return 1
    if update:
        BASELINE.write_text(json.dumps(found, indent=1) + "\n")
        print(f"types: baseline written ({sum(found.values())} errors in {len(found)} modules)")
        return 0
    for path, (old, new) in fell.items():
        print(f"  {path}: {new} errors, down from {old}")
    if fell:
        print("types: passed; lower the baseline with python tools/mypy_ratchet.py --update")
    else:
        print("types: passed")
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
