"""The shape of every data file in ``datasets/``, declared in one place.

Each section below is a table ``key: (kind of value, REQUIRED or OPTIONAL)``. A file
is checked against it before anything is read from it: an unknown (or misspelt) key,
a missing required field, a value of the wrong kind and a number that is not finite
(TOML allows ``nan`` and ``inf``) are each a :class:`~matprops.DatasetError` naming the
file and the field, e.g. ``coefficients.alpha.value[1]``. A new field is one new line
in its section. Rules that need more than the file's shape (a coefficient set that
matches its kernel, units that convert, min below max) live in :mod:`matprops.catalogue.modelfile`.

Kinds of value::

    TEXT        a string                    NUMBER   a finite int or float
    INTEGER     an int                      NUMBERS  a finite number or a non-empty list of them
    TEXTS       a list of strings           FLAG     true or false
    DATE        a TOML date or "YYYY-MM-DD" PAIRS    a list of [number, number] pairs
    one_of(...)     one of the given strings
    table_of(S)     a table whose keys are free names (coefficient, input, quantity ...)
                    and whose values are each a section S (or a kind)
    list_of(S)      a list whose entries are each a section S
"""

from __future__ import annotations

import datetime
import difflib
import math
import re
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any

from ..errors import DatasetError

__all__ = [
    "DEFECT",
    "FITTED",
    "KINDS",
    "MODEL",
    "OVERLAY",
    "RELEASE",
    "THERMAL_VELOCITY_DEFINITIONS",
    "UNCERTAINTY_KINDS",
    "UNCERTAINTY_STATEMENTS",
    "VARIANT_AXES",
    "validate",
]

REQUIRED, OPTIONAL = True, False
KINDS = ("closed-form", "table", "composed")  # of model: see matprops.catalogue.modelfile
VARIANT_AXES = ("dopant", "carrier")  # what a model's coefficient sets are per
# a thermal velocity is the mean speed sqrt(8kT/(pi m)) or the rms speed sqrt(3kT/m)
THERMAL_VELOCITY_DEFINITIONS = ("mean speed", "root-mean-square speed")
# a release's default route for doping from resistivity: the physics route everywhere, or
# the standard's conversion where it holds (its species and temperature) and physics elsewhere
DOPING_DEFAULTS = ("physics", "standard where it holds")
# what a source's "+-" is: a standard uncertainty (k = 1), an expanded one (k given), the
# half-width of bounds (a rectangular distribution, u = a / sqrt(3), GUM 4.3.7), or a
# "+-" whose meaning the source does not say (taken as a standard uncertainty, said so)
UNCERTAINTY_KINDS = ("standard", "expanded", "bound", "unspecified")
# whether a model's source states an uncertainty: "stated" (on coefficients or on the
# output), "not stated" (the source was read and gives none), "not known" (not read here)
UNCERTAINTY_STATEMENTS = ("stated", "not stated", "not known")


@dataclass(frozen=True)
class Kind:
    """A leaf value: its description for messages and a test."""

    description: str
    accepts: Callable[[Any], bool]


@dataclass(frozen=True)
class TableOf:
    """A table whose keys are free names, each holding ``entry``."""

    entry: Any


@dataclass(frozen=True)
class ListOf:
    """A list whose entries are each ``entry`` (a section)."""

    entry: Any


def _is_number(value) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool)


TEXT = Kind("text", lambda v: isinstance(v, str))
INTEGER = Kind("an integer", lambda v: isinstance(v, int) and not isinstance(v, bool))
NUMBER = Kind("a finite number", _is_number)
NUMBERS = Kind(
    "a finite number or a non-empty list of finite numbers",
    lambda v: _is_number(v) or (isinstance(v, list) and bool(v) and all(_is_number(x) for x in v)),
)
TEXT_OR_NUMBER = Kind("text or a finite number", lambda v: isinstance(v, str) or _is_number(v))
TEXTS = Kind("a list of text", lambda v: isinstance(v, list) and all(isinstance(x, str) for x in v))
PAIRS = Kind(
    "a list of [number, number] pairs",
    lambda v: (
        isinstance(v, list)
        and all(isinstance(p, list) and len(p) == 2 and all(_is_number(x) for x in p) for p in v)
    ),
)
FLAG = Kind("true or false", lambda v: isinstance(v, bool))
DATE = Kind(
    "a date (YYYY-MM-DD)",
    lambda v: (
        isinstance(v, datetime.date)
        or (isinstance(v, str) and re.fullmatch(r"\d{4}-\d{2}-\d{2}", v) is not None)
    ),
)


