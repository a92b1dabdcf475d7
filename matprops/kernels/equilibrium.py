"""Equilibrium carrier statistics: the Fermi level that makes doped silicon neutral.

Unknown: the reduced Fermi level ``eta = (E_F - E_c') / kT`` measured from the
(narrowed) conduction-band edge ``E_c' = E_c - dEc``. The valence-band side is
``eta_v = (E_v' - E_F) / kT = -eta - g0 + s`` with ``g0`` the reduced gap before
narrowing and ``s = (dEc + dEv) / kT`` the reduced narrowing. Then

- ``n = Nc F(eta)``, ``p = Nv F(eta_v)`` with ``F`` the Fermi-Dirac integral of
  order 1/2 (:mod:`.fermi_dirac`) or, for Boltzmann statistics, ``exp``;
- ``Nd+ = Nd [(1 - b_D) + b_D logistic(-(eta + w_D))]`` and
  ``Na- = Na [(1 - b_A) + b_A logistic(-(eta_v + w_A))]`` with
  ``w = E_dop/kT + ln g`` (see :mod:`.ionisation`); with ``occupancy_from_densities``
  the occupancy takes ``ln(n/Nc)`` for eta and ``ln(p/Nv)`` for eta_v (the Boltzmann
  relation between density and Fermi level that an ionisation model fitted with
  Boltzmann statistics holds), the band densities keeping their Fermi-Dirac form;
- neutrality: ``p + Nd+ = n + Na-``.

The solver works on the logarithm of the two sides, ``r = ln(p + Nd+) - ln(n + Na-)``
(the relative neutrality residual), with every density divided by a per-point scale
``e^L`` (the largest of the dopant densities and the intrinsic density), so that it
stays finite from deep cryogenic temperatures (densities far below 1e-300) to
degenerate doping without a logarithm per density.

A narrowing that depends on the free carriers (Schenk's) is carried in the same
Newton iteration: the unknowns are ``(eta, s)`` and the equations ``r = 0`` and
``s = [dEc(n, p) + dEv(n, p)] / kT``, whose Jacobian takes the narrowing's analytic
slopes with respect to n and p (``carrier_slopes`` of the narrowing); it converges
quadratically from a Boltzmann first guess, typically in three to four steps. A
point is converged when ``|r| <= rtol`` and the narrowing used reproduces itself to
``self_consistency`` (in units of kT). The few points a safeguarded Newton step does
not bring home (steps are limited to 2 kT) are handed to a bracketed solver with a
fixed point on the narrowing; every point converges or
:class:`~matprops.errors.SolverError` names the first failing points and their inputs.

The band gap entering the statistics is the one consistent with the intrinsic
density supplied, ``Eg = kT ln(Nc Nv / ni^2)``, so that undoped silicon reproduces
that ``ni`` exactly (Boltzmann limit). Where ``ni`` underflows to zero (a few kelvin)
that gap is not defined and the points are refused by name.
"""

from __future__ import annotations

import numpy as np

from ..errors import SolverError
from . import _fermi_dirac_coefficients as _fd
from ._blocks import relocated, solver_error
from .constants import BOLTZMANN_EV

__all__ = ["BLOCK", "solve"]

BLOCK = 1 << 13  # points solved together: the temporaries stay in cache

_STEP = 2.0  # largest Newton step of eta, in kT
_NEWTON_ITERATIONS = 40  # then the bracketed fallback
_PREDICTED = 1e-7  # a Newton step this small lands within about its square of the root
_EPS = float(np.finfo(float).eps)
_NEAR_EDGE = -6.0  # above this reduced level the first guess inverts F_1/2 in full


def _table(pairs, width):
    """Rows P_1/2, Q_1/2, P_-1/2, Q_-1/2 (coefficients from degree 0 up, zero-padded to
    ``width``; leading zeros leave Horner's sums unchanged) as columns of shape (4, 1, 1)."""
    rows = np.zeros((4, width))
    for row, coefficients in enumerate(c for pair in pairs for c in pair):
        rows[row, : len(coefficients)] = coefficients
    return [rows[:, k].reshape(4, 1, 1) for k in range(width)]


