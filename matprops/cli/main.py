"""The ``matprops`` command: argument parsing and printing only.

    matprops demo                              # the bundled, INVENTED scenario
    matprops table band_gap intrinsic_density --temperature -40,25,85degC
    matprops table absorption -t 300 -w '400:1100:100 nm' -o optics.nc
    matprops table --Na '1e14:1e19:*10' -t 300 ...      # doping axes (cm^-3)
    matprops compare band_gap -t '50:500:50 K'          # every model side by side
    matprops plot band_gap --models passler-2002,thurmond-1975 -t 50:500:5 -o gap.png
    matprops describe intrinsic_density [MODEL]         # equation, coefficients, source
    matprops provenance QUANTITY [--json]
    matprops release-diff OLD NEW
    matprops models [QUANTITY]; matprops releases; matprops cite [--format text]

Grid options take numbers separated by commas, ranges ``start:stop:step``,
``start:stop:*factor`` or ``start:stop:N/decade``, then an optional unit:
``-40,25,85degC``, ``'250:400:50 K'``, ``1e15:1e19:*10``, ``'3e2 K'``. Errors are one
line on stderr with exit status 2; warnings name the command's own options.
"""

from __future__ import annotations

import argparse
import json
import os
import re
import shlex
import sys
import tomllib

import numpy as np

from ..catalogue.files import interruptible
from ..errors import (
    Error,
    InputError,
    UnitError,
)
from ..material.validity import value_names
from ..outputs import render
from . import own

__all__ = ["main", "parse_grid"]

_NUMBER = r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?"
_ITEM = re.compile(
    rf"^\s*(?P<start>{_NUMBER})(?:\s*:\s*(?P<stop>{_NUMBER})\s*:\s*"
    rf"(?P<step>\*\s*{_NUMBER}|{_NUMBER}\s*/\s*decade|{_NUMBER}))?\s*"
    rf"(?P<rest>.*?)\s*$"
)
_NONFINITE = re.compile(r"(?i)(^|[\s,:*/+-])(nan|inf|infinity)\b")
MAX_VALUES = 10**8
_GRID_HELP = (
    "numbers separated by commas, or ranges start:stop:step, start:stop:*factor "
    "or start:stop:N/decade, then an optional unit (e.g. -40,25,85degC, "
    "'250:400:50 K', 1e15:1e19:*10)"
)


def _expand(start: float, stop: float, step: str, option: str, text: str) -> np.ndarray:
    """The values of one range item."""

    def bad(requirement):
        return InputError(option, requirement, repr(text))

    if stop < start:
        raise bad("a range whose stop is not below its start")
    if step.startswith("*"):
        factor = float(step[1:])
        if not factor > 1 or start <= 0:
            raise bad("a geometric range start:stop:*factor with start > 0 and factor > 1")
        count = np.floor(np.log(stop / start) / np.log(factor) + 1e-9) + 1
    elif step.endswith("decade"):
        per_decade = float(step.split("/")[0])
        if not per_decade > 0 or start <= 0:
            raise bad("a range start:stop:N/decade with start > 0 and N > 0")
        count = np.floor(np.log10(stop / start) * per_decade + 1e-9) + 1
    else:
        linear = float(step)
        if not linear > 0:
            raise bad("a range start:stop:step with step > 0")
        count = np.floor((stop - start) / linear + 1e-9) + 1
    if not count <= MAX_VALUES:  # checked before anything is allocated
        raise bad(f"a range of at most {MAX_VALUES:.0e} values (this one has {count:.3g})")
    steps = np.arange(int(count))
    if step.startswith("*"):
        values = start * factor**steps
    elif step.endswith("decade"):
        values = 10 ** (np.log10(start) + steps / per_decade)
    else:
        values = start + linear * steps
    return values


