"""Bound kernels and the public API against numpy written by hand (benchmarks).

    python benchmarks/run.py --only kernels,api,derivatives [--quick]

1. kernels: every bound kernel of the newest release against the same formula written by
   hand (:mod:`hand`: Horner, integer powers, tables built once), or the same table
   interpolation (one ``np.interp`` of the row at T; searchsorted and four corners for
   scattered pairs; rows blended then interpolated for a wavelength x temperature grid).
   Each hand version is checked to give the kernel's numbers first. Goal: within 1.1x.
2. api: the public method (``si.band_gap(T)`` ...) against its bound kernel on the same
   arrays. Goal: within 1.5x.
3. derivatives: ``kernel.derivatives`` against the value alone, into arrays kept between
   calls (``out=``). Goal: at most 3x.
"""

from __future__ import annotations

import warnings

import hand
import numpy as np
from harness import compare

import matprops
from matprops.kernels.constants import BOLTZMANN_EV


class Case:
    """One bound kernel: inputs of a given size, the kernel call, the hand version, the
    public API call (or None)."""

    def __init__(self, name, make, kernel, by_hand, api=None, note="", largest=None):
        self.name, self.make, self.kernel, self.by_hand, self.api = name, make, kernel, by_hand, api
        self.note, self.largest = note, largest


