"""Build the documentation site: generate the catalogue's pages, then run Sphinx.

    python docs/build.py            # -> build/docs/html (index.html)

The Sphinx source is assembled in build/docs/source (the hand-written pages of docs/,
then the generated ones), so docs/ holds only what is kept in git. Generated into
build/docs/source/generated/, from the data files, the quantity registry and the
command's own parser:

- quantities/<quantity>.md: what it is, its units and table axes, the release's
  model or the formula of a derived quantity, every model with its equation, source,
  validity, how its numbers were obtained, coefficients and fit conventions, and a
  comparison plot of the models (colour and marker per model, dashed outside a
  model's validity range, ratio to the default);
- releases/<release>.md: status, date, notes, models, and what changed against the
  previous release (``matprops release-diff``);
- cli.md: every command and option, from the parser itself.

Sphinx runs with warnings as errors (-W): a broken reference fails the build.
"""

from __future__ import annotations

import argparse
import inspect
import shutil
import subprocess
import sys
import warnings
from pathlib import Path

DOCS = Path(__file__).resolve().parent
BUILD = DOCS.parent / "build" / "docs"
SOURCE = BUILD / "source"
OUT = SOURCE / "generated"
# the hand-written pages and the configuration, copied into the source folder
KEPT = ("conf.py", "index.md", "models.md", "simulation.md", "guides", "_static")


def _md(text) -> str:
    """Plain text safe inside a Markdown table cell."""
    return " ".join(str(text).split()).replace("|", "\\|")


def _equation(model) -> str:
    import textwrap

    doc = inspect.getdoc(model.kernel) or ""
    paragraphs = doc.split("\nParameters")[0].strip().split("\n\n")
    return "\n\n".join(textwrap.fill(" ".join(p.split()), 88) for p in paragraphs)


def _values(coefficient) -> str:
    value = coefficient.value
    shown = ", ".join(f"{v:g}" for v in value) if isinstance(value, tuple) else f"{value:g}"
    unc = coefficient.uncertainty
    if unc is not None:
        shown += " ± " + (
            ", ".join(f"{u:g}" for u in unc) if isinstance(unc, tuple) else f"{unc:g}"
        )
    return shown


# the grid each quantity's comparison plot is drawn on: x axis and fixed inputs
_FIXED = {
    "carrier": "electron",
    "dopant": "boron",
    "plane": "100",
    "field": 1e4,
    "resistivity": 1.0,
    "dopant_density": 1e16,
    "defect_density": 1e11,
    "generation": 1e17,
    "thickness": "180 um",
    "excess_density": 1e15,
    "defect": "iron-interstitial",
}


def _grid(entry):
    import numpy as np

    takes = set(entry.takes)
    grid = {}
    if "wavelength" in takes:
        x = "wavelength"
        grid["wavelength"] = np.arange(300.0, 1201.0, 25.0)
        if "temperature" in takes:
            grid["temperature"] = 300.0
        if "electron_density" in takes:  # free-carrier absorption of a doped layer
            x = "electron_density"
            grid = {"wavelength": 1550.0, "electron_density": np.logspace(15, 20, 21)}
            grid["hole_density"] = 0.0
    elif {"donor_density", "acceptor_density"} & takes and "temperature" in takes:
        x = "donor_density"
        grid["donor_density"] = np.logspace(14, 20, 25)
        grid["temperature"] = 300.0
    elif "temperature" in takes:
        x = "temperature"
        grid["temperature"] = np.arange(200.0, 501.0, 10.0)
    elif "dopant_density" in takes:
        x = "dopant_density"
        grid["dopant_density"] = np.logspace(14, 20, 25)
    else:
        return None, None
    for name in entry.required:
        if name not in grid:
            if name not in _FIXED:
                return None, None
            grid[name] = _FIXED[name]
    if "defect_density" in takes and "defect" in grid:  # a defect needs its density
        grid.setdefault("defect_density", 1e11)
    return x, grid


