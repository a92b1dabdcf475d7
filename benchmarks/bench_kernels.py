"""Benchmark (run on demand, not a test): the simulation-code door (bound kernels).

    python benchmarks/bench_kernels.py [--sizes 1e3,1e5,1e7] [--big] [--only NAME ...]

1. Every bound kernel of the newest release (``si.kernel(q)``) against the same formula
   or interpolation written by hand in numpy below (``np.interp`` for a spectrum at one
   temperature), at each size: ns per element of both, their ratio (target: within
   1.1x from 1e5 points up) and, beside them, ns per element of a copy of an array of
   the same size (the memory-bandwidth floor). Each hand version is checked first to
   give the kernel's numbers (1e-12 relative).
2. The public API (``si.band_gap(T)`` ...) against its bound kernel at 1e5 and 1e7
   points (target: within 1.5x).
3. Peak memory (tracemalloc; numpy reports its buffers to it) over the size of the
   result, and cost per element, at 1e7 and (``--big``) 1e8 points: bound kernels and
   the API (target: peak at most ~2x the result, cost linear).
4. Scalar calls: the API against the bound kernel (target: within 3x for closed-form
   quantities).
5. Derivatives: ``kernel.derivatives`` against the value alone at 1e5 points
   (target: at most 3x), with fresh result arrays and with arrays kept between calls
   (``out=``, as a simulation code reuses them every iteration).
6. Start-up in fresh processes (bytecode cached first): ``import numpy, pint``;
   pint's registry; ``matprops.silicon().band_gap(300)``; the first bound-kernel call.
7. The costs the door was built to bring down, re-measured beside the figures measured
   before it existed: absorption on a sorted spectrum at one temperature (208 ns per
   point against np.interp's 15), on (wavelength, temperature) pairs (392 ns per point
   at 1e7, superlinear: 513), peak memory 7x (band gap) to 10x (absorption) the result.

Timings are the best of several runs in this one process; the machine has 2 cores and
is shared, so ratios (measured side by side) are the figures to read. Says whether
OPENBLAS_CORETYPE / OPENBLAS_L2_SIZE were set (on some processors they slow a current
numpy).
"""

from __future__ import annotations

import argparse
import gc
import os
import subprocess
import sys
import tempfile
import time
import tracemalloc
import warnings

import numpy as np

import matprops
from matprops.kernels.constants import BOLTZMANN_EV

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))  # bench_transport's expression

warnings.simplefilter("ignore", matprops.ValidityWarning)


def best_time(function, budget=0.6, repeat=None):
    """Best wall time of ``function()`` over repeats filling about ``budget`` seconds."""
    start = time.perf_counter()
    function()
    first = time.perf_counter() - start
    repeat = repeat or int(min(50, max(3, budget / max(first, 1e-7))))
    number = max(1, int(1e-3 / max(first, 1e-9)))  # group very short calls
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        for _ in range(number):
            function()
        times.append((time.perf_counter() - start) / number)
    return min(times)


def compare(*functions, budget=1.0):
    """Best wall times of several functions, measured in interleaved rounds (a, b, a,
    b, ...) so that a shared machine's slow spells fall on all of them alike."""
    first = []
    for function in functions:
        start = time.perf_counter()
        function()
        first.append(time.perf_counter() - start)
    rounds = int(min(40, max(3, budget / max(sum(first), 1e-7))))
    number = max(1, int(1e-3 / max(min(first), 1e-9)))
    best = [np.inf] * len(functions)
    for _ in range(rounds):
        for k, function in enumerate(functions):
            start = time.perf_counter()
            for _ in range(number):
                function()
            best[k] = min(best[k], (time.perf_counter() - start) / number)
    return best


def peak_memory(function):
    """(peak bytes traced during one call, result)."""
    gc.collect()
    tracemalloc.start()
    tracemalloc.reset_peak()
    result = function()
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    return peak, result


def nbytes(result):
    if isinstance(result, dict):
        return sum(np.asarray(v).nbytes for v in result.values())
    if isinstance(result, tuple):
        return sum(np.asarray(v).nbytes for v in result)
    return np.asarray(getattr(result, "magnitude", result)).nbytes


def coefficients(model):
    return {k: c.kernel_value for k, c in model.coefficients.items()}


# --------------------------------------------------------------------------- hand-written


def hand_passler(T, c):
    x = 2 * T / c["theta"]
    d2 = c["delta"] ** 2
    root = (
        1 + np.pi**2 * x**2 / (3 * (1 + d2)) + (3 * d2 - 1) * x**3 / 4 + 8 * x**4 / 3 + x**6
    ) ** (1 / 6)
    return c["gap_at_zero"] - c["alpha"] * c["theta"] * (
        (1 - 3 * d2) / np.expm1(c["theta"] / T) + 1.5 * d2 * (root - 1)
    )


def hand_couderc_states(T, c):
    t32 = c["prefactor"] * T**1.5
    return (
        t32 * np.polynomial.polynomial.polyval(T, c["conduction_polynomial"]),
        t32 * np.polynomial.polynomial.polyval(T, c["valence_polynomial"]),
    )


