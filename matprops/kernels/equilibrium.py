"""Equilibrium carrier statistics: the Fermi level that makes doped silicon neutral.

Unknown: the reduced Fermi level ``eta = (E_F - E_c') / kT`` measured from the
(narrowed) conduction-band edge ``E_c' = E_c - dEc``. The valence-band side is
``eta_v = (E_v' - E_F) / kT = -eta - g`` with ``g = Eg' / kT`` the reduced
narrowed gap. Then

- ``n = Nc F(eta)``, ``p = Nv F(eta_v)`` with ``F`` the Fermi-Dirac integral of
  order 1/2 (:mod:`.fermi_dirac`) or, for Boltzmann statistics, ``exp``;
- ``Nd+ = Nd [(1 - b_D) + b_D logistic(-(eta + w_D))]`` and
  ``Na- = Na [(1 - b_A) + b_A logistic(-(eta_v + w_A))]`` with
  ``w = E_dop/kT + ln g`` (see :mod:`.ionisation`); with ``occupancy_from_densities``
  the occupancy takes ``ln(n/Nc)`` for eta and ``ln(p/Nv)`` for eta_v (the Boltzmann
  relation between density and Fermi level that an ionisation model fitted with
  Boltzmann statistics holds), the band densities keeping their Fermi-Dirac form;
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

# Below this reduced level F_1/2(eta) = exp(eta) (1 - exp(eta)/2^1.5 + ...) equals exp(eta)
# to 2e-16 relative, and F_-1/2 / F_1/2 equals 1 to 1e-16.
_BOLTZMANN_TAIL = -35.0


def _log_states(eta, fermi_dirac):
    """``ln F(eta)`` and ``F'(eta)/F(eta)`` for F = F_1/2 or exp.

    Fermi-Dirac integrals are evaluated only where they differ from exp(eta)."""
    log_value = eta.copy()
    ratio = np.ones_like(eta)
    if fermi_dirac:
        from .fermi_dirac import fd_half, fd_minus_half

        index = np.flatnonzero(eta >= _BOLTZMANN_TAIL)
        if index.size:
            degenerate = eta[index]
            value = fd_half(degenerate)
            log_value[index] = np.log(value)
            ratio[index] = fd_minus_half(degenerate) / value
    return log_value, ratio


def _log_inverse_states(log_density, fermi_dirac):
    """eta such that ln F(eta) = log_density."""
    eta = np.array(log_density, dtype=float)
    if fermi_dirac:
        from .fermi_dirac import fd_half_inverse

        index = np.flatnonzero(eta >= _BOLTZMANN_TAIL)
        if index.size:
            eta[index] = fd_half_inverse(np.exp(eta[index]))
    return eta


def _log_ionised(log_density, x, share):
    """ln of the ionised density N[(1 - b) + b / (1 + e^x)] and the ratio
    ``b s (1 - s) / ((1 - b) + b (1 - s))``, ``s = 1/(1 + e^-x)`` (d ln N+ / dx, negated).

    ``1 - s = exp(-ln(1 + e^x))`` keeps its relative precision deep in freeze-out."""
    tail = np.exp(-np.logaddexp(0.0, x))  # 1 - s
    fraction = (1.0 - share) + share * tail
    with np.errstate(divide="ignore", invalid="ignore"):
        log_ionised = log_density + np.log(fraction)
        ratio = share * tail * (1.0 - tail) / fraction
    return log_ionised, np.where(fraction > 0, ratio, 0.0)


class _Neutrality:
    """The log residual r(eta) and its derivative at fixed narrowing."""

    def __init__(
        self, log_nc, log_nv, log_nd, log_na, gap, w_d, b_d, w_a, b_a, fermi_dirac, by_density
    ):
        self.log_nc, self.log_nv = log_nc, log_nv
        self.log_nd, self.log_na = log_nd, log_na
        self.gap, self.w_d, self.b_d, self.w_a, self.b_a = gap, w_d, b_d, w_a, b_a
        self.fermi_dirac = fermi_dirac
        # the occupancy written with ln(n/Nc), ln(p/Nv) (Boltzmann-fitted ionisation)
        self.by_density = by_density and fermi_dirac

    def subset(self, index):
        """The same equation on a subset of the points."""
        return _Neutrality(
            self.log_nc[index],
            self.log_nv[index],
            self.log_nd[index],
            self.log_na[index],
            self.gap[index],
            self.w_d[index],
            self.b_d[index],
            self.w_a[index],
            self.b_a[index],
            self.fermi_dirac,
            self.by_density,
        )

    def parts(self, eta):
        eta_v = -eta - self.gap
        log_fc, rho_c = _log_states(eta, self.fermi_dirac)
        log_fv, rho_v = _log_states(eta_v, self.fermi_dirac)
        log_n = self.log_nc + log_fc
        log_p = self.log_nv + log_fv
        x_d, x_a = (log_fc, log_fv) if self.by_density else (eta, eta_v)
        log_donors, q_d = _log_ionised(self.log_nd, x_d + self.w_d, self.b_d)
        log_acceptors, q_a = _log_ionised(self.log_na, x_a + self.w_a, self.b_a)
        if self.by_density:  # d x / d eta of the occupancy's argument
            q_d, q_a = q_d * rho_c, q_a * rho_v
        return log_n, log_p, log_donors, log_acceptors, rho_c, rho_v, q_d, q_a

    def __call__(self, eta):
        log_n, log_p, log_d, log_a, rho_c, rho_v, q_d, q_a = self.parts(eta)
        log_positive = np.logaddexp(log_p, log_d)
        log_negative = np.logaddexp(log_n, log_a)
        residual = log_positive - log_negative
        slope = -(
            rho_v * np.exp(log_p - log_positive)
            + q_d * np.exp(log_d - log_positive)
            + rho_c * np.exp(log_n - log_negative)
            + q_a * np.exp(log_a - log_negative)
        )
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


def _first_guess(nd, na, ni, log_nc, log_nv, reduced_gap, w_d, b_d, w_a, b_a):
    """n and p under Boltzmann statistics, the majority dopant's ionisation exact.

    For n-type (Nd > Na) with y = n: ``y + Na = Nd [(1 - b) + b / (1 + K y)]``,
    ``K = g e^(E_dop/kT) / Nc``, a quadratic in y; p-type likewise. Then n p = ni'^2."""

    def majority(n_major, n_minor, log_states, w, b):
        k = np.exp(w - log_states)
        a = n_minor - n_major * (1.0 - b)
        net = n_major - n_minor
        root = np.sqrt((1.0 + k * a) ** 2 + 4.0 * k * net)
        return 2.0 * net / ((1.0 + k * a) + root)

    with np.errstate(over="ignore", invalid="ignore"):
        donor_side = majority(nd, na, log_nc, w_d, b_d)
        acceptor_side = majority(na, nd, log_nv, w_a, b_a)
    ni_gap = np.exp(0.5 * (log_nc + log_nv - reduced_gap))  # ni with the offset
    net = np.where(nd >= na, donor_side, acceptor_side)
    net = np.where(np.isfinite(net) & (net > 0), net, np.abs(nd - na))
    major = 0.5 * net + np.sqrt(0.25 * net * net + ni_gap * ni_gap)
    minor = ni_gap * (ni_gap / major)
    return np.where(nd >= na, major, minor), np.where(nd >= na, minor, major)