def parse_grid(text: str, option: str = "--temperature", default_units: str | None = "K"):
    """Values of a grid option: ``"-40,25,85 degC"``, ``"250:400:50 K"``,
    ``"1e15:1e19:*10"`` (geometric), ``"1e15:1e19:4/decade"``, ``"3e2 K"``, ``"300"``.

    Ranges include their stop. Returns a pint quantity when a unit is given, else a
    float array in ``default_units``; a category option (``default_units=None``)
    returns a list of strings.
    """
    from ..units import Q_

    text = str(text).strip()
    if default_units is None:  # a category such as --carrier electron,hole
        items = [p.strip() for p in text.split(",") if p.strip()]
        if not items:
            raise InputError(option, "one or more names separated by commas", repr(text))
        return items
    if _NONFINITE.search(text):
        raise InputError(option, "finite numbers (nan and inf are not grid values)", repr(text))
    pieces = text.split(",")
    values, units = [], ""
    for number, piece in enumerate(pieces):
        match = _ITEM.match(piece)
        if not match or (match["rest"] and number != len(pieces) - 1):
            raise InputError(option, _GRID_HELP, repr(text))
        if match["stop"] is None:
            values.append(np.array([float(match["start"])]))
        else:
            values.append(
                _expand(
                    float(match["start"]),
                    float(match["stop"]),
                    match["step"].replace(" ", ""),
                    option,
                    text,
                )
            )
        units = match["rest"]
    array = np.concatenate(values)
    if array.size > MAX_VALUES:
        raise InputError(option, f"at most {MAX_VALUES:.0e} values", f"{array.size:.3g}")
    if not units:
        return array
    if re.match(r"^[:*/]", units):
        raise InputError(option, _GRID_HELP, repr(text))
    try:
        from ..units import unit

        return Q_(array, unit(units))
    except Exception as exc:  # pint raises several unrelated types for a bad unit
        raise UnitError(option, f"{default_units} or another unit of the same kind", text) from exc


# --------------------------------------------------------------------------- messages


def _cli_message(text: str) -> str:
    """Library wording -> the command line's: options instead of argument names and
    Python syntax; one line."""
    from ..material.tables import AXES

    for ax in AXES.values():
        text = text.replace(f"argument {ax.name!r}", f"option {ax.option}")
        if ax.alias:
            text = text.replace(f"argument {ax.alias!r}", f"option {ax.option}")
    text = re.sub(r"argument '(-[\w/-]+)'", r"option \1", text)
    for argument, option in (
        ("path", "-o/--output"),
        ("format", "--format"),
        ("models", "--models"),
        ("x", "--x"),
        ("chunks", "--chunks"),
        ("layout", "--layout"),
    ):
        text = text.replace(f"argument {argument!r}", f"option {option}")
    text = text.replace("argument 'quantities'", "the QUANTITY arguments")
    text = text.replace("argument 'grid' must be", "the grid must hold")
    text = text.replace(
        "(max_values=None, or --allow-large on the command line, goes", "(--allow-large goes"
    )
    text = text.replace(
        "; chunks= makes a lazy table)", "; --chunks N with -o FILE.nc writes a lazy table)"
    )
    text = text.replace("(--force, or overwrite=True, replaces it)", "(--force replaces it)")
    text = re.sub(r"\(?models=\{'(\w+)': '([\w.-]+)'\}\)?", r"(--model \1=\2)", text)
    text = text.replace("strict=True", "--strict")
    return " ".join(str(text).split())


class _Parser(argparse.ArgumentParser):
    """argparse with one-line errors (exit status 2)."""

    def error(self, message):
        hint = f" (see {self.prog} --help)"
        self.exit(2, f"matprops: error: {' '.join(message.split())}{hint}\n")


# --------------------------------------------------------------------------- helpers


