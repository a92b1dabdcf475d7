"""The ``matprops`` command: argument parsing and printing only.

    matprops table [QUANTITY ...] --temperature=-40,25,85degC [-o out.nc]
    matprops table absorption --temperature=300 --wavelength='400:1100:100 nm'
    matprops demo                       # the bundled (invented) scenario
    matprops models [QUANTITY]          # what exists
    matprops releases
    matprops provenance QUANTITY
    matprops cite [--format text]

Every sub-command that evaluates accepts ``--release`` and ``--model Q=ID``.
"""

from __future__ import annotations

import argparse
import json
import sys
import tomllib
import warnings

import numpy as np

from .errors import Error, InputError, UnitError, ValidityWarning

__all__ = ["main", "parse_grid"]


def parse_grid(text: str, option: str = "--temperature", default_units: str = "K"):
    """Values of a grid option: ``"-40,25,85 degC"``, ``"250:400:50 K"`` (start:stop:step,
    stop included), ``"300"`` (in ``default_units``).

    Returns a pint quantity (or a float array in default units when no unit is given).
    """
    from .units import Q_

    text = text.strip()
    numbers, units = text, ""
    for index, char in enumerate(text):
        if char.isalpha() or char in "°":
            numbers, units = text[:index], text[index:].strip()
            break
    values = []
    try:
        for item in filter(None, (p.strip() for p in numbers.split(","))):
            if ":" in item:
                start, stop, step = (float(x) for x in item.split(":"))
                if step <= 0:
                    raise ValueError("step must be > 0")
                count = int(np.floor((stop - start) / step + 1e-9)) + 1
                values.extend(start + step * np.arange(count))
            else:
                values.append(float(item))
    except ValueError as exc:
        raise InputError(option, "numbers separated by commas or start:stop:step, "
                         "then an optional unit (e.g. -40,25,85degC)", repr(text)) from exc
    if not values:
        raise InputError(option, "at least one value", repr(text))
    if not units:
        return np.asarray(values)
    try:
        return Q_(np.asarray(values), units)
    except Exception as exc:
        raise UnitError(option, f"{default_units} or another unit of the same kind", text) from exc


def _silicon(args):
    from .material import Silicon

    overrides = {}
    for item in args.model or []:
        quantity, sep, model_id = item.partition("=")
        if not sep:
            raise InputError("--model", "QUANTITY=MODEL_ID", repr(item))
        overrides[quantity.strip()] = model_id.strip()
    return Silicon(release=args.release, models=overrides, strict=args.strict)


def _print_table(args, si, quantities, temperature, wavelength=None):
    from . import tables

    data = si.table(quantities, temperature=temperature, wavelength=wavelength)
    if args.output:
        path = tables.write(data, args.output, args.format)
        print(f"wrote {path}")
    elif args.format == "csv":
        sys.stdout.write(tables.to_csv(data))
    elif args.format == "json":
        print(json.dumps(data.to_dict(data="list"), indent=1, ensure_ascii=False, default=str))
    else:
        print(tables.to_text(data))
        print(f"\nrelease {si.release.id} ({si.release.status}); models: "
              + ", ".join(f"{q}={si.models.get(q, 'derived')}" for q in quantities))


def _cmd_table(args):
    from .tables import SPECTRAL, TEMPERATURE_DEPENDENT

    wavelength = (parse_grid(args.wavelength, "--wavelength", "nm")
                  if args.wavelength else None)
    quantities = args.quantities or (list(SPECTRAL) if wavelength is not None
                                     else list(TEMPERATURE_DEPENDENT))
    _print_table(args, _silicon(args), quantities, parse_grid(args.temperature),
                 wavelength)


def _cmd_demo(args):
    from .catalog import datasets_root
    from .units import Q_

    path = datasets_root() / "scenarios" / "desert-rooftop.toml"
    scenario = tomllib.loads(path.read_text())
    print(f"{scenario['title']}\n(INVENTED data for demonstration; {path.name})\n")
    temperature = Q_(np.asarray(scenario["temperatures"]), scenario["temperature_units"])
    print("cell temperatures: " + ", ".join(f"{t:g}" for t in scenario["temperatures"])
          + f" {scenario['temperature_units']}\n")
    _print_table(args, _silicon(args), scenario["quantities"], temperature)


