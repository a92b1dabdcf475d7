"""Equilibrium carrier statistics: the Fermi level that makes doped silicon neutral.

Unknown: the reduced Fermi level ``eta = (E_F - E_c') / kT`` measured from the
(narrowed) conduction-band edge ``E_c' = E_c - dEc``. The valence-band side is
``eta_v = (E_v' - E_F) / kT = -eta - g`` with ``g = Eg' / kT`` the reduced
narrowed gap. Then

- ``n = Nc F(eta)``, ``p = Nv F(eta_v)`` with ``F`` the Fermi-Dirac integral of
  order 1/2 (:mod:`.fermi_dirac`) or, for Boltzmann statistics, ``exp``;
- ``Nd+ = Nd [(1 - b_D) + b_D logistic(-(eta + w_D))]`` and
  ``Na- = Na [(1 - b_A) + b_A logistic(-(eta_v + w_A))]`` with
  ``w = E_dop/kT + ln g`` (see :mod:`.ionisation`);
- neutrality: ``p + Nd+ = n + Na-``.

The solver works on the logarithm of the two sides, ``r(eta) = ln(p + Nd+) -
ln(n + Na-)``, which decreases strictly with eta and stays finite from deep
cryogenic temperatures (densities far below 1e-300) to degenerate doping:
safeguarded Newton steps inside a bracket that is widened until it holds a sign
change, bisection wherever a Newton step leaves it. ``|r|`` is the relative
neutrality residual; every point converges below ``rtol`` or
:class:`~matprops.errors.SolverError` names the points that did not.

The band gap entering the statistics is the one consistent with the intrinsic
density supplied, ``Eg = kT ln(Nc Nv / ni^2)``, so that undoped silicon
reproduces that ``ni`` exactly (Boltzmann limit). A narrowing that depends on
the free-carrier densities (Schenk's) is made self-consistent by repeating the
solve with the narrowing at the last n and p until the reduced narrowing moves
by less than ``rtol``.
"""

from __future__ import annotations

import numpy as np

from ..errors import SolverError
from .constants import BOLTZMANN_EV

__all__ = ["solve"]

_BOLTZMANN_TAIL = -40.0  # below this reduced level F_1/2(eta) = exp(eta) to 1e-18


def _log_states(eta, fermi_dirac):
    """``ln F(eta)`` and ``F'(eta)/F(eta)`` for F = F_1/2 or exp."""
    if not fermi_dirac:
        return eta, np.ones_like(eta)
    from .fermi_dirac import fd_half, fd_minus_half

    tail = eta < _BOLTZMANN_TAIL
    safe = np.where(tail, 0.0, eta)
    value = fd_half(safe)
    log_value = np.where(tail, eta, np.log(value))
    ratio = np.where(tail, 1.0, fd_minus_half(safe) / value)
    return log_value, ratio


def _log_inverse_states(log_density, fermi_dirac):
    """eta such that ln F(eta) = log_density."""
    if not fermi_dirac:
        return log_density
    from .fermi_dirac import fd_half_inverse

    tail = log_density < _BOLTZMANN_TAIL
    return np.where(tail, log_density,
                    fd_half_inverse(np.exp(np.where(tail, 0.0, log_density))))


def _logistic(x):
    z = np.exp(-np.abs(x))
    return np.where(x >= 0, 1.0 / (1.0 + z), z / (1.0 + z))


def _log_ionised(log_density, x, share):
    """ln of the ionised density N[(1 - b) + b logistic(-x)] and the ratio
    ``b s (1 - s) / ((1 - b) + b (1 - s))`` with ``s = logistic(x)`` (d ln N+ / dx, negated)."""
    tail = _logistic(-x)  # 1 - s, accurate when s is close to 1
    fraction = (1.0 - share) + share * tail
    with np.errstate(divide="ignore"):
        log_ionised = log_density + np.log(fraction)
    ratio = np.divide(share * tail * (1.0 - tail), fraction,
                      out=np.zeros_like(fraction), where=fraction > 0)
    return log_ionised, ratio


