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


#: Every (units, target) pair a conversion was asked for in this process (what
#: ``tools/make_unit_factors.py`` records after loading the whole catalogue).
CONVERSIONS_SEEN: set[tuple[str, str]] = set()


def convert(path, where: str, value, units: str, target: str):
    """Convert value (float or list) from ``units`` to ``target``.

    A pair of unit strings the data files use is looked up in
    :data:`matprops.catalogue._unit_factors.FACTORS`: pint's own factor for it, written
    by ``tools/make_unit_factors.py`` and checked against pint by the tests. The
    conversion is then ``value * factor``, the operation pint performs itself, so the
    numbers are the same; loading the catalogue builds no unit registry (pint parses
    its definitions on the first quantity made, ~150 ms). A pair not in the table (a new
    data file's units) is converted by pint.
    """
    from ._unit_factors import FACTORS

    CONVERSIONS_SEEN.add((units, target))
    factor = FACTORS.get((units, target))
    if factor is not None:
        if isinstance(value, (int, float)) and not isinstance(value, bool):
            return float(value) * factor
        return read_only(np.asarray(value, dtype=float) * factor)
    return convert_with_pint(path, where, value, units, target)


def convert_with_pint(path, where: str, value, units: str, target: str):
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


def pint_factor(units: str, target: str) -> float | None:
    """pint's factor from ``units`` to ``target`` (None for an offset or logarithmic
    unit, whose conversion is not a product)."""
    from ..units import Q_, unit

    source_unit, target_unit = unit(units), unit(target)
    zero = float(Q_(0.0, source_unit).m_as(target_unit))
    if zero != 0.0:
        return None
    factor = float(Q_(1.0, source_unit).m_as(target_unit))
    if float(Q_(3.0, source_unit).m_as(target_unit)) != 3.0 * factor:
        return None
    return factor


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
