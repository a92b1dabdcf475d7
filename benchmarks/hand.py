"""The models written by hand in numpy, the best way a careful author would (benchmarks).

Each function is the published formula of a release model as one numpy expression, with
what makes numpy fast and nothing from matprops: integer powers by multiplication
(``x * x``, ``t * t * sqrt(t)``), roots by ``sqrt`` and ``cbrt``, polynomials by Horner's
rule, a table the formula needs built once (Klaassen's G minimum: :func:`klaassen_table`,
outside the timed call), coefficients read once from the model as plain floats. They are
checked against the kernels before they are timed (the numbers must agree to 1e-12).
"""

from __future__ import annotations

import functools
import math

import numpy as np

from matprops.kernels.constants import BOLTZMANN_EV, BOLTZMANN_J, ELECTRON_MASS_KG


def coefficients(model):
    return {k: c.kernel_value for k, c in model.coefficients.items()}


def horner(x, c):
    """c[0] + c[1] x + c[2] x^2 + ... by Horner's rule."""
    result = c[-1] * x + c[-2]
    for a in c[-3::-1]:
        result = result * x + a
    return result


def passler(T, c):
    d2 = c["delta"] * c["delta"]
    x = 2.0 * T / c["theta"]
    x2 = x * x
    x3 = x2 * x
    root = np.cbrt(
        np.sqrt(
            1.0
            + math.pi**2 * x2 / (3.0 * (1.0 + d2))
            + (3.0 * d2 - 1.0) * x3 / 4.0
            + 8.0 * x2 * x2 / 3.0
            + x3 * x3
        )
    )
    return c["gap_at_zero"] - c["alpha"] * c["theta"] * (
        (1.0 - 3.0 * d2) / np.expm1(c["theta"] / T) + 1.5 * d2 * (root - 1.0)
    )


def couderc_states(T, c):
    t32 = c["prefactor"] * T * np.sqrt(T)
    return t32 * horner(T, c["conduction_polynomial"]), t32 * horner(T, c["valence_polynomial"])


def couderc_ni(T, c):
    gap = passler(
        T,
        {
            "gap_at_zero": c["gap_at_zero"],
            "alpha": c["gap_alpha"],
            "theta": c["gap_theta"],
            "delta": c["gap_delta"],
        },
    )
    return c["prefactor"] * np.exp(c["exponent"] * np.log(T) - gap / (2.0 * BOLTZMANN_EV * T))


def okada(T, c):
    def integral(x):
        return (
            c["c1"] * (x + np.exp(-c["c2"] * (x - c["onset_temperature"])) / c["c2"])
            + 0.5 * c["c3"] * x * x
        )

    reference = float(integral(c["reference_temperature"]))
    return c["reference_lattice_constant"] * np.exp(integral(T) - reference)


def schenk(T, Nd, Na, n, p, c):
    """Schenk (1998): both band-edge shifts, as printed (dopant-screened ionic part)."""
    ry, a3 = c["exciton_rydberg"], c["exciton_radius"] ** 3
    t = BOLTZMANN_EV * T / ry
    t2 = t * t
    t3 = t2 * t
    n_, p_, nd, na = n * a3, p * a3, Nd * a3, Na * a3
    me, mh = c["electron_mass"], c["hole_mass"]
    ae, ah = mh / (me + mh), me / (me + mh)
    ns, mix, N, Np = n_ + p_, ae * n_ + ah * p_, nd + na, ae * nd + ah * na
    sqrt_ns = np.sqrt(ns)
    log_mix, log_np = np.log(mix), np.log(Np)
    U = N * N / t3
    f = (4.0 * math.pi) ** 3 * ns * ns
    top = math.sqrt(8.0 * math.pi) * sqrt_ns * t2 * np.sqrt(t)
    bottom = f + t3 + 40.0 * ns * sqrt_ns * t
    screening = np.sqrt(t * N / (2.0 * math.pi))
    log_screening = np.log1p(np.sqrt(N) / t)
    np34 = np.exp(0.75 * log_np)
    shifts = []
    for dens, g, al, s in (
        (n_, c["electron_degeneracy"], ae, "e"),
        (p_, c["hole_degeneracy"], ah, "h"),
    ):
        b, cc, d, pa = c[f"b_{s}"], c[f"c_{s}"], c[f"d_{s}"], c[f"p_{s}"]
        h, j, k, q = c[f"h_{s}"], c[f"j_{s}"], c[f"k_{s}"], c[f"q_{s}"]
        xc = -(
            f * (np.cbrt(48.0 / (math.pi * g) * dens) + cc * np.log1p(d * np.exp(pa * log_mix)))
            + (8.0 * math.pi * al / g) * dens * t2
            + top
        ) / (bottom + b * sqrt_ns * t2)
        ionic = -(N * (1.0 + U)) / (
            screening * (1.0 + h * log_screening) + j * U * np34 * (1.0 + k * np.exp(q * log_np))
        )
        shifts.append(-(xc + ionic) * ry)
    return tuple(shifts)


