"""Benchmark (run on demand, not a test): unit-aware API against inline numpy.

    python benchmarks/bench_foundation.py [--points 1000000]

Baseline: the same formulas written inline in numpy (below), on the same 1e6
temperatures. Reports the ratio API / baseline (target <= 1.5 at 1e6 points), the
fixed cost of one scalar call, and the import time of matprops against numpy.
"""

import argparse
import statistics
import subprocess
import sys
import timeit

import numpy as np

K_B = 8.617333262e-5


def inline_gap(t):
    # Pässler 2002 with Eg0 1.1701 eV, alpha 3.23e-4 eV/K, theta 446 K, delta 0.51
    eg0, alpha, theta, delta = 1.1701, 3.23e-4, 446.0, 0.51
    d2 = delta**2
    x = 2 * t / theta
    root = (
        1 + np.pi**2 * x**2 / (3 * (1 + d2)) + (3 * d2 - 1) * x**3 / 4 + 8 * x**4 / 3 + x**6
    ) ** (1 / 6)
    return eg0 - alpha * theta * ((1 - 3 * d2) / np.expm1(theta / t) + 1.5 * d2 * (root - 1))


def inline_ni(t):
    # Couderc et al. 2014: 1.541e15 T^1.712 exp(-Eg/2kT)
    return 1.541e15 * t**1.712 * np.exp(-inline_gap(t) / (2 * K_B * t))


def best(stmt, number, repeat=7):
    return min(timeit.repeat(stmt, number=number, repeat=repeat)) / number


def import_time(module, runs=7, then=""):
    """Median wall time of a fresh ``python -c 'import module; then'``."""
    code = f"import {module}; {then}" if then else f"import {module}"
    return statistics.median(
        timeit.timeit(lambda: subprocess.run([sys.executable, "-c", code], check=True), number=1)
        for _ in range(runs)
    )


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--points", type=int, default=1_000_000)
    n = parser.parse_args().points

    import matprops

    si = matprops.silicon()
    t = np.linspace(80.0, 500.0, n)
    np.testing.assert_allclose(si.band_gap(t).m_as("eV"), inline_gap(t), rtol=1e-12)
    np.testing.assert_allclose(si.intrinsic_density(t).m_as("cm^-3"), inline_ni(t), rtol=1e-11)

    rows = []
    for name, api, base in (
        ("band_gap", lambda: si.band_gap(t), lambda: inline_gap(t)),
        ("intrinsic_density", lambda: si.intrinsic_density(t), lambda: inline_ni(t)),
    ):
        a, b = best(api, 5), best(base, 5)
        rows.append((name, a, b))
    kernel = si.kernel("intrinsic_density")
    k = best(lambda: kernel(temperature=t), 5)
    scalar = best(lambda: si.band_gap(300.0), 2000)
    scalar_ni = best(lambda: si.intrinsic_density(300.0), 2000)
    scalar_q = best(lambda: si.band_gap(matprops.Q_(25.0, "degC")), 2000)

    print(f"{n:.0e} temperatures, numpy {np.__version__}, best of 7")
    for name, a, b in rows:
        print(
            f"  {name:18s} API {a * 1e3:7.2f} ms   inline numpy {b * 1e3:7.2f} ms   "
            f"ratio {a / b:.2f}"
        )
    print(f"  intrinsic_density  bound kernel {k * 1e3:7.2f} ms (no units, no checks)")
    print(
        f"scalar call: band_gap(300) {scalar * 1e6:.1f} us, intrinsic_density(300) "
        f"{scalar_ni * 1e6:.1f} us, band_gap(Q_(25, 'degC')) {scalar_q * 1e6:.1f} us"
    )
    mp, npy = import_time("matprops"), import_time("numpy")
    first = import_time("matprops", then="matprops.silicon().band_gap(300)")
    print(
        f"import (wall, median of 7 processes): matprops {mp * 1e3:.0f} ms, "
        f"numpy {npy * 1e3:.0f} ms, ratio {mp / npy:.2f} (matprops defers numpy too); "
        f"import + first band_gap call (loads numpy, pint, model files) {first * 1e3:.0f} ms"
    )


if __name__ == "__main__":
    main()