class _Progress:
    """A progress bar on stderr for grids above ~1e6 points; silent when stderr is
    not a terminal."""

    THRESHOLD = 1_000_000

    def __init__(self, stream=None):
        self.stream = stream or sys.stderr
        self.active = hasattr(self.stream, "isatty") and self.stream.isatty()
        self.drawn = False

    def __call__(self, done: int, total: int):
        if not self.active or total < self.THRESHOLD:
            return
        width = 30
        filled = int(width * done / total)
        self.stream.write(
            f"\r[{'#' * filled}{'.' * (width - filled)}] "
            f"{100 * done / total:5.1f} % of {total:.3g} points"
        )
        self.stream.flush()
        self.drawn = True

    def close(self):
        if self.drawn:
            self.stream.write("\n")
            self.stream.flush()


def _catalogue():
    """The installed catalogue, or a one-line error when its folder is unusable."""
    from ..catalogue.store import default_catalogue
    from ..errors import DatasetError

    catalogue = default_catalogue()
    root = catalogue.root
    hint = (
        "set MATPROPS_DATASETS to a matprops datasets folder (absolute path), or unset "
        "it to use the installed data"
    )
    if not root.is_dir():
        raise DatasetError(root, f"datasets folder does not exist; {hint}")
    if not catalogue.release_ids():
        raise DatasetError(root / "releases", f"no release files (<YYYY.N>.toml); {hint}")
    return catalogue


def _silicon(args):
    from ..material.silicon import Silicon

    _catalogue()
    overrides = {}
    for item in args.model or []:
        quantity, sep, model_id = item.partition("=")
        if not sep:
            raise InputError("--model", "QUANTITY=MODEL_ID", repr(item))
        overrides[quantity.strip()] = model_id.strip()
    si = Silicon(
        release=args.release, models=overrides, strict=args.strict, catalogue=own.catalogue(args)
    )
    # validity messages go straight to stderr (one line each, once): the material
    # reports them to the command instead of warning, so no warning filter is set
    si._report = getattr(args, "report", None)
    return si


def _max_values(args):
    from ..material.tables import MAX_VALUES

    return None if getattr(args, "allow_large", False) else MAX_VALUES


def _grid(args) -> dict:
    from ..material.tables import AXES

    grid = {}
    for ax in AXES.values():
        text = getattr(args, ax.name, None)
        if text is not None:
            grid[ax.name] = parse_grid(text, ax.option, ax.units)
    return grid


def _command_line(argv) -> str:
    return "matprops " + shlex.join(argv)


#: Output (file or screen) above which the command asks first (or, not run from a
#: terminal, refuses unless --allow-large).
LARGE_OUTPUT = 10**9


def _confirm_size(args, data) -> None:
    """Say how large an output will be before writing more than ~1 GB, and ask (on a
    terminal) or refuse (otherwise) unless --allow-large."""
    from ..outputs import export

    kind = "text" if not args.output and args.format in (None, "text") else None
    try:
        kind = kind or export.format_for(
            args.output or "-", None if args.format in (None, "text") else args.format
        )
    except InputError:
        return  # (the writer names the problem)
    size = export.estimate_size(data, kind, layout=args.layout)
    if size <= LARGE_OUTPUT:
        return
    where = args.output or "the screen"
    shown = f"about {size / 1e9:.3g} GB of {kind} to {where}"
    if getattr(args, "allow_large", False):
        print(f"matprops: note: writing {shown}", file=sys.stderr)
        return
    if sys.stdin is not None and sys.stdin.isatty():
        sys.stderr.write(f"matprops: this writes {shown}; continue? [y/N] ")
        sys.stderr.flush()
        if sys.stdin.readline().strip().lower() in ("y", "yes"):
            return
        raise InputError("--allow-large", "given (or the question answered y)", "no")
    raise InputError(
        "--allow-large",
        f"given to write {shown} (not run from a terminal, so not asked)",
        "nothing",
    )


