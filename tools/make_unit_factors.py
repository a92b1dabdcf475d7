"""Write matprops/catalogue/_unit_factors.py: pint's factor for every pair of unit strings
the data files convert (``python tools/make_unit_factors.py``).

Loads every data file of the catalogue (main tree and every final release's archive,
through the catalogue check), records each (units, target) pair a conversion was asked
for, and writes pint's factor for each. Re-run after adding a data file with units not
seen before: until then those conversions go through pint (correct, slower to load), and
``tests/behaviour/test_unit_factors.py`` fails naming the pair.
"""

from __future__ import annotations

import sys
from pathlib import Path

HEADER = '''"""pint's factors for the unit strings of the data files (generated: do not edit).

Written by tools/make_unit_factors.py with pint {version}: (units as written in a data
file, the kernel's internal units) -> the factor pint multiplies by. Loading the
catalogue converts with these, so it needs no unit registry; the tests check every
factor against pint.
"""

FACTORS = {{
'''


def main() -> int:
    root = Path(__file__).resolve().parents[1]
    sys.path.insert(0, str(root))
    import pint

    from matprops.catalogue import fields
    from matprops.catalogue.checks import check
    from matprops.catalogue.store import Catalogue

    fields_factors = __import__("matprops.catalogue._unit_factors", fromlist=["FACTORS"])
    fields_factors.FACTORS.clear()  # record every pair through pint
    problems, _ = check(Catalogue())
    if problems:
        print("\n".join(problems))
        return 1
    lines = [HEADER.format(version=pint.__version__)]
    for units, target in sorted(fields.CONVERSIONS_SEEN):
        factor = fields.pint_factor(units, target)
        if factor is not None:
            lines.append(f'    ("{units}", "{target}"): {factor!r},\n')
    lines.append("}\n")
    target = root / "matprops" / "catalogue" / "_unit_factors.py"
    target.write_text("".join(lines))
    print(f"wrote {target} ({len(lines) - 2} pairs)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
