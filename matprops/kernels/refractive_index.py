"""Real part of the complex refractive index of undoped silicon (dimensionless).

Tabulated models interpolate n linearly in wavelength (nm) and temperature (K);
outside a table they return NaN (see :mod:`._tables`).
"""

from ._spec import kernel
from ._tables import bilinear, broadcast_to_inputs, linear_1d


@kernel(inputs={"wavelength": "nm", "temperature": "K"}, output="1",
        coefficients={"wavelength_grid": "nm", "values": "1"})
def table_at_reference(wavelength, temperature, *, wavelength_grid, values):
    """n at one reference temperature, linear in wavelength (temperature sets only the shape)."""
    return broadcast_to_inputs(linear_1d(wavelength, wavelength_grid, values),
                               wavelength, temperature)


@kernel(inputs={"wavelength": "nm", "temperature": "K"}, output="1",
        coefficients={"wavelength_grid": "nm", "temperature_grid": "K", "values": "1"})
def table_series(wavelength, temperature, *, wavelength_grid, temperature_grid, values):
    """A table ``values[temperature, wavelength]``, bilinear in (T, lambda)."""
    return bilinear(temperature, wavelength, temperature_grid, wavelength_grid, values)


@kernel(inputs={"wavelength": "nm", "temperature": "K"}, output="1",
        coefficients={"wavelength_grid": "nm", "values": "1",
                      "reference_temperature": "K", "series_wavelength_grid": "nm",
                      "series_temperature_grid": "K", "series_values": "1"})
def table_shifted_by_series(wavelength, temperature, *, wavelength_grid, values,
                            reference_temperature, series_wavelength_grid,
                            series_temperature_grid, series_values):
    """A reference-temperature table shifted by a temperature series' change.

    ``n(lambda, T) = n_ref(lambda) + n_s(lambda, T) - n_s(lambda, T_ref)`` (the
    thermo-optic change is small and additive to first order).
    """
    series = (series_temperature_grid, series_wavelength_grid, series_values)
    return (linear_1d(wavelength, wavelength_grid, values)
            + bilinear(temperature, wavelength, *series)
            - bilinear(reference_temperature, wavelength, *series))
