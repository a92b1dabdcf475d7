"""Measured data for a fit: the values, their standard uncertainties and the model's
inputs, read from an ``xarray.Dataset``, a CSV file or a mapping of quantities, and
converted to the kernel's internal units (see :mod:`matprops.outputs.fitting`).
"""

from __future__ import annotations

import hashlib
import io
import os
import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..errors import InputError

__all__ = ["Measurements", "read_measurements"]

_HEADING = re.compile(
    r"^\s*(?P<name>[^\[\(]+?)\s*(?:\[(?P<brackets>.*)\]|\((?P<parentheses>.*)\))?\s*$"
)


@dataclass(frozen=True, eq=False)
class Measurements:
    """Measured values of one quantity at given inputs, in the kernel's units.

    ``values`` and ``uncertainty`` in the quantity's internal units, ``inputs`` each
    broadcast to the points; ``content`` the bytes kept in the overlay catalogue (the
    CSV as given, or the data written as CSV) and ``name`` a file name for them.
    """

    values: np.ndarray
    uncertainty: np.ndarray
    inputs: Mapping[str, np.ndarray]
    content: bytes
    suffix: str
    given: Mapping[str, float] = field(default_factory=dict)  # inputs given as constants

    @property
    def sha256(self) -> str:
        return hashlib.sha256(self.content).hexdigest()

    @property
    def points(self) -> int:
        return int(self.values.size)


def _units_of(text: str):
    from ..catalogue.fields import udunits_to_pint
    from ..units import unit

    try:
        return unit(text)
    except Exception:
        try:
            return unit(udunits_to_pint(text))
        except Exception as exc:
            raise InputError("data", "units pint or UDUNITS reads", repr(text)) from exc


def _convert(values, units: str | None, target: str, what: str) -> np.ndarray:
    from ..units import Q_, unit

    array = np.asarray(values, dtype=float)
    if units is None:
        if unit(target).dimensionless:
            return array
        raise InputError(
            "data", f"units for {what} (in {target} or another unit of that dimension)", "none"
        )
    source = _units_of(units)
    if source.dimensionality != unit(target).dimensionality:
        raise InputError("data", f"{what} in units of {target}", f"units {units!r}")
    return np.asarray(Q_(array, source).m_as(unit(target)), dtype=float)


def _canonical(name: str) -> str:
    from ..vocabulary import canonical_name

    return canonical_name(name) or name


def read_measurements(data, quantity: str, model, inputs: Mapping | None = None) -> Measurements:
    """The measured values, their uncertainties and the model's inputs, in the kernel's
    units (see the module's description for the forms ``data`` may take)."""
    columns, content, suffix = _columns(data)
    spec = model.kernel.spec
    output = spec.output
    if not isinstance(output, str):
        raise InputError("model", "a model with one output", f"{model.id} gives {len(output)}")
    names = {_canonical(name): name for name in columns}
    if quantity not in names:
        raise InputError(
            "data", f"a column or variable {quantity!r} (the measured values)", _listing(columns)
        )
    raw_values, units = columns[names[quantity]]
    values = _convert(raw_values, units, output, quantity)
    key = f"{quantity}_uncertainty"
    uncertainty_name = names.get(key) or names.get("uncertainty")
    if uncertainty_name is None:
        raise InputError(
            "data",
            f"the measured values' standard uncertainties as {key!r} (or 'uncertainty')",
            _listing(columns),
        )
    raw_sigma, sigma_units = columns[uncertainty_name]
    sigma = _convert(raw_sigma, sigma_units if sigma_units is not None else units, output, key)
    given = {}
    for name, value in dict(inputs or {}).items():
        canonical = _canonical(name)
        if canonical not in spec.inputs:
            raise InputError("inputs", f"inputs of {model.id} ({', '.join(spec.inputs)})", name)
        magnitude = getattr(value, "magnitude", None)
        if magnitude is not None:
            given[canonical] = float(np.asarray(value.m_as(_units_of(spec.inputs[canonical]))))
        else:
            given[canonical] = float(value)
    arrays: dict[str, np.ndarray] = {}
    for argument, target in spec.inputs.items():
        if argument in given:
            if argument in names:
                raise InputError("inputs", f"{argument} either in the data or in inputs=", "both")
            arrays[argument] = np.full(values.shape, given[argument])
            continue
        if argument not in names:
            raise InputError(
                "data",
                f"the model's input {argument!r} ({target}) as a column, or in inputs=",
                _listing(columns),
            )
        raw, input_units = columns[names[argument]]
        arrays[argument] = _convert(raw, input_units, target, argument)
    shape = np.broadcast_shapes(values.shape, sigma.shape, *(a.shape for a in arrays.values()))
    values = np.broadcast_to(values, shape).ravel()
    sigma = np.broadcast_to(sigma, shape).ravel()
    arrays = {k: np.broadcast_to(a, shape).ravel().copy() for k, a in arrays.items()}
    finite = np.isfinite(values) & np.isfinite(sigma)
    for a in arrays.values():
        finite &= np.isfinite(a)
    if not finite.all():
        raise InputError("data", "finite numbers only", f"{int((~finite).sum())} NaN or inf")
    if np.any(sigma <= 0):
        raise InputError("data", f"uncertainties {key!r} > 0", f"{int((sigma <= 0).sum())} <= 0")
    return Measurements(values, sigma, arrays, content, suffix, given)


