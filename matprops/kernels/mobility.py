"""Low-field carrier mobility in doped silicon, in cm^2/(V s).

Every kernel takes the temperature (K) and the donor and acceptor densities
(cm^-3) — total or ionised, as the model file's ``dopant_densities`` says — and
returns the mobility of the carrier its coefficient set describes. Klaassen's
unified model also takes the free-carrier densities n and p (cm^-3).

Powers are written ``exp(a log x)`` (half the cost of a non-integer ``**`` in
numpy); models whose density term is ``(N / N_r)^a`` treat N = 0 as the lattice
limit.

Every kernel is written against the array API standard (see :mod:`._xp`) and has
analytic derivatives (``kernel.derivatives``: the mobility and its partials with
respect to each input, cm^2/(V s) per input unit).
"""

import functools

import numpy as np

from ._coefficients import is_dual
from ._spec import derivatives_of, kernel
from ._xp import asfloat, errstate, interp, namespace, zeros_like

__all__ = [
    "arora",
    "caughey_thomas",
    "g_minimum",
    "klaassen",
    "masetti",
    "masetti_lattice_temperature",
]

_DOPING = {"temperature": "K", "donor_density": "cm^-3", "acceptor_density": "cm^-3"}
_MOBILITY = "cm^2/(V*s)"


def _log(x, xp=np):
    with errstate(xp, divide="ignore"):
        return xp.log(x)


def _flog(value):
    """numpy's log of a coefficient, as a Python float (computed once; a coefficient
    under differentiation: its log)."""
    return np.log(value) if is_dual(value) else _cached_log(value)


@functools.lru_cache(maxsize=256)
def _cached_log(value: float) -> float:
    return float(np.log(value))


def _total(donor_density, acceptor_density, xp=np):
    return asfloat(xp, donor_density) + asfloat(xp, acceptor_density)


def _same_for_both(slope):
    """Partials of a model of N = Nd + Na: the same for both densities."""
    return {"donor_density": slope, "acceptor_density": slope}


# --------------------------------------------------------------------------- Masetti


def _masetti(
    n,
    lattice,
    *,
    min_mobility_1,
    min_mobility_2,
    drop_mobility,
    reference_density,
    alpha,
    drop_density,
    beta,
    cutoff_density,
    xp=np,
    slopes=False,
):
    log_n = _log(n, xp)
    with errstate(xp, divide="ignore", invalid="ignore"):
        cutoff = xp.exp(-cutoff_density / n) if cutoff_density > 0 else zeros_like(xp, n) + 1.0
    fall = 1.0 + xp.exp(alpha * (log_n - _flog(reference_density)))
    drop = 1.0 + xp.exp(beta * (_flog(drop_density) - log_n))
    value = min_mobility_1 * cutoff + (lattice - min_mobility_2) / fall - drop_mobility / drop
    if not slopes:
        return value
    # d/dN of each term; d/dlattice = 1/fall
    with errstate(xp, divide="ignore", invalid="ignore"):
        d_cutoff = cutoff * cutoff_density / (n * n) if cutoff_density > 0 else 0.0
        d_fall = alpha * (fall - 1.0) / n
        d_drop = -beta * (drop - 1.0) / n
        d_n = (
            min_mobility_1 * d_cutoff
            - (lattice - min_mobility_2) * d_fall / (fall * fall)
            + drop_mobility * d_drop / (drop * drop)
        )
    return value, d_n, 1.0 / fall


_MASETTI = {
    "min_mobility_1": _MOBILITY,
    "min_mobility_2": _MOBILITY,
    "drop_mobility": _MOBILITY,
    "max_mobility": _MOBILITY,
    "reference_density": "cm^-3",
    "alpha": "1",
    "drop_density": "cm^-3",
    "beta": "1",
    "cutoff_density": "cm^-3",
}


