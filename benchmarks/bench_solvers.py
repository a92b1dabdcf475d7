"""The inverse problems against lean per-point brentq loops (benchmarks).

    python benchmarks/run.py --only solvers [--quick]

1. Equilibrium (Fermi-Dirac statistics, Schenk's narrowing carried self-consistently,
   Altermatt's dopant levels) on random (T, Nd, Na) points: the bound kernel and the
   public method against :func:`lean.equilibrium_loop` (a float brentq per point, the
   narrowing by a fixed point around it). Time per point of each, on the same points
   (the loop on the first ones); the answers compared there. Goal: >= 300x, agreeing to
   1e-10.
2. Doping from resistivity (boron, phosphorus) against :func:`lean.resistivity_loop`
   (brentq in ln N around a float equilibrium and Klaassen's mobility). Goal: >= 300x,
   agreeing to 1e-10.

The loop's time per point is steady, so it runs on a sample; both sides alternate.
"""

from __future__ import annotations

import time
import warnings

import lean
import numpy as np
from harness import compare

import matprops


def _points(count, seed=1):
    rng = np.random.default_rng(seed)
    T = rng.uniform(250.0, 450.0, count)
    Nd = 10 ** rng.uniform(13.0, 20.0, count)
    Na = 10 ** rng.uniform(13.0, 20.0, count)
    Na[::5] = 0.0  # singly doped points among the compensated ones
    Nd[1::5] = 0.0
    return T, Nd, Na


def run_equilibrium(bench):
    bench.section("solvers: equilibrium against a lean float brentq loop")
    si = matprops.silicon()
    size, sample = (20_000, 60) if bench.quick else (200_000, 400)
    T, Nd, Na = _points(size)
    kernel = si.kernel("equilibrium")
    kernel(T[:10], Nd=Nd[:10], Na=Na[:10])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        loop, vectorised, api = compare(
            lambda: lean.equilibrium_loop(si, T[:sample], Nd[:sample], Na[:sample]),
            lambda: kernel(T, Nd=Nd, Na=Na),
            lambda: si.equilibrium(T, Nd=Nd, Na=Na),
            rounds=2,
            budget=1.0 if bench.quick else 10.0,
        )
        n, p = lean.equilibrium_loop(si, T[:sample], Nd[:sample], Na[:sample])
        state = kernel(T[:sample], Nd=Nd[:sample], Na=Na[:sample])
    worst = max(
        float(np.max(np.abs(state["electron_density"] / n - 1.0))),
        float(np.max(np.abs(state["hole_density"] / p - 1.0))),
    )
    per_point = loop / sample
    bench.info(
        f"lean loop {per_point * 1e6:.1f} us/point ({sample} points); largest relative "
        f"difference of n and p there {worst:.1e} (goal 1e-10)"
    )
    bench.row(
        "solvers",
        "equilibrium, bound kernel",
        size,
        vectorised / size,
        per_point,
        goal=300,
        higher=True,
        note="loop / kernel, per point",
    )
    bench.row(
        "solvers",
        "equilibrium, public method",
        size,
        api / size,
        per_point,
        goal=300,
        higher=True,
        note="loop / method, per point",
    )
    bench.row(
        "solvers",
        "equilibrium agreement with the loop",
        sample,
        worst,
        None,
        goal=1e-10,
        note="largest relative difference of n, p",
    )


def run_doping(bench):
    bench.section("solvers: doping from resistivity against a lean float brentq loop")
    si = matprops.silicon()
    size, sample = (4_000, 8) if bench.quick else (50_000, 60)
    rng = np.random.default_rng(3)
    rho = 10 ** rng.uniform(-2.5, 3.0, size)
    T = rng.uniform(250.0, 400.0, size)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        for dopant in ("boron", "phosphorus"):
            start = time.perf_counter()
            loop, vectorised = compare(
                lambda d=dopant: lean.resistivity_loop(si, rho[:sample], T[:sample], d),
                lambda d=dopant: si.doping_from_resistivity(rho, T, d, conversion="physics"),
                rounds=2,
                budget=1.0 if bench.quick else 10.0,
            )
            found = si.doping_from_resistivity(
                rho[:sample], T[:sample], dopant, conversion="physics"
            ).m_as("cm^-3")
            expected = lean.resistivity_loop(si, rho[:sample], T[:sample], dopant)
            worst = float(np.max(np.abs(found / expected - 1.0)))
            per_point = loop / sample
            bench.info(
                f"{dopant}: lean loop {per_point * 1e3:.2f} ms/point ({sample} points); "
                f"largest relative difference {worst:.1e}; "
                f"{time.perf_counter() - start:.0f} s"
            )
            bench.row(
                "solvers",
                f"doping from resistivity ({dopant})",
                size,
                vectorised / size,
                per_point,
                goal=300,
                higher=True,
                note="loop / method, per point",
            )
            bench.row(
                "solvers",
                f"doping from resistivity ({dopant}) agreement",
                sample,
                worst,
                None,
                goal=1e-10,
                note="largest relative difference of N",
            )


SECTIONS = {"equilibrium": run_equilibrium, "doping": run_doping}
