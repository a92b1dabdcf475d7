"""Tables against the same bound kernels on numpy arrays (benchmarks).

    python benchmarks/run.py --only tables [--quick]

1. A small table, as a sweep asks for many: ``si.table`` of five quantities (band gap,
   intrinsic density, densities of states, lattice constant, thermal expansion) at
   1000 temperatures, against the same bound kernels called on the temperature array
   (the work of the numbers; the table adds coordinates, units and provenance). Goal:
   within 2x.
2. A large table: the same five quantities x the absorption and refractive index on a
   temperature x wavelength grid (1e6 points; 1e5 with ``--quick``), against the
   kernels on the broadcast grid. Goal: within 1.5x, peak memory within 2x of the result.
"""

from __future__ import annotations

import warnings

import numpy as np
from harness import compare, peak_memory

import matprops

SMALL = ("band_gap", "intrinsic_density", "densities_of_states", "lattice_constant")
FIFTH = "thermal_expansion"


def run(bench):
    bench.section("tables: si.table against the bound kernels on the same grid")
    si = matprops.silicon()
    t = np.linspace(250.0, 450.0, 1000)
    kernels = [si.kernel(q) for q in SMALL]
    fifth = si.kernel(FIFTH)
    quantities = [*SMALL, FIFTH]

    def by_kernels():
        return [k(t) for k in kernels] + [fifth(t)]

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        si.table(quantities, temperature=t)
        table_s, kernels_s = compare(
            lambda: si.table(quantities, temperature=t),
            by_kernels,
            budget=0.5 if bench.quick else 2.0,
        )
        bench.row(
            "tables",
            "si.table, 5 quantities x 1000 T",
            5000,
            table_s,
            kernels_s,
            goal=2.0,
            note="table / kernels",
        )
        points = 100_000 if bench.quick else 1_000_000
        n_lam = 1000
        lam = np.linspace(400.0, 1100.0, n_lam)
        temps = np.linspace(250.0, 400.0, points // n_lam)
        grid = {"temperature": temps, "wavelength": lam}
        optical = ["absorption", "refractive_index", *SMALL]
        absorption, index = si.kernel("absorption"), si.kernel("refractive_index")

        def grid_kernels():
            tt, ll = temps[:, None], lam[None, :]
            return [absorption(ll, tt), index(ll, tt)] + [k(temps) for k in kernels]

        si.table(optical, **grid)
        table_s, kernels_s = compare(
            lambda: si.table(optical, **grid), grid_kernels, budget=1.0 if bench.quick else 4.0
        )
        bench.row(
            "tables",
            f"si.table, T x lambda grid ({len(optical)} quantities)",
            points,
            table_s,
            kernels_s,
            goal=1.5,
            note="table / kernels",
        )
        peak, data = peak_memory(lambda: si.table(optical, **grid))
        result = sum(v.nbytes for v in data.data_vars.values())
        bench.row(
            "tables",
            "si.table peak memory / result",
            points,
            peak / result,
            None,
            goal=2.0,
            note="peak / result",
        )


SECTIONS = {"tables": run}