@kernel(inputs=_DOPING, output=_MOBILITY, coefficients=_MASETTI, array_api=True)
def masetti(
    temperature,
    donor_density,
    acceptor_density,
    *,
    min_mobility_1,
    min_mobility_2,
    drop_mobility,
    max_mobility,
    reference_density,
    alpha,
    drop_density,
    beta,
    cutoff_density,
):
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
    xp = namespace(temperature, donor_density, acceptor_density)
    n = _total(donor_density, acceptor_density, xp)
    shape = np.broadcast_shapes(tuple(asfloat(xp, temperature).shape), tuple(n.shape))
    return xp.broadcast_to(
        _masetti(
            n,
            max_mobility,
            min_mobility_1=min_mobility_1,
            min_mobility_2=min_mobility_2,
            drop_mobility=drop_mobility,
            reference_density=reference_density,
            alpha=alpha,
            drop_density=drop_density,
            beta=beta,
            cutoff_density=cutoff_density,
            xp=xp,
        ),
        shape,
    )


@derivatives_of(masetti)
def masetti_derivatives(
    temperature,
    donor_density,
    acceptor_density,
    *,
    min_mobility_1,
    min_mobility_2,
    drop_mobility,
    max_mobility,
    reference_density,
    alpha,
    drop_density,
    beta,
    cutoff_density,
):
    """The mobility and ``dmu/dN`` (the same for Nd and Na); T does not enter."""
    xp = namespace(temperature, donor_density, acceptor_density)
    t = asfloat(xp, temperature)
    n = _total(donor_density, acceptor_density, xp)
    shape = np.broadcast_shapes(tuple(t.shape), tuple(n.shape))
    value, d_n, _ = _masetti(
        n,
        max_mobility,
        min_mobility_1=min_mobility_1,
        min_mobility_2=min_mobility_2,
        drop_mobility=drop_mobility,
        reference_density=reference_density,
        alpha=alpha,
        drop_density=drop_density,
        beta=beta,
        cutoff_density=cutoff_density,
        xp=xp,
        slopes=True,
    )
    d_n = xp.broadcast_to(d_n, shape)
    return (
        xp.broadcast_to(value, shape),
        {"temperature": zeros_like(xp, d_n), **_same_for_both(d_n)},
    )


@kernel(
    inputs=_DOPING,
    output=_MOBILITY,
    coefficients={**_MASETTI, "lattice_exponent": "1", "reference_temperature": "K"},
    array_api=True,
)
def masetti_lattice_temperature(
    temperature,
    donor_density,
    acceptor_density,
    *,
    min_mobility_1,
    min_mobility_2,
    drop_mobility,
    max_mobility,
    reference_density,
    alpha,
    drop_density,
    beta,
    cutoff_density,
    lattice_exponent,
    reference_temperature,
):
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
    xp = namespace(temperature, donor_density, acceptor_density)
    n = _total(donor_density, acceptor_density, xp)
    t = asfloat(xp, temperature)
    lattice = max_mobility * xp.exp(-lattice_exponent * xp.log(t / reference_temperature))
    return _masetti(
        n,
        lattice,
        min_mobility_1=min_mobility_1,
        min_mobility_2=min_mobility_2,
        drop_mobility=drop_mobility,
        reference_density=reference_density,
        alpha=alpha,
        drop_density=drop_density,
        beta=beta,
        cutoff_density=cutoff_density,
        xp=xp,
    )


@derivatives_of(masetti_lattice_temperature)
def masetti_lattice_temperature_derivatives(
    temperature,
    donor_density,
    acceptor_density,
    *,
    min_mobility_1,
    min_mobility_2,
    drop_mobility,
    max_mobility,
    reference_density,
    alpha,
    drop_density,
    beta,
    cutoff_density,
    lattice_exponent,
    reference_temperature,
):
    """The mobility, ``dmu/dN`` and ``dmu/dT = (d mu_L/dT) / (1 + (N/C_r)^alpha)`` with
    ``d mu_L/dT = -gamma mu_L / T``."""
    xp = namespace(temperature, donor_density, acceptor_density)
    n = _total(donor_density, acceptor_density, xp)
    t = asfloat(xp, temperature)
    lattice = max_mobility * xp.exp(-lattice_exponent * xp.log(t / reference_temperature))
    value, d_n, d_lattice = _masetti(
        n,
        lattice,
        min_mobility_1=min_mobility_1,
        min_mobility_2=min_mobility_2,
        drop_mobility=drop_mobility,
        reference_density=reference_density,
        alpha=alpha,
        drop_density=drop_density,
        beta=beta,
        cutoff_density=cutoff_density,
        xp=xp,
        slopes=True,
    )
    shape = tuple(value.shape)
    d_t = xp.broadcast_to(-lattice_exponent * lattice / t * d_lattice, shape)
    return value, {"temperature": d_t, **_same_for_both(xp.broadcast_to(d_n, shape))}


