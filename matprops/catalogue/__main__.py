"""Developer tool: ``python -m matprops.catalogue [--update-checksums] [--root DIR]``.

Checks every data file (see :func:`matprops.catalogue.checks.check`).
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from ..errors import Error
from .checks import check
from .files import interruptible
from .store import Catalog


def main(argv=None) -> int:
    """Developer tool: ``python -m matprops.catalogue [--update-checksums]``.

    Checks every data file (see :func:`matprops.catalogue.checks.check`); exit status 1 when
    anything is wrong.
    """
    parser = argparse.ArgumentParser(
        prog="python -m matprops.catalogue", description="Check or re-record dataset checksums."
    )
    parser.add_argument(
        "--update-checksums",
        action="store_true",
        help="record the sha256 of every dataset file (after a deliberate change)",
    )
    parser.add_argument("--root", type=Path, default=None, help="datasets folder")
    args = parser.parse_args(argv)
    try:
        catalog = Catalog(args.root)
        if args.update_checksums:
            with interruptible("python -m matprops.catalogue"):  # no temporary left behind
                print(f"wrote {catalog.write_checksums()}")
    except Error as exc:  # e.g. a read-only install, MATPROPS_DATASETS pointing nowhere
        print(f"error: {exc}", file=sys.stderr)
        return 2
    problems, checked = check(catalog)
    for problem in problems:
        print(f"error: {problem}")
    print(
        f"{catalog.root}: all {checked} dataset files verified"
        if not problems
        else f"{len(problems)} problem(s) in {catalog.root}"
    )
    return 1 if problems else 0


if __name__ == "__main__":
    raise SystemExit(main())
