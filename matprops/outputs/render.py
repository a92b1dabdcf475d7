"""Text made from records: one renderer of a model record, provenance, release diffs.

What the command line prints and the model catalogue in ``docs/`` shows is formatted
here, never in the command itself (which only parses and prints):

- :func:`model_record` — one model (its id, name, equation, coefficients, validity,
  source, how its numbers were obtained, file), in four layouts of the same fields:
  ``"line"`` (``matprops models``), ``"brief"`` (inside ``matprops provenance``),
  ``"full"`` (``matprops describe``) and ``"markdown"`` (``docs/models.md``);
- :func:`provenance_lines` — a quantity's provenance, derived ones with their parts;
- :func:`table_footer`, :func:`release_difference_text`; the report, explain and
  comparison screens are rendered beside their results (:mod:`.report`,
  :mod:`.explain`, :func:`.export.comparison_text`).

Every function returns text (or lines); none prints, reads files or evaluates a model.
"""

from __future__ import annotations

import inspect
import textwrap

from .export import terminal_width

__all__ = [
    "model_record",
    "one_line",
    "provenance_lines",
    "release_difference_text",
    "table_footer",
    "wrap",
]


def one_line(text) -> str:
    """Whitespace collapsed to single spaces."""
    return " ".join(str(text).split())


def wrap(text, indent: str = "", width: int | None = None) -> str:
    """``text`` on one paragraph, wrapped to the terminal (80-100 columns); continuation
    lines indented two more spaces."""
    return textwrap.fill(
        one_line(text),
        width or terminal_width(),
        initial_indent=indent,
        subsequent_indent=indent + "  ",
    )


# --------------------------------------------------------------------------- model records


def _kernel_name(model) -> str:
    return f"{model.kernel.__module__.removeprefix('matprops.')}.{model.kernel.__name__}"


def _equation(model) -> str:
    doc = inspect.getdoc(model.kernel) or ""
    return doc.split("\nParameters")[0].strip()


def _value(value) -> str:
    return ", ".join(f"{v:g}" for v in value) if isinstance(value, tuple) else f"{value:g}"


def _coefficient(coefficient, markdown: bool) -> str:
    if markdown:  # as printed in the file (lists as lists)
        value = (
            list(coefficient.value) if isinstance(coefficient.value, tuple) else coefficient.value
        )
        uncertainty = f" ± {coefficient.uncertainty}" if coefficient.uncertainty is not None else ""
        return f"`{coefficient.name}` = {value}{uncertainty} {coefficient.units}"
    uncertainty = "" if coefficient.uncertainty is None else f" ± {_value(coefficient.uncertainty)}"
    units = "" if coefficient.units in ("1", "dimensionless") else f" {coefficient.units}"
    return f"{coefficient.name} = {_value(coefficient.value)}{uncertainty}{units}"


def _ranges(model) -> str:
    return "; ".join(str(r) for r in model.validity.values())