# --------------------------------------------------------------------------- Arora


@kernel(
    inputs=_DOPING,
    output=_MOBILITY,
    coefficients={
        "min_mobility": _MOBILITY,
        "min_exponent": "1",
        "doping_mobility": _MOBILITY,
        "doping_exponent": "1",
        "reference_density": "cm^-3",
        "reference_exponent": "1",
        "alpha": "1",
        "alpha_exponent": "1",
        "reference_temperature": "K",
        "doping_reference_temperature": "K",
    },
    array_api=True,
)
def arora(
    temperature,
    donor_density,
    acceptor_density,
    *,
    min_mobility,
    min_exponent,
    doping_mobility,
    doping_exponent,
    reference_density,
    reference_exponent,
    alpha,
    alpha_exponent,
    reference_temperature,
    doping_reference_temperature,
):
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
    return _arora(
        temperature,
        donor_density,
        acceptor_density,
        min_mobility,
        min_exponent,
        doping_mobility,
        doping_exponent,
        reference_density,
        reference_exponent,
        alpha,
        alpha_exponent,
        reference_temperature,
        doping_reference_temperature,
    )


def _arora(
    temperature,
    donor_density,
    acceptor_density,
    min_mobility,
    min_exponent,
    doping_mobility,
    doping_exponent,
    reference_density,
    reference_exponent,
    alpha,
    alpha_exponent,
    reference_temperature,
    doping_reference_temperature,
    slopes=False,
):
    xp = namespace(temperature, donor_density, acceptor_density)
    t = asfloat(xp, temperature)
    log_t = xp.log(t / reference_temperature)
    total = _total(donor_density, acceptor_density, xp)
    log_n = _log(total, xp)
    power = alpha * xp.exp(alpha_exponent * log_t)
    ratio = xp.exp(power * (log_n - _flog(reference_density) - reference_exponent * log_t))
    amplitude = doping_mobility * xp.exp(doping_exponent * xp.log(t / doping_reference_temperature))
    lattice = min_mobility * xp.exp(min_exponent * log_t)
    value = lattice + amplitude / (1.0 + ratio)
    if not slopes:
        return value
    with errstate(xp, divide="ignore", invalid="ignore"):
        fraction = 1.0 / (1.0 + ratio)
        d_n = -amplitude * ratio * power * fraction * fraction / total
        d_ratio = (
            ratio
            * (
                alpha_exponent
                * power
                * (log_n - _flog(reference_density) - reference_exponent * log_t)
                - power * reference_exponent
            )
            / t
        )
        d_t = (
            min_exponent * lattice + doping_exponent * amplitude * fraction
        ) / t - amplitude * d_ratio * fraction * fraction
    shape = tuple(value.shape)
    return value, {
        "temperature": xp.broadcast_to(d_t, shape),
        **_same_for_both(xp.broadcast_to(d_n, shape)),
    }


@derivatives_of(arora)
def arora_derivatives(
    temperature,
    donor_density,
    acceptor_density,
    *,
    min_mobility,
    min_exponent,
    doping_mobility,
    doping_exponent,
    reference_density,
    reference_exponent,
    alpha,
    alpha_exponent,
    reference_temperature,
    doping_reference_temperature,
):
    """The mobility and its partials (chain rule through ``Tn^a1``, ``(T/T0)^a2``, the
    exponent ``alpha Tn^a4`` and ``N / (N_ref Tn^a3)``)."""
    return _arora(
        temperature,
        donor_density,
        acceptor_density,
        min_mobility,
        min_exponent,
        doping_mobility,
        doping_exponent,
        reference_density,
        reference_exponent,
        alpha,
        alpha_exponent,
        reference_temperature,
        doping_reference_temperature,
        slopes=True,
    )


