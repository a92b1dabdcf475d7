"""Lean hand-written baselines for the inverse problems (benchmarks only).

A per-point ``scipy.optimize.brentq`` loop of the same equations as matprops, written
the fastest way a careful author would write it by hand: everything that does not
involve the root search (densities of states, intrinsic density, dopant levels,
Schenk's ionic part, Klaassen's dopant terms) is computed vectorised in numpy before
the loop; inside it, plain Python floats and the ``math`` module only (no 1-element
numpy arrays), the Fermi-Dirac integral as the same rational approximations
matprops uses, evaluated in scalar Horner form.

- :func:`equilibrium_loop`: charge neutrality in linear space,
  ``p + Nd+ - n - Na-``, bracketed by brentq at fixed narrowing; Schenk's narrowing
  made self-consistent by a fixed point around it (warm bracket, Aitken's
  extrapolation every third step), to the same self-consistency as matprops (1e-10
  of kT in the narrowing).
- :func:`resistivity_loop`: doping from resistivity, brentq in ln N around a scalar
  conductivity (an equilibrium solve as above, with complete or incomplete
  ionisation as the release's mobility model was fitted, then Klaassen's mobility in
  scalar form, its G minimum read from the same table with ``bisect``).
"""

from __future__ import annotations

import bisect
import math

import numpy as np
from scipy.optimize import brentq

from matprops.kernels import _fermi_dirac_coefficients as _fd
from matprops.kernels.constants import BOLTZMANN_EV, ELEMENTARY_CHARGE

__all__ = ["equilibrium_loop", "fd_half", "resistivity_loop"]

_HALF = _fd.HALF
_BREAKS = _fd.BREAKS
_GAMMA_5_2 = math.gamma(2.5)


def _poly(cs, x):
    result = 0.0
    for c in reversed(cs):
        result = result * x + c
    return result


def fd_half(eta: float) -> float:
    """F_1/2(eta) for one float: the segments and coefficients of the kernel."""
    if eta <= 0.0:
        z = math.exp(eta)
        top, bottom = _HALF[0]
        return z * _poly(top, z) / _poly(bottom, z)
    if eta <= 20.0:
        i = bisect.bisect_left(_BREAKS, eta)  # 1..4
        top, bottom = _HALF[i]
        x = eta - _BREAKS[i - 1]
        return _poly(top, x) / _poly(bottom, x)
    s = 1.0 / (eta * eta)
    top, bottom = _HALF[-1]
    return eta * math.sqrt(eta) / _GAMMA_5_2 * (1.0 + s * _poly(top, s) / _poly(bottom, s))


def _coefficients(model):
    return {k: c.kernel_value for k, c in model.coefficients.items()}


class _Setup:
    """Everything of the equilibrium that does not depend on the Fermi level, per point
    (computed vectorised), as Python lists of floats for the loop."""

    def __init__(self, si, T, Nd, Na, complete=False):
        from matprops.kernels.gap_narrowing import _fixed_dopants

        bound = si._carriers()
        T, Nd, Na = np.broadcast_arrays(*(np.asarray(a, float) for a in (T, Nd, Na)))
        kt = BOLTZMANN_EV * T
        nc, nv = bound.dos(temperature=T)
        ni = bound.ni(temperature=T)
        (e_d, b_d), g_d = bound.level("phosphorus", Nd, complete)
        (e_a, b_a), g_a = bound.level("boron", Na, complete)
        self.gap = np.log(nc) + np.log(nv) - 2.0 * np.log(ni) - bound.gap_offset(T) / kt
        self.w_d = e_d / kt + math.log(g_d)
        self.w_a = e_a / kt + math.log(g_a)
        self.b_d, self.b_a = np.broadcast_to(b_d, T.shape), np.broadcast_to(b_a, T.shape)
        self.nc, self.nv, self.kt, self.nd, self.na = nc, nv, kt, Nd, Na
        narrowing = bound.narrowing
        self.schenk = narrowing.kernel is not None and narrowing.id.startswith("schenk")
        if self.schenk:
            c = _coefficients(narrowing)
            parts = _fixed_dopants(T, Nd, Na, **c)
            self.parts = parts
            self.ionic = parts.ionic_e + parts.ionic_h  # per point (fixed dopants)
        else:
            dec, dev = bound.shifts(T, Nd, Na)
            self.fixed_shift = np.broadcast_to(dec + dev, T.shape) / kt

    def point(self, i):
        return (
            float(self.gap[i]),
            float(self.nc[i]),
            float(self.nv[i]),
            float(self.nd[i]),
            float(self.w_d[i]),
            float(self.b_d[i]),
            float(self.na[i]),
            float(self.w_a[i]),
            float(self.b_a[i]),
        )


def _charge(eta, gap, nc, nv, nd, w_d, b_d, na, w_a, b_a):
    eta_v = -eta - gap
    donors = nd * (1.0 - b_d + b_d / (1.0 + math.exp(eta + w_d)))
    acceptors = na * (1.0 - b_a + b_a / (1.0 + math.exp(eta_v + w_a)))
    return nv * fd_half(eta_v) + donors - nc * fd_half(eta) - acceptors