def one_of(*choices: str) -> Kind:
    return Kind(f"one of {', '.join(choices)}", lambda v: v in choices)


def table_of(entry) -> TableOf:
    return TableOf(entry)


def list_of(entry) -> ListOf:
    return ListOf(entry)


# --------------------------------------------------------------------------- sections

SOURCE = {  # which fields each type needs: catalogue.SOURCE_TYPES
    "type": (one_of("article", "book", "measurement"), OPTIONAL),  # default "article"
    "authors": (TEXTS, REQUIRED),
    "year": (INTEGER, REQUIRED),
    "title": (TEXT, REQUIRED),
    "journal": (TEXT, OPTIONAL),  # articles
    "volume": (TEXT, OPTIONAL),  # articles
    "pages": (TEXT, OPTIONAL),  # articles
    "publisher": (TEXT, OPTIONAL),  # books
    "edition": (TEXT, OPTIONAL),  # books
    "address": (TEXT, OPTIONAL),  # books
    "lab": (TEXT, OPTIONAL),  # measurements: the lab that measured
    "description": (TEXT, OPTIONAL),  # measurements: what was measured, how, on what
    "data": (TEXT, OPTIONAL),  # measurements: the file in the catalogue's measurements/
    "data_sha256": (TEXT, OPTIONAL),  # measurements: its sha256
    "doi": (TEXT, REQUIRED),  # "" where the publication has none
}

COEFFICIENT = {  # [coefficients] name = { value = ..., units = ... }
    "value": (NUMBERS, REQUIRED),
    "units": (TEXT, REQUIRED),
    "uncertainty": (NUMBERS, OPTIONAL),  # as printed, in `units`: see uncertainty_kind
    "uncertainty_kind": (one_of(*UNCERTAINTY_KINDS), OPTIONAL),  # default "unspecified"
    "coverage_factor": (NUMBER, OPTIONAL),  # k of an "expanded" uncertainty
    "uncertainty_obtained": (TEXT, OPTIONAL),  # where the uncertainty was read
    "obtained": (TEXT, OPTIONAL),  # this number's own origin, where it differs
}

RANGE = {  # [validity.<kernel input>]
    "min": (NUMBER, REQUIRED),
    "max": (NUMBER, REQUIRED),
    "units": (TEXT, REQUIRED),
}

REGION = {  # [[validity_region]]: see matprops.catalogue.regions
    "input": (TEXT, REQUIRED),
    "limit": (one_of("min", "max"), REQUIRED),
    "varies_with": (TEXT, REQUIRED),
    "points": (PAIRS, REQUIRED),
    "units": (TEXTS, REQUIRED),
    "reason": (TEXT, REQUIRED),
}

VARIANT = {  # [variants.<name>]: one coefficient set of a model
    "coefficients": (table_of(COEFFICIENT), OPTIONAL),
    "validity": (table_of(RANGE), OPTIONAL),
    "obtained": (TEXT, OPTIONAL),
    "kernel": (TEXT, OPTIONAL),  # an equation form of its own (same inputs and output)
}

FITTED_DENSITY = {  # the intrinsic density an apparent narrowing was fitted with
    **COEFFICIENT,
    "temperature": (NUMBER, REQUIRED),  # K
}