# --------------------------------------------------------------------------- Caughey-Thomas


@kernel(
    inputs=_DOPING,
    output=_MOBILITY,
    coefficients={
        "min_mobility": _MOBILITY,
        "max_mobility": _MOBILITY,
        "reference_density": "cm^-3",
        "alpha": "1",
    },
    array_api=True,
)
def caughey_thomas(
    temperature,
    donor_density,
    acceptor_density,
    *,
    min_mobility,
    max_mobility,
    reference_density,
    alpha,
):
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
    xp = namespace(temperature, donor_density, acceptor_density)
    n = _total(donor_density, acceptor_density, xp)
    shape = np.broadcast_shapes(tuple(asfloat(xp, temperature).shape), tuple(n.shape))
    ratio = xp.exp(alpha * (_log(n, xp) - _flog(reference_density)))
    return xp.broadcast_to(min_mobility + (max_mobility - min_mobility) / (1.0 + ratio), shape)


@derivatives_of(caughey_thomas)
def caughey_thomas_derivatives(
    temperature,
    donor_density,
    acceptor_density,
    *,
    min_mobility,
    max_mobility,
    reference_density,
    alpha,
):
    """The mobility and ``dmu/dN = -(mu_max - mu_min) alpha r / (N (1 + r)^2)``,
    ``r = (N/N_ref)^alpha`` (the same for Nd and Na); T does not enter."""
    xp = namespace(temperature, donor_density, acceptor_density)
    n = _total(donor_density, acceptor_density, xp)
    shape = np.broadcast_shapes(tuple(asfloat(xp, temperature).shape), tuple(n.shape))
    ratio = xp.exp(alpha * (_log(n, xp) - _flog(reference_density)))
    fraction = 1.0 / (1.0 + ratio)
    with errstate(xp, divide="ignore", invalid="ignore"):
        d_n = xp.broadcast_to(
            -(max_mobility - min_mobility) * alpha * ratio * fraction * fraction / n, shape
        )
    return (
        xp.broadcast_to(min_mobility + (max_mobility - min_mobility) / (1.0 + ratio), shape),
        {"temperature": zeros_like(xp, d_n), **_same_for_both(d_n)},
    )


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


def _log_u_minimum(log_k, s1, s2, s3, s5, s6, xp=np):
    log_l, log_u = _g_minimum_table(float(s1), float(s2), float(s3), float(s5), float(s6))
    return interp(xp, _flog(s5 * s6) + log_k, log_l, log_u)


def _log_u_minimum_slope(log_k, s1, s2, s3, s5, s6, xp=np):
    """d(log u_min)/d(log k) of :func:`_log_u_minimum` (a piecewise-linear
    interpolation: its secant slope on each interval, 0 beyond the table)."""
    log_l, log_u = _g_minimum_table(float(s1), float(s2), float(s3), float(s5), float(s6))
    slopes = np.append(np.diff(log_u) / np.diff(log_l), 0.0)
    x = _flog(s5 * s6) + log_k
    # the interval is found on the uniform log-u grid from the interpolated value
    step = float(log_u[1] - log_u[0])
    index = xp.floor((interp(xp, x, log_l, log_u) - float(log_u[0])) / step)
    index = xp.clip(index, 0.0, float(log_u.size - 2))
    inside = (x >= float(log_l[0])) & (x <= float(log_l[-1]))
    if xp is np:
        return np.where(inside, slopes[index.astype(np.intp)], 0.0)
    flat = xp.reshape(xp.astype(index, xp.int64), (-1,))
    table = xp.asarray(slopes)
    return xp.where(inside, xp.reshape(xp.take(table, flat), index.shape), zeros_like(xp, x))


def g_minimum(temperature, carrier_mass, *, s1, s2, s3, s4, s5, s6, s7):
    """Where Klaassen's G(P) has its minimum, P_min, for a carrier of mass ``m`` (in m0).

    Used to clamp G below its minimum (G(P) = G(P_min) for P < P_min); P_min is
    about 0.3246 for electrons (m = 1) at 300 K.
    """
    log_tm = np.log(np.asarray(temperature, dtype=float) / 300.0 / carrier_mass)
    log_u = _log_u_minimum((s4 + s7) * s6 * log_tm, s1, s2, s3, s5, s6)
    return np.exp(log_u - s4 * log_tm)