# F_j = z P(z)/Q(z), z = e^eta for eta <= 0; P(t)/Q(t), t = eta - b on the segments up
# to eta = 20 (the same coefficients as :mod:`.fermi_dirac`)
_SEGMENTS = [_table((_fd.HALF[i], _fd.MINUS_HALF[i]), 8) for i in range(5)]
_GAMMA_RATIO = 1.5  # Gamma(5/2) / Gamma(3/2)


def _horner(columns, x, rows=4):
    """The first ``rows`` polynomials of a table at x: shape ``(rows,) + x.shape``."""
    result = columns[-1][:rows] * x
    result += columns[-2][:rows]
    for c in columns[-3::-1]:
        result *= x
        result += c[:rows]
    return result


def _bands(eta, slopes=True):
    """``F_1/2(eta) e^-eta`` and (with ``slopes``) ``F_-1/2(eta) / F_1/2(eta)``.

    ``eta`` is a (2, m) array (both bands); for eta <= 0 both are rational functions of
    ``z = e^eta`` evaluated as one stacked array, exactly 1 in the Boltzmann limit;
    degenerate points (eta > 0) take the other segments of :mod:`.fermi_dirac`."""
    rows = 4 if slopes else 2
    z = np.minimum(eta, 0.0)
    np.exp(z, out=z)
    values = _horner(_SEGMENTS[0], z, rows)
    ratio = values[0]
    ratio /= values[1]
    slope = None
    if slopes:
        slope = values[2]
        slope /= values[3]
        slope /= ratio
    if not eta.max() <= 0.0:  # degenerate points (or NaN)
        index = np.flatnonzero(~(eta <= 0.0))
        flat_ratio = ratio.reshape(-1)
        value, other = _degenerate(eta.reshape(-1)[index], slopes)
        flat_ratio[index] = value
        if slope is not None:
            slope.reshape(-1)[index] = other
    return ratio, slope


def _degenerate(eta, slopes):
    """``(F_1/2 e^-eta, F_-1/2 / F_1/2)`` for eta > 0 (1-D), segment by segment."""
    from .fermi_dirac import fd_half, fd_minus_half

    ratio = np.full(eta.shape, np.nan)
    slope = np.full(eta.shape, np.nan) if slopes else None
    segment = np.searchsorted(_fd.BREAKS, eta)  # 1..4 below eta = 20, 5 above
    for i in range(1, 5):
        where = np.flatnonzero(segment == i)
        if not where.size:
            continue
        part = eta[where]
        values = _horner(_SEGMENTS[i], part - _fd.BREAKS[i - 1], 4 if slopes else 2)
        half = values[0] / values[1]
        ratio[where] = half * np.exp(-part)
        if slope is not None:
            slope[where] = (values[2] / values[3]) / half
    where = np.flatnonzero(segment >= 5)  # eta > 20 (and NaN): the asymptotic form
    if where.size:
        part = eta[where]
        half = fd_half(part)
        ratio[where] = half * np.exp(-part)
        if slope is not None:
            slope[where] = fd_minus_half(part) / half
    return ratio, slope


