"""Absorption, refractive index, free-carrier absorption and Beer-Lambert tools,
checked against independent data sets, published values and common practice."""

import numpy as np
import pytest
from helpers import quiet
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from outside_data import green_2008_copy, green_temperature_ratio

import matprops
from matprops import optics


def absorption(model_id, wavelength, temperature=300.0):
    si = matprops.silicon(models={"absorption": model_id})
    return si.absorption(wavelength, temperature).m_as("1/cm")


# ---------------------------------------------------------------- external checks


@pytest.mark.model("absorption/green-2008", "absorption/schinke-2015")
def test_green_2008_against_schinke_2015():
    # Two independent measurements: Green 2008 (Sol. Energ. Mater. Sol. Cells 92, 1305;
    # 300 K) and Schinke et al. 2015 (AIP Advances 5, 067168; 295 K). Schinke et al.
    # state relative uncertainties of alpha of 11 % at 600 nm and 12 % at 1200 nm
    # (abstract); Green states none. Taking Green's uncertainty as comparable to
    # Schinke's (an assumption), the difference of the two independent measurements has
    # a standard uncertainty of 11 % x sqrt(2) = 16 %: they must agree within that.
    lam = np.arange(400.0, 1151.0, 10.0)
    green = absorption("green-2008", lam)
    schinke = quiet(absorption, "schinke-2015", lam, 300.0)
    assert np.max(np.abs(schinke / green - 1)) < 0.11 * np.sqrt(2)


@pytest.mark.model("absorption/green-2008-franta-2017")
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


@pytest.mark.model("absorption/green-2008")
def test_direct_gap_edge():
    # common practice: silicon's lowest direct gap, ~3.4 eV, lies at ~365 nm; above it
    # alpha rises by an order of magnitude (Green 2008: 9.3e4 /cm at 400 nm, ~1e6 at 350)
    assert optics.photon_energy(365).m_as("eV") == pytest.approx(3.4, abs=0.01)
    assert optics.wavelength(matprops.Q_(3.4, "eV")).m_as("nm") == pytest.approx(365, abs=1)
    assert absorption("green-2008", 350.0) / absorption("green-2008", 400.0) > 8


@pytest.mark.model("absorption/green-2008", "refractive_index/green-2008")
def test_green_2008_table_matches_an_independent_copy():
    # Outside check of the committed table (built from the open refractive-index
    # database): Green 2008's Table 1 as transcribed independently in the source of the
    # device simulator Genius TCAD Open (tests/data; its header names the file). The
    # printed alpha has three significant figures, so the two may differ by half a unit
    # of the third figure (0.5 %); n is printed to three decimals (half a unit: 0.0005).
    lam, alpha, n, _, _ = green_2008_copy()
    table = matprops.catalogue.store.default_catalogue().table("green-2008.nc")
    np.testing.assert_array_equal(table.wavelength.values, lam)
    np.testing.assert_allclose(table.absorption_coefficient.values, alpha, rtol=0.005)
    np.testing.assert_allclose(table.refractive_index.values, n, rtol=0, atol=0.0005)
    np.testing.assert_allclose(quiet(absorption, "green-2008", lam), alpha, rtol=0.005)


