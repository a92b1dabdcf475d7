"""Thermal conductivity of the silicon lattice, in W/(cm K) (temperatures in K)."""

from ._spec import derivatives_of, kernel
from ._xp import asfloat, namespace, power


@kernel(
    inputs={"temperature": "K"},
    output="W/(cm*K)",
    coefficients={
        "reference_conductivity": "W/(cm*K)",
        "reference_temperature": "K",
        "exponent": "1",
    },
    array_api=True,
)
def conductivity_power_law(temperature, *, reference_conductivity, reference_temperature, exponent):
    """Thermal conductivity as a power of temperature.

    ``kappa = kappa_0 (T / T_0)^a`` (phonon conduction above the conductivity
    maximum of a pure crystal, where umklapp scattering makes ``a`` near -1.3).

    Parameters
    ----------
    temperature : array_like, K
    reference_conductivity : W/(cm K) (kappa_0 at T_0);  reference_temperature : K
    exponent : dimensionless (a)

    Returns
    -------
    kappa, W/(cm K)
    """
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    return reference_conductivity * power(xp, t / reference_temperature, exponent)


@derivatives_of(conductivity_power_law)
def conductivity_power_law_derivatives(
    temperature, *, reference_conductivity, reference_temperature, exponent
):
    """kappa and ``d kappa / dT = a kappa / T``."""
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    value = reference_conductivity * power(xp, t / reference_temperature, exponent)
    return value, {"temperature": exponent * value / t}
