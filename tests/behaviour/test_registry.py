"""The quantity registry: each quantity declared once, and every piece it needs in place.

A quantity is declared beside the method that serves it
(:mod:`matprops.material.registry`); tables, bound kernels, the command line, the
frozen reference cases, the model catalogue in docs/ and the property sweep are read
from the declarations. These tests fail when a piece is forgotten: a model folder
nobody declared, a declaration without a model file, a quantity without reference
cases, units that are not what the method returns.
"""

import warnings

import numpy as np
import pytest

import matprops
from matprops import vocabulary
from matprops.catalogue.store import default_catalogue
from matprops.material.derived import DERIVED
from matprops.material.registry import REGISTRY, quantity
from matprops.material.tables import available
from matprops.units import unit


def test_every_quantity_of_the_catalogue_is_declared():
    # a model folder (datasets/models/<quantity>/) without a declaration fails here
    undeclared = set(default_catalogue().quantities()) - set(REGISTRY)
    assert undeclared == set()


def test_every_declared_model_quantity_has_model_files():
    # a declaration without a model file (or with a misspelt model quantity) fails here
    catalogue = set(default_catalogue().quantities())
    for entry in REGISTRY.values():
        missing = set(entry.models) - catalogue
        assert missing == set(), f"{entry.name}: no model files for {missing}"


def test_every_declared_quantity_has_reference_cases():
    # a quantity without a case would never be frozen by a release
    si = matprops.silicon()
    for entry in REGISTRY.values():
        assert entry.reference_cases(si), f"{entry.name} declares no reference case"


def test_derived_quantities_come_from_the_registry():
    assert DERIVED == REGISTRY.derived()
    for name, (parts, formula) in DERIVED.items():
        assert parts and formula, name


def _first_point(grid):
    return {name: float(values[0]) for name, values in grid.items()}


def _parts(entry, result):
    if entry.fields:
        return [getattr(result, f) for f in entry.fields]
    return list(result) if isinstance(result, tuple) else [result]


def test_declared_units_are_what_the_method_returns():
    from matprops.outputs.reference import _with_units

    si = matprops.silicon()
    served = set(available(si))
    for entry in REGISTRY.values():
        if entry.name not in served:
            continue
        _, method, fixed, grid = entry.reference_cases(si)[0]
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", matprops.ValidityWarning)
            # stored inputs are in internal units; a thickness takes its unit (cm)
            result = getattr(si, method)(**_with_units(fixed), **_first_point(grid))
        units = entry.units if isinstance(entry.units, tuple) else (entry.units,)
        for part, declared in zip(_parts(entry, result), units, strict=True):
            assert part.units == unit(declared), f"{entry.name}: {part.units} != {declared}"


def test_every_method_parameter_is_in_the_vocabulary():
    # a declared method whose parameter the vocabulary does not know is refused
    def probe(self, temperature, wobble=1):
        return temperature

    with REGISTRY.scratch(), pytest.raises(ValueError, match="wobble"):
        quantity(units="K")(probe)


@pytest.mark.parametrize(
    "method, args, short, long",
    [
        ("gap_narrowing", (300.0,), {"Nd": 1e19}, {"donor_density": 1e19}),
        (
            "mobility",
            ("electron",),
            {"T": 300.0, "Na": 1e17},
            {"temperature": 300.0, "acceptor_density": 1e17},
        ),
        ("dopant_level", (), {"N": 1e18}, {"dopant_density": 1e18}),
        (
            "doping_from_resistivity",
            (),
            {"rho": 10.0, "T": 300.0, "dopant": "B"},
            {"resistivity": 10.0, "temperature": 300.0, "dopant": "boron"},
        ),
        (
            "intrinsic_lifetime",
            (300.0,),
            {"Nd": 1e16, "excess": 1e15, "n0": None},
            {"donor_density": 1e16, "excess_density": 1e15},
        ),
    ],
)
def test_methods_accept_every_name_of_their_arguments(si, method, args, short, long):
    short = {k: v for k, v in short.items() if v is not None}
    a = getattr(si, method)(*args, **short)
    b = getattr(si, method)(*args, **long)
    first = a[0] if isinstance(a, tuple) else a
    second = b[0] if isinstance(b, tuple) else b
    np.testing.assert_array_equal(first.magnitude, second.magnitude)


def test_an_argument_named_twice_is_refused(si):
    with pytest.raises(matprops.InputError, match="given once"):
        si.gap_narrowing(300.0, Nd=1e18, donor_density=1e18)


@pytest.mark.parametrize(
    "name, given, expected",
    [
        ("carrier", "electrons", "electron"),
        ("carrier", "h", "hole"),
        ("dopant", "B", "boron"),
        ("dopant", "aluminum", "aluminium"),
        ("donor", "As", "arsenic"),
        ("plane", "(111)", "111"),
        ("plane", 100, "100"),
        ("statistics", "Boltzmann", "boltzmann"),
    ],
)
def test_category_spellings(name, given, expected):
    assert vocabulary.canonical(name, given) == expected


def test_a_donor_is_not_an_acceptor():
    with pytest.raises(matprops.InputError, match="an acceptor species"):
        vocabulary.canonical("acceptor", "phosphorus")


def test_the_vocabulary_names_each_argument_once():
    seen = {}
    for spec in vocabulary.ARGUMENTS.values():
        for name in spec.names:
            assert name not in seen, f"{name!r}: {spec.name} and {seen.get(name)}"
            seen[name] = spec.name
    assert vocabulary.argument("Na").name == "acceptor_density"
    assert vocabulary.argument("density").name == "defect_density"
