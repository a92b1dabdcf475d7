"""What changed between two releases: their model choices, and the largest deviation
of each quantity on the releases' standard reference grid
(:data:`matprops.outputs.reference.CASES`).

    matprops release-diff 2026.1 2026.2
"""

from __future__ import annotations

import numpy as np

__all__ = ["release_difference", "release_difference_text"]


def release_difference(old: str, new: str, catalog=None) -> dict:
    """What changed between two releases.

    Returns a dict with ``models``: one record per quantity (the model in each
    release, ``changed`` when the model id or its file differs), ``defaults``: the
    methods' defaults the releases choose differently (None: the method's own), the new
    release's ``notes`` (which list each change with its size at standard points), and
    ``deviations``: for every case of the standard reference grid
    (:data:`matprops.outputs.reference.CASES`) that both releases evaluate, the largest
    relative deviation ``|new/old - 1|``, the largest absolute deviation with units,
    and the grid point where the relative one occurs.
    """
    from ..catalogue.store import default_catalog, sha256_of
    from ..material.silicon import Silicon
    from .reference import evaluate

    catalog = catalog or default_catalog()
    releases = {r: catalog.release(r) for r in (old, new)}
    silicon = {r: Silicon(release=r, catalog=catalog) for r in (old, new)}
    models = []
    for quantity in sorted(set(releases[old].models) | set(releases[new].models)):
        before, after = releases[old].models.get(quantity), releases[new].models.get(quantity)
        record = {"quantity": quantity, "old": before, "new": after}
        files = [
            sha256_of(silicon[r].model(quantity).path) if m else None
            for r, m in ((old, before), (new, after))
        ]
        record["changed"] = before != after or files[0] != files[1]
        models.append(record)
    # (the reference grid crosses validity limits on purpose: evaluate skips the checks)
    cases = {r: evaluate(silicon[r]) for r in (old, new)}
    deviations = []
    for label in sorted(set(cases[old]) & set(cases[new])):
        a, b = cases[old][label], cases[new][label]
        for index, (va, vb) in enumerate(zip(a["values"], b["values"], strict=False)):
            va, vb = np.asarray(va, float), np.asarray(vb, float)
            both = np.isfinite(va) & np.isfinite(vb)
            record = {
                "case": label if len(a["values"]) == 1 else f"{label}[{index}]",
                "units": a["units"][index],
                "points": int(va.size),
                "compared": int(both.sum()),
            }
            if a["units"][index] != b["units"][index] or va.shape != vb.shape:
                record.update(
                    largest_relative=None,
                    largest_absolute=None,
                    at=None,
                    note="units or grid differ between the releases",
                )
            elif not both.any():
                record.update(largest_relative=None, largest_absolute=None, at=None)
            else:
                with np.errstate(divide="ignore", invalid="ignore"):
                    rel = np.where(both & (va != 0), np.abs(vb / va - 1), 0.0)
                absolute = np.where(both, np.abs(vb - va), 0.0)
                worst = int(np.argmax(rel))
                names = list(a["grid"])
                point = {}
                if names:
                    shape = [len(a["grid"][n]) for n in names]
                    for n, i in zip(names, np.unravel_index(worst, shape), strict=True):
                        point[n] = a["grid"][n][i]
                point.update(a["fixed"])
                record.update(
                    largest_relative=float(rel.max()),
                    largest_absolute=float(absolute.max()),
                    at=point,
                )
            deviations.append(record)
    defaults = [
        {
            "option": key,
            "old": releases[old].defaults.get(key),
            "new": releases[new].defaults.get(key),
        }
        for key in sorted(set(releases[old].defaults) | set(releases[new].defaults))
        if releases[old].defaults.get(key) != releases[new].defaults.get(key)
    ]
    return {
        "old": old,
        "new": new,
        "models": models,
        "defaults": defaults,
        "deviations": deviations,
        "notes": releases[new].notes,
    }


def _pretty(units: str) -> str:
    from ..units import pretty_units

    try:
        return pretty_units(units.replace(" ** ", "^").replace("Ω", "ohm"))
    except Exception:  # a unit pint does not read stays as written
        return units


def release_difference_text(diff: dict, width: int = 100) -> str:
    """What changed, for the screen: the models whose id or file changed and the
    cases of the reference grid whose numbers moved; "identical" when nothing did."""
    import textwrap

    def wrap(text, indent="  "):
        return textwrap.fill(text, width, initial_indent=indent, subsequent_indent=indent + "  ")

    old, new = diff["old"], diff["new"]
    changed = [r for r in diff["models"] if r["changed"]]
    moved = [
        r
        for r in diff["deviations"]
        if (r["largest_relative"] is None and r.get("note"))
        or (r["largest_relative"] or 0) > 0
        or (r["largest_absolute"] or 0) > 0
    ]
    defaults = diff.get("defaults", [])
    if not changed and not moved and not defaults:
        return (
            f"releases {old} and {new} are identical: the same models (ids and files) and "
            f"the same numbers on the standard reference grid ({len(diff['deviations'])} cases)"
        )
    out = [f"release {old} -> {new}"]
    if changed:
        out.append(f"models changed ({len(changed)} of {len(diff['models'])}):")
        for r in changed:
            what = "file changed" if r["old"] == r["new"] else f"{r['old']} -> {r['new']}"
            out.append(f"  {r['quantity']:24s} {what}")
    else:
        out.append("models: the same ids and files")
    for r in defaults:
        out.append(f"default of {r['option']}: {r['old'] or 'physics'} -> {r['new'] or 'physics'}")
    same = len(diff["deviations"]) - len(moved)
    if moved:
        out.append(
            f"numbers that moved on the standard reference grid ({len(moved)} cases; "
            f"{same} unchanged), largest relative change |new/old - 1|:"
        )
        for r in sorted(moved, key=lambda r: -(r["largest_relative"] or 0)):
            if r["largest_relative"] is None:
                out.append(wrap(f"{r['case']}: {r['note']}"))
                continue
            at = ", ".join(
                f"{k}={v:g}" if isinstance(v, float) else f"{k}={v}"
                for k, v in (r["at"] or {}).items()
            )
            out.append(
                wrap(
                    f"{r['case']}: {100 * r['largest_relative']:.3g} % "
                    f"({r['largest_absolute']:.3g} {_pretty(r['units'])})"
                    + (f" at {at}" if at else "")
                )
            )
    else:
        out.append(f"numbers: identical on the standard reference grid ({same} cases)")
    if diff.get("notes"):
        out.append(f"notes of {new} (each change with its size at standard points):")
        out += ["  " + line for line in str(diff["notes"]).strip().splitlines()]
    return "\n".join(out)
