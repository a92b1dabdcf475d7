"""Intrinsic carrier density of undoped silicon, in cm^-3 (no gap narrowing).

Written against the array API standard (see :mod:`._xp`); every kernel has analytic
derivatives (``(ni, {"temperature": dni/dT})``, cm^-3/K).
"""

from ._spec import derivatives_of, kernel
from ._xp import asfloat, namespace
from .band_gap import (
    passler_dispersion,
    passler_dispersion_derivatives,
    piecewise_quadratic,
    piecewise_quadratic_derivatives,
)
from .constants import BOLTZMANN_EV


@kernel(
    inputs={"temperature": "K"},
    output="cm^-3",
    coefficients={
        "prefactor": "cm^-3",
        "exponent": "1",
        "activation_temperature": "K",
        "reference_temperature": "K",
    },
    array_api=True,
)
def power_arrhenius(
    temperature, *, prefactor, exponent, activation_temperature, reference_temperature
):
    """Direct parameterisation ``ni = A (T/Tr)^x exp(-Ta/T)``.

    Parameters
    ----------
    temperature : array_like, K
    prefactor : cm^-3;  exponent : dimensionless
    activation_temperature : K (Eg/2k of the fit);  reference_temperature : K
    """
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    return prefactor * xp.exp(
        exponent * xp.log(t / reference_temperature) - activation_temperature / t
    )


@derivatives_of(power_arrhenius)
def power_arrhenius_derivatives(
    temperature, *, prefactor, exponent, activation_temperature, reference_temperature
):
    """``dni/dT = ni (x / T + Ta / T^2)``."""
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    value = power_arrhenius(
        t,
        prefactor=prefactor,
        exponent=exponent,
        activation_temperature=activation_temperature,
        reference_temperature=reference_temperature,
    )
    return value, {"temperature": value * (exponent + activation_temperature / t) / t}


@kernel(
    inputs={"temperature": "K"},
    output="cm^-3",
    coefficients={
        "prefactor": "cm^-3",
        "exponent": "1",
        "gap_at_zero": "eV",
        "gap_alpha": "eV/K",
        "gap_theta": "K",
        "gap_delta": "1",
    },
    array_api=True,
)
def power_passler_gap(
    temperature, *, prefactor, exponent, gap_at_zero, gap_alpha, gap_theta, gap_delta
):
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
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    gap = passler_dispersion(
        t, gap_at_zero=gap_at_zero, alpha=gap_alpha, theta=gap_theta, delta=gap_delta
    )
    return prefactor * xp.exp(exponent * xp.log(t) - gap / (2.0 * BOLTZMANN_EV * t))


def _power_gap_derivatives(xp, t, prefactor, exponent, gap, gap_slope):
    """``ni = A T^x exp(-Eg/2kT)``: ``d ln ni/dT = x/T - Eg'/(2kT) + Eg/(2kT^2)``."""
    two_kt = 2.0 * BOLTZMANN_EV * t
    value = prefactor * xp.exp(exponent * xp.log(t) - gap / two_kt)
    return value, {"temperature": value * ((exponent + gap / two_kt) / t - gap_slope / two_kt)}


@derivatives_of(power_passler_gap)
def power_passler_gap_derivatives(
    temperature, *, prefactor, exponent, gap_at_zero, gap_alpha, gap_theta, gap_delta
):
    """ni and dni/dT (see :func:`_power_gap_derivatives`)."""
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    gap, slopes = passler_dispersion_derivatives(
        t, gap_at_zero=gap_at_zero, alpha=gap_alpha, theta=gap_theta, delta=gap_delta
    )
    return _power_gap_derivatives(xp, t, prefactor, exponent, gap, slopes["temperature"])


@kernel(
    inputs={"temperature": "K"},
    output="cm^-3",
    coefficients={
        "prefactor": "cm^-3",
        "exponent": "1",
        "gap_low_coefficients": "1",
        "gap_high_coefficients": "1",
        "gap_switch_temperature": "K",
    },
    array_api=True,
)
def power_quadratic_gap(
    temperature,
    *,
    prefactor,
    exponent,
    gap_low_coefficients,
    gap_high_coefficients,
    gap_switch_temperature,
):
    """``ni = A T^x exp(-Eg(T) / 2kT)`` with Eg(T) as two quadratics in T.

    Parameters
    ----------
    temperature : array_like, K
    prefactor : cm^-3 (with T in kelvin);  exponent : dimensionless
    gap_low_coefficients, gap_high_coefficients, gap_switch_temperature : see
        :func:`band_gap.piecewise_quadratic`
    """
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    gap = piecewise_quadratic(
        t,
        low_coefficients=gap_low_coefficients,
        high_coefficients=gap_high_coefficients,
        switch_temperature=gap_switch_temperature,
    )
    return prefactor * xp.exp(exponent * xp.log(t) - gap / (2.0 * BOLTZMANN_EV * t))


@derivatives_of(power_quadratic_gap)
def power_quadratic_gap_derivatives(
    temperature,
    *,
    prefactor,
    exponent,
    gap_low_coefficients,
    gap_high_coefficients,
    gap_switch_temperature,
):
    """ni and dni/dT (see :func:`_power_gap_derivatives`)."""
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    gap, slopes = piecewise_quadratic_derivatives(
        t,
        low_coefficients=gap_low_coefficients,
        high_coefficients=gap_high_coefficients,
        switch_temperature=gap_switch_temperature,
    )
    return _power_gap_derivatives(xp, t, prefactor, exponent, gap, slopes["temperature"])


@kernel(
    inputs={"temperature": "K"},
    output="cm^-3",
    requires=("band_gap", "densities_of_states"),
    array_api=True,
)
def boltzmann(temperature, *, band_gap, densities_of_states):
    """``ni = sqrt(Nc Nv) exp(-Eg / 2kT)`` from a gap and densities of states.

    Non-degenerate (Boltzmann) statistics. ``band_gap`` and
    ``densities_of_states`` are bound kernels of those quantities; the result is
    only as consistent as the pair chosen (the two were rarely fitted together).
    """
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    nc, nv = densities_of_states(t)
    return xp.sqrt(nc * nv) * xp.exp(-band_gap(t) / (2.0 * BOLTZMANN_EV * t))


@derivatives_of(boltzmann)
def boltzmann_derivatives(temperature, *, band_gap, densities_of_states):
    """``d ln ni/dT = (Nc'/Nc + Nv'/Nv)/2 - Eg'/(2kT) + Eg/(2kT^2)``, from the bound
    models' own derivatives."""
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    (nc, nv), states = densities_of_states.derivative(temperature=t)
    gap, slopes = band_gap.derivative(temperature=t)
    two_kt = 2.0 * BOLTZMANN_EV * t
    value = xp.sqrt(nc * nv) * xp.exp(-gap / two_kt)
    d_nc, d_nv = states["temperature"]
    log_slope = 0.5 * (d_nc / nc + d_nv / nv) - slopes["temperature"] / two_kt + gap / (two_kt * t)
    return value, {"temperature": value * log_slope}
