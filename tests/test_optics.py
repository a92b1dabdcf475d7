"""Absorption, refractive index, free-carrier absorption and Beer-Lambert tools,
checked against independent data sets, published values and common practice."""

import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import matprops
from matprops import optics


def absorption(model_id, wavelength, temperature=300.0):
    si = matprops.silicon(models={"absorption": model_id})
    return si.absorption(wavelength, temperature).m_as("1/cm")


def quiet(function, *args):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        return function(*args)


# ---------------------------------------------------------------- external checks

def test_green_2008_against_schinke_2015():
    # Two independent measurements: Green 2008 (Sol. Energ. Mater. Sol. Cells 92, 1305;
    # 300 K) and Schinke et al. 2015 (AIP Advances 5, 067168; 295 K). At 400-1150 nm
    # they agree within 15 %; the largest spread, 13 % at 470 nm, is Schinke above
    # Green (Schinke's stated uncertainty near 600 nm is 11 %).
    lam = np.arange(400.0, 1151.0, 10.0)
    green = absorption("green-2008", lam)
    schinke = quiet(absorption, "schinke-2015", lam, 300.0)
    assert np.max(np.abs(schinke / green - 1)) < 0.15


def test_common_practice_values_at_300K(si):
    # common practice: alpha ~ 1e3 /cm near 800 nm and ~ 1e2 /cm just below 1000 nm;
    # 90 % absorption then needs ~23 um and ~230 um of silicon
    lam = np.arange(700.0, 1050.0, 1.0)
    alpha = si.absorption(lam, 300).m_as("1/cm")
    at_1e3 = lam[np.argmin(np.abs(np.log(alpha / 1e3)))]
    at_1e2 = lam[np.argmin(np.abs(np.log(alpha / 1e2)))]
    assert 760 <= at_1e3 <= 820
    assert 950 <= at_1e2 < 1000
    d90 = optics.thickness_for_absorbed_fraction(si.absorption([at_1e3, at_1e2], 300), 0.9)
    np.testing.assert_allclose(d90.m_as("um"), [23.0, 230.0], rtol=0.05)


def test_direct_gap_edge():
    # common practice: silicon's lowest direct gap, ~3.4 eV, lies at ~365 nm; above it
    # alpha rises by an order of magnitude (Green 2008: 9.3e4 /cm at 400 nm, ~1e6 at 350)
    assert optics.photon_energy(365).m_as("eV") == pytest.approx(3.4, abs=0.01)
    assert optics.wavelength(matprops.Q_(3.4, "eV")).m_as("nm") == pytest.approx(365, abs=1)
    assert absorption("green-2008", 350.0) / absorption("green-2008", 400.0) > 8


def test_green_2008_printed_values():
    # Green 2008, Table 1 (300 K), as transcribed in the open refractive-index database
    # (CC0): alpha = 1.11e4, 4.14e3, 1.90e3, 850, 64, 3.5 /cm at 500, 600, 700, 800,
    # 1000, 1100 nm (the 600 and 700 nm values here are from memory: the database's
    # rounded k gives 4.17e3 and 1.89e3)
    lam = [500.0, 600.0, 700.0, 800.0, 1000.0, 1100.0]
    printed = [1.11e4, 4.14e3, 1.90e3, 850.0, 64.0, 3.5]
    np.testing.assert_allclose(absorption("green-2008", lam), printed, rtol=0.01)


def test_rajkanan_against_green_2008():
    # Rajkanan, Singh & Shewchun 1979 (Solid-State Electron. 22, 793) fitted the data
    # of their day; against Green 2008 at 300 K it runs 14-57 % high at 450-1050 nm
    # (a known spread, noted in the model file). The authors' own accuracy claim could
    # not be looked up here; this checks the model stays within a factor 1.6 of modern
    # data over 1.18-2.76 eV, and within 10 % near the 400-nm crossing.
    lam = np.arange(450.0, 1051.0, 25.0)
    ratio = absorption("rajkanan-1979", lam) / absorption("green-2008", lam)
    assert np.all((ratio > 0.9) & (ratio < 1.6))
    assert absorption("rajkanan-1979", 400.0) / absorption("green-2008", 400.0) == \
        pytest.approx(1.0, abs=0.1)


def test_temperature_dependence_against_an_independent_model():
    # The default (Green 2008 scaled by Franta et al. 2017, Appl. Surf. Sci. 421, 405)
    # against the independent temperature dependence of Rajkanan et al. 1979: the
    # ratio alpha(T)/alpha(300 K) agrees within 12 % at 600-1050 nm for 250-400 K.
    si = matprops.silicon()
    lam = np.arange(600.0, 1051.0, 50.0)
    raj = matprops.silicon(models={"absorption": "rajkanan-1979"})
    for t in (250.0, 350.0, 400.0):
        ours = (si.absorption(lam, t) / si.absorption(lam, 300.0)).m_as("")
        theirs = (raj.absorption(lam, t) / raj.absorption(lam, 300.0)).m_as("")
        np.testing.assert_allclose(ours, theirs, rtol=0.12)