@pytest.mark.model("absorption/green-2008-franta-2017", "absorption/rajkanan-1979")
def test_temperature_dependence_against_green_2008_coefficients():
    # Outside check: Green 2008 publishes temperature coefficients C(lambda) of alpha,
    # here as transcribed in Genius TCAD Open (tests/data) and applied as there,
    # alpha(T) = alpha(300 K) (T/300 K)^(300 K C). Near room temperature (250-350 K) and
    # where band-to-band absorption is strong (500-1050 nm), the default's ratio
    # alpha(T)/alpha(300 K) must agree with Green's within the spread between independent
    # determinations: the largest difference between Green's coefficients and the
    # independent temperature dependence of Rajkanan et al. 1979 at the same points.
    lam = np.arange(500.0, 1051.0, 10.0)
    si = matprops.silicon()
    raj = matprops.silicon(models={"absorption": "rajkanan-1979"})
    ours, spread = [], []
    for t in (250.0, 275.0, 325.0, 350.0):
        green = green_temperature_ratio(lam, t)
        ours.append((si.absorption(lam, t) / si.absorption(lam, 300.0)).m_as("") / green)
        spread.append((raj.absorption(lam, t) / raj.absorption(lam, 300.0)).m_as("") / green)
    tolerance = np.max(np.abs(np.array(spread) - 1))
    assert np.max(np.abs(np.array(ours) - 1)) <= tolerance
    # the direction everywhere (common practice): absorption grows with temperature
    alpha = si.absorption(lam[:, None], np.array([250.0, 300.0, 350.0])).m_as("1/cm")
    assert np.all(np.diff(alpha, axis=1) > 0)


@pytest.mark.model("refractive_index/green-2008-franta-2017", "refractive_index/schinke-2015")
def test_refractive_index():
    si = matprops.silicon()
    # Green 2008: n(600 nm, 300 K) = 3.94 (as in the open database); common practice
    assert si.refractive_index(600, 300).m_as("") == pytest.approx(3.94, abs=0.005)
    # Schinke et al. 2015 (independent, 295 K): within 0.5 % of Green at 500-1400 nm
    lam = np.arange(500.0, 1401.0, 50.0)
    sch = matprops.silicon(models={"refractive_index": "schinke-2015"})
    np.testing.assert_allclose(
        quiet(sch.refractive_index, lam, 300.0).m_as(""),
        si.refractive_index(lam, 300.0).m_as(""),
        rtol=0.005,
    )
    # thermo-optic coefficient near 1.4 um about 1.8e-4 /K at room temperature
    # (Frey, Leviton & Madison 2006, Proc. SPIE 6273, 62732J; from memory)
    dn = (si.refractive_index(1400, 310) - si.refractive_index(1400, 290)).m_as("") / 20
    assert 1.5e-4 < dn < 2.2e-4


@pytest.mark.model("refractive_index/franta-2017")
def test_refractive_index_in_the_infrared():
    # n of silicon at room temperature: 3.48 at 1550 nm (the telecom wavelength of
    # silicon photonics) and 3.42 at 5-10 um: common practice, two decimals
    franta = matprops.silicon(models={"refractive_index": "franta-2017"})
    n = franta.refractive_index([1550.0, 5000.0, 10000.0], 295.0).m_as("")
    np.testing.assert_allclose(n, [3.48, 3.42, 3.42], atol=0.005)


@pytest.mark.model("free_carrier_absorption/nedeljkovic-2011")
def test_free_carrier_default_coefficients_against_an_independent_copy():
    # Outside check of the copied coefficients: at 1.3 and 1.55 um the default's coefficients
    # (read in the Tidy3D source) must reproduce the equations quoted from L. Chrostowski
    # & M. Hochberg, Silicon Photonics Design (Cambridge University Press, 2015), as
    # transcribed in gdsfactory (see the model file): delta alpha = 3.48e-22 N^1.229 +
    # 1.02e-19 P^1.089 (labelled 1.31 um there) and 8.88e-21 N^1.167 + 5.84e-20 P^1.109
    # at 1.55 um. Same printed digits: agreement to rounding of the arithmetic.
    si = matprops.silicon()
    assert si.provenance("free_carrier_absorption")["model"] == "nedeljkovic-2011"
    density = np.array([1e17, 1e18, 1e19, 1e20])
    for lam, a, b, c, d in (
        (1300, 3.48e-22, 1.229, 1.02e-19, 1.089),
        (1550, 8.88e-21, 1.167, 5.84e-20, 1.109),
    ):
        np.testing.assert_allclose(
            si.free_carrier_absorption(lam, n=density).m_as("1/cm"), a * density**b, rtol=1e-10
        )
        np.testing.assert_allclose(
            si.free_carrier_absorption(lam, p=density).m_as("1/cm"), c * density**d, rtol=1e-10
        )


