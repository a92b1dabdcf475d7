"""The fast paths give the same answers: workers= (threads over blocks) bit for bit,
quantity inputs through a cached conversion factor, the catalogue loaded without a unit
registry, and solver errors that name their points."""

import pickle
import subprocess
import sys
import textwrap
import warnings

import numpy as np
import pint
import pytest

import matprops
from matprops.catalogue import fields
from matprops.catalogue._unit_factors import FACTORS
from matprops.kernels import _blocks
from matprops.units import Q_, coerce


@pytest.fixture(scope="module")
def pair():
    """The newest release with one thread and with two."""
    return matprops.silicon(), matprops.silicon(workers=2)


def _same(a, b):
    if isinstance(a, dict):
        assert a.keys() == b.keys()
        for key in a:
            _same(a[key], b[key])
        return
    if isinstance(a, tuple):
        for x, y in zip(a, b, strict=True):
            _same(x, y)
        return
    a, b = np.asarray(getattr(a, "magnitude", a)), np.asarray(getattr(b, "magnitude", b))
    assert a.shape == b.shape
    assert np.array_equal(a, b, equal_nan=True)  # bit for bit (NaN where NaN)


@pytest.mark.parametrize(
    "call",
    [
        lambda si, T, N: si.band_gap(T),
        lambda si, T, N: si.densities_of_states(T),
        lambda si, T, N: si.intrinsic_density(T),
        lambda si, T, N: si.effective_intrinsic_density(T, Nd=N, n=N, p=1e5),
        lambda si, T, N: si.mobility("electron", T, Nd=N, n=N, p=1e5),
        lambda si, T, N: si.equilibrium(T, Nd=N, Na=N[::-1]).electron_density,
        lambda si, T, N: si.resistivity(T, Na=N),
        lambda si, T, N: si.intrinsic_lifetime(300.0, Nd=N, excess=1e15),
        lambda si, T, N: si.absorption(np.linspace(400, 1100, 300)[:, None], T[:200][None, :]),
        lambda si, T, N: si.kernel("band_gap")(T),
        lambda si, T, N: si.kernel("equilibrium")(T, Nd=N, Na=1e14),
        lambda si, T, N: si.kernel("mobility", carrier="hole").derivatives(
            T, Nd=N, Na=1e14, n=1e10, p=N
        ),
    ],
)
def test_workers_give_the_same_numbers_bit_for_bit(pair, call):
    # several blocks of every kind (the solver's 8192, the light kernels' 131072, the
    # closed forms' 16384 on one thread and 65536 on two: other blocks, the same numbers)
    rng = np.random.default_rng(5)
    size = 140_000
    T = rng.uniform(250.0, 450.0, size)
    N = 10 ** rng.uniform(14.0, 19.0, size)
    one, two = pair
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        _same(call(one, T, N), call(two, T, N))


def test_doping_from_resistivity_with_workers_is_the_same(pair):
    rho = 10 ** np.random.default_rng(6).uniform(-2.0, 2.0, 20_000)
    one, two = pair
    _same(
        one.doping_from_resistivity(rho, 300.0, "boron", conversion="physics"),
        two.doping_from_resistivity(rho, 300.0, "boron", conversion="physics"),
    )


@pytest.mark.parametrize("bad", [0, -1, 1.5, "2", True])
def test_workers_must_be_a_positive_whole_number(bad):
    with pytest.raises(matprops.InputError, match="'workers'"):
        matprops.silicon(workers=bad)


def test_workers_travel_with_a_pickled_material():
    si = matprops.silicon(workers=2)
    assert pickle.loads(pickle.dumps(si)).workers == 2


# --------------------------------------------------------------------------- errors


def test_a_failed_solve_names_its_point_and_inputs():
    si = matprops.silicon()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        with pytest.raises(matprops.SolverError) as caught:
            si.equilibrium(1.0, Nd=1e15)
    message = str(caught.value)
    assert "1 point(s)" in message and "#0" in message
    assert "T=1 K" in message and "Nd=1e+15 cm^-3" in message
    assert "intrinsic density" in message  # why: ni underflows to zero at 1 K
    assert caught.value.points[0]["index"] == (0,)


