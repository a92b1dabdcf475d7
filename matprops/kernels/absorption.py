"""Band-to-band absorption coefficient of undoped silicon, in 1/cm.

Wavelengths are vacuum wavelengths in nm, temperatures in K. Tabulated models
interpolate log(alpha) linearly: alpha spans ten decades, and log-linear
interpolation keeps it positive and follows the near-exponential edge between grid
points. Outside a table they return NaN (see :mod:`._tables`).

Each table kernel below is the definition, written as the model reads. Its
``prepare`` attribute builds, once per bound model, the same function as one
:class:`~._tables.GridTable` (for the combined model: on the union of its tables'
wavelength grids, where the sum of piecewise-linear functions is again piecewise
linear), so that a spectrum at one temperature is a single ``np.interp`` and a grid
is separable. The two agree to rounding (tests: 1e-12 relative). Table kernels take
numpy arrays only.
"""

import numpy as np

from ._spec import kernel
from ._tables import (
    GridTable,
    bilinear,
    broadcast_to_inputs,
    cached_log,
    linear_1d,
    union_grid,
)
from ._xp import asfloat, namespace, zeros_like
from .constants import BOLTZMANN_EV, PHOTON_ENERGY_NM


@kernel(
    inputs={"wavelength": "nm", "temperature": "K"},
    output="1/cm",
    coefficients={"wavelength_grid": "nm", "values": "1/cm"},
)
def table_at_reference(wavelength, temperature, *, wavelength_grid, values):
    """Measured alpha at one reference temperature, log-linear in wavelength.

    ``temperature`` only sets the output's shape: the table holds one temperature,
    and the model's validity range says which.
    """
    log_alpha = linear_1d(wavelength, wavelength_grid, cached_log(values))
    return broadcast_to_inputs(np.exp(log_alpha), wavelength, temperature)


@kernel(
    inputs={"wavelength": "nm", "temperature": "K"},
    output="1/cm",
    coefficients={"wavelength_grid": "nm", "temperature_grid": "K", "values": "1/cm"},
)
def table_series(wavelength, temperature, *, wavelength_grid, temperature_grid, values):
    """A table ``values[temperature, wavelength]``, bilinear in (T, lambda) on log(alpha)."""
    return np.exp(
        bilinear(temperature, wavelength, temperature_grid, wavelength_grid, cached_log(values))
    )


@kernel(
    inputs={"wavelength": "nm", "temperature": "K"},
    output="1/cm",
    coefficients={
        "wavelength_grid": "nm",
        "values": "1/cm",
        "reference_temperature": "K",
        "series_wavelength_grid": "nm",
        "series_temperature_grid": "K",
        "series_values": "1/cm",
    },
)
def table_scaled_by_series(
    wavelength,
    temperature,
    *,
    wavelength_grid,
    values,
    reference_temperature,
    series_wavelength_grid,
    series_temperature_grid,
    series_values,
):
    """A reference-temperature table scaled by a temperature series' ratio.

    ``alpha(lambda, T) = alpha_ref(lambda) * alpha_s(lambda, T) / alpha_s(lambda, T_ref)``

    The measured reference table fixes the magnitude; the series (data or a model
    covering many temperatures) supplies only the relative change with T. At
    T = T_ref the result is the reference table itself.
    """
    log_reference = linear_1d(wavelength, wavelength_grid, cached_log(values))
    log_series = cached_log(series_values)
    log_ratio = bilinear(
        temperature, wavelength, series_temperature_grid, series_wavelength_grid, log_series
    ) - bilinear(
        reference_temperature,
        wavelength,
        series_temperature_grid,
        series_wavelength_grid,
        log_series,
    )
    return np.exp(log_reference + log_ratio)


def _log(values):
    with np.errstate(divide="ignore"):
        return np.log(np.asarray(values, dtype=float))


def _prepare_at_reference(*, wavelength_grid, values):
    return GridTable(None, wavelength_grid, _log(values), exponentiate=True)


def _prepare_series(*, wavelength_grid, temperature_grid, values):
    return GridTable(temperature_grid, wavelength_grid, _log(values), exponentiate=True)


