"""Bad input gets a clear error; validity limits give a warning or, if strict, an error."""

import warnings

import numpy as np
import pytest

import matprops


@pytest.mark.parametrize(
    "bad, pattern",
    [
        (0, r"'temperature' must be > 0 K; received 0 K"),
        (-5.0, r"'temperature' must be > 0 K; received -5 K"),
        ([300, -1], r"> 0 K; received -1 K"),
        (float("nan"), r"'temperature' must be finite"),
        ([300, np.inf], r"finite"),
        (matprops.Q_(-300, "degC"), r"> 0 K; received -26.85 K"),
    ],
)
def test_unphysical_temperature(si, bad, pattern):
    with pytest.raises(matprops.InputError, match=pattern) as info:
        si.band_gap(bad)
    assert isinstance(info.value, ValueError)
    assert info.value.argument == "temperature"


def test_length_passed_as_temperature(si):
    with pytest.raises(
        matprops.UnitError, match=r"'temperature' expects a quantity in K.*meter"
    ) as info:
        si.band_gap(matprops.Q_(300, "m"))
    assert isinstance(info.value, TypeError)


@pytest.mark.parametrize("text", ["banana", "300 bananas", "12 glorbs per fortnight"])
def test_string_that_is_not_a_unit(si, text):
    with pytest.raises(matprops.UnitError, match="'temperature'"):
        si.band_gap(text)


def test_non_numeric_input(si):
    with pytest.raises(matprops.UnitError, match="'temperature'"):
        si.band_gap(["hot", "cold"])
    with pytest.raises(matprops.UnitError):
        si.band_gap(True)


def test_negative_doping_is_rejected():
    from matprops.units import to_magnitude

    with pytest.raises(matprops.InputError, match=r"'donor_density' must be >= 0 cm\^-3"):
        to_magnitude(-1e15, "donor_density")
    assert to_magnitude(matprops.Q_(1e21, "m^-3"), "donor_density") == pytest.approx(1e15)


def test_unknown_model_lists_known_and_suggests():
    with pytest.raises(matprops.UnknownModelError) as info:
        matprops.silicon(models={"band_gap": "passler-2003"})
    message = str(info.value)
    assert "passler-2002" in message and "thurmond-1975" in message
    assert "Did you mean 'passler-2002'" in message
    assert isinstance(info.value, KeyError)


def test_unknown_quantity_and_release():
    with pytest.raises(matprops.UnknownQuantityError, match="Did you mean 'band_gap'"):
        matprops.silicon(models={"bandgap": "passler-2002"})
    with pytest.raises(matprops.UnknownReleaseError, match=r"known: 2026\.1"):
        matprops.silicon(release="2025.9")
    with pytest.raises(matprops.UnknownQuantityError, match="intrinsic_density"):
        matprops.silicon().provenance("intrinsic_densty")
    with pytest.raises(matprops.UnknownQuantityError):
        matprops.models("mobilty")


def test_validity_warning_names_model_input_and_range(si):
    with pytest.warns(
        matprops.ValidityWarning, match=r"band_gap/passler-2002: temperature 700 K .* 0-600 K"
    ):
        value = si.band_gap(700)
    assert 0.9 < value.m_as("eV") < 1.1  # the value is still returned


def test_warning_points_at_the_caller(si):
    with pytest.warns(matprops.ValidityWarning) as record:
        si.intrinsic_density(20)
    assert record[0].filename == __file__


def test_strict_makes_it_an_error():
    strict = matprops.silicon(strict=True)
    with pytest.raises(matprops.ValidityError, match="couderc-2014.*77-500 K"):
        strict.intrinsic_density([300, 600])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        strict.intrinsic_density(300)  # inside: no warning, no error


def test_composed_model_checks_its_components():
    si = matprops.silicon(models={"intrinsic_density": "boltzmann"})
    with pytest.warns(matprops.ValidityWarning, match="densities_of_states/couderc-2014"):
        si.intrinsic_density(50)


# ------------------------------------------------------------------ masked arrays (refused)


