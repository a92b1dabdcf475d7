"""Units at the edges: pint's application registry, input coercion, outputs.

Inputs are plain numbers or arrays in the default units of each argument (K,
cm^-3, nm, s, ohm cm), or pint quantities in any unit of the right dimension
(offset temperatures such as degC are converted to kelvin here, never multiplied),
or strings such as ``"25 degC"``. Kernels then see plain float arrays in internal
units. Outputs are pint quantities of the application registry, so they mix with
the caller's own quantities.

Masked arrays (``numpy.ma``, also inside a quantity) are refused rather than
evaluated: their masked slots hold arbitrary fill values, and a quantity cannot carry
the mask out again. Evaluate ``a.compressed()`` (or ``a.filled(v)`` with a value of
your choice) and put the mask back with ``numpy.ma.masked_array(result, a.mask)``.
Booleans and complex numbers are refused too (numpy would read True as 1 and drop
an imaginary part), and so is a temperature difference (``delta_degC``) where an
absolute temperature belongs. Dates and durations (numpy ``datetime64`` and
``timedelta64``, Python ``datetime``, ``date``, ``time`` and ``timedelta``) are refused
everywhere: numpy would read 300 s as the number 300. A Python integer too large for a
float (>= 1.8e308) is an InputError, not an OverflowError.
"""

from __future__ import annotations

import datetime
import math
import re
import threading
from functools import cache
from typing import cast

import numpy as np
import pint

from . import vocabulary as _vocabulary
from .errors import InputError, UnitError

__all__ = [
    "Q_",
    "check_broadcast",
    "coerce",
    "kernel_input",
    "name",
    "names",
    "normalise_units",
    "parse",
    "pretty_units",
    "quantity",
    "to_magnitude",
    "unit",
    "ureg",
]  # (Q_ comes from the module __getattr__ below)

# pint's application registry, through its wrapper: every use goes to whatever registry
# the application has set (pint.set_application_registry), even one set after matprops
# was imported. Nothing here builds it: pint parses its definitions (~150 ms) on the
# first quantity made, not on import (see docs/simulation.md, "Start-up").
ureg = pint.get_application_registry()


_BUILDING = threading.Lock()
_BUILT = [None]  # the registry last seen fully built


def registry():
    """The current application registry, built (pint parses its definitions on first
    use) under a lock: pint's lazy registry is not safe to build from several threads at
    once (it changes class before its definitions are loaded), and the first quantity
    may be asked for by many threads together."""
    current = ureg.get()
    if current is not _BUILT[0]:
        with _BUILDING:
            current = ureg.get()
            current.Quantity  # noqa: B018 - builds a lazy registry (at once if built)
            _BUILT[0] = current
    return current


def __getattr__(name):
    if name == "Q_":  # the Quantity class of the current application registry
        return registry().Quantity
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


def _Q(value, units=None):
    """A quantity of the current application registry (``ureg.Quantity(value, units)``)."""
    return registry().Quantity(value, units)


@cache
def _unit_of(registry, text: str) -> pint.Unit:
    return registry.Unit(normalise_units(text))


# One units grammar for input and output: what the screen and the files print
# (``cm^-3``, ``cm^2 V^-1 s^-1``, ``ohm cm``), UDUNITS' compact powers (``cm-3``,
# ``cm2 V-1 s-1``), pint's own (``cm**-3``, ``cm^2/(V*s)``) and the typographic forms of
# a report (``cm⁻³``, ``Ω·cm``, ``°C``, ``µm``) all read as the same unit.
_SUPERSCRIPT = str.maketrans("⁻⁰¹²³⁴⁵⁶⁷⁸⁹", "-0123456789")
_SUPERSCRIPT_POWER = re.compile(r"([A-Za-zµΩ%])([⁻⁰¹²³⁴⁵⁶⁷⁸⁹]+)")
_COMPACT_POWER = re.compile(r"(?<![\w^*.])([A-Za-zµ%]+)(-?[0-9]+)(?![\w.])")
_TYPOGRAPHIC = (
    ("·", "*"),
    ("⋅", "*"),
    ("\u00d7", "*"),  # multiplication sign
    ("Ω", "ohm"),
    ("°C", "degC"),
    ("°F", "degF"),
)