@kernel(
    inputs={**_DOPING, "electron_density": "cm^-3", "hole_density": "cm^-3"},
    output=_MOBILITY,
    coefficients={
        "charge": "1",
        "max_mobility": _MOBILITY,
        "min_mobility": _MOBILITY,
        "reference_density": "cm^-3",
        "alpha": "1",
        "lattice_exponent": "1",
        "carrier_mass": "1",
        "other_carrier_mass": "1",
        "donor_clustering": "1",
        "donor_clustering_density": "cm^-3",
        "acceptor_clustering": "1",
        "acceptor_clustering_density": "cm^-3",
        "coulomb_weight": "1",
        "coulomb_density": "cm^-2",
        "screening_weight": "1",
        "screening_density": "cm^-3",
        "r1": "1",
        "r2": "1",
        "r3": "1",
        "r4": "1",
        "r5": "1",
        "r6": "1",
        "s1": "1",
        "s2": "1",
        "s3": "1",
        "s4": "1",
        "s5": "1",
        "s6": "1",
        "s7": "1",
    },
    array_api=True,
)
def klaassen(
    temperature,
    donor_density,
    acceptor_density,
    electron_density,
    hole_density,
    *,
    charge,
    max_mobility,
    min_mobility,
    reference_density,
    alpha,
    lattice_exponent,
    carrier_mass,
    other_carrier_mass,
    donor_clustering,
    donor_clustering_density,
    acceptor_clustering,
    acceptor_clustering_density,
    coulomb_weight,
    coulomb_density,
    screening_weight,
    screening_density,
    r1,
    r2,
    r3,
    r4,
    r5,
    r6,
    s1,
    s2,
    s3,
    s4,
    s5,
    s6,
    s7,
):
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
    return _klaassen(
        temperature,
        donor_density,
        acceptor_density,
        electron_density,
        hole_density,
        charge=charge,
        max_mobility=max_mobility,
        min_mobility=min_mobility,
        reference_density=reference_density,
        alpha=alpha,
        lattice_exponent=lattice_exponent,
        carrier_mass=carrier_mass,
        other_carrier_mass=other_carrier_mass,
        donor_clustering=donor_clustering,
        donor_clustering_density=donor_clustering_density,
        acceptor_clustering=acceptor_clustering,
        acceptor_clustering_density=acceptor_clustering_density,
        coulomb_weight=coulomb_weight,
        coulomb_density=coulomb_density,
        screening_weight=screening_weight,
        screening_density=screening_density,
        r=(r1, r2, r3, r4, r5, r6),
        s=(s1, s2, s3, s4, s5, s6, s7),
    )