def _emit(args, data, footer: str = ""):
    """Write a table to -o, or print it in --format (text by default)."""
    from ..outputs import export

    _confirm_size(args, data)
    if args.output:
        written = export.write(
            data,
            args.output,
            None if args.format in (None, "text") else args.format,
            layout=args.layout,
            provenance="header" if args.csv_header else "companion",
            overwrite=args.force,
            command=args.command_line,
        )
        print("wrote " + " and ".join(str(p) for p in written))
        return
    if args.format == "csv":
        sys.stdout.write(export.to_csv(data, layout=args.layout, header=args.csv_header))
    elif args.format == "json":
        sys.stdout.write(export.to_json(export.stamp(data, args.command_line)))
    else:
        sys.stdout.write(export.to_text(data, layout=args.layout))
        if footer:
            print(footer)


def _needs_output(args, what: str):
    if not args.output:
        raise InputError("-o/--output", f"a file name for {what}", "none")


# --------------------------------------------------------------------------- commands


def _cmd_table(args):
    if args.format == "netcdf" and not args.output:
        _needs_output(args, "netCDF")
    si = _silicon(args)
    progress = _Progress()
    chunks = args.chunks
    if chunks is not None and (
        args.format not in (None, "netcdf")
        or not (args.output or "").lower().endswith((".nc", ".nc4"))
    ):
        raise InputError(
            "--chunks",
            "used with a netCDF output (-o FILE.nc), which is written chunk by chunk",
            repr(args.chunks),
        )
    if args.uncertainty and chunks is not None:
        raise InputError(
            "--uncertainty", "a table evaluated in memory (not with --chunks)", "--chunks"
        )
    try:
        data = si.table(
            args.quantities or None,
            progress=progress,
            chunks=chunks,
            max_values=_max_values(args),
            uncertainty=args.uncertainty,
            **_grid(args),
        )
    finally:
        progress.close()
    # (the quantities' own variables: not their uncertainty or spread beside them)
    quantities = [
        data[v].attrs["quantity"] for v in value_names(data) if "quantity" in data[v].attrs
    ]
    footer = render.table_footer(si, quantities)
    if args.uncertainty:
        footer += "\n" + render.uncertainty_note(data)
    _emit(args, data, footer)


def _cmd_compare(args):
    if args.format == "netcdf" and not args.output:
        _needs_output(args, "netCDF")
    si = _silicon(args)
    models = [m.strip() for m in args.models.split(",")] if args.models else None
    progress = _Progress()
    try:
        data = _compare_marked(
            si,
            args.quantity,
            models,
            progress=progress,
            max_values=_max_values(args),
            **_grid(args),
        )
    finally:
        progress.close()
    footer = "\n".join(
        render.wrap(f"[{m}] {c}")
        for m, c in zip(data.model.values, data.citation.values, strict=True)
    )
    footer += "\n" + render.wrap(
        "spread = (largest - smallest) / mean, in %, over the models valid at the point "
        "(valid: how many); in files also <name>_spread in the quantity's units"
    )
    if args.output or args.format not in (None, "text"):
        _emit(args, data, footer)
        return
    from ..outputs.export import comparison_text

    sys.stdout.write(comparison_text(data))
    print(footer)


def _compare_marked(si, quantity, models, **grid):
    """A comparison whose models' validity messages become its marks: each value
    outside its model's range is starred on screen and dashed in a plot (the
    <name>_validity flags), so the screen does not also repeat them as warnings; the
    notes of models left out still show."""
    reporter = si._report

    def notes_only(message):
        if str(message).startswith("compare ") and reporter is not None:
            reporter(message)

    si._report = notes_only
    try:
        return si.compare(quantity, models, **grid)
    finally:
        si._report = reporter