@cache
def normalise_units(text: str) -> str:
    """A unit string in any of the grammars above -> pint's grammar.

    ``"cm-3"`` -> ``"cm^-3"``, ``"cm2 V-1 s-1"`` -> ``"cm^2 V^-1 s^-1"``,
    ``"cm⁻³"`` -> ``"cm^-3"``, ``"Ω·cm"`` -> ``"ohm*cm"``; pint's own strings pass
    unchanged.
    """
    text = str(text).strip()
    for typographic, plain in _TYPOGRAPHIC:
        text = text.replace(typographic, plain)
    text = _SUPERSCRIPT_POWER.sub(lambda m: f"{m[1]}^{m[2].translate(_SUPERSCRIPT)}", text)
    return _COMPACT_POWER.sub(r"\1^\2", text)


def unit(text: str) -> pint.Unit:
    """A pint Unit of the application registry, parsed once per registry (parsing a
    string costs ~56 µs per call). Any grammar of :func:`normalise_units` is read."""
    return _unit_of(registry(), text)


# Default (and internal) unit of each argument name and alias, and what its value must
# be: generated from the argument vocabulary (matprops.vocabulary), the one table of
# argument names shared by methods, kernels, tables and the command line.
ARGUMENTS = {
    name: (spec.units, spec.requirement)
    for spec in _vocabulary.ARGUMENTS.values()
    if spec.units is not None
    for name in spec.names
}

# Lengths a bare number would leave ambiguous (a wafer's 180 is µm to its maker, the
# internal unit is cm): these need a unit, given as a pint quantity or a string.
NEEDS_UNIT = {"thickness": "a length with its unit, e.g. Q_(180, 'um') or '180 um'"}

# Exact types that take the scalar fast path of coerce (bool, a subclass of int, is not
# one of them: it is refused below, as True is not a number here).
_PLAIN_SCALARS = (float, int, np.float64)

# Arguments that also accept a photon energy, frequency or wavenumber (converted
# with pint's spectroscopy context).
SPECTRAL = {"wavelength", "photon_energy"}


_NUMBER_THEN_UNIT = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")


def parse(text: str, argument: str, units: str):
    """'25 degC' -> Quantity (a bare number is in ``units``); the number and the unit
    are split first, because pint would otherwise multiply 25 by an offset unit and
    refuse. The one parser of a value written as text with its unit."""
    match = _NUMBER_THEN_UNIT.match(text)
    try:
        if match:
            number, unit_text = match.groups()
            return _Q(float(number), unit(unit_text) if unit_text else unit(units))
        return _Q(text)
    except Exception as exc:  # pint raises several unrelated types here
        raise UnitError(argument, units, text) from exc


def _has_unit(value) -> bool:
    """Whether ``value`` says its unit: a pint quantity (or a list of them), or a
    string with a unit after its number."""
    if isinstance(value, pint.Quantity):
        return True
    if isinstance(value, str):
        match = _NUMBER_THEN_UNIT.match(value)
        return not match or bool(match.group(2))
    if isinstance(value, (list, tuple)) and value:
        return all(_has_unit(v) for v in value)
    return False


def _describe(value) -> str:
    array = np.asarray(value)
    if array.size <= 6:
        return repr(value)
    return f"array of shape {array.shape} with min {np.nanmin(array):g}"


def to_magnitude(
    value, argument: str, units: str | None = None, requirement: str | None = None
) -> np.ndarray:
    """Convert ``value`` to a float array in ``units`` (0-d for a scalar input)."""
    return coerce(value, argument, units, requirement)[0]