class _Points:
    """Per-point constants of the neutrality equation (a block, or a subset of it).

    Densities are divided by ``e^L`` (``density`` = e^L). Band quantities are stacked as
    (2, m) arrays, row 0 the conduction band (electrons, donors), row 1 the valence
    band (holes, acceptors): ``log_states = ln N - L``, ``w`` the levels' ``E/kT + ln
    g``, ``share`` their localised shares b, ``dopants = N e^-L``.
    """

    FIELDS = ("log_states", "w", "share", "dopants", "gap", "kt", "density")
    log_states: np.ndarray
    w: np.ndarray
    share: np.ndarray
    dopants: np.ndarray
    gap: np.ndarray
    kt: np.ndarray
    density: np.ndarray

    def __init__(self, narrowing, carriers, fermi_dirac, by_density, **fields):
        self.narrowing = narrowing  # an object with carrier_slopes(n, p), or None
        self.carriers = carriers  # whether the narrowing depends on n and p
        self.fermi_dirac, self.by_density = fermi_dirac, by_density and fermi_dirac
        self.__dict__.update(fields)
        self.free = 1.0 - self.share

    def subset(self, index):
        fields = {name: self.__dict__[name][..., index] for name in self.FIELDS}
        narrowing = self.narrowing
        if self.carriers:
            narrowing = narrowing.subset(index)
        return _Points(narrowing, self.carriers, self.fermi_dirac, self.by_density, **fields)

    def evaluate(self, eta, s, slopes=True):
        """Residuals at ``(eta, s)``, the state, and (with ``slopes``) the Newton step.

        Returns ``(r, f2, condition, state, step)``: ``r`` the neutrality residual, ``f2``
        the narrowing's (None if it does not depend on n, p), ``condition`` an estimate
        of ``|dr/d eta|`` (small where neutrality balances two large dopant densities),
        ``state`` = (densities (2, m), ionised (2, m), shifts (2, m) or None), ``step`` =
        (step of eta, step of s) or None."""
        levels = np.empty((2, eta.size))
        levels[0] = eta
        np.subtract(s, eta, out=levels[1])
        levels[1] -= self.gap  # eta_v = -eta - g0 + s
        if self.fermi_dirac:
            ratio, rho = _bands(levels, slopes)
        else:
            ratio = rho = 1.0
        densities = self.log_states + levels
        np.exp(densities, out=densities)
        densities *= ratio  # n, p (scaled)
        # occupancies: v = 1 - logistic(x) = e^-x / (1 + e^-x) keeps its precision
        # deep in freeze-out; dv/dx = -u v with u = 1 - v
        e = np.negative(levels)
        e -= self.w
        np.minimum(e, 700.0, out=e)  # v = 1 beyond, without overflow
        np.exp(e, out=e)
        if self.by_density:
            e /= ratio
        u = 1.0 + e
        np.divide(1.0, u, out=u)
        v = e * u
        ionised = self.share * v
        ionised += self.free
        ionised *= self.dopants  # Nd+, Na- (scaled)
        k = u * v
        k *= self.share
        k *= self.dopants  # -d Nd+/d eta, -d Na-/d eta_v
        n, p = densities
        positive = p + ionised[0]
        negative = n + ionised[1]
        with np.errstate(divide="ignore", invalid="ignore"):
            r = np.log(positive / negative)
            inverse_positive = 1.0 / positive
            inverse_negative = 1.0 / negative
        # |dr/d eta| with F'/F taken as 1 (its size: the conditioning of the point)
        condition = (p + k[0]) * inverse_positive + (n + k[1]) * inverse_negative
        f2 = shifts = None
        if self.carriers:
            shifts, slope_n, slope_p = self.narrowing.carrier_slopes(
                densities, slopes=slopes, factor=self.density
            )
            f2 = shifts[0] + shifts[1]
            f2 /= self.kt
            np.subtract(s, f2, out=f2)
        state = (densities, ionised, shifts)
        if not slopes:
            return r, f2, condition, state, None
        d = densities * rho  # dn/d eta, dp/d eta_v
        if self.by_density:
            k *= rho
        d_p_positive = d[1] * inverse_positive
        # dr/d eta (< 0) and dr/ds (> 0)
        a12 = k[1] * inverse_negative
        a11 = (d[0] + k[1]) * inverse_negative
        a11 += d_p_positive
        a11 += k[0] * inverse_positive
        np.negative(a11, out=a11)
        a12 += d_p_positive
        if not self.carriers:
            return r, f2, condition, state, (-r / a11, None)
        inverse_kt = 1.0 / self.kt
        slope_n *= inverse_kt
        slope_n *= rho[0] if self.fermi_dirac else 1.0
        slope_p *= inverse_kt
        slope_p *= rho[1] if self.fermi_dirac else 1.0
        a21 = slope_p - slope_n  # d f2 / d eta
        a22 = 1.0 - slope_p  # d f2 / d s
        with np.errstate(divide="ignore", invalid="ignore"):
            inverse = 1.0 / (a11 * a22 - a12 * a21)
        step_eta = a12 * f2
        step_eta -= a22 * r
        step_eta *= inverse
        step_s = a21 * r
        step_s -= a11 * f2
        step_s *= inverse
        return r, f2, condition, state, (step_eta, step_s)