class _Neutrality:
    """The log residual r(eta) and its derivative at fixed narrowing."""

    def __init__(self, log_nc, log_nv, log_nd, log_na, gap, w_d, b_d, w_a, b_a,
                 fermi_dirac):
        self.log_nc, self.log_nv = log_nc, log_nv
        self.log_nd, self.log_na = log_nd, log_na
        self.gap, self.w_d, self.b_d, self.w_a, self.b_a = gap, w_d, b_d, w_a, b_a
        self.fermi_dirac = fermi_dirac

    def parts(self, eta):
        eta_v = -eta - self.gap
        log_fc, rho_c = _log_states(eta, self.fermi_dirac)
        log_fv, rho_v = _log_states(eta_v, self.fermi_dirac)
        log_n = self.log_nc + log_fc
        log_p = self.log_nv + log_fv
        log_donors, q_d = _log_ionised(self.log_nd, eta + self.w_d, self.b_d)
        log_acceptors, q_a = _log_ionised(self.log_na, eta_v + self.w_a, self.b_a)
        return log_n, log_p, log_donors, log_acceptors, rho_c, rho_v, q_d, q_a

    def __call__(self, eta):
        log_n, log_p, log_d, log_a, rho_c, rho_v, q_d, q_a = self.parts(eta)
        log_positive = np.logaddexp(log_p, log_d)
        log_negative = np.logaddexp(log_n, log_a)
        residual = log_positive - log_negative
        slope = -(rho_v * np.exp(log_p - log_positive) + q_d * np.exp(log_d - log_positive)
                  + rho_c * np.exp(log_n - log_negative) + q_a * np.exp(log_a - log_negative))
        return residual, slope


def _newton(residual_at, eta, low, high, rtol, max_iterations):
    """Safeguarded Newton on a strictly decreasing residual, vectorised."""
    # widen the bracket until r(low) > 0 > r(high) everywhere
    for _ in range(60):
        r_low, _ = residual_at(low)
        r_high, _ = residual_at(high)
        bad_low, bad_high = r_low <= 0, r_high >= 0
        if not (bad_low.any() or bad_high.any()):
            break
        low = np.where(bad_low, low - 2.0 * (high - low) - 10.0, low)
        high = np.where(bad_high, high + 2.0 * (high - low) + 10.0, high)
    eta = np.clip(eta, low, high)
    residual, slope = residual_at(eta)
    for _ in range(max_iterations):
        done = np.abs(residual) <= rtol
        if done.all():
            return eta, residual, True
        low = np.where(residual > 0, eta, low)
        high = np.where(residual < 0, eta, high)
        step = eta - residual / slope
        inside = (step > low) & (step < high) & np.isfinite(step)
        proposal = np.where(inside, step, 0.5 * (low + high))
        eta = np.where(done, eta, proposal)
        residual, slope = residual_at(eta)
    return eta, residual, bool((np.abs(residual) <= rtol).all())