def test_band_edge_rises_with_temperature_like_published_series():
    # near the edge alpha roughly doubles from 300 to 350 K at 1050 nm and halves from
    # 300 to 250 K (Franta et al. 2017 series; Rajkanan et al. 1979: x1.75 and x0.53)
    si = matprops.silicon()
    a = si.absorption(1050.0, [250.0, 300.0, 350.0]).m_as("1/cm")
    assert 1.5 < a[2] / a[1] < 2.2
    assert 0.4 < a[0] / a[1] < 0.6


def test_default_equals_green_at_its_reference_temperature(si):
    lam = np.arange(250.0, 1181.0, 10.0)
    np.testing.assert_allclose(si.absorption(lam, 300.0).m_as("1/cm"),
                               absorption("green-2008", lam), rtol=1e-12)


def test_refractive_index():
    si = matprops.silicon()
    # Green 2008: n(600 nm, 300 K) = 3.94 (as in the open database); common practice
    assert si.refractive_index(600, 300).m_as("") == pytest.approx(3.94, abs=0.005)
    # Schinke et al. 2015 (independent, 295 K): within 0.5 % of Green at 500-1400 nm
    lam = np.arange(500.0, 1401.0, 50.0)
    sch = matprops.silicon(models={"refractive_index": "schinke-2015"})
    np.testing.assert_allclose(quiet(sch.refractive_index, lam, 300.0).m_as(""),
                               si.refractive_index(lam, 300.0).m_as(""), rtol=0.005)
    # thermo-optic coefficient near 1.4 um about 1.8e-4 /K at room temperature
    # (Frey, Leviton & Madison 2006, Proc. SPIE 6273, 62732J; from memory)
    dn = (si.refractive_index(1400, 310) - si.refractive_index(1400, 290)).m_as("") / 20
    assert 1.5e-4 < dn < 2.2e-4


def test_free_carrier_absorption():
    schroder = matprops.silicon()
    soref = matprops.silicon(models={"free_carrier_absorption": "soref-1987"})
    # Soref & Bennett 1987 (IEEE J. Quantum Electron. 23, 123), from memory:
    # 8.5e-18 N + 6.0e-18 P at 1.55 um
    assert soref.free_carrier_absorption(1550, n=1e18).m_as("1/cm") == pytest.approx(8.5)
    assert soref.free_carrier_absorption(1550, p=1e18).m_as("1/cm") == pytest.approx(6.0)
    # holes: the lambda^2 form quoted from Schroder et al. 1978 agrees with Soref &
    # Bennett at 1550 nm within 10 % (two independent sources)
    a = schroder.free_carrier_absorption(1550, p=1e16).m_as("1/cm")
    b = soref.free_carrier_absorption(1550, p=1e16).m_as("1/cm")
    assert a == pytest.approx(b, rel=0.10)
    # linear in density, additive in carriers, scales as lambda^2
    two = schroder.free_carrier_absorption(2000, n=1e16, p=1e16).m_as("1/cm")
    one = schroder.free_carrier_absorption(1000, n=1e16, p=1e16).m_as("1/cm")
    assert two == pytest.approx(4 * one)
    with pytest.warns(matprops.ValidityWarning, match=r"electron_density .* 0-3e\+16"):
        schroder.free_carrier_absorption(1550, n=1e19)


# ---------------------------------------------------------------- validity and errors

def test_wavelength_outside_table_warns_names_fallback_and_gives_nan():
    si = matprops.silicon(models={"absorption": "green-2008"})
    with pytest.warns(matprops.ValidityWarning,
                      match=r"absorption/green-2008: wavelength 200 nm .* 250-1450 nm.*"
                            r"NaN.*'franta-2017'"):
        value = si.absorption(200, 300)
    assert np.isnan(value.m_as("1/cm"))
    with pytest.raises(matprops.ValidityError):
        matprops.silicon(models={"absorption": "green-2008"}, strict=True).absorption(200, 300)


def test_fallback_covers_it():
    si = matprops.silicon(models={"absorption": "franta-2017"})
    assert si.absorption(250, 300).m_as("1/cm") > 1e6


def test_temperature_outside_single_temperature_table_warns():
    with pytest.warns(matprops.ValidityWarning, match="temperature 350 K .* 295-305 K"):
        matprops.silicon(models={"absorption": "green-2008"}).absorption(800, 350)


