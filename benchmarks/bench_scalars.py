"""Scalar calls of every public method against their floor (benchmarks).

    python benchmarks/run.py --only scalars [--quick]

A simulation code or a sweep calls a method many times with one number. The floor of a
call is the work it cannot avoid: the bound kernels of the same models called with the
same plain numbers (a solve included where the method solves one), and one pint
quantity made for each output. Each method is timed with plain numbers and with pint
quantities for its inputs (``Q_(300, "K")``, ``Q_(1e16, "cm^-3")``; ``degC`` for one
row); goal: within 3x of the floor.
"""

from __future__ import annotations

import warnings

from harness import compare

import matprops
from matprops.units import Q_, quantity

K = "K"


def _q(value, units):
    return Q_(value, units)


def rows(si):
    """(name, floor, plain call, quantity call)."""
    k = si.kernel
    gap, dos, ni = k("band_gap"), k("densities_of_states"), k("intrinsic_density")
    bgn, eff = k("gap_narrowing"), k("effective_intrinsic_density")
    level, eq = k("ionisation", dopant="phosphorus"), k("equilibrium")
    lattice, expansion = k("lattice_constant"), k("thermal_expansion")
    absorption, index = k("absorption"), k("refractive_index")
    fca, radiative, tau = (
        k("free_carrier_absorption"),
        k("radiative_coefficient"),
        k("intrinsic_lifetime"),
    )
    vth, vsat = (
        k("thermal_velocity", carrier="electron"),
        k("saturation_velocity", carrier="electron"),
    )
    mu_e, mu_h = k("mobility", carrier="electron"), k("mobility", carrier="hole")
    hfm = k("high_field_mobility", carrier="electron")
    T, TQ = 300.0, _q(300.0, K)
    N, NQ = 1e16, _q(1e16, "cm^-3")
    nm, nmQ = 800.0, _q(0.8, "um")
    # quantities made once, outside the timed calls (as a simulation code would keep them)
    P4 = _q(1e4, "cm^-3")
    X15 = _q(1e15, "cm^-3")
    N18 = _q(1e18, "cm^-3")
    UM = _q(1.5, "um")
    FIELD = _q(10.0, "kV/cm")
    solve_args = {"temperature": T, "donor_density": N, "acceptor_density": 0.0}

    def mobility_floor():
        state = eq(**solve_args)
        return quantity(
            mu_e(T, Nd=N, Na=0.0, n=state["electron_density"], p=state["hole_density"]),
            "cm^2/(V*s)",
        )

    def resistivity_floor():
        state = eq(**solve_args)
        n, p = state["electron_density"], state["hole_density"]
        sigma = 1.602176634e-19 * (
            n * mu_e(T, Nd=N, Na=0.0, n=n, p=p) + p * mu_h(T, Nd=N, Na=0.0, n=n, p=p)
        )
        return quantity(1.0 / sigma, "ohm*cm")

    return [
        (
            "band_gap",
            lambda: quantity(gap(T), "eV"),
            lambda: si.band_gap(T),
            lambda: si.band_gap(TQ),
        ),
        (
            "band_gap (degC input)",
            lambda: quantity(gap(T), "eV"),
            lambda: si.band_gap(T),
            lambda: si.band_gap(_DEGC),
        ),
        (
            "densities_of_states",
            lambda: [quantity(x, "cm^-3") for x in dos(T)],
            lambda: si.densities_of_states(T),
            lambda: si.densities_of_states(TQ),
        ),
        (
            "intrinsic_density",
            lambda: quantity(ni(T), "cm^-3"),
            lambda: si.intrinsic_density(T),
            lambda: si.intrinsic_density(TQ),
        ),
        (
            "band_edge_shifts (n, p given)",
            lambda: [quantity(x, "eV") for x in bgn(T, Nd=N, Na=0.0, n=N, p=1e4)],
            lambda: si.band_edge_shifts(T, Nd=N, n=N, p=1e4),
            lambda: si.band_edge_shifts(TQ, Nd=NQ, n=NQ, p=P4),
        ),
        (
            "effective_intrinsic_density (n, p given)",
            lambda: quantity(eff(T, Nd=N, Na=0.0, n=N, p=1e4), "cm^-3"),
            lambda: si.effective_intrinsic_density(T, Nd=N, n=N, p=1e4),
            lambda: si.effective_intrinsic_density(TQ, Nd=NQ, n=NQ, p=P4),
        ),
        (
            "dopant_level",
            lambda: [quantity(x, "eV") for x in level(N=N)],
            lambda: si.dopant_level(N),
            lambda: si.dopant_level(NQ),
        ),
        (
            "equilibrium",
            lambda: [quantity(v, "cm^-3") for v in eq(**solve_args).values()],
            lambda: si.equilibrium(T, Nd=N),
            lambda: si.equilibrium(TQ, Nd=NQ),
        ),
        (
            "lattice_constant",
            lambda: quantity(lattice(T) * 1e7, "nm"),
            lambda: si.lattice_constant(T),
            lambda: si.lattice_constant(TQ),
        ),
        (
            "thermal_expansion",
            lambda: quantity(expansion(T), "1/K"),
            lambda: si.thermal_expansion(T),
            lambda: si.thermal_expansion(TQ),
        ),
        (
            "density",
            lambda: quantity(lattice(T), "g/cm^3"),
            lambda: si.density(T),
            lambda: si.density(TQ),
        ),
        (
            "absorption",
            lambda: quantity(absorption(nm, T), "1/cm"),
            lambda: si.absorption(nm, T),
            lambda: si.absorption(nmQ, TQ),
        ),
        (
            "refractive_index",
            lambda: quantity(index(nm, T), "dimensionless"),
            lambda: si.refractive_index(nm, T),
            lambda: si.refractive_index(nmQ, TQ),
        ),
        (
            "free_carrier_absorption",
            lambda: quantity(fca(1500.0, n=1e18, p=0.0), "1/cm"),
            lambda: si.free_carrier_absorption(1500.0, n=1e18),
            lambda: si.free_carrier_absorption(UM, n=N18),
        ),
        (
            "radiative_coefficient",
            lambda: quantity(radiative(T), "cm^3/s"),
            lambda: si.radiative_coefficient(T),
            lambda: si.radiative_coefficient(TQ),
        ),
        (
            "intrinsic_lifetime (n0, p0 given)",
            lambda: quantity(tau(T, n0=1e16, p0=1e4, excess=1e15), "s"),
            lambda: si.intrinsic_lifetime(T, n0=1e16, p0=1e4, excess=1e15),
            lambda: si.intrinsic_lifetime(TQ, n0=NQ, p0=P4, excess=X15),
        ),
        (
            "intrinsic_lifetime (n0, p0 solved)",
            lambda: quantity(
                tau(T, n0=eq(**solve_args)["electron_density"], p0=1e4, excess=1e15), "s"
            ),
            lambda: si.intrinsic_lifetime(T, Nd=N, excess=1e15),
            lambda: si.intrinsic_lifetime(TQ, Nd=NQ, excess=X15),
        ),
        (
            "thermal_velocity",
            lambda: quantity(vth(T), "cm/s"),
            lambda: si.thermal_velocity("electron", T),
            lambda: si.thermal_velocity("electron", TQ),
        ),
        (
            "saturation_velocity",
            lambda: quantity(vsat(T), "cm/s"),
            lambda: si.saturation_velocity("electron", T),
            lambda: si.saturation_velocity("electron", TQ),
        ),
        (
            "mobility (n, p given)",
            lambda: quantity(mu_e(T, Nd=N, Na=0.0, n=N, p=1e4), "cm^2/(V*s)"),
            lambda: si.mobility("electron", T, Nd=N, n=N, p=1e4),
            lambda: si.mobility("electron", TQ, Nd=NQ, n=NQ, p=P4),
        ),
        (
            "mobility (n, p solved)",
            mobility_floor,
            lambda: si.mobility("electron", T, Nd=N),
            lambda: si.mobility("electron", TQ, Nd=NQ),
        ),
        (
            "high_field_mobility (n, p given)",
            lambda: quantity(hfm(1e4, T, mu_e(T, Nd=N, Na=0.0, n=N, p=1e4), vsat(T)), "cm^2/(V*s)"),
            lambda: si.high_field_mobility("electron", 1e4, T, Nd=N, n=N, p=1e4),
            lambda: si.high_field_mobility("electron", FIELD, TQ, Nd=NQ, n=NQ, p=P4),
        ),
        (
            "resistivity",
            resistivity_floor,
            lambda: si.resistivity(T, Nd=N),
            lambda: si.resistivity(TQ, Nd=NQ),
        ),
        (
            "conductivity",
            resistivity_floor,
            lambda: si.conductivity(T, Nd=N),
            lambda: si.conductivity(TQ, Nd=NQ),
        ),
    ]


_DEGC = Q_(26.85, "degC")


def run(bench):
    bench.section("scalars: one-number calls of the public methods against their floor")
    bench.info(
        "floor: the bound kernels of the same models on the same plain numbers (the "
        "solve included where the method solves) + one quantity per output"
    )
    si = matprops.silicon()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        for name, floor, plain, with_units in rows(si):
            floor_s, plain_s, units_s = compare(
                floor, plain, with_units, budget=0.08 if bench.quick else 0.5
            )
            bench.row(
                "scalars",
                f"{name}, plain numbers",
                1,
                plain_s,
                floor_s,
                goal=3.0,
                note="method / floor",
            )
            bench.row(
                "scalars",
                f"{name}, pint quantities",
                1,
                units_s,
                floor_s,
                goal=3.0,
                note="method / floor",
            )


SECTIONS = {"scalars": run}
