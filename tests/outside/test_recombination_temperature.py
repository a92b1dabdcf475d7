"""Temperature-dependent intrinsic recombination of the newest release against published
values and an independent physical relation."""

import numpy as np
import pytest
from helpers import van_roosbroeck_shockley

import matprops


@pytest.fixture(scope="module")
def newest():
    return matprops.silicon()


@pytest.mark.model("radiative_coefficient/trupke-2003-nguyen-2014")
def test_radiative_coefficient_temperature_trend_from_absorption(newest):
    # van Roosbroeck & Shockley 1954 (Phys. Rev. 94, 1558) applied to the release's
    # band-to-band absorption (Green 2008 scaled by Franta et al. 2017, open refractive-
    # index database) and intrinsic density: an independent route to B(240 K)/B(300 K)
    ratio_vrs = van_roosbroeck_shockley(newest, 240.0) / van_roosbroeck_shockley(newest, 300.0)
    b = newest.radiative_coefficient([240.0, 300.0]).m_as("cm^3/s")
    assert b[0] / b[1] == pytest.approx(ratio_vrs, rel=0.10)


def test_radiative_coefficient_at_300_K(newest):
    # B_low = 4.73e-15 cm^3/s (Trupke et al. 2003 as used by Richter et al. 2012): from
    # memory, high confidence; the van Roosbroeck-Shockley integral above gives 4.4e-15
    assert newest.radiative_coefficient(300.0).m_as("cm^3/s") == pytest.approx(4.73e-15, rel=0.01)
    assert van_roosbroeck_shockley(newest, 300.0) == pytest.approx(4.73e-15, rel=0.12)


def test_radiative_coefficient_falls_with_temperature_then_saturates(newest):
    # Trupke et al. 2003 (abstract read): B decreases as T rises over 77-300 K;
    # Schlangenotto et al. 1974 (abstract read): likewise over 100-400 K;
    # Nguyen et al. 2014 (abstract read): near constant at room temperature and above
    b = newest.radiative_coefficient([77.0, 150.0, 200.0, 250.0, 300.0]).m
    assert np.all(np.diff(b) < 0)
    assert b[0] / b[-1] > 10
    hot = newest.radiative_coefficient([300.0, 330.0, 363.0]).m
    assert np.ptp(hot) / hot.mean() < 0.05


def test_radiative_coefficient_below_77_K_is_a_flagged_extrapolation(newest):
    # below 77 K B rises by orders of magnitude (Brueggemann et al. 2017, abstract read):
    # the end value is held and the warning calls it an extrapolation
    with pytest.warns(matprops.ValidityWarning, match="77-363 K.*extrapolation"):
        value = newest.radiative_coefficient(40.0).m_as("cm^3/s")
    assert value == pytest.approx(newest.radiative_coefficient(77.0).m_as("cm^3/s"))


@pytest.mark.parametrize("excess", [1e15, 5e15, 1e16, 5e16])
def test_ambipolar_auger_coefficient_at_300_K(newest, excess):
    # Sinton & Swanson 1987: ambipolar Auger coefficient 1.66e-30 cm^6/s +- 15 % in lowly
    # doped silicon at high injection, dn 1e15-2e17 cm^-3 (read, secondary); 20 % allows
    # for the injection power law of Richter et al. against a constant
    tau = newest.auger_lifetime(300.0, Nd=1e13, excess=excess).m_as("s")
    coefficient = 1.0 / (tau * (1e13 + 2 * excess) * excess)
    assert coefficient == pytest.approx(1.66e-30, rel=0.20)


@pytest.mark.model("intrinsic_lifetime/richter-2012-huldt-1979")
def test_free_particle_polynomial_against_dziewior_and_schmid(newest):
    # The temperature polynomial of the default model (read in a simulator's source that
    # cites no paper) evaluated at 300 K against Dziewior & Schmid 1977's free-particle
    # coefficients, C_n = 2.8e-31 and C_p = 9.9e-32 cm^6/s (read in two simulators'
    # defaults, COMSOL and Genius, and seen in a dissertation): an independent value
    coefficients = newest.provenance("intrinsic_lifetime")["coefficients"]
    value = {name: entry["value"] for name, entry in coefficients.items()}
    electron = sum(value[f"electron_free_{k}"] for k in ("constant", "linear", "quadratic"))
    hole = sum(value[f"hole_free_{k}"] for k in ("constant", "linear", "quadratic"))
    assert electron == pytest.approx(2.8e-31, rel=0.05)
    assert hole == pytest.approx(9.9e-32, rel=0.05)


def test_heavily_doped_auger_grows_with_temperature(newest):
    # free-particle Auger recombination in heavily doped silicon strengthens with
    # temperature (Huldt et al. 1979, recalled; the polynomial read in a simulator): the
    # minority lifetime of a 1e19 emitter shortens from 240 to 360 K
    tau = newest.auger_lifetime([240.0, 300.0, 360.0], Nd=1e19).m
    assert tau[0] > tau[1] > tau[2]