@pytest.mark.model(
    "free_carrier_absorption/nedeljkovic-2011",
    "free_carrier_absorption/soref-1987",
)
def test_free_carrier_default_is_superlinear_in_heavily_doped_silicon():
    # Outside checks from two abstracts (read): Isenberg & Warta 2004 (Appl. Phys. Lett.
    # 84, 2265) found the linear-in-density parameterisation valid only up to about
    # 3e16 cm^-3 and free-carrier absorption in heavily doped layers stronger than it;
    # Baker-Finch et al. 2014 (J. Appl. Phys. 116, 063106) found that earlier linear
    # parameterisations underestimate it in phosphorus (n-type) diffusions. So, per
    # carrier, the doped-layer default must exceed the linear forms at 1e19-1e20 cm^-3.
    si = matprops.silicon()
    linear = matprops.silicon(models={"free_carrier_absorption": "soref-1987"})
    for lam in (1300.0, 1550.0):
        for n in (1e19, 1e20):
            assert si.free_carrier_absorption(lam, n=n) > quiet(
                linear.free_carrier_absorption, lam, n
            )
    density = np.array([1e18, 1e19, 1e20])
    for kw in ("n", "p"):
        per_carrier = si.free_carrier_absorption(1550, **{kw: density}).m_as("1/cm") / density
        assert np.all(np.diff(per_carrier) > 0)


@pytest.mark.model(
    "free_carrier_absorption/nedeljkovic-2011",
    "free_carrier_absorption/schroder-1978",
)
def test_free_carrier_default_is_valid_for_doped_layers_and_linear_forms_are_not():
    si = matprops.silicon(strict=True)
    assert si.free_carrier_absorption(1550, n=1e19, p=0).m_as("1/cm") > 0  # no error
    with pytest.raises(matprops.ValidityError, match=r"wavelength 1000 nm .* 1300-14000 nm"):
        si.free_carrier_absorption(1000, n=1e19)
    schroder = matprops.silicon(models={"free_carrier_absorption": "schroder-1978"})
    with pytest.warns(matprops.ValidityWarning, match=r"electron_density .* 0-3e\+16"):
        schroder.free_carrier_absorption(1550, n=1e19)


@pytest.mark.model("free_carrier_absorption/nedeljkovic-2011")
def test_free_carrier_absorption_grows_with_wavelength():
    # common practice (Drude-like behaviour of free carriers): alpha rises with wavelength
    si = matprops.silicon()
    lam = np.array([1300.0, 1550.0, 2000.0, 3000.0, 5000.0, 8000.0])
    for kw in ({"n": 1e19}, {"p": 1e19}):
        assert np.all(np.diff(si.free_carrier_absorption(lam, **kw).m_as("1/cm")) > 0)


@pytest.mark.model("absorption/green-2008-franta-2017")
def test_low_temperature_band_edge_is_a_validity_region():
    # At 10-200 K band-to-band absorption ends at shorter wavelengths than at 300 K; the
    # default's temperature series keeps a floor there. Those points must warn.
    si = matprops.silicon()
    with pytest.warns(
        matprops.ValidityWarning,
        match=r"outside its validity region .* wavelength 1100 nm at "
        r"temperature 100 K, where the limit is 1045 nm",
    ):
        si.absorption(1100, 100)
    with pytest.raises(matprops.ValidityError, match="validity region"):
        matprops.silicon(strict=True).absorption([1000.0, 1150.0], [[10.0], [300.0]])
    # inside the region nothing is said, even on a grid that crosses temperatures
    si.absorption(np.array([800.0, 1000.0])[:, None], np.array([10.0, 300.0, 500.0])[None, :])
    si.absorption(1180.0, [250.0, 300.0, 500.0])
    region = si.provenance("absorption")["validity_regions"][0]
    assert region["input"] == "wavelength" and region["varies_with"] == "temperature"