def _start(
    nd, na, nc, nv, log_nc, log_nv, reduced_gap, w_d, b_d, w_a, b_a, kt, narrowing_at,
    carriers, fermi_dirac,
):  # fmt: skip
    """Newton's starting point ``(eta, s, dEc, dEv)`` from the Boltzmann first guess: the
    narrowing at the guessed densities, the reduced level from the majority carrier's
    band (the guess's minority density lacks the narrowing)."""
    n, p = _first_guess(nd, na, log_nc, log_nv, reduced_gap, w_d, b_d, w_a, b_a)
    dec, dev = narrowing_at(n, p)
    s = (dec + dev) / kt
    if carriers:
        s = np.broadcast_to(s, nd.shape).copy()
    else:
        dec = np.broadcast_to(dec, nd.shape).astype(float)
        dev = np.broadcast_to(dev, nd.shape).astype(float)
        s = np.broadcast_to(s, nd.shape)
    electrons = n >= p
    with np.errstate(divide="ignore", invalid="ignore"):
        level = np.where(electrons, np.log(n) - log_nc, np.log(p) - log_nv)
        if fermi_dirac:
            # F_1/2's inverse: ln y + y / 2^1.5 (+ O(y^2)) well below the band edge
            level += np.exp(level) * 2.0**-1.5
            if not level.max() <= _NEAR_EDGE:  # near or beyond the edge: in full
                from .fermi_dirac import fd_half_inverse

                index = np.flatnonzero(~(level <= _NEAR_EDGE))
                density = np.where(electrons[index], n[index] / nc[index], p[index] / nv[index])
                level[index] = fd_half_inverse(density)
    eta = np.where(electrons, level, s - reduced_gap - level)
    return eta, s, dec, dev


