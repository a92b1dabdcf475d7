"""Lean hand-written baselines for the inverse problems (benchmarks only).

A per-point ``scipy.optimize.brentq`` loop of the same equations as matprops, written
the fastest way a careful author would write it by hand: what depends on temperature
only (densities of states, intrinsic density, Schenk's powers of kT) is computed
vectorised in numpy before the loop; inside it, plain Python floats and the ``math``
module only (no 1-element numpy arrays): the dopant levels, Schenk's narrowing,
Klaassen's mobility and the Fermi-Dirac integral (the same rational approximations
matprops uses, in scalar Horner form) are written out for one point.

- :func:`equilibrium_loop`: charge neutrality in linear space, ``p + Nd+ - n - Na-``,
  bracketed by brentq at fixed narrowing (``xtol`` 1e-13 in eta); Schenk's narrowing
  made self-consistent by a fixed point around it (warm bracket, Aitken's extrapolation
  every third step) to 1e-12 of kT, matprops' own tolerance.
- :func:`resistivity_loop`: doping from resistivity, brentq in ln N (``xtol`` 1e-13),
  each evaluation an equilibrium solve as above (complete or incomplete ionisation as
  the release's mobility model was fitted) and Klaassen's mobility for both carriers.

Only the release defaults these benchmarks use are written out (Fermi-Dirac statistics,
Schenk's narrowing, Altermatt's lowered levels, Klaassen's mobility); the functions
check the release's models and refuse others. Where the ionisation model was fitted with
other densities of states and Boltzmann statistics (its fit conventions), its levels
carry ``kT ln(N / N_fit)`` and its occupancy takes ``ln(n/Nc)``, ``ln(p/Nv)``, as the
release composes it.
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
XTOL = 1e-13  # in eta, and in ln N
SELF_CONSISTENCY = 1e-12  # of the narrowing, in kT


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


def _require(model, kernel_name):
    name = getattr(model.kernel, "__name__", "")
    if name != kernel_name:
        raise NotImplementedError(
            f"the lean loop writes out {kernel_name} only; the release uses "
            f"{model.quantity} {model.id} ({name})"
        )


class _Level:
    """Altermatt et al.'s lowered level for one density: (w = E/kT + ln g, b)."""

    def __init__(self, model):
        _require(model, "lowered_level")
        c = _coefficients(model)
        self.e0, self.c_e, self.c_b = c["energy_at_low_density"], c["energy_exponent"], None
        self.log_energy_density = math.log(c["energy_density"])
        self.log_merging_density = math.log(c["merging_density"])
        self.c_b = c["merging_exponent"]
        self.log_g = math.log(c["degeneracy"])

    def __call__(self, density, kt, complete):
        if density <= 0.0:
            return 0.0, 0.0
        log_n = math.log(density)
        energy = self.e0 / (1.0 + math.exp(self.c_e * (log_n - self.log_energy_density)))
        share = (
            0.0
            if complete
            else 1.0 / (1.0 + math.exp(self.c_b * (log_n - self.log_merging_density)))
        )
        return energy / kt + self.log_g, share


class _Schenk:
    """Schenk's narrowing for one point (floats): the ionic part of the dopants, the
    exchange part of the carriers."""

    def __init__(self, model):
        _require(model, "schenk")
        c = _coefficients(model)
        self.rydberg, self.volume = c["exciton_rydberg"], c["exciton_radius"] ** 3
        me, mh = c["electron_mass"], c["hole_mass"]
        self.alpha_e, self.alpha_h = mh / (me + mh), me / (me + mh)
        self.bands = []
        for band, g, alpha in (
            ("e", c["electron_degeneracy"], None),
            ("h", c["hole_degeneracy"], None),
        ):
            del alpha
            self.bands.append(
                {
                    "g": g,
                    "alpha": self.alpha_e if band == "e" else self.alpha_h,
                    **{k: c[f"{k}_{band}"] for k in ("b", "c", "d", "p", "h", "j", "k", "q")},
                }
            )

    def ionic(self, t, nd, na):
        """The ionic part of both bands, summed (units of Ry), at reduced t = kT/Ry."""
        donors, acceptors = nd * self.volume, na * self.volume
        dopants = donors + acceptors
        if dopants <= 0.0:
            return 0.0
        u = dopants * dopants / (t * t * t)
        screening = math.sqrt(t * dopants / (2.0 * math.pi))
        log_screening = math.log1p(math.sqrt(dopants) / t)
        ions_p = self.alpha_e * donors + self.alpha_h * acceptors
        log_ions_p = math.log(ions_p)
        ions_p34 = math.exp(0.75 * log_ions_p)
        total = 0.0
        for band in self.bands:
            lattice = screening * (1.0 + band["h"] * log_screening)
            impurity = (
                band["j"] * u * ions_p34 * (1.0 + band["k"] * math.exp(band["q"] * log_ions_p))
            )
            total -= dopants * (1.0 + u) / (lattice + impurity)
        return total

    def total(self, t, n, p, ionic):
        """dEc + dEv in eV (t = kT/Ry, ionic from :meth:`ionic`)."""
        n *= self.volume
        p *= self.volume
        t2 = t * t
        ns = n + p
        sqrt_ns = math.sqrt(ns)
        mix = self.alpha_e * n + self.alpha_h * p
        f = 1984.4017075391884 * ns * ns  # (4 pi)^3 ns^2
        common_top = 5.0132565492620005 * sqrt_ns * t2 * math.sqrt(t)  # sqrt(8 pi)
        common_bottom = f + t2 * t + 40.0 * ns * sqrt_ns * t
        total = 0.0
        for dens, band in ((n, self.bands[0]), (p, self.bands[1])):
            g = band["g"]
            exchange = -(
                f
                * (
                    (48.0 / (math.pi * g) * dens) ** (1.0 / 3.0)
                    + band["c"] * math.log1p(band["d"] * mix ** band["p"])
                )
                + (8.0 * math.pi * band["alpha"] / g) * dens * t2
                + common_top
            ) / (common_bottom + band["b"] * sqrt_ns * t2)
            total -= exchange
        return (total - ionic) * self.rydberg


