"""Complete Fermi-Dirac integrals of order 1/2 and -1/2, and the inverse of F_1/2.

Convention (normalised, as in ``n = Nc F_1/2(eta)``, ``eta = (E_F - E_c)/kT``)::

    F_j(eta) = 1/Gamma(j+1) * Integral_0^inf x^j / (1 + exp(x - eta)) dx
             = -Li_{j+1}(-exp(eta))                                   (DLMF §25.12)

so ``F_j(eta) -> exp(eta)`` for ``eta -> -inf`` (Boltzmann limit) and
``dF_j/deta = F_{j-1}``: ``fd_minus_half`` is the derivative of ``fd_half``.

Method: piecewise minimax rational approximations ``P/Q`` whose coefficients live in
``_fermi_dirac_coefficients.py``, generated offline by ``tools/make_fermi_dirac.py``
(mpmath, Remez exchange, reference ``-Li_{j+1}(-e^eta)``; re-run it to reproduce them)::

    eta <= 0                    F = z P(z)/Q(z),   z = exp(eta)
    b[i-1] < eta <= b[i]        F = P(t)/Q(t),     t = eta - b[i-1],  b = 0, 2, 5, 10, 20
    eta > 20                    F = eta^(j+1)/Gamma(j+2) * (1 + s P(s)/Q(s)),  s = eta^-2

The first form makes the Boltzmann limit exact (``P(0) = Q(0) = 1``) and does not
underflow before ``exp(eta)`` itself does.  The last is the Sommerfeld expansion
``F_j = eta^(j+1)/Gamma(j+2) [1 + sum_k 2 (1 - 2^(1-2k)) zeta(2k) Gamma(j+2)/Gamma(j+2-2k)
eta^(-2k)] + cos(pi j) F_j(-eta)``, whose last term vanishes for j = +-1/2; the divergent
series (``1 + pi^2/8 s + 7 pi^4/640 s^2 + ...`` for j = 1/2, ``1 - pi^2/24 s - 7 pi^4/384
s^2 - ...`` for j = -1/2) is summed by the rational; truncated at its smallest term it
would be good to only about 4e-12 relative at eta = 20.

The inverse ``eta = F_1/2^-1(y)`` is fitted the same way, on segments cut at
``F_1/2(2)``, ``F_1/2(5)``, ``F_1/2(12)``::

    y <= F(2)                   eta = log(y P(y)/Q(y))         (log y exactly as y -> 0)
    F(c[i-1]) < y <= F(c[i])    eta = P(t)/Q(t),  t = y - F(c[i-1]),  c = 2, 5, 12
    y > F(12)                   eta = u (1 + v P(v)/Q(v)),  u = (Gamma(5/2) y)^(2/3), v = u^-2

(the last is the inverted Sommerfeld series ``eta = u - pi^2/(12 u) - ...``).  Its error
is already at the rounding level, so no Newton step follows (one on ``fd_half`` and
``fd_minus_half`` would cost 3.2 times as much).

Accuracy, measured by ``tools/make_fermi_dirac.py`` against mpmath on 3.1e4 values of eta from
-700 to 1e6 (for the inverse 1.4e4 values of y from 1e-30 to 1.3e6, error of eta times
F_-1/2/F_1/2), worst relative error (kept in ``ACCURACY``)::

    fd_half            5.5e-16   at eta = 25.9
    fd_minus_half      5.6e-16   at eta = 20.0
    fd_half_inverse    9.6e-16   at eta = 21.7

a few roundings of float64 (the fits themselves are within 1.4e-16).  The round trip
``fd_half(fd_half_inverse(y))`` also carries the rounding of eta to a double, up to
``|eta| * 1.1e-16`` relative (8e-15 at y = 1e-30).

Speed (``benchmarks/bench_fermi_dirac.py``, 1e6 points): 7-10 ns per element when
neighbouring values share a segment, as on a smooth grid (10-13 times ``np.exp``, which
takes 0.75 ns on the AVX-512 machine measured, about the cost of one division), and
about 21 ns (25 times) when every block of 32768 values spans all segments.

Inputs are any real array_like (computed in float64: float32 in gives float64 out),
a 0-d input gives a numpy scalar like a ufunc, NaN gives NaN, +-inf give the limits.
For eta < -708 the result is subnormal like ``exp(eta)`` and loses relative precision
the same way; it is 0 below about -745.  These are plain helpers for the kernels
(no units, no validity warnings).
"""

from bisect import bisect_left
from math import gamma, inf

import numpy as np

from . import _fermi_dirac_coefficients as _coefficients

__all__ = ["ACCURACY", "fd_half", "fd_half_inverse", "fd_minus_half"]

#: Worst relative error measured by ``tools/make_fermi_dirac.py``, and the eta where it occurred.
ACCURACY = _coefficients.ACCURACY

_BLOCK = 32768  # elements per block: temporaries stay in cache
_FORWARD_EDGES = (-inf,) + _coefficients.BREAKS
_INVERSE_EDGES = (0.0,) + _coefficients.INVERSE_BREAKS
_GAMMA_5_2 = gamma(2.5)
_GAMMA_3_2 = gamma(1.5)