def _listing(columns) -> str:
    return f"columns/variables {', '.join(map(repr, columns)) or '(none)'}"


def _columns(data) -> tuple[dict, bytes, str]:
    """name -> (values, units or None), the bytes to keep, and their suffix."""
    if isinstance(data, (str, os.PathLike)):
        path = Path(data).expanduser()
        try:
            content = path.read_bytes()
        except OSError as exc:
            raise InputError("data", "a readable CSV file", f"{str(path)!r} ({exc})") from exc
        return _csv_columns(content, str(path)), content, ".csv"
    try:
        import xarray as xr

        if isinstance(data, xr.Dataset):
            columns = _dataset_columns(data)
            return columns, _as_csv(columns), ".csv"
    except ImportError:  # pragma: no cover - xarray is a dependency
        pass
    if isinstance(data, Mapping):
        columns = {}
        for name, value in data.items():
            if hasattr(value, "magnitude") and hasattr(value, "units"):
                columns[str(name)] = (np.asarray(value.magnitude, dtype=float), f"{value.units}")
            elif isinstance(value, tuple) and len(value) == 2 and isinstance(value[1], str):
                columns[str(name)] = (np.asarray(value[0], dtype=float), value[1])
            else:
                columns[str(name)] = (np.asarray(value, dtype=float), None)
        return columns, _as_csv(columns), ".csv"
    raise InputError(
        "data", "an xarray.Dataset, a CSV file or a mapping of quantities", type(data).__name__
    )


def _csv_columns(content: bytes, where: str) -> dict:
    import pandas as pd

    try:
        frame = pd.read_csv(io.BytesIO(content), comment="#")
    except Exception as exc:  # pandas' own parser errors
        raise InputError("data", "a CSV file pandas reads", f"{where!r} ({exc})") from exc
    columns = {}
    for heading in frame.columns:
        match = _HEADING.match(str(heading))
        name = match.group("name") if match else str(heading)
        units = (match.group("brackets") or match.group("parentheses")) if match else None
        units = units.strip() if units else None
        try:
            values = frame[heading].to_numpy(dtype=float)
        except (TypeError, ValueError):
            continue  # a label column (sample name, carrier ...)
        columns[name.strip()] = (values, units)
    return columns


def _dataset_columns(data) -> dict:
    import xarray as xr

    names = list(data.data_vars) + list(data.coords)
    broadcast = xr.broadcast(*[data[n] for n in names]) if names else []
    columns = {}
    for name, array in zip(names, broadcast, strict=True):
        if array.dtype.kind not in "fiu":
            continue
        columns[str(name)] = (np.asarray(array.values, dtype=float), array.attrs.get("units"))
    for name in data.data_vars:  # an uncertainty linked as CF does it
        linked = data[name].attrs.get("ancillary_variables")
        if linked and f"{name}_uncertainty" not in columns and linked in columns:
            columns[f"{name}_uncertainty"] = columns[linked]
    return columns


def _as_csv(columns: Mapping) -> bytes:
    """The data as matprops writes a CSV: one header row, units in the names."""
    import pandas as pd

    shape = np.broadcast_shapes(*(np.shape(v) for v, _ in columns.values()))
    frame = pd.DataFrame(
        {
            (f"{name} [{units}]" if units else name): np.broadcast_to(values, shape).ravel()
            for name, (values, units) in columns.items()
        }
    )
    return frame.to_csv(index=False, float_format="%.17g", lineterminator="\n").encode()