def _occupancy_levels(eta, eta_v, by_density):
    """The reduced levels the dopants' occupancy takes: eta and eta_v, or (an ionisation
    model fitted with Boltzmann statistics) ln(n/Nc) and ln(p/Nv)."""
    if by_density:
        return math.log(fd_half(eta)), math.log(fd_half(eta_v))
    return eta, eta_v


def _ionised(eta, gap, nd, w_d, b_d, na, w_a, b_a, by_density):
    eta_v = -eta - gap
    x_d, x_a = _occupancy_levels(eta, eta_v, by_density)
    donors = nd * (1.0 - b_d + b_d / (1.0 + math.exp(x_d + w_d)))
    acceptors = na * (1.0 - b_a + b_a / (1.0 + math.exp(x_a + w_a)))
    return donors, acceptors


def _charge(eta, gap, nc, nv, nd, w_d, b_d, na, w_a, b_a, by_density):
    donors, acceptors = _ionised(eta, gap, nd, w_d, b_d, na, w_a, b_a, by_density)
    return nv * fd_half(-eta - gap) + donors - nc * fd_half(eta) - acceptors


class _Equilibrium:
    """The equations of the release's equilibrium, point by point."""

    def __init__(self, si):
        bound = si._carriers()
        if bound.statistics != "fermi-dirac":
            raise NotImplementedError("the lean loop writes out Fermi-Dirac statistics only")
        self.bound = bound
        self.donor = _Level(bound.ionisation.select("phosphorus"))
        self.acceptor = _Level(bound.ionisation.select("boron"))
        self.schenk = _Schenk(bound.narrowing)
        self.by_density = bound.occupancy_from_densities

    def temperature_parts(self, T):
        """What depends on temperature only, vectorised: lists of floats."""
        T = np.asarray(T, dtype=float)
        nc, nv = self.bound.dos(temperature=T)
        ni = self.bound.ni(temperature=T)
        kt = BOLTZMANN_EV * T
        gap = np.log(nc) + np.log(nv) - 2.0 * np.log(ni) - self.bound.gap_offset(T) / kt
        t = kt / self.schenk.rydberg
        # levels fitted with other densities of states carry them: + ln(N / N_fit)
        shift_d = shift_a = np.zeros_like(T)
        if self.bound.level_states is not None:
            fit_c, fit_v = self.bound.level_states(temperature=T)
            shift_d, shift_a = np.log(nc / fit_c), np.log(nv / fit_v)
        parts = np.broadcast_arrays(T, kt, gap, nc, nv, t, shift_d, shift_a)
        return [a.tolist() for a in parts]

    def solve(self, kt, gap0, nc, nv, t, nd, na, complete=False, start=None, shifts=(0.0, 0.0)):
        """(eta, n, p, Nd+, Na-) at one point: brentq at fixed narrowing, fixed point on it;
        ``shifts``: the levels' ln(N / N_fit) (see :meth:`temperature_parts`)."""
        w_d, b_d = self.donor(nd, kt, complete)
        w_a, b_a = self.acceptor(na, kt, complete)
        w_d, w_a = w_d + shifts[0], w_a + shifts[1]
        ionic = self.schenk.ionic(t, nd, na)
        shift = 0.0
        low, high = (-gap0 - 60.0, 60.0) if start is None else (start - 1.0, start + 1.0)
        history = []
        for step in range(200):
            gap = gap0 - shift
            args = (gap, nc, nv, nd, w_d, b_d, na, w_a, b_a, self.by_density)
            while _charge(low, *args) <= 0.0:
                low -= 4.0
            while _charge(high, *args) >= 0.0:
                high += 4.0
            eta = brentq(_charge, low, high, args=args, xtol=XTOL, rtol=8.9e-16, maxiter=200)
            n, p = nc * fd_half(eta), nv * fd_half(-eta - gap)
            new = self.schenk.total(t, n, p, ionic) / kt
            if abs(new - shift) <= SELF_CONSISTENCY and step:
                donors, acceptors = _ionised(eta, gap, nd, w_d, b_d, na, w_a, b_a, self.by_density)
                return eta, n, p, donors, acceptors
            history.append(new)
            if len(history) == 3:  # Aitken's extrapolation of the narrowing
                s0, s1, s2 = history
                curvature = s2 - 2.0 * s1 + s0
                new = s2 - (s2 - s1) ** 2 / curvature if abs(curvature) > 1e-14 else s2
                history = []
            shift = new
            low, high = eta - 0.25, eta + 0.25
        raise RuntimeError("lean loop: a point did not converge")


