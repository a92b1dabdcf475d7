"""Low-field carrier mobility in doped silicon, in cm^2/(V s).

Every kernel takes the temperature (K) and the donor and acceptor densities
(cm^-3) — total or ionised, as the model file's ``dopant_densities`` says — and
returns the mobility of the carrier its coefficient set describes. Klaassen's
unified model also takes the free-carrier densities n and p (cm^-3).

Powers are written ``exp(a log x)`` (half the cost of a non-integer ``**`` in
numpy); models whose density term is ``(N / N_r)^a`` treat N = 0 as the lattice
limit.
"""

import functools

import numpy as np

from ._spec import kernel

__all__ = ["arora", "caughey_thomas", "g_minimum", "klaassen", "masetti",
           "masetti_lattice_temperature"]

_DOPING = {"temperature": "K", "donor_density": "cm^-3", "acceptor_density": "cm^-3"}
_MOBILITY = "cm^2/(V*s)"


def _log(x):
    with np.errstate(divide="ignore"):
        return np.log(x)


def _total(donor_density, acceptor_density):
    return np.asarray(donor_density, dtype=float) + np.asarray(acceptor_density, dtype=float)


# --------------------------------------------------------------------------- Masetti

def _masetti(n, lattice, *, min_mobility_1, min_mobility_2, drop_mobility, reference_density,
             alpha, drop_density, beta, cutoff_density):
    log_n = _log(n)
    with np.errstate(divide="ignore", invalid="ignore"):
        cutoff = (np.exp(-cutoff_density / n) if cutoff_density > 0
                  else np.ones_like(n))
    fall = 1.0 + np.exp(alpha * (log_n - np.log(reference_density)))
    drop = 1.0 + np.exp(beta * (np.log(drop_density) - log_n))
    return (min_mobility_1 * cutoff + (lattice - min_mobility_2) / fall
            - drop_mobility / drop)


_MASETTI = {"min_mobility_1": _MOBILITY, "min_mobility_2": _MOBILITY,
            "drop_mobility": _MOBILITY, "max_mobility": _MOBILITY,
            "reference_density": "cm^-3", "alpha": "1", "drop_density": "cm^-3",
            "beta": "1", "cutoff_density": "cm^-3"}


@kernel(inputs=_DOPING, output=_MOBILITY, coefficients=_MASETTI)
def masetti(temperature, donor_density, acceptor_density, *, min_mobility_1, min_mobility_2,
            drop_mobility, max_mobility, reference_density, alpha, drop_density, beta,
            cutoff_density):
    """Masetti, Severi and Solmi's room-temperature fit (eq. 1 electrons, eq. 4 holes).

    ``mu = mu_min1 exp(-P_c/N) + (mu_max - mu_min2) / (1 + (N/C_r)^alpha)
    - mu_1 / (1 + (C_s/N)^beta)`` with ``N = Nd + Na``. ``P_c = 0`` (electrons)
    drops the cut-off factor; N = 0 gives ``mu_max`` (``mu_min1 - mu_min2 + mu_max``
    when ``P_c = 0``, the two minima being equal for electrons).

    ``temperature`` does not enter the value: it is a 300 K model, and the input
    is there so that its validity range (room temperature) is checked.

    Parameters
    ----------
    temperature : array_like, K;  donor_density, acceptor_density : array_like, cm^-3
    min_mobility_1, min_mobility_2, drop_mobility, max_mobility : cm^2/(V s)
    reference_density (C_r), drop_density (C_s), cutoff_density (P_c) : cm^-3
    alpha, beta : dimensionless

    References
    ----------
    G. Masetti, M. Severi and S. Solmi, IEEE Trans. Electron Devices 30, 764 (1983),
    doi:10.1109/T-ED.1983.21207.
    """
    n = _total(donor_density, acceptor_density)
    shape = np.broadcast_shapes(np.shape(temperature), n.shape)
    return np.broadcast_to(_masetti(
        n, max_mobility, min_mobility_1=min_mobility_1, min_mobility_2=min_mobility_2,
        drop_mobility=drop_mobility, reference_density=reference_density, alpha=alpha,
        drop_density=drop_density, beta=beta, cutoff_density=cutoff_density), shape)


@kernel(inputs=_DOPING, output=_MOBILITY,
        coefficients={**_MASETTI, "lattice_exponent": "1", "reference_temperature": "K"})