def _polish(neutrality, eta, rtol, max_iterations):
    """Newton from a nearby start (steps clipped to 2 kT), without a bracket, on the
    points not yet converged only; points that do not converge go through the
    bracketed solver."""
    residual, slope = neutrality(eta)
    eta, residual = eta.copy(), residual.copy()
    pending = np.flatnonzero(np.abs(residual) > rtol)
    slope = slope[pending]
    for _ in range(max_iterations):
        if not pending.size:
            return eta, residual, True
        eta[pending] += np.clip(-residual[pending] / slope, -2.0, 2.0)
        part = neutrality.subset(pending) if pending.size < eta.size else neutrality
        part_residual, slope = part(eta[pending])
        residual[pending] = part_residual
        keep = np.abs(part_residual) > rtol
        pending, slope = pending[keep], slope[keep]
    if pending.size:
        start = eta[pending]
        fixed, fixed_residual, _ = _newton(
            neutrality.subset(pending), start, start - 2.0, start + 2.0, rtol, max_iterations
        )
        eta[pending], residual[pending] = fixed, fixed_residual
    return eta, residual, bool((np.abs(residual) <= rtol).all())


BLOCK = 1 << 16  # points solved together: the temporaries stay in cache


def solve(
    temperature,
    donor_density,
    acceptor_density,
    *,
    conduction_states,
    valence_states,
    intrinsic_density,
    narrowing,
    narrowing_uses_carriers,
    donor_level,
    acceptor_level,
    donor_degeneracy,
    acceptor_degeneracy,
    gap_offset=0.0,
    fermi_dirac=True,
    occupancy_from_densities=False,
    rtol=1e-12,
    self_consistency=1e-10,
    max_iterations=200,
):
    """Solve charge neutrality for broadcast arrays of temperature and dopant densities.

    Parameters
    ----------
    temperature : array_like, K
    donor_density, acceptor_density : array_like, cm^-3 (total, not ionised)
    conduction_states, valence_states : array_like, cm^-3 (Nc, Nv at temperature)
    intrinsic_density : array_like, cm^-3 (ni of undoped silicon at temperature)
    narrowing : callable ``(temperature, donor_density, acceptor_density)`` returning a
        callable ``(electron_density, hole_density) -> (dEc, dEv)`` in eV (1-D arrays)
    narrowing_uses_carriers : bool; if False the narrowing is evaluated once per point
    donor_level, acceptor_level : pairs ``(E_dop [eV], localised share b)``
    donor_degeneracy, acceptor_degeneracy : float
    gap_offset : array_like, eV; a further narrowing of the gap, split equally between
        the edges (an apparent narrowing's reconciliation with its own ni)
    fermi_dirac : bool; Boltzmann statistics when False
    occupancy_from_densities : bool; with Fermi-Dirac statistics, the dopant occupancy
        takes ``ln(n/Nc)`` and ``ln(p/Nv)`` in place of the reduced Fermi levels (an
        ionisation model fitted with Boltzmann statistics); no effect under Boltzmann
    rtol : relative neutrality residual to reach
    self_consistency : for a narrowing that depends on n and p, the largest change of
        the narrowing (in units of kT) between the densities it was used with and the
        resulting ones (1e-10: ni_eff consistent to 5e-11)

    Returns
    -------
    dict of arrays (broadcast shape): ``reduced_fermi_level`` (eta), ``electron_density``,
    ``hole_density``, ``ionised_donors``, ``ionised_acceptors`` (cm^-3),
    ``conduction_edge_shift``, ``valence_edge_shift`` (eV, of the narrowing model, as
    used), ``fermi_from_conduction_edge`` (E_F - E_c'), ``fermi_from_valence_edge``
    (E_F - E_v'), ``fermi_from_intrinsic`` (E_F - E_i, E_i the intrinsic level of
    undoped silicon: ``E_c - kT ln(Nc/ni)``), eV, and ``residual`` (relative).

    Large inputs are solved in blocks of :data:`BLOCK` points into preallocated
    outputs, so time and memory grow linearly with the number of points.
    """
    arrays = np.broadcast_arrays(
        *(
            np.asarray(a, dtype=float)
            for a in (
                temperature,
                donor_density,
                acceptor_density,
                conduction_states,
                valence_states,
                intrinsic_density,
                gap_offset,
                *donor_level,
                *acceptor_level,
            )
        )
    )
    shape = arrays[0].shape
    flat = [a.ravel() for a in arrays]
    out = {key: np.empty(flat[0].size) for key in _OUTPUTS}
    options = {
        "narrowing": narrowing,
        "narrowing_uses_carriers": narrowing_uses_carriers,
        "g_d": donor_degeneracy,
        "g_a": acceptor_degeneracy,
        "fermi_dirac": fermi_dirac,
        "by_density": occupancy_from_densities,
        "rtol": rtol,
        "self_consistency": self_consistency,
        "max_iterations": max_iterations,
    }
    for start in range(0, max(flat[0].size, 1), BLOCK):
        block = slice(start, start + BLOCK)
        try:
            result = _solve_block(*(a[block] for a in flat), **options)
        except SolverError as error:
            if not start:
                raise
            raise SolverError(
                f"{error} (block starting at flat index {start} of shape {shape})"
            ) from None
        for key in _OUTPUTS:
            out[key][block] = result[key]
    return {key: value.reshape(shape) for key, value in out.items()}