def coerce(
    value, argument: str, units: str | None = None, requirement: str | None = None
) -> tuple[np.ndarray, float, float]:
    """Convert ``value`` to a float array in ``units``; also return its min and max.

    Checks the dimension (UnitError) and that the values are finite and positive
    or non-negative as the argument requires (InputError). The extremes are
    returned so that validity checks need no second pass over a large array.
    """
    default_units, default_req = ARGUMENTS.get(argument, (None, None))
    units = units or default_units
    requirement = requirement or default_req
    if argument in NEEDS_UNIT and not _has_unit(value):
        raise InputError(
            argument, NEEDS_UNIT[argument], f"{_brief(value)} (a bare number: which unit?)"
        )
    if units is None:  # a name no argument has, and no units given
        raise InputError(argument, "an argument name the library knows, or units", argument)
    if type(value) in _PLAIN_SCALARS:  # the scalar fast path: a plain number
        try:
            number = float(value)
        except OverflowError:  # a Python int beyond float's 1.8e308
            raise InputError(argument, f"finite numbers in {units}", _huge(value)) from None
        if not math.isfinite(number):
            raise InputError(argument, f"finite numbers in {units}", repr(value))
        if requirement == "positive" and number <= 0:
            raise InputError(argument, f"> 0 {units}", f"{number:g} {units}")
        if requirement == "non-negative" and number < 0:
            raise InputError(argument, f">= 0 {units}", f"{number:g} {units}")
        return np.array(number), number, number
    if isinstance(value, pint.Quantity):  # a cached conversion factor for its unit
        converted = _convert_cached(value, argument, units, requirement)
        if converted is not None:
            return converted
    target = unit(units)
    if value is None:
        raise UnitError(argument, units, None)
    if isinstance(value, str):
        value = parse(value, argument, units)
    elif isinstance(value, (list, tuple)) and any(isinstance(v, pint.Quantity) for v in value):
        value = _from_sequence(value, argument, units)
    if isinstance(value, pint.Quantity):
        magnitude = _magnitude_in(value, argument, units, target)
    else:
        array = _real_array(value, argument, units)
        try:
            magnitude = np.asarray(array, dtype=float)
        except OverflowError:
            raise InputError(argument, f"finite numbers in {units}", _huge(value)) from None
        except (TypeError, ValueError) as exc:
            raise UnitError(argument, units, value) from exc
    low, high = check_values(magnitude, argument, units, requirement)
    return magnitude, low, high


# (registry, unit of the quantity, target unit text) -> (factor, offset), or None where
# the conversion is not a linear map (a spectral conversion, a temperature difference
# for an absolute temperature, another dimension): those take the general path.
_CONVERSIONS: dict = {}
_CONVERSIONS_MAX = 512


def _conversion(value, units: str, argument: str):
    """(factor, offset) with ``magnitude * factor + offset`` = ``value.m_as(units)``,
    computed once per registry, unit and target (pint's own conversion of 0, 1 and 2),
    or None."""
    owner = getattr(value, "_REGISTRY", None)
    units_key = getattr(value, "_units", None)
    if owner is None or units_key is None:
        return None
    key = (owner, units_key, units)
    try:
        return _CONVERSIONS[key]
    except KeyError:
        pass
    except TypeError:  # an unhashable unit: no cache
        return None
    found = None
    if owner is registry():  # a quantity of another registry: the general path
        try:
            target = unit(units)
            if not (target == unit("K") and "delta_" in str(value.units)):
                if value.dimensionality == target.dimensionality:
                    # a multiplicative unit: pint's factor itself (the image of 1);
                    # an offset unit (degC, degF): x * scale + offset, the scale read
                    # from the image of 1024 (to an ulp)
                    points = [
                        float(owner.Quantity(x, units_key).m_as(target)) for x in (0.0, 1.0, 1024.0)
                    ]
                    offset, one, far = points
                    factor = one if offset == 0.0 else (far - offset) / 1024.0
                    if math.isclose(far, offset + 1024.0 * factor, rel_tol=1e-13):
                        found = (factor, offset)
        except Exception:  # pint refuses: the general path says why
            found = None
    if len(_CONVERSIONS) >= _CONVERSIONS_MAX:
        _CONVERSIONS.clear()
    _CONVERSIONS[key] = found
    return found


def _convert_cached(value, argument: str, units: str, requirement):
    """coerce() of a quantity through a cached linear conversion; None if there is none
    (then the general path converts, or raises saying why)."""
    conversion = _conversion(value, units, argument)
    if conversion is None:
        return None
    factor, offset = conversion
    magnitude = value.magnitude
    if type(magnitude) in _PLAIN_SCALARS:
        try:
            number = float(magnitude) * factor
        except OverflowError:  # a Python int beyond float's 1.8e308
            raise InputError(argument, f"finite numbers in {units}", _huge(magnitude)) from None
        if offset:
            number += offset
        if not math.isfinite(number):
            raise InputError(argument, f"finite numbers in {units}", repr(value))
        if requirement == "positive" and number <= 0:
            raise InputError(argument, f"> 0 {units}", f"{number:g} {units}")
        if requirement == "non-negative" and number < 0:
            raise InputError(argument, f">= 0 {units}", f"{number:g} {units}")
        return np.array(number), number, number
    _real_array(magnitude, argument, units)
    # arrays: pint's own conversion (its array path rounds differently from its scalar
    # one), to the cached Unit, the unit's checks already settled by the cache
    try:
        magnitude = np.asarray(value.m_as(unit(units)), dtype=float)
    except (pint.PintError, TypeError, ValueError):
        return None  # the general path says why
    low, high = check_values(magnitude, argument, units, requirement)
    return magnitude, low, high