def _first_guess(nd, na, log_nc, log_nv, reduced_gap, w_d, b_d, w_a, b_a):
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
    self_consistency=1e-12,
    max_iterations=200,
    start=None,
):
    """Solve charge neutrality for broadcast arrays of temperature and dopant densities.

    Parameters
    ----------
    temperature : array_like, K
    donor_density, acceptor_density : array_like, cm^-3 (total, not ionised)
    conduction_states, valence_states : array_like, cm^-3 (Nc, Nv at temperature)
    intrinsic_density : array_like, cm^-3 (ni of undoped silicon at temperature)
    narrowing : callable ``(temperature, donor_density, acceptor_density)`` returning a
        callable ``(electron_density, hole_density) -> (dEc, dEv)`` in eV (1-D arrays);
        where it also has ``carrier_slopes(n, p) -> (dEc, dEv, n d(dEc+dEv)/dn,
        p d(dEc+dEv)/dp)`` and ``subset(index)`` (Schenk's), the narrowing is carried
        in the Newton iteration; otherwise it is made self-consistent by a fixed point
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
    self_consistency : for a narrowing that depends on n and p, the largest difference
        (in units of kT) between the narrowing used and the one of the resulting n, p
    max_iterations : iterations of the bracketed fallback
    start : None, or a pair of arrays ``(eta, s)``: the reduced Fermi level and
        narrowing to start Newton's iteration from (e.g. the solution at nearby
        inputs, as an inverse problem moves its dopant density), instead of the
        Boltzmann first guess

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

    Raises
    ------
    SolverError
        naming the first points that could not be solved, their temperature and
        dopant densities and why (its ``points`` attribute lists them).
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
                *(start if start is not None else ()),
            )
        )
    )
    shape = arrays[0].shape
    flat = [a.reshape(-1) for a in arrays]
    size = flat[0].size
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
    if start is not None:  # the start travels with the inputs
        *flat, eta, s = flat
        options["start"] = (eta, s)
    if size <= BLOCK:
        try:
            result = _solve_block(*flat, **options)
        except SolverError as error:
            raise _located(error, 0, shape) from None
        return {key: value.reshape(shape) for key, value in result.items()}
    out = {key: np.empty(size) for key in OUTPUTS}
    first = options.pop("start", None)
    for offset in range(0, size, BLOCK):
        block = slice(offset, offset + BLOCK)
        if first is not None:
            options["start"] = (first[0][block], first[1][block])
        try:
            result = _solve_block(*(a[block] for a in flat), **options)
        except SolverError as error:
            raise _located(error, offset, shape) from None
        for key in OUTPUTS:
            out[key][block] = result[key]
    return {key: value.reshape(shape) for key, value in out.items()}


OUTPUTS = (
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
    start=None,
):
    size = t.size
    if not size:
        return {key: np.zeros(0) for key in OUTPUTS}
    kt = BOLTZMANN_EV * t
    with np.errstate(divide="ignore", invalid="ignore"):
        log_nd, log_na = np.log(nd), np.log(na)
        log_nc, log_nv = np.log(nc), np.log(nv)
        log_ni = np.log(ni)
        reduced_gap = log_nc + log_nv - 2.0 * log_ni - offset / kt
        w_d = e_d / kt + np.log(g_d)
        w_a = e_a / kt + np.log(g_a)
    _refuse(t, nd, na, nc, nv, ni, reduced_gap, w_d, w_a, b_d, b_a)
    narrowing_at = narrowing(t, nd, na)
    newton = not narrowing_uses_carriers or hasattr(narrowing_at, "carrier_slopes")
    if not newton:  # a narrowing of n and p without slopes: the fixed point
        return _solve_fixed_point(
            t, nd, na, log_nc, log_nv, log_ni, log_nd, log_na, offset, reduced_gap, kt,
            w_d, b_d, w_a, b_a, narrowing_at, fermi_dirac, by_density, rtol,
            self_consistency, max_iterations,
        )  # fmt: skip

    # the scale: the largest density the neutrality balances
    scale = np.maximum(np.maximum(log_nd, log_na), 0.5 * (log_nc + log_nv - reduced_gap))
    b_d = np.broadcast_to(b_d, t.shape)
    b_a = np.broadcast_to(b_a, t.shape)
    if start is not None:
        eta, s = (np.array(a, dtype=float) for a in start)
        if not narrowing_uses_carriers:  # the narrowing is fixed: it needs no start
            dec, dev = (np.broadcast_to(a, t.shape).astype(float) for a in narrowing_at(0, 0))
            s = (dec + dev) / kt
    else:
        eta, s, dec, dev = _start(
            nd, na, nc, nv, log_nc, log_nv, reduced_gap, w_d, b_d, w_a, b_a, kt, narrowing_at,
            narrowing_uses_carriers, fermi_dirac,
        )  # fmt: skip
    with np.errstate(divide="ignore", invalid="ignore"):
        points = _Points(
            narrowing_at if narrowing_uses_carriers else None,
            narrowing_uses_carriers,
            fermi_dirac,
            by_density,
            log_states=np.stack((log_nc, log_nv)) - scale,
            w=np.stack((w_d, w_a)),
            share=np.stack((b_d, b_a)),
            dopants=np.exp(np.stack((log_nd, log_na)) - scale),
            gap=reduced_gap,
            kt=kt,
            density=np.exp(scale),
        )

    # the state of each point when it converged
    final = {
        "eta": np.empty(size),
        "s": np.empty(size),
        "r": np.empty(size),
        "densities": np.empty((2, size)),
        "ionised": np.empty((2, size)),
    }
    if narrowing_uses_carriers:
        final["shifts"] = np.empty((2, size))
    index = None  # positions of the points still iterating (None: all)
    rest = []  # positions handed to the fallback
    slopes = True  # False: a pass expected only to confirm convergence
    settled = False  # points converged at an earlier pass (they stay converged)
    for _ in range(_NEWTON_ITERATIONS):
        r, f2, condition, state, step = points.evaluate(eta, s, slopes)
        # converged: neutral to rtol, and eta within about rtol of the root (r / |dr/d eta|,
        # unless r is at its rounding floor), the narrowing consistent
        size_r = np.abs(r)
        done = size_r <= rtol * np.minimum(condition, 1.0)
        done |= size_r <= 8.0 * _EPS
        done &= size_r <= rtol
        if narrowing_uses_carriers:
            done &= np.abs(f2) <= self_consistency
        done |= settled
        if done.all():
            _keep(final, None, index, eta, s, r, state)
            break
        if step is None:  # the confirmation failed somewhere: a full pass there
            slopes = True
        else:
            step_eta, step_s = step
            # points without a finite residual or step go to the fallback at once
            hopeless = ~(np.isfinite(r) & np.isfinite(step_eta)) & ~done
            if hopeless.any():
                where = np.flatnonzero(hopeless)
                rest.append(where if index is None else index[where])
                done |= hopeless
                if done.all():
                    _keep(final, None, index, eta, s, r, state)
                    break
            # a safeguarded step: eta moves at most 2 kT (s in proportion)
            size_step = np.abs(step_eta)
            with np.errstate(invalid="ignore", divide="ignore"):
                factor = np.minimum(1.0, _STEP / size_step)
            factor[done] = 0.0  # converged points keep their state
            eta = eta + step_eta * factor
            if step_s is not None:
                s = s + step_s * factor
                size_step = np.maximum(size_step, np.abs(step_s))
            # most points a step from home: the next pass only confirms them
            slopes = 2 * np.count_nonzero((size_step <= _PREDICTED) | done) < done.size
        settled = done
        pending = np.flatnonzero(~done)
        if 2 * pending.size < done.size:  # iterate on the points left only
            _keep(final, done, index, eta, s, r, state)
            points = points.subset(pending)
            eta, s = eta[pending], s[pending]
            index = pending if index is None else index[pending]
            settled = False
    else:
        rest.append(np.flatnonzero(~done) if index is None else index[~done])
    index = np.sort(np.concatenate(rest)) if rest else np.zeros(0, dtype=np.intp)
    fallback = {}
    if index.size:  # what Newton did not settle: the bracketed solver
        fallback = _solve_fixed_point(
            t[index], nd[index], na[index], log_nc[index], log_nv[index], log_ni[index],
            log_nd[index], log_na[index], np.broadcast_to(offset, t.shape)[index],
            reduced_gap[index], kt[index], w_d[index], b_d[index], w_a[index], b_a[index],
            narrowing(t[index], nd[index], na[index]), fermi_dirac, by_density, rtol,
            self_consistency, max_iterations, offsets=index,
        )  # fmt: skip
    density = np.exp(scale)
    eta, s = final["eta"], final["s"]
    if narrowing_uses_carriers:
        dec, dev = final["shifts"]
    n, p = final["densities"] * density
    donors, acceptors = final["ionised"] * density
    result = {
        "reduced_fermi_level": eta,
        "electron_density": n,
        "hole_density": p,
        "ionised_donors": donors,
        "ionised_acceptors": acceptors,
        "conduction_edge_shift": dec,
        "valence_edge_shift": dev,
        "fermi_from_conduction_edge": eta * kt,
        "fermi_from_valence_edge": (eta + reduced_gap - s) * kt,
        "fermi_from_intrinsic": eta * kt - dec - 0.5 * offset + kt * (log_nc - log_ni),
        "residual": final["r"],
    }
    if index.size:
        for key, value in fallback.items():
            result[key][index] = value
    return result


def _keep(final, done, index, eta, s, r, state):
    """Record the state of the points converged (``done``; None: all of them)."""
    densities, ionised, shifts = state
    values = {"eta": eta, "s": s, "r": r, "densities": densities, "ionised": ionised}
    if shifts is not None:
        values["shifts"] = shifts
    where: slice | np.ndarray
    target: slice | np.ndarray
    if done is None:
        where = slice(None)
        target = slice(None) if index is None else index
    else:
        where = np.flatnonzero(done)
        target = where if index is None else index[where]
    for key, value in values.items():
        final[key][..., target] = value[..., where] if np.ndim(value) else value


# --------------------------------------------------------------------------- fallback


def _log_states(eta, fermi_dirac):
    """``ln F(eta)`` and ``F'(eta)/F(eta)`` for F = F_1/2 or exp."""
    if not fermi_dirac:
        return eta.copy(), np.ones_like(eta)
    ratio, slope = _bands(eta.reshape(1, -1))
    return eta + np.log(ratio[0]), slope[0]


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
        self.by_density = by_density and fermi_dirac

    def subset(self, index):
        """The same equation on a subset of the points."""
        names = ("log_nc", "log_nv", "log_nd", "log_na", "gap", "w_d", "b_d", "w_a", "b_a")
        parts = {a: np.broadcast_to(getattr(self, a), self.gap.shape)[index] for a in names}
        return _Neutrality(**parts, fermi_dirac=self.fermi_dirac, by_density=self.by_density)

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