def hand_couderc_ni(T, c):
    gap = hand_passler(
        T,
        {
            "gap_at_zero": c["gap_at_zero"],
            "alpha": c["gap_alpha"],
            "theta": c["gap_theta"],
            "delta": c["gap_delta"],
        },
    )
    return c["prefactor"] * T ** c["exponent"] * np.exp(-gap / (2 * BOLTZMANN_EV * T))


def hand_okada(T, c):
    def f(x):
        return (
            c["c1"] * (x + np.exp(-c["c2"] * (x - c["onset_temperature"])) / c["c2"])
            + 0.5 * c["c3"] * x**2
        )

    return c["reference_lattice_constant"] * np.exp(f(T) - f(c["reference_temperature"]))


def hand_schenk(T, Nd, Na, n, p, c):
    """Schenk (1998): both band-edge shifts, as printed (dopant-screened ionic part)."""
    ry, a3 = c["exciton_rydberg"], c["exciton_radius"] ** 3
    t = BOLTZMANN_EV * T / ry
    n_, p_, nd, na = n * a3, p * a3, Nd * a3, Na * a3
    me, mh = c["electron_mass"], c["hole_mass"]
    ae, ah = mh / (me + mh), me / (me + mh)
    ns, mix, N, Np = n_ + p_, ae * n_ + ah * p_, nd + na, ae * nd + ah * na
    U = N**2 / t**3
    shifts = []
    for dens, g, al, s in (
        (n_, c["electron_degeneracy"], ae, "e"),
        (p_, c["hole_degeneracy"], ah, "h"),
    ):
        b, cc, d, pa = c[f"b_{s}"], c[f"c_{s}"], c[f"d_{s}"], c[f"p_{s}"]
        h, j, k, q = c[f"h_{s}"], c[f"j_{s}"], c[f"k_{s}"], c[f"q_{s}"]
        xc = -(
            (4 * np.pi) ** 3
            * ns**2
            * (np.cbrt(48 * dens / (np.pi * g)) + cc * np.log1p(d * mix**pa))
            + (8 * np.pi * al / g) * dens * t**2
            + np.sqrt(8 * np.pi * ns) * t**2.5
        ) / ((4 * np.pi) ** 3 * ns**2 + t**3 + b * np.sqrt(ns) * t**2 + 40 * ns**1.5 * t)
        ionic = (
            -N
            * (1 + U)
            / (
                np.sqrt(t * N / (2 * np.pi)) * (1 + h * np.log1p(np.sqrt(N) / t))
                + j * U * Np**0.75 * (1 + k * Np**q)
            )
        )
        shifts.append(-(xc + ionic) * ry)
    return tuple(shifts)


def hand_lowered_level(N, c):
    energy = c["energy_at_low_density"] / (1 + (N / c["energy_density"]) ** c["energy_exponent"])
    share = 1 / (1 + (N / c["merging_density"]) ** c["merging_exponent"])
    return energy, share


def hand_richter(n0, p0, dn, c):
    g_e = 1 + c["eeh_enhancement"] * (1 - np.tanh((n0 / c["eeh_density"]) ** c["eeh_exponent"]))
    g_h = 1 + c["ehh_enhancement"] * (1 - np.tanh((p0 / c["ehh_density"]) ** c["ehh_exponent"]))
    auger = (
        c["electron_coefficient"] * g_e * n0
        + c["hole_coefficient"] * g_h * p0
        + c["injection_coefficient"] * dn ** c["injection_exponent"]
    )
    return 1 / ((n0 + p0 + dn) * (auger + c["radiative_coefficient"]))


def hand_srh(dn, n0, p0, n1, p1, tn, tp):
    return (tp * (n0 + n1 + dn) + tn * (p0 + p1 + dn)) / (n0 + p0 + dn)


def hand_thermal_velocity(T, c):
    gap = c["gap_at_zero"] - c["gap_alpha"] * T**2 / (T + c["gap_beta"])
    m_t = (
        c["transverse_mass_at_zero"] * (c["gap_at_zero"] / gap) ** c["transverse_mass_gap_scaling"]
    )
    m_l = c["longitudinal_mass"]
    d = np.sqrt(1 - m_t / m_l)
    mass = 4 * m_l / (1 + np.sqrt(m_l / m_t) * np.arcsin(d) / d) ** 2
    from matprops.kernels.constants import BOLTZMANN_J, ELECTRON_MASS_KG

    return np.sqrt(8 * BOLTZMANN_J / (np.pi * ELECTRON_MASS_KG)) * 100 * np.sqrt(T / mass)


def hand_fca(lam, n, p, c):
    grid = np.log(c["wavelengths"])
    x = np.log(lam)

    def at(values):
        return np.interp(x, grid, values)

    return np.exp(at(np.log(c["electron_prefactors"]))) * n ** at(c["electron_exponents"]) + np.exp(
        at(np.log(c["hole_prefactors"]))
    ) * p ** at(c["hole_exponents"])


