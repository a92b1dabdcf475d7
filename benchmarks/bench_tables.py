"""Benchmark (run on demand, not a test): tables, lazy sweeps and exports.

    python benchmarks/bench_tables.py [--points 1e7] [--export-points 1e6] [--no-cluster]

1. A ~1e7-point table of three quantities through ``si.table`` against the same three
   bound kernels called on numpy arrays (broadcast grids, one call each): wall time
   (best of 3; one run when the equilibrium is solved) and peak memory traced by
   tracemalloc (numpy reports its buffers to it), both also as a ratio to the size of
   the result. Targets: table time within 1.5x of the kernels, table peak memory within
   2x of the result.
   Grid: temperature x donor density (1000 x points/1000) for three doping-dependent
   quantities: the gap narrowing and the effective intrinsic density at given free-
   carrier densities (n, p scalar coordinates: no equilibrium solve), and the
   intrinsic lifetime at one excess density, whose n0, p0 the table solves at every
   (T, Nd) point (the kernels' side: the equilibrium kernel, then the lifetime
   kernel). Without the doping quantities: temperature x wavelength (absorption,
   refractive index, intrinsic density).
2. The same sweep with ``chunks=`` on a two-worker ``dask.distributed.LocalCluster``
   (processes, one thread each) for several chunk sizes, reduced to one number per
   variable on the workers so that nothing large travels: wall time and the peak
   resident memory of each worker (``ru_maxrss``). Also dask's threaded scheduler.
3. CSV (long) and JSON export of a ~1e6-point table: time and file size.

Says whether OPENBLAS_CORETYPE / OPENBLAS_L2_SIZE were set (they can slow numpy).
"""

from __future__ import annotations

import argparse
import os
import tempfile
import time
import tracemalloc
import warnings
from pathlib import Path

import numpy as np

DOPING_SET = ("gap_narrowing", "effective_intrinsic_density", "intrinsic_lifetime")
FREE_CARRIERS = {"electron_density": 1e16, "hole_density": 1e4}  # cm^-3, given
EXCESS = 1e15  # cm^-3