def equilibrium_loop(si, T, Nd, Na):
    """(n, p) of every point (1-D arrays), one brentq solve after another."""
    T, Nd, Na = (np.ravel(a) for a in np.broadcast_arrays(T, Nd, Na))
    equations = _Equilibrium(si)
    _, kt, gap, nc, nv, t, shift_d, shift_a = equations.temperature_parts(T)
    nd, na = Nd.tolist(), Na.tolist()
    n_out, p_out = np.empty(T.size), np.empty(T.size)
    for i in range(T.size):
        _, n_out[i], p_out[i], _, _ = equations.solve(
            kt[i], gap[i], nc[i], nv[i], t[i], nd[i], na[i], shifts=(shift_d[i], shift_a[i])
        )
    return n_out, p_out


# --------------------------------------------------------------------------- resistivity


class _Klaassen:
    """Klaassen's mobility for one point (floats); coefficients of a bound model."""

    def __init__(self, model):
        from matprops.kernels.mobility import _g_minimum_table

        _require(model, "klaassen")
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
            c["coulomb_weight"]
            / c["coulomb_density"]
            * math.exp((2.0 / 3.0) * (log_sc - 3 * log_t))
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
        scale = (
            impurity * math.exp((1.0 - alpha) * log_sc + alpha * self.log_ref) + carrier * carriers
        )
        return 1.0 / (1.0 / lattice + n_eff / scale)


def resistivity_loop(si, rho, T, dopant="boron"):
    """Density of ``dopant`` (boron or phosphorus; 1-D array) giving resistivity ``rho``
    at ``T``: brentq in ln N, each evaluation one equilibrium (as :func:`equilibrium_loop`,
    started from the last Fermi level found) and Klaassen's mobility for both carriers,
    composed as the release composes them (the carriers of complete or incomplete
    ionisation, total or ionised dopant densities, as the mobility's fit says)."""
    from matprops.material.composition import complete_ionisation

    acceptor = dopant == "boron"
    models = []
    for carrier in ("electron", "hole"):
        model = si._mobility_model(carrier, "phosphorus", "boron")
        ionised = model.conventions.value("dopant_densities") == "ionised"
        models.append((_Klaassen(model), complete_ionisation(model), ionised))
    equations = _Equilibrium(si)
    rho, T = (np.ravel(a) for a in np.broadcast_arrays(rho, T))
    _, kts, gaps, ncs, nvs, ts, shift_ds, shift_as = equations.temperature_parts(T)
    lows = np.log(si._lowest_density(T, "acceptor" if acceptor else "donor", "phosphorus", "boron"))
    out = np.empty(rho.size)
    for i in range(rho.size):
        point = (float(T[i]), kts[i], gaps[i], ncs[i], nvs[i], ts[i], shift_ds[i], shift_as[i])
        target = math.log(float(rho[i]))
        out[i] = math.exp(
            brentq(
                _residual,
                float(lows[i]),
                math.log(1e21),
                args=(point, target, equations, models, acceptor, {}),
                xtol=XTOL,
                rtol=8.9e-16,
            )
        )
    return out


def _residual(log_n, point, target, equations, models, acceptor, last):
    """ln rho(N) - ln rho_target at one point (``last``: the last Fermi level found)."""
    temperature, kt, gap, nc, nv, t, shift_d, shift_a = point
    density = math.exp(log_n)
    nd, na = (0.0, density) if acceptor else (density, 0.0)
    states, sigma = {}, 0.0
    for carrier, (mobility, complete, ionised) in enumerate(models):
        if complete not in states:
            states[complete] = equations.solve(
                kt, gap, nc, nv, t, nd, na, complete, last.get(complete), (shift_d, shift_a)
            )
            last[complete] = states[complete][0]
        _, n, p, donors, acceptors = states[complete]
        if ionised:
            mu = mobility(temperature, donors, acceptors, n, p)
        else:
            mu = mobility(temperature, nd, na, n, p)
        sigma += ELEMENTARY_CHARGE * (p if carrier else n) * mu
    return -math.log(sigma) - target