def _plot(si, quantity, entry, folder: Path) -> str:
    """The comparison plot of a quantity's models (or its value) -> Markdown."""
    from matprops import plotting

    x, grid = _grid(entry)
    if x is None:
        return "No plot: the quantity has no numeric axis to draw it against.\n"
    path = folder / f"{quantity}.png"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # the flags mark what is outside a range
        try:
            if quantity in si.catalogue.quantities() and len(si.catalogue.model_ids(quantity)) > 1:
                data = si.compare(quantity, **grid)
                what = "Every model of the quantity"
            else:
                data = si.table([quantity], **grid)
                what = "The quantity"
            plotting.plot(data, path, x=x, overwrite=True)
        except Exception as exc:  # a quantity whose grid needs more than this page gives
            return f"No plot: {_md(exc)}\n"
    fixed = ", ".join(f"{k} = {v}" for k, v in grid.items() if k != x and not hasattr(v, "size"))
    return (
        f"![{quantity}: models compared]({quantity}.png)\n\n"
        f"{what} against {x.replace('_', ' ')}"
        + (f" ({fixed})" if fixed else "")
        + "; dashed where a model is outside its validity range; the lower panel, each "
        "model's ratio to the release's default.\n"
    )


def quantity_page(si, quantity, entry, folder: Path) -> str:
    from matprops.units import pretty_units

    units = entry.units if isinstance(entry.units, tuple) else (entry.units,)
    lines = [f"# {quantity}", "", f"{_md(entry.long_name or quantity)}."]
    shown = ", ".join(_md(pretty_units(u) or "1") for u in units)
    lines += [
        "",
        f"- units: {shown}",
        f"- Python: `si.{entry.method}(...)`; table axes: "
        + (", ".join(f"`{a}`" for a in entry.takes) or "none"),
        f"- command line: `matprops table {quantity} ...`, `matprops explain {quantity} ...`",
    ]
    catalogue = si.catalogue
    has_models = quantity in catalogue.quantities()
    if entry.derived:
        lines += [
            "- derived from: "
            + ", ".join(
                f"[{q}]({q}.md)" if q in catalogue.quantities() else q
                for q in entry.model_quantities()
            ),
            f"- formula: {_md(entry.formula or '')}",
        ]
    elif has_models:
        lines.append(f"- model in release {si.release.id}: `{si.models.get(quantity, '(none)')}`")
    lines += ["", "## Comparison", "", _plot(si, quantity, entry, folder)]
    if has_models:
        lines += ["## Models", ""]
        releases = catalogue.release_ids()
        for model_id in catalogue.model_ids(quantity):
            model = catalogue.model(quantity, model_id)
            default_in = [
                r for r in releases if catalogue.release(r).models.get(quantity) == model_id
            ]
            lines += [f"### {model_id}", "", _md(model.name) + ".", ""]
            if default_in:
                lines.append(f"Default in release {', '.join(default_in)}.\n")
            equation = _equation(model)
            if equation:
                lines += ["Equation (from the kernel):", "", "```text", equation, "```", ""]
            lines.append(f"- source: {_md(model.source.citation())}")
            for extra in model.additional_sources:
                lines.append(f"- also: {_md(extra.citation())}")
            validity = "; ".join(str(r) for r in model.validity.values()) or "no limits recorded"
            lines.append(f"- validity: {_md(validity)}")
            for region in model.regions:
                lines.append(f"- validity region: {_md(region)}")
            lines.append(f"- how the numbers were obtained: {_md(model.obtained)}")
            lines.append(
                f"- file: `datasets/models/{quantity}/{model.path.name}` "
                f"(sha256 `{model.sha256[:16]}…`)"
            )
            conventions = getattr(model, "conventions", None)
            if conventions:
                fitted = "; ".join(
                    f"{name} {conventions[name].value if conventions[name].known else 'not known'}"
                    for name in conventions
                )
                lines.append(f"- fitted with: {_md(fitted)}")
            if model.coefficients:
                lines += ["", "| coefficient | value (as published) | units |", "|---|---|---|"]
                for name, coefficient in model.coefficients.items():
                    units_ = (
                        "" if coefficient.units in ("1", "dimensionless") else coefficient.units
                    )
                    lines.append(f"| `{name}` | {_md(_values(coefficient))} | {_md(units_)} |")
            if model.notes:
                lines += ["", f"Notes: {_md(model.notes)}"]
            lines.append("")
    lines += [
        "```{admonition} Caution",
        "Model estimates: where they feed decisions with consequences, defer to measured "
        "data, local codes and licensed engineering practice.",
        "```",
        "",
    ]
    return "\n".join(lines)