NARROWING = {  # [narrowing] of a gap_narrowing model
    "type": (one_of("apparent", "physical"), REQUIRED),
    "split": (TEXT, REQUIRED),
    # the form of files sealed before [fit_conventions] (they now live there):
    "statistics": (one_of("boltzmann", "fermi-dirac"), OPTIONAL),
    "intrinsic_density": (FITTED_DENSITY, OPTIONAL),  # required for "apparent"
}

CONVENTION = {  # one entry of [fit_conventions]: see matprops.catalogue.conventions
    "value": (TEXT_OR_NUMBER, REQUIRED),  # a word, a model id, or a number
    "units": (TEXT, OPTIONAL),  # of a number
    "temperature": (NUMBER, OPTIONAL),  # K, where a density holds
    "obtained": (TEXT, REQUIRED),  # where it was read, or "not stated in the source"
}

STAND_IN = {  # [stand_ins.<species>]: a dopant species this model has no set for
    "variant": (TEXT, OPTIONAL),  # another species' coefficient set of this model, or
    "model": (TEXT, OPTIONAL),  # another model of the quantity that has the species
    "obtained": (TEXT, REQUIRED),  # why (where the practice was read)
}

FIT = {  # [fit] of an intrinsic_lifetime model sealed before [fit_conventions]
    "radiative": (TEXT, REQUIRED),  # which radiative term the model goes with
    "gap_narrowing": (TEXT, REQUIRED),  # a gap_narrowing model id, or "none"/"not known"
    "intrinsic_density": (FITTED_DENSITY, OPTIONAL),
}

MATRIX = Kind(
    "a square list of lists of finite numbers",
    lambda v: (
        isinstance(v, list)
        and bool(v)
        and all(
            isinstance(row, list) and len(row) == len(v) and all(_is_number(x) for x in row)
            for row in v
        )
    ),
)

CORRELATION = {  # [[uncertainty.correlation]]: a block of correlated coefficients
    "coefficients": (TEXTS, REQUIRED),  # "name", "name[i]" or "<variant>.name"
    "matrix": (MATRIX, REQUIRED),  # correlation coefficients, 1 on the diagonal
    "obtained": (TEXT, REQUIRED),
}

POINT = {"value": (NUMBER, REQUIRED), "units": (TEXT, REQUIRED)}

OUTPUT_UNCERTAINTY = {  # [[uncertainty.output]]: a source's stated accuracy of the output
    "relative": (NUMBER, OPTIONAL),  # one of relative (a fraction) or absolute (+ units)
    "absolute": (NUMBER, OPTIONAL),
    "units": (TEXT, OPTIONAL),
    "kind": (one_of(*UNCERTAINTY_KINDS), REQUIRED),
    "coverage_factor": (NUMBER, OPTIONAL),
    "validity": (table_of(RANGE), OPTIONAL),  # the range over which it holds, or
    "at": (table_of(POINT), OPTIONAL),  # the point it was stated at
    "variant": (TEXT, OPTIONAL),  # one coefficient set (carrier, dopant) only
    "statement": (TEXT, REQUIRED),  # what the source says, in a few words
    "obtained": (TEXT, REQUIRED),
}

UNCERTAINTY = {  # [uncertainty] of a model: what its source states about uncertainty
    "statement": (one_of(*UNCERTAINTY_STATEMENTS), REQUIRED),
    "obtained": (TEXT, REQUIRED),
    "correlation": (list_of(CORRELATION), OPTIONAL),
    "output": (list_of(OUTPUT_UNCERTAINTY), OPTIONAL),
}

RESIDUALS = {  # of a fit: normalised residuals (data - model) / uncertainty
    "rms": (NUMBER, REQUIRED),
    "max_abs": (NUMBER, REQUIRED),
    "mean": (NUMBER, REQUIRED),
}