def _prepare_scaled(
    *,
    wavelength_grid,
    values,
    reference_temperature,
    series_wavelength_grid,
    series_temperature_grid,
    series_values,
):
    """log alpha at every series temperature on the union of both wavelength grids:
    ``log alpha_ref(u) + log alpha_s(T_k, u) - log alpha_s(T_ref, u)``."""
    union = union_grid(wavelength_grid, series_wavelength_grid)
    log_series = _log(series_values)
    rows = np.array([linear_1d(union, series_wavelength_grid, row) for row in log_series])
    reference = bilinear(
        reference_temperature, union, series_temperature_grid, series_wavelength_grid, log_series
    )
    combined = linear_1d(union, wavelength_grid, _log(values)) + (rows - reference)
    return GridTable(series_temperature_grid, union, combined, exponentiate=True)


table_at_reference.prepare = _prepare_at_reference
table_series.prepare = _prepare_series
table_scaled_by_series.prepare = _prepare_scaled


@kernel(
    inputs={"wavelength": "nm", "temperature": "K"},
    output="1/cm",
    coefficients={
        "indirect_gaps_at_zero": "eV",
        "direct_gap_at_zero": "eV",
        "phonon_energies": "eV",
        "phonon_weights": "1",
        "indirect_strengths": "1/(cm*eV^2)",
        "direct_strength": "1/(cm*eV^0.5)",
        "beta": "eV/K",
        "gamma": "K",
    },
    array_api=True,
)
def rajkanan(
    wavelength,
    temperature,
    *,
    indirect_gaps_at_zero,
    direct_gap_at_zero,
    phonon_energies,
    phonon_weights,
    indirect_strengths,
    direct_strength,
    beta,
    gamma,
):
    """Rajkanan, Singh and Shewchun's phonon-assisted absorption model.

    With photon energy E = hc/lambda and all gaps shifted in Varshni's form,
    ``Eg(T) = Eg(0) - beta T^2 / (T + gamma)``::

        alpha = sum_i sum_j C_i A_j [ (E - Eg_j + Ep_i)^2 / (exp(Ep_i/kT) - 1)
                                    + (E - Eg_j - Ep_i)^2 / (1 - exp(-Ep_i/kT)) ]
                + A_d (E - Eg_d)^(1/2)

    i runs over the two phonons (the first term absorbs one, the second emits one),
    j over the two indirect gaps; a term counts only where its bracket is positive.

    Parameters
    ----------
    wavelength : nm;  temperature : K
    indirect_gaps_at_zero : (Eg1, Eg2), eV;  direct_gap_at_zero : Egd, eV
    phonon_energies : (Ep1, Ep2), eV;  phonon_weights : (C1, C2)
    indirect_strengths : (A1, A2), 1/(cm eV^2);  direct_strength : Ad, 1/(cm eV^0.5)
    beta : eV/K;  gamma : K

    References
    ----------
    K. Rajkanan, R. Singh and J. Shewchun, Solid-State Electron. 22, 793 (1979).
    """
    xp = namespace(wavelength, temperature)
    energy = PHOTON_ENERGY_NM / asfloat(xp, wavelength)
    t = asfloat(xp, temperature)
    energy, t = xp.broadcast_arrays(energy, t)
    shift = beta * t * t / (t + gamma)
    kt = BOLTZMANN_EV * t
    alpha = zeros_like(xp, energy)
    for ep, c in zip(phonon_energies, phonon_weights, strict=True):  # the two phonons
        ep, c = float(ep), float(c)
        absorbed = 1.0 / xp.expm1(ep / kt)  # occupation n
        emitted = -1.0 / xp.expm1(-ep / kt)  # n + 1
        for gap0, a in zip(indirect_gaps_at_zero, indirect_strengths, strict=True):
            above = energy - (float(gap0) - shift)
            up = xp.maximum(above + ep, 0.0)
            down = xp.maximum(above - ep, 0.0)
            alpha = alpha + c * float(a) * (up * up * absorbed + down * down * emitted)
    alpha = alpha + direct_strength * xp.sqrt(
        xp.maximum(energy - (direct_gap_at_zero - shift), 0.0)
    )
    return alpha
