"""Fundamental (indirect) band gap of undoped silicon versus temperature, in eV.

Every kernel here is written against the array API standard (see :mod:`._xp`) and
has analytic derivatives (``kernel.derivatives``: value and dEg/dT in eV/K).
"""

import math

from ._spec import derivatives_of, kernel
from ._xp import asfloat, cbrt, errstate, namespace


def _number(c):
    """A coefficient as a Python float (a differentiated coefficient as it is)."""
    return c if hasattr(c, "tangent") else float(c)


def horner(x, coefficients):
    """``c0 + c1 x + c2 x^2 + ...`` by Horner's rule (the operations of numpy's polyval)."""
    result = _number(coefficients[-1])
    for c in reversed(coefficients[:-1]):
        result = _number(c) + result * x
    return result


def horner_derivative(x, coefficients):
    """``c1 + 2 c2 x + 3 c3 x^2 + ...``, the derivative of :func:`horner`'s polynomial."""
    n = len(coefficients)
    if n < 2:
        return 0.0 * x
    return horner(x, [k * _number(coefficients[k]) for k in range(1, n)])


@kernel(
    inputs={"temperature": "K"},
    output="eV",
    coefficients={"gap_at_zero": "eV", "alpha": "eV/K", "beta": "K"},
    array_api=True,
)
def varshni(temperature, *, gap_at_zero, alpha, beta):
    """Varshni's empirical form.

    ``Eg(T) = Eg(0) - alpha T^2 / (T + beta)``

    Parameters
    ----------
    temperature : array_like, K
    gap_at_zero : eV;  alpha : eV/K;  beta : K

    References
    ----------
    Y. P. Varshni, Physica 34, 149 (1967), doi:10.1016/0031-8914(67)90062-6.
    """
    t = asfloat(namespace(temperature), temperature)
    return gap_at_zero - alpha * t * t / (t + beta)


@derivatives_of(varshni)
def varshni_derivatives(temperature, *, gap_at_zero, alpha, beta):
    """Varshni's gap and ``dEg/dT = -alpha T (T + 2 beta) / (T + beta)^2``."""
    t = asfloat(namespace(temperature), temperature)
    denominator = t + beta
    ratio = t / denominator
    return (
        gap_at_zero - alpha * t * t / denominator,
        {"temperature": -alpha * ratio * (1.0 + beta / denominator)},
    )


@kernel(
    inputs={"temperature": "K"},
    output="eV",
    coefficients={"gap_at_zero": "eV", "alpha": "eV/K", "theta": "K", "p": "1"},
    array_api=True,
)
def passler_power(temperature, *, gap_at_zero, alpha, theta, p):
    """Pässler's power-law ("p") form for the phonon-induced gap shrinkage.

    ``Eg(T) = Eg(0) - (alpha theta / 2) [ (1 + (2T/theta)^p)^(1/p) - 1 ]``

    ``alpha`` is the high-temperature slope -dEg/dT, ``theta`` an effective phonon
    temperature and ``p`` the exponent that fixes how the slope sets in.

    Parameters
    ----------
    temperature : array_like, K
    gap_at_zero : eV;  alpha : eV/K;  theta : K;  p : dimensionless

    References
    ----------
    R. Pässler, phys. stat. sol. (b) 216, 975 (1999).
    """
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    x = 2.0 * t / theta
    # (x^p) written as exp(p ln x) with x = 0 handled: x^p -> 0
    with errstate(xp, divide="ignore"):
        x_p = xp.exp(p * xp.log(x))
    return gap_at_zero - 0.5 * alpha * theta * (xp.exp(xp.log1p(x_p) / p) - 1.0)


@derivatives_of(passler_power)
def passler_power_derivatives(temperature, *, gap_at_zero, alpha, theta, p):
    """Pässler's power-law gap and ``dEg/dT = -alpha (1 + x^p)^(1/p - 1) x^(p - 1)``."""
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    x = 2.0 * t / theta
    with errstate(xp, divide="ignore"):
        log_x = xp.log(x)
    x_p = xp.exp(p * log_x)
    log_sum = xp.log1p(x_p)
    value = gap_at_zero - 0.5 * alpha * theta * (xp.exp(log_sum / p) - 1.0)
    slope = -alpha * xp.exp(log_sum * (1.0 / p - 1.0) + (p - 1.0) * log_x)
    return value, {"temperature": slope}


