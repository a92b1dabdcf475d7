"""The command line of own catalogues: parsing and printing only.

    matprops catalogue create PATH --name our-lab --description "..."
    matprops catalogue check PATH [--update-checksums]
    matprops fit band_gap passler-2002 gap.csv --free gap_at_zero,alpha --report gap.png \\
        --into PATH --id ourlab-2027 --author "A. Person" --year 2027 --title "..." \\
        --description "..."
    matprops release create ourlab-2027.1 --base 2026.2 --model band_gap=ourlab-2027 \\
        --notes "..." --catalogue PATH
    matprops release freeze ourlab-2027.1 --catalogue PATH [--seals FILE]
    matprops table band_gap -t 4:160:4 --release ourlab-2027.1 --catalogue PATH

``--catalogue PATH`` (repeatable; default ``$MATPROPS_CATALOGUES``) and ``--seals FILE``
(default ``$MATPROPS_SEALS``) work with every command that reads a release. The work is
done by :mod:`matprops.outputs.fitting`, :mod:`matprops.outputs.catalogues` and
:mod:`matprops.catalogue.overlay`.
"""

from __future__ import annotations

import os

from ..errors import InputError

__all__ = ["add_commands", "add_options", "catalogue"]


def add_options(parser) -> None:
    """``--catalogue`` and ``--seals`` on a (parent) parser."""
    parser.add_argument(
        "--catalogue",
        dest="catalogues",
        action="append",
        default=None,
        metavar="PATH",
        help="an overlay catalogue of own models and releases (repeatable; default "
        "$MATPROPS_CATALOGUES)",
    )
    parser.add_argument(
        "--seals",
        default=None,
        metavar="FILE",
        help="the record of final own releases (default $MATPROPS_SEALS, else "
        "~/.config/matprops/seals.txt)",
    )


def catalogue(args):
    """The catalogue the options name: the shipped one, with overlays if given."""
    from ..catalogue.overlay import catalogue_at, catalogues_from_environment

    paths = getattr(args, "catalogues", None)
    if paths is None:
        paths = catalogues_from_environment()
    return catalogue_at(
        None, [os.path.abspath(os.path.expanduser(p)) for p in paths], getattr(args, "seals", None)
    )


def _pairs(items, option: str, form: str) -> dict:
    found = {}
    for item in items or []:
        key, sep, value = item.partition("=")
        if not sep or not key.strip():
            raise InputError(option, form, repr(item))
        found[key.strip()] = value.strip()
    return found


def _number(text: str, option: str):
    from ..units import Q_

    try:
        return float(text)
    except ValueError:
        try:
            return Q_(text)
        except Exception as exc:
            raise InputError(option, "a number, or a number with units", repr(text)) from exc


def _check_fit_options(args) -> None:
    """The options that need no fit, checked before it."""
    from pathlib import Path

    if args.report_path:
        report = Path(args.report_path)
        for path in (report, report.with_suffix(".csv"), report.with_suffix(".txt")):
            if path.exists() and not args.force:
                raise InputError(
                    "--report", "a new file (--force replaces it)", f"{path}, which exists"
                )
    if args.into:
        if not args.id:
            raise InputError("--id", "the new model's id with --into (e.g. ourlab-2027)", "none")
        missing = [o for o in ("author", "year", "title", "description") if not getattr(args, o)]
        if missing:
            raise InputError(
                "--" + missing[0],
                "who measured what (--author, --year, --title, --description)",
                "none",
            )


def _cmd_fit(args) -> None:
    from ..outputs.fitting import fit

    _check_fit_options(args)

    given = _pairs(args.input, "--input", "NAME=VALUE")
    inputs = {k: _number(v, "--input") for k, v in given.items()}
    bounds = {}
    for name, text in _pairs(args.bound, "--bound", "NAME=LOW:HIGH").items():
        low, sep, high = text.partition(":")
        if not sep:
            raise InputError("--bound", "NAME=LOW:HIGH (either side may be empty)", repr(text))
        bounds[name] = tuple(None if not s.strip() else float(s) for s in (low, high))
    result = fit(
        args.quantity,
        args.model_id,
        args.data,
        free=args.free,
        inputs=inputs or None,
        variant=args.variant,
        bounds=bounds or None,
        scale_covariance=args.scale_covariance,
        release=args.release,
        catalogues=args.catalogues,
        seals=args.seals,
    )
    print(result.summary())
    if args.report_path:
        for path in result.report(args.report_path, note=args.note or "", overwrite=args.force):
            print(f"wrote {path}")
    if args.into:
        source = {
            "authors": args.author,
            "year": args.year,
            "title": args.title,
            "description": args.description,
        }
        if args.lab:
            source["lab"] = args.lab
        if args.doi:
            source["doi"] = args.doi
        conventions = {}
        for name, text in _pairs(args.convention, "--convention", "NAME=VALUE: WHERE").items():
            value, sep, obtained = text.partition(":")
            if not sep or not obtained.strip():
                raise InputError(
                    "--convention", "NAME=VALUE: where it comes from", repr(f"{name}={text}")
                )
            conventions[name] = {"value": value.strip(), "obtained": obtained.strip()}
        path = result.write(
            args.into,
            args.id,
            source=source,
            notes=args.notes or "",
            conventions=conventions or None,
            overwrite=args.force,
        )
        print(f"wrote {path} (and its data in measurements/)")