def fd_half(eta):
    """Normalised Fermi-Dirac integral ``F_1/2(eta)`` (see the module docstring).

    Parameters
    ----------
    eta : array_like, reduced Fermi level (E_F - E_c)/kT, dimensionless; any real.

    Returns
    -------
    ndarray of float64 (numpy scalar for 0-d input), > 0; ``exp(eta)`` for eta << 0,
    ``eta^(3/2) / Gamma(5/2)`` for eta >> 0.

    Examples
    --------
    >>> round(float(fd_half(0.0)), 12)      # (1 - 2^-1/2) zeta(3/2)
    0.765147024625
    """
    return _piecewise(eta, _FORWARD_EDGES, _forward, _coefficients.HALF, 1.5)


def fd_minus_half(eta):
    """Normalised Fermi-Dirac integral ``F_-1/2(eta) = dF_1/2/deta``.

    Parameters
    ----------
    eta : array_like, dimensionless; any real.

    Returns
    -------
    ndarray of float64 (numpy scalar for 0-d input), > 0; ``exp(eta)`` for eta << 0,
    ``eta^(1/2) / Gamma(3/2)`` for eta >> 0.

    Examples
    --------
    >>> round(float(fd_minus_half(0.0)), 12)   # (1 - 2^1/2) zeta(1/2)
    0.604898643422
    """
    return _piecewise(eta, _FORWARD_EDGES, _forward, _coefficients.MINUS_HALF, 0.5)


def fd_half_inverse(y):
    """The reduced Fermi level ``eta`` with ``F_1/2(eta) = y``.

    Parameters
    ----------
    y : array_like, dimensionless (e.g. n/Nc), y > 0.

    Returns
    -------
    ndarray of float64 (numpy scalar for 0-d input); -inf for y = 0, NaN for y < 0.

    Examples
    --------
    >>> round(float(fd_half_inverse(fd_half(3.0))), 12)
    3.0
    """
    return _piecewise(y, _INVERSE_EDGES, _inverse, _coefficients.HALF_INVERSE, None)


def _horner(coefficients, t):
    """Sum of coefficients[k] t^k, coefficients from degree 0 up (degree >= 1)."""
    result = coefficients[-1] * t
    result += coefficients[-2]
    for c in coefficients[-3::-1]:
        result *= t
        result += c
    return result


def _rational(pair, t, out=None):
    numerator = _horner(pair[0], t)
    return np.divide(numerator, _horner(pair[1], t), out=numerator if out is None else out)


def _forward(segment, eta, table, power, out=None):
    """F_j on one segment (power = j + 1), written to out if given."""
    if segment == 0:
        z = np.exp(eta)
        return np.multiply(_rational(table[0], z), z, out=out)
    if segment < len(table) - 1:
        return _rational(table[segment], eta - _coefficients.BREAKS[segment - 1], out)
    s = 1.0 / eta
    s *= s
    series = _rational(table[-1], s)
    series *= s
    series += 1.0
    if power == 1.5:
        series *= eta  # eta/Gamma(5/2) before the root: no early overflow
        series *= 1.0 / _GAMMA_5_2
    else:
        series *= 1.0 / _GAMMA_3_2
    return np.multiply(series, np.sqrt(eta), out=out)


def _inverse(segment, y, table, _power, out=None):
    """eta = F_1/2^-1(y) on one segment, written to out if given."""
    if segment == 0:
        r = _rational(table[0], y)
        r *= y
        return np.log(r, out=out)
    if segment < len(table) - 1:
        return _rational(table[segment], y - _coefficients.INVERSE_BREAKS[segment - 1], out)
    u = np.cbrt(y)
    u *= _GAMMA_5_2 ** (1.0 / 3.0)
    u *= u
    v = 1.0 / u
    v *= v
    eta = _rational(table[-1], v)
    eta *= v
    eta += 1.0
    return np.multiply(eta, u, out=out)


def _piecewise(x, edges, evaluate, table, power):
    """Evaluate segment i of ``evaluate`` where edges[i] < x <= edges[i+1].

    Segment 0 includes its lower edge, the last segment is unbounded above; values
    in no segment (NaN, below edges[0]) give NaN.  Works through the array in blocks
    of _BLOCK elements; a block inside one segment is evaluated without indexing.
    """
    x = np.asarray(x, dtype=float)
    out = np.empty(x.shape)
    flat_x, flat_out = x.reshape(-1), out.reshape(-1)
    inner = edges[1:]

    def segment_of(value):
        if not value >= edges[0]:  # NaN or below the domain
            return None
        return bisect_left(inner, value)

    with np.errstate(all="ignore"):
        for start in range(0, flat_x.size, _BLOCK):
            block = flat_x[start : start + _BLOCK]
            block_out = flat_out[start : start + _BLOCK]
            first, last = segment_of(block.min()), segment_of(block.max())
            if first is not None and first == last:
                evaluate(first, block, table, power, block_out)
                continue
            block_out.fill(np.nan)
            segment = (block >= edges[0]).view(np.int8) - np.int8(1)  # -1: NaN, out of domain
            for edge in inner:
                segment += (block > edge).view(np.int8)
            for i in range(len(edges)):
                index = np.flatnonzero(segment == i)
                if index.size:
                    block_out[index] = evaluate(i, block[index], table, power)
    return out[()] if out.ndim == 0 else out
