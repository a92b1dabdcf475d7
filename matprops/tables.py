"""Grids of quantities -> xarray.Dataset, and exports to netCDF (CF), CSV and JSON.

Every variable carries its units (UDUNITS strings, as CF asks), a long name, the
id of the model that produced it and its full provenance as a JSON string; the
dataset carries the release, the references and the call that made it. Files are
written atomically: a temporary file in the target folder, then a rename.
"""

from __future__ import annotations

import json
import os
from pathlib import Path
from typing import Iterable

import numpy as np

from .errors import InputError, UnknownQuantityError
from .units import to_magnitude

__all__ = ["TABLE_QUANTITIES", "table", "write", "FORMATS"]

# quantity -> [(variable name, long name, UDUNITS units, pint units), ...]
TABLE_QUANTITIES = {
    "band_gap": [("band_gap", "fundamental (indirect) band gap, undoped, no narrowing",
                  "eV", "eV")],
    "intrinsic_density": [("intrinsic_density", "intrinsic carrier density, undoped",
                           "cm-3", "cm^-3")],
    "densities_of_states": [
        ("conduction_band_states", "effective density of states of the conduction band",
         "cm-3", "cm^-3"),
        ("valence_band_states", "effective density of states of the valence band",
         "cm-3", "cm^-3")],
    "lattice_constant": [("lattice_constant", "cubic lattice constant", "nm", "nm")],
    "density": [("density", "mass density", "g cm-3", "g/cm^3")],
    "atomic_density": [("atomic_density", "silicon atoms per volume", "cm-3", "cm^-3")],
}
TEMPERATURE_DEPENDENT = tuple(TABLE_QUANTITIES)
FORMATS = ("netcdf", "csv", "json")


def table(si, quantities: Iterable[str] | None = None, temperature=None):
    """Evaluate quantities of ``si`` on a temperature grid.

    Parameters
    ----------
    si : matprops.Silicon
    quantities : names from :data:`TABLE_QUANTITIES` (default: all)
    temperature : array_like, K, or a pint quantity (degC works)

    Returns
    -------
    xarray.Dataset with a ``temperature`` coordinate (K).
    """
    import xarray as xr

    from . import __version__

    names = list(quantities) if quantities is not None else list(TEMPERATURE_DEPENDENT)
    for name in names:
        if name not in TABLE_QUANTITIES:
            raise UnknownQuantityError(name, TABLE_QUANTITIES, "for tables")
    if temperature is None:
        raise InputError("temperature", "given (K or a pint quantity)", None)
    kelvin = np.atleast_1d(to_magnitude(temperature, "temperature")).astype(float)
    if kelvin.ndim != 1:
        raise InputError("temperature", "a scalar or a 1-D list", f"shape {kelvin.shape}")

    data = xr.Dataset(coords={"temperature": ("temperature", kelvin, {
        "units": "K", "long_name": "temperature",
        "units_metadata": "temperature: on_scale"})})
    for name in names:
        result = getattr(si, name)(kelvin)
        parts = result if isinstance(result, tuple) else (result,)
        provenance = json.dumps(si.provenance(name), ensure_ascii=False)
        model = si.models.get(name, "derived")
        for (variable, long_name, cf_units, pint_units), part in zip(TABLE_QUANTITIES[name], parts):
            data[variable] = ("temperature", np.asarray(part.m_as(pint_units), float), {
                "units": cf_units, "long_name": long_name, "quantity": name,
                "model": model, "provenance": provenance})
    data.attrs.update({
        "Conventions": "CF-1.11",
        "title": "Crystalline-silicon parameters from matprops",
        "source": f"matprops {__version__}, release {si.release.id} ({si.release.status})",
        "references": si.cite(format="text", quantities=names),
        "history": f"matprops {__version__}: si.table({names!r}, temperature=<{kelvin.size} values, K>)",
        "release": si.release.id,
        "comment": "Model estimates; for decisions with consequences defer to measured "
                   "data, local codes and licensed practice.",
    })
    return data


def _atomic(path: Path, writer) -> Path:
    path = Path(path)
    tmp = path.with_name(f".{path.name}.tmp-{os.getpid()}")
    try:
        writer(tmp)
        os.replace(tmp, path)
    finally:
        if tmp.exists():
            tmp.unlink()
    return path


def write(data, path, format: str | None = None) -> Path:
    """Write a table atomically as netCDF, CSV (with a commented header) or JSON."""
    path = Path(path)
    format = format or {".nc": "netcdf", ".csv": "csv", ".json": "json"}.get(path.suffix)
    if format not in FORMATS:
        raise InputError("format", f"one of {', '.join(FORMATS)} (or a .nc/.csv/.json path)",
                         repr(format))
    if format == "netcdf":
        encoding = {name: {"_FillValue": None} for name in data.variables}
        return _atomic(path, lambda tmp: data.to_netcdf(tmp, encoding=encoding))
    if format == "csv":
        return _atomic(path, lambda tmp: tmp.write_text(to_csv(data)))
    return _atomic(path, lambda tmp: tmp.write_text(
        json.dumps(data.to_dict(data="list"), indent=1, ensure_ascii=False, default=str)))


def to_csv(data) -> str:
    """CSV text: '# key: value' header lines, then one column per variable with units."""
    lines = [f"# {key}: {' | '.join(str(value).splitlines())}"
             for key, value in data.attrs.items()]
    for name, variable in data.data_vars.items():
        lines.append(f"# {name}: model {variable.attrs.get('model')}, "
                     f"{variable.attrs.get('long_name')}")
    columns = [data.temperature] + list(data.data_vars.values())
    lines.append(",".join(f"{c.name} [{c.attrs.get('units', '')}]" for c in columns))
    for row in zip(*(np.atleast_1d(c.values) for c in columns)):
        lines.append(",".join(f"{v:.10g}" for v in row))
    return "\n".join(lines) + "\n"


def to_text(data) -> str:
    """A fixed-width table for a terminal."""
    columns = [data.temperature] + list(data.data_vars.values())
    heads = [f"{c.name} [{c.attrs.get('units', '')}]" for c in columns]
    widths = [max(len(h), 12) for h in heads]
    out = ["  ".join(h.rjust(w) for h, w in zip(heads, widths))]
    for row in zip(*(np.atleast_1d(c.values) for c in columns)):
        out.append("  ".join(f"{v:.6g}".rjust(w) for v, w in zip(row, widths)))
    return "\n".join(out)