class _SchenkScalar:
    """Schenk's exchange part for one point (floats), the ionic part given."""

    def __init__(self, parts):
        self.volume, self.rydberg = parts.volume, parts.rydberg
        self.alpha_e, self.alpha_h = parts.alpha_e, parts.alpha_h
        self.g_e, self.g_h = parts.g_e, parts.g_h
        self.sets = (parts.electron_set, parts.hole_set)
        self.t, self.t2, self.t3, self.t52 = (
            parts.t.tolist(),
            parts.t2.tolist(),
            parts.t3.tolist(),
            parts.t52.tolist(),
        )

    def total(self, i, n, p, ionic):
        """dEc + dEv in eV at point i."""
        n *= self.volume
        p *= self.volume
        t, t2 = self.t[i], self.t2[i]
        ns = n + p
        sqrt_ns = math.sqrt(ns)
        mix = self.alpha_e * n + self.alpha_h * p
        f = 1984.4017075391884 * ns * ns  # (4 pi)^3 ns^2
        common_top = 5.0132565492620005 * sqrt_ns * self.t52[i]  # sqrt(8 pi)
        common_bottom = f + self.t3[i] + 40.0 * ns * sqrt_ns * t
        total = 0.0
        for dens, g, alpha, (b, c, d, pa, *_) in (
            (n, self.g_e, self.alpha_e, self.sets[0]),
            (p, self.g_h, self.alpha_h, self.sets[1]),
        ):
            exchange = -(
                f * ((48.0 / (math.pi * g) * dens) ** (1.0 / 3.0) + c * math.log1p(d * mix**pa))
                + (8.0 * math.pi * alpha / g) * dens * t2
                + common_top
            ) / (common_bottom + b * sqrt_ns * t2)
            total -= exchange
        return (total - ionic) * self.rydberg


def _solve_point(i, setup, schenk, xtol, state=False):
    """n, p of point i: brentq at fixed narrowing, fixed point on the narrowing."""
    gap0, nc, nv, nd, w_d, b_d, na, w_a, b_a = setup.point(i)
    kt = float(setup.kt[i])
    ionic = float(setup.ionic[i]) if schenk is not None else 0.0
    shift = 0.0 if schenk is not None else float(setup.fixed_shift[i])
    low, high = -gap0 - 60.0, 60.0
    history = []
    for step in range(200):
        gap = gap0 - shift
        args = (gap, nc, nv, nd, w_d, b_d, na, w_a, b_a)
        while _charge(low, *args) <= 0.0:
            low -= 4.0
        while _charge(high, *args) >= 0.0:
            high += 4.0
        eta = brentq(_charge, low, high, args=args, xtol=xtol, rtol=8.9e-16, maxiter=200)
        n, p = nc * fd_half(eta), nv * fd_half(-eta - gap)
        if schenk is None:
            return (eta, gap, n, p, setup) if state else (n, p)
        new = schenk.total(i, n, p, ionic) / kt
        if abs(new - shift) <= 1e-10 and step:
            return (eta, gap, n, p, setup) if state else (n, p)
        history.append(new)
        if len(history) == 3:  # Aitken's extrapolation of the narrowing
            s0, s1, s2 = history
            curvature = s2 - 2.0 * s1 + s0
            new = s2 - (s2 - s1) ** 2 / curvature if abs(curvature) > 1e-14 else s2
            history = []
        shift = new
        low, high = eta - 0.25, eta + 0.25
    raise RuntimeError(f"lean loop: point {i} did not converge")


def equilibrium_loop(si, T, Nd, Na, xtol=1e-13):
    """(n, p) of every point (1-D arrays), one brentq solve after another."""
    setup = _Setup(si, T, Nd, Na)
    schenk = _SchenkScalar(setup.parts) if setup.schenk else None
    size = setup.nc.size
    n_out, p_out = np.empty(size), np.empty(size)
    for i in range(size):
        n_out[i], p_out[i] = _solve_point(i, setup, schenk, xtol)
    return n_out, p_out


# --------------------------------------------------------------------------- resistivity


