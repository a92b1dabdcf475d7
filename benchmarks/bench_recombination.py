"""Benchmark (run on demand, not a test): intrinsic lifetime through the API against numpy.

    python benchmarks/bench_recombination.py [--points 1000000] [--scattered]

Baseline: Richter et al.'s intrinsic lifetime (the release default) written below as one
numpy expression. The API returns the same numbers (checked first, to 1e-12).

Three cases, all on --points (T, N, dn) points:

1. equilibrium densities given (``n0=``, ``p0=``): the API does exactly what the
   expression does plus units, input checks and validity checks. Target: within 1.5x.
2. a grid, 10 temperatures x 100 donor densities x (points/1000) excess densities,
   given as Nd: the API also solves the equilibrium, once per (T, Nd) point (1000
   solves); the baseline gets those n0, p0 for free.
3. (--scattered) every point with its own T and Nd: the API solves 1e6 equilibria
   (incomplete ionisation, the release's statistics and narrowing, self-consistent):
   that solve, not the lifetime formula, sets the time.

Reports whether OPENBLAS_CORETYPE / OPENBLAS_L2_SIZE were set (on some processors
they slow a current numpy).
"""

import argparse
import os
import timeit
import warnings

import numpy as np


def inline_richter(n0, p0, dn):
    """Richter et al. 2012 (B_rel = 1) as one expression; densities in cm^-3, s."""
    return 1.0 / (
        (n0 + p0 + dn)
        * (
            2.5e-31 * (1 + 13 * (1 - np.tanh((n0 / 3.3e17) ** 0.66))) * n0
            + 8.5e-32 * (1 + 7.5 * (1 - np.tanh((p0 / 7.0e17) ** 0.63))) * p0
            + 3.0e-29 * dn**0.92
            + 4.73e-15
        )
    )


def best(stmt, number=3, repeat=5):
    return min(timeit.repeat(stmt, number=number, repeat=repeat)) / number


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--points", type=int, default=1_000_000)
    parser.add_argument(
        "--scattered",
        action="store_true",
        help="also time 1e6 distinct (T, Nd) points (one solve each)",
    )
    args = parser.parse_args()
    n = args.points

    import matprops

    warnings.simplefilter("ignore", matprops.ValidityWarning)
    si = matprops.silicon()
    rng = np.random.default_rng(1)
    blas = {k: os.environ[k] for k in ("OPENBLAS_CORETYPE", "OPENBLAS_L2_SIZE") if k in os.environ}
    print(
        f"{n:.0e} points, numpy {np.__version__}, best of 5; release "
        f"{si.release.id}, intrinsic_lifetime={si.models['intrinsic_lifetime']}, "
        f"statistics of {si.models['gap_narrowing']}; OpenBLAS variables: "
        f"{blas or 'not set'}"
    )

    # 1. equilibrium densities given
    t = rng.uniform(295.0, 305.0, n)
    n0 = 10.0 ** rng.uniform(13, 19, n)
    p0 = 9.67e9**2 / n0
    dn = 10.0 ** rng.uniform(10, 17, n)
    api = si.intrinsic_lifetime(t, n0=n0, p0=p0, excess=dn).m_as("s")
    np.testing.assert_allclose(api, inline_richter(n0, p0, dn), rtol=1e-12)
    a = best(lambda: si.intrinsic_lifetime(t, n0=n0, p0=p0, excess=dn))
    b = best(lambda: inline_richter(n0, p0, dn))
    kernel = si.kernel("intrinsic_lifetime")
    k = best(
        lambda: kernel(
            temperature=t,
            equilibrium_electron_density=n0,
            equilibrium_hole_density=p0,
            excess_density=dn,
        )
    )
    print(
        f"1. n0, p0 given:      API {a * 1e3:8.1f} ms   one numpy expression "
        f"{b * 1e3:7.1f} ms   ratio {a / b:.2f} (target <= 1.5); bound kernel "
        f"{k * 1e3:.1f} ms"
    )

    # 2. a grid given as Nd: 1000 equilibrium solves shared by the excess densities
    temperatures = np.linspace(296.0, 304.0, 10)[:, None, None]
    donors = np.logspace(13, 19, 100)[None, :, None]
    excess = np.logspace(10, 17, max(n // 1000, 1))[None, None, :]
    state = si.equilibrium(temperatures[..., 0], Nd=donors[..., 0])
    grid_n0 = state.n.m_as("cm^-3")[..., None]
    grid_p0 = state.p.m_as("cm^-3")[..., None]
    api = si.intrinsic_lifetime(temperatures, Nd=donors, excess=excess).m_as("s")
    np.testing.assert_allclose(api, inline_richter(grid_n0, grid_p0, excess), rtol=1e-12)
    a = best(lambda: si.intrinsic_lifetime(temperatures, Nd=donors, excess=excess))
    b = best(lambda: inline_richter(grid_n0, grid_p0, excess))
    solve = best(lambda: si.equilibrium(temperatures[..., 0], Nd=donors[..., 0]))
    print(
        f"2. grid 10 T x 100 Nd x {excess.size} dn, Nd given: API {a * 1e3:8.1f} ms "
        f"(of which the 1000 equilibrium solves {solve * 1e3:.1f} ms)   numpy with n0, p0 "
        f"given {b * 1e3:7.1f} ms   ratio {a / b:.2f}"
    )

    # 3. scattered points: one equilibrium per point
    if args.scattered:
        nd = 10.0 ** rng.uniform(13, 19, n)
        a = best(lambda: si.intrinsic_lifetime(t, Nd=nd, excess=dn), number=1, repeat=2)
        solve = best(lambda: si.equilibrium(t, Nd=nd), number=1, repeat=2)
        state = si.equilibrium(t, Nd=nd)
        b = best(lambda: inline_richter(state.n.m_as("cm^-3"), state.p.m_as("cm^-3"), dn))
        print(
            f"3. {n:.0e} distinct (T, Nd), Nd given: API {a:7.2f} s (equilibrium solve "
            f"alone {solve:.2f} s)   numpy with n0, p0 given {b * 1e3:.1f} ms   "
            f"ratio {a / b:.0f}"
        )


if __name__ == "__main__":
    main()