def test_a_failed_solve_names_points_by_their_index_in_the_whole_input():
    si = matprops.silicon()
    T = np.full((3, 20_000), 300.0)
    T[1, 5000] = 2.0
    T[1, 100] = 1.5
    T[2, 12_345] = 1.0  # a later block: not reached
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        for solve in (
            lambda: si.equilibrium(T, Nd=1e16),
            lambda: si.kernel("equilibrium")(T, Nd=1e16, Na=0.0),
        ):
            with pytest.raises(matprops.SolverError) as caught:
                solve()
            assert [p["index"] for p in caught.value.points] == [(1, 100), (1, 5000)]
            message = str(caught.value)
            assert "#(1, 100) (T=1.5 K" in message and "#(1, 5000) (T=2 K" in message
            assert "first block that failed (points #20000-#28191" in message
        T[1] = 300.0
        with pytest.raises(matprops.SolverError, match=r"#\(2, 12345\) \(T=1 K"):
            si.equilibrium(T, Nd=1e16)


def test_solver_errors_pickle_with_their_points():
    error = _blocks.solver_error(
        "equilibrium",
        "could not be solved",
        1,
        [{"index": (3,), "inputs": ("T=1 K",), "detail": "x"}],
    )
    again = pickle.loads(pickle.dumps(error))
    assert str(again) == str(error) and again.points == error.points


# --------------------------------------------------------------------------- units


@pytest.mark.parametrize(
    ("value", "argument"),
    [
        (Q_(26.85, "degC"), "temperature"),
        (Q_(80.33, "degF"), "temperature"),
        (Q_(0.3, "kK"), "temperature"),
        (Q_(1e21, "1/m^3"), "Nd"),
        (Q_(3.0, "ohm*m"), "resistivity"),
        (Q_(2.0, "um"), "wavelength"),
        (Q_(np.array([1e21, 3e22]), "1/m^3"), "Nd"),
        (Q_(np.array([20.0, 30.0]), "degC"), "temperature"),
    ],
)
def test_quantity_inputs_convert_as_pint_does(value, argument):
    units = {"temperature": "K", "Nd": "cm^-3", "resistivity": "ohm*cm", "wavelength": "nm"}
    for _ in range(2):  # the first call fills the cache, the second reads it
        magnitude, low, high = coerce(value, argument)
        expected = np.asarray(value.m_as(units[argument]), dtype=float)
        np.testing.assert_allclose(magnitude, expected, rtol=4e-16, atol=0)
        assert low == expected.min() and high == expected.max()


def test_cached_conversions_keep_the_refusals():
    for _ in range(2):
        with pytest.raises(matprops.UnitError, match="temperature difference"):
            coerce(Q_(5.0, "delta_degC"), "temperature")
        with pytest.raises(matprops.UnitError):
            coerce(Q_(5.0, "eV"), "temperature")
        with pytest.raises(matprops.InputError, match="> 0 K"):
            coerce(Q_(-300.0, "degC"), "temperature")
    # a quantity of another registry takes pint's own path (not the cache), as before
    other = pint.UnitRegistry()
    assert coerce(other.Quantity(300.0, "K"), "temperature")[1] == 300.0
    # a spectral input is not a product: pint's spectroscopy context converts it
    assert coerce(Q_(1.2, "eV"), "wavelength")[1] == pytest.approx(1033.2016536100023)


def test_unit_factors_are_pints_own():
    # Table written by tools/make_unit_factors.py; pint's factor for each pair
    for (units, target), factor in FACTORS.items():
        assert fields.pint_factor(units, target) == factor, (units, target)


def test_every_conversion_of_the_catalogue_has_its_factor():
    from matprops.catalogue.checks import check
    from matprops.catalogue.store import Catalogue

    before = set(fields.CONVERSIONS_SEEN)  # (other tests convert made-up units too)
    fields.CONVERSIONS_SEEN.clear()
    try:
        problems, _ = check(Catalogue())
        seen = set(fields.CONVERSIONS_SEEN)
    finally:
        fields.CONVERSIONS_SEEN.update(before)
    assert not problems
    assert seen  # a fresh catalogue converts its files' coefficients
    missing = {
        pair for pair in seen if pair not in FACTORS and fields.pint_factor(*pair) is not None
    }
    assert not missing, f"run python tools/make_unit_factors.py (missing {sorted(missing)})"


def test_loading_and_a_kernel_value_build_no_unit_registry():
    code = textwrap.dedent(
        """
        import pint
        import matprops
        si = matprops.silicon()
        si.kernel("band_gap")(300.0)
        si.kernel("mobility", carrier="electron")(300.0, Nd=1e16, Na=0.0, n=1e16, p=1e4)
        print(type(pint.application_registry._registry).__name__)
        print(si.band_gap(300.0).units)
        """
    )
    run = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, timeout=120, check=True
    )
    lines = run.stdout.split()
    assert lines[0] == "LazyRegistry"  # pint built nothing until the first quantity
    assert lines[1] == "electron_volt"