class _KlaassenScalar:
    """Klaassen's mobility for one point (floats); coefficients of a bound model."""

    def __init__(self, model):
        from matprops.kernels.mobility import _g_minimum_table

        self.c = c = _coefficients(model)
        self.charge = c["charge"]
        log_l, log_u = _g_minimum_table(c["s1"], c["s2"], c["s3"], c["s5"], c["s6"])
        self.log_l, self.log_u = log_l.tolist(), log_u.tolist()
        self.log_s5s6 = math.log(c["s5"] * c["s6"])
        self.log_mass = math.log(c["carrier_mass"])
        self.log_ref = math.log(c["reference_density"])

    def _u_minimum(self, log_k):
        x = self.log_s5s6 + log_k
        table, values = self.log_l, self.log_u
        if x <= table[0]:
            return values[0]
        if x >= table[-1]:
            return values[-1]
        j = bisect.bisect_right(table, x)
        x0, x1 = table[j - 1], table[j]
        return values[j - 1] + (x - x0) * (values[j] - values[j - 1]) / (x1 - x0)

    def __call__(self, t, nd0, na0, n, p):
        c = self.c
        log_t = math.log(t / 300.0)
        nd = nd0 + nd0**3 / (c["donor_clustering"] * nd0 * nd0 + c["donor_clustering_density"] ** 2)
        na = na0 + na0**3 / (
            c["acceptor_clustering"] * na0 * na0 + c["acceptor_clustering_density"] ** 2
        )
        like, unlike, other = (nd, na, p) if self.charge < 0 else (na, nd, n)
        carriers = n + p
        ratio = c["carrier_mass"] / c["other_carrier_mass"]
        mu_max, mu_min, alpha = c["max_mobility"], c["min_mobility"], c["alpha"]
        lattice = mu_max * math.exp(-c["lattice_exponent"] * log_t)
        spread = mu_max - mu_min
        impurity = mu_max * mu_max / spread * math.exp((3.0 * alpha - 1.5) * log_t)
        carrier = mu_max * mu_min / spread * math.exp(-0.5 * log_t)
        n_sc = like + unlike + other
        log_sc = math.log(n_sc)
        coulomb = (
            c["coulomb_weight"] / c["coulomb_density"] * math.exp((2.0 / 3.0) * (log_sc - 3 * log_t))
        )
        screening = (
            c["screening_weight"]
            * carriers
            / (c["screening_density"] * c["carrier_mass"])
            * math.exp(-2.0 * log_t)
        )
        log_p = -math.log(coulomb + screening)
        x = math.exp(-c["r6"] * log_p)
        f = (c["r1"] + (c["r2"] + c["r3"] * ratio) * x) / (1.0 + (c["r4"] + c["r5"] * ratio) * x)
        s1, s2, s3, s4, s5, s6, s7 = (c[f"s{k}"] for k in range(1, 8))
        log_tm = log_t - self.log_mass
        log_k = (s4 + s7) * s6 * log_tm
        log_u = max(s4 * log_tm + log_p, self._u_minimum(log_k))
        u = math.exp(log_u)
        g = 1.0 - s1 * math.exp(-s3 * math.log(s2 + u)) + s5 * math.exp(log_k - s6 * log_u)
        n_eff = like + g * unlike + other / f
        scale = impurity * math.exp((1.0 - alpha) * log_sc + alpha * self.log_ref) + carrier * (
            carriers
        )
        return 1.0 / (1.0 / lattice + n_eff / scale)


def resistivity_loop(si, rho, T, xtol=1e-13):
    """Boron density (1-D array) giving resistivity ``rho`` at ``T``: brentq in ln N,
    each evaluation an equilibrium solve (as :func:`equilibrium_loop`) and Klaassen's
    mobility in floats, composed as the release composes them (the carriers of
    complete or incomplete ionisation, total or ionised dopant densities, as the
    mobility model's fit conventions say)."""
    from matprops.material.composition import complete_ionisation

    models = []
    for carrier in ("electron", "hole"):
        model = si._mobility_model(carrier, "phosphorus", "boron")
        ionised = model.conventions.value("dopant_densities") == "ionised"
        models.append((_KlaassenScalar(model), complete_ionisation(model), ionised))
    rho = np.asarray(rho, float).ravel()
    T = np.broadcast_to(np.asarray(T, float), rho.shape)
    ni = si._carriers().ni(temperature=T)
    out = np.empty(rho.size)
    for i in range(rho.size):
        t = float(T[i])

        def log_rho(log_n, t=t):
            na = math.exp(log_n)
            states, sigma = {}, 0.0
            for carrier, (mobility, complete, ionised) in enumerate(models):
                if complete not in states:
                    setup = _Setup(si, t, 0.0, na, complete)
                    schenk = _SchenkScalar(setup.parts) if setup.schenk else None
                    states[complete] = _solve_point(0, setup, schenk, xtol, state=True)
                eta, gap, n, p, setup = states[complete]
                acceptors = na
                if ionised:
                    _, _, _, _, _, _, na_, w_a, b_a = setup.point(0)
                    acceptors = na_ * (1.0 - b_a + b_a / (1.0 + math.exp(-eta - gap + w_a)))
                mu = mobility(t, 0.0, acceptors, n, p)
                sigma += ELEMENTARY_CHARGE * (p if carrier else n) * mu
            return -math.log(sigma)

        low = math.log(max(4.0 * float(ni[i]), 1.0))
        target = math.log(float(rho[i]))
        out[i] = math.exp(
            brentq(lambda x: log_rho(x) - target, low, math.log(1e21), xtol=xtol, rtol=8.9e-16)
        )
    return out
