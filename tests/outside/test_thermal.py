"""Thermal conductivity, heat capacity and impact ionisation against handbook values,
reference data and independently published parameterisations (the newest release)."""

import warnings

import numpy as np
import pytest

import matprops


@pytest.fixture(scope="module")
def newest():
    return matprops.silicon()


# Thermal conductivity of pure silicon, W/(cm K): Incropera & DeWitt, Fundamentals of
# Heat and Mass Transfer, Table A.1 (properties of selected metallic solids: silicon),
# which lists 148 W/(m K) at 300 K and 98.9 at 400 K, 61.9 at 600 K, 31.2 at 1000 K
# (from memory, not read here).
@pytest.mark.model("thermal_conductivity/glassbrenner-1964")
@pytest.mark.parametrize(
    "temperature, handbook, tolerance",
    [(300.0, 1.48, 0.05), (400.0, 0.989, 0.06), (600.0, 0.619, 0.06), (1000.0, 0.312, 0.06)],
)
def test_thermal_conductivity_against_the_handbook(newest, temperature, handbook, tolerance):
    kappa = newest.thermal_conductivity(temperature).m_as("W/(cm*K)")
    assert kappa == pytest.approx(handbook, rel=tolerance)


@pytest.mark.model("thermal_conductivity/glassbrenner-1964")
def test_thermal_conductivity_against_a_measurement_at_425_degC(newest):
    # 0.46 +- 0.07 W/(cm degC) at 425 degC, single crystal ("Thermal conductivity
    # measurements of silicon from 30 to 425 degC", abstract read: scilit.com record
    # f463e5d93d1d834928f8dc53342d88fe); one standard uncertainty
    kappa = newest.thermal_conductivity(matprops.Q_(425.0, "degC")).m_as("W/(cm*K)")
    assert abs(kappa - 0.46) <= 0.07


def test_thermal_conductivity_falls_with_temperature(newest):
    # umklapp scattering: conductivity falls roughly as 1/T above room temperature
    # (the 30-425 degC measurement above: "varies nearly as T^-1", abstract read)
    kappa = newest.thermal_conductivity([250.0, 300.0, 400.0, 800.0]).m
    assert all(np.diff(kappa) < 0)


def test_thermal_conductivity_refuses_cryogenic_silently_never(newest):
    # at 77 K pure silicon conducts several times better than the power law says
    # (Glassbrenner & Slack 1964 measured 3 K to the melting point; abstract read):
    # the release default must warn, not extrapolate silently
    with pytest.warns(matprops.ValidityWarning, match="200-1000 K"):
        newest.thermal_conductivity(77.0)


# Heat capacity: NIST Chemistry WebBook, silicon, condensed phase, NIST-JANAF table
# (Chase 1998), tabulated Cp = 20.05 J/(mol K) at 300 K, 22.15 at 400 K, 23.34 at 500 K
# (read); and 712 J/(kg K) at 300 K, 790 at 400 K in Incropera & DeWitt Table A.1 (from
# memory).
@pytest.mark.model("heat_capacity/chase-1998")
@pytest.mark.parametrize("temperature, tabulated", [(300.0, 20.05), (400.0, 22.15), (500.0, 23.34)])
def test_heat_capacity_against_the_janaf_table(newest, temperature, tabulated):
    assert newest.heat_capacity(temperature).m_as("J/(mol*K)") == pytest.approx(tabulated, abs=0.01)


@pytest.mark.parametrize("temperature, handbook", [(300.0, 0.712), (400.0, 0.790)])
def test_specific_heat_against_the_handbook(newest, temperature, handbook):
    assert newest.specific_heat(temperature).m_as("J/(g*K)") == pytest.approx(handbook, rel=0.01)


def test_specific_heat_common_practice(newest):
    # about 0.7 J/(g K) at room temperature: common practice
    assert newest.specific_heat(300.0).m_as("J/(g*K)") == pytest.approx(0.70, rel=0.03)