def masetti_lattice_temperature(temperature, donor_density, acceptor_density, *,
                                min_mobility_1, min_mobility_2, drop_mobility, max_mobility,
                                reference_density, alpha, drop_density, beta, cutoff_density,
                                lattice_exponent, reference_temperature):
    """Masetti's form with a temperature-dependent lattice term (Lombardi et al.'s bulk term).

    As :func:`masetti` with ``mu_max`` replaced by ``mu_max (T/T_ref)^(-gamma)``;
    the other terms keep their 300 K values.

    Parameters
    ----------
    as :func:`masetti`, and lattice_exponent (gamma, dimensionless), reference_temperature (K)

    References
    ----------
    C. Lombardi, S. Manzini, A. Saporito and M. Vanzi, IEEE Trans. Computer-Aided
    Design 7, 1164 (1988), doi:10.1109/43.9186.
    """
    n = _total(donor_density, acceptor_density)
    t = np.asarray(temperature, dtype=float)
    lattice = max_mobility * np.exp(-lattice_exponent * np.log(t / reference_temperature))
    return _masetti(n, lattice, min_mobility_1=min_mobility_1, min_mobility_2=min_mobility_2,
                    drop_mobility=drop_mobility, reference_density=reference_density,
                    alpha=alpha, drop_density=drop_density, beta=beta,
                    cutoff_density=cutoff_density)


# --------------------------------------------------------------------------- Arora

@kernel(inputs=_DOPING, output=_MOBILITY,
        coefficients={"min_mobility": _MOBILITY, "min_exponent": "1",
                      "doping_mobility": _MOBILITY, "doping_exponent": "1",
                      "reference_density": "cm^-3", "reference_exponent": "1",
                      "alpha": "1", "alpha_exponent": "1", "reference_temperature": "K",
                      "doping_reference_temperature": "K"})
def arora(temperature, donor_density, acceptor_density, *, min_mobility, min_exponent,
          doping_mobility, doping_exponent, reference_density, reference_exponent, alpha,
          alpha_exponent, reference_temperature, doping_reference_temperature):
    """Arora, Hauser and Roulston's mobility versus doping and temperature (eqs 8, 13).

    ``mu = mu_min Tn^a1 + mu_0 (T/T0)^a2 / (1 + (N / (N_ref Tn^a3))^(alpha Tn^a4))``,
    ``Tn = T / T_ref``, ``N = Nd + Na``. ``mu_0`` is the second term's own
    amplitude (the lattice-limited mobility is ``mu_min + mu_0 (T/T0)^a2``); the
    paper writes it in absolute temperature (``T0 = 1 K``), the rest in ``Tn``.

    Parameters
    ----------
    temperature : array_like, K;  donor_density, acceptor_density : array_like, cm^-3
    min_mobility, doping_mobility : cm^2/(V s);  reference_density : cm^-3
    min_exponent, doping_exponent, reference_exponent, alpha, alpha_exponent : dimensionless
    reference_temperature (T_ref), doping_reference_temperature (T0) : K

    References
    ----------
    N. D. Arora, J. R. Hauser and D. J. Roulston, IEEE Trans. Electron Devices 29,
    292 (1982), doi:10.1109/T-ED.1982.20698.
    """
    t = np.asarray(temperature, dtype=float)
    log_t = np.log(t / reference_temperature)
    log_n = _log(_total(donor_density, acceptor_density))
    power = alpha * np.exp(alpha_exponent * log_t)
    ratio = np.exp(power * (log_n - np.log(reference_density) - reference_exponent * log_t))
    amplitude = doping_mobility * np.exp(doping_exponent
                                         * np.log(t / doping_reference_temperature))
    return min_mobility * np.exp(min_exponent * log_t) + amplitude / (1.0 + ratio)


# --------------------------------------------------------------------------- Caughey-Thomas

@kernel(inputs=_DOPING, output=_MOBILITY,
        coefficients={"min_mobility": _MOBILITY, "max_mobility": _MOBILITY,
                      "reference_density": "cm^-3", "alpha": "1"})
