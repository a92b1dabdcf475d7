"""The model file of a fit (:class:`~matprops.outputs.fitting.Fit`): its text, and
writing it with its data into an overlay catalogue.

The file is the base model's file with the fitted coefficients replaced (each with its
standard uncertainty, what kind it is and where it came from), the validity range of the
data, the source record of the measurement (the data file and its sha256), the base
model's sources as additional sources, the fit conventions, an ``[uncertainty]``
section with the coefficients' correlations, and a ``[fitted]`` section: the base model
and its sha256, what was free, the method and the fit's statistics.
"""

from __future__ import annotations

import datetime
import json
import os
import re
from collections.abc import Mapping
from pathlib import Path

import numpy as np

from ..errors import DatasetError, InputError

__all__ = ["METHOD", "model_file", "toml_text", "write"]

METHOD = (
    "weighted least squares (scipy.optimize.least_squares, trust-region reflective, "
    "coefficients scaled by their starting values); covariance (J^T W J)^-1 at the "
    "solution, J by central differences"
)


def _split(element: str) -> tuple[str, int | None]:
    match = re.fullmatch(r"([a-z_][a-z0-9_]*)(?:\[(\d+)\])?", element)
    if match is None:
        raise InputError("free", "coefficient names ('alpha' or 'coefficients[1]')", element)
    return match.group(1), None if match.group(2) is None else int(match.group(2))


def _printed(model, element: str):
    name, _ = _split(element)
    return model.coefficients[name]


def _to_printed(coefficient, kernel_value: float, kernel_sigma: float) -> tuple[float, float]:
    """A value and its uncertainty from the kernel's units to the file's units."""
    from ..units import Q_, unit

    source, target = unit(coefficient.kernel_units), unit(coefficient.units)
    value = float(Q_(kernel_value, source).m_as(target))
    low, high = (float(v) for v in Q_(np.array([0.0, 1.0]), source).m_as(target))
    return value, abs(kernel_sigma * (high - low))


def write(
    fit,
    catalogue,
    model_id: str,
    *,
    source: Mapping,
    name: str | None = None,
    notes: str = "",
    conventions: Mapping[str, Mapping] | None = None,
    overwrite: bool = False,
) -> Path:
    """Write the fitted model into an overlay catalogue (a folder, see
    :mod:`matprops.catalogue.overlay`): the data as ``measurements/<quantity>-<model_id>.csv``
    and the model file ``models/<quantity>/<model_id>.toml``, then re-record the
    catalogue's checksums and load the new file once through it (schema, units,
    conventions); on any failure the catalogue is left as it was. Returns the model
    file's path.

    ``source``: ``authors`` (who measured), ``year``, ``title``, ``description``
    (what was measured, how, on what samples), optionally ``lab`` and ``doi``.
    ``conventions``: the model's fit conventions (a composed quantity's file must
    state them; default: the base model's, marked as assumed).
    """
    from ..catalogue import overlay as overlays
    from ..catalogue.files import forget, temporary_for

    text, data_name = fit.model_file(
        model_id, source=source, name=name, notes=notes, conventions=conventions
    )
    folder = catalogue if isinstance(catalogue, (str, os.PathLike)) else catalogue.root
    root = Path(os.path.abspath(Path(folder).expanduser()))
    if not (root / overlays.IDENTITY).is_file():
        raise InputError(
            "catalogue",
            "an overlay catalogue folder (matprops.create_catalogue makes one)",
            repr(str(root)),
        )
    overlays.check_unchanged(root)  # never re-record a change made behind our back
    target = root / "models" / fit.quantity / f"{model_id}.toml"
    data_path = root / overlays.MEASUREMENTS / data_name
    for path in (target, data_path):
        if path.exists() and not overwrite:
            raise InputError(
                "model_id", "a model id new to the catalogue (or overwrite=True)", model_id
            )
    saved = {p: p.read_bytes() for p in (target, data_path) if p.exists()}
    target.parent.mkdir(parents=True, exist_ok=True)
    data_path.parent.mkdir(parents=True, exist_ok=True)
    written = []
    try:
        for path, content in ((data_path, fit.measurements.content), (target, text.encode())):
            tmp = temporary_for(path)  # (removed by an interrupted application)
            try:
                tmp.write_bytes(content)
                os.replace(tmp, path)
            finally:
                tmp.unlink(missing_ok=True)
                forget(tmp)
            written.append(path)
        overlays._write_checksums_of(root)
        probe = overlays.Overlay(root, _below(root, fit.parent), overlays.SealRecord({}))
        probe.model(fit.quantity, model_id)  # loads: schema, units, conventions
    except Exception:
        for path in written:  # leave the catalogue as it was
            if path in saved:
                path.write_bytes(saved[path])
            else:
                path.unlink(missing_ok=True)
        overlays._write_checksums_of(root)
        raise
    _refresh(root)
    return target


