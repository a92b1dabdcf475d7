"""Benchmark (run on demand, not a test): Klaassen mobility and doping from resistivity.

    python benchmarks/bench_transport.py [--points 1000000] [--inverse-points 100000]
                                         [--loop-points 1000]

1. Klaassen's mobility on N random (T, Nd, Na, n, p) points, electrons and holes:
   - the public API ``si.mobility(carrier, T, Na=, Nd=, n=, p=, dopant_densities=
     "ionised")`` (units, checks, no equilibrium solve: the densities are given),
   - the bound kernel ``si.kernel("mobility", carrier=...)`` (plain arrays),
   - the same equations written below as one numpy expression (``**`` powers, the
     G clamp read from a table of its minimum built here).
   Targets: API within 1.5x, kernel within 1.2x of the expression. Also timed: the
   public API from total densities without n, p (it solves the equilibrium first).
2. Doping from resistivity (boron, 250-400 K, 1e-3-1e3 ohm cm) on M points through
   ``si.doping_from_resistivity`` against a per-point ``scipy.optimize.brentq`` loop over
   the same equations (the bound equilibrium and mobility kernels on one point at a
   time), timed on L points and scaled to M. Target: >= 100x faster, same answers to
   1e-9 relative.

Scheduler: plain numpy in this process (no dask). Whether OPENBLAS_CORETYPE or
OPENBLAS_L2_SIZE are set is printed (they can slow numpy; they are never changed here).
"""

import argparse
import os
import time
import timeit
import warnings

import numpy as np

K_B = 8.617333262e-5


def best(stmt, number=1, repeat=5):
    return min(timeit.repeat(stmt, number=number, repeat=repeat)) / number


# --------------------------------------------------------------------------- Klaassen inline


def inline_klaassen(t, nd, na, n, p, c):
    """Klaassen 1992 written out with ``**`` (coefficients from the model file ``c``)."""
    ts = t / 300.0
    ndc = nd * (1 + 1 / (c["donor_clustering"] + (c["donor_clustering_density"] / nd) ** 2))
    nac = na * (1 + 1 / (c["acceptor_clustering"] + (c["acceptor_clustering_density"] / na) ** 2))
    like, unlike, other = (ndc, nac, p) if c["charge"] < 0 else (nac, ndc, n)
    m, mr = c["carrier_mass"], c["carrier_mass"] / c["other_carrier_mass"]
    mumax, mumin, alpha = c["max_mobility"], c["min_mobility"], c["alpha"]
    nsc = like + unlike + other
    pp = 1 / (
        c["coulomb_weight"] / (c["coulomb_density"] * (ts**3 / nsc) ** (2 / 3))
        + c["screening_weight"] / (c["screening_density"] / (n + p) * m * ts**2)
    )
    f = (c["r1"] * pp ** c["r6"] + c["r2"] + c["r3"] * mr) / (
        pp ** c["r6"] + c["r4"] + c["r5"] * mr
    )
    pmin = inline_pmin(ts, m, c)
    pg = np.maximum(pp, pmin)
    g = (
        1
        - c["s1"] / (c["s2"] + (ts / m) ** c["s4"] * pg) ** c["s3"]
        + c["s5"] / ((m / ts) ** c["s7"] * pg) ** c["s6"]
    )
    nsc_eff = like + g * unlike + other / f
    mu_n = mumax**2 / (mumax - mumin) * ts ** (3 * alpha - 1.5)
    mu_c = mumax * mumin / (mumax - mumin) * ts**-0.5
    mu_da = (
        mu_n * nsc / nsc_eff * (c["reference_density"] / nsc) ** alpha + mu_c * (n + p) / nsc_eff
    )
    return 1 / (1 / (mumax * ts ** -c["lattice_exponent"]) + 1 / mu_da)


def inline_pmin(ts, m, c):
    """P at the minimum of G: dG/dP = 0 read from a table of its monotone left side."""
    u = np.logspace(-10, 10, 20001)
    left = c["s1"] * c["s3"] * u ** (c["s6"] + 1) / (c["s2"] + u) ** (c["s3"] + 1)
    a = (ts / m) ** c["s4"]
    k = ((ts / m) ** (c["s4"] + c["s7"])) ** c["s6"]
    umin = np.exp(np.interp(np.log(c["s5"] * c["s6"] * k), np.log(left), np.log(u)))
    return umin / a