def kernel_input(value, argument: str, units: str):
    """An input of a bound kernel: a pint quantity converted to ``units`` (the kernel's
    internal unit; offset temperatures to kelvin, photon energies to wavelengths),
    dates and durations refused (UnitError), anything else returned unchanged (the
    kernel checks nothing per call; ``kernel.check`` validates a mesh)."""
    if isinstance(value, pint.Quantity):
        return _magnitude_in(value, argument, units, unit(units))
    if isinstance(value, (np.ndarray, np.generic)):
        if value.dtype.kind in "mM":
            _real_array(value, argument, units)  # raises, naming the kind
        return value
    if isinstance(value, (list, tuple, *_DATES)):
        _real_array(value, argument, units)  # refuses dates, durations, quantities mixed in
        if isinstance(value, (list, tuple)) and any(isinstance(v, pint.Quantity) for v in value):
            return _magnitude_in(
                _from_sequence(value, argument, units), argument, units, unit(units)
            )
    return value


def _huge(value) -> str:
    """A description of an integer too large for a float (without printing its digits)."""
    if isinstance(value, int):
        return f"an integer of about 1e{int(value.bit_length() * math.log10(2))} (beyond a float)"
    return f"a {type(value).__name__} holding an integer beyond a float's range (1.8e308)"


def _magnitude_in(value, argument: str, units: str, target) -> np.ndarray:
    """A quantity's magnitude as a float array in ``target`` (no value checks)."""
    _real_array(value.magnitude, argument, units)
    if target == unit("K") and "delta_" in str(value.units):
        raise UnitError(
            argument,
            "K, degC or degF (an absolute temperature)",
            value,
            plain="K",
            description=f"{value} (a temperature difference)",
        )
    spectral = argument in SPECTRAL and value.dimensionality != target.dimensionality
    if spectral and np.any(np.asarray(value.magnitude) <= 0):
        raise InputError(
            argument,
            f"> 0 {units} (or a positive energy, frequency or wavenumber)",
            _describe(value),
        )
    try:
        if spectral:
            magnitude = np.asarray(value.to(target, "sp").magnitude, dtype=float)
        else:
            magnitude = np.asarray(value.m_as(target), dtype=float)
    except pint.DimensionalityError as exc:
        accepted = (
            f"{units} or as a photon energy, frequency or wavenumber"
            if argument in SPECTRAL
            else units
        )
        raise UnitError(
            argument, accepted, f"{value} ({value.dimensionality})", plain=units
        ) from exc
    except OverflowError:
        raise InputError(argument, f"finite numbers in {units}", _huge(value.magnitude)) from None
    except (pint.PintError, ValueError, TypeError) as exc:
        # e.g. a quantity from another UnitRegistry: say so, with pint's reason
        raise UnitError(
            argument,
            f"{units} (a quantity of matprops.ureg, pint's application registry)",
            f"{value!r}: {exc}",
            plain=units,
        ) from exc
    return magnitude


def _real_array(value, argument: str, units: str) -> np.ndarray:
    """``value`` (a magnitude) as an array of real numbers, any real dtype.

    Refuses what numpy would silently turn into wrong numbers: masked arrays (their
    fill values), booleans (True -> 1.0) and complex numbers (imaginary part dropped).
    """
    _refuse_masked(value, argument, units)
    try:
        array = np.asarray(value)
    except (TypeError, ValueError) as exc:  # e.g. a ragged nested list
        raise UnitError(argument, units, value) from exc
    if array.dtype.kind == "b":
        raise UnitError(
            argument,
            units,
            value,
            description=f"a boolean {_brief(value)} (True and False are not numbers here)",
        )
    if array.dtype.kind == "c":
        raise UnitError(
            argument,
            units,
            value,
            description=f"a complex {_brief(value)} (only real numbers are accepted)",
        )
    if array.dtype.kind in "mM" or (
        array.dtype.kind == "O" and any(isinstance(v, _DATES) for v in array.flat)
    ):
        what = {
            "M": "a date (numpy datetime64)",
            "m": "a duration (numpy timedelta64)",
        }.get(array.dtype.kind, "a date or a duration (Python datetime)")
        raise UnitError(
            argument,
            units,
            value,
            description=f"{what}: {_brief(value)}; dates and durations are not numbers "
            f"in {units} (numpy would read 300 s as 300)",
        )
    if array.dtype.kind == "O" and any(v is None for v in array.flat):
        raise UnitError(argument, units, value)  # not "received array(nan)"
    return array


