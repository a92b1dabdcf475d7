"""Impact ionisation coefficients of electrons or holes, in 1/cm.

The ionisation coefficient alpha is the number of electron-hole pairs a carrier
creates per centimetre of travel along a uniform electric field. Fields in V/cm
(the field strength, a magnitude), temperatures in K. Each kernel serves one carrier;
the model file holds one coefficient set per carrier.

A field of zero gives zero (every form here is an exponential of -b/E).
"""

from ._spec import kernel
from ._xp import asfloat, errstate, namespace, power, zeros_like
from .constants import BOLTZMANN_EV

_INPUTS = {"field": "V/cm", "temperature": "K"}


def _exp_minus(xp, x):
    """exp(-x) for x >= 0 that is exactly 0 at x = +inf (a zero field)."""
    return xp.exp(-x)


@kernel(
    inputs=_INPUTS,
    output="1/cm",
    coefficients={
        "low_field_prefactor": "1/cm",
        "low_field_constant": "V/cm",
        "high_field_prefactor": "1/cm",
        "high_field_constant": "V/cm",
        "switch_field": "V/cm",
        "phonon_energy": "eV",
        "reference_temperature": "K",
    },
    array_api=True,
)
def chynoweth_phonon_scaled(
    field,
    temperature,
    *,
    low_field_prefactor,
    low_field_constant,
    high_field_prefactor,
    high_field_constant,
    switch_field,
    phonon_energy,
    reference_temperature,
):
    """Chynoweth's law with the optical-phonon temperature factor (van Overstraeten
    and de Man 1970).

    ``alpha = gamma a exp(-gamma b / E)`` with
    ``gamma = tanh(hw / 2 k T_0) / tanh(hw / 2 k T)``; ``(a, b)`` is the low-field set
    below the switch field ``E_0`` and the high-field set at and above it.

    Parameters
    ----------
    field : array_like, V/cm (magnitude, >= 0);  temperature : array_like, K
    low_field_prefactor, high_field_prefactor : 1/cm (a)
    low_field_constant, high_field_constant : V/cm (b)
    switch_field : V/cm (E_0);  phonon_energy : eV (hw);  reference_temperature : K (T_0)

    Returns
    -------
    alpha, 1/cm
    """
    xp = namespace(field, temperature)
    e = asfloat(xp, field)
    t = asfloat(xp, temperature)
    zero = zeros_like(xp, e + t)
    gamma = xp.tanh(zero + phonon_energy / (2.0 * BOLTZMANN_EV * reference_temperature)) / xp.tanh(
        phonon_energy / (2.0 * BOLTZMANN_EV * t)
    )
    high = e >= switch_field
    a = xp.where(high, zero + high_field_prefactor, zero + low_field_prefactor)
    b = xp.where(high, zero + high_field_constant, zero + low_field_constant)
    with errstate(xp, divide="ignore"):
        return gamma * a * _exp_minus(xp, gamma * b / e)


@kernel(
    inputs=_INPUTS,
    output="1/cm",
    coefficients={
        "prefactor": "1/V",
        "field_constant": "V/cm",
        "prefactor_temperature_coefficient": "1/K",
        "constant_temperature_coefficient": "1/K",
        "field_exponent": "1",
        "exponential_exponent": "1",
        "reference_temperature": "K",
    },
    array_api=True,
)
def okuto_crowell(
    field,
    temperature,
    *,
    prefactor,
    field_constant,
    prefactor_temperature_coefficient,
    constant_temperature_coefficient,
    field_exponent,
    exponential_exponent,
    reference_temperature,
):
    """Okuto and Crowell (1975).

    ``alpha = a [1 + c (T - T_0)] E^gamma exp{-(b [1 + d (T - T_0)] / E)^delta}``

    Parameters
    ----------
    field : array_like, V/cm;  temperature : array_like, K
    prefactor : 1/V (a, for E in V/cm and gamma = 1)
    field_constant : V/cm (b)
    prefactor_temperature_coefficient, constant_temperature_coefficient : 1/K (c, d)
    field_exponent : 1 (gamma);  exponential_exponent : 1 (delta)
    reference_temperature : K (T_0)

    Returns
    -------
    alpha, 1/cm
    """
    xp = namespace(field, temperature)
    e = asfloat(xp, field)
    dt = asfloat(xp, temperature) - reference_temperature
    b = field_constant * (1.0 + constant_temperature_coefficient * dt)
    with errstate(xp, divide="ignore", invalid="ignore"):
        ratio = power(xp, b / e, exponential_exponent)
        return (
            prefactor
            * (1.0 + prefactor_temperature_coefficient * dt)
            * power(xp, e, field_exponent)
            * _exp_minus(xp, ratio)
        )


@kernel(
    inputs=_INPUTS,
    output="1/cm",
    coefficients={
        "prefactor": "1/cm",
        "field_constant": "V/cm",
        "field_constant_slope": "V/(cm*K)",
    },
    array_api=True,
)
def linear_threshold(field, temperature, *, prefactor, field_constant, field_constant_slope):
    """Chynoweth's law with a critical field linear in temperature (Massey et al. 2006).

    ``alpha = A exp(-B(T) / E)``, ``B(T) = C + D T``.

    Parameters
    ----------
    field : array_like, V/cm;  temperature : array_like, K
    prefactor : 1/cm (A);  field_constant : V/cm (C);  field_constant_slope : V/(cm K) (D)

    Returns
    -------
    alpha, 1/cm
    """
    xp = namespace(field, temperature)
    e = asfloat(xp, field)
    b = field_constant + field_constant_slope * asfloat(xp, temperature)
    with errstate(xp, divide="ignore"):
        return prefactor * _exp_minus(xp, b / e)