def klaassen_part(si, n_points):
    rng = np.random.default_rng(7)
    t = rng.uniform(250.0, 450.0, n_points)
    nd = 10 ** rng.uniform(13.0, 20.0, n_points)
    na = 10 ** rng.uniform(13.0, 20.0, n_points)
    n = 10 ** rng.uniform(10.0, 20.0, n_points)
    p = 10 ** rng.uniform(10.0, 20.0, n_points)
    print(f"1. Klaassen mobility, {n_points:.0e} random (T, Nd, Na, n, p) points, best of 5")
    for carrier in ("electron", "hole"):
        kernel = si.kernel("mobility", carrier=carrier)
        coefficients = {k: c.kernel_value for k, c in kernel.coefficients.items()}
        api = si.mobility(carrier, t, Na=na, Nd=nd, n=n, p=p, dopant_densities="ionised").m_as(
            "cm^2/(V*s)"
        )
        plain = kernel(
            temperature=t, donor_density=nd, acceptor_density=na, electron_density=n, hole_density=p
        )
        inline = inline_klaassen(t, nd, na, n, p, coefficients)
        worst = max(np.max(np.abs(api / inline - 1)), np.max(np.abs(plain / inline - 1)))
        a = best(
            lambda carrier=carrier: si.mobility(
                carrier, t, Na=na, Nd=nd, n=n, p=p, dopant_densities="ionised"
            )
        )
        k = best(
            lambda kernel=kernel: kernel(
                temperature=t,
                donor_density=nd,
                acceptor_density=na,
                electron_density=n,
                hole_density=p,
            )
        )
        b = best(lambda c=coefficients: inline_klaassen(t, nd, na, n, p, c))
        print(
            f"  {carrier:8s} inline numpy {b * 1e3:7.1f} ms | public API {a * 1e3:7.1f} ms "
            f"(x{a / b:.2f}, target 1.5) | bound kernel {k * 1e3:7.1f} ms "
            f"(x{k / b:.2f}, target 1.2) | largest difference {worst:.1e}"
        )
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        start = time.perf_counter()
        si.mobility("electron", t, Na=na, Nd=nd)
        solved = time.perf_counter() - start
    print(
        f"  electron from total Na, Nd without n, p (equilibrium solved first): "
        f"{solved * 1e3:.0f} ms"
    )


# --------------------------------------------------------------------------- inverse


def loop_part(si, m_points, l_points):
    from scipy.optimize import brentq

    rng = np.random.default_rng(11)
    rho = 10 ** rng.uniform(-3.0, 3.0, m_points)
    t = rng.uniform(250.0, 400.0, m_points)
    print(f"2. doping from resistivity (boron), {m_points:.0e} points")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # 1e-3 ohm cm lies above the ionisation model's 1e20
        start = time.perf_counter()
        vectorised = si.doping_from_resistivity(rho, t, dopant="boron").m_as("cm^-3")
        fast = time.perf_counter() - start

    equilibrium = si.kernel("equilibrium", donor="phosphorus", acceptor="boron")
    electron = si.kernel("mobility", carrier="electron")
    hole = si.kernel("mobility", carrier="hole")
    ionised = {m: m.conventions.value("dopant_densities") == "ionised" for m in (electron, hole)}
    ni = si.kernel("intrinsic_density")

    def log_rho(log_n, temperature):
        na = np.array([np.exp(log_n)])
        nd = np.zeros(1)
        state = equilibrium(np.array([temperature]), Nd=nd, Na=na)
        mus = []
        for model in (electron, hole):
            args = {
                "temperature": state["temperature"],
                "donor_density": state["ionised_donors"] if ionised[model] else nd,
                "acceptor_density": state["ionised_acceptors"] if ionised[model] else na,
                "electron_density": state["electron_density"],
                "hole_density": state["hole_density"],
            }
            mus.append(model(**{k: args[k] for k in model.inputs}))
        sigma = 1.602176634e-19 * (
            state["electron_density"] * mus[0] + state["hole_density"] * mus[1]
        )
        return float(-np.log(sigma[0]))

    looped = np.empty(l_points)
    start = time.perf_counter()
    for i in range(l_points):
        low = np.log(max(4.0 * float(ni(temperature=t[i])), 1.0))
        looped[i] = np.exp(
            brentq(lambda x, i=i: log_rho(x, t[i]) - np.log(rho[i]), low, np.log(1e21), xtol=1e-13)
        )
    slow = (time.perf_counter() - start) * m_points / l_points
    worst = np.max(np.abs(vectorised[:l_points] / looped - 1))
    print(
        f"  vectorised public API {fast:7.2f} s | per-point brentq loop on {l_points:.0e} "
        f"points scaled to {m_points:.0e}: {slow:8.1f} s | speed-up x{slow / fast:.0f} "
        f"(target 100) | largest relative difference {worst:.1e} (target 1e-9)"
    )


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--points", type=int, default=1_000_000)
    parser.add_argument("--inverse-points", type=int, default=100_000)
    parser.add_argument("--loop-points", type=int, default=1_000)
    parser.add_argument(
        "--model",
        action="append",
        default=[],
        metavar="QUANTITY=ID",
        help="override a release model (e.g. gap_narrowing=klaassen-1992)",
    )
    args = parser.parse_args()

    import matprops

    si = matprops.silicon(models=dict(item.split("=", 1) for item in args.model))
    print(
        f"matprops {matprops.__version__}, numpy {np.__version__}, models "
        f"mobility={si.models['mobility']}, gap_narrowing={si.models['gap_narrowing']}; "
        f"OPENBLAS_CORETYPE={os.environ.get('OPENBLAS_CORETYPE', 'unset')}, "
        f"OPENBLAS_L2_SIZE={os.environ.get('OPENBLAS_L2_SIZE', 'unset')}"
    )
    klaassen_part(si, args.points)
    loop_part(si, args.inverse_points, args.loop_points)


if __name__ == "__main__":
    main()