_DATES = (datetime.date, datetime.time, datetime.timedelta)  # (datetime is a date)


def _from_sequence(values, argument: str, units: str):
    """A list of quantities -> one quantity in the first one's units."""
    if not all(isinstance(v, pint.Quantity) for v in values):
        raise UnitError(
            argument,
            units,
            values,
            description=f"a list that mixes plain "
            f"numbers and quantities {_brief(values)}: give every value units, "
            "or none",
        )
    first = values[0].units
    magnitudes = []
    for item in values:
        try:
            magnitudes.append(item.m_as(first))
        except pint.DimensionalityError as exc:
            raise UnitError(
                argument, units, item, description=f"{item} ({item.dimensionality})"
            ) from exc
        except (pint.PintError, ValueError, TypeError) as exc:
            raise UnitError(
                argument,
                f"{units} (quantities of matprops.ureg, pint's application registry)",
                values,
                description=f"{item!r}: {exc}",
            ) from exc
    return _Q(np.asarray(magnitudes), first)


def _brief(value) -> str:
    if isinstance(value, (list, tuple)):
        return repr(value) if len(value) <= 6 else f"{type(value).__name__} of {len(value)}"
    shape = np.shape(value)
    return repr(value) if np.prod(shape) <= 6 else f"array of shape {shape}"


def _refuse_masked(value, argument: str, units: str) -> None:
    if isinstance(value, np.ma.MaskedArray):
        raise InputError(
            argument,
            f"a plain array or quantity in {units}, not a masked "
            "array (its masked slots hold arbitrary fill values): evaluate "
            "a.compressed() and put the mask back with "
            "numpy.ma.masked_array(result, a.mask)",
            f"a masked array with {np.ma.count_masked(value)} of {value.size} values masked",
        )


def names(value, argument: str = "quantities") -> list[str]:
    """One quantity name or an iterable of them -> a list of names (text only)."""
    if isinstance(value, str):
        return [value]
    try:
        found = list(value)
    except TypeError:
        raise InputError(argument, "a quantity name or a list of names", repr(value)) from None
    for item in found:
        if not isinstance(item, str):
            raise InputError(argument, "quantity names (text)", repr(item))
    return found


def name(value, argument: str = "name") -> str:
    """A quantity (or model, release ...) name: text, or an InputError."""
    if not isinstance(value, str):
        raise InputError(argument, "a name (text)", repr(value))
    return value


def check_broadcast(**arrays) -> tuple[int, ...]:
    """The broadcast shape of the arguments, or an InputError naming the first one
    whose shape does not broadcast with those before it."""
    shape: tuple[int, ...] = ()
    seen: list[tuple[str, tuple[int, ...]]] = []
    for name, array in arrays.items():
        try:
            shape = np.broadcast_shapes(shape, np.shape(array))
        except ValueError:
            others = " and ".join(f"{n!r} of shape {s}" for n, s in seen if s)
            raise InputError(
                name,
                f"an array whose shape broadcasts (numpy rules) with {others}",
                f"shape {np.shape(array)}",
            ) from None
        seen.append((name, np.shape(array)))
    return shape


def check_values(
    magnitude: np.ndarray, argument: str, units: str, requirement
) -> tuple[float, float]:
    """Raise InputError for NaN, infinities, and values breaking ``requirement``."""
    if magnitude.size == 0:
        return np.inf, -np.inf
    low, high = extremes(magnitude)
    if not (np.isfinite(low) and np.isfinite(high)):  # NaN propagates into min/max
        raise InputError(argument, f"finite numbers in {units}", _describe(magnitude))
    if requirement == "positive" and low <= 0:
        raise InputError(argument, f"> 0 {units}", f"{low:g} {units}")
    if requirement == "non-negative" and low < 0:
        raise InputError(argument, f">= 0 {units}", f"{low:g} {units}")
    return low, high


_EXTREMES_BLOCK = 1 << 15


