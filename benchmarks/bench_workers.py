"""All cores: workers= against one thread, on the same calls (benchmarks).

    python benchmarks/run.py --only workers [--quick]

``matprops.silicon(workers=k)`` (and ``kernel(..., workers=k)``) evaluates the blocks of
a large input on a pool of k threads; numpy releases the GIL inside its loops. Wall time
(it is wall time that threads save), best of interleaved rounds, at 1e7 points (1e6 with
``--quick``) with as many workers as the machine has usable cores; each row checks that
the numbers are the same bit for bit. Goal for the heavy kernels: speed-up >= 1.7 on two
cores. The load of the shared machine is printed in the header: other processes take
cores from the pool.
"""

from __future__ import annotations

import os
import time
import warnings

import numpy as np
from harness import compare

import matprops


def run(bench):
    try:
        cores = len(os.sched_getaffinity(0))
    except AttributeError:
        cores = os.cpu_count() or 1
    size = 1_000_000 if bench.quick else 10_000_000
    bench.section(f"workers: {cores} threads against one, {size:.0e} points (wall time)")
    rng = np.random.default_rng(8)
    T = rng.uniform(250.0, 450.0, size)
    N = 10 ** rng.uniform(14.0, 19.0, size)
    n = 10 ** rng.uniform(10.0, 19.0, size)
    one, many = matprops.silicon(), matprops.silicon(workers=cores)
    heavy = [
        (
            "gap_narrowing kernel (schenk, n, p given)",
            "gap_narrowing",
            {"temperature": T, "Nd": N, "Na": 0.0, "n": n, "p": 1e4},
            {},
        ),
        (
            "mobility kernel (klaassen, electron)",
            "mobility",
            {"temperature": T, "Nd": N, "Na": 0.0, "n": n, "p": 1e4},
            {"carrier": "electron"},
        ),
        ("intrinsic_density kernel", "intrinsic_density", {"temperature": T}, {}),
        ("band_gap kernel", "band_gap", {"temperature": T}, {}),
    ]
    solver_size = size // 10
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        for name, quantity, args, fixed in heavy:
            k1, kn = one.kernel(quantity, **fixed), many.kernel(quantity, **fixed)
            same = _same(k1(**args), kn(**args))
            single, threaded = compare(
                lambda k=k1, a=args: k(**a),
                lambda k=kn, a=args: k(**a),
                clock=time.perf_counter,
                rounds=3,
                budget=2.0 if bench.quick else 8.0,
            )
            bench.row(
                "workers",
                name,
                size,
                threaded,
                single,
                goal=1.7 if cores >= 2 else None,
                higher=True,
                note=f"speed-up; same numbers bit for bit: {same}",
            )
        methods = [
            (
                "equilibrium (method)",
                lambda si: si.equilibrium(T[:solver_size], Nd=N[:solver_size]),
            ),
            (
                "resistivity (method)",
                lambda si: si.resistivity(T[:solver_size], Na=N[:solver_size]),
            ),
            ("band_gap (method)", lambda si: si.band_gap(T)),
        ]
        for name, call in methods:
            same = _same(call(one), call(many))
            single, threaded = compare(
                lambda c=call: c(one),
                lambda c=call: c(many),
                clock=time.perf_counter,
                rounds=3,
                budget=2.0 if bench.quick else 8.0,
            )
            points = solver_size if "band_gap" not in name else size
            bench.row(
                "workers",
                name,
                points,
                threaded,
                single,
                higher=True,
                note=f"speed-up; same numbers bit for bit: {same}",
            )


def _same(a, b):
    if hasattr(a, "__dataclass_fields__"):
        return all(
            _same(getattr(a, f), getattr(b, f))
            for f in a.__dataclass_fields__
            if hasattr(getattr(a, f), "magnitude")
        )
    if isinstance(a, dict):
        return all(_same(a[k], b[k]) for k in a)
    if isinstance(a, tuple):
        return all(_same(x, y) for x, y in zip(a, b, strict=True))
    a = np.asarray(getattr(a, "magnitude", a))
    b = np.asarray(getattr(b, "magnitude", b))
    return bool(np.array_equal(a, b, equal_nan=True))


SECTIONS = {"workers": run}