def test_energy_and_frequency_are_converted(si):
    by_nm = si.absorption(1000.0, 300).m_as("1/cm")
    by_ev = si.absorption(matprops.Q_(1239.84198 / 1000.0, "eV"), 300).m_as("1/cm")
    by_um = si.absorption(matprops.Q_(1.0, "um"), 300).m_as("1/cm")
    by_thz = si.absorption(matprops.Q_(299.792458, "THz"), 300).m_as("1/cm")
    np.testing.assert_allclose([by_ev, by_um, by_thz], by_nm, rtol=1e-6)


@pytest.mark.parametrize("bad, error, pattern", [
    (0, matprops.InputError, r"'wavelength' must be > 0 nm"),
    (-5, matprops.InputError, r"'wavelength' must be > 0 nm"),
    (matprops.Q_(-1, "eV"), matprops.InputError, r"'wavelength' must be > 0"),
    (matprops.Q_(3, "s"), matprops.UnitError, r"'wavelength' expects a quantity in nm or as a photon energy"),
    (matprops.Q_(3, "kg"), matprops.UnitError, r"'wavelength'"),
])
def test_bad_wavelengths(si, bad, error, pattern):
    with pytest.raises(error, match=pattern):
        si.absorption(bad, 300)


def test_beer_lambert_tools():
    alpha = matprops.Q_(1e3, "1/cm")
    assert optics.absorption_depth(alpha).m_as("um") == pytest.approx(10.0)
    assert optics.transmitted_fraction(alpha, matprops.Q_(10, "um")).m_as("") == \
        pytest.approx(np.exp(-1))
    assert optics.absorbed_fraction(1e3, 10e-4).m_as("") == pytest.approx(1 - np.exp(-1))
    d = optics.thickness_for_absorbed_fraction(alpha, [0.5, 0.9, 0.99])
    np.testing.assert_allclose(d.m_as("um"), 10 * np.log([2, 10, 100]))
    # along a wavelength grid with a thickness grid: broadcasting
    si = matprops.silicon()
    lam = np.array([500.0, 800.0, 1000.0])[:, None]
    alpha, fraction = optics.absorbed_fraction_spectrum(
        si, lam, matprops.Q_([10, 100, 180], "um")[None, :], 300)
    assert fraction.shape == (3, 3)
    f = fraction.m_as("")
    assert np.all(np.diff(f, axis=1) >= 0) and np.all(np.diff(f[2]) > 0)  # thicker absorbs more


@pytest.mark.parametrize("call, pattern", [
    (lambda: optics.thickness_for_absorbed_fraction(1e3, 1.0), "'fraction' must be between 0 and 1"),
    (lambda: optics.thickness_for_absorbed_fraction(1e3, 0.0), "'fraction' must be > 0"),
    (lambda: optics.thickness_for_absorbed_fraction(1e3, 1.5), "'fraction'"),
    (lambda: optics.absorbed_fraction(1e3, -1e-4), "'thickness' must be > 0 cm"),
    (lambda: optics.absorbed_fraction(1e3, 0), "'thickness' must be > 0 cm"),
    (lambda: optics.absorbed_fraction(-1.0, 1e-4), "'absorption_coefficient' must be >= 0"),
    (lambda: optics.absorption_depth(0.0), "'alpha'"),
    (lambda: optics.photon_energy(matprops.Q_(1, "kg")), "'wavelength'"),
])
def test_beer_lambert_bad_input(call, pattern):
    with pytest.raises(matprops.Error, match=pattern):
        call()


def test_thickness_must_be_a_length():
    with pytest.raises(matprops.UnitError, match="'thickness' expects a quantity in cm"):
        optics.absorbed_fraction(1e3, matprops.Q_(1, "eV"))


# ---------------------------------------------------------------- properties

@settings(deadline=None, max_examples=50)
@given(st.floats(400, 1179), st.floats(1, 40), st.floats(80, 495))
def test_alpha_positive_and_decreasing_with_wavelength(lam, step, t):
    si = matprops.silicon()
    a = si.absorption(np.array([lam, min(lam + step, 1180.0)]), t).m_as("1/cm")
    assert np.all(a > 0)
    assert a[1] <= a[0]


@settings(deadline=None, max_examples=50)
@given(st.floats(950, 1150), st.floats(80, 480), st.floats(5, 100))
def test_alpha_rises_with_temperature_near_the_edge(lam, t, dt):
    si = matprops.silicon()
    a = si.absorption(lam, np.array([t, min(t + dt, 500.0)])).m_as("1/cm")
    assert a[1] > a[0]