FITTED = {  # [fitted] of a model fitted to one's own measurements (matprops.fit)
    "base_model": (TEXT, REQUIRED),  # "<quantity>/<model-id>" it started from
    "base_sha256": (TEXT, REQUIRED),  # that model file's sha256
    "base_release": (TEXT, OPTIONAL),  # the release it was read as
    "variant": (TEXT, OPTIONAL),  # the coefficient set fitted (carrier, dopant)
    "free": (TEXTS, REQUIRED),  # coefficients fitted; the others kept from the base
    "inputs": (table_of(NUMBER), OPTIONAL),  # kernel inputs held fixed (kernel units)
    "method": (TEXT, REQUIRED),
    "covariance": (one_of("from the measured uncertainties", "scaled by reduced chi2"), REQUIRED),
    "points": (INTEGER, REQUIRED),
    "dof": (INTEGER, REQUIRED),
    "chi2": (NUMBER, REQUIRED),
    "reduced_chi2": (NUMBER, REQUIRED),
    "residuals": (RESIDUALS, REQUIRED),
    "date": (DATE, REQUIRED),
    "software": (TEXT, REQUIRED),
}

MODEL = {  # datasets/models/<quantity>/<model-id>.toml
    "id": (TEXT, REQUIRED),
    "quantity": (TEXT, REQUIRED),
    "name": (TEXT, REQUIRED),
    "kind": (one_of(*KINDS), REQUIRED),
    "kernel": (TEXT, REQUIRED),
    "obtained": (TEXT, REQUIRED),
    "notes": (TEXT, OPTIONAL),
    "source": (SOURCE, REQUIRED),
    "additional_sources": (list_of(SOURCE), OPTIONAL),
    "fallback": (TEXT, OPTIONAL),
    "table": (TEXT, OPTIONAL),  # required for kind "table"
    "table_arguments": (table_of(TEXT), OPTIONAL),  # required for kind "table"
    "validity": (table_of(RANGE), OPTIONAL),
    "validity_region": (list_of(REGION), OPTIONAL),
    "coefficients": (table_of(COEFFICIENT), OPTIONAL),
    # -- the doping axis (which quantity needs which section: modelfile.QUANTITY_SECTIONS)
    "variant_axis": (one_of(*VARIANT_AXES), OPTIONAL),  # goes with variants
    "variants": (table_of(VARIANT), OPTIONAL),  # one coefficient set per name
    "narrowing": (NARROWING, OPTIONAL),  # gap_narrowing models
    # what the coefficients were fitted with (required for a composed quantity's model
    # in the main tree: matprops.catalogue.conventions.REQUIRED)
    "fit_conventions": (table_of(CONVENTION), OPTIONAL),
    "stand_ins": (table_of(STAND_IN), OPTIONAL),  # with variant_axis = "dopant"
    # -- the forms of files sealed before [fit_conventions] (archives of final releases)
    "dopant_densities": (one_of("total", "ionised"), OPTIONAL),  # mobility models
    "fit": (FIT, OPTIONAL),  # intrinsic_lifetime models
    "definition": (one_of(*THERMAL_VELOCITY_DEFINITIONS), OPTIONAL),  # thermal_velocity
    "uncertainty": (UNCERTAINTY, OPTIONAL),  # absent: "not known" (see records.Uncertainty)
    "fitted": (FITTED, OPTIONAL),  # fitted to own measurements: how, how well
    # -- new fields: one line here
}

QUANTITY = {  # a number with units: { value = ..., units = "..." }
    "value": (NUMBER, REQUIRED),
    "units": (TEXT, REQUIRED),
}

CROSS_SECTION = {  # [electron_cross_section] / [hole_cross_section]
    "value": (NUMBER, REQUIRED),
    "units": (TEXT, REQUIRED),
    "law": (one_of("constant", "power", "activated"), OPTIONAL),  # default constant
    "exponent": (NUMBER, OPTIONAL),  # power law
    "reference_temperature": (QUANTITY, OPTIONAL),  # power law
    "activation_energy": (QUANTITY, OPTIONAL),  # activated law
}

