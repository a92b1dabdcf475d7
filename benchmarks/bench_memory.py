"""Peak memory against the size of the result, and cost per point (benchmarks).

    python benchmarks/run.py --only memory [--quick]

The peak of the arrays a call holds at once (tracemalloc: numpy reports its buffers to
it), over the bytes of what it returns; the inputs are made before and not counted. At
1e7 points (1e6 with ``--quick``):

- closed-form kernels and methods (goal: peak at most 2x the result);
- the quantities that solve the equilibrium on the way: ``equilibrium``,
  ``resistivity``, ``doping_from_resistivity``, ``intrinsic_lifetime`` and ``mobility``
  with the equilibrium's n0, p0 (goal: at most 3x the output).

Beside each, the cost per point at that size against 1e5 points (linear: about 1).
"""

from __future__ import annotations

import gc
import time
import warnings

import numpy as np
from harness import nbytes, peak_memory

import matprops


def _inputs(size, seed=4):
    rng = np.random.default_rng(seed)
    return {
        "T": rng.uniform(250.0, 450.0, size),
        "N": 10 ** rng.uniform(14.0, 19.0, size),
        "rho": 10 ** rng.uniform(-2.0, 2.0, size),
    }


def calls(si):
    return [
        ("band_gap (kernel)", 2.0, lambda a: si.kernel("band_gap")(a["T"])),
        ("band_gap (method)", 2.0, lambda a: si.band_gap(a["T"])),
        ("intrinsic_density (method)", 2.0, lambda a: si.intrinsic_density(a["T"])),
        (
            "gap_narrowing (kernel, n, p given)",
            2.0,
            lambda a: si.kernel("gap_narrowing")(a["T"], Nd=a["N"], Na=0.0, n=a["N"], p=1e4),
        ),
        ("equilibrium (method)", 3.0, lambda a: si.equilibrium(a["T"], Nd=a["N"])),
        (
            "equilibrium (kernel)",
            3.0,
            lambda a: si.kernel("equilibrium")(a["T"], Nd=a["N"], Na=0.0),
        ),
        ("resistivity (method)", 3.0, lambda a: si.resistivity(a["T"], Na=a["N"])),
        (
            "doping_from_resistivity (method)",
            3.0,
            lambda a: si.doping_from_resistivity(a["rho"], 300.0, "boron", conversion="physics"),
        ),
        (
            "intrinsic_lifetime (n0, p0 solved)",
            3.0,
            lambda a: si.intrinsic_lifetime(300.0, Nd=a["N"], excess=1e15),
        ),
        ("mobility (carriers solved)", 3.0, lambda a: si.mobility("electron", a["T"], Nd=a["N"])),
    ]


def run(bench):
    size = 1_000_000 if bench.quick else 10_000_000
    bench.section(f"memory: peak over result at {size:.0e} points; cost per point linear")
    si = matprops.silicon()
    small = _inputs(100_000)
    big = _inputs(size)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        for name, goal, call in calls(si):
            call(small)
            start = time.thread_time()
            call(small)
            per_point_small = (time.thread_time() - start) / 1e5
            start = time.thread_time()
            result = call(big)  # timed alone: tracemalloc slows every allocation
            per_point = (time.thread_time() - start) / size
            del result
            gc.collect()
            peak, result = peak_memory(lambda c=call: c(big))
            output = nbytes(result)
            del result
            gc.collect()
            bench.row(
                "memory",
                name,
                size,
                peak / output,
                None,
                goal=goal,
                note=f"peak / output; cost per point {per_point / per_point_small:.2f}x "
                f"that at 1e5 ({per_point * 1e9:.0f} ns)",
            )


SECTIONS = {"memory": run}