def release_page(catalogue, release_id, previous) -> str:
    from matprops.outputs.changes import release_difference
    from matprops.outputs.render import release_difference_text

    release = catalogue.release(release_id)
    lines = [
        f"# Release {release_id}",
        "",
        f"- status: {release.status}; date: {release.date}",
        "",
        "## Notes",
        "",
        "```text",
        release.notes.strip(),
        "```",
        "",
        "## Models",
        "",
        "| quantity | model |",
        "|---|---|",
    ]
    for quantity, model_id in release.models.items():
        lines.append(f"| [{quantity}](../quantities/{quantity}.md) | `{model_id}` |")
    lines += ["", "## What changed", ""]
    if previous is None:
        lines.append("The first release.")
    else:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            text = release_difference_text(release_difference(previous, release_id), 100)
        lines += [
            f"Against release {previous} (`matprops release-diff {previous} {release_id}`):",
            "",
            "```text",
            text,
            "```",
        ]
    return "\n".join(lines) + "\n"


def cli_page() -> str:
    from matprops.cli.main import build_parser

    parser = build_parser()
    lines = [
        "# Command-line reference",
        "",
        "Generated from the command's own parser (`matprops COMMAND --help` prints the same).",
        "",
        "```text",
        parser.format_help().strip(),
        "```",
        "",
    ]
    commands = parser._subparsers._group_actions[0].choices
    for name, sub in commands.items():
        lines += [f"## matprops {name}", "", "```text", sub.format_help().strip(), "```", ""]
    return "\n".join(lines)


def generate() -> None:
    import os

    os.environ.setdefault("COLUMNS", "100")
    import matprops
    from matprops.material.registry import REGISTRY
    from matprops.material.tables import available

    if SOURCE.exists():
        shutil.rmtree(SOURCE)
    SOURCE.mkdir(parents=True)
    for name in KEPT:
        if (DOCS / name).is_dir():
            shutil.copytree(DOCS / name, SOURCE / name)
        else:
            shutil.copy2(DOCS / name, SOURCE / name)
    (OUT / "quantities").mkdir(parents=True)
    (OUT / "releases").mkdir(parents=True)
    si = matprops.silicon()
    served = available(si)
    index = [
        "# Quantities",
        "",
        f"Every quantity of release {si.release.id}, one page each.",
        "",
        "```{toctree}",
        ":maxdepth: 1",
        "",
    ]
    for quantity in served:
        entry = REGISTRY[quantity]
        page = quantity_page(si, quantity, entry, OUT / "quantities")
        (OUT / "quantities" / f"{quantity}.md").write_text(page, encoding="utf-8")
        index.append(quantity)
    index.append("```")
    (OUT / "quantities" / "index.md").write_text("\n".join(index) + "\n", encoding="utf-8")
    # every quantity a release names gets a page even if this release does not serve it
    catalogue = si.catalogue
    releases = catalogue.release_ids()
    rindex = [
        "# Releases",
        "",
        "Each release: its notes, models and what changed.",
        "",
        "```{toctree}",
        ":maxdepth: 1",
        "",
    ]
    for number, release_id in enumerate(releases):
        previous = releases[number - 1] if number else None
        (OUT / "releases" / f"{release_id}.md").write_text(
            release_page(catalogue, release_id, previous), encoding="utf-8"
        )
        rindex.append(release_id)
    rindex.append("```")
    (OUT / "releases" / "index.md").write_text("\n".join(rindex) + "\n", encoding="utf-8")
    for release_id in releases:  # a quantity of an older release no longer served
        for quantity in catalogue.release(release_id).models:
            page = OUT / "quantities" / f"{quantity}.md"
            if not page.exists():
                page.write_text(f"# {quantity}\n\nNot served by release {si.release.id}.\n")
    (OUT / "cli.md").write_text(cli_page(), encoding="utf-8")


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", default=str(BUILD / "html"))
    parser.add_argument("--generate-only", action="store_true")
    args = parser.parse_args(argv)
    generate()
    if args.generate_only:
        return 0
    return subprocess.call(
        [
            sys.executable,
            "-m",
            "sphinx",
            "-W",
            "--keep-going",
            "-q",
            "-b",
            "html",
            str(SOURCE),
            args.out,
        ]
    )


if __name__ == "__main__":
    raise SystemExit(main())