def _klaassen(
    temperature,
    donor_density,
    acceptor_density,
    electron_density,
    hole_density,
    *,
    charge,
    max_mobility,
    min_mobility,
    reference_density,
    alpha,
    lattice_exponent,
    carrier_mass,
    other_carrier_mass,
    donor_clustering,
    donor_clustering_density,
    acceptor_clustering,
    acceptor_clustering_density,
    coulomb_weight,
    coulomb_density,
    screening_weight,
    screening_density,
    r,
    s,
    slopes=False,
):
    """Klaassen's mobility; with ``slopes`` also its partials (see
    :func:`klaassen_derivatives`)."""
    r1, r2, r3, r4, r5, r6 = r
    s1, s2, s3, s4, s5, s6, s7 = s
    xp = namespace(temperature, donor_density, acceptor_density, electron_density, hole_density)
    t = asfloat(xp, temperature)
    nd0 = asfloat(xp, donor_density)
    na0 = asfloat(xp, acceptor_density)
    n = asfloat(xp, electron_density)
    p = asfloat(xp, hole_density)
    log_t = xp.log(t / 300.0)
    # clustering: N [1 + N^2 / (c N^2 + N_ref^2)], finite at N = 0
    nd2, na2 = nd0 * nd0, na0 * na0
    nd_bottom = donor_clustering * nd2 + donor_clustering_density**2
    na_bottom = acceptor_clustering * na2 + acceptor_clustering_density**2
    nd = nd0 + nd0 * nd2 / nd_bottom
    na = na0 + na0 * na2 / na_bottom
    like, unlike, other = (nd, na, p) if charge < 0 else (na, nd, n)
    carriers = n + p
    ratio = carrier_mass / other_carrier_mass

    lattice = max_mobility * xp.exp(-lattice_exponent * log_t)
    spread = max_mobility - min_mobility
    impurity = max_mobility * max_mobility / spread * xp.exp((3.0 * alpha - 1.5) * log_t)
    carrier = max_mobility * min_mobility / spread * xp.exp(-0.5 * log_t)

    n_sc = like + unlike + other
    log_sc = _log(n_sc, xp)
    with errstate(xp, divide="ignore"):
        coulomb = coulomb_weight / coulomb_density * xp.exp((2.0 / 3.0) * (log_sc - 3.0 * log_t))
        screening = (
            screening_weight * carriers / (screening_density * carrier_mass) * xp.exp(-2.0 * log_t)
        )
        inverse_p = coulomb + screening
        log_p = -xp.log(inverse_p)  # ln P; +inf with no scatterers and no carriers
    x = xp.exp(-r6 * log_p)  # P^-r6
    f = (r1 + (r2 + r3 * ratio) * x) / (1.0 + (r4 + r5 * ratio) * x)
    log_tm = log_t - _flog(carrier_mass)
    log_k = (s4 + s7) * s6 * log_tm
    unclamped = s4 * log_tm + log_p
    minimum = _log_u_minimum(log_k, s1, s2, s3, s5, s6, xp)
    log_u = xp.maximum(unclamped, minimum)
    with errstate(xp, over="ignore"):
        u = xp.exp(log_u)
        hump = s1 * xp.exp(-s3 * xp.log(s2 + u))
        tail = s5 * xp.exp(log_k - s6 * log_u)
        g = 1.0 - hump + tail
    n_eff = like + g * unlike + other / f
    # 1/mu_DAj, written so that no scatterers and no carriers give 0 (not 0/0)
    impurity_term = impurity * xp.exp((1.0 - alpha) * log_sc + alpha * _flog(reference_density))
    scale = impurity_term + carrier * carriers
    if xp is np:
        inverse_da = np.divide(
            n_eff, scale, out=np.zeros(np.broadcast(n_eff, scale).shape), where=scale > 0
        )
    else:
        positive = scale > 0
        inverse_da = xp.where(
            positive,
            n_eff / xp.where(positive, scale, zeros_like(xp, scale) + 1.0),
            zeros_like(xp, scale),
        )
    mu = 1.0 / (1.0 / lattice + inverse_da)
    if not slopes:
        return mu

    # ---- partials: through the scatterer sum N_sc, the carrier sum n + p, the other
    # carrier, ln P (via G and F) and T; then to Nd, Na (clustering), n, p
    with errstate(xp, divide="ignore", invalid="ignore"):
        mu2 = mu * mu
        rising = r4 + r5 * ratio
        d_f_log_p = ((r2 + r3 * ratio) - rising * r1) / ((1.0 + rising * x) ** 2) * (-r6 * x)
        d_g_log_u = s3 * hump * u / (s2 + u) - s6 * tail
        free = unclamped >= minimum  # the clamp passes ln P through
        other_f2 = other / (f * f)
        d_neff_log_p = xp.where(free, unlike * d_g_log_u, zeros_like(xp, mu)) - other_f2 * d_f_log_p
        d_log_p_sc = -(2.0 / 3.0) * coulomb / (n_sc * inverse_p)
        d_log_p_carriers = (
            -(screening_weight / (screening_density * carrier_mass) * xp.exp(-2.0 * log_t))
            / inverse_p
        )
        d_scale_sc = (1.0 - alpha) * impurity_term / n_sc
        e_sc = (d_neff_log_p * d_log_p_sc - inverse_da * d_scale_sc) / scale
        d_like = -mu2 * (1.0 / scale + e_sc)
        d_unlike = -mu2 * (g / scale + e_sc)
        d_other = -mu2 * (1.0 / (f * scale) + e_sc)
        d_carriers = -mu2 * (d_neff_log_p * d_log_p_carriers - inverse_da * carrier) / scale
        # temperature (ln P rises as 2 ln T: both screening terms fall as T^-2)
        d_log_p_t = 2.0 / t
        d_log_k_t = (s4 + s7) * s6 / t
        slope = _log_u_minimum_slope(log_k, s1, s2, s3, s5, s6, xp)
        d_log_u_t = xp.where(free, s4 / t + d_log_p_t, slope * d_log_k_t)
        d_neff_t = (
            unlike * (d_g_log_u * d_log_u_t + tail * d_log_k_t) - other_f2 * d_f_log_p * d_log_p_t
        )
        d_scale_t = (impurity_term * (3.0 * alpha - 1.5) - 0.5 * carrier * carriers) / t
        d_t = -mu2 * (
            lattice_exponent / (t * lattice) + (d_neff_t - inverse_da * d_scale_t) / scale
        )
        d_nd = 1.0 + nd2 * (donor_clustering * nd2 + 3.0 * donor_clustering_density**2) / (
            nd_bottom * nd_bottom
        )
        d_na = 1.0 + na2 * (acceptor_clustering * na2 + 3.0 * acceptor_clustering_density**2) / (
            na_bottom * na_bottom
        )
    if charge < 0:
        partials = {
            "donor_density": d_like * d_nd,
            "acceptor_density": d_unlike * d_na,
            "electron_density": d_carriers,
            "hole_density": d_carriers + d_other,
        }
    else:
        partials = {
            "donor_density": d_unlike * d_nd,
            "acceptor_density": d_like * d_na,
            "electron_density": d_carriers + d_other,
            "hole_density": d_carriers,
        }
    shape = tuple(mu.shape)
    partials["temperature"] = d_t
    return mu, {k: xp.broadcast_to(v, shape) for k, v in partials.items()}