def model_file(
    fit,
    model_id: str,
    *,
    source: Mapping,
    name: str | None = None,
    notes: str = "",
    conventions: Mapping[str, Mapping] | None = None,
) -> tuple[str, str]:
    """The text of the fitted model's file and the name of its data file."""
    import tomllib

    from ..catalogue.modelfile import MODEL_ID

    if not MODEL_ID.match(model_id or ""):
        raise InputError("model_id", "a lower-case 'name-year' id", repr(model_id))
    parent = fit.parent
    raw = tomllib.loads(parent.catalogue.verified_bytes(parent.path).decode())
    data_name = f"{fit.quantity}-{model_id}{fit.measurements.suffix}"
    record = _source_record(source, data_name, fit.measurements.sha256)
    free = ", ".join(fit.free)
    m = fit.measurements
    spans = "; ".join(
        f"{k} {v.min():g}-{v.max():g} {fit.base.inputs[k]}"
        for k, v in m.inputs.items()
        if k not in m.given
    )
    held = "".join(f"; {k} = {v:g} {fit.base.inputs[k]}" for k, v in m.given.items())
    obtained = (
        f"Fitted with matprops.fit to the own measurement {data_name} ({m.points} points; "
        f"{spans}{held}): {free} free"
        + (f" (the {fit.variant} set)" if fit.variant else "")
        + f"; every other coefficient as in {parent.quantity}/{parent.id} (its file "
        + (f"as read in release {fit.release}, " if fit.release else "")
        + f"sha256 {parent.sha256[:12]}). Standard "
        + "uncertainties and correlations from the fit's covariance"
        + (
            " scaled by the reduced chi-square"
            if fit.scaled
            else ", the measured uncertainties taken as standard uncertainties"
        )
        + f". The base model's own origin: {parent.obtained}"
    )
    new = {
        "id": model_id,
        "quantity": fit.quantity,
        "name": name or f"{parent.name}, refitted to own measurements",
        "kind": "closed-form",
        "kernel": raw["kernel"],
        "obtained": obtained,
        "notes": (notes.strip() + "\n" if notes.strip() else "")
        + "Model estimates from a fit to one data set: defer to the measurements "
        "themselves where they apply, and to the fit's validity range.",
    }
    for key in ("variant_axis",):
        if key in raw:
            new[key] = raw[key]
    new["source"] = record
    new["additional_sources"] = [raw["source"], *raw.get("additional_sources", [])]
    validity = dict(raw.get("validity", {}))
    notes_on_ranges = []
    for argument, (low, high, note) in fit.validity().items():
        validity[argument] = {"min": low, "max": high, "units": fit.base.inputs[argument]}
        if note:
            notes_on_ranges.append(note)
    if notes_on_ranges:
        new["notes"] += "\n" + "; ".join(notes_on_ranges) + "."
    new["validity"] = validity
    for key in ("validity_region",):
        if key in raw:
            new[key] = raw[key]
    coefficients = {k: dict(v) for k, v in raw.get("coefficients", {}).items()}
    variants = {k: {**v} for k, v in raw.get("variants", {}).items()}
    if fit.variant is not None:
        variants[fit.variant] = dict(variants[fit.variant])
        variants[fit.variant]["coefficients"] = {
            k: dict(v) for k, v in variants[fit.variant].get("coefficients", {}).items()
        }
        table = variants[fit.variant]["coefficients"]
    else:
        table = coefficients
    how = (
        "standard uncertainty from the fit's covariance"
        + (" scaled by the reduced chi-square" if fit.scaled else "")
        + f" ({m.points} points, chi2 {fit.chi2:.4g} for {fit.dof} degrees of freedom)"
    )
    for element in fit.free:
        coefficient, index = _split(element)
        printed = _printed(fit.base, element)
        value, sigma = _to_printed(printed, fit.values[element], fit.uncertainties[element])
        entry = table[coefficient]
        if index is None:
            entry["value"] = value
            entry["uncertainty"] = sigma
        else:
            values = list(entry["value"])
            values[index] = value
            entry["value"] = values
            old = entry.get("uncertainty", [0.0] * len(values))
            spread = list(old) if isinstance(old, list) else [0.0] * len(values)
            spread[index] = sigma
            entry["uncertainty"] = spread
        entry["uncertainty_kind"] = "standard"
        entry.pop("coverage_factor", None)
        entry["uncertainty_obtained"] = how
        entry["obtained"] = f"fitted to {data_name}"
    if coefficients:
        new["coefficients"] = coefficients
    if variants:
        new["variants"] = variants
    known = {
        "id",
        "quantity",
        "name",
        "kind",
        "kernel",
        "obtained",
        "notes",
        "source",
        "additional_sources",
        "validity",
        "validity_region",
        "coefficients",
        "variants",
        "variant_axis",
        "uncertainty",
        "fitted",
        "fallback",
        "fit_conventions",
    }
    for key, value in raw.items():  # the quantity's own sections (narrowing, ...)
        if key not in known:
            new[key] = value
    stated = conventions or {}
    if "fit_conventions" in raw or stated:
        merged = {}
        for key, entry in raw.get("fit_conventions", {}).items():
            merged[key] = {
                **entry,
                "obtained": f"assumed as the base model {parent.id} (the fit fed the "
                f"kernel the same kind of inputs); {parent.id}: {entry['obtained']}",
            }
        for key, entry in stated.items():
            merged[key] = dict(entry)
        new["fit_conventions"] = merged
    correlation = fit.correlation
    labels = [f"{fit.variant}.{n}" if fit.variant else n for n in fit.free]
    uncertainty: dict[str, object] = {
        "statement": "stated",
        "obtained": "the fit's covariance: standard uncertainties of the free coefficients "
        "and their correlations; the other coefficients as the base model states them",
    }
    if len(fit.free) > 1:
        uncertainty["correlation"] = [
            {
                "coefficients": labels,
                "matrix": [[float(c) for c in row] for row in correlation],
                "obtained": "the fit's covariance",
            }
        ]
    new["uncertainty"] = uncertainty
    residuals = fit.residuals
    fitted = {
        "base_model": f"{parent.quantity}/{parent.id}",
        "base_sha256": parent.sha256,
    }
    if fit.release:
        fitted["base_release"] = fit.release
    if fit.variant:
        fitted["variant"] = fit.variant
    fitted["free"] = list(fit.free)
    if m.given:
        fitted["inputs"] = {k: float(v) for k, v in m.given.items()}
    fitted.update(
        {
            "method": METHOD,
            "covariance": "scaled by reduced chi2"
            if fit.scaled
            else "from the measured uncertainties",
            "points": m.points,
            "dof": fit.dof,
            "chi2": float(fit.chi2),
            "reduced_chi2": float(fit.reduced_chi2),
            "residuals": {
                "rms": float(np.sqrt(np.mean(residuals**2))),
                "max_abs": float(np.abs(residuals).max()),
                "mean": float(np.mean(residuals)),
            },
            "date": datetime.date.today().isoformat(),
            "software": f"matprops {_version()}, scipy {_scipy_version()}",
        }
    )
    new["fitted"] = fitted
    header = (
        f"# {fit.quantity}/{model_id}: fitted with matprops.fit to {data_name}; "
        f"base model {parent.quantity}/{parent.id}\n"
    )
    return header + toml_text(new), data_name


