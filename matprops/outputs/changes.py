"""What changed between two releases: their model choices, and the largest deviation
of each quantity on the releases' standard reference grid
(:data:`matprops.outputs.reference.CASES`); the screen's text of it is
:func:`matprops.outputs.render.release_difference_text`.

    matprops release-diff 2026.1 2026.2
"""

from __future__ import annotations

import numpy as np

__all__ = ["release_difference"]


def release_difference(old: str, new: str, catalogue=None) -> dict:
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
    from ..catalogue.store import default_catalogue, sha256_of
    from ..material.silicon import Silicon
    from .reference import evaluate

    catalogue = catalogue or default_catalogue()
    releases = {r: catalogue.release(r) for r in (old, new)}
    silicon = {r: Silicon(release=r, catalogue=catalogue) for r in (old, new)}
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
