"""Start-up in fresh processes (benchmarks).

    python benchmarks/run.py --only startup [--quick]

Each step runs in a fresh interpreter (bytecode compiled beforehand), several times; the
median CPU time of the process (user + system, an empty interpreter's subtracted) is
kept, so that other processes on a shared machine do not count:

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

import os
import resource
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
    """Median CPU time (user + system) of a fresh interpreter running ``code``, minus
    that of an empty one: CPU time, not wall time, so that other processes on a shared
    machine do not count."""
    times = []
    for _ in range(repeat):
        times.append(_cpu([sys.executable, "-c", code]) - _cpu([sys.executable, "-c", "pass"]))
    return statistics.median(times)


def _cpu(command):
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    subprocess.run(command, check=True, capture_output=True)
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    return (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)


def run(bench):
    bench.section("startup: fresh processes, median CPU time")
    repeat = 3 if bench.quick else 11
    # matprops' bytecode compiled first, as an installed package has it (an editable
    # install under PYTHONDONTWRITEBYTECODE would otherwise compile it at every start)
    import compileall

    import matprops

    compileall.compile_dir(os.path.dirname(matprops.__file__), quiet=1)
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
