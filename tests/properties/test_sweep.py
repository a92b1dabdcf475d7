"""Property-based sweep of every public Silicon method and optics function.

Each callable is a row of :data:`SILICON_METHODS` or :data:`OPTICS_FUNCTIONS`: its
name and the kind of each argument. The rows of the methods that serve a quantity are
read from the quantity registry and the methods' signatures (the kind of each argument
from the argument vocabulary), so a declared quantity is swept without a line here.
Hypothesis draws every argument in many forms —
plain numbers and arrays of random shapes and dtypes (float, int, bool, complex),
lists, masked arrays, pint quantities in compatible and incompatible units, strings,
None — with values that include NaN, infinities, zero, negative, tiny and huge
numbers. The only allowed outcomes are

- a result whose every number is finite,
- a result with a :class:`matprops.ValidityWarning` (the input left a model's range),
- one of matprops' documented errors (:class:`matprops.Error`);

never another exception (numpy's, scipy's, pint's, a bare TypeError) and never a
NaN or infinity without a ValidityWarning. A plumbing method of the facade is covered
by adding a row; a new kind of argument by adding an entry to :data:`KINDS`.

The sweep is derandomised (the same examples every run, as tests must be
deterministic). For a longer, random exploration on demand::

    MATPROPS_SWEEP_EXAMPLES=2000 MATPROPS_SWEEP_RANDOM=1 \
        python -m pytest tests/properties/test_sweep.py
"""

from __future__ import annotations

import dataclasses
import inspect
import os
import warnings
from dataclasses import dataclass

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import matprops
from matprops import optics, vocabulary
from matprops.material.registry import declared

EXAMPLES = int(os.environ.get("MATPROPS_SWEEP_EXAMPLES", "20"))
SWEEP = settings(
    deadline=None,
    max_examples=EXAMPLES,
    database=None,
    derandomize=not os.environ.get("MATPROPS_SWEEP_RANDOM"),
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large],
)


# ------------------------------------------------------------------ kinds of argument


@dataclass(frozen=True)
class Number:
    """A physical argument: its default units, units of the same kind, units of
    another kind, and typical magnitudes (in the default units)."""

    units: str
    compatible: tuple[str, ...]
    incompatible: tuple[str, ...]
    typical: tuple[float, ...]


@dataclass(frozen=True)
class Choice:
    """A named option (a plane, a dopant species, a quantity name ...)."""

    valid: tuple
    invalid: tuple = ("", "nonsense", None, 3, 1.5, ("a",), ["x"], b"bytes")