DEFECT = {  # datasets/defects/<name>.toml: see matprops.catalogue.defects
    "name": (TEXT, REQUIRED),
    "aliases": (TEXTS, OPTIONAL),
    "description": (TEXT, OPTIONAL),
    "obtained": (TEXT, REQUIRED),
    "notes": (TEXT, OPTIONAL),
    "level": (
        {
            "energy": (QUANTITY, REQUIRED),
            "reference": (one_of("conduction", "valence", "intrinsic"), REQUIRED),
        },
        REQUIRED,
    ),
    "electron_cross_section": (CROSS_SECTION, OPTIONAL),  # with hole_cross_section, or
    "hole_cross_section": (CROSS_SECTION, OPTIONAL),
    "cross_section_ratio": (QUANTITY, OPTIONAL),  # only sigma_n / sigma_p is known
    "thermal_velocity": ({"convention": (TEXT, REQUIRED), "model": (TEXT, OPTIONAL)}, REQUIRED),
    "source": (SOURCE, REQUIRED),
    "additional_sources": (list_of(SOURCE), OPTIONAL),
    "validity": ({"temperature": (RANGE, REQUIRED)}, OPTIONAL),
}

RELEASE = {  # datasets/releases/<release-id>.toml
    "release": (TEXT, REQUIRED),
    "status": (one_of("draft", "final"), REQUIRED),
    "date": (DATE, REQUIRED),
    "notes": (TEXT, REQUIRED),
    "models": (table_of(TEXT), REQUIRED),  # quantity = "model-id"
    # defaults of methods' options that a release chooses (absent: "physics")
    "defaults": ({"doping_from_resistivity": (one_of(*DOPING_DEFAULTS), OPTIONAL)}, OPTIONAL),
    "base": (TEXT, OPTIONAL),  # own releases of an overlay: the release they build on
}

OVERLAY = {  # overlay.toml: who keeps an overlay catalogue (matprops.catalogue.overlay)
    "name": (TEXT, REQUIRED),  # lower-case words joined by hyphens: "example-lab"
    "description": (TEXT, REQUIRED),
    "contact": (TEXT, OPTIONAL),
}

# --------------------------------------------------------------------------- checking


def validate(path, data: Mapping, section: Mapping, where: str = "") -> None:
    """Raise DatasetError(path, ...) at the first field of ``data`` that ``section``
    does not allow, misses, or whose value is of the wrong kind or not finite."""
    for key in data:
        if key not in section:
            close = difflib.get_close_matches(str(key), list(section), n=1)
            hint = f"; did you mean {close[0]!r}?" if close else ""
            raise DatasetError(
                path, f"unknown field '{where}{key}' (allowed here: {', '.join(section)}){hint}"
            )
    for key, (kind, required) in section.items():
        if key in data:
            _check(path, data[key], kind, f"{where}{key}")
        elif required:
            raise DatasetError(path, f"missing required field '{where}{key}'")


def _check(path, value, kind, where: str) -> None:
    if isinstance(kind, Mapping):
        if not isinstance(value, Mapping):
            raise DatasetError(path, f"field '{where}' must be a table, got {value!r}")
        validate(path, value, kind, f"{where}.")
    elif isinstance(kind, TableOf):
        if not isinstance(value, Mapping):
            raise DatasetError(path, f"field '{where}' must be a table, got {value!r}")
        for name, entry in value.items():
            _check(path, entry, kind.entry, f"{where}.{name}")
    elif isinstance(kind, ListOf):
        if not isinstance(value, list):
            raise DatasetError(path, f"field '{where}' must be a list, got {value!r}")
        for index, entry in enumerate(value):
            _check(path, entry, kind.entry, f"{where}[{index}]")
    else:
        if not kind.accepts(value):
            raise DatasetError(path, f"field '{where}' must be {kind.description}, got {value!r}")
        _check_finite(path, value, where)


def _check_finite(path, value, where: str) -> None:
    if isinstance(value, list):
        for index, item in enumerate(value):
            _check_finite(path, item, f"{where}[{index}]")
    elif isinstance(value, float) and not math.isfinite(value):
        raise DatasetError(path, f"field '{where}' must be a finite number, got {value!r}")
