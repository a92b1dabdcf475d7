"""Intrinsic carrier density of undoped silicon, in cm^-3 (no gap narrowing)."""

import numpy as np

from ._spec import kernel
from .band_gap import passler_dispersion, piecewise_quadratic
from .constants import BOLTZMANN_EV


@kernel(inputs={"temperature": "K"}, output="cm^-3",
        coefficients={"prefactor": "cm^-3", "exponent": "1",
                      "activation_temperature": "K", "reference_temperature": "K"})
def power_arrhenius(temperature, *, prefactor, exponent, activation_temperature,
                    reference_temperature):
    """Direct parameterisation ``ni = A (T/Tr)^x exp(-Ta/T)``.

    Parameters
    ----------
    temperature : array_like, K
    prefactor : cm^-3;  exponent : dimensionless
    activation_temperature : K (Eg/2k of the fit);  reference_temperature : K
    """
    t = np.asarray(temperature, dtype=float)
    return prefactor * np.exp(exponent * np.log(t / reference_temperature)
                              - activation_temperature / t)


@kernel(inputs={"temperature": "K"}, output="cm^-3",
        coefficients={"prefactor": "cm^-3", "exponent": "1", "gap_at_zero": "eV",
                      "gap_alpha": "eV/K", "gap_theta": "K", "gap_delta": "1"})
def power_passler_gap(temperature, *, prefactor, exponent, gap_at_zero, gap_alpha,
                      gap_theta, gap_delta):
    """``ni = A T^x exp(-Eg(T) / 2kT)`` with Eg(T) in Pässler's 2002 form.

    ``A T^x`` stands for sqrt(Nc Nv) with temperature-dependent masses; the gap
    parameters are the ones the fit was made with and belong to the model (they
    are not the release's band-gap choice).

    Parameters
    ----------
    temperature : array_like, K
    prefactor : cm^-3 (with T in kelvin);  exponent : dimensionless
    gap_at_zero, gap_alpha, gap_theta, gap_delta : see
        :func:`band_gap.passler_dispersion`
    """
    t = np.asarray(temperature, dtype=float)
    gap = passler_dispersion(t, gap_at_zero=gap_at_zero, alpha=gap_alpha,
                             theta=gap_theta, delta=gap_delta)
    return prefactor * np.exp(exponent * np.log(t) - gap / (2.0 * BOLTZMANN_EV * t))


@kernel(inputs={"temperature": "K"}, output="cm^-3",
        coefficients={"prefactor": "cm^-3", "exponent": "1",
                      "gap_low_coefficients": "1", "gap_high_coefficients": "1",
                      "gap_switch_temperature": "K"})
def power_quadratic_gap(temperature, *, prefactor, exponent, gap_low_coefficients,
                        gap_high_coefficients, gap_switch_temperature):
    """``ni = A T^x exp(-Eg(T) / 2kT)`` with Eg(T) as two quadratics in T.

    Parameters
    ----------
    temperature : array_like, K
    prefactor : cm^-3 (with T in kelvin);  exponent : dimensionless
    gap_low_coefficients, gap_high_coefficients, gap_switch_temperature : see
        :func:`band_gap.piecewise_quadratic`
    """
    t = np.asarray(temperature, dtype=float)
    gap = piecewise_quadratic(t, low_coefficients=gap_low_coefficients,
                              high_coefficients=gap_high_coefficients,
                              switch_temperature=gap_switch_temperature)
    return prefactor * np.exp(exponent * np.log(t) - gap / (2.0 * BOLTZMANN_EV * t))


@kernel(inputs={"temperature": "K"}, output="cm^-3",
        requires=("band_gap", "densities_of_states"))
def boltzmann(temperature, *, band_gap, densities_of_states):
    """``ni = sqrt(Nc Nv) exp(-Eg / 2kT)`` from a gap and densities of states.

    Non-degenerate (Boltzmann) statistics. ``band_gap`` and
    ``densities_of_states`` are bound kernels of those quantities; the result is
    only as consistent as the pair chosen (the two were rarely fitted together).
    """
    t = np.asarray(temperature, dtype=float)
    nc, nv = densities_of_states(t)
    return np.sqrt(nc * nv) * np.exp(-band_gap(t) / (2.0 * BOLTZMANN_EV * t))