def plan(si, points: int):
    """(quantities, grid, kernel calls) for a table of about ``points`` points."""
    from matprops.material.tables import available

    serves = set(available(si))
    if set(DOPING_SET) <= serves:  # once the doping quantities exist
        n_t = 1000
        t = np.linspace(233.15, 473.15, n_t)
        nd = np.logspace(13, 20, points // n_t)
        grid = {"temperature": t, "donor_density": nd, **FREE_CARRIERS, "excess_density": EXCESS}
        tt, dd = t[:, None], nd[None, :]
        n, p = FREE_CARRIERS["electron_density"], FREE_CARRIERS["hole_density"]
        narrowing = si.kernel("gap_narrowing")
        ni_eff = si.kernel("effective_intrinsic_density")
        solve, lifetime = si.kernel("equilibrium"), si.kernel("intrinsic_lifetime")

        def summed(shifts):
            total = shifts[0]
            total += shifts[1]
            return total

        def intrinsic_lifetime():
            state = solve(tt, Nd=dd, Na=0.0)
            return lifetime(
                tt, n0=state["electron_density"], p0=state["hole_density"], excess=EXCESS
            )

        calls = [
            ("gap_narrowing", lambda: summed(narrowing(tt, Nd=dd, Na=0.0, n=n, p=p))),
            ("effective_intrinsic_density", lambda: ni_eff(tt, Nd=dd, Na=0.0, n=n, p=p)),
            ("intrinsic_lifetime", intrinsic_lifetime),
        ]
        return list(DOPING_SET), grid, calls
    n_lam = 1000
    lam = np.linspace(400.0, 1100.0, n_lam)
    t = np.linspace(250.0, 400.0, points // n_lam)
    grid = {"temperature": t, "wavelength": lam}
    tt, ll = t[:, None], lam[None, :]
    calls = [
        ("absorption", lambda: si.kernel("absorption")(wavelength=ll, temperature=tt)),
        ("refractive_index", lambda: si.kernel("refractive_index")(wavelength=ll, temperature=tt)),
        ("intrinsic_density", lambda: si.kernel("intrinsic_density")(temperature=t)),
    ]
    return ["absorption", "refractive_index", "intrinsic_density"], grid, calls


def traced(function):
    """(seconds, peak bytes traced, result) of one call."""
    tracemalloc.start()
    tracemalloc.reset_peak()
    start = time.perf_counter()
    result = function()
    seconds = time.perf_counter() - start
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    return seconds, peak, result


def best_time(function, repeat=3):
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        result = function()
        times.append(time.perf_counter() - start)
        del result
    return min(times)


def table_versus_kernels(si, points):
    quantities, grid, calls = plan(si, points)
    size = int(np.prod([np.size(v) for v in grid.values() if np.ndim(v)]))
    print(
        f"\n1. table of {quantities} on {size:.3g} points "
        f"({' x '.join(f'{k} {np.size(v)}' for k, v in grid.items() if np.ndim(v))})"
    )

    def through_table():
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            return si.table(quantities, **grid)

    solves = quantities == list(DOPING_SET)  # an equilibrium solve per point: one run
    repeat = 1 if solves else 3
    if solves:  # load xarray and the models on a small grid first
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            small = {k: (v[:3] if np.ndim(v) else v) for k, v in grid.items()}
            si.table(quantities, **small)
    else:
        through_table()  # load tables, warm caches
    seconds_table = best_time(through_table, repeat)
    _, peak_table, data = traced(through_table)
    result_bytes = sum(v.nbytes for v in data.data_vars.values())
    print(
        f"   si.table:        {seconds_table:7.3f} s   peak {peak_table / 1e6:8.1f} MB   "
        f"result {result_bytes / 1e6:.1f} MB   peak/result {peak_table / result_bytes:.2f}"
    )
    for name, variable in data.data_vars.items():
        print(f"      {name}: {variable.size:.3g} values, dims {variable.dims}")
    del data

    def through_kernels():
        return [call() for _, call in calls]

    if not solves:
        through_kernels()
    else:
        plan(si, 3000)[2][-1][1]()  # the kernels on a small grid first
    seconds_kernels = best_time(through_kernels, repeat)
    _, peak_kernels, _ = traced(through_kernels)
    print(
        f"   kernels (numpy): {seconds_kernels:7.3f} s   peak {peak_kernels / 1e6:8.1f} MB"
        f"   peak/result {peak_kernels / result_bytes:.2f}"
    )
    print(
        f"   time table/kernels {seconds_table / seconds_kernels:.2f} (target <= 1.5); "
        f"table peak/result {peak_table / result_bytes:.2f} (target <= 2)"
    )


def _start_sampler(dask_worker):
    """In a worker: sample its resident memory every 5 ms (ru_maxrss would report the
    parent's peak, which an exec'd child inherits)."""
    import threading

    import psutil

    state = {"peak": 0, "run": True, "base": psutil.Process().memory_info().rss}

    def sample():
        process = psutil.Process()
        while state["run"]:
            state["peak"] = max(state["peak"], process.memory_info().rss)
            time.sleep(0.005)

    threading.Thread(target=sample, daemon=True).start()
    dask_worker.matprops_sampler = state


def _stop_sampler(dask_worker):
    state = dask_worker.matprops_sampler
    state["run"] = False
    return state["base"] / 1e6, state["peak"] / 1e6


def cluster_sweep(si, points, chunk_sizes):
    import dask
    import distributed

    quantities, grid, _ = plan(si, points)
    first = next(k for k, v in grid.items() if np.ndim(v))
    print(
        f"\n2. chunks= sweep of the same {points:.3g}-point table, chunked along {first} "
        "(reduced to means on the workers)"
    )

    def lazy(chunk):
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            return si.table(quantities, chunks={first: chunk}, **grid)

    for chunk in chunk_sizes:
        data = lazy(chunk)
        with dask.config.set(scheduler="threads"):
            start = time.perf_counter()
            [float(v.mean()) for v in data.data_vars.values()]
            seconds = time.perf_counter() - start
        print(f"   threads scheduler, chunk {chunk:5d}: {seconds:6.2f} s")
    with (
        distributed.LocalCluster(
            n_workers=2,
            threads_per_worker=1,
            processes=True,
            host="127.0.0.1",
            dashboard_address=":0",
            memory_limit="1.5GB",
        ) as cluster,
        distributed.Client(cluster) as client,
    ):
        for chunk in chunk_sizes:
            data = lazy(chunk)
            blocks = sum(
                np.prod([len(c) for c in v.chunks]) for v in data.data_vars.values() if v.chunks
            )
            client.run(_start_sampler)
            start = time.perf_counter()
            # the values (their validity flags share their graphs: see test_table_grids)
            values = [v for v in data.data_vars.values() if "flag_values" not in v.attrs]
            futures = client.compute([v.mean() for v in values])
            [float(f.result()) for f in futures]
            seconds = time.perf_counter() - start
            rss = client.run(_stop_sampler)
            print(
                f"   2-worker cluster, chunk {chunk:5d} ({blocks:4d} blocks): {seconds:6.2f} s"
                "   worker RSS before -> peak "
                + ", ".join(f"{b:.0f} -> {p:.0f}" for b, p in rss.values())
                + " MB"
            )


def exports(si, points):
    from matprops import export

    n_lam = 100
    grid = {
        "temperature": np.linspace(250.0, 400.0, points // n_lam),
        "wavelength": np.linspace(400.0, 1100.0, n_lam),
    }
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        data = si.table(["absorption", "refractive_index"], **grid)
    size = data.absorption.size
    print(f"\n3. export of a {size:.3g}-point table (absorption, refractive index)")
    with tempfile.TemporaryDirectory() as folder:
        for name in ("t.csv", "t.json", "t.nc"):
            path = Path(folder) / name
            start = time.perf_counter()
            written = export.write(data, path)
            seconds = time.perf_counter() - start
            total = sum(p.stat().st_size for p in written)
            print(
                f"   {name[2:]:5s} {seconds:6.2f} s   {total / 1e6:7.1f} MB"
                + (f" (incl. {written[1].name})" if len(written) > 1 else "")
            )


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--points", type=float, default=1e7)
    parser.add_argument("--export-points", type=float, default=1e6)
    parser.add_argument(
        "--chunks", default="500,2000,5000", help="chunk sizes along the first axis for the sweep"
    )
    parser.add_argument("--no-cluster", action="store_true")
    args = parser.parse_args()
    import matprops

    print(
        f"numpy {np.__version__}; {os.cpu_count()} cores; OPENBLAS_CORETYPE="
        f"{os.environ.get('OPENBLAS_CORETYPE', '(unset)')}, OPENBLAS_L2_SIZE="
        f"{os.environ.get('OPENBLAS_L2_SIZE', '(unset)')}"
    )
    si = matprops.silicon()
    table_versus_kernels(si, int(args.points))
    if not args.no_cluster:
        cluster_sweep(si, int(args.points), [int(c) for c in args.chunks.split(",")])
    exports(si, int(args.export_points))


if __name__ == "__main__":
    main()