def model_record(
    model,
    style: str = "full",
    *,
    defaults=(),
    composed_with: str | None = None,
    indent: str = "",
) -> list[str]:
    """The lines of one model record.

    Parameters
    ----------
    model : a :class:`~matprops.catalogue.records.Model`
    style : ``"line"`` (id, name, validity on one line), ``"brief"`` (source, validity,
        coefficients, origin, file: a part of a provenance), ``"full"`` (also the
        equation, uncertainties, notes and the file's sha256) or ``"markdown"`` (the
        model catalogue's entry)
    defaults : release ids whose default this model is
    composed_with : for a composed model, which models the material composed it with
    indent : prefix of every line (text styles)
    """
    if style == "line":
        ranges = ", ".join(str(r) for r in model.validity.values()) or "no limits"
        return [wrap(f"{model.id:22s} {model.name} [{ranges}]", indent)]
    if style == "markdown":
        return _markdown(model, defaults)
    full = style == "full"
    inner = indent + "  "
    if full:
        lines = [f"{indent}{model.quantity} / {model.id}", wrap(model.name, inner)]
        if defaults:
            lines.append(f"{inner}default in release {', '.join(defaults)}")
        lines += ["", f"{indent}equation:"]
        lines += [wrap(x, inner) if x.strip() else "" for x in _equation(model).splitlines()]
        lines.append(f"{inner}(kernel {_kernel_name(model)}; kind {model.kind})")
    else:
        lines = [f"{indent}{model.quantity}: model {model.id} ({model.kind})"]
        lines.append(wrap(model.name, inner))
    if model.requires and composed_with:
        lines.append(wrap(f"composed from the material's choice of: {composed_with}", inner))
    if full:
        if model.coefficients:
            lines += ["", f"{indent}coefficients (as published; value ± uncertainty, units):"]
            width = max(len(n) for n in model.coefficients)
            for name, coefficient in model.coefficients.items():
                text = _coefficient(coefficient, False)
                lines.append(wrap(name.ljust(width) + text[len(name) :], inner))
        if model.tables:
            lines += ["", f"{indent}tables: " + ", ".join(_table_files(model))]
        lines += ["", f"{indent}validity:"]
        lines += [f"{inner}{r}" for r in model.validity.values()] or [f"{inner}no limits recorded"]
        lines += ["", f"{indent}source:", wrap(model.source.citation(), inner)]
        lines += [wrap(s.citation(), inner + "also: ") for s in model.additional_sources]
        lines += ["", f"{indent}how the numbers were obtained:", wrap(model.obtained, inner)]
        lines += _fitted_lines(model, inner)
        if model.notes:
            lines += ["", f"{indent}notes:", wrap(model.notes, inner)]
        folder, catalogue = _folder(model)
        lines.append("")
        if catalogue:
            lines.append(wrap(catalogue, indent))
        lines.append(f"{indent}file: {folder}/{_file(model)}")
        lines.append(f"{indent}sha256: {model.sha256}")
        return lines
    lines.append(wrap(f"source: {model.source.citation()}", inner))
    for extra in model.additional_sources:
        lines.append(wrap(f"also: {extra.citation()}", inner))
    if model.validity:
        lines.append(wrap(f"validity: {_ranges(model)}", inner))
    if model.coefficients:
        text = "; ".join(_coefficient(c, False) for c in model.coefficients.values())
        lines.append(wrap(f"coefficients: {text}", inner))
    lines.append(wrap(f"obtained: {model.obtained}", inner))
    lines += _fitted_lines(model, inner)
    folder, catalogue = _folder(model)
    if catalogue:
        lines.append(wrap(catalogue, inner))
    lines.append(f"{inner}file: {folder}/{_file(model)} (sha256 {model.sha256[:12]}...)")
    return lines


def _file(model) -> str:
    return str(model.provenance()["file"])


def _folder(model) -> tuple[str, str]:
    """Where the model's file lies: ``datasets`` for the data shipped with matprops, an
    overlay catalogue's folder otherwise (with a line naming that catalogue)."""
    where = model.provenance().get("catalogue") or {}
    if where.get("name", "matprops") == "matprops":
        return "datasets", ""
    return where["path"], f"catalogue: {where['name']} ({where['description']}), {where['path']}"


def _table_files(model) -> list[str]:
    if _folder(model)[1]:  # an overlay's model: its tables may lie in either folder
        return [str(model.catalogue.table_path(t)) for t in model.tables]
    return [f"datasets/tables/{t}" for t in model.tables]


def _fitted_lines(model, indent: str) -> list[str]:
    """For a model fitted to one's own measurements: what was free, to how many points,
    how well, and the model it started from."""
    fitted = model.extra.get("fitted")
    if not fitted:
        return []
    return [
        wrap(
            f"fitted: {', '.join(fitted['free'])} free, to {fitted['points']} points; chi2 "
            f"{fitted['chi2']:.4g} for {fitted['dof']} degrees of freedom; base model "
            f"{fitted['base_model']}",
            indent,
        )
    ]


