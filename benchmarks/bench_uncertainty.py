"""Cost of uncertainty=True on bound kernels (run on demand, not a test).

1. Linear propagation against the value's cost at 1e6 points (target <= 3x):
   - Arora's mobility with its source's +-13 % output accuracy (the data as they are);
   - Pässler's gap with test-only 1 % uncertainties on its four coefficients (made up
     here to time the coefficient derivatives; not data).
2. Monte Carlo, 1000 samples, in blocks: time, and peak memory (tracemalloc) against
   the result (value and uncertainty; target <= 4x).

    python benchmarks/bench_uncertainty.py [--points N]
"""

from __future__ import annotations

import argparse
import time
import tracemalloc

import numpy as np

import matprops
from matprops.material.propagation import Direction, models_of
from matprops.material.uncertainty import (
    _selected_directions,
    kernel_linear,
    kernel_monte_carlo,
)


def best(function, repeat=3):
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        function()
        times.append(time.perf_counter() - start)
    return min(times)


def test_only_directions(model, share=0.01):
    return [
        Direction(
            model.quantity, model.id, None, c.name, None, share * abs(c.kernel_value), "standard"
        )
        for c in model.coefficients.values()
        if np.ndim(c.kernel_value) == 0 and c.kernel_value != 0
    ]


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--points", type=int, default=1_000_000)
    parser.add_argument("--mc-points", type=int, default=100_000)
    size = parser.parse_args()

    arora = matprops.silicon(models={"mobility": "arora-1982"})
    mobility = arora.kernel("mobility", carrier="electron")
    t = np.linspace(250.0, 500.0, size.points)
    value_time = best(lambda: mobility(t, Nd=1e16, Na=0.0))
    linear_time = best(lambda: mobility(t, Nd=1e16, Na=0.0, uncertainty=True))
    print(
        f"Arora mobility, {size.points:.0e} points: value {value_time * 1e3:.1f} ms, "
        f"linear {linear_time * 1e3:.1f} ms, ratio {linear_time / value_time:.2f}"
    )

    si = matprops.silicon()
    gap = si.kernel("band_gap")
    found = test_only_directions(gap.model)
    models = models_of(gap.model, {})
    value_time = best(lambda: gap(t))
    linear_time = best(lambda: kernel_linear(si, gap, {"temperature": t}, found, models))
    print(
        f"Passler gap, {len(found)} coefficients (test-only 1 %), {size.points:.0e} points: "
        f"value {value_time * 1e3:.1f} ms, linear {linear_time * 1e3:.1f} ms, "
        f"ratio {linear_time / value_time:.2f}"
    )

    points = np.linspace(250.0, 500.0, size.mc_points)
    mobility_models = models_of(mobility.model, {})
    answer_found = _selected_directions(mobility_models)
    tracemalloc.start()
    start = time.perf_counter()
    value, sigma = kernel_monte_carlo(
        arora,
        mobility,
        {"temperature": points, "donor_density": 1e16, "acceptor_density": 0.0},
        answer_found,
        mobility_models,
        1000,
        0,
    )
    elapsed = time.perf_counter() - start
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    result = value.nbytes + sigma.nbytes
    print(
        f"Monte Carlo, 1000 samples, {size.mc_points:.0e} points: {elapsed:.2f} s, "
        f"peak {peak / 1e6:.1f} MB against the result's {result / 1e6:.1f} MB "
        f"(ratio {peak / result:.2f})"
    )


if __name__ == "__main__":
    main()