def _cmd_plot(args):
    from ..outputs.plotting import plot

    _needs_output(args, "the plot (.png or .svg)")
    si = _silicon(args)
    grid = _grid(args)
    if args.models:
        if len(args.quantities) != 1:
            raise InputError(
                "--models", "used with exactly one QUANTITY", f"{len(args.quantities)} quantities"
            )
        models = [m.strip() for m in args.models.split(",")]
        if models == ["all"]:
            models = None
        data = _compare_marked(si, args.quantities[0], models, max_values=_max_values(args), **grid)
    else:
        data = si.table(args.quantities, max_values=_max_values(args), **grid)
    plot(data, args.output, x=args.x, format=args.format, overwrite=args.force)
    print(f"wrote {args.output}")


def _cmd_describe(args):
    si = _silicon(args)
    catalogue = si.catalogue
    if args.model_id is None:
        model = si.model(args.quantity)
    else:
        catalogue.model_ids(args.quantity)  # unknown quantity -> error listing what exists
        model = catalogue.model(args.quantity, args.model_id)
    defaults = [
        r
        for r in catalogue.release_ids()
        if catalogue.release(r).models.get(args.quantity) == model.id
    ]
    composed = ", ".join(f"{q} {si.models.get(q, '?')}" for q in model.requires)
    print("\n".join(render.model_record(model, "full", defaults=defaults, composed_with=composed)))


def _cmd_provenance(args):
    si = _silicon(args)
    record = si.provenance(args.quantity)
    if args.json:
        print(json.dumps(record, indent=2, ensure_ascii=False))
        return
    lines = render.provenance_lines(si, record["quantity"])
    status = f"release {record['release']} ({record['release_status']})"
    if record.get("release_base"):  # an own release of an overlay catalogue
        owner = record.get("release_catalogue", {}).get("name", "?")
        status = (
            f"release {record['release']} ({record['release_status']}, catalogue {owner}, on "
            f"{record['release_base']}; this model chosen by {record['release_choice_from']})"
        )
    if record.get("overridden"):
        status += f"; overridden with --model (the release chose {record['release_choice']})"
    lines.append(status)
    lines.append(
        render.wrap(
            f"(all fields: matprops provenance {args.quantity} --json; the "
            f"model in full: matprops describe {args.quantity})"
        )
    )
    print("\n".join(lines))


def _cmd_release_diff(args):
    from ..outputs.changes import release_difference

    _catalogue()
    diff = release_difference(args.old, args.new)
    if args.json:
        print(json.dumps(diff, indent=1, ensure_ascii=False))
        return
    print(render.release_difference_text(diff, render.terminal_width()))


def _cmd_report(args, spec=None):
    from ..catalogue.spec import read_spec
    from ..material.silicon import Silicon
    from ..outputs.report import report

    _catalogue()
    spec = spec or read_spec(args.spec)
    models = dict(spec.models)
    for item in args.model or []:
        quantity, sep, model_id = item.partition("=")
        if not sep:
            raise InputError("--model", "QUANTITY=MODEL_ID", repr(item))
        models[quantity.strip()] = model_id.strip()
    si = Silicon(release=args.release or spec.release, models=models, strict=args.strict)
    si._report = getattr(args, "report", None)  # validity messages: one line each
    result = report(spec, si)
    if args.output:
        written = result.write(
            args.output,
            overwrite=args.force,
            command=args.command_line,
            **({"provenance": "header"} if args.csv_header else {}),
        )
        print("wrote " + " and ".join(str(p) for p in written))
        if result.skipped:
            print(
                render.wrap("note: not in this release, left out: " + ", ".join(result.skipped)),
                file=sys.stderr,
            )
        return
    from ..outputs.export import terminal_width

    print(result.text(terminal_width()))


def _cmd_demo(args):
    catalogue = _catalogue()
    known = catalogue.scenario_names()
    if args.scenario not in known:  # (a path such as ../.. is no scenario's name)
        raise InputError(
            "--scenario", f"one of {', '.join(known) or '(none)'}", repr(args.scenario)
        )
    _cmd_report(args, catalogue.scenario(args.scenario))