def hand_bilinear(lam, T, wavelengths, temperatures, values):
    """values[T, lambda] interpolated at (T, lambda) pairs, the usual way."""
    j = np.clip(np.searchsorted(wavelengths, lam, side="right") - 1, 0, wavelengths.size - 2)
    i = np.clip(np.searchsorted(temperatures, T, side="right") - 1, 0, temperatures.size - 2)
    v = (lam - wavelengths[j]) / (wavelengths[j + 1] - wavelengths[j])
    u = (T - temperatures[i]) / (temperatures[i + 1] - temperatures[i])
    return (1 - u) * ((1 - v) * values[i, j] + v * values[i, j + 1]) + u * (
        (1 - v) * values[i + 1, j] + v * values[i + 1, j + 1]
    )


# --------------------------------------------------------------------------- cases


class Case:
    """One bound kernel: inputs of a given size, the kernel call, the hand version, the
    public API call (or None)."""

    def __init__(self, name, make, kernel, hand, api=None, note="", largest=None):
        self.name, self.make, self.kernel, self.hand, self.api = name, make, kernel, hand, api
        self.note, self.largest = note, largest


def cases(si):
    rng = np.random.default_rng(12)

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
    gap = si.kernel("band_gap")
    c_gap = coefficients(si.model("band_gap"))
    found.append(
        Case(
            "band_gap (passler-2002)",
            temperatures,
            lambda a: gap(a["T"]),
            lambda a: hand_passler(a["T"], c_gap),
            lambda a: si.band_gap(a["T"]),
        )
    )
    states = si.kernel("densities_of_states")
    c_states = coefficients(si.model("densities_of_states"))
    found.append(
        Case(
            "densities_of_states (couderc-2014)",
            temperatures,
            lambda a: states(a["T"]),
            lambda a: hand_couderc_states(a["T"], c_states),
            lambda a: si.densities_of_states(a["T"]),
        )
    )
    ni = si.kernel("intrinsic_density")
    c_ni = coefficients(si.model("intrinsic_density"))
    found.append(
        Case(
            "intrinsic_density (couderc-2014)",
            temperatures,
            lambda a: ni(a["T"]),
            lambda a: hand_couderc_ni(a["T"], c_ni),
            lambda a: si.intrinsic_density(a["T"]),
        )
    )
    lattice = si.kernel("lattice_constant")
    c_lat = coefficients(si.model("lattice_constant"))
    found.append(
        Case(
            "lattice_constant (okada-1984)",
            temperatures,
            lambda a: lattice(a["T"]),
            lambda a: hand_okada(a["T"], c_lat),
            lambda a: si.lattice_constant(a["T"]),
            note="API in nm",
        )
    )
    b = si.kernel("radiative_coefficient")
    c_b = coefficients(si.model("radiative_coefficient"))
    found.append(
        Case(
            "radiative_coefficient (trupke-2003)",
            temperatures,
            lambda a: b(a["T"]),
            lambda a: np.full(a["T"].shape, c_b["coefficient"]),
            lambda a: si.radiative_coefficient(a["T"]),
        )
    )
    narrowing = si.kernel("gap_narrowing")
    c_bgn = coefficients(si.model("gap_narrowing"))
    found.append(
        Case(
            "gap_narrowing (schenk-1998, n, p given)",
            doped,
            lambda a: narrowing(a["T"], Nd=a["Nd"], Na=a["Na"], n=a["n"], p=a["p"]),
            lambda a: hand_schenk(a["T"], a["Nd"], a["Na"], a["n"], a["p"], c_bgn),
            lambda a: si.band_edge_shifts(a["T"], Na=a["Na"], Nd=a["Nd"], n=a["n"], p=a["p"]),
        )
    )
    eff = si.kernel("effective_intrinsic_density")

    def hand_eff(a):
        dec, dev = hand_schenk(a["T"], a["Nd"], a["Na"], a["n"], a["p"], c_bgn)
        return hand_couderc_ni(a["T"], c_ni) * np.exp((dec + dev) / (2 * BOLTZMANN_EV * a["T"]))

    found.append(
        Case(
            "effective_intrinsic_density (n, p given)",
            doped,
            lambda a: eff(a["T"], Nd=a["Nd"], Na=a["Na"], n=a["n"], p=a["p"]),
            hand_eff,
            lambda a: si.effective_intrinsic_density(
                a["T"], Na=a["Na"], Nd=a["Nd"], n=a["n"], p=a["p"]
            ),
        )
    )
    level = si.kernel("ionisation", dopant="phosphorus")
    c_level = coefficients(si.model("ionisation").select("phosphorus"))
    found.append(
        Case(
            "ionisation (altermatt-2006, phosphorus)",
            lambda size: {"N": 10 ** rng.uniform(13, 20, size)},
            lambda a: level(N=a["N"]),
            lambda a: hand_lowered_level(a["N"], c_level),
            lambda a: si.dopant_level(a["N"], "phosphorus"),
        )
    )
    tau = si.kernel("intrinsic_lifetime")
    c_tau = coefficients(si.model("intrinsic_lifetime"))
    found.append(
        Case(
            "intrinsic_lifetime (richter-2012, n0, p0 given)",
            lifetimes,
            lambda a: tau(a["T"], n0=a["n0"], p0=a["p0"], excess=a["dn"]),
            lambda a: hand_richter(a["n0"], a["p0"], a["dn"], c_tau),
            lambda a: si.intrinsic_lifetime(a["T"], n0=a["n0"], p0=a["p0"], excess=a["dn"]),
        )
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

    found.append(
        Case(
            "srh_lifetime (shockley-1952)",
            srh_inputs,
            lambda a: named(srh, a["dn"], a["n0"], a["p0"], a["n1"], a["p1"], a["tn"], a["tp"]),
            lambda a: hand_srh(a["dn"], a["n0"], a["p0"], a["n1"], a["p1"], a["tn"], a["tp"]),
        )
    )
    vth = si.kernel("thermal_velocity", carrier="electron")
    c_vth = coefficients(si.model("thermal_velocity").select("electron"))
    found.append(
        Case(
            "thermal_velocity (green-1990, electron)",
            temperatures,
            lambda a: vth(a["T"]),
            lambda a: hand_thermal_velocity(a["T"], c_vth),
            lambda a: si.thermal_velocity("electron", a["T"]),
        )
    )
    fca = si.kernel("free_carrier_absorption")
    c_fca = coefficients(si.model("free_carrier_absorption"))

    def fca_inputs(size):
        return {
            "lam": rng.uniform(1400.0, 13000.0, size),
            "n": 10 ** rng.uniform(16, 20, size),
            "p": 10 ** rng.uniform(16, 20, size),
        }

    found.append(
        Case(
            "free_carrier_absorption (nedeljkovic-2011)",
            fca_inputs,
            lambda a: fca(a["lam"], n=a["n"], p=a["p"]),
            lambda a: hand_fca(a["lam"], a["n"], a["p"], c_fca),
            lambda a: si.free_carrier_absorption(a["lam"], n=a["n"], p=a["p"]),
        )
    )

    # transport (hand versions: the Klaassen expression of benchmarks/bench_transport.py)
    from bench_transport import inline_klaassen

    for carrier in ("electron", "hole"):
        mobility = si.kernel("mobility", carrier=carrier)
        model = si._mobility_model(carrier, "phosphorus", "boron")
        c_mu = coefficients(model)
        found.append(
            Case(
                f"mobility (klaassen-1992, {carrier}, n, p given)",
                doped,
                lambda a, k=mobility: k(a["T"], Nd=a["Nd"], Na=a["Na"], n=a["n"], p=a["p"]),
                lambda a, c=c_mu: inline_klaassen(a["T"], a["Nd"], a["Na"], a["n"], a["p"], c),
                lambda a, carrier=carrier: si.mobility(
                    carrier,
                    a["T"],
                    Na=a["Na"],
                    Nd=a["Nd"],
                    n=a["n"],
                    p=a["p"],
                    dopant_densities="ionised",
                ),
            )
        )
    vsat = si.kernel("saturation_velocity", carrier="electron")
    c_sat = coefficients(si.model("saturation_velocity").select("electron"))
    found.append(
        Case(
            "saturation_velocity (jacoboni-1977, electron)",
            temperatures,
            lambda a: vsat(a["T"]),
            lambda a: (
                c_sat["prefactor"] * (a["T"] / c_sat["reference_temperature"]) ** c_sat["exponent"]
            ),
            lambda a: si.saturation_velocity("electron", a["T"]),
        )
    )
    rho = si.kernel("standard_resistivity", dopant="boron")
    c_rho = coefficients(si.model("standard_resistivity").select("boron"))

    def resistivity_inputs(size):
        return {"T": np.full(size, 296.15), "N": 10 ** rng.uniform(13, 20, size)}

    found.append(
        Case(
            "standard_resistivity (thurber-1981, boron)",
            resistivity_inputs,
            lambda a: rho(a["T"], N=a["N"]),
            lambda a: (
                c_rho["constant_term"] / a["N"]
                + c_rho["fall_term"]
                / (a["N"] * (1 + (c_rho["fall_scale"] * a["N"]) ** c_rho["fall_exponent"]))
            ),
        )
    )

    # optical tables: the combined model's table at the series temperatures (prepared once
    # by the kernel, and given here to the hand versions for free)
    for quantity in ("absorption", "refractive_index"):
        kernel = si.kernel(quantity)
        kernel(800.0, 300.0)
        table = si.model(quantity).function._function
        grid, temps = table.wavelength_grid, table.temperature_grid
        values, exp = table.values, table.exponentiate
        finish = np.exp if exp else (lambda x: x)
        method = getattr(si, quantity)

        def spectrum_inputs(size):
            return {"lam": np.linspace(300.0, 1150.0, size), "T": 312.0}

        def one_row(a, table=table):
            return table._row(a["T"])  # the table at that temperature (for the hand version)

        found.append(
            Case(
                f"{quantity}, sorted spectrum at one T",
                spectrum_inputs,
                lambda a, k=kernel: k(a["lam"], a["T"]),
                lambda a, one_row=one_row, grid=grid, finish=finish: finish(
                    np.interp(a["lam"], grid, one_row(a))
                ),
                lambda a, method=method: method(a["lam"], a["T"]),
                note="hand: one np.interp of the row at T",
            )
        )

        def pairs_inputs(size):
            return {"lam": rng.uniform(300.0, 1150.0, size), "T": rng.uniform(250.0, 450.0, size)}

        found.append(
            Case(
                f"{quantity}, scattered (lambda, T) pairs",
                pairs_inputs,
                lambda a, k=kernel: k(a["lam"], a["T"]),
                lambda a, g=grid, t=temps, v=values, finish=finish: finish(
                    hand_bilinear(a["lam"], a["T"], g, t, v)
                ),
                lambda a, method=method: method(a["lam"], a["T"]),
                note="hand: searchsorted + bilinear",
            )
        )

        def grid_inputs(size):
            m = round(np.sqrt(size))
            return {
                "lam": np.linspace(300.0, 1150.0, m)[None, :],
                "T": np.linspace(250.0, 450.0, max(1, size // m))[:, None],
            }

        found.append(
            Case(
                f"{quantity}, grid T x lambda",
                grid_inputs,
                lambda a, k=kernel: k(a["lam"], a["T"]),
                lambda a, g=grid, t=temps, v=values, finish=finish: finish(
                    hand_bilinear(a["lam"], a["T"], g, t, v)
                ),
                lambda a, method=method: method(a["lam"], a["T"]),
                note="hand: searchsorted + bilinear",
            )
        )
    solve = si.kernel("equilibrium")

    def equilibrium_inputs(size):
        return {
            "T": rng.uniform(250.0, 450.0, size),
            "Nd": 10 ** rng.uniform(13, 20, size),
            "Na": 10 ** rng.uniform(13, 20, size),
        }

    found.append(
        Case(
            "equilibrium (Fermi-Dirac, Schenk)",
            equilibrium_inputs,
            lambda a: solve(a["T"], Nd=a["Nd"], Na=a["Na"]),
            None,
            lambda a: si.equilibrium(a["T"], Na=a["Na"], Nd=a["Nd"]),
            note="a solver: no closed form to write by hand",
            largest=1_000_000,
        )
    )
    return found


def named(kernel, *args, **options):
    """Call a bound kernel with its inputs in the order of ``kernel.inputs`` (densities
    are keyword-only: each is passed by name)."""
    return kernel(**dict(zip(kernel.inputs, args, strict=False)), **options)


def _parts(value):
    if isinstance(value, dict):
        return tuple(value.values())
    value = tuple(value) if isinstance(value, tuple) else (value,)
    return tuple(np.asarray(getattr(v, "magnitude", v)) for v in value)


def same_numbers(case, inputs):
    got, want = _parts(case.kernel(inputs)), _parts(case.hand(inputs))
    worst = 0.0
    for a, b in zip(got, want, strict=True):
        a, b = np.broadcast_arrays(a, b)
        ok = np.isfinite(b)
        worst = max(worst, float(np.max(np.abs(a[ok] / b[ok] - 1))) if ok.any() else 0.0)
    return worst


# --------------------------------------------------------------------------- sections


def section_kernels(found, sizes):
    print(
        "\n1. bound kernels against the same formula by hand in numpy "
        "(ns per element; target kernel/hand <= 1.1 from 1e5 up)"
    )
    print(
        f"   {'kernel':48s} {'size':>6s} {'kernel':>8s} {'hand':>8s} {'ratio':>6s} "
        f"{'copy':>6s}  agree"
    )
    for case in found:
        for size in sizes:
            if case.largest and size > case.largest:
                size = case.largest
            inputs = case.make(size)
            points = int(np.prod(np.broadcast_shapes(*(np.shape(v) for v in inputs.values()))))
            copy_source = np.ones(points)
            call = case.kernel
            if case.hand is None:
                kernel, copy = [
                    t / points * 1e9
                    for t in compare(
                        lambda call=call, inputs=inputs: call(inputs),
                        lambda copy_source=copy_source: copy_source.copy(),
                    )
                ]
                print(
                    f"   {case.name:48s} {size:6.0e} {kernel:8.1f} {'-':>8s} {'-':>6s} "
                    f"{copy:6.2f}  ({case.note})"
                )
                continue
            kernel, hand, copy = [
                t / points * 1e9
                for t in compare(
                    lambda call=call, inputs=inputs: call(inputs),
                    lambda hand=case.hand, inputs=inputs: hand(inputs),
                    lambda copy_source=copy_source: copy_source.copy(),
                )
            ]
            agree = f"{same_numbers(case, inputs):.0e}" if size <= 1e5 else ""
            print(
                f"   {case.name:48s} {size:6.0e} {kernel:8.1f} {hand:8.1f} "
                f"{kernel / hand:6.2f} {copy:6.2f}  {agree}"
            )
            del inputs


def section_api(found, sizes):
    print("\n2. public API against its bound kernel (target API/kernel <= 1.5 from 1e5 up)")
    for case in found:
        if case.api is None:
            continue
        for size in sizes:
            if case.largest and size > case.largest:
                continue
            inputs = case.make(size)
            points = int(np.prod(np.broadcast_shapes(*(np.shape(v) for v in inputs.values()))))
            kernel, api = [
                t / points * 1e9
                for t in compare(
                    lambda call=case.kernel, inputs=inputs: call(inputs),
                    lambda api=case.api, inputs=inputs: api(inputs),
                )
            ]
            print(
                f"   {case.name:48s} {size:6.0e}  kernel {kernel:8.1f}  API {api:8.1f} "
                f"ns/el  ratio {api / kernel:5.2f}"
            )


def section_memory(found, sizes, names):
    print(
        "\n3. peak memory over result size, and ns/element (target peak/result <= ~2, linear cost)"
    )
    for case in found:
        if case.name not in names:
            continue
        for size in sizes:
            inputs = case.make(size)
            points = int(np.prod(np.broadcast_shapes(*(np.shape(v) for v in inputs.values()))))
            row = []
            for label, call in (("kernel", case.kernel), ("API", case.api), ("hand", case.hand)):
                if call is None or (label == "hand" and size > 10_000_000):
                    continue  # a whole-array expression on 1e8 points needs ~30 GB
                start = time.perf_counter()
                peak, result = peak_memory(lambda call=call, inputs=inputs: call(inputs))
                seconds = time.perf_counter() - start
                size_bytes = nbytes(result)
                del result
                row.append(
                    f"{label} peak {peak / size_bytes:4.2f}x result, "
                    f"{seconds / points * 1e9:6.1f} ns/el"
                )
            print(f"   {case.name:48s} {size:6.0e}  " + ";  ".join(row))
            del inputs
            gc.collect()


def section_scalars(si):
    print("\n4. scalar calls: API against the bound kernel (target <= 3x, closed form)")
    rows = [
        ("band_gap", {}, (300.0,), lambda: si.band_gap(300.0)),
        ("lattice_constant", {}, (300.0,), lambda: si.lattice_constant(300.0)),
        ("radiative_coefficient", {}, (300.0,), lambda: si.radiative_coefficient(300.0)),
        ("intrinsic_density", {}, (300.0,), lambda: si.intrinsic_density(300.0)),
        ("densities_of_states", {}, (300.0,), lambda: si.densities_of_states(300.0)),
        (
            "gap_narrowing",
            {},
            (300.0, 1e17, 0.0, 1e17, 1e3),
            lambda: si.band_edge_shifts(300.0, Nd=1e17, n=1e17, p=1e3),
        ),
        (
            "effective_intrinsic_density",
            {},
            (300.0, 1e17, 0.0, 1e17, 1e3),
            lambda: si.effective_intrinsic_density(300.0, Nd=1e17, n=1e17, p=1e3),
        ),
        (
            "ionisation",
            {"dopant": "phosphorus"},
            (1e17,),
            lambda: si.dopant_level(1e17, "phosphorus"),
        ),
        (
            "intrinsic_lifetime",
            {},
            (300.0, 1e16, 1e4, 1e15),
            lambda: si.intrinsic_lifetime(300.0, n0=1e16, p0=1e4, excess=1e15),
        ),
        (
            "mobility",
            {"carrier": "electron"},
            (300.0, 1e17, 1e15, 1e17, 1e3),
            lambda: si.mobility(
                "electron", 300.0, Na=1e15, Nd=1e17, n=1e17, p=1e3, dopant_densities="ionised"
            ),
        ),
        (
            "saturation_velocity",
            {"carrier": "electron"},
            (300.0,),
            lambda: si.saturation_velocity("electron", 300.0),
        ),
        (
            "thermal_velocity",
            {"carrier": "electron"},
            (300.0,),
            lambda: si.thermal_velocity("electron", 300.0),
        ),
        (
            "free_carrier_absorption",
            {},
            (1500.0, 1e18, 0.0),
            lambda: si.free_carrier_absorption(1500.0, n=1e18, p=0.0),
        ),
        ("absorption (table)", {}, (800.0, 300.0), lambda: si.absorption(800.0, 300.0)),
        ("refractive_index (table)", {}, (800.0, 300.0), lambda: si.refractive_index(800.0, 300.0)),
    ]
    for name, fixed, args, api in rows:
        kernel = si.kernel(name.split()[0], **fixed)
        k, a = [
            t * 1e6
            for t in compare(lambda kernel=kernel, args=args: named(kernel, *args), api, budget=0.5)
        ]
        print(f"   {name:30s} kernel {k:6.1f} us   API {a:6.1f} us   ratio {a / k:5.2f}")


def section_derivatives(si, size):
    print(f"\n5. derivatives against the value alone, {size:.0e} points (target <= 3x)")
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
        ("radiative_coefficient", {}, (t,)),
        ("gap_narrowing", {}, doped),
        ("effective_intrinsic_density", {}, doped),
        ("intrinsic_lifetime", {}, life),
        ("mobility", {"carrier": "electron"}, doped),
        ("mobility", {"carrier": "hole"}, doped),
    ]
    for release_model in (None, "klaassen-1992"):
        material = (
            si
            if release_model is None
            else matprops.silicon(models={"gap_narrowing": release_model})
        )
        for name, fixed, args in rows:
            if release_model and name not in ("gap_narrowing", "effective_intrinsic_density"):
                continue
            kernel = material.kernel(name, **fixed)
            if name == "gap_narrowing":  # the model's own inputs, in its order
                args = tuple(
                    dict(
                        zip(
                            (
                                "temperature",
                                "donor_density",
                                "acceptor_density",
                                "electron_density",
                                "hole_density",
                            ),
                            doped,
                            strict=False,
                        )
                    )[k]
                    for k in kernel.inputs
                )
            args = dict(zip(kernel.inputs, args, strict=False))  # densities go by name
            value_out, partial_out = kernel.derivatives(**args)  # buffers to reuse
            partial_out = {
                k: tuple(np.empty_like(a) for a in v) if isinstance(v, tuple) else np.empty_like(v)
                for k, v in partial_out.items()
            }
            value_out = (
                tuple(np.empty_like(a) for a in value_out)
                if isinstance(value_out, tuple)
                else np.empty_like(value_out)
            )
            value, both, value_kept, both_kept = compare(
                lambda k=kernel, a=args: k(**a),
                lambda k=kernel, a=args: k.derivatives(**a),
                lambda k=kernel, a=args, o=value_out: k(**a, out=o),
                lambda k=kernel, a=args, o=(value_out, partial_out): k.derivatives(**a, out=o),
            )
            label = (
                f"{name} ({material.model(name).id if name in material.models else 'derived'}"
                f"{', ' + fixed['carrier'] if fixed else ''})"
            )
            print(
                f"   {label:46s} value {value / size * 1e9:6.1f}, + {len(partial_out)} "
                f"partials {both / size * 1e9:6.1f} ns/el: ratio {both / value:4.2f}; "
                f"into kept arrays (out=) {both_kept / value_kept:4.2f}"
            )


STARTUP = {
    "import numpy, pint": "import numpy, pint",
    "import numpy, pint + registry": "import numpy, pint; pint.get_application_registry()"
    ".Quantity(1.0, 'K')",
    "import matprops": "import matprops",
    "matprops.silicon().band_gap(300)": "import matprops; matprops.silicon().band_gap(300)",
    "first bound-kernel call": "import matprops; matprops.silicon().kernel('band_gap')(300.0)",
    "band_gap(300) with a cached registry": (
        "import pint; pint.set_application_registry(pint.UnitRegistry(cache_folder=CACHE));"
        " import matprops; matprops.silicon().band_gap(300)"
    ),
}


def section_startup(repeat=5):
    print(
        "\n6. start-up in fresh processes (median of "
        f"{repeat}; bytecode cached; pint's disk cache only where said)"
    )
    with tempfile.TemporaryDirectory() as folder:
        env = dict(os.environ)
        env.pop("PYTHONDONTWRITEBYTECODE", None)
        env["PYTHONPYCACHEPREFIX"] = os.path.join(folder, "pycache")
        cache = os.path.join(folder, "pint-cache")
        results = {}
        for label, code in STARTUP.items():
            code = code.replace("CACHE", repr(cache))
            timer = (
                f"import time; _s = time.perf_counter(); {code}; print(time.perf_counter() - _s)"
            )
            subprocess.run(
                [sys.executable, "-c", timer], env=env, check=True, capture_output=True
            )  # bytecode (and pint's cache) written
            times = sorted(
                float(
                    subprocess.run(
                        [sys.executable, "-c", timer],
                        env=env,
                        check=True,
                        capture_output=True,
                        text=True,
                    ).stdout
                )
                for _ in range(repeat)
            )
            results[label] = times[len(times) // 2]
            print(f"   {label:40s} {results[label] * 1e3:7.0f} ms")
        base = results["import numpy, pint"]
        first = results["matprops.silicon().band_gap(300)"]
        with_registry = results["import numpy, pint + registry"]
        print(
            f"   first band_gap(300) / (import numpy, pint): {first / base:.2f}; with the "
            f"registry counted in the baseline: {first / with_registry:.2f}"
        )


def section_before_and_after(si):
    """The costs measured before the door existed, re-measured (also runnable on a
    checkout without the door)."""
    print("\n7. the costs measured before the door, re-measured")
    kernel = si.kernel("absorption")
    kernel(800.0, 300.0)
    table = getattr(si.model("absorption").function, "_function", None)
    lam = np.linspace(300.0, 1150.0, 10_000_000)
    if hasattr(table, "_row"):
        row, grid = table._row(312.0), table.wavelength_grid
    else:  # the tables of an older checkout: the row at 312 K through the kernel itself
        from matprops.catalogue.store import default_catalog

        grid = default_catalog().table("green-2008.nc").wavelength.values
        row = np.log(kernel(grid, 312.0))
    k = best_time(lambda: kernel(lam, 312.0), repeat=3) / lam.size * 1e9
    h = best_time(lambda: np.exp(np.interp(lam, grid, row)), repeat=3) / lam.size * 1e9
    print(
        f"   absorption, sorted spectrum at one T, 1e7: kernel {k:.1f} ns/el, np.interp "
        f"{h:.1f} ns/el ({k / h:.2f}x)  [before: 208 against 15; target within 1.1x]"
    )
    rng = np.random.default_rng(3)
    for size in (300_000, 10_000_000):
        lam_p, t_p = rng.uniform(300, 1150, size), rng.uniform(250, 450, size)
        seconds = best_time(lambda lam_p=lam_p, t_p=t_p: kernel(lam_p, t_p), repeat=3)
        print(
            f"   absorption on (lambda, T) pairs, {size:.0e}: {seconds / size * 1e9:.0f} "
            "ns/el  [before: 392 at 1e7, 513 superlinear; target linear]"
        )
    t = np.linspace(250.0, 450.0, 10_000_000)
    for name, call in (
        ("band_gap", lambda: si.kernel("band_gap")(t)),
        ("absorption pairs", lambda: kernel(lam, t)),
    ):
        peak, result = peak_memory(call)
        print(
            f"   peak memory, 1e7 points, {name}: {peak / nbytes(result):.2f}x the result "
            "[before: 7x (band gap) to 10x (absorption); target ~2x]"
        )
        del result
    for name, call in (
        ("band_gap", lambda: si.band_gap(300)),
        ("lattice_constant", lambda: si.lattice_constant(300)),
    ):
        print(
            f"   scalar si.{name}(300): {best_time(call, budget=0.3) * 1e6:.1f} us  "
            "[before: lattice 77 us, band gap 13 us; target within 3x of the kernel]"
        )
    states = si.kernel("densities_of_states")
    c_states = coefficients(si.model("densities_of_states"))
    t5 = np.linspace(250.0, 450.0, 100_000)
    k = best_time(lambda: states(t5))
    h = best_time(lambda: hand_couderc_states_horner(t5, c_states))
    print(
        f"   densities of states, 1e5: kernel / hand (Horner) {k / h:.2f}  "
        "[before: 1.7-2.4x (polyval); target 1.1x]"
    )
    quantities = [
        "band_gap",
        "intrinsic_density",
        "densities_of_states",
        "lattice_constant",
        "radiative_coefficient",
    ]
    t3 = np.linspace(250.0, 450.0, 1000)
    tab = best_time(lambda: si.table(quantities, temperature=t3), budget=1.0)
    kernels = [si.kernel(q) for q in quantities]
    ker = best_time(lambda: [k(t3) for k in kernels], budget=1.0)
    print(
        f"   si.table of 5 quantities x 1000 T: {tab * 1e3:.2f} ms against the kernels "
        f"{ker * 1e3:.3f} ms ({tab / ker:.0f}x)  [before: 17x]"
    )


def hand_couderc_states_horner(T, c):
    t32 = c["prefactor"] * T * np.sqrt(T)

    def horner(coefficients):
        result = coefficients[-1]
        for a in coefficients[-2::-1]:
            result = a + result * T
        return result

    return t32 * horner(c["conduction_polynomial"]), t32 * horner(c["valence_polynomial"])


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", default="1e3,1e5,1e7")
    parser.add_argument("--big", action="store_true", help="also 1e8 points in section 3")
    parser.add_argument("--sections", default="1234567")
    parser.add_argument("--only", nargs="*", help="kernel names (substrings) for 1-3")
    args = parser.parse_args()
    blas = {k: os.environ[k] for k in ("OPENBLAS_CORETYPE", "OPENBLAS_L2_SIZE") if k in os.environ}
    print(
        f"numpy {np.__version__}; {os.cpu_count()} cores; OpenBLAS variables: {blas or 'not set'}"
    )
    si = matprops.silicon()
    found = cases(si)
    if args.only:
        found = [c for c in found if any(s in c.name for s in args.only)]
    sizes = [int(float(s)) for s in args.sizes.split(",")]
    if "1" in args.sections:
        section_kernels(found, sizes)
    if "2" in args.sections:
        section_api(found, [s for s in sizes if s >= 100_000])
    if "3" in args.sections:
        names = {
            c.name
            for c in found
            if c.name.startswith(
                (
                    "band_gap",
                    "gap_narrowing",
                    "absorption, scattered",
                    "intrinsic_lifetime",
                    "mobility (klaassen-1992, el",
                )
            )
        }
        section_memory(found, [10_000_000], names)
        if args.big:  # a few runs at 1e8 (inputs and result: 2-6 GB each)
            section_memory(
                found,
                [100_000_000],
                {
                    n
                    for n in names
                    if n.startswith(("band_gap", "gap_narrowing", "absorption, scattered"))
                },
            )
    if "4" in args.sections:
        section_scalars(si)
    if "5" in args.sections:
        section_derivatives(si, 100_000)
    if "6" in args.sections:
        section_startup()
    if "7" in args.sections:
        section_before_and_after(si)


if __name__ == "__main__":
    main()