@pytest.mark.parametrize(
    "value",
    [
        np.ma.masked_array([300.0, -1e20], mask=[False, True]),  # a masked fill value
        np.ma.masked_array([300.0, 310.0], mask=[False, False]),  # nothing masked: still refused
        matprops.Q_(np.ma.masked_array([300.0, 1.0], mask=[False, True]), "K"),
        matprops.Q_(np.ma.masked_array([25.0, 1e9], mask=[False, True]), "degC"),
    ],
)
def test_masked_input_is_refused_not_evaluated(si, value):
    # before: the masked values were evaluated (a gap of -1.99 eV) or the mask dropped
    with pytest.raises(
        matprops.InputError,
        match=r"'temperature' must be .*not a masked "
        r"array.*compressed\(\)",
    ) as info:
        si.band_gap(value)
    assert info.value.argument == "temperature"


def test_masked_input_is_refused_by_every_door(si):
    masked = np.ma.masked_array([800.0, 900.0], mask=[False, True])
    with pytest.raises(matprops.InputError, match="'wavelength'.*masked"):
        si.absorption(masked, 300)
    from matprops import optics

    with pytest.raises(matprops.InputError, match="'thickness'.*masked"):
        optics.absorbed_fraction(10.0, matprops.Q_(masked, "cm"))


# ------------------------------------------------------------------ booleans, complex, deltas


@pytest.mark.parametrize(
    "value, pattern",
    [
        (np.array([True, False]), r"'temperature' expects a quantity in K.*received a boolean"),
        ([True, True], r"received a boolean"),
        (np.bool_(True), r"received a boolean"),
        (np.array([300 + 1j, 310 + 0j]), r"received a complex .*only real numbers"),
        (300 + 0j, r"received a complex"),
        (matprops.Q_(np.array([300 + 1j]), "K"), r"received a complex"),
        (matprops.Q_(np.array([True]), "K"), r"received a boolean"),
    ],
)
def test_booleans_and_complex_numbers_are_refused(si, value, pattern):
    # before: True was taken as 1 K; complex values lost their imaginary part silently
    with pytest.raises(matprops.UnitError, match=pattern) as info:
        si.band_gap(value)
    assert info.value.argument == "temperature"


@pytest.mark.parametrize(
    "value",
    [matprops.Q_(10, "delta_degC"), matprops.Q_([5.0, 300.0], "delta_degF"), "300 delta_degC"],
)
def test_temperature_difference_is_not_a_temperature(si, value):
    # before: 10 delta_degC was read as 10 K (a gap of 1.17 eV came back)
    with pytest.raises(
        matprops.UnitError,
        match=r"'temperature' expects a quantity in K, "
        r"degC or degF \(an absolute temperature\).*difference",
    ) as info:
        si.band_gap(value)
    assert isinstance(info.value, TypeError)


def test_kelvin_and_celsius_still_work(si):
    assert si.band_gap(matprops.Q_(26.85, "degC")).m_as("eV") == pytest.approx(
        si.band_gap(300).m_as("eV"), rel=1e-12
    )
    assert si.band_gap(np.array([300], dtype=np.int32)).shape == (1,)
    assert si.band_gap(np.float32(300)).m_as("eV") == pytest.approx(1.1243, abs=1e-4)


# ------------------------------------------------------------------ messages that say what happened


def test_none_is_reported_as_none(si):
    # before: "must be finite numbers in K; received array(nan)"
    with pytest.raises(matprops.UnitError, match=r"'temperature' expects .*received None$"):
        si.band_gap(None)
    with pytest.raises(matprops.UnitError, match=r"received \[300, None\]"):
        si.band_gap([300, None])


def test_list_of_quantities_is_accepted(si):
    # before: "expects a quantity in K ... received [<Quantity(300, 'kelvin')>, ...]"
    Q_ = matprops.Q_
    expected = si.band_gap([300.0, 310.0]).m_as("eV")
    np.testing.assert_allclose(si.band_gap([Q_(300, "K"), Q_(310, "K")]).m_as("eV"), expected)
    np.testing.assert_allclose(
        si.band_gap((Q_(26.85, "degC"), Q_(310, "K"))).m_as("eV"), expected, rtol=1e-12
    )