def _cmd_explain(args):
    from ..outputs.export import terminal_width

    si = _silicon(args)
    inputs = {}
    for name, values in _grid(args).items():
        if isinstance(values, list):  # a category: one name
            if len(values) != 1:
                raise InputError(name, "one value (explain traces one point)", ",".join(values))
            values = values[0]
        elif getattr(values, "size", np.size(values)) != 1:
            raise InputError(name, "one value (explain traces one point)", f"{np.size(values)}")
        elif hasattr(values, "units"):
            values = values.reshape(())
        else:
            values = float(np.ravel(values)[0])
        inputs[name] = values
    print(si.explain(args.quantity, **inputs).text(terminal_width()))


def _cmd_models(args):
    _catalogue()
    catalogue = own.catalogue(args)
    quantities = [args.quantity] if args.quantity else catalogue.quantities()
    for quantity in quantities:
        print(f"{quantity}:")
        for model_id in catalogue.model_ids(quantity):
            model = catalogue.model(quantity, model_id)
            print("\n".join(render.model_record(model, "line", indent="  ")))


def _cmd_releases(args):
    _catalogue()
    catalogue = own.catalogue(args)
    for release_id in catalogue.release_ids():
        release = catalogue.release(release_id)
        print(f"{release_id} ({release.status}, {release.date})")
        for quantity, model_id in release.models.items():
            print(f"  {quantity:24s} {model_id}")


def _cmd_cite(args):
    print(_silicon(args).cite(format=args.format))


# --------------------------------------------------------------------------- parser


