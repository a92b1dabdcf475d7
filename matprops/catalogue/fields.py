"""Reading the fields of a data file: required fields, numbers and unit conversion.

Shared by the model files (:mod:`.modelfile`), their validity regions
(:mod:`.regions`) and the defect catalogue (:mod:`.defects`).
"""

from __future__ import annotations

import re
from collections.abc import Mapping

import numpy as np

from ..errors import DatasetError


def read_only(value):
    """Freeze an array that a bound model shares between threads."""
    if isinstance(value, np.ndarray):
        value.flags.writeable = False
    return value


_UDUNITS_POWER = re.compile(r"([A-Za-z]+)(-?\d+)")


def udunits_to_pint(text: str) -> str:
    """Translate a UDUNITS string (``cm-3``, ``cm2 V-1 s-1``) to pint's grammar."""
    text = text.strip()
    if text in ("", "1"):
        return "dimensionless"
    return "*".join(_UDUNITS_POWER.sub(r"\1^\2", part) for part in text.split())


# --------------------------------------------------------------------------- validation


def require(path, data: Mapping, name: str, kind=None, where: str = ""):
    if name not in data:
        raise DatasetError(path, f"missing required field {where}{name!r}")
    value = data[name]
    if kind is not None and not isinstance(value, kind):
        raise DatasetError(
            path,
            f"field {where}{name!r} must be {kind.__name__ if isinstance(kind, type) else kind}, "
            f"got {value!r}",
        )
    return value


def convert(path, where: str, value, units: str, target: str):
    """Convert value (float or list) from ``units`` to ``target`` with pint."""
    import pint

    from ..units import Q_, unit

    try:
        source_unit = unit(units)
    except Exception as exc:
        raise DatasetError(path, f"{where}: units {units!r} do not parse") from exc
    target_unit = unit(target)
    if source_unit.dimensionality != target_unit.dimensionality:
        raise DatasetError(
            path,
            f"{where}: units {units!r} have dimension "
            f"{source_unit.dimensionality}, expected {target!r} "
            f"({target_unit.dimensionality})",
        )
    array = np.asarray(value, dtype=float)
    try:
        converted = Q_(array, source_unit).m_as(target_unit)
    except pint.PintError as exc:  # pragma: no cover - dimension checked above
        raise DatasetError(path, f"{where}: cannot convert {units!r} to {target!r}") from exc
    return float(converted) if np.ndim(converted) == 0 else read_only(np.array(converted))


def number_or_list(path, where, value):
    if isinstance(value, bool):
        raise DatasetError(path, f"{where} must be a number or list of numbers, got {value!r}")
    if isinstance(value, (int, float)):
        return float(value)
    if (
        isinstance(value, list)
        and value
        and all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in value)
    ):
        return tuple(float(v) for v in value)
    raise DatasetError(path, f"{where} must be a number or list of numbers, got {value!r}")
