"""Benchmark (run on demand, not a test): Fermi-Dirac integrals on 1e6 points.

    python benchmarks/bench_fermi_dirac.py

Reports ns per element for fd_half, fd_minus_half and fd_half_inverse and their ratio
to ``np.exp`` on the same eta array (the figure to watch; the inverse runs on
y = F_1/2(eta), the same size, with ``np.log(y)`` shown beside it).  Inputs: reduced
Fermi levels spread at random over -50..100 (every
block of the array spans all segments: the slow, indexed path), the same range
sorted (blocks mostly inside one segment, as on a smooth device or parameter grid),
and the non-degenerate range -40..0 alone.  The inverse gets y = F_1/2(eta) of the
same arrays.  Best of 7 repeats; numpy's own threading only (none for these ufuncs).
"""

import os
import platform
import timeit

import numpy as np

from matprops.kernels.fermi_dirac import fd_half, fd_half_inverse, fd_minus_half


def ns_per_element(function, x, repeat=7):
    function(x)
    return min(timeit.repeat(lambda: function(x), number=1, repeat=repeat)) / x.size * 1e9


def run(bench):
    """F_1/2 and its relatives against np.exp on the same arrays (ratio: x np.exp)."""
    from harness import compare

    bench.section("fermi_dirac: F_1/2, F_-1/2 and the inverse against np.exp")
    n = 100_000 if bench.quick else 1_000_000
    rng = np.random.default_rng(0)
    cases = {
        "random -50..100": rng.uniform(-50.0, 100.0, n),
        "sorted -50..100": np.linspace(-50.0, 100.0, n),
        "random -40..0": rng.uniform(-40.0, 0.0, n),
    }
    for label, eta in cases.items():
        y = fd_half(eta)
        for name, function, x in (
            ("fd_half", fd_half, eta),
            ("fd_minus_half", fd_minus_half, eta),
            ("fd_half_inverse", fd_half_inverse, y),
        ):
            ours, exp = compare(lambda f=function, x=x: f(x), lambda e=eta: np.exp(e), budget=0.3)
            bench.row("fermi_dirac", f"{name}, {label}", n, ours, exp, note="x np.exp")


SECTIONS = {"fermi_dirac": run}


def main():
    n = 1_000_000
    rng = np.random.default_rng(0)
    cases = {
        "random -50..100": rng.uniform(-50.0, 100.0, n),
        "sorted -50..100": np.linspace(-50.0, 100.0, n),
        "random -40..0": rng.uniform(-40.0, 0.0, n),
    }
    blas = {k: v for k, v in os.environ.items() if k.startswith("OPENBLAS")}
    print(
        f"numpy {np.__version__}, {platform.processor() or platform.machine()}, "
        f"OPENBLAS variables: {blas or 'not set'}"
    )
    print(f"{'input':17s} {'function':16s} {'ns/elt':>7s}  {'x np.exp':>8s}")
    for label, eta in cases.items():
        y = fd_half(eta)
        exp = ns_per_element(np.exp, eta)
        print(f"{label:17s} {'np.exp(eta)':16s} {exp:7.2f}  {1:8.1f}")
        print(f"{label:17s} {'np.log(y)':16s} {ns_per_element(np.log, y):7.2f}")
        for name, function, x in (
            ("fd_half", fd_half, eta),
            ("fd_minus_half", fd_minus_half, eta),
            ("fd_half_inverse", fd_half_inverse, y),
        ):
            t = ns_per_element(function, x)
            print(f"{label:17s} {name:16s} {t:7.2f}  {t / exp:8.1f}")


if __name__ == "__main__":
    main()