def build_parser() -> argparse.ArgumentParser:
    from .._version import __version__
    from ..material.tables import AXES

    parser = _Parser(
        prog="matprops",
        allow_abbrev=False,
        description="Temperature- and doping-dependent parameters of crystalline silicon, "
        "with units and sources. Values are model estimates: for decisions "
        "with consequences defer to measured data, local codes and licensed "
        "practice.",
    )
    parser.add_argument("--version", action="version", version=f"matprops {__version__}")
    commands = parser.add_subparsers(
        dest="command", required=True, metavar="COMMAND", parser_class=_Parser
    )

    material = _Parser(add_help=False, allow_abbrev=False)  # parents: their options only
    material.add_argument("--release", help="release id (default: newest)")
    material.add_argument(
        "--model",
        action="append",
        metavar="QUANTITY=ID",
        help="override the release's model for a quantity (repeatable)",
    )
    material.add_argument(
        "--strict",
        action="store_true",
        help="fail instead of warning outside a model's validity range",
    )
    own.add_options(material)  # --catalogue, --seals

    grid = _Parser(add_help=False, allow_abbrev=False)  # parents: their options only
    group = grid.add_argument_group("grid (" + _GRID_HELP + ")")
    for ax in AXES.values():
        flags = [ax.option]
        if ax.alias:
            flags.append(f"--{ax.alias}")
        if ax.name == "temperature":
            flags.insert(0, "-t")
        if ax.name == "wavelength":
            flags.insert(0, "-w")
        if ax.category:
            text = f"{ax.long_name}: {', '.join(ax.choices)} (comma-separated)"
        else:
            text = f"{ax.long_name} (plain numbers are {ax.units})"
        group.add_argument(*flags, dest=ax.name, metavar="VALUES", help=text)
    grid.add_argument(
        "--allow-large",
        action="store_true",
        help="evaluate grids of more than 1e8 values (0.8 GB) in memory, and write or "
        "print more than ~1 GB without asking",
    )

    output = _Parser(add_help=False, allow_abbrev=False)  # parents: their options only
    out = output.add_argument_group("output")
    out.add_argument(
        "-o",
        "--output",
        metavar="FILE",
        help="write a file: .nc (netCDF), .csv (+ FILE.provenance.json), "
        ".json; refused if it exists unless --force",
    )
    out.add_argument(
        "--format",
        choices=["text", "csv", "json", "netcdf"],
        default=None,
        help="output format (default: text on screen, or from -o's extension)",
    )
    out.add_argument(
        "--layout",
        choices=["long", "wide"],
        default="long",
        help="long: one row per grid point; wide: one row per temperature",
    )
    out.add_argument(
        "--csv-header",
        action="store_true",
        help="CSV: provenance as '#' lines above the header instead of a "
        "companion .provenance.json file",
    )
    out.add_argument("--force", action="store_true", help="replace an existing file")

    table = commands.add_parser(
        "table", parents=[material, grid, output], help="a table of quantities on a grid"
    )
    table.add_argument(
        "quantities",
        nargs="*",
        metavar="QUANTITY",
        help="quantities (default: every one the given axes allow)",
    )
    table.add_argument(
        "--chunks",
        type=int,
        metavar="N",
        help="with -o FILE.nc: evaluate lazily in chunks of N values per "
        "axis (grids larger than memory)",
    )
    table.add_argument(
        "--uncertainty",
        action="store_true",
        help="add each quantity's standard uncertainty (from the uncertainties its sources "
        "state; 'not stated' where they state none) and the spread over the catalogue's "
        "valid models, as <quantity>_uncertainty and <quantity>_model_spread",
    )
    table.set_defaults(run=_cmd_table)

    compare = commands.add_parser(
        "compare",
        parents=[material, grid, output],
        help="models of one quantity side by side, with spread",
    )
    compare.add_argument("quantity")
    compare.add_argument(
        "--models", metavar="ID,ID,...", help="model ids (default: every model of the quantity)"
    )
    compare.set_defaults(run=_cmd_compare)

    plot = commands.add_parser(
        "plot", parents=[material, grid], help="plot quantities (or models of one) to PNG or SVG"
    )
    plot.add_argument("quantities", nargs="+", metavar="QUANTITY")
    plot.add_argument(
        "-o", "--output", metavar="FILE.png|FILE.svg", help="the image to write (required)"
    )
    plot.add_argument("--format", choices=["png", "svg"], default=None)
    plot.add_argument(
        "--models", metavar="ID,ID,...|all", help="compare these models of the (single) quantity"
    )
    plot.add_argument(
        "--x", metavar="AXIS", help="axis to plot against (default: the one with most values)"
    )
    plot.add_argument("--force", action="store_true", help="replace an existing file")
    plot.set_defaults(run=_cmd_plot)

    describe = commands.add_parser(
        "describe",
        parents=[material],
        help="one model: equation, coefficients, validity, source, how the numbers were obtained",
    )
    describe.add_argument("quantity")
    describe.add_argument(
        "model_id", nargs="?", metavar="MODEL", help="model id (default: the release's choice)"
    )
    describe.set_defaults(run=_cmd_describe)

    explain = commands.add_parser(
        "explain",
        parents=[material, grid],
        help="the chain behind one value: inputs, every intermediate quantity with its "
        "model, coefficients and conventions, the result (one value per option)",
    )
    explain.add_argument("quantity", metavar="QUANTITY")
    explain.set_defaults(run=_cmd_explain)

    prov = commands.add_parser(
        "provenance", parents=[material], help="where a quantity's numbers come from"
    )
    prov.add_argument("quantity")
    prov.add_argument("--json", action="store_true", help="every field, as JSON")
    prov.set_defaults(run=_cmd_provenance)

    diff = commands.add_parser(
        "release-diff", help="models changed between two releases and the largest deviations"
    )
    diff.add_argument("old")
    diff.add_argument("new")
    diff.add_argument("--json", action="store_true")
    diff.set_defaults(run=_cmd_release_diff)

    files = _Parser(add_help=False, allow_abbrev=False)  # parents: their options only
    written = files.add_argument_group("output")
    written.add_argument(
        "-o",
        "--output",
        metavar="FILE",
        help="write the report: .nc (netCDF), .csv (+ FILE.provenance.json), .json, or a "
        "plot: .png, .svg; refused if it exists unless --force",
    )
    written.add_argument(
        "--csv-header",
        action="store_true",
        help="CSV: provenance as '#' lines above the header",
    )
    written.add_argument("--force", action="store_true", help="replace an existing file")

    rep = commands.add_parser(
        "report",
        parents=[material, files],
        help="a report from your own wafer spec (TOML): your wafer and layers at your "
        "operating points",
    )
    rep.add_argument("spec", metavar="SPEC.toml", help="the wafer spec (see the analyst's guide)")
    rep.set_defaults(run=_cmd_report)

    demo = commands.add_parser(
        "demo",
        parents=[material, files],
        help="the report of the bundled, INVENTED scenario (a wafer spec like yours)",
    )
    demo.add_argument(
        "--scenario",
        default="two-site-modules",
        help="scenario in datasets/scenarios (default: %(default)s)",
    )
    demo.set_defaults(run=_cmd_demo)

    listing = commands.add_parser("models", help="list models, per quantity")
    listing.add_argument("quantity", nargs="?")
    own.add_options(listing)
    listing.set_defaults(run=_cmd_models)

    rel = commands.add_parser("releases", help="list releases and their model choices")
    own.add_options(rel)
    rel.set_defaults(run=_cmd_releases)
    own.add_commands(commands)  # fit, catalogue, release

    cite = commands.add_parser("cite", parents=[material], help="references of the models in use")
    cite.add_argument("--format", choices=["bibtex", "text"], default="bibtex")
    cite.set_defaults(run=_cmd_cite)
    return parser