@pytest.mark.model("absorption/green-2008-franta-2017")
def test_region_limit_at_low_temperature_respects_the_phonon_threshold():
    # Outside check (physics of an indirect gap, common practice): near 0 K no phonons
    # can be absorbed, so band-to-band absorption needs hv >= Eg(0) + the energy of the
    # weakest assisting phonon, the transverse acoustic one (about 18 meV in silicon);
    # with Eg(0) = 1.17 eV that is at most hc/(1.188 eV) = 1044 nm.
    model = matprops.catalogue.store.default_catalogue().model(
        "absorption", "green-2008-franta-2017"
    )
    (region,) = model.regions
    limit_at_10K = float(region.bound_at(10.0))
    threshold = optics.wavelength(matprops.Q_(1.17 + 0.018, "eV")).m_as("nm")
    assert limit_at_10K <= threshold
    # and at room temperature the region does not cut into the 300-K table (Green 2008
    # tabulates band-to-band absorption to 1180 nm and beyond)
    assert float(region.bound_at(300.0)) == model.validity["wavelength"].high


# ---------------------------------------------------------------- validity and errors


@pytest.mark.model("absorption/green-2008")
def test_wavelength_outside_table_warns_names_fallback_and_gives_nan():
    si = matprops.silicon(models={"absorption": "green-2008"})
    with pytest.warns(
        matprops.ValidityWarning,
        match=r"absorption/green-2008: wavelength 200 nm .* 250-1450 nm.*"
        r"NaN.*'franta-2017'",
    ):
        value = si.absorption(200, 300)
    assert np.isnan(value.m_as("1/cm"))
    with pytest.raises(matprops.ValidityError):
        matprops.silicon(models={"absorption": "green-2008"}, strict=True).absorption(200, 300)


@pytest.mark.model("absorption/franta-2017")
def test_fallback_covers_it():
    si = matprops.silicon(models={"absorption": "franta-2017"})
    assert si.absorption(250, 300).m_as("1/cm") > 1e6


@pytest.mark.model("absorption/green-2008")
def test_temperature_outside_single_temperature_table_warns():
    with pytest.warns(matprops.ValidityWarning, match="temperature 350 K .* 295-305 K"):
        matprops.silicon(models={"absorption": "green-2008"}).absorption(800, 350)


@pytest.mark.model("absorption/green-2008-franta-2017")
def test_energy_and_frequency_are_converted(si):
    by_nm = si.absorption(1000.0, 300).m_as("1/cm")
    by_ev = si.absorption(matprops.Q_(1239.84198 / 1000.0, "eV"), 300).m_as("1/cm")
    by_um = si.absorption(matprops.Q_(1.0, "um"), 300).m_as("1/cm")
    by_thz = si.absorption(matprops.Q_(299.792458, "THz"), 300).m_as("1/cm")
    np.testing.assert_allclose([by_ev, by_um, by_thz], by_nm, rtol=1e-6)


@pytest.mark.model("absorption/green-2008-franta-2017")
@pytest.mark.parametrize(
    "bad, error, pattern",
    [
        (0, matprops.InputError, r"'wavelength' must be > 0 nm"),
        (-5, matprops.InputError, r"'wavelength' must be > 0 nm"),
        (matprops.Q_(-1, "eV"), matprops.InputError, r"'wavelength' must be > 0"),
        (
            matprops.Q_(3, "s"),
            matprops.UnitError,
            r"'wavelength' expects a quantity in nm or as a photon energy",
        ),
        (matprops.Q_(3, "kg"), matprops.UnitError, r"'wavelength'"),
    ],
)
def test_bad_wavelengths(si, bad, error, pattern):
    with pytest.raises(error, match=pattern):
        si.absorption(bad, 300)


