"""Steady-state excess density under uniform generation, and the implied voltage.

In steady state the generation rate per volume ``G`` equals the recombination rate
``U(dn) = dn / tau_eff(dn)``. ``U`` rises strictly with ``dn`` for the
recombination models of matprops (SRH, Auger, radiative), so each point has one
root. :func:`steady_state_excess` finds it for whole arrays at once: it brackets
the root in ``x = ln dn`` by widening a decade at a time, then runs the Illinois
variant of false position on ``ln U(e^x) - ln G`` (nearly linear in ``x``, since U
grows like a power of dn), which converges superlinearly; every point reaches the
relative tolerance or :class:`~matprops.errors.SolverError` names those that did
not.

The implied voltage (quasi-Fermi-level splitting over q) in Boltzmann statistics is

    V = (kT/q) ln[(n0 + dn)(p0 + dn) / (n0 p0)]

with ``n0 p0 = n_ie^2`` the equilibrium product (the narrowing of equilibrium,
as in the recombination rates).
"""

import numpy as np

from ..errors import SolverError
from .constants import BOLTZMANN_EV


def implied_voltage(
    temperature, equilibrium_electron_density, equilibrium_hole_density, excess_density
):
    """Quasi-Fermi-level splitting over q, V, of uniform excess density ``dn`` (cm^-3).

    ``(kT/q) ln(1 + dn (n0 + p0 + dn) / (n0 p0))`` evaluated with ``log1p`` so that
    small injection keeps its precision.
    """
    kt = BOLTZMANN_EV * np.asarray(temperature, dtype=float)
    n0 = np.asarray(equilibrium_electron_density, dtype=float)
    p0 = np.asarray(equilibrium_hole_density, dtype=float)
    dn = np.asarray(excess_density, dtype=float)
    return kt * np.log1p(dn * (n0 + p0 + dn) / (n0 * p0))


def steady_state_excess(rate, generation, guess, rtol=1e-12, max_iterations=200):
    """The excess density ``dn`` (cm^-3) with ``rate(dn) = generation`` at every point.

    Parameters
    ----------
    rate : callable, array of dn (cm^-3, the shape of ``generation``) -> recombination
        rate (cm^-3 s^-1), strictly increasing in dn
    generation : array_like, cm^-3 s^-1 (> 0)
    guess : array_like, cm^-3 (> 0): a first estimate, e.g. G times the
        low-injection lifetime
    rtol : relative tolerance on dn

    Returns
    -------
    dn, cm^-3, the shape of ``generation``
    """
    g = np.asarray(generation, dtype=float)
    shape = g.shape
    log_g = np.log(g).ravel()
    x = np.log(np.broadcast_to(np.asarray(guess, dtype=float), shape)).ravel().copy()

    def residual(values):
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.log(rate(np.exp(values).reshape(shape))).ravel() - log_g

    # bracket: widen a decade at a time (the rate grows at least linearly in dn)
    low, high = x.copy(), x.copy()
    f_low, f_high = residual(low), residual(high)
    step = np.log(10.0)
    for _ in range(80):
        need_low, need_high = ~(f_low < 0), ~(f_high > 0)
        if not (need_low.any() or need_high.any()):
            break
        low = np.where(need_low, low - step, low)
        high = np.where(need_high, high + step, high)
        f_low = np.where(need_low, residual(low), f_low)
        f_high = np.where(need_high, residual(high), f_high)
    bracketed = (f_low <= 0) & (f_high >= 0) & np.isfinite(f_low) & np.isfinite(f_high)
    if not bracketed.all():
        _fail(~bracketed, shape, np.exp(log_g), "no bracket found")
    high = np.where(f_low == 0, low, high)
    low = np.where(f_high == 0, high, low)
    # Illinois false position in x = ln dn (a tolerance in x is relative in dn). A
    # residual |f| below rtol also ends a point: since U grows at least like dn, x is
    # then within rtol of the root.
    side = np.zeros(x.shape, dtype=int)
    best = np.where(np.abs(f_low) <= np.abs(f_high), low, high)
    best_f = np.minimum(np.abs(f_low), np.abs(f_high))
    for _ in range(max_iterations):
        width = high - low
        active = (width > rtol) & (best_f > rtol)
        if not active.any():
            break
        denominator = f_high - f_low
        with np.errstate(divide="ignore", invalid="ignore"):
            x_new = low - f_low * width / denominator
        x_new = np.where((x_new > low) & (x_new < high), x_new, 0.5 * (low + high))
        f_new = residual(x_new)
        go_high = active & (f_new >= 0)  # f_new == 0 closes the bracket on x_new
        go_low = active & (f_new <= 0)
        # Illinois: when the same end is replaced twice running, halve the other's residual
        f_low = np.where(go_high & ~go_low & (side == 1), 0.5 * f_low, f_low)
        f_high = np.where(go_low & ~go_high & (side == -1), 0.5 * f_high, f_high)
        high, f_high = np.where(go_high, x_new, high), np.where(go_high, f_new, f_high)
        low, f_low = np.where(go_low, x_new, low), np.where(go_low, f_new, f_low)
        side = np.where(go_high, 1, np.where(go_low, -1, side))
        better = active & (np.abs(f_new) < best_f)
        best, best_f = np.where(better, x_new, best), np.where(better, np.abs(f_new), best_f)
    closed = (high - low) <= rtol
    unfinished = ~closed & (best_f > rtol)
    if unfinished.any():
        _fail(unfinished, shape, np.exp(log_g), "no convergence")
    result = np.where(closed, 0.5 * (low + high), best)
    return np.exp(result).reshape(shape)


def _fail(bad, shape, generation, what):
    index = np.flatnonzero(bad)
    shown = ", ".join(
        f"#{np.unravel_index(i, shape) if len(shape) > 1 else i}: G={generation[i]:g} cm^-3 s^-1"
        for i in index[:5]
    )
    more = f" and {index.size - 5} more" if index.size > 5 else ""
    error = SolverError(f"steady state: {index.size} point(s) failed ({what}): {shown}{more}")
    # the failing points (flat indices into ``shape``), for a caller naming their inputs
    error.points, error.count, error.reason = index[:5].tolist(), int(index.size), what
    raise error