def caughey_thomas(temperature, donor_density, acceptor_density, *, min_mobility,
                   max_mobility, reference_density, alpha):
    """Caughey and Thomas's room-temperature form.

    ``mu = mu_min + (mu_max - mu_min) / (1 + (N/N_ref)^alpha)``, ``N = Nd + Na``.
    ``temperature`` only carries the validity check (a 300 K fit).

    Parameters
    ----------
    temperature : array_like, K;  donor_density, acceptor_density : array_like, cm^-3
    min_mobility, max_mobility : cm^2/(V s);  reference_density : cm^-3;  alpha : 1

    References
    ----------
    D. M. Caughey and R. E. Thomas, Proc. IEEE 55, 2192 (1967),
    doi:10.1109/PROC.1967.6123.
    """
    n = _total(donor_density, acceptor_density)
    shape = np.broadcast_shapes(np.shape(temperature), n.shape)
    ratio = np.exp(alpha * (_log(n) - np.log(reference_density)))
    return np.broadcast_to(min_mobility + (max_mobility - min_mobility) / (1.0 + ratio),
                           shape)


# --------------------------------------------------------------------------- Klaassen

@functools.lru_cache(maxsize=16)
def _g_minimum_table(s1, s2, s3, s5, s6):
    """(ln L, ln u) on a grid, L(u) = s1 s3 u^(s6+1) / (s2 + u)^(s3+1).

    Klaassen's G written in ``u = ((T/300)/m)^s4 P`` is
    ``G = 1 - s1 (s2 + u)^-s3 + s5 k u^-s6`` with ``k = ((T/300)/m)^((s4+s7) s6)``;
    ``dG/du = 0`` where ``L(u) = s5 s6 k``. L rises strictly with u (``s6 > s3``), so
    its table read backwards gives the minimum's u for any k without a root search.
    """
    log_u = np.linspace(-25.0, 25.0, 25001)
    u = np.exp(log_u)
    log_l = np.log(s1 * s3) + (s6 + 1.0) * log_u - (s3 + 1.0) * np.log(s2 + u)
    if not np.all(np.diff(log_l) > 0):  # pragma: no cover - a coefficient set without it
        raise ValueError("Klaassen's G has no single minimum for these coefficients")
    return log_l, log_u


def _log_u_minimum(log_k, s1, s2, s3, s5, s6):
    log_l, log_u = _g_minimum_table(float(s1), float(s2), float(s3), float(s5), float(s6))
    return np.interp(np.log(s5 * s6) + log_k, log_l, log_u)


def g_minimum(temperature, carrier_mass, *, s1, s2, s3, s4, s5, s6, s7):
    """Where Klaassen's G(P) has its minimum, P_min, for a carrier of mass ``m`` (in m0).

    Used to clamp G below its minimum (G(P) = G(P_min) for P < P_min); P_min is
    about 0.3246 for electrons (m = 1) at 300 K.
    """
    log_tm = np.log(np.asarray(temperature, dtype=float) / 300.0 / carrier_mass)
    log_u = _log_u_minimum((s4 + s7) * s6 * log_tm, s1, s2, s3, s5, s6)
    return np.exp(log_u - s4 * log_tm)


@kernel(inputs={**_DOPING, "electron_density": "cm^-3", "hole_density": "cm^-3"},
        output=_MOBILITY,
        coefficients={"charge": "1", "max_mobility": _MOBILITY, "min_mobility": _MOBILITY,
                      "reference_density": "cm^-3", "alpha": "1", "lattice_exponent": "1",
                      "carrier_mass": "1", "other_carrier_mass": "1",
                      "donor_clustering": "1", "donor_clustering_density": "cm^-3",
                      "acceptor_clustering": "1", "acceptor_clustering_density": "cm^-3",
                      "coulomb_weight": "1", "coulomb_density": "cm^-2",
                      "screening_weight": "1", "screening_density": "cm^-3",
                      "r1": "1", "r2": "1", "r3": "1", "r4": "1", "r5": "1", "r6": "1",
                      "s1": "1", "s2": "1", "s3": "1", "s4": "1", "s5": "1", "s6": "1",
                      "s7": "1"})