def _bracketed(residual_at, eta, rtol, max_iterations):
    """Safeguarded Newton on a strictly decreasing residual inside a bracket that is
    widened until it holds a sign change; bisection where a step leaves it."""
    low, high = eta - 2.0, eta + 2.0
    for _ in range(60):
        r_low, _ = residual_at(low)
        r_high, _ = residual_at(high)
        bad_low, bad_high = ~(r_low > 0), ~(r_high < 0)
        if not (bad_low.any() or bad_high.any()):
            break
        low = np.where(bad_low, low - 2.0 * (high - low) - 10.0, low)
        high = np.where(bad_high, high + 2.0 * (high - low) + 10.0, high)
    residual, slope = residual_at(eta)
    for _ in range(max_iterations):
        done = np.abs(residual) <= rtol
        if done.all():
            break
        low = np.where(residual > 0, eta, low)
        high = np.where(residual < 0, eta, high)
        step = eta - residual / slope
        inside = (step > low) & (step < high) & np.isfinite(step)
        proposal = np.where(inside, step, 0.5 * (low + high))
        eta = np.where(done, eta, proposal)
        residual, slope = residual_at(eta)
    return eta, residual


def _solve_fixed_point(
    t, nd, na, log_nc, log_nv, log_ni, log_nd, log_na, offset, reduced_gap, kt, w_d, b_d,
    w_a, b_a, narrowing_at, fermi_dirac, by_density, rtol, self_consistency,
    max_iterations, offsets=None,
):  # fmt: skip
    """The robust path: a bracketed solve at fixed narrowing, repeated with the
    narrowing of the last n and p until it reproduces itself (Aitken's extrapolation
    every third step). ``offsets``: the points' positions in the block (for errors)."""
    shape = t.shape
    positions = np.arange(t.size) if offsets is None else offsets

    def shifts(n, p):
        dec, dev = narrowing_at(n, p)
        return (
            np.broadcast_to(dec, shape).astype(float),
            np.broadcast_to(dev, shape).astype(float),
        )

    def equation(dec, dev):
        gap = reduced_gap - (dec + dev) / kt
        neutrality = _Neutrality(
            log_nc, log_nv, log_nd, log_na, gap, w_d, b_d, w_a, b_a, fermi_dirac, by_density
        )
        return neutrality, gap

    def failed(bad, values, what):
        _fail(positions[bad], t[bad], nd[bad], na[bad], values[bad], what)

    n, p = _first_guess(nd, na, log_nc, log_nv, reduced_gap, w_d, b_d, w_a, b_a)
    dec, dev = shifts(n, p)
    with np.errstate(divide="ignore"):
        eta = np.log(n) - log_nc
    neutrality, gap = equation(dec, dev)
    eta, residual = _bracketed(neutrality, eta, rtol, max_iterations)
    if not (np.abs(residual) <= rtol).all():
        failed(~(np.abs(residual) <= rtol), residual, "the neutrality equation")
    previous = []
    for _ in range(200):
        log_n, log_p, *_ = neutrality.parts(eta)
        new_dec, new_dev = shifts(np.exp(log_n), np.exp(log_p))
        change = np.abs(new_dec + new_dev - dec - dev) / kt
        if (change <= self_consistency).all():
            break
        dec, dev = new_dec, new_dev
        neutrality, gap = equation(dec, dev)
        eta, residual = _bracketed(neutrality, eta, rtol, max_iterations)
        if not (np.abs(residual) <= rtol).all():
            failed(~(np.abs(residual) <= rtol), residual, "the neutrality equation")
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
        failed(change > self_consistency, change, "the self-consistent narrowing (it moves)")
    # the state reported is the one solved with the narrowing (dec, dev)
    eta, residual = _bracketed(neutrality, eta, rtol, max_iterations)
    if not (np.abs(residual) <= rtol).all():
        failed(~(np.abs(residual) <= rtol), residual, "the neutrality equation")
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