KINDS = {
    "temperature": Number(
        "K",
        ("K", "degC", "degF", "degR", "mK"),
        ("m", "eV", "s", "delta_degC", "cm^-3"),
        (4.0, 77.0, 250.0, 300.0, 350.0, 500.0, 1200.0),
    ),
    "wavelength": Number(
        "nm",
        ("nm", "um", "m", "eV", "THz", "1/cm"),
        ("K", "s", "cm^-3", "dimensionless"),
        (250.0, 400.0, 800.0, 1000.0, 1100.0, 1550.0, 3000.0),
    ),
    "density": Number(
        "cm^-3",
        ("cm^-3", "m^-3", "1/um^3"),
        ("cm^-2", "K", "nm"),
        (0.0, 1e10, 1e15, 1e17, 1e19, 1e20, 1e21),
    ),
    "absorption_coefficient": Number(
        "1/cm", ("1/cm", "1/m", "1/um"), ("cm", "K", "eV"), (1e-3, 1.0, 64.0, 1e3, 1e4, 1e6)
    ),
    "thickness": Number(
        "cm", ("cm", "um", "m", "nm"), ("1/cm", "K", "s"), (1e-7, 1e-4, 0.018, 0.02, 1.0)
    ),
    "fraction": Number(
        "dimensionless", ("dimensionless", "percent"), ("m", "K"), (0.01, 0.5, 0.9, 0.999)
    ),
    "photon_energy": Number(
        "eV", ("eV", "J", "meV", "nm"), ("K", "s", "cm^-3"), (0.5, 1.1, 1.5, 3.0, 4.5)
    ),
    "field": Number(
        "V/cm",
        ("V/cm", "kV/cm", "V/m", "V/um"),
        ("V", "K", "ohm*cm"),
        (0.0, 1e2, 1e4, 3e4, 6e4, 1e5),
    ),
    "resistivity": Number(
        "ohm*cm",
        ("ohm*cm", "ohm*m", "mohm*cm", "kohm*cm"),
        ("ohm", "cm", "S/cm", "K"),
        (1e-4, 1e-3, 0.01, 1.0, 10.0, 1e4),
    ),
    "plane": Choice(("100", "110", "111", "(111)", "{100}", "1 1 0", 111)),
    "carrier": Choice(("electron", "hole", "electrons", "e", "h")),
    "dopant_densities": Choice(("total", "ionised")),
    "conversion": Choice(("physics", "standard")),
    "dopant": Choice(("phosphorus", "boron", "arsenic", "P", "B", "As", "gallium")),
    "donor": Choice(("phosphorus", "arsenic", "P", "boron")),
    "acceptor": Choice(("boron", "B", "gallium", "phosphorus")),
    "statistics": Choice((None, "fermi-dirac", "boltzmann")),
    "generation": Number(
        "cm^-2/s", ("cm^-2/s", "1/(m^2*s)", "mA/cm^2"), ("K", "cm", "V"), (1e12, 1e16, 2.5e17, 1e20)
    ),
    "capture_time": Number("s", ("s", "us", "ms"), ("m", "K", "cm^-3"), (1e-9, 1e-6, 1e-3, 1.0)),
    "mobility": Number(
        "cm^2/(V*s)", ("cm^2/(V*s)", "m^2/(V*s)"), ("cm/s", "K"), (10.0, 450.0, 1400.0)
    ),
    "velocity": Number("cm/s", ("cm/s", "m/s", "km/s"), ("cm", "K"), (1e6, 1e7, 2e7)),
    "defect": Choice(
        (
            "Fe_i",
            "iron-boron-pair",
            "boron-oxygen",
            "FeB",
            {
                "level": 0.3,
                "reference": "valence",
                "electron_cross_section": 1e-15,
                "hole_cross_section": 1e-16,
            },
            {"level": 0.0, "reference": "intrinsic", "cross_section_ratio": 2.0},
        ),
        (
            "",
            "nonsense",
            None,
            3,
            1.5,
            ("a",),
            ["x"],
            b"bytes",
            {
                "level": 5.0,
                "reference": "valence",
                "electron_cross_section": 1e-15,
                "hole_cross_section": 1e-15,
            },
            {"level": 0.3, "reference": "valence"},
            {"level": float("nan")},
        ),
    ),
    "defects": Choice(
        (None, {"Fe_i": 1e11}, {"iron-boron-pair": 1e10, "Cr_i": 1e11}, [("FeB", 1e10)]),
        ("", "nonsense", 3, {"nonsense": 1e11}, {"Fe_i": -1.0}, [("Fe_i",)], ["x"]),
    ),
    "quantity": Choice(
        (
            "band_gap",
            "intrinsic_density",
            "absorption",
            "density",
            "effective_intrinsic_density",
            "ionisation",
            "bandgap",
        )
    ),
    "quantities": Choice(
        (
            None,
            ["band_gap"],
            ["band_gap", "density"],
            ("absorption",),
            "band_gap",
            ["no_such_quantity"],
            [],
        )
    ),
    "format": Choice(("bibtex", "text", "BibTeX", "json")),
    "model_ids": Choice(
        (
            None,
            ["passler-2002", "thurmond-1975"],
            ("alex-1996",),
            "passler-2002",
            ["no-such-model"],
            [3],
            [],
        )
    ),
}

# The kind of value each argument of the vocabulary takes, by its units (numbers) or
# its name (categories): a new argument with new units or a new category needs a line
# here (test_every_argument_has_a_kind says so).
NUMBER_KINDS = {
    "K": "temperature",
    "nm": "wavelength",
    "cm^-3": "density",
    "V/cm": "field",
    "ohm*cm": "resistivity",
    "cm": "thickness",
    "cm^-2/s": "generation",
    "s": "capture_time",
    "1/cm": "absorption_coefficient",
    "eV": "photon_energy",
    "cm^2/(V*s)": "mobility",
    "cm/s": "velocity",
}


def kind_of(parameter: str) -> str:
    spec = vocabulary.argument(parameter)
    return spec.name if spec.category else NUMBER_KINDS[spec.units]


