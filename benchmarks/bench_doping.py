"""Benchmarks of the doping axis (run on demand; not part of the tests).

    python benchmarks/bench_doping.py [--points 1000000] [--sample 1000]

1. Equilibrium on N random (T, Nd, Na) points through the public API against a
   per-point ``scipy.optimize.brentq`` loop of the same equations (linear-space
   neutrality, same Fermi-Dirac integrals, same narrowing made self-consistent by
   the same fixed point), timed on a sample and scaled; the answers are compared
   on the sample (relative difference of n and p).
2. Schenk's narrowing on N points through the public API (n and p given) against
   the same equations written in the benchmark as one numpy expression.

Prints the figures; says whether the OpenBLAS variables were set (OPENBLAS_CORETYPE,
OPENBLAS_L2_SIZE: on some processors they slow a current numpy).
"""

from __future__ import annotations

import argparse
import os
import time
import warnings

import numpy as np
from scipy.optimize import brentq

import matprops
from matprops.kernels.constants import BOLTZMANN_EV
from matprops.kernels.fermi_dirac import fd_half


def timed(function, repeat=3):
    best = np.inf
    for _ in range(repeat):
        start = time.perf_counter()
        result = function()
        best = min(best, time.perf_counter() - start)
    return best, result


def random_points(count, seed=1):
    rng = np.random.default_rng(seed)
    return (
        rng.uniform(250.0, 450.0, count),
        10 ** rng.uniform(13, 20, count),
        10 ** rng.uniform(13, 20, count),
    )


def _charge(eta, gap, nc, nv, levels):
    """Net positive charge density at the reduced Fermi level eta (linear space)."""
    nd, w_d, b_d, g_d, na, w_a, b_a, g_a = levels
    eta_v = -eta - gap
    ionised_d = nd * (1 - b_d / (1 + np.exp(-eta - w_d) / g_d))
    ionised_a = na * (1 - b_a / (1 + np.exp(-eta_v - w_a) / g_a))
    return nv * float(fd_half(eta_v)) + ionised_d - nc * float(fd_half(eta)) - ionised_a


def brentq_equilibrium(si, T, Nd, Na):
    """The same equations, one point at a time, with scalar root finding."""
    bound = si._carriers()
    narrowing = bound.narrowing
    donor = bound.ionisation.select("phosphorus")
    acceptor = bound.ionisation.select("boron")
    g_d = donor.coefficients["degeneracy"].kernel_value
    g_a = acceptor.coefficients["degeneracy"].kernel_value
    n_out, p_out = np.empty(T.size), np.empty(T.size)
    for i, (t, nd, na) in enumerate(zip(T, Nd, Na, strict=True)):
        kt = BOLTZMANN_EV * t
        nc, nv = (float(x) for x in bound.dos(temperature=t))
        ni = float(bound.ni(temperature=t))
        e_d, b_d = (float(x) for x in donor(dopant_density=nd))
        e_a, b_a = (float(x) for x in acceptor(dopant_density=na))
        gap0 = np.log(nc * nv / ni**2)
        n, p = max(nd - na, 0.0) + ni, max(na - nd, 0.0) + ni
        shift = 0.0
        for _ in range(200):
            dec, dev = narrowing(
                temperature=t,
                donor_density=nd,
                acceptor_density=na,
                electron_density=n,
                hole_density=p,
            )
            new_shift = float(dec + dev)
            if abs(new_shift - shift) / kt <= 1e-10 and _ > 0:
                break
            shift = new_shift
            gap = gap0 - shift / kt
            levels = (nd, e_d / kt, b_d, g_d, na, e_a / kt, b_a, g_a)
            eta = brentq(
                _charge,
                -gap - 60.0,
                60.0,
                args=(gap, nc, nv, levels),
                xtol=1e-14,
                rtol=1e-15,
                maxiter=500,
            )
            n, p = nc * float(fd_half(eta)), nv * float(fd_half(-eta - gap))
        n_out[i], p_out[i] = n, p
    return n_out, p_out