def solve(temperature, donor_density, acceptor_density, *, conduction_states,
          valence_states, intrinsic_density, narrowing, narrowing_uses_carriers,
          donor_level, acceptor_level, donor_degeneracy, acceptor_degeneracy,
          gap_offset=0.0, fermi_dirac=True, rtol=1e-12, max_iterations=200):
    """Solve charge neutrality for broadcast arrays of temperature and dopant densities.

    Parameters
    ----------
    temperature : array_like, K
    donor_density, acceptor_density : array_like, cm^-3 (total, not ionised)
    conduction_states, valence_states : array_like, cm^-3 (Nc, Nv at temperature)
    intrinsic_density : array_like, cm^-3 (ni of undoped silicon at temperature)
    narrowing : callable ``(electron_density, hole_density) -> (dEc, dEv)`` in eV,
        bound to the temperature and dopant densities of the call
    narrowing_uses_carriers : bool; if False ``narrowing`` is evaluated once
    donor_level, acceptor_level : pairs ``(E_dop [eV], localised share b)``
    donor_degeneracy, acceptor_degeneracy : float
    gap_offset : array_like, eV; a further narrowing of the gap, split equally between
        the edges (an apparent narrowing's reconciliation with its own ni)
    fermi_dirac : bool; Boltzmann statistics when False
    rtol : relative neutrality residual (and self-consistency) to reach

    Returns
    -------
    dict of arrays (broadcast shape): ``reduced_fermi_level`` (eta), ``electron_density``,
    ``hole_density``, ``ionised_donors``, ``ionised_acceptors`` (cm^-3),
    ``conduction_edge_shift``, ``valence_edge_shift`` (eV, of the narrowing model,
    at the returned n and p), ``fermi_from_conduction_edge`` (E_F - E_c'),
    ``fermi_from_valence_edge`` (E_F - E_v'), ``fermi_from_intrinsic`` (E_F - E_i,
    E_i the intrinsic level of undoped silicon: ``E_c - kT ln(Nc/ni)``), eV, and
    ``residual`` (relative).
    """
    arrays = np.broadcast_arrays(*(np.asarray(a, dtype=float) for a in (
        temperature, donor_density, acceptor_density, conduction_states, valence_states,
        intrinsic_density, gap_offset)))
    shape = arrays[0].shape
    t, nd, na, nc, nv, ni, offset = (a.ravel() for a in arrays)
    levels = [np.broadcast_to(np.asarray(x, dtype=float), shape).ravel()
              for x in (*donor_level, *acceptor_level)]
    e_d, b_d, e_a, b_a = levels
    kt = BOLTZMANN_EV * t
    with np.errstate(divide="ignore"):
        log_nd, log_na = np.log(nd), np.log(na)
    log_nc, log_nv = np.log(nc), np.log(nv)
    log_ni = np.log(ni)
    reduced_gap = log_nc + log_nv - 2.0 * log_ni - offset / kt
    w_d = e_d / kt + np.log(donor_degeneracy)
    w_a = e_a / kt + np.log(acceptor_degeneracy)

    def shifts(n, p):
        dec, dev = narrowing(n.reshape(shape), p.reshape(shape))
        return (np.broadcast_to(dec, shape).ravel().astype(float),
                np.broadcast_to(dev, shape).ravel().astype(float))

    # start from full ionisation with Boltzmann statistics
    net = nd - na
    majority = 0.5 * np.abs(net) + np.sqrt(0.25 * net * net + ni * ni)
    minority = ni * (ni / majority)
    n = np.where(net >= 0, majority, minority)
    p = np.where(net >= 0, minority, majority)
    dec, dev = shifts(n, p)
    eta = np.log(n) - log_nc
    for _ in range(100 if narrowing_uses_carriers else 1):
        gap = reduced_gap - (dec + dev) / kt
        neutrality = _Neutrality(log_nc, log_nv, log_nd, log_na, gap, w_d, b_d, w_a, b_a,
                                 fermi_dirac)
        # bracket: the majority side's density exceeds twice all dopants
        total = np.log(2.0 * (nd + na) + 1e-300)
        middle = 0.5 * (-gap + log_nv - log_nc)
        high = np.maximum(_log_inverse_states(total - log_nc, fermi_dirac), middle) + 2.0
        low = np.minimum(-gap - _log_inverse_states(total - log_nv, fermi_dirac),
                         middle) - 2.0
        eta, residual, converged = _newton(neutrality, eta, low, high, rtol, max_iterations)
        if not converged:
            _fail(np.abs(residual) > rtol, shape, t, nd, na, residual,
                  "the neutrality equation")
        log_n, log_p, log_d, log_a, *_ = neutrality.parts(eta)
        n, p = np.exp(log_n), np.exp(log_p)
        if not narrowing_uses_carriers:
            break
        new_dec, new_dev = shifts(n, p)
        change = np.abs(new_dec + new_dev - dec - dev) / kt
        dec, dev = new_dec, new_dev
        if (change <= rtol).all():
            # final pass with the settled narrowing
            gap = reduced_gap - (dec + dev) / kt
            neutrality = _Neutrality(log_nc, log_nv, log_nd, log_na, gap, w_d, b_d, w_a,
                                     b_a, fermi_dirac)
            eta, residual, converged = _newton(neutrality, eta, eta - 1e-6, eta + 1e-6,
                                               rtol, max_iterations)
            log_n, log_p, log_d, log_a, *_ = neutrality.parts(eta)
            break
    else:
        _fail(change > rtol, shape, t, nd, na, change,
              "the self-consistent narrowing (it keeps moving)")

    gap = reduced_gap - (dec + dev) / kt
    result = {
        "reduced_fermi_level": eta,
        "electron_density": np.exp(log_n),
        "hole_density": np.exp(log_p),
        "ionised_donors": np.exp(log_d),
        "ionised_acceptors": np.exp(log_a),
        "conduction_edge_shift": dec,
        "valence_edge_shift": dev,
        "fermi_from_conduction_edge": eta * kt,
        "fermi_from_valence_edge": (eta + gap) * kt,
        "fermi_from_intrinsic": eta * kt - dec - 0.5 * offset + kt * (log_nc - log_ni),
        "residual": residual,
    }
    return {key: value.reshape(shape) for key, value in result.items()}


def _fail(bad, shape, t, nd, na, residual, what):
    index = np.flatnonzero(bad)
    shown = ", ".join(
        f"#{np.unravel_index(i, shape) if len(shape) > 1 else i}: T={t[i]:g} K, "
        f"Nd={nd[i]:g}, Na={na[i]:g} cm^-3 (residual {residual[i]:.2g})" for i in index[:5])
    more = f" and {index.size - 5} more" if index.size > 5 else ""
    raise SolverError(f"equilibrium: {index.size} point(s) did not converge in {what}: "
                      f"{shown}{more}")
