"""Fundamental (indirect) band gap of undoped silicon versus temperature, in eV."""

import numpy as np

from ._spec import kernel


@kernel(inputs={"temperature": "K"}, output="eV",
        coefficients={"gap_at_zero": "eV", "alpha": "eV/K", "beta": "K"})
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
    t = np.asarray(temperature, dtype=float)
    return gap_at_zero - alpha * t * t / (t + beta)


@kernel(inputs={"temperature": "K"}, output="eV",
        coefficients={"gap_at_zero": "eV", "alpha": "eV/K", "theta": "K", "p": "1"})
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
    t = np.asarray(temperature, dtype=float)
    x = 2.0 * t / theta
    # (x^p) written as exp(p ln x) with x = 0 handled: x^p -> 0
    with np.errstate(divide="ignore"):
        xp = np.exp(p * np.log(x))
    return gap_at_zero - 0.5 * alpha * theta * (np.exp(np.log1p(xp) / p) - 1.0)


@kernel(inputs={"temperature": "K"}, output="eV",
        coefficients={"gap_at_zero": "eV", "alpha": "eV/K", "theta": "K",
                      "delta": "1"})
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
    t = np.asarray(temperature, dtype=float)
    d2 = delta * delta
    x = 2.0 * t / theta
    x2 = x * x
    x3 = x2 * x
    root = np.cbrt(np.sqrt(1.0 + np.pi**2 * x2 / (3.0 * (1.0 + d2))
                           + (3.0 * d2 - 1.0) * x3 / 4.0 + 8.0 * x2 * x2 / 3.0
                           + x3 * x3))
    with np.errstate(over="ignore", divide="ignore"):
        bose = (1.0 - 3.0 * d2) / np.expm1(theta / t)
    return gap_at_zero - alpha * theta * (bose + 1.5 * d2 * (root - 1.0))


@kernel(inputs={"temperature": "K"}, output="eV",
        coefficients={"low_coefficients": "1", "high_coefficients": "1",
                      "switch_temperature": "K"})
def piecewise_quadratic(temperature, *, low_coefficients, high_coefficients,
                        switch_temperature):
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
    t = np.asarray(temperature, dtype=float)
    low = np.polynomial.polynomial.polyval(t, low_coefficients)
    high = np.polynomial.polynomial.polyval(t, high_coefficients)
    return np.where(t < switch_temperature, low, high)
