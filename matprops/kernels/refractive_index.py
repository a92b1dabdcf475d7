"""Real part of the complex refractive index of undoped silicon (dimensionless).

Tabulated models interpolate n linearly in wavelength (nm) and temperature (K);
outside a table they return NaN (see :mod:`._tables`). As for absorption, each
kernel is the definition and its ``prepare`` attribute builds the same function
once as a :class:`~._tables.GridTable` (numpy arrays only).
"""

import numpy as np

from ._spec import kernel
from ._tables import GridTable, bilinear, broadcast_to_inputs, linear_1d, union_grid


@kernel(
    inputs={"wavelength": "nm", "temperature": "K"},
    output="1",
    coefficients={"wavelength_grid": "nm", "values": "1"},
)
def table_at_reference(wavelength, temperature, *, wavelength_grid, values):
    """n at one reference temperature, linear in wavelength (temperature sets only the shape)."""
    return broadcast_to_inputs(
        linear_1d(wavelength, wavelength_grid, values), wavelength, temperature
    )


@kernel(
    inputs={"wavelength": "nm", "temperature": "K"},
    output="1",
    coefficients={"wavelength_grid": "nm", "temperature_grid": "K", "values": "1"},
)
def table_series(wavelength, temperature, *, wavelength_grid, temperature_grid, values):
    """A table ``values[temperature, wavelength]``, bilinear in (T, lambda)."""
    return bilinear(temperature, wavelength, temperature_grid, wavelength_grid, values)


@kernel(
    inputs={"wavelength": "nm", "temperature": "K"},
    output="1",
    coefficients={
        "wavelength_grid": "nm",
        "values": "1",
        "reference_temperature": "K",
        "series_wavelength_grid": "nm",
        "series_temperature_grid": "K",
        "series_values": "1",
    },
)
def table_shifted_by_series(
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
    """A reference-temperature table shifted by a temperature series' change.

    ``n(lambda, T) = n_ref(lambda) + n_s(lambda, T) - n_s(lambda, T_ref)`` (the
    thermo-optic change is small and additive to first order).
    """
    series = (series_temperature_grid, series_wavelength_grid, series_values)
    return (
        linear_1d(wavelength, wavelength_grid, values)
        + bilinear(temperature, wavelength, *series)
        - bilinear(reference_temperature, wavelength, *series)
    )


def _prepare_at_reference(*, wavelength_grid, values):
    return GridTable(None, wavelength_grid, values)


def _prepare_series(*, wavelength_grid, temperature_grid, values):
    return GridTable(temperature_grid, wavelength_grid, values)


def _prepare_shifted(
    *,
    wavelength_grid,
    values,
    reference_temperature,
    series_wavelength_grid,
    series_temperature_grid,
    series_values,
):
    """n at every series temperature on the union of both wavelength grids:
    ``n_ref(u) + n_s(T_k, u) - n_s(T_ref, u)``."""
    union = union_grid(wavelength_grid, series_wavelength_grid)
    series = np.asarray(series_values, dtype=float)
    rows = np.array([linear_1d(union, series_wavelength_grid, row) for row in series])
    reference = bilinear(
        reference_temperature, union, series_temperature_grid, series_wavelength_grid, series
    )
    combined = linear_1d(union, wavelength_grid, values) + (rows - reference)
    return GridTable(series_temperature_grid, union, combined)


table_at_reference.prepare = _prepare_at_reference
table_series.prepare = _prepare_series
table_shifted_by_series.prepare = _prepare_shifted
