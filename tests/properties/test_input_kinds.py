"""Units, dtypes and shapes of inputs: kernels convert or refuse, never strip.

A bound kernel given a pint quantity converts it to its internal unit (the policy
stated in docs/simulation.md and in every kernel's docstring), ``kernel.check`` too;
``out=`` of a non-float dtype is refused; dates and durations are refused by kernels,
checks, the public methods and tables. Before: a kernel read 27 degC as 27 K and a
density in m^-3 as cm^-3, ``out=`` an int array gave a band gap of 1, and 300 s of
``timedelta64`` was read as 300 K. Unit relations are common practice (SI definitions:
0 degC = 273.15 K, 1 m^-3 = 1e-6 cm^-3, 1 um = 1000 nm).
"""

import datetime
import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import matprops
from matprops import Q_

SI = matprops.silicon()

# (kernel, fixed options) -> inputs with a valid value in internal units
KERNELS = [
    ("band_gap", {}),
    ("intrinsic_density", {}),
    ("densities_of_states", {}),
    ("lattice_constant", {}),
    ("radiative_coefficient", {}),
    ("absorption", {}),
    ("refractive_index", {}),
    ("gap_narrowing", {}),
    ("effective_intrinsic_density", {}),
    ("free_carrier_absorption", {}),
    ("intrinsic_lifetime", {}),
    ("mobility", {"carrier": "electron"}),
    ("mobility", {"carrier": "hole"}),
]
VALUES = {"K": (260.0, 390.0), "cm^-3": (1e14, 1e18), "nm": (500.0, 1000.0)}
WAVELENGTHS = {"free_carrier_absorption": (1300.0, 1600.0)}  # its model's range
# other units of each internal unit, with the factor or function that gives the internal value
OTHER_UNITS = {
    "K": ["K", "degC", "degF", "degR"],
    "cm^-3": ["cm^-3", "m^-3", "1/um^3", "1/mm^3"],
    "nm": ["nm", "um", "angstrom", "eV", "THz"],
}


def _kernel(name, fixed):
    return SI.kernel(name, **fixed)


def _plain_and_quantity(draw, units, kernel):
    low, high = WAVELENGTHS.get(kernel, VALUES[units]) if units == "nm" else VALUES[units]
    shape = draw(st.sampled_from([(), (3,), (2, 1)]))
    values = draw(
        st.lists(st.floats(low, high), min_size=int(np.prod(shape)), max_size=int(np.prod(shape)))
    )
    plain = np.asarray(values, dtype=float).reshape(shape)
    other = draw(st.sampled_from(OTHER_UNITS[units]))
    context = ("sp",) if units == "nm" else ()
    given_as = Q_(plain, units).to(other, *context)
    return plain[()] if shape == () else plain, given_as


@st.composite
def kernel_calls(draw):
    name, fixed = draw(st.sampled_from(KERNELS))
    kernel = _kernel(name, fixed)
    plain, quantities = {}, {}
    for argument, units in kernel.inputs.items():
        plain[argument], quantities[argument] = _plain_and_quantity(draw, units, name)
    return kernel, plain, quantities


def _arrays(result):
    parts = result if isinstance(result, tuple) else (result,)
    return [np.asarray(p, dtype=float) for p in parts]


@settings(deadline=None, max_examples=150)
@given(kernel_calls())
def test_a_kernel_converts_quantities_to_its_internal_units(call):
    kernel, plain, quantities = call
    expected = _arrays(kernel(**plain))
    for got, want in zip(_arrays(kernel(**quantities)), expected, strict=True):
        np.testing.assert_allclose(got, want, rtol=1e-9)  # (a unit conversion's rounding)


@settings(deadline=None, max_examples=60)
@given(kernel_calls())
def test_kernel_check_converts_quantities_too(call):
    kernel, plain, quantities = call
    # (the 300 K lifetime models warn at these temperatures: the messages are compared)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        assert kernel.check(**quantities) == kernel.check(**plain)


def test_degrees_celsius_is_not_kelvin_in_a_kernel():
    gap = SI.kernel("band_gap")
    assert gap(Q_(27.0, "degC")) == pytest.approx(gap(300.15), rel=1e-14)
    with pytest.warns(matprops.ValidityWarning, match="1173.15 K"):
        assert gap.check(Q_(900.0, "degC"))  # 1173 K, not 900 K (inside 0-600 K)


@pytest.mark.parametrize("value", [Q_(3.0, "m"), Q_(300.0, "s"), Q_([1.0, 2.0], "eV/K")])
def test_a_quantity_of_the_wrong_dimension_is_a_unit_error(value):
    with pytest.raises(matprops.UnitError, match="argument 'temperature'"):
        SI.kernel("band_gap")(value)
    with pytest.raises(matprops.UnitError, match="argument 'temperature'"):
        SI.kernel("band_gap").check(value)


