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
from .store import Catalogue


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
    parser.add_argument(
        "--catalogue",
        action="append",
        default=[],
        type=Path,
        metavar="PATH",
        help="check (or re-record) an overlay catalogue of own models and releases instead; "
        "repeatable, each may build on those given after it",
    )
    parser.add_argument(
        "--seals",
        default=None,
        metavar="FILE",
        help="the record of final own releases (default $MATPROPS_SEALS or the user's)",
    )
    args = parser.parse_args(argv)
    try:
        if args.catalogue:
            return _check_overlays(args)
        catalogue = Catalogue(args.root)
        if args.update_checksums:
            with interruptible("python -m matprops.catalogue"):  # no temporary left behind
                print(f"wrote {catalogue.write_checksums()}")
    except Error as exc:  # e.g. a read-only install, MATPROPS_DATASETS pointing nowhere
        print(f"error: {exc}", file=sys.stderr)
        return 2
    return _report(*check(catalogue), catalogue.root)


def _report(problems, checked, root) -> int:
    for problem in problems:
        print(f"error: {problem}")
    print(
        f"{root}: all {checked} dataset files verified"
        if not problems
        else f"{len(problems)} problem(s) in {root}"
    )
    return 1 if problems else 0


def _check_overlays(args) -> int:
    from .overlay import _write_checksums_of, catalogue_at

    roots = [path.expanduser().resolve() for path in args.catalogue]
    if args.update_checksums:
        for root in roots:
            print(f"wrote {_write_checksums_of(root)}")
    status = 0
    for index, root in enumerate(roots):
        overlay = catalogue_at(args.root, roots[index:], args.seals)
        status = max(status, _report(*check(overlay), root))
    return status


if __name__ == "__main__":
    raise SystemExit(main())
