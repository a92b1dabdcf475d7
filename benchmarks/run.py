"""Run the benchmarks (on demand, and ``--quick`` in CI; not tests: nothing is asserted).

    python benchmarks/run.py [--quick] [--only SECTION,...] [--json FILE]

Sections (in this order; see each module's docstring for what is compared with what):

    kernels, api, derivatives   bench_kernels.py    bound kernels against numpy by hand;
                                                    methods against kernels; derivatives
    scalars                     bench_scalars.py    one-number calls against their floor
    equilibrium, doping         bench_solvers.py    solvers against lean brentq loops
    memory                      bench_memory.py     peak memory over result, linear cost
    workers                     bench_workers.py    threads over blocks against one
    tables                      bench_tables.py     si.table and optical grids
    fermi_dirac                 bench_fermi_dirac.py  F_1/2 against np.exp
    startup                     bench_startup.py    first call in fresh processes

``--quick`` (under two minutes on the 2-core machine this project is measured on) uses
small sizes and short rounds; the full run takes a few tens of minutes. ``--json``
writes every figure (and the machine's facts) for the README's table.
"""

from __future__ import annotations

import argparse
import os
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

import bench_fermi_dirac
import bench_kernels
import bench_memory
import bench_scalars
import bench_solvers
import bench_startup
import bench_tables
import bench_workers
from harness import Bench

MODULES = (
    bench_kernels,
    bench_scalars,
    bench_solvers,
    bench_memory,
    bench_workers,
    bench_tables,
    bench_fermi_dirac,
    bench_startup,
)


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="small sizes (CI): < 2 minutes")
    parser.add_argument("--only", default="", help="comma-separated section names")
    parser.add_argument("--json", default=None, help="write every figure to this file")
    args = parser.parse_args(argv)
    sections = {}
    for module in MODULES:
        sections.update(module.SECTIONS)
    chosen = [s for s in args.only.split(",") if s] or list(sections)
    unknown = [s for s in chosen if s not in sections]
    if unknown:
        parser.error(f"unknown section(s) {unknown}; known: {', '.join(sections)}")
    bench = Bench(quick=args.quick, json_path=args.json)
    bench.header()
    for name in chosen:
        sections[name](bench)
    bench.finish()
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