def row(name: str):
    """(name, positional argument kinds, keyword argument kinds) read from a method's
    signature: parameters without a default are positional, the others keywords."""
    parameters = list(inspect.signature(getattr(matprops.Silicon, name)).parameters.values())[1:]
    positional = tuple(kind_of(p.name) for p in parameters if p.default is p.empty)
    keywords = {p.name: kind_of(p.name) for p in parameters if p.default is not p.empty}
    return name, positional, keywords


# Silicon methods: every method that serves a declared quantity (from the quantity
# registry: a new quantity is swept without a line here) and the facade's own doors.
# Keyword arguments are each given or left at their default, as hypothesis chooses.
SILICON_METHODS = [row(name) for name in declared().methods()] + [
    ("defect", ("defect",), {}),
    ("defects", (), {}),
    ("provenance", ("quantity",), {}),
    ("model", ("quantity",), {}),
    ("kernel", ("quantity",), {}),
    ("cite", (), {"format": "format", "quantities": "quantities"}),
    ("sources", ("quantities",), {}),
    ("consistency", (), {}),
    ("table", ("quantities",), {"temperature": "temperature", "wavelength": "wavelength"}),
    ("compare", ("quantity",), {"models": "model_ids", "temperature": "temperature"}),
    ("explain", ("quantity",), {"temperature": "temperature"}),
]

# optics functions: (name, positional argument kinds, keyword argument kinds)
OPTICS_FUNCTIONS = [
    ("transmitted_fraction", ("absorption_coefficient", "thickness"), {}),
    ("absorbed_fraction", ("absorption_coefficient", "thickness"), {}),
    ("thickness_for_absorbed_fraction", ("absorption_coefficient", "fraction"), {}),
    ("absorption_depth", ("absorption_coefficient",), {}),
    ("photon_energy", ("wavelength",), {}),
    ("wavelength", ("photon_energy",), {}),
    ("absorbed_fraction_spectrum", ("silicon", "wavelength", "thickness", "temperature"), {}),
]

# ------------------------------------------------------------------ value strategies

SPECIAL = (
    0.0,
    -0.0,
    -1.0,
    -300.0,
    1e-300,
    5e-324,
    1e300,
    -1e300,
    float("nan"),
    float("inf"),
    float("-inf"),
)
SHAPES = ((), (1,), (3,), (2, 1), (1, 3), (2, 3), (0,))
DTYPES = ("float64", "float32", "int64", "bool", "complex128")


def _elements(kind: Number):
    return st.one_of(
        st.sampled_from(kind.typical),
        st.sampled_from(SPECIAL),
        st.floats(allow_nan=True, allow_infinity=True),
    )


@st.composite
def _array(draw, kind: Number):
    shape = draw(st.sampled_from(SHAPES))
    dtype = draw(st.sampled_from(DTYPES))
    values = draw(
        st.lists(_elements(kind), min_size=int(np.prod(shape)), max_size=int(np.prod(shape)))
    )
    with warnings.catch_warnings(), np.errstate(all="ignore"):
        warnings.simplefilter("ignore")  # casting NaN to int is the point here
        return np.array(values, dtype=float).astype(dtype).reshape(shape)


def _numbers(kind: Number):
    from matprops import Q_

    magnitude = st.one_of(_elements(kind), _array(kind))
    units = st.one_of(st.sampled_from(kind.compatible), st.sampled_from(kind.incompatible))
    return st.one_of(
        _elements(kind),  # a plain float
        st.sampled_from(kind.typical).map(int),  # a plain int
        _array(kind),  # an array
        st.lists(_elements(kind), max_size=4),  # a list
        st.builds(lambda m, u: Q_(m, u), magnitude, units),  # a quantity
        st.builds(lambda m, u: f"{m} {u}", st.sampled_from(kind.typical), units),  # text
        st.builds(
            lambda a: np.ma.masked_array(a, mask=np.zeros(a.shape, bool)), _array(kind)
        ),  # masked
        st.sampled_from([None, "warm", [[1.0, 2.0], [3.0]], object()]),  # not numbers
    )


def strategy(kind: str, si):
    if kind == "silicon":
        return st.just(si)
    spec = KINDS[kind]
    if isinstance(spec, Choice):
        return st.one_of(st.sampled_from(spec.valid), st.sampled_from(spec.invalid))
    return _numbers(spec)


