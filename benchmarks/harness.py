"""The one harness every benchmark runs in (benchmarks only, not a test).

Each benchmark compares the same work on both sides of a ratio: matprops against the
best numpy written by hand (Horner, integer powers, tables built once), or a lean float
``scipy.optimize.brentq`` loop for an inverse problem (:mod:`lean`). Times are CPU time
of the measuring thread (``time.thread_time``), the minimum over rounds in which the
sides alternate, so that other processes on a shared machine slow both sides alike and
count for neither; the thread-pool figures (workers=) are wall time, since they measure
how much of it several threads save. Every row says its sizes, both times, the ratio and
the goal; the header says the machine (CPU, cores, numpy, whether the OPENBLAS_* variables
are set, the load when the run started).

``--quick`` takes the sizes that finish the whole run in under two minutes here (CI);
figures are printed, never asserted.
"""

from __future__ import annotations

import gc
import json
import os
import platform
import sys
import time
import tracemalloc

import numpy as np

__all__ = ["Bench", "best_of", "compare", "peak_memory"]


def machine() -> dict:
    """The facts a reader needs to weigh the figures."""
    cpu = platform.processor() or platform.machine()
    try:
        with open("/proc/cpuinfo") as handle:
            for line in handle:
                if line.startswith("model name"):
                    cpu = line.split(":", 1)[1].strip()
                    break
    except OSError:
        pass
    try:
        usable = len(os.sched_getaffinity(0))
    except AttributeError:
        usable = os.cpu_count()
    try:
        load = os.getloadavg()[0]
    except OSError:
        load = float("nan")
    import pint

    import matprops

    return {
        "cpu": cpu,
        "cores": os.cpu_count(),
        "usable cores": usable,
        "python": platform.python_version(),
        "numpy": np.__version__,
        "pint": pint.__version__,
        "matprops": matprops.__version__,
        "OPENBLAS variables": {k: v for k, v in os.environ.items() if k.startswith("OPENBLAS")}
        or "not set",
        "load average (1 min) at start": round(load, 2),
    }


def _time(function, clock):
    start = clock()
    function()
    return clock() - start


def compare(*functions, budget=0.5, rounds=None, clock=time.thread_time):
    """Best time of each function over interleaved rounds (a, b, a, b, ...).

    Very short calls are grouped so that one timing spans at least ~2 ms of the clock's
    resolution. ``budget``: seconds to spend in all; ``rounds``: at least this many."""
    first = [_time(f, clock) for f in functions]  # warm-up, and the size of one call
    total = max(sum(first), 1e-7)
    number = max(1, int(2e-3 / max(min(first), 1e-7)))
    count = int(min(50, max(rounds or 3, budget / (total * number))))
    best = [np.inf] * len(functions)
    for _ in range(count):
        for k, function in enumerate(functions):
            start = clock()
            for _ in range(number):
                function()
            best[k] = min(best[k], (clock() - start) / number)
    return best


def best_of(function, repeat=3, clock=time.perf_counter):
    """Best time of ``repeat`` calls (for long calls timed alone)."""
    return min(_time(function, clock) for _ in range(repeat))


def peak_memory(function):
    """(peak bytes traced during one call, result): numpy reports its buffers to
    tracemalloc, so this is the peak of the arrays the call held at once."""
    gc.collect()
    tracemalloc.start()
    tracemalloc.reset_peak()
    try:
        result = function()
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    return peak, result


def nbytes(result) -> int:
    """Bytes of a result: an array, a quantity, a tuple, a dict or a Result's arrays."""
    if isinstance(result, dict):
        return sum(nbytes(v) for v in result.values())
    if isinstance(result, tuple):
        return sum(nbytes(v) for v in result)
    fields = getattr(result, "__dataclass_fields__", None)
    if fields is not None:
        return sum(
            nbytes(getattr(result, name))
            for name in fields
            if name != "provenance" and hasattr(getattr(result, name), "magnitude")
        )
    value = getattr(result, "magnitude", result)
    return np.asarray(value).nbytes if isinstance(value, np.ndarray) else 8


class Bench:
    """One run: the options, the rows measured, the printing."""

    def __init__(self, quick=False, json_path=None):
        self.quick = quick
        self.json_path = json_path
        self.rows = []
        self.facts = machine()
        self.started = time.perf_counter()

    def header(self):
        print("matprops benchmarks" + (" (--quick)" if self.quick else ""))
        for key, value in self.facts.items():
            print(f"  {key}: {value}")
        print(
            "  times: CPU time of the measuring thread, best of interleaved rounds; "
            "ratio = matprops / baseline unless the row says otherwise"
        )

    def section(self, title):
        print(f"\n== {title}")

    def row(self, section, name, size, ours, baseline, *, goal=None, higher=False, note=""):
        """One comparison. ``ours``, ``baseline``: seconds for the same work (or, with
        ``baseline`` None, ``ours`` is already the ratio); ``goal``: the ratio to reach
        (at most, or with ``higher`` at least)."""
        ratio = ours / baseline if baseline else ours
        if higher and baseline:
            ratio = baseline / ours
        met = None
        if goal is not None:
            met = ratio >= goal if higher else ratio <= goal
        record = {
            "section": section,
            "name": name,
            "size": size,
            "ours_s": ours if baseline else None,
            "baseline_s": baseline,
            "ratio": ratio,
            "goal": goal,
            "higher_is_better": higher,
            "met": met,
            "note": note,
        }
        self.rows.append(record)
        size_text = f"{size:.0e}" if isinstance(size, (int, float)) and size else str(size or "")
        times = f"{_seconds(ours)} vs {_seconds(baseline)}" if baseline else ""
        goal_text = "" if goal is None else f"goal {'>=' if higher else '<='} {goal:g}"
        mark = "" if met is None else ("  ok" if met else "  MISSED")
        print(
            f"  {name:52s} {size_text:>7s} {times:>22s}  ratio {ratio:8.3g}  "
            f"{goal_text}{mark}{('  ' + note) if note else ''}"
        )
        sys.stdout.flush()
        return ratio

    def info(self, text):
        print(f"  {text}")
        sys.stdout.flush()

    def finish(self):
        elapsed = time.perf_counter() - self.started
        missed = [r for r in self.rows if r["met"] is False]
        print(f"\n{len(self.rows)} figures in {elapsed:.0f} s; goals missed: {len(missed)}")
        for r in missed:
            print(f"  MISSED {r['section']}: {r['name']} ({r['ratio']:.3g}, goal {r['goal']:g})")
        if self.json_path:
            with open(self.json_path, "w") as handle:
                json.dump({"machine": self.facts, "rows": self.rows}, handle, indent=1)
            print(f"figures written to {self.json_path}")


def _seconds(value):
    if value is None:
        return "-"
    if value >= 1:
        return f"{value:.2f} s"
    if value >= 1e-3:
        return f"{value * 1e3:.2f} ms"
    return f"{value * 1e6:.1f} us"