def lowered_level(N, c):
    log_n = np.log(N)
    energy = c["energy_at_low_density"] / (
        1.0 + np.exp(c["energy_exponent"] * (log_n - math.log(c["energy_density"])))
    )
    share = 1.0 / (1.0 + np.exp(c["merging_exponent"] * (log_n - math.log(c["merging_density"]))))
    return energy, share


def richter(n0, p0, dn, c):
    g_e = 1.0 + c["eeh_enhancement"] * (1.0 - np.tanh((n0 / c["eeh_density"]) ** c["eeh_exponent"]))
    g_h = 1.0 + c["ehh_enhancement"] * (1.0 - np.tanh((p0 / c["ehh_density"]) ** c["ehh_exponent"]))
    auger = (
        c["electron_coefficient"] * g_e * n0
        + c["hole_coefficient"] * g_h * p0
        + c["injection_coefficient"] * dn ** c["injection_exponent"]
    )
    return 1.0 / ((n0 + p0 + dn) * (auger + c["radiative_coefficient"]))


def srh(dn, n0, p0, n1, p1, tn, tp):
    return (tp * (n0 + n1 + dn) + tn * (p0 + p1 + dn)) / (n0 + p0 + dn)


def thermal_velocity(T, c):
    gap = c["gap_at_zero"] - c["gap_alpha"] * T * T / (T + c["gap_beta"])
    scaling = c["transverse_mass_gap_scaling"]
    m_t = c["transverse_mass_at_zero"] * (
        c["gap_at_zero"] / gap if scaling == 1.0 else (c["gap_at_zero"] / gap) ** scaling
    )
    m_l = c["longitudinal_mass"]
    d = np.sqrt(1.0 - m_t / m_l)
    root = 1.0 + np.sqrt(m_l / m_t) * (np.arcsin(d) / d)
    mass = 4.0 * m_l / (root * root)
    return math.sqrt(8.0 * BOLTZMANN_J / (math.pi * ELECTRON_MASS_KG)) * 100.0 * np.sqrt(T / mass)


def fca(lam, n, p, c):
    grid = np.log(c["wavelengths"])
    x = np.log(lam)
    log_n, log_p = np.log(n), np.log(p)

    def at(values):
        return np.interp(x, grid, values)

    return np.exp(at(np.log(c["electron_prefactors"])) + at(c["electron_exponents"]) * log_n) + (
        np.exp(at(np.log(c["hole_prefactors"])) + at(c["hole_exponents"]) * log_p)
    )


@functools.lru_cache(maxsize=8)
def klaassen_table(s1, s2, s3, s5, s6):
    """ln L(u) on a grid of ln u, L = s1 s3 u^(s6+1) / (s2 + u)^(s3+1) (its minimum's
    condition read backwards): built once, outside the timed calls."""
    log_u = np.linspace(-25.0, 25.0, 25001)
    u = np.exp(log_u)
    log_l = math.log(s1 * s3) + (s6 + 1.0) * log_u - (s3 + 1.0) * np.log(s2 + u)
    return log_l, log_u