@st.composite
def calls(draw, positional, keywords, si):
    args = [draw(strategy(kind, si)) for kind in positional]
    kwargs = {
        name: draw(strategy(kind, si)) for name, kind in keywords.items() if draw(st.booleans())
    }
    return args, kwargs


# ------------------------------------------------------------------ the property


def numbers_in(result):
    """Every numeric array inside a result (quantities, tuples, result objects ...)."""
    if result is None or isinstance(result, (str, bytes, bool)):
        return []
    if hasattr(result, "magnitude"):
        return [np.asarray(result.magnitude)]
    if isinstance(result, (int, float, np.number, np.ndarray)):
        return [np.asarray(result)]
    if isinstance(result, dict):
        return [a for value in result.values() for a in numbers_in(value)]
    if isinstance(result, (tuple, list)):
        return [a for value in result for a in numbers_in(value)]
    if dataclasses.is_dataclass(result):
        return [
            a
            for f in dataclasses.fields(result)
            if f.name != "provenance"
            for a in numbers_in(getattr(result, f.name))
        ]
    if hasattr(result, "data_vars"):  # an xarray.Dataset
        return [np.asarray(v.values) for v in result.data_vars.values()]
    return []  # a Model, a callable: nothing evaluated


def check_outcome(function, args, kwargs):
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            result = function(*args, **kwargs)
        except matprops.Error:
            return  # a documented error, naming the argument
    if any(issubclass(w.category, matprops.ValidityWarning) for w in caught):
        return  # outside a model's range: said so
    for array in numbers_in(result):
        if array.dtype.kind in "fc":
            assert np.all(np.isfinite(array)), (
                f"non-finite result without a ValidityWarning: {function.__name__}"
                f"(*{args!r}, **{kwargs!r}) -> {result!r}"
            )


@pytest.fixture(scope="module")
def materials():
    """The release as it is, strict, and with an apparent (Boltzmann) narrowing."""
    return (
        matprops.silicon(),
        matprops.silicon(strict=True),
        matprops.silicon(models={"gap_narrowing": "klaassen-1992"}),
    )


@pytest.mark.parametrize(
    "name, positional, keywords", SILICON_METHODS, ids=[row[0] for row in SILICON_METHODS]
)
def test_silicon_method_sweep(materials, name, positional, keywords):
    si = materials[0]

    @SWEEP
    @given(st.data())
    def sweep(data):
        material = data.draw(st.sampled_from(materials))
        args, kwargs = data.draw(calls(positional, keywords, si))
        check_outcome(getattr(material, name), args, kwargs)

    sweep()


@pytest.mark.parametrize(
    "name, positional, keywords", OPTICS_FUNCTIONS, ids=[row[0] for row in OPTICS_FUNCTIONS]
)
def test_optics_function_sweep(materials, name, positional, keywords):
    si = materials[0]

    @SWEEP
    @given(st.data())
    def sweep(data):
        args, kwargs = data.draw(calls(positional, keywords, si))
        check_outcome(getattr(optics, name), args, kwargs)

    sweep()


def test_every_argument_has_a_kind():
    # every argument of the vocabulary can be drawn (a new one needs a kind above)
    for spec in vocabulary.ARGUMENTS.values():
        assert kind_of(spec.name) in KINDS, spec.name


def test_every_public_callable_has_a_row():
    si = matprops.silicon()
    methods = {n for n in dir(si) if not n.startswith("_") and callable(getattr(si, n))}
    assert methods == {row[0] for row in SILICON_METHODS}
    assert set(optics.__all__) == {row[0] for row in OPTICS_FUNCTIONS}


def test_sweep_catches_what_it_should():
    # the property itself: a silent NaN fails, a warned or refused one passes
    def silent_nan(x):
        return matprops.Q_(np.nan, "K")

    def warned_nan(x):
        warnings.warn("outside", matprops.ValidityWarning, stacklevel=2)
        return matprops.Q_(np.nan, "K")

    def numpy_error(x):
        return np.ones(2) + np.ones(3)

    with pytest.raises(AssertionError, match="non-finite result"):
        check_outcome(silent_nan, [1.0], {})
    check_outcome(warned_nan, [1.0], {})
    with pytest.raises(ValueError, match="broadcast"):
        check_outcome(numpy_error, [1.0], {})
