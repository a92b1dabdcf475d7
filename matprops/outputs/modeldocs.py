"""Generate the model catalogue (docs/models.md) from datasets/ — never by hand.

    python -m matprops.outputs.modeldocs            # rewrites docs/models.md

Each quantity's heading says what it is, the method that serves it, its units and
table axes (from the quantity registry, :mod:`matprops.material.registry`); then
every model of it (from its model file). Derived quantities, which have no model
files, follow with the formula they are composed by. A test checks that the
committed file matches what this produces.
"""

from __future__ import annotations

import os
import sys
from pathlib import Path

from ..catalogue.files import forget, interruptible, temporary_for
from ..catalogue.store import Catalogue, default_catalogue
from ..material.registry import declared
from .render import model_record

__all__ = ["main", "render"]


def _one_line(text: str) -> str:
    return " ".join(str(text).split())


def render(catalogue: Catalogue | None = None) -> str:
    """The catalogue as Markdown: every quantity, model, source, validity, origin."""
    catalogue = catalogue or default_catalogue()
    releases = {r: catalogue.release(r) for r in catalogue.release_ids()}
    lines = [
        "# Model catalogue",
        "",
        "Generated from `datasets/` by `python -m matprops.outputs.modeldocs`; do not edit.",
        "Each model's `obtained` field says how its numbers were obtained.",
        "",
    ]
    lines += ["| release | status | date |", "|---|---|---|"]
    lines += [f"| {r.id} | {r.status} | {r.date} |" for r in releases.values()]
    registry = declared()
    for quantity in catalogue.quantities():
        lines += ["", f"## {quantity}", ""]
        if quantity in registry:
            lines += [_declaration(registry[quantity]), ""]
        for model_id in catalogue.model_ids(quantity):
            model = catalogue.model(quantity, model_id)
            chosen = [r for r, rel in releases.items() if rel.models.get(quantity) == model_id]
            lines += model_record(model, "markdown", defaults=chosen)
    lines += _derived_lines(registry)
    lines += _defect_lines(catalogue)
    return "\n".join(lines).rstrip() + "\n"


def _units(units) -> str:
    return ", ".join(units) if isinstance(units, tuple) else units


def _declaration(entry) -> str:
    """One line from a quantity's declaration: what it is, its method, units, axes."""
    arguments = ", ".join(entry.takes.values())
    fixed = "".join(f", {k}={v!r}" for k, v in entry.fixed.items())
    axes = ", ".join(entry.takes) or "none"
    aliases = f"; also called {', '.join(entry.aliases)}" if entry.aliases else ""
    return (
        f"{_one_line(entry.long_name)}: `si.{entry.method}({arguments}{fixed})` "
        f"[{_units(entry.units)}]; table axes: {axes}{aliases}."
    )


def _derived_lines(registry) -> list[str]:
    """Quantities composed from other quantities' models (no model file of their own)."""
    derived = [q for q in registry.values() if q.derived]
    if not derived:
        return []
    lines = ["", "## Derived quantities", ""]
    lines += ["Composed from the models the material serves; each one's provenance names them.", ""]
    for entry in derived:
        lines += [f"### {entry.name}", "", _declaration(entry), ""]
        lines.append(f"- from: {', '.join(entry.models)}")
        lines.append(f"- formula: {_one_line(entry.formula)}")
        lines.append("")
    return lines


def _defect_lines(catalogue: Catalogue) -> list[str]:
    """The defect catalogue (``datasets/defects/``), one entry per defect."""
    from ..catalogue.defects import describe

    entries = describe(catalogue)
    if not entries:
        return []
    lines = [
        "",
        "## Defect catalogue (Shockley-Read-Hall centres)",
        "",
        "Used by `si.srh_lifetime`, `si.effective_lifetime` and `si.implied_voltage`.",
        "",
    ]
    for defect in entries:
        aliases = f" (also {', '.join(defect.aliases)})" if defect.aliases else ""
        lines += [f"### `{defect.name}`{aliases}", "", _one_line(defect.description), ""]
        lines.append(f"- level: {defect.level_text()}")
        if defect.absolute:
            lines.append(
                f"- electron capture cross-section: {defect.electron_cross_section.describe()}"
            )
            lines.append(f"- hole capture cross-section: {defect.hole_cross_section.describe()}")
        else:
            lines.append(
                f"- sigma_n / sigma_p = {defect.cross_section_ratio:g} "
                "(ratio only: give the electron capture time)"
            )
        lines.append(f"- thermal velocity: {_one_line(defect.thermal_velocity_note)}")
        lines.append(f"- source: {defect.source.citation()}")
        for extra in defect.additional_sources:
            lines.append(f"- also: {extra.citation()}")
        lines.append(f"- obtained: {_one_line(defect.obtained)}")
        if defect.notes:
            lines.append(f"- notes: {_one_line(defect.notes)}")
        lines.append("")
    return lines


def main(argv=None) -> int:
    import argparse

    default = Path(__file__).resolve().parents[2] / "docs" / "models.md"
    parser = argparse.ArgumentParser(
        prog="python -m matprops.outputs.modeldocs",
        description="Regenerate the model catalogue (docs/models.md) from datasets/.",
    )
    parser.add_argument(
        "output",
        nargs="?",
        type=Path,
        default=default,
        help="where to write it (default: %(default)s)",
    )
    target = parser.parse_args(argv).output
    target.parent.mkdir(parents=True, exist_ok=True)
    text = render()
    with interruptible("python -m matprops.outputs.modeldocs"):
        tmp = temporary_for(target)
        try:
            tmp.write_text(text)
            os.replace(tmp, target)
        finally:
            tmp.unlink(missing_ok=True)
            forget(tmp)
    print(f"wrote {target}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