def _markdown(model, defaults) -> list[str]:
    default = f" — default in {', '.join(defaults)}" if defaults else ""
    lines = [f"### `{model.id}`{default}", "", one_line(model.name), ""]
    lines.append(f"- kind: {model.kind}; kernel: `{_kernel_name(model)}`")
    lines.append(f"- source: {model.source.citation()}")
    lines += [f"- also: {extra.citation()}" for extra in model.additional_sources]
    if model.validity:
        lines.append(f"- validity: {_ranges(model)}")
    lines += [f"- validity region: {region} ({region.reason})" for region in model.regions]
    if model.requires:
        lines.append(f"- composed from: {', '.join(model.requires)} (the material's choice)")
    if model.table:
        lines.append(f"- tables: {', '.join(model.provenance()['tables'])}")
    lines += [f"- {_coefficient(c, True)}" for c in model.coefficients.values()]
    conventions = getattr(model, "conventions", None)
    if conventions:
        lines.append("- fitted with:")
        lines += [f"  - {name}: {one_line(e.describe())}" for name, e in conventions.items()]
    stand_ins = model.extra.get("stand_ins", {})
    if stand_ins:
        lines.append("- species without a set of their own:")
        lines += [f"  - {one_line(record.describe())}" for record in stand_ins.values()]
    lines.append(f"- obtained: {one_line(model.obtained)}")
    if model.notes:
        lines.append(f"- notes: {one_line(model.notes)}")
    lines.append("")
    return lines


# --------------------------------------------------------------------------- provenance


def provenance_lines(si, name: str, indent: str = "") -> list[str]:
    """A quantity's provenance as text: its model record (brief), or for a derived
    quantity its formula and each part's record; composed models list their parts."""
    from ..material.derived import DERIVED

    if name in DERIVED:
        parts, formula = DERIVED[name]
        lines = [f"{indent}{name}: derived, {formula}"]
        for part in parts:
            lines += provenance_lines(si, part, indent + "  ")
        return lines
    return _model_lines(si.model(name), indent)


def _model_lines(model, indent: str) -> list[str]:
    lines = model_record(model, "brief", indent=indent)
    for component in model.components.values():
        lines += _model_lines(component, indent + "  ")
    return lines


def table_footer(si, names) -> str:
    """The release and the model of each quantity of a table, and where to read more."""
    names = list(dict.fromkeys(names))
    models = "; ".join(f"{q} {si.models[q]}" if q in si.models else f"{q} (derived)" for q in names)
    return "\n".join(
        [
            wrap(f"release {si.release.id} ({si.release.status}); models: {models}"),
            wrap("sources: matprops provenance QUANTITY; references: matprops cite"),
        ]
    )


def uncertainty_note(data) -> str:
    """What a table's uncertainty variables hold: how each was obtained, and which
    models' sources state none (their uncertainty is NaN, never zero)."""
    lines = []
    for name, variable in data.data_vars.items():
        if not name.endswith("_uncertainty"):
            continue
        status = variable.attrs.get("uncertainty_status", "")
        method = variable.attrs.get("uncertainty_method", "")
        silent = variable.attrs.get("models_without_stated_uncertainty", "")
        text = f"{name}: {status}" + (f" ({method})" if method and method != "none" else "")
        if silent:
            text += f"; NaN where no source states one: {silent}"
        lines.append(wrap(text))
    if lines:
        lines.append(wrap("the model spread is a separate figure, never added to the uncertainty"))
    return "\n".join(lines)


# --------------------------------------------------------------------------- releases


def _pretty_units(units: str) -> str:
    from ..units import pretty_units

    try:
        return pretty_units(units.replace(" ** ", "^").replace("Ω", "ohm"))
    except Exception:  # a unit pint does not read stays as written
        return units


def release_difference_text(diff: dict, width: int = 100) -> str:
    """What changed, for the screen: the models whose id or file changed and the
    cases of the reference grid whose numbers moved; "identical" when nothing did."""

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
                    f"({r['largest_absolute']:.3g} {_pretty_units(r['units'])})"
                    + (f" at {at}" if at else "")
                )
            )
    else:
        out.append(f"numbers: identical on the standard reference grid ({same} cases)")
    if diff.get("notes"):
        out.append(f"notes of {new} (each change with its size at standard points):")
        out += ["  " + line for line in str(diff["notes"]).strip().splitlines()]
    return "\n".join(out)
