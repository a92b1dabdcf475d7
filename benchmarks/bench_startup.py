"""Start-up in fresh processes (benchmarks).

    python benchmarks/run.py --only startup [--quick]

Each step runs in a fresh interpreter (bytecode compiled beforehand), several times; the
median wall time is kept:

- the floor: ``import numpy, pint``;
- the first call: ``import matprops; si = matprops.silicon(); si.kernel("band_gap")(300.0)``
  on top of the floor (goal: at most 100 ms more);
- the first quantity: ``si.band_gap(300.0)`` on top of that, which builds pint's unit
  registry (pint parses its definition file; an application that wants it faster sets
  ``pint.set_application_registry(pint.UnitRegistry(cache_folder=...))`` itself, shown
  for information with a temporary folder: matprops never replaces the application's
  registry).
"""

from __future__ import annotations

import statistics
import subprocess
import sys
import tempfile

FLOOR = "import numpy, pint"
FIRST_CALL = FLOOR + "; import matprops; si = matprops.silicon(); si.kernel('band_gap')(300.0)"
FIRST_QUANTITY = FIRST_CALL + "; si.band_gap(300.0)"
CACHED = (
    FLOOR + "; pint.set_application_registry(pint.UnitRegistry(cache_folder={folder!r}))"
    "; import matprops; si = matprops.silicon(); si.kernel('band_gap')(300.0)"
    "; si.band_gap(300.0)"
)


def _seconds(code, repeat):
    timer = (
        "import time; t0 = time.perf_counter()\n"
        + code.replace("; ", "\n")
        + "\nprint(time.perf_counter() - t0)"
    )
    times = []
    for _ in range(repeat):
        run = subprocess.run(
            [sys.executable, "-c", timer], capture_output=True, text=True, check=True
        )
        times.append(float(run.stdout.strip().splitlines()[-1]))
    return statistics.median(times)


def run(bench):
    bench.section("startup: fresh processes, median wall time")
    repeat = 5 if bench.quick else 11
    with tempfile.TemporaryDirectory() as folder:  # pint's cache, not in the user's home
        cached_code = CACHED.format(folder=folder)
        subprocess.run([sys.executable, "-c", FIRST_QUANTITY], check=True, capture_output=True)
        subprocess.run([sys.executable, "-c", cached_code], check=True, capture_output=True)
        floor = _seconds(FLOOR, repeat)
        first = _seconds(FIRST_CALL, repeat)
        quantity = _seconds(FIRST_QUANTITY, repeat)
        cached = _seconds(cached_code, repeat)
    bench.info(f"import numpy, pint: {floor * 1e3:.0f} ms")
    bench.row(
        "startup",
        "first call over import numpy, pint",
        1,
        (first - floor) * 1e3,
        None,
        goal=100,
        note="ms: import matprops + silicon() + one kernel value",
    )
    bench.row(
        "startup",
        "first quantity on top (pint builds its registry)",
        1,
        (quantity - first) * 1e3,
        None,
        note="ms",
    )
    bench.row(
        "startup",
        "the same with the application's cached registry",
        1,
        (cached - first) * 1e3,
        None,
        note="ms (pint's cache_folder, set by the application)",
    )


SECTIONS = {"startup": run}