_NEGATIVE = re.compile(r"^-(\d|\.\d|inf|nan)", re.IGNORECASE)


def _join_negative_values(argv: list[str], parser) -> list[str]:
    """``--temperature -40,25degC`` -> ``--temperature=-40,25degC`` (argparse would
    read -40 as an option)."""
    options = set()
    for action in parser._subparsers._group_actions[0].choices.values():
        for act in action._actions:
            if act.nargs is None and act.option_strings:
                options.update(act.option_strings)
    out, i = [], 0
    while i < len(argv):
        token = argv[i]
        if token in options and i + 1 < len(argv) and _NEGATIVE.match(argv[i + 1]):
            out.append(f"{token}={argv[i + 1]}")
            i += 2
            continue
        out.append(token)
        i += 1
    return out


def main(argv=None) -> int:
    argv = list(sys.argv[1:] if argv is None else argv)
    parser = build_parser()
    args = parser.parse_args(_join_negative_values(argv, parser))
    args.command_line = _command_line(argv)
    seen = set()

    def report(message):
        text = _cli_message(str(message))
        if text not in seen:
            seen.add(text)
            print(f"matprops: warning: {text}", file=sys.stderr)

    args.report = report
    try:
        # SIGINT or SIGTERM while a file is written: its temporary is removed and the
        # command stops at once (status 130 / 143); see matprops.catalogue.files
        with interruptible():
            args.run(args)
            sys.stdout.flush()
    except Error as exc:
        print(f"matprops: error: {_cli_message(str(exc))}", file=sys.stderr)
        return 2
    except BrokenPipeError:
        # the reader went away (matprops models | head -1): stop quietly, one line
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        print(
            "matprops: error: output closed by the reading program before the end", file=sys.stderr
        )
        return 2
    except tomllib.TOMLDecodeError as exc:
        print(
            f"matprops: error: a data file is not valid TOML ({_cli_message(str(exc))}); "
            "check the files under the datasets folder (python -m matprops.catalogue)",
            file=sys.stderr,
        )
        return 2
    except OSError as exc:  # a file that cannot be read or written
        where = f": {exc.filename}" if exc.filename else ""
        print(f"matprops: error: {exc.strerror or exc}{where}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("matprops: interrupted", file=sys.stderr)
        return 130
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