_OUTPUTS = (
    "reduced_fermi_level",
    "electron_density",
    "hole_density",
    "ionised_donors",
    "ionised_acceptors",
    "conduction_edge_shift",
    "valence_edge_shift",
    "fermi_from_conduction_edge",
    "fermi_from_valence_edge",
    "fermi_from_intrinsic",
    "residual",
)


def _solve_block(
    t,
    nd,
    na,
    nc,
    nv,
    ni,
    offset,
    e_d,
    b_d,
    e_a,
    b_a,
    *,
    narrowing,
    narrowing_uses_carriers,
    g_d,
    g_a,
    fermi_dirac,
    by_density,
    rtol,
    self_consistency,
    max_iterations,
):
    shape = t.shape
    kt = BOLTZMANN_EV * t
    with np.errstate(divide="ignore"):
        log_nd, log_na = np.log(nd), np.log(na)
    log_nc, log_nv = np.log(nc), np.log(nv)
    log_ni = np.log(ni)
    reduced_gap = log_nc + log_nv - 2.0 * log_ni - offset / kt
    w_d = e_d / kt + np.log(g_d)
    w_a = e_a / kt + np.log(g_a)
    narrowing_at = narrowing(t, nd, na)

    def shifts(n, p):
        dec, dev = narrowing_at(n, p)
        return (
            np.broadcast_to(dec, shape).astype(float),
            np.broadcast_to(dev, shape).astype(float),
        )

    def equation(dec, dev):
        gap = reduced_gap - (dec + dev) / kt
        return _Neutrality(
            log_nc, log_nv, log_nd, log_na, gap, w_d, b_d, w_a, b_a, fermi_dirac, by_density
        ), gap

    # start from Boltzmann statistics with the majority dopant's ionisation solved
    # exactly (a quadratic) and the minority dopant fully ionised
    n, p = _first_guess(nd, na, ni, log_nc, log_nv, reduced_gap, w_d, b_d, w_a, b_a)
    dec, dev = shifts(n, p)
    eta = np.log(n) - log_nc
    neutrality, gap = equation(dec, dev)
    eta, residual, converged = _polish(neutrality, eta, rtol, max_iterations)
    if not converged:
        _fail(np.abs(residual) > rtol, t, nd, na, residual, "the neutrality equation")

    if narrowing_uses_carriers:
        # fixed point eta -> narrowing(n, p) -> eta, accelerated by Aitken's extrapolation
        # every third step; stops when the narrowing used reproduces itself
        previous = []
        for _ in range(200):
            log_n, log_p, *_ = neutrality.parts(eta)
            new_dec, new_dev = shifts(np.exp(log_n), np.exp(log_p))
            change = np.abs(new_dec + new_dev - dec - dev) / kt
            if (change <= self_consistency).all():
                break
            dec, dev = new_dec, new_dev
            neutrality, gap = equation(dec, dev)
            eta, residual, converged = _polish(neutrality, eta, rtol, max_iterations)
            if not converged:
                _fail(np.abs(residual) > rtol, t, nd, na, residual, "the neutrality equation")
            previous.append(eta)
            if len(previous) == 3:
                e0, e1, e2 = previous
                d1, d2 = e1 - e0, e2 - e1
                curvature = d2 - d1
                with np.errstate(divide="ignore", invalid="ignore"):
                    jump = np.where(np.abs(curvature) > 1e-14, d2 * d2 / curvature, 0.0)
                jump = np.where(np.abs(jump) < 10.0 * np.abs(d2) + 1e-12, jump, 0.0)
                eta = e2 - jump
                previous = []
        else:
            _fail(
                change > self_consistency,
                t,
                nd,
                na,
                change,
                "the self-consistent narrowing (it keeps moving)",
            )
        # the state reported is the one solved with the narrowing (dec, dev)
        eta, residual, converged = _polish(neutrality, eta, rtol, max_iterations)
    log_n, log_p, log_d, log_a, *_ = neutrality.parts(eta)

    return {
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


def _fail(bad, t, nd, na, residual, what):
    index = np.flatnonzero(bad)
    shown = ", ".join(
        f"#{i}: T={t[i]:g} K, Nd={nd[i]:g}, Na={na[i]:g} cm^-3 (residual {residual[i]:.2g})"
        for i in index[:5]
    )
    more = f" and {index.size - 5} more" if index.size > 5 else ""
    raise SolverError(
        f"equilibrium: {index.size} point(s) did not converge in {what}: {shown}{more}"
    )