@derivatives_of(klaassen)
def klaassen_derivatives(
    temperature,
    donor_density,
    acceptor_density,
    electron_density,
    hole_density,
    *,
    charge,
    max_mobility,
    min_mobility,
    reference_density,
    alpha,
    lattice_exponent,
    carrier_mass,
    other_carrier_mass,
    donor_clustering,
    donor_clustering_density,
    acceptor_clustering,
    acceptor_clustering_density,
    coulomb_weight,
    coulomb_density,
    screening_weight,
    screening_density,
    r1,
    r2,
    r3,
    r4,
    r5,
    r6,
    s1,
    s2,
    s3,
    s4,
    s5,
    s6,
    s7,
):
    """Klaassen's mobility and its partials with respect to T, Nd, Na, n and p.

    ``1/mu = 1/mu_L + N_sc,eff / scale`` is differentiated through the scatterer sum,
    the carrier sum, the other carrier's density, ln P (in G, unless G is held at its
    minimum, and in F), the temperature powers, and the clustering factors. Where no
    scatterer and no carrier is present the partials are not defined (NaN).
    """
    return _klaassen(
        temperature,
        donor_density,
        acceptor_density,
        electron_density,
        hole_density,
        charge=charge,
        max_mobility=max_mobility,
        min_mobility=min_mobility,
        reference_density=reference_density,
        alpha=alpha,
        lattice_exponent=lattice_exponent,
        carrier_mass=carrier_mass,
        other_carrier_mass=other_carrier_mass,
        donor_clustering=donor_clustering,
        donor_clustering_density=donor_clustering_density,
        acceptor_clustering=acceptor_clustering,
        acceptor_clustering_density=acceptor_clustering_density,
        coulomb_weight=coulomb_weight,
        coulomb_density=coulomb_density,
        screening_weight=screening_weight,
        screening_density=screening_density,
        r=(r1, r2, r3, r4, r5, r6),
        s=(s1, s2, s3, s4, s5, s6, s7),
        slopes=True,
    )