def schenk_expression(T, Nd, Na, n, p, c):
    """Schenk (1998), both bands, as one numpy expression (dopant-screened ionic part)."""
    ry, a3 = c["exciton_rydberg"], c["exciton_radius"] ** 3
    t = BOLTZMANN_EV * T / ry
    n_, p_, nd, na = n * a3, p * a3, Nd * a3, Na * a3
    me, mh = c["electron_mass"], c["hole_mass"]
    ae, ah = mh / (me + mh), me / (me + mh)
    ns, n_p, N, Np = n_ + p_, ae * n_ + ah * p_, nd + na, ae * nd + ah * na
    U = N**2 / t**3
    total = 0.0
    for na_, g, al, s in (
        (n_, c["electron_degeneracy"], ae, "e"),
        (p_, c["hole_degeneracy"], ah, "h"),
    ):
        b, cc, d, pa = c[f"b_{s}"], c[f"c_{s}"], c[f"d_{s}"], c[f"p_{s}"]
        h, j, k, q = c[f"h_{s}"], c[f"j_{s}"], c[f"k_{s}"], c[f"q_{s}"]
        xc = -(
            (4 * np.pi) ** 3
            * ns**2
            * ((48 * na_ / (np.pi * g)) ** (1 / 3) + cc * np.log(1 + d * n_p**pa))
            + (8 * np.pi * al / g) * na_ * t**2
            + np.sqrt(8 * np.pi * ns) * t**2.5
        ) / ((4 * np.pi) ** 3 * ns**2 + t**3 + b * np.sqrt(ns) * t**2 + 40 * ns**1.5 * t)
        ionic = (
            -N
            * (1 + U)
            / (
                np.sqrt(t * N / (2 * np.pi)) * (1 + h * np.log(1 + np.sqrt(N) / t))
                + j * U * Np**0.75 * (1 + k * Np**q)
            )
        )
        total = total - (xc + ionic) * ry
    return total


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--points", type=int, default=1_000_000)
    parser.add_argument("--sample", type=int, default=1000)
    args = parser.parse_args()
    blas = {k: os.environ[k] for k in ("OPENBLAS_CORETYPE", "OPENBLAS_L2_SIZE") if k in os.environ}
    print(f"numpy {np.__version__}; OpenBLAS variables: {blas or 'not set'}")
    warnings.simplefilter("ignore", matprops.ValidityWarning)
    si = matprops.silicon()

    T, Nd, Na = random_points(args.points)
    si.equilibrium(T[:10], Nd=Nd[:10], Na=Na[:10])  # warm up
    seconds, state = timed(lambda: si.equilibrium(T, Nd=Nd, Na=Na), repeat=1)
    print(
        f"equilibrium, {args.points:.0e} points, Fermi-Dirac + Schenk (public API): "
        f"{seconds:.2f} s ({seconds / args.points * 1e9:.0f} ns/point)"
    )
    s = slice(0, args.sample)
    loop_seconds, (n_ref, p_ref) = timed(
        lambda: brentq_equilibrium(si, T[s], Nd[s], Na[s]), repeat=1
    )
    per_point = loop_seconds / args.sample
    print(
        f"per-point brentq loop: {per_point * 1e6:.0f} us/point -> "
        f"{per_point * args.points:.0f} s scaled to {args.points:.0e} points; "
        f"speed-up {per_point * args.points / seconds:.0f}x"
    )
    worst = max(
        np.max(np.abs(state.n.m_as("cm^-3")[s] / n_ref - 1)),
        np.max(np.abs(state.p.m_as("cm^-3")[s] / p_ref - 1)),
    )
    print(f"largest relative difference of n, p on the sample: {worst:.2g}")

    n = 10 ** np.random.default_rng(2).uniform(10, 20, args.points)
    p = 10 ** np.random.default_rng(3).uniform(10, 20, args.points)
    coefficients = {k: c.kernel_value for k, c in si.model("gap_narrowing").coefficients.items()}
    api, value = timed(lambda: si.gap_narrowing(T, Na=Na, Nd=Nd, n=n, p=p))
    inline, expected = timed(lambda: schenk_expression(T, Nd, Na, n, p, coefficients))
    kernel = si.kernel("gap_narrowing")
    bound, _ = timed(
        lambda: kernel(
            temperature=T, donor_density=Nd, acceptor_density=Na, electron_density=n, hole_density=p
        )
    )
    agree = np.max(np.abs(value.m_as("eV") / expected - 1))
    print(
        f"Schenk narrowing, {args.points:.0e} points: public API {api:.3f} s, bound "
        f"kernel {bound:.3f} s, one numpy expression {inline:.3f} s -> API/expression "
        f"{api / inline:.2f}x, kernel/expression {bound / inline:.2f}x "
        f"(agree to {agree:.1g})"
    )


if __name__ == "__main__":
    main()
