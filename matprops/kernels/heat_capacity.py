"""Heat capacity of silicon per mole, in J/(mol K) (temperatures in K).

The material divides by the molar mass for the specific heat per gram.
"""

from ._spec import derivatives_of, kernel
from ._xp import asfloat, namespace


@kernel(
    inputs={"temperature": "K"},
    output="J/(mol*K)",
    coefficients={
        "a": "J/(mol*K)",
        "b": "J/(mol*K)",
        "c": "J/(mol*K)",
        "d": "J/(mol*K)",
        "e": "J/(mol*K)",
    },
    array_api=True,
)
def shomate(temperature, *, a, b, c, d, e):
    """Molar heat capacity at constant pressure, Shomate's equation.

    ``C_p = A + B t + C t^2 + D t^3 + E / t^2`` with ``t = T / 1000 K`` (the form
    of the NIST-JANAF thermochemical tables and the NIST Chemistry WebBook).

    Parameters
    ----------
    temperature : array_like, K
    a, b, c, d, e : J/(mol K) (the coefficients A-E for t in units of 1000 K)

    Returns
    -------
    C_p, J/(mol K)
    """
    xp = namespace(temperature)
    t = asfloat(xp, temperature) / 1000.0
    return a + t * (b + t * (c + t * d)) + e / (t * t)


@derivatives_of(shomate)
def shomate_derivatives(temperature, *, a, b, c, d, e):
    """C_p and ``dC_p/dT = (B + 2 C t + 3 D t^2 - 2 E / t^3) / 1000 K``."""
    xp = namespace(temperature)
    t = asfloat(xp, temperature) / 1000.0
    value = a + t * (b + t * (c + t * d)) + e / (t * t)
    slope = (b + t * (2.0 * c + 3.0 * d * t) - 2.0 * e / (t * t * t)) / 1000.0
    return value, {"temperature": slope}