@kernel(
    inputs={"temperature": "K"},
    output="eV",
    coefficients={"gap_at_zero": "eV", "alpha": "eV/K", "theta": "K", "delta": "1"},
    array_api=True,
)
def passler_dispersion(temperature, *, gap_at_zero, alpha, theta, delta):
    """Pässler's form with a phonon-dispersion parameter Delta.

    With ``x = 2T/theta``:

    ``Eg(T) = Eg(0) - alpha theta [ (1 - 3 Delta^2) / (exp(theta/T) - 1)
    + (3 Delta^2 / 2) ( (1 + pi^2 x^2 / (3 (1 + Delta^2)) + (3 Delta^2 - 1) x^3 / 4
    + 8 x^4 / 3 + x^6)^(1/6) - 1 ) ]``

    ``alpha`` is the high-temperature slope -dEg/dT, ``theta`` the average phonon
    temperature and ``delta`` the relative spread of the phonon energies.

    Parameters
    ----------
    temperature : array_like, K
    gap_at_zero : eV;  alpha : eV/K;  theta : K;  delta : dimensionless

    References
    ----------
    R. Pässler, Phys. Rev. B 66, 085201 (2002), doi:10.1103/PhysRevB.66.085201.
    """
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    d2 = delta * delta
    x = 2.0 * t / theta
    x2 = x * x
    x3 = x2 * x
    root = cbrt(
        xp,
        xp.sqrt(
            1.0
            + math.pi**2 * x2 / (3.0 * (1.0 + d2))
            + (3.0 * d2 - 1.0) * x3 / 4.0
            + 8.0 * x2 * x2 / 3.0
            + x3 * x3
        ),
    )
    with errstate(xp, over="ignore", divide="ignore"):
        bose = (1.0 - 3.0 * d2) / xp.expm1(theta / t)
    return gap_at_zero - alpha * theta * (bose + 1.5 * d2 * (root - 1.0))


@derivatives_of(passler_dispersion)
def passler_dispersion_derivatives(temperature, *, gap_at_zero, alpha, theta, delta):
    """Pässler's dispersion gap and its temperature derivative.

    With ``b = 1/(exp(theta/T) - 1)``, ``P`` the polynomial under the sixth root and
    ``R = P^(1/6)``: ``dEg/dT = -alpha theta [(1 - 3 Delta^2) b (b + 1) theta / T^2
    + (3 Delta^2 / 2) (R / 6P) (dP/dx) (2/theta)]``.
    """
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    d2 = delta * delta
    x = 2.0 * t / theta
    x2 = x * x
    x3 = x2 * x
    c2 = math.pi**2 / (3.0 * (1.0 + d2))
    c3 = (3.0 * d2 - 1.0) / 4.0
    # the value exactly as the kernel computes it
    polynomial = (
        1.0
        + math.pi**2 * x2 / (3.0 * (1.0 + d2))
        + (3.0 * d2 - 1.0) * x3 / 4.0
        + 8.0 * x2 * x2 / 3.0
        + x3 * x3
    )
    root = cbrt(xp, xp.sqrt(polynomial))
    with errstate(xp, over="ignore", divide="ignore"):
        excess = xp.expm1(theta / t)
        bose = (1.0 - 3.0 * d2) / excess
        occupation = 1.0 / excess
    value = gap_at_zero - alpha * theta * (bose + 1.5 * d2 * (root - 1.0))
    d_polynomial = x * (2.0 * c2 + x * (3.0 * c3 + x * (32.0 / 3.0 + 6.0 * x2)))
    d_occupation = occupation * (occupation + 1.0) * (theta / (t * t))
    slope = (
        -alpha
        * theta
        * ((1.0 - 3.0 * d2) * d_occupation + 0.5 * d2 * root / polynomial * d_polynomial / theta)
    )
    return value, {"temperature": slope}


@kernel(
    inputs={"temperature": "K"},
    output="eV",
    coefficients={"low_coefficients": "1", "high_coefficients": "1", "switch_temperature": "K"},
    array_api=True,
)
def piecewise_quadratic(temperature, *, low_coefficients, high_coefficients, switch_temperature):
    """Two quadratics in T (kelvin), joined at ``switch_temperature``.

    ``Eg = c0 + c1 T + c2 T^2`` (eV, T in K) with the low set below the switch
    temperature and the high set above it (Bludau, Onton & Heinke's fit).

    Parameters
    ----------
    temperature : array_like, K
    low_coefficients, high_coefficients : (c0 [eV], c1 [eV/K], c2 [eV/K^2])
    switch_temperature : K

    References
    ----------
    W. Bludau, A. Onton and W. Heinke, J. Appl. Phys. 45, 1846 (1974).
    """
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    low = horner(t, low_coefficients)
    high = horner(t, high_coefficients)
    return xp.where(t < switch_temperature, low, high)


@derivatives_of(piecewise_quadratic)
def piecewise_quadratic_derivatives(
    temperature, *, low_coefficients, high_coefficients, switch_temperature
):
    """The two quadratics and their slopes ``c1 + 2 c2 T`` (one-sided at the switch)."""
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    below = t < switch_temperature
    return (
        xp.where(below, horner(t, low_coefficients), horner(t, high_coefficients)),
        {
            "temperature": xp.where(
                below,
                horner_derivative(t, low_coefficients),
                horner_derivative(t, high_coefficients),
            )
        },
    )
