"""Benchmark (run on demand, not a test): absorption on a 1000-wavelength x
100-temperature grid against scipy's RegularGridInterpolator over the same table.

    python benchmarks/bench_optics.py

Baseline: ``RegularGridInterpolator((T, lambda), log(alpha))`` built once, evaluated
on the same points, then exp — the plain way to interpolate the same table the same
way (bilinear in log alpha). Target: the unit-aware API within 1.5x of it.
"""

import timeit
import warnings

import numpy as np
from scipy.interpolate import RegularGridInterpolator, interp1d

import matprops
from matprops.catalogue.store import default_catalog


def best(stmt, number=5, repeat=7):
    return min(timeit.repeat(stmt, number=number, repeat=repeat)) / number


def main():
    lam = np.linspace(300.0, 1180.0, 1000)
    temps = np.linspace(80.0, 500.0, 100)
    grid_lam, grid_t = lam[:, None], temps[None, :]
    points = np.stack(np.broadcast_arrays(grid_t, grid_lam), axis=-1).reshape(-1, 2)

    franta = default_catalog().table("franta-2017.nc")
    log_f = np.log(franta.absorption_coefficient.values)
    rgi = RegularGridInterpolator((franta.temperature.values, franta.wavelength.values), log_f)
    green = default_catalog().table("green-2008.nc")
    g1 = interp1d(green.wavelength.values, np.log(green.absorption_coefficient.values))
    ref_points = np.stack(np.broadcast_arrays(np.full_like(lam, 300.0), lam), axis=-1)

    def baseline_series():
        return np.exp(rgi(points)).reshape(lam.size, temps.size)

    def baseline_scaled():
        return np.exp(
            g1(lam)[:, None] + rgi(points).reshape(lam.size, temps.size) - rgi(ref_points)[:, None]
        )

    si_series = matprops.silicon(models={"absorption": "franta-2017"})
    si_default = matprops.silicon()
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        np.testing.assert_allclose(
            si_series.absorption(grid_lam, grid_t).m_as("1/cm"), baseline_series(), rtol=1e-10
        )
        np.testing.assert_allclose(
            si_default.absorption(grid_lam, grid_t).m_as("1/cm"), baseline_scaled(), rtol=1e-10
        )

    print(
        f"grid {lam.size} wavelengths x {temps.size} temperatures = "
        f"{lam.size * temps.size:.0e} points"
    )
    for label, api, base in (
        (
            "franta-2017 (2-D table)",
            lambda: si_series.absorption(grid_lam, grid_t),
            baseline_series,
        ),
        (
            "green-2008-franta-2017 (default)",
            lambda: si_default.absorption(grid_lam, grid_t),
            baseline_scaled,
        ),
    ):
        a, b = best(api), best(base)
        print(
            f"  {label:34s} API {a * 1e3:6.2f} ms   RegularGridInterpolator {b * 1e3:6.2f} ms"
            f"   ratio {a / b:.2f}"
        )
    kernel = si_default.kernel("absorption")
    k = best(lambda: kernel(wavelength=grid_lam, temperature=grid_t))
    s = best(lambda: si_default.absorption(800.0, 300.0), number=500)
    print(
        f"  bound kernel (no units, no checks) {k * 1e3:6.2f} ms; one scalar call {s * 1e6:.0f} us"
    )


if __name__ == "__main__":
    main()