@settings(deadline=None, max_examples=40)
@given(
    st.sampled_from(
        [np.int8, np.int16, np.int32, np.int64, np.uint16, np.uint64, bool, np.complex128]
    ),
    st.sampled_from([3, 40_000]),  # one block, and several
    st.sampled_from(["band_gap", "intrinsic_density", "absorption"]),
)
def test_out_of_a_non_float_dtype_is_refused(dtype, size, name):
    kernel = SI.kernel(name)
    inputs = {
        a: np.full(size, VALUES[u][0] if u != "nm" else 800.0) for a, u in kernel.inputs.items()
    }
    out = np.zeros(size, dtype=dtype)
    with pytest.raises(TypeError, match="floating-point array"):
        kernel(**inputs, out=out)
    assert not out.any()  # nothing written


@pytest.mark.parametrize("dtype", [np.float32, np.float64])
def test_out_of_a_float_dtype_is_filled(dtype):
    kernel = SI.kernel("band_gap")
    out = np.zeros(40_000, dtype=dtype)
    kernel(np.full(40_000, 300.0), out=out)
    np.testing.assert_allclose(out, kernel(300.0), rtol=1e-6)


def test_derivatives_refuse_an_integer_out():
    kernel = SI.kernel("band_gap")
    value, partial = np.zeros(4, dtype=np.int32), np.zeros(4)
    with pytest.raises(TypeError, match="floating-point array"):
        kernel.derivatives(np.full(4, 300.0), out=(value, {"temperature": partial}))


# ------------------------------------------------------------------ dates and durations

_NUMPY_UNITS = ["s", "ms", "m", "h", "D"]
dates_and_durations = st.one_of(
    st.builds(np.timedelta64, st.integers(1, 10_000), st.sampled_from(_NUMPY_UNITS)),
    st.builds(np.datetime64, st.sampled_from(["2026-01-01", "2026-06-30T12:00", "1970-01-01"])),
    st.builds(
        lambda n, unit: np.arange(1, n + 1).astype(f"timedelta64[{unit}]"),
        st.integers(1, 5),
        st.sampled_from(_NUMPY_UNITS),
    ),
    st.builds(
        lambda n: np.datetime64("2026-01-01") + np.arange(n).astype("timedelta64[D]"),
        st.integers(1, 5),
    ),
    st.builds(lambda s: datetime.timedelta(seconds=s), st.integers(1, 10_000)),
    st.just(datetime.datetime(2026, 1, 1, 12)),
    st.just(datetime.date(2026, 1, 1)),
    st.builds(lambda n: [datetime.timedelta(seconds=300)] * n, st.integers(1, 3)),
)


@settings(deadline=None, max_examples=80)
@given(dates_and_durations)
def test_dates_and_durations_are_refused_by_the_public_methods(value):
    for call in (
        lambda: SI.band_gap(value),
        lambda: SI.intrinsic_density(value),
        lambda: SI.mobility("electron", 300.0, Nd=value),
        lambda: SI.absorption(value, 300.0),
        lambda: SI.band_gap(Q_(value, "K")) if not isinstance(value, list) else SI.band_gap(value),
    ):
        with pytest.raises(matprops.UnitError, match="date|duration"):
            call()


@settings(deadline=None, max_examples=60)
@given(dates_and_durations, st.sampled_from(["band_gap", "intrinsic_density", "lattice_constant"]))
def test_dates_and_durations_are_refused_by_kernels_and_their_checks(value, name):
    kernel = SI.kernel(name)
    with pytest.raises(matprops.UnitError, match="date|duration"):
        kernel(value)
    with pytest.raises(matprops.UnitError, match="date|duration"):
        kernel.check(value)


@settings(deadline=None, max_examples=30)
@given(dates_and_durations)
def test_dates_and_durations_are_refused_by_tables(value):
    with pytest.raises(matprops.UnitError, match="date|duration"):
        SI.table(["band_gap"], T=value)
    with pytest.raises(matprops.UnitError, match="date|duration"):
        SI.table(["mobility"], T=300.0, Na=value, carrier="electron")


@pytest.mark.parametrize("text", ["2026-01-01", "12:00:00", "300 s", "P1D"])
def test_the_command_line_refuses_dates_and_durations(text, capsys):
    from matprops.cli import main

    assert main(["table", "band_gap", "--temperature", text]) == 2
    err = capsys.readouterr().err
    assert err.startswith("matprops: error: option --temperature") and len(err.splitlines()) == 1


@settings(deadline=None, max_examples=30)
@given(st.integers(min_value=309, max_value=5000), st.sampled_from(["int", "list", "quantity"]))
def test_a_python_integer_beyond_a_float_is_an_input_error(exponent, form):
    huge = 10**exponent
    value = {"int": huge, "list": [300, huge], "quantity": Q_(huge, "K")}[form]
    with pytest.raises(matprops.InputError, match="argument 'temperature' must be finite"):
        SI.band_gap(value)
