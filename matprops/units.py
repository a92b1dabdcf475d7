"""Units at the edges: pint's application registry, input coercion, outputs.

Inputs are plain numbers or arrays in the default units of each argument (K,
cm^-3, nm, s, ohm cm), or pint quantities in any unit of the right dimension
(offset temperatures such as degC are converted to kelvin here, never multiplied),
or strings such as ``"25 degC"``. Kernels then see plain float arrays in internal
units. Outputs are pint quantities of the application registry, so they mix with
the caller's own quantities.
"""

from __future__ import annotations

import re
from functools import cache

import numpy as np
import pint

from .errors import InputError, UnitError

__all__ = ["Q_", "coerce", "quantity", "to_magnitude", "unit", "ureg"]

ureg = pint.get_application_registry()
Q_ = ureg.Quantity


@cache
def unit(text: str) -> pint.Unit:
    """A cached pint Unit (parsing strings costs ~56 µs per call)."""
    return ureg.Unit(text)


# Default (and internal) unit of each argument name, and what its value must be.
ARGUMENTS = {
    "temperature": ("K", "positive"),
    "reference_temperature": ("K", "positive"),
    "acceptor_density": ("cm^-3", "non-negative"),
    "donor_density": ("cm^-3", "non-negative"),
    "wavelength": ("nm", "positive"),
    "thickness": ("cm", "positive"),
    "electron_density": ("cm^-3", "non-negative"),
    "hole_density": ("cm^-3", "non-negative"),
    "absorption_coefficient": ("1/cm", "non-negative"),
    "photon_energy": ("eV", "positive"),
    "dopant_density": ("cm^-3", "non-negative"),
    "excess_density": ("cm^-3", "non-negative"),
    # the public API's short names for densities (DESIGN.md): same units and rules
    "Na": ("cm^-3", "non-negative"),
    "Nd": ("cm^-3", "non-negative"),
    "n": ("cm^-3", "non-negative"),
    "p": ("cm^-3", "non-negative"),
    "excess": ("cm^-3", "non-negative"),
    "N": ("cm^-3", "non-negative"),
    # transport
    "field": ("V/cm", "non-negative"),
    "resistivity": ("ohm*cm", "positive"),
}

# Arguments that also accept a photon energy, frequency or wavenumber (converted
# with pint's spectroscopy context).
SPECTRAL = {"wavelength", "photon_energy"}


_NUMBER_THEN_UNIT = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")


def _parse(text: str, argument: str, units: str):
    """'25 degC' -> Quantity; the number and the unit are split first, because pint
    would otherwise multiply 25 by an offset unit and refuse."""
    match = _NUMBER_THEN_UNIT.match(text)
    try:
        if match:
            number, unit_text = match.groups()
            return Q_(float(number), unit(unit_text) if unit_text else unit(units))
        return Q_(text)
    except Exception as exc:  # pint raises several unrelated types here
        raise UnitError(argument, units, text) from exc


def _describe(value) -> str:
    array = np.asarray(value)
    if array.size <= 6:
        return repr(value)
    return f"array of shape {array.shape} with min {np.nanmin(array):g}"


def to_magnitude(value, argument: str, units: str | None = None,
                 requirement: str | None = None) -> np.ndarray:
    """Convert ``value`` to a float array in ``units`` (0-d for a scalar input)."""
    return coerce(value, argument, units, requirement)[0]


def coerce(value, argument: str, units: str | None = None,
           requirement: str | None = None) -> tuple[np.ndarray, float, float]:
    """Convert ``value`` to a float array in ``units``; also return its min and max.

    Checks the dimension (UnitError) and that the values are finite and positive
    or non-negative as the argument requires (InputError). The extremes are
    returned so that validity checks need no second pass over a large array.
    """
    default_units, default_req = ARGUMENTS.get(argument, (None, None))
    units = units or default_units
    requirement = requirement or default_req
    target = unit(units)
    if isinstance(value, str):
        value = _parse(value, argument, units)
    if isinstance(value, pint.Quantity):
        spectral = argument in SPECTRAL and value.dimensionality != target.dimensionality
        if spectral and np.any(np.asarray(value.magnitude) <= 0):
            raise InputError(argument, f"> 0 {units} (or a positive energy, "
                             "frequency or wavenumber)", _describe(value))
        try:
            if spectral:
                magnitude = np.asarray(value.to(target, "sp").magnitude, dtype=float)
            else:
                magnitude = np.asarray(value.m_as(target), dtype=float)
        except pint.DimensionalityError as exc:
            accepted = (f"{units} or as a photon energy, frequency or wavenumber"
                        if argument in SPECTRAL else units)
            raise UnitError(argument, accepted, f"{value} ({value.dimensionality})",
                            plain=units) from exc
        except (pint.PintError, ValueError, TypeError) as exc:
            # e.g. a quantity from another UnitRegistry: say so, with pint's reason
            raise UnitError(argument, f"{units} (a quantity of matprops.ureg, pint's "
                            f"application registry)", f"{value!r}: {exc}", plain=units) from exc
    elif isinstance(value, (bool, np.bool_)):
        raise UnitError(argument, units, value)
    else:
        try:
            magnitude = np.asarray(value, dtype=float)
        except (TypeError, ValueError) as exc:
            raise UnitError(argument, units, value) from exc
    low, high = check_values(magnitude, argument, units, requirement)
    return magnitude, low, high


def check_values(magnitude: np.ndarray, argument: str, units: str,
                 requirement) -> tuple[float, float]:
    """Raise InputError for NaN, infinities, and values breaking ``requirement``."""
    if magnitude.size == 0:
        return np.inf, -np.inf
    low = float(magnitude.min())
    high = float(magnitude.max())
    if not (np.isfinite(low) and np.isfinite(high)):  # NaN propagates into min/max
        raise InputError(argument, f"finite numbers in {units}",
                         _describe(magnitude))
    if requirement == "positive" and low <= 0:
        raise InputError(argument, f"> 0 {units}", f"{low:g} {units}")
    if requirement == "non-negative" and low < 0:
        raise InputError(argument, f">= 0 {units}", f"{low:g} {units}")
    return low, high


def quantity(magnitude, units: str):
    """Attach units to a kernel result; 0-d arrays become scalars."""
    if isinstance(magnitude, np.ndarray) and magnitude.ndim == 0:
        magnitude = magnitude[()]
    return Q_(magnitude, unit(units))


def cf_units(units) -> str:
    """A pint unit as a UDUNITS string for CF files: ``cm^-3`` -> ``cm-3``,
    ``cm^2/(V s)`` -> ``cm2 V-1 s-1``, dimensionless -> ``1``."""
    parts = []
    for name, power in unit(str(units))._units.items():
        symbol = ureg.get_symbol(name)
        if not symbol.isascii():  # e.g. the ohm: UDUNITS files are safest in ASCII
            symbol = name
        exponent = int(power) if float(power).is_integer() else float(power)
        parts.append(symbol if exponent == 1 else f"{symbol}{exponent}")
    return " ".join(parts) or "1"