def test_list_mixing_kinds_says_so(si):
    Q_ = matprops.Q_
    with pytest.raises(matprops.UnitError, match=r"mixes plain numbers and quantities"):
        si.band_gap([300, Q_(310, "K")])
    with pytest.raises(matprops.UnitError, match=r"'temperature' expects a quantity in K.*meter"):
        si.band_gap([Q_(300, "K"), Q_(3, "m")])


def test_table_accepts_a_single_quantity_name(si):
    # before: "unknown quantity 'b'"
    data = si.table("band_gap", temperature=[300, 350])
    assert list(data.data_vars) == ["band_gap", "band_gap_validity"]


def test_shapes_that_do_not_broadcast_name_both_arguments(si):
    # before: a bare numpy "operands could not be broadcast together"
    with pytest.raises(
        matprops.InputError,
        match=r"'temperature' must be .*broadcasts \(numpy rules\) with "
        r"'wavelength' of shape \(3,\); received shape \(4,\)",
    ):
        si.absorption([800, 900, 1000], [250, 300, 350, 400])
    with pytest.raises(matprops.InputError, match=r"'hole_density'.*broadcast"):
        si.free_carrier_absorption([1300, 1500], n=[1e16, 1e17], p=[1e16, 1e17, 1e18])
    from matprops import optics

    with pytest.raises(matprops.InputError, match=r"'thickness'.*broadcast"):
        optics.absorbed_fraction([10.0, 20.0], matprops.Q_([1e-4, 2e-4, 3e-4], "cm"))
    assert si.absorption([[800], [900]], [250, 300, 350]).shape == (2, 3)  # still broadcasts


@pytest.mark.parametrize("flag", ["no", "False", 0, 1, None, "yes"])
def test_strict_takes_only_true_or_false(flag):
    # before: strict='no' was read as True (a non-empty string)
    with pytest.raises(matprops.InputError, match=r"'strict' must be True or False"):
        matprops.silicon(strict=flag)
    assert matprops.silicon(strict=np.bool_(True)).strict is True


# ---------------------------------------------------- found by the sweep (test_sweep.py)


@pytest.mark.parametrize(
    "call",
    [
        lambda si: si.provenance(["band_gap"]),
        lambda si: si.model(3),
        lambda si: si.kernel(None),
        lambda si: si.cite(quantities=3),
        lambda si: si.sources(7),
        lambda si: si.table(5, temperature=300),
        lambda si: si.table([["band_gap"]], temperature=300),
        lambda si: si.compare(["band_gap"], temperature=300),
        lambda si: si.compare("band_gap", models=3, temperature=300),
    ],
)
def test_names_that_are_not_text_are_refused(si, call):
    # before: TypeError (unhashable type, int not iterable) from inside the method
    with pytest.raises(
        matprops.InputError, match=r"must be (a name|a quantity name|quantity names)"
    ):
        call(si)


@pytest.mark.parametrize(
    "function, value, argument",
    [
        ("photon_energy", 5e-324, "wavelength"),
        ("wavelength", 1e-310, "energy"),
        ("absorption_depth", 5e-324, "alpha"),
    ],
)
def test_reciprocal_that_overflows_is_refused(function, value, argument):
    # before: inf returned without a word (and numpy's overflow warning)
    from matprops import optics

    with warnings.catch_warnings():
        warnings.simplefilter("error")
        with pytest.raises(matprops.InputError, match=rf"'{argument}' must be large enough"):
            getattr(optics, function)(value)


@pytest.mark.parametrize("keyword", ["Na", "Nd"])
def test_none_doping_is_reported(keyword):
    # before: KeyError('acceptor_density') from inside the narrowing
    si = matprops.silicon(models={"gap_narrowing": "klaassen-1992"})
    with pytest.raises(matprops.UnitError, match=rf"'{keyword}' expects .*received None"):
        si.gap_narrowing(300, **{keyword: None})
    with pytest.raises(matprops.UnitError, match=r"'temperature' expects .*received None"):
        si.gap_narrowing(None)