def klaassen(t, nd0, na0, n, p, c):
    """Klaassen's unified mobility (1992), as printed, G held at its minimum."""
    s1, s2, s3, s4, s5, s6, s7 = (c[f"s{k}"] for k in range(1, 8))
    log_l, log_u_grid = klaassen_table(s1, s2, s3, s5, s6)
    log_t = np.log(t / 300.0)
    nd = nd0 + nd0 * nd0 * nd0 / (
        c["donor_clustering"] * nd0 * nd0 + c["donor_clustering_density"] ** 2
    )
    na = na0 + na0 * na0 * na0 / (
        c["acceptor_clustering"] * na0 * na0 + c["acceptor_clustering_density"] ** 2
    )
    like, unlike, other = (nd, na, p) if c["charge"] < 0 else (na, nd, n)
    carriers = n + p
    ratio = c["carrier_mass"] / c["other_carrier_mass"]
    mu_max, mu_min, alpha = c["max_mobility"], c["min_mobility"], c["alpha"]
    spread = mu_max - mu_min
    lattice = mu_max * np.exp(-c["lattice_exponent"] * log_t)
    impurity = mu_max * mu_max / spread * np.exp((3.0 * alpha - 1.5) * log_t)
    carrier = mu_max * mu_min / spread * np.exp(-0.5 * log_t)
    n_sc = like + unlike + other
    log_sc = np.log(n_sc)
    coulomb = (
        c["coulomb_weight"] / c["coulomb_density"] * np.exp((2.0 / 3.0) * (log_sc - 3.0 * log_t))
    )
    screening = (
        c["screening_weight"]
        * carriers
        / (c["screening_density"] * c["carrier_mass"])
        * np.exp(-2.0 * log_t)
    )
    log_p = -np.log(coulomb + screening)
    x = np.exp(-c["r6"] * log_p)
    f = (c["r1"] + (c["r2"] + c["r3"] * ratio) * x) / (1.0 + (c["r4"] + c["r5"] * ratio) * x)
    log_tm = log_t - math.log(c["carrier_mass"])
    log_k = (s4 + s7) * s6 * log_tm
    minimum = np.interp(math.log(s5 * s6) + log_k, log_l, log_u_grid)
    log_u = np.maximum(s4 * log_tm + log_p, minimum)
    g = 1.0 - s1 * np.exp(-s3 * np.log(s2 + np.exp(log_u))) + s5 * np.exp(log_k - s6 * log_u)
    n_eff = like + g * unlike + other / f
    scale = impurity * np.exp((1.0 - alpha) * log_sc + alpha * math.log(c["reference_density"])) + (
        carrier * carriers
    )
    return 1.0 / (1.0 / lattice + n_eff / scale)


def power_law(T, c):
    return c["prefactor"] * np.exp(c["exponent"] * np.log(T / c["reference_temperature"]))


def rational_resistivity(N, c):
    return (
        c["constant_term"]
        + c["fall_term"] / (1.0 + np.exp(c["fall_exponent"] * np.log(c["fall_scale"] * N)))
    ) / N


def bilinear(lam, T, wavelengths, temperatures, values):
    """values[T, lambda] at (T, lambda) pairs: searchsorted and the four corners."""
    j = np.clip(np.searchsorted(wavelengths, lam, side="right") - 1, 0, wavelengths.size - 2)
    i = np.clip(np.searchsorted(temperatures, T, side="right") - 1, 0, temperatures.size - 2)
    v = (lam - wavelengths[j]) / (wavelengths[j + 1] - wavelengths[j])
    u = (T - temperatures[i]) / (temperatures[i + 1] - temperatures[i])
    return (1.0 - u) * ((1.0 - v) * values[i, j] + v * values[i, j + 1]) + u * (
        (1.0 - v) * values[i + 1, j] + v * values[i + 1, j + 1]
    )


def rows_then_interp(lam, T, wavelengths, temperatures, values):
    """A wavelength x temperature grid the row way: for each T, the two table rows around
    it blended on the table's wavelength grid, then one np.interp over the wavelengths."""
    out = np.empty((T.size, lam.size))
    for k, t in enumerate(T):
        i = min(
            max(int(np.searchsorted(temperatures, t, side="right")) - 1, 0), temperatures.size - 2
        )
        u = (t - temperatures[i]) / (temperatures[i + 1] - temperatures[i])
        row = values[i] * (1.0 - u) + values[i + 1] * u
        out[k] = np.interp(lam, wavelengths, row, left=np.nan, right=np.nan)
    return out


@functools.lru_cache(maxsize=8)
def _log_table(temperatures, coefficients):
    return np.asarray(temperatures, dtype=float), np.log(np.asarray(coefficients, dtype=float))


def log_linear_table(T, c):
    """B(T) published at a few temperatures: log B linear in T between them, the end
    values held outside; the logarithms taken once (outside the timed call)."""
    grid, logs = _log_table(tuple(c["temperatures"]), tuple(c["coefficients"]))
    return np.exp(np.interp(T, grid, logs))