def _below(root: Path, parent):
    """The catalogue an overlay folder lies over, as the base model's catalogue has it
    (the layer under that folder when the base model came from it or from above it)."""
    from ..catalogue import overlay as overlays

    top = parent.catalogue.base
    for layer in overlays._layers(top):
        if isinstance(layer, overlays.Overlay) and layer.root == root:
            return layer.below
    return top


def _refresh(root: Path) -> None:
    """Shared overlays of this folder re-read their checksum list (a new file)."""
    from ..catalogue import overlay as overlays

    with overlays._LOCK:
        for (path, _, _), known in list(overlays._OVERLAYS.items()):
            if path == root:
                with known._lock:
                    known._checksums = None
                    known.checksums()


def _version() -> str:
    from .._version import __version__

    return __version__


def _scipy_version() -> str:
    import scipy

    return scipy.__version__


def _source_record(source: Mapping, data_name: str, digest: str) -> dict:
    required = ("authors", "year", "title", "description")
    if not isinstance(source, Mapping):
        raise InputError("source", "a mapping with " + ", ".join(required), repr(source))
    missing = [k for k in required if not source.get(k)]
    if missing:
        raise InputError("source", "the fields " + ", ".join(required), f"missing {missing}")
    unknown = set(source) - {*required, "lab", "doi"}
    if unknown:
        raise InputError("source", "only authors, year, title, description, lab, doi", unknown)
    authors = source["authors"]
    if isinstance(authors, str):
        authors = [authors]
    record = {"type": "measurement", "authors": list(authors), "year": int(source["year"])}
    record["title"] = str(source["title"])
    if source.get("lab"):
        record["lab"] = str(source["lab"])
    record.update(
        description=str(source["description"]),
        data=data_name,
        data_sha256=digest,
        doi=str(source.get("doi", "")),
    )
    return record