@pytest.mark.model("absorption/green-2008-franta-2017")
def test_beer_lambert_tools():
    alpha = matprops.Q_(1e3, "1/cm")
    assert optics.absorption_depth(alpha).m_as("um") == pytest.approx(10.0)
    assert optics.transmitted_fraction(alpha, matprops.Q_(10, "um")).m_as("") == pytest.approx(
        np.exp(-1)
    )
    assert optics.absorbed_fraction(1e3, "10 um").m_as("") == pytest.approx(1 - np.exp(-1))
    d = optics.thickness_for_absorbed_fraction(alpha, [0.5, 0.9, 0.99])
    np.testing.assert_allclose(d.m_as("um"), 10 * np.log([2, 10, 100]))
    # along a wavelength grid with a thickness grid: broadcasting
    si = matprops.silicon()
    lam = np.array([500.0, 800.0, 1000.0])[:, None]
    alpha, fraction = optics.absorbed_fraction_spectrum(
        si, lam, matprops.Q_([10, 100, 180], "um")[None, :], 300
    )
    assert fraction.shape == (3, 3)
    f = fraction.m_as("")
    assert np.all(np.diff(f, axis=1) >= 0) and np.all(np.diff(f[2]) > 0)  # thicker absorbs more


@pytest.mark.parametrize(
    "call, pattern",
    [
        (
            lambda: optics.thickness_for_absorbed_fraction(1e3, 1.0),
            "'fraction' must be between 0 and 1",
        ),
        (lambda: optics.thickness_for_absorbed_fraction(1e3, 0.0), "'fraction' must be > 0"),
        (lambda: optics.thickness_for_absorbed_fraction(1e3, 1.5), "'fraction'"),
        (lambda: optics.absorbed_fraction(1e3, "-1e-4 cm"), "'thickness' must be > 0 cm"),
        (lambda: optics.absorbed_fraction(1e3, "0 um"), "'thickness' must be > 0 cm"),
        (lambda: optics.absorbed_fraction(-1.0, "1 um"), "'absorption_coefficient' must be >= 0"),
        (lambda: optics.absorption_depth(0.0), "'alpha'"),
        (lambda: optics.photon_energy(matprops.Q_(1, "kg")), "'wavelength'"),
    ],
)
def test_beer_lambert_bad_input(call, pattern):
    with pytest.raises(matprops.Error, match=pattern):
        call()


def test_thickness_needs_its_unit():
    # common practice: a wafer's "180" is µm to its maker and cm to the kernels; a bare
    # number is refused rather than read in either
    with pytest.raises(matprops.InputError, match="'thickness' must be a length with its unit"):
        optics.absorbed_fraction(1e3, 180)
    with pytest.raises(matprops.InputError, match="bare number"):
        optics.absorbed_fraction(1e3, "180")


def test_thickness_must_be_a_length():
    with pytest.raises(matprops.UnitError, match="'thickness' expects a quantity in cm"):
        optics.absorbed_fraction(1e3, matprops.Q_(1, "eV"))


# ---------------------------------------------------------------- properties


def band_edge_limit(temperature):
    """The default's validity-region wavelength limit (nm) at a temperature (K)."""
    (region,) = matprops.silicon().model("absorption").regions
    return float(region.bound_at(temperature))


@pytest.mark.model("absorption/green-2008-franta-2017")
@settings(deadline=None, max_examples=50)
@given(st.floats(400, 1179), st.floats(1, 40), st.floats(80, 495))
def test_alpha_positive_and_decreasing_with_wavelength(lam, step, t):
    # over the validity region: inside it alpha is band-to-band absorption
    top = band_edge_limit(t)
    assume(lam < top)
    si = matprops.silicon()
    a = si.absorption(np.array([lam, min(lam + step, top)]), t).m_as("1/cm")
    assert np.all(a > 0)
    assert a[1] <= a[0]


@pytest.mark.model("absorption/green-2008-franta-2017")
@settings(deadline=None, max_examples=50)
@given(st.floats(950, 1150), st.floats(80, 480), st.floats(5, 100))
def test_alpha_rises_with_temperature_near_the_edge(lam, t, dt):
    assume(lam <= band_edge_limit(t))  # the limit rises with temperature
    si = matprops.silicon()
    a = si.absorption(lam, np.array([t, min(t + dt, 500.0)])).m_as("1/cm")
    assert a[1] > a[0]