def cases(si):
    rng = np.random.default_rng(12)
    c = hand.coefficients

    def temperatures(size):
        return {"T": rng.uniform(230.0, 480.0, size)}

    def doped(size):
        return {
            "T": rng.uniform(250.0, 450.0, size),
            "Nd": 10 ** rng.uniform(14, 20, size),
            "Na": 10 ** rng.uniform(13, 19, size),
            "n": 10 ** rng.uniform(10, 20, size),
            "p": 10 ** rng.uniform(3, 19, size),
        }

    def lifetimes(size):
        return {
            "T": np.full(size, 300.0),
            "n0": 10 ** rng.uniform(14, 19, size),
            "p0": 10 ** rng.uniform(2, 6, size),
            "dn": 10 ** rng.uniform(12, 17, size),
        }

    found = []

    def add(*args, **kwargs):
        found.append(Case(*args, **kwargs))

    gap, c_gap = si.kernel("band_gap"), c(si.model("band_gap"))
    add(
        "band_gap (passler-2002)",
        temperatures,
        lambda a: gap(a["T"]),
        lambda a: hand.passler(a["T"], c_gap),
        lambda a: si.band_gap(a["T"]),
    )
    states, c_states = si.kernel("densities_of_states"), c(si.model("densities_of_states"))
    add(
        "densities_of_states (couderc-2014)",
        temperatures,
        lambda a: states(a["T"]),
        lambda a: hand.couderc_states(a["T"], c_states),
        lambda a: si.densities_of_states(a["T"]),
    )
    ni, c_ni = si.kernel("intrinsic_density"), c(si.model("intrinsic_density"))
    add(
        "intrinsic_density (couderc-2014)",
        temperatures,
        lambda a: ni(a["T"]),
        lambda a: hand.couderc_ni(a["T"], c_ni),
        lambda a: si.intrinsic_density(a["T"]),
    )
    lattice, c_lat = si.kernel("lattice_constant"), c(si.model("lattice_constant"))
    add(
        "lattice_constant (okada-1984)",
        temperatures,
        lambda a: lattice(a["T"]),
        lambda a: hand.okada(a["T"], c_lat),
        lambda a: si.lattice_constant(a["T"]),
        note="API in nm",
    )
    b, c_b = si.kernel("radiative_coefficient"), c(si.model("radiative_coefficient"))
    add(
        f"radiative_coefficient ({si.models['radiative_coefficient']})",
        temperatures,
        lambda a: b(a["T"]),
        # a constant model: the array filled; a B(T) table: log B interpolated by np.interp
        (lambda a: np.full(a["T"].shape, c_b["coefficient"]))
        if "coefficient" in c_b
        else (lambda a: hand.log_linear_table(a["T"], c_b)),
        lambda a: si.radiative_coefficient(a["T"]),
    )
    narrowing, c_bgn = si.kernel("gap_narrowing"), c(si.model("gap_narrowing"))
    add(
        "gap_narrowing (schenk-1998, n, p given)",
        doped,
        lambda a: narrowing(a["T"], Nd=a["Nd"], Na=a["Na"], n=a["n"], p=a["p"]),
        lambda a: hand.schenk(a["T"], a["Nd"], a["Na"], a["n"], a["p"], c_bgn),
        lambda a: si.band_edge_shifts(a["T"], Na=a["Na"], Nd=a["Nd"], n=a["n"], p=a["p"]),
    )
    eff = si.kernel("effective_intrinsic_density")

    def hand_eff(a):
        dec, dev = hand.schenk(a["T"], a["Nd"], a["Na"], a["n"], a["p"], c_bgn)
        return hand.couderc_ni(a["T"], c_ni) * np.exp((dec + dev) / (2.0 * BOLTZMANN_EV * a["T"]))

    add(
        "effective_intrinsic_density (n, p given)",
        doped,
        lambda a: eff(a["T"], Nd=a["Nd"], Na=a["Na"], n=a["n"], p=a["p"]),
        hand_eff,
        lambda a: si.effective_intrinsic_density(
            a["T"], Na=a["Na"], Nd=a["Nd"], n=a["n"], p=a["p"]
        ),
    )
    level = si.kernel("ionisation", dopant="phosphorus")
    c_level = c(si.model("ionisation").select("phosphorus"))
    add(
        "ionisation (altermatt-2006, phosphorus)",
        lambda size: {"N": 10 ** rng.uniform(13, 20, size)},
        lambda a: level(N=a["N"]),
        lambda a: hand.lowered_level(a["N"], c_level),
        lambda a: si.dopant_level(a["N"], "phosphorus"),
    )
    tau, c_tau = si.kernel("intrinsic_lifetime"), c(si.model("intrinsic_lifetime"))
    add(
        f"intrinsic_lifetime ({si.models['intrinsic_lifetime']}, n0, p0 given)",
        lifetimes,
        lambda a: tau(a["T"], n0=a["n0"], p0=a["p0"], excess=a["dn"]),
        (lambda a: hand.richter(a["n0"], a["p0"], a["dn"], c_tau))
        if si.models["intrinsic_lifetime"] == "richter-2012"
        else None,
        lambda a: si.intrinsic_lifetime(a["T"], n0=a["n0"], p0=a["p0"], excess=a["dn"]),
    )
    srh = si.kernel("srh_lifetime")

    def srh_inputs(size):
        return {
            "dn": 10 ** rng.uniform(12, 17, size),
            "n0": 10 ** rng.uniform(14, 19, size),
            "p0": 10 ** rng.uniform(2, 6, size),
            "n1": 10 ** rng.uniform(5, 12, size),
            "p1": 10 ** rng.uniform(5, 12, size),
            "tn": rng.uniform(1e-6, 1e-3, size),
            "tp": rng.uniform(1e-6, 1e-3, size),
        }

    keys = ("dn", "n0", "p0", "n1", "p1", "tn", "tp")  # in the order of srh.inputs
    srh_names = tuple(srh.inputs)
    add(
        "srh_lifetime (shockley-1952)",
        srh_inputs,
        lambda a: srh(**{name: a[k] for name, k in zip(srh_names, keys, strict=True)}),
        lambda a: hand.srh(*(a[k] for k in keys)),
    )
    vth = si.kernel("thermal_velocity", carrier="electron")
    c_vth = c(si.model("thermal_velocity").select("electron"))
    add(
        "thermal_velocity (green-1990, electron)",
        temperatures,
        lambda a: vth(a["T"]),
        lambda a: hand.thermal_velocity(a["T"], c_vth),
        lambda a: si.thermal_velocity("electron", a["T"]),
    )
    fca, c_fca = si.kernel("free_carrier_absorption"), c(si.model("free_carrier_absorption"))

    def fca_inputs(size):
        return {
            "lam": rng.uniform(1400.0, 13000.0, size),
            "n": 10 ** rng.uniform(16, 20, size),
            "p": 10 ** rng.uniform(16, 20, size),
        }

    add(
        "free_carrier_absorption (nedeljkovic-2011)",
        fca_inputs,
        lambda a: fca(a["lam"], n=a["n"], p=a["p"]),
        lambda a: hand.fca(a["lam"], a["n"], a["p"], c_fca),
        lambda a: si.free_carrier_absorption(a["lam"], n=a["n"], p=a["p"]),
    )
    for carrier in ("electron", "hole"):
        mobility = si.kernel("mobility", carrier=carrier)
        c_mu = c(si._mobility_model(carrier, "phosphorus", "boron"))
        add(
            f"mobility (klaassen-1992, {carrier}, n, p given)",
            doped,
            lambda a, k=mobility: k(a["T"], Nd=a["Nd"], Na=a["Na"], n=a["n"], p=a["p"]),
            lambda a, c=c_mu: hand.klaassen(a["T"], a["Nd"], a["Na"], a["n"], a["p"], c),
            lambda a, carrier=carrier: si.mobility(
                carrier, a["T"], Na=a["Na"], Nd=a["Nd"], n=a["n"], p=a["p"]
            ),
        )
    vsat = si.kernel("saturation_velocity", carrier="electron")
    c_sat = c(si.model("saturation_velocity").select("electron"))
    add(
        "saturation_velocity (jacoboni-1977, electron)",
        temperatures,
        lambda a: vsat(a["T"]),
        lambda a: hand.power_law(a["T"], c_sat),
        lambda a: si.saturation_velocity("electron", a["T"]),
    )
    rho = si.kernel("standard_resistivity", dopant="boron")
    c_rho = c(si.model("standard_resistivity").select("boron"))
    add(
        "standard_resistivity (thurber-1981, boron)",
        lambda size: {"T": np.full(size, 296.15), "N": 10 ** rng.uniform(13, 20, size)},
        lambda a: rho(a["T"], N=a["N"]),
        lambda a: hand.rational_resistivity(a["N"], c_rho),
    )

    # optical tables: the combined model's prepared table, handed to the hand versions
    for quantity in ("absorption", "refractive_index"):
        kernel = si.kernel(quantity)
        kernel(800.0, 300.0)
        table = si.model(quantity).function._function
        grid, temps, values = table.wavelength_grid, table.temperature_grid, table.values
        finish = np.exp if table.exponentiate else (lambda x: x)
        method = getattr(si, quantity)
        add(
            f"{quantity}, sorted spectrum at one T",
            lambda size: {"lam": np.linspace(300.0, 1150.0, size), "T": 312.0},
            lambda a, k=kernel: k(a["lam"], a["T"]),
            lambda a, t=table, g=grid, f=finish: f(np.interp(a["lam"], g, t._row(a["T"]))),
            lambda a, m=method: m(a["lam"], a["T"]),
            note="hand: one np.interp of the row at T",
        )
        add(
            f"{quantity}, scattered (lambda, T) pairs",
            lambda size: {
                "lam": rng.uniform(300.0, 1150.0, size),
                "T": rng.uniform(250.0, 450.0, size),
            },
            lambda a, k=kernel: k(a["lam"], a["T"]),
            lambda a, g=grid, t=temps, v=values, f=finish: f(
                hand.bilinear(a["lam"], a["T"], g, t, v)
            ),
            lambda a, m=method: m(a["lam"], a["T"]),
            note="hand: searchsorted + four corners",
        )

        def grid_inputs(size):
            m = round(np.sqrt(size))
            return {
                "lam": np.linspace(300.0, 1150.0, m)[None, :],
                "T": np.linspace(250.0, 450.0, max(1, size // m))[:, None],
            }

        add(
            f"{quantity}, grid T x lambda",
            grid_inputs,
            lambda a, k=kernel: k(a["lam"], a["T"]),
            lambda a, g=grid, t=temps, v=values, f=finish: f(
                hand.rows_then_interp(a["lam"][0], a["T"][:, 0], g, t, v)
            ),
            lambda a, m=method: m(a["lam"], a["T"]),
            note="hand: each T's row blended, one np.interp per T",
        )
    return found


def _parts(value):
    if isinstance(value, dict):
        return tuple(value.values())
    value = tuple(value) if isinstance(value, tuple) else (value,)
    return tuple(np.asarray(getattr(v, "magnitude", v)) for v in value)


def agreement(case, inputs):
    """Largest relative difference between the kernel and the hand version."""
    worst = 0.0
    for a, b in zip(_parts(case.kernel(inputs)), _parts(case.by_hand(inputs)), strict=True):
        a, b = np.broadcast_arrays(a, b)
        ok = np.isfinite(b) & (b != 0)
        if ok.any():
            worst = max(worst, float(np.max(np.abs(a[ok] / b[ok] - 1.0))))
    return worst


def _points(inputs):
    return int(np.prod(np.broadcast_shapes(*(np.shape(v) for v in inputs.values()))))


def run_kernels(bench):
    bench.section("kernels: bound kernel against the same formula by hand in numpy")
    si = matprops.silicon()
    sizes = (100_000,) if bench.quick else (1_000, 100_000, 10_000_000)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        for case in cases(si):
            if case.by_hand is None:
                continue
            for size in sizes:
                inputs = case.make(size)
                points = _points(inputs)
                worst = agreement(case, inputs) if size <= 100_000 else None
                if worst is not None and worst > 1e-12:
                    bench.info(f"{case.name}: hand and kernel differ by {worst:.1e}: not timed")
                    continue
                ours, theirs = compare(
                    lambda i=inputs, c=case: c.kernel(i),
                    lambda i=inputs, c=case: c.by_hand(i),
                    budget=0.2 if bench.quick else 1.0,
                )
                bench.row(
                    "kernels",
                    case.name,
                    points,
                    ours,
                    theirs,
                    goal=1.1 if size >= 100_000 else None,
                    note=case.note or (f"agree {worst:.0e}" if worst is not None else ""),
                )


def run_api(bench):
    bench.section("api: public method against its bound kernel (same arrays)")
    si = matprops.silicon()
    sizes = (100_000,) if bench.quick else (100_000, 10_000_000)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        for case in cases(si):
            if case.api is None:
                continue
            for size in sizes:
                inputs = case.make(size)
                ours, theirs = compare(
                    lambda i=inputs, c=case: c.api(i),
                    lambda i=inputs, c=case: c.kernel(i),
                    budget=0.2 if bench.quick else 1.0,
                )
                bench.row(
                    "api", case.name, _points(inputs), ours, theirs, goal=1.5, note="API / kernel"
                )


def run_derivatives(bench):
    size = 100_000
    bench.section(f"derivatives: kernel.derivatives(out=) against the value alone ({size:.0e})")
    si = matprops.silicon()
    rng = np.random.default_rng(5)
    t = rng.uniform(250.0, 450.0, size)
    doped = (
        t,
        10 ** rng.uniform(14, 20, size),
        10 ** rng.uniform(13, 19, size),
        10 ** rng.uniform(10, 20, size),
        10 ** rng.uniform(3, 19, size),
    )
    life = (
        np.full(size, 300.0),
        10 ** rng.uniform(14, 19, size),
        10 ** rng.uniform(2, 6, size),
        10 ** rng.uniform(12, 17, size),
    )
    rows = [
        ("band_gap", {}, (t,)),
        ("densities_of_states", {}, (t,)),
        ("intrinsic_density", {}, (t,)),
        ("gap_narrowing", {}, doped),
        ("effective_intrinsic_density", {}, doped),
        ("intrinsic_lifetime", {}, life),
        ("mobility", {"carrier": "electron"}, doped),
    ]
    for name, fixed, args in rows:
        kernel = si.kernel(name, **fixed)
        args = dict(zip(kernel.inputs, args, strict=True))  # densities go by name
        value, partials = kernel.derivatives(**args)
        kept = (value, partials)
        ours, theirs = compare(
            lambda k=kernel, a=args, o=kept: k.derivatives(**a, out=o),
            lambda k=kernel, a=args: k(**a),
            budget=0.2 if bench.quick else 1.0,
        )
        bench.row(
            "derivatives",
            f"{name} {fixed or ''}".strip(),
            size,
            ours,
            theirs,
            goal=3.0,
            note="derivatives / value",
        )


SECTIONS = {"kernels": run_kernels, "api": run_api, "derivatives": run_derivatives}