def test_specific_heat_refuses_below_its_range(newest):
    with pytest.warns(matprops.ValidityWarning, match="298-1685 K"):
        newest.specific_heat(250.0)


# Impact ionisation. No measured coefficient at a given field could be read here; the
# release default (van Overstraeten & de Man 1970) is checked against two independently
# fitted published parameterisations (Okuto & Crowell 1975 and Massey, David & Rees
# 2006, both read in general-purpose simulators' sources: Charon and the Allpix Squared
# manual), evaluated from their published coefficients at 3e5 V/cm, 300 K:
# electrons 9.77e3 and 1.07e4 /cm (computed from the published coefficients).
def _okuto(field, temperature, a, b, c, d):
    import math

    dt = temperature - 300.0
    return a * (1 + c * dt) * field * math.exp(-((b * (1 + d * dt) / field) ** 2))


def _massey(field, temperature, a, c, d):
    import math

    return a * math.exp(-(c + d * temperature) / field)


@pytest.mark.model("impact_ionisation/vanoverstraeten-1970")
@pytest.mark.parametrize("temperature", [250.0, 300.0, 400.0])
def test_electron_ionisation_agrees_with_independent_fits(newest, temperature):
    field = 3e5
    alpha = newest.impact_ionisation("electron", field, temperature).m_as("1/cm")
    okuto = _okuto(field, temperature, 0.426, 4.81e5, 3.05e-4, 6.86e-4)
    massey = _massey(field, temperature, 4.43e5, 9.66e5, 4.99e2)
    # three separate fits to separate measurements agree within about 20 % for electrons
    assert alpha == pytest.approx(okuto, rel=0.25)
    assert alpha == pytest.approx(massey, rel=0.30)


@pytest.mark.model("impact_ionisation/okuto-1975", "impact_ionisation/massey-2006")
@pytest.mark.parametrize("model_id", ["okuto-1975", "massey-2006"])
def test_alternative_ionisation_fits_agree_with_the_default(newest, model_id):
    # the alternatives through their model files, against the release default, a fit to
    # other measurements (van Overstraeten & de Man 1970): electrons within 30 % at
    # 3e5 V/cm, 250-400 K, the spread of the three fits above
    other = matprops.silicon(models={"impact_ionisation": model_id})
    temperatures = [250.0, 300.0, 400.0]
    alternative = other.impact_ionisation("electron", 3e5, temperatures).m_as("1/cm")
    default = newest.impact_ionisation("electron", 3e5, temperatures).m_as("1/cm")
    np.testing.assert_allclose(default, alternative, rtol=0.30)


def test_holes_ionise_less_than_electrons(newest):
    # Chynoweth 1958 (Phys. Rev. 109, 1537; abstract read): the electron ionisation rate
    # is higher than the hole rate over the fields measured (2e5-5e5 V/cm)
    for field in (2e5, 3e5, 5e5):
        e = newest.impact_ionisation("electron", field, 300.0)
        h = newest.impact_ionisation("hole", field, 300.0)
        assert e > h


def test_ionisation_falls_with_temperature(newest):
    # phonon scattering takes energy from hot carriers: avalanche breakdown voltage
    # rises with temperature (common practice; all three fits read say so)
    values = newest.impact_ionisation("electron", 3e5, [200.0, 300.0, 400.0]).m
    assert values[0] > values[1] > values[2]


def test_hole_ionisation_is_continuous_at_the_switch_field(newest):
    # the two published hole sets were fitted to meet near E0 = 4e5 V/cm (the Charon
    # header, read): a jump of more than 5 % would mean a mistyped coefficient
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        below = newest.impact_ionisation("hole", 4e5 * (1 - 1e-9), 300.0).m
        above = newest.impact_ionisation("hole", 4e5, 300.0).m
    assert above == pytest.approx(below, rel=0.05)