def klaassen(temperature, donor_density, acceptor_density, electron_density, hole_density, *,
             charge, max_mobility, min_mobility, reference_density, alpha, lattice_exponent,
             carrier_mass, other_carrier_mass, donor_clustering, donor_clustering_density,
             acceptor_clustering, acceptor_clustering_density, coulomb_weight, coulomb_density,
             screening_weight, screening_density, r1, r2, r3, r4, r5, r6, s1, s2, s3, s4, s5,
             s6, s7):
    """Klaassen's unified mobility of majority and minority carriers.

    For carrier i (``charge`` -1: electrons, scattered by "like" donors; +1:
    holes, by acceptors) and the other carrier j, with ``t = T/300``:

    ``1/mu = 1/mu_L + 1/mu_DAj``;  ``mu_L = mu_max t^-theta``;
    ``mu_DAj = mu_N (N_sc / N_sc,eff) (N_ref / N_sc)^alpha + mu_c (n + p) / N_sc,eff``;
    ``mu_N = mu_max^2 / (mu_max - mu_min) t^(3 alpha - 1.5)``,
    ``mu_c = mu_max mu_min / (mu_max - mu_min) t^-0.5``;
    ``N_sc = N_like* + N_other* + c_j``, ``N_sc,eff = N_like* + G(P) N_other* + c_j / F(P)``
    (c_j the other carrier's density); clustering
    ``N_I* = N_I [1 + 1 / (c_I + (N_ref,I / N_I)^2)]``;
    screening ``P = [f_CW / P_CW + f_BH / P_BH]^-1``,
    ``P_CW = 3.97e13 (t^3 / N_sc)^(2/3)``, ``P_BH = 1.36e20 / (n + p) m_i t^2``;
    ``F(P) = (r1 P^r6 + r2 + r3 m_i/m_j) / (P^r6 + r4 + r5 m_i/m_j)``;
    ``G(P) = 1 - s1 / [s2 + (t / m_i)^s4 P]^s3 + s5 / [(m_i / t)^s7 P]^s6``, held at
    its minimum below P_min (:func:`g_minimum`); F takes the unclamped P.

    Parameters
    ----------
    temperature : K;  donor_density, acceptor_density, electron_density,
    hole_density : cm^-3 (arrays broadcast)
    coefficients : see the model file (datasets/models/mobility/klaassen-1992.toml)

    References
    ----------
    D. B. M. Klaassen, Solid-State Electron. 35, 953 and 961 (1992),
    doi:10.1016/0038-1101(92)90325-7, doi:10.1016/0038-1101(92)90326-8.
    """
    t = np.asarray(temperature, dtype=float)
    nd = np.asarray(donor_density, dtype=float)
    na = np.asarray(acceptor_density, dtype=float)
    n = np.asarray(electron_density, dtype=float)
    p = np.asarray(hole_density, dtype=float)
    log_t = np.log(t / 300.0)
    # clustering: N [1 + N^2 / (c N^2 + N_ref^2)], finite at N = 0
    nd2, na2 = nd * nd, na * na
    nd = nd + nd * nd2 / (donor_clustering * nd2 + donor_clustering_density ** 2)
    na = na + na * na2 / (acceptor_clustering * na2 + acceptor_clustering_density ** 2)
    like, unlike, other = (nd, na, p) if charge < 0 else (na, nd, n)
    carriers = n + p
    ratio = carrier_mass / other_carrier_mass

    lattice = max_mobility * np.exp(-lattice_exponent * log_t)
    spread = max_mobility - min_mobility
    impurity = max_mobility * max_mobility / spread * np.exp((3.0 * alpha - 1.5) * log_t)
    carrier = max_mobility * min_mobility / spread * np.exp(-0.5 * log_t)

    n_sc = like + unlike + other
    log_sc = _log(n_sc)
    with np.errstate(divide="ignore"):
        inverse_p = (coulomb_weight / coulomb_density * np.exp((2.0 / 3.0) * (log_sc - 3.0 * log_t))
                     + screening_weight * carriers / (screening_density * carrier_mass)
                     * np.exp(-2.0 * log_t))
        log_p = -np.log(inverse_p)  # ln P; +inf with no scatterers and no carriers
    x = np.exp(-r6 * log_p)  # P^-r6
    f = (r1 + (r2 + r3 * ratio) * x) / (1.0 + (r4 + r5 * ratio) * x)
    log_tm = log_t - np.log(carrier_mass)
    log_k = (s4 + s7) * s6 * log_tm
    log_u = np.maximum(s4 * log_tm + log_p, _log_u_minimum(log_k, s1, s2, s3, s5, s6))
    with np.errstate(over="ignore"):
        u = np.exp(log_u)
        g = 1.0 - s1 * np.exp(-s3 * np.log(s2 + u)) + s5 * np.exp(log_k - s6 * log_u)
    n_eff = like + g * unlike + other / f
    # 1/mu_DAj, written so that no scatterers and no carriers give 0 (not 0/0)
    scale = impurity * np.exp((1.0 - alpha) * log_sc + alpha * np.log(reference_density)) \
        + carrier * carriers
    inverse_da = np.divide(n_eff, scale, out=np.zeros(np.broadcast(n_eff, scale).shape),
                           where=scale > 0)
    return 1.0 / (1.0 / lattice + inverse_da)
