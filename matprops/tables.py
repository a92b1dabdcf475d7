"""Grids of quantities -> xarray.Dataset, and exports to netCDF (CF), CSV and JSON.

Every variable carries its units (UDUNITS strings, as CF asks), a long name, the
id of the model that produced it and its full provenance as a JSON string; the
dataset carries the release, the references and the call that made it. Files are
written atomically: a temporary file in the target folder, then a rename.
"""

from __future__ import annotations

import json
import os
from collections.abc import Iterable
from pathlib import Path

import numpy as np

from .errors import InputError, UnknownQuantityError
from .units import to_magnitude

__all__ = ["FORMATS", "TABLE_QUANTITIES", "table", "write"]

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
    "absorption": [("absorption_coefficient", "band-to-band absorption coefficient",
                    "cm-1", "1/cm")],
    "refractive_index": [("refractive_index", "real part of the complex refractive index",
                          "1", "dimensionless")],
}
SPECTRAL = ("absorption", "refractive_index")  # also depend on wavelength
TEMPERATURE_DEPENDENT = tuple(q for q in TABLE_QUANTITIES if q not in SPECTRAL)
FORMATS = ("netcdf", "csv", "json")


def table(si, quantities: Iterable[str] | None = None, temperature=None, wavelength=None):
    """Evaluate quantities of ``si`` on a temperature (and wavelength) grid.

    Parameters
    ----------
    si : matprops.Silicon
    quantities : names from :data:`TABLE_QUANTITIES` (default: all that depend on
        temperature alone, plus the optical ones when a wavelength grid is given)
    temperature : array_like, K, or a pint quantity (degC works)
    wavelength : array_like, nm, or a pint quantity; needed for absorption and
        refractive_index, which get the dimensions (wavelength, temperature)

    Returns
    -------
    xarray.Dataset with a ``temperature`` coordinate (K) and, for optical
    quantities, a ``wavelength`` coordinate (nm).
    """
    import xarray as xr

    from . import __version__

    if quantities is not None:
        names = list(quantities)
    else:
        names = list(TEMPERATURE_DEPENDENT) + (list(SPECTRAL) if wavelength is not None else [])
    for name in names:
        if name not in TABLE_QUANTITIES:
            raise UnknownQuantityError(name, TABLE_QUANTITIES, "for tables")
    if temperature is None:
        raise InputError("temperature", "given (K or a pint quantity)", None)
    kelvin = _grid(temperature, "temperature")
    coords = {"temperature": ("temperature", kelvin, {
        "units": "K", "long_name": "temperature",
        "units_metadata": "temperature: on_scale"})}
    spectral = [n for n in names if n in SPECTRAL]
    if spectral:
        if wavelength is None:
            raise InputError("wavelength", f"given for {', '.join(spectral)} (nm or a pint "
                             "quantity)", None)
        nm = _grid(wavelength, "wavelength")
        coords["wavelength"] = ("wavelength", nm, {"units": "nm",
                                                   "long_name": "vacuum wavelength"})

    data = xr.Dataset(coords=coords)
    for name in names:
        if name in SPECTRAL:
            dims = ("wavelength", "temperature")
            result = getattr(si, name)(nm[:, None], kelvin[None, :])
        else:
            dims = ("temperature",)
            result = getattr(si, name)(kelvin)
        parts = result if isinstance(result, tuple) else (result,)
        provenance = json.dumps(si.provenance(name), ensure_ascii=False)
        model = si.models.get(name, "derived")
        columns = zip(TABLE_QUANTITIES[name], parts, strict=True)
        for (variable, long_name, cf_units, pint_units), part in columns:
            data[variable] = (dims, np.asarray(part.m_as(pint_units), float), {
                "units": cf_units, "long_name": long_name, "quantity": name,
                "model": model, "provenance": provenance})
    data.attrs.update({
        "Conventions": "CF-1.11",
        "title": "Crystalline-silicon parameters from matprops",
        "source": f"matprops {__version__}, release {si.release.id} ({si.release.status})",
        "references": si.cite(format="text", quantities=names),
        "history": f"matprops {__version__}: si.table({names!r}, temperature=<{kelvin.size} "
                   f"values, K>{f', wavelength=<{nm.size} values, nm>' if spectral else ''})",
        "release": si.release.id,
        "comment": "Model estimates; for decisions with consequences defer to measured "
                   "data, local codes and licensed practice.",
    })
    return data


def _grid(values, argument):
    array = np.atleast_1d(to_magnitude(values, argument)).astype(float)
    if array.ndim != 1:
        raise InputError(argument, "a scalar or a 1-D list", f"shape {array.shape}")
    return array


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
    heads, rows = _columns(data)
    lines.append(",".join(heads))
    lines.extend(",".join(f"{v:.10g}" for v in row) for row in rows)
    return "\n".join(lines) + "\n"


def _columns(data):
    """Column headings with units, and rows: one per grid point (long format)."""
    frame = data.to_dataframe().reset_index()
    names = [n for n in ("wavelength", "temperature") if n in data.coords]
    names += list(data.data_vars)
    heads = [f"{n} [{data[n].attrs.get('units', '')}]" for n in names]
    return heads, frame[names].to_numpy()


def to_text(data) -> str:
    """A fixed-width table for a terminal."""
    heads, rows = _columns(data)
    widths = [max(len(h), 12) for h in heads]
    out = ["  ".join(h.rjust(w) for h, w in zip(heads, widths, strict=True))]
    out.extend("  ".join(f"{v:.6g}".rjust(w) for v, w in zip(row, widths, strict=True))
               for row in rows)
    return "\n".join(out)