# --------------------------------------------------------------------------- errors

_SHOWN = 5  # points named in a message


def _refuse(t, nd, na, nc, nv, ni, reduced_gap, w_d, w_a, b_d, b_a):
    """Points whose statistics are not defined, named with the reason."""
    finite = np.isfinite(reduced_gap) & np.isfinite(w_d) & np.isfinite(w_a)
    finite &= np.isfinite(nd) & np.isfinite(na) & np.isfinite(b_d) & np.isfinite(b_a)
    if finite.all():
        return
    bad = np.flatnonzero(~finite)
    reasons = []
    for i in bad[:_SHOWN]:
        if not (ni[i] > 0 and np.isfinite(ni[i])):
            reasons.append(
                f"the intrinsic density is {ni[i]:g} cm^-3 (it underflows below a few "
                "kelvin: the gap kT ln(Nc Nv / ni^2) the statistics use is not defined)"
            )
        elif not (nc[i] > 0 and nv[i] > 0 and np.isfinite(nc[i] * nv[i])):
            reasons.append(f"the densities of states are Nc={nc[i]:g}, Nv={nv[i]:g} cm^-3")
        elif not (t[i] > 0 and np.isfinite(t[i])):
            reasons.append(f"the temperature is {t[i]:g} K")
        else:
            reasons.append("a dopant level or density is not a finite number")
    _fail(bad, t[bad], nd[bad], na[bad], reasons, "could not be solved")


def _fail(index, t, nd, na, details, what):
    """Raise a SolverError naming the first points (block-local index), their inputs
    and ``details`` (a residual per point, or a reason)."""
    points = []
    for k, i in enumerate(index[:_SHOWN]):
        detail = details[k]
        if not isinstance(detail, str):
            detail = f"residual {float(detail):.2g}"
        points.append(
            {
                "index": int(i),
                "flat": int(i),
                "inputs": (
                    f"T={float(t[k]):g} K",
                    f"Nd={float(nd[k]):g} cm^-3",
                    f"Na={float(na[k]):g} cm^-3",
                ),
                "detail": detail,
            }
        )
    what = what if what == "could not be solved" else f"did not converge in {what}"
    raise solver_error("equilibrium", what, int(index.size), points)


def _located(error, start, shape):
    """The error with its points' block-local indices moved by ``start`` and shown as
    indices into ``shape``."""
    points = getattr(error, "points", None)
    if points is None:
        return error
    error.points = [{**point, "flat": point["flat"] + start} for point in points]
    return relocated(error, shape)
