"""Carrier transport: thermal and saturation velocity, mobility, diffusivity, resistivity.

Outside checks name their source beside the number; checks of one implementation
against numbers computed from the same equations are labelled as regression or
consistency checks.
"""

import warnings

import numpy as np
import pytest

import matprops

K_B = 1.380649e-23  # J/K, exact (SI 2019)
M0 = 9.1093837015e-31  # kg, CODATA 2018


# ----------------------------------------------------------------- thermal velocity

def test_electron_thermal_velocity_at_300k_is_greens(si):
    # Green, J. Appl. Phys. 67, 2944 (1990): 2.05e7 cm/s at 300 K (from memory; the
    # recalled value has three digits, so it stands for 2.045e7-2.055e7)
    assert 2.045e7 <= si.thermal_velocity("electron", 300).m_as("cm/s") <= 2.055e7


def test_hole_thermal_velocity_at_300k(si):
    # Green 1990: 1.69e7 cm/s at 300 K (from memory); the model holds a recalled mass of
    # 0.41 m0 whose rounding (+-0.005 m0) moves the speed by +-0.61 %
    value = si.thermal_velocity("hole", 300).m_as("cm/s")
    assert value == pytest.approx(1.69e7, rel=0.0061)


def test_thermal_velocity_is_the_mean_speed(si):
    # definition (Maxwell distribution): the mean speed of a spherical band is
    # sqrt(8kT/(pi m)), sqrt(3 pi/8) = 1.085 times below the rms speed sqrt(3kT/m)
    assert si.provenance("thermal_velocity")["definition"] == "mean speed"
    mass = si.model("thermal_velocity").select("hole").coefficients["longitudinal_mass"].value
    for t in (250.0, 300.0, 400.0):
        rms = np.sqrt(3 * K_B * t / (mass * M0)) * 100.0
        mean = si.thermal_velocity("hole", t).m_as("cm/s")
        assert rms / mean == pytest.approx(np.sqrt(3 * np.pi / 8), rel=1e-12)


def test_mean_speed_mass_of_an_ellipsoid_matches_a_numerical_average():
    # the closed form against a direct numerical average over directions (mean of
    # sqrt(cos^2/m_l + sin^2/m_t) over the sphere, midpoint rule in cos theta)
    from matprops.kernels.velocity import mean_speed_mass

    x = (np.arange(200000) + 0.5) / 200000
    for m_l, m_t in ((0.9163, 0.1982), (1.0, 1.0), (0.5, 2.0)):
        average = np.mean(np.sqrt(x**2 / m_l + (1 - x**2) / m_t))
        assert mean_speed_mass(m_l, m_t) == pytest.approx(1 / average**2, rel=1e-9)


def test_thermal_velocity_kernel_door_and_table(si):
    kernel = si.kernel("thermal_velocity", carrier="electron")
    t = np.array([250.0, 300.0, 350.0])
    np.testing.assert_array_equal(kernel(temperature=t),
                                  si.thermal_velocity("electron", t).m_as("cm/s"))
    data = si.table(["thermal_velocity"], carrier=["electron", "hole"], T=[300.0])
    assert data["thermal_velocity"].attrs["units"] == "cm s-1"
    assert data["thermal_velocity"].sel(carrier="hole").item() == pytest.approx(
        si.thermal_velocity("hole", 300).m_as("cm/s"))


def test_unknown_carrier_lists_the_valid_ones(si):
    with pytest.raises(matprops.InputError, match="carrier.*electron, hole.*'proton'"):
        si.thermal_velocity("proton", 300)
    with pytest.raises(matprops.InputError, match="carrier"):
        si.kernel("thermal_velocity")


def test_hole_thermal_velocity_warns_outside_its_range(si):
    with pytest.warns(matprops.ValidityWarning, match="250-400 K"):
        si.thermal_velocity("hole", 150)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        si.thermal_velocity("electron", 150)