def _cmd_catalogue_create(args) -> None:
    from ..outputs.catalogues import create_catalogue

    root = create_catalogue(
        args.path, name=args.name, description=args.description, contact=args.contact or ""
    )
    print(f"made overlay catalogue {args.name!r} in {root}")


def _cmd_catalogue_check(args) -> None:
    from ..catalogue.__main__ import main as check

    argv = ["--catalogue", args.path] + (["--update-checksums"] if args.update_checksums else [])
    if args.seals:
        argv += ["--seals", args.seals]
    status = check(argv)
    if status:
        raise SystemExit(status)


def _where(args) -> str:
    if not args.catalogues:
        raise InputError("--catalogue", "the overlay catalogue that holds the release", "none")
    return args.catalogues[0]


def _cmd_release_create(args) -> None:
    from ..outputs.catalogues import create_release

    models = _pairs(args.model, "--model", "QUANTITY=MODEL_ID")
    path = create_release(
        args.release,
        base=args.base,
        models=models,
        notes=args.notes,
        catalogue=_where(args),
        catalogues=args.catalogues[1:],
        seals=args.seals,
    )
    print(f"made draft release {args.release} on {args.base}; its reference: {path}")


def _cmd_release_freeze(args) -> None:
    from ..outputs.catalogues import freeze_release

    _where(args)
    digest = freeze_release(args.release, catalogues=args.catalogues, seals=args.seals)
    layer = catalogue(args).release(args.release).catalogue
    print(
        f"release {args.release} is final: sealed with sha256 {digest}, recorded in "
        f"{layer.seal_record.where} as the line\n  {digest}  {args.release}  {layer.name}\n"
        "(whoever uses the release needs that line in their seals file)"
    )


def add_commands(commands) -> None:
    """The subcommands ``fit``, ``catalogue`` and ``release``."""
    fit = commands.add_parser(
        "fit",
        help="fit a model's coefficients to your measurements (weighted least squares)",
        description="Fit a closed-form model's coefficients to measured values with their "
        "standard uncertainties (a CSV with units in the column names). Prints the "
        "coefficients with standard uncertainties and correlations; --report writes a plot "
        "and table; --into writes the model file into an overlay catalogue.",
    )
    fit.add_argument("quantity")
    fit.add_argument("model_id", metavar="MODEL", help="the model to start from")
    fit.add_argument("data", metavar="DATA.csv")
    fit.add_argument("--free", help="coefficients to fit, comma-separated (default: all)")
    fit.add_argument("--variant", help="the coefficient set (carrier or dopant) to fit")
    fit.add_argument(
        "--input", action="append", metavar="NAME=VALUE", help="an input the data hold fixed"
    )
    fit.add_argument(
        "--bound", action="append", metavar="NAME=LOW:HIGH", help="bounds in the file's units"
    )
    fit.add_argument(
        "--scale-covariance",
        action="store_true",
        help="scale the covariance by the reduced chi-square (relative uncertainties)",
    )
    fit.add_argument("--release", help="release the base model is read as (default: newest)")
    add_options(fit)
    fit.add_argument(
        "--report", dest="report_path", metavar="FILE.png", help="plot (+ FILE.csv, FILE.txt)"
    )
    fit.add_argument("--note", help="a line for the report (e.g. 'INVENTED data')")
    fit.add_argument("--into", metavar="PATH", help="write the model into this catalogue")
    fit.add_argument("--id", help="the new model's id (firstauthor-year form)")
    fit.add_argument("--author", action="append", help="who measured (repeatable)")
    fit.add_argument("--lab")
    fit.add_argument("--year", type=int)
    fit.add_argument("--title")
    fit.add_argument("--description", help="what was measured, how, on what samples")
    fit.add_argument("--doi")
    fit.add_argument("--notes")
    fit.add_argument(
        "--convention",
        action="append",
        metavar="NAME=VALUE: WHERE",
        help="a fit convention of the data and where it comes from (repeatable)",
    )
    fit.add_argument("--force", action="store_true", help="replace existing files")
    fit.set_defaults(run=_cmd_fit)

    cat = commands.add_parser("catalogue", help="make or check an overlay catalogue")
    actions = cat.add_subparsers(dest="action", required=True, metavar="ACTION")
    create = actions.add_parser("create", help="make an empty overlay catalogue folder")
    create.add_argument("path")
    create.add_argument("--name", required=True, help="lower-case words joined by hyphens")
    create.add_argument("--description", required=True, help="whose catalogue, what for")
    create.add_argument("--contact")
    create.set_defaults(run=_cmd_catalogue_create)
    check = actions.add_parser("check", help="check every file of an overlay catalogue")
    check.add_argument("path")
    check.add_argument("--update-checksums", action="store_true")
    check.add_argument("--seals", metavar="FILE")
    check.set_defaults(run=_cmd_catalogue_check)

    rel = commands.add_parser("release", help="make or freeze an own release")
    actions = rel.add_subparsers(dest="action", required=True, metavar="ACTION")
    make = actions.add_parser(
        "create", help="a draft own release and its frozen reference (in the first --catalogue)"
    )
    make.add_argument("release")
    make.add_argument("--base", required=True, help="the release it builds on")
    make.add_argument("--model", action="append", metavar="QUANTITY=ID", help="a model it chooses")
    make.add_argument("--notes", required=True, help="what it changes against its base, why")
    add_options(make)
    make.set_defaults(run=_cmd_release_create)
    freeze = actions.add_parser("freeze", help="make an own release final (archive, seal)")
    freeze.add_argument("release")
    add_options(freeze)
    freeze.set_defaults(run=_cmd_release_freeze)