# --------------------------------------------------------------------------- TOML


def toml_text(data: Mapping) -> str:
    """A model file's TOML text: scalars first, then tables, then arrays of tables."""
    lines: list[str] = []
    _table(lines, data, ())
    return "\n".join(lines).strip() + "\n"


def _table(lines, data: Mapping, path: tuple) -> None:
    scalars = {k: v for k, v in data.items() if not _is_table(v) and not _is_table_array(v)}
    tables = {k: v for k, v in data.items() if _is_table(v)}
    arrays = {k: v for k, v in data.items() if _is_table_array(v)}
    if path and (scalars or not tables):
        lines.append("")
        lines.append(f"[{'.'.join(_key(p) for p in path)}]")
    for key, value in scalars.items():
        lines.append(f"{_key(key)} = {_value(value)}")
    for key, value in tables.items():
        _table(lines, value, (*path, key))
    for key, entries in arrays.items():
        for entry in entries:
            lines.append("")
            lines.append(f"[[{'.'.join(_key(p) for p in (*path, key))}]]")
            for name, value in entry.items():
                if _is_table(value):
                    inline = ", ".join(f"{_key(k)} = {_value(v)}" for k, v in value.items())
                    lines.append(f"{_key(name)} = {{ {inline} }}")
                else:
                    lines.append(f"{_key(name)} = {_value(value)}")


def _is_table(value) -> bool:
    return isinstance(value, Mapping)


def _is_table_array(value) -> bool:
    return isinstance(value, list) and bool(value) and all(isinstance(v, Mapping) for v in value)


def _key(key: str) -> str:
    return key if re.fullmatch(r"[A-Za-z0-9_-]+", key) else json.dumps(key)


def _value(value) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if not np.isfinite(value):
            raise DatasetError("fit", f"a finite number for the model file, got {value!r}")
        return repr(float(value))
    if isinstance(value, (datetime.date, datetime.datetime)):
        return value.isoformat()
    if isinstance(value, str):
        if "\n" in value and not re.search(r"[\x00-\x08\x0b-\x1f\x7f]", value):
            body = value.replace("\\", "\\\\").replace('"""', '\\"\\"\\"')
            return f'"""\n{body}"""'
        return json.dumps(value, ensure_ascii=False)
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(_value(v) for v in value) + "]"
    if isinstance(value, Mapping):
        return "{ " + ", ".join(f"{_key(k)} = {_value(v)}" for k, v in value.items()) + " }"
    if isinstance(value, np.generic):
        return _value(value.item())
    raise DatasetError("fit", f"a value a model file can hold, got {type(value).__name__}")