def _cmd_models(args):
    from .material import models

    catalog = models(args.quantity) if args.quantity else models()
    if args.quantity:
        catalog = {args.quantity: catalog}
    from .catalog import default_catalog

    for quantity, ids in catalog.items():
        print(f"{quantity}:")
        for model_id in ids:
            model = default_catalog().model(quantity, model_id)
            ranges = ", ".join(str(r) for r in model.validity.values()) or "no limits"
            print(f"  {model_id:16s} {model.name}  [{ranges}]")


def _cmd_releases(args):
    from .catalog import default_catalog

    catalog = default_catalog()
    for release_id in catalog.release_ids():
        release = catalog.release(release_id)
        print(f"{release_id} ({release.status}, {release.date})")
        for quantity, model_id in release.models.items():
            print(f"  {quantity:22s} {model_id}")


def _cmd_provenance(args):
    print(json.dumps(_silicon(args).provenance(args.quantity), indent=2, ensure_ascii=False))


def _cmd_cite(args):
    print(_silicon(args).cite(format=args.format))


def build_parser() -> argparse.ArgumentParser:
    from . import __version__

    parser = argparse.ArgumentParser(
        prog="matprops",
        description="Temperature-dependent parameters of crystalline silicon, with units "
                    "and sources. Values are model estimates: for decisions with "
                    "consequences defer to measured data, local codes and licensed practice.")
    parser.add_argument("--version", action="version", version=f"matprops {__version__}")
    commands = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")

    material = argparse.ArgumentParser(add_help=False)
    material.add_argument("--release", help="release id (default: newest)")
    material.add_argument("--model", action="append", metavar="QUANTITY=ID",
                          help="override the release's model for a quantity (repeatable)")
    material.add_argument("--strict", action="store_true",
                          help="fail instead of warning outside a model's validity range")
    output = argparse.ArgumentParser(add_help=False)
    output.add_argument("--format", choices=["text", "csv", "json", "netcdf"], default=None,
                        help="output format (default: text on screen, or from -o's suffix)")
    output.add_argument("-o", "--output", help="write to a file (.nc, .csv, .json)")

    table = commands.add_parser("table", parents=[material, output],
                                help="a table of quantities at given temperatures")
    table.add_argument("quantities", nargs="*", metavar="QUANTITY",
                       help="quantities (default: all temperature-dependent ones)")
    table.add_argument("-t", "--temperature", required=True,
                       help="values with a unit, e.g. --temperature=-40,25,85degC or "
                            "--temperature='250:400:50 K' (plain numbers are kelvin)")
    table.add_argument("-w", "--wavelength",
                       help="wavelengths for absorption and refractive_index, e.g. "
                            "--wavelength='400:1100:100 nm' (plain numbers are nm)")
    table.set_defaults(run=_cmd_table)

    demo = commands.add_parser("demo", parents=[material, output],
                               help="table for the bundled, invented rooftop scenario")
    demo.set_defaults(run=_cmd_demo)

    listing = commands.add_parser("models", help="list models, per quantity")
    listing.add_argument("quantity", nargs="?")
    listing.set_defaults(run=_cmd_models)

    rel = commands.add_parser("releases", help="list releases and their model choices")
    rel.set_defaults(run=_cmd_releases)

    prov = commands.add_parser("provenance", parents=[material],
                               help="where a quantity's numbers come from (JSON)")
    prov.add_argument("quantity")
    prov.set_defaults(run=_cmd_provenance)

    cite = commands.add_parser("cite", parents=[material], help="references of the models in use")
    cite.add_argument("--format", choices=["bibtex", "text"], default="bibtex")
    cite.set_defaults(run=_cmd_cite)
    return parser


def main(argv=None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if getattr(args, "format", None) == "netcdf" and not getattr(args, "output", None):
        parser.error("--format netcdf needs -o/--output FILE")
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("always", ValidityWarning)
            warnings.showwarning = lambda message, *rest, **kw: print(
                f"warning: {message}", file=sys.stderr)
            args.run(args)
    except Error as exc:
        print(f"matprops: error: {exc}", file=sys.stderr)
        return 2
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