def extremes(array: np.ndarray) -> tuple[float, float]:
    """(min, max) of an array in one pass over memory: a large array is read block by
    block, and each block's maximum is taken while the block is still in cache (NaN
    propagates into both, as with min and max)."""
    if array.size <= 4 * _EXTREMES_BLOCK or not array.flags.c_contiguous:
        return float(array.min()), float(array.max())
    flat = array.reshape(-1)
    low, high = np.inf, -np.inf
    for start in range(0, flat.size, _EXTREMES_BLOCK):
        block = flat[start : start + _EXTREMES_BLOCK]
        block_low, block_high = float(block.min()), float(block.max())
        if math.isnan(block_low):  # NaN (Python's min would drop it)
            return np.nan, np.nan
        low, high = min(low, block_low), max(high, block_high)
    return low, high


def quantity(magnitude, units: str):
    """Attach units to a kernel result; 0-d arrays become scalars."""
    if isinstance(magnitude, np.ndarray) and magnitude.ndim == 0:
        magnitude = magnitude[()]
    current = registry()
    return current.Quantity(magnitude, _unit_of(current, units)._units)


_CF_SYMBOLS = {
    "ohm": "ohm",
    "degree_Celsius": "degC",
    "degree_Fahrenheit": "degF",
    "percent": "%",
    "micrometer": "um",
    "microsecond": "us",
    "dimensionless": "1",
}


# the order of factors within the positive and the negative powers (the trade's own:
# cm^2 V^-1 s^-1, ohm cm, g cm^-3, cm^-2 s^-1)
_ORDER = {
    "ohm": 0,
    "siemens": 0,
    "gram": 0,
    "kilogram": 0,
    "centimeter": 1,
    "meter": 1,
    "nanometer": 1,
    "micrometer": 1,
    "volt": 2,
    "ampere": 2,
    "electron_volt": 2,
    "second": 3,
    "kelvin": 4,
    "mole": 4,
}


@cache
def cf_units(units) -> str:
    """The units string of files and screens: ``cm^-3``, ``cm^2/(V*s)`` ->
    ``cm^2 V^-1 s^-1``, dimensionless -> ``1`` (ASCII only).

    One grammar that UDUNITS-2 (CF), pint's default registry and cf-xarray's registry
    all read, and that every input of matprops accepts (:func:`normalise_units`)."""
    unit_ = unit(units) if isinstance(units, str) else units
    if unit_.dimensionless and not unit_._units:
        return "1"
    parts = []
    for name, power in unit_._units.items():
        symbol = _CF_SYMBOLS.get(name) or registry().get_symbol(name).replace("µ", "u")
        exponent = float(cast(float, power))
        number = int(exponent) if exponent.is_integer() else exponent
        parts.append((number < 0, _ORDER.get(name, 5), symbol, number))
    parts.sort()  # one spelling whatever order pint holds them in: cm^2 V^-1 s^-1
    return " ".join(s if p == 1 else f"{s}^{p}" for _, _, s, p in parts) or "1"


_PRETTY_SYMBOLS = {"degC": "°C", "degF": "°F", "um": "µm", "us": "µs", "ohm": "Ω"}
_PRETTY_POWER = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")


@cache
def pretty_units(units) -> str:
    """Units as a report prints them: ``cm⁻³``, ``cm²/(V·s)``, ``Ω·cm``, ``°C``, ``µm``;
    ``""`` for dimensionless. :func:`normalise_units` reads them back."""
    text = units if isinstance(units, str) else cf_units(units)
    if text in ("", "1"):
        return ""
    if text in _PRETTY_SYMBOLS:
        return _PRETTY_SYMBOLS[text]
    tokens = cf_units(unit(text)).split()
    up: list[tuple[str, int]] = []
    down: list[tuple[str, int]] = []
    for token in tokens:
        symbol, _, written = token.partition("^")
        power = int(written) if written else 1
        (up if power > 0 else down).append((_PRETTY_SYMBOLS.get(symbol, symbol), abs(power)))
    if not up:  # only negative powers: cm⁻³, s⁻¹
        return "·".join(f"{s}{str(-p).translate(_PRETTY_POWER)}" for s, p in down)

    def product(parts):
        return "·".join(s if p == 1 else f"{s}{str(p).translate(_PRETTY_POWER)}" for s, p in parts)

    if not down:
        return product(up)
    below = product(down)
    return f"{product(up)}/({below})" if len(down) > 1 else f"{product(up)}/{below}"
