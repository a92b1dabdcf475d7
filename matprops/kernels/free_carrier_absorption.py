"""Free-carrier absorption in silicon, in 1/cm (adds to band-to-band absorption).

Wavelengths in nm, electron and hole densities in cm^-3.
"""

import numpy as np

from ._spec import kernel
from ._tables import bracket, linear_1d
from ._xp import asfloat, namespace


@kernel(
    inputs={"wavelength": "nm", "electron_density": "cm^-3", "hole_density": "cm^-3"},
    output="1/cm",
    coefficients={
        "electron_coefficient": "cm^2",
        "hole_coefficient": "cm^2",
        "electron_exponent": "1",
        "hole_exponent": "1",
        "reference_wavelength": "nm",
    },
    array_api=True,
)
def power_law(
    wavelength,
    electron_density,
    hole_density,
    *,
    electron_coefficient,
    hole_coefficient,
    electron_exponent,
    hole_exponent,
    reference_wavelength,
):
    """``alpha = c_n n (lambda/lambda_0)^a + c_p p (lambda/lambda_0)^b``, linear in density.

    Parameters
    ----------
    wavelength : nm;  electron_density, hole_density : cm^-3
    electron_coefficient, hole_coefficient : cm^2 (cross-sections at lambda_0)
    electron_exponent, hole_exponent : dimensionless;  reference_wavelength : nm
    """
    xp = namespace(wavelength, electron_density, hole_density)
    log_ratio = xp.log(asfloat(xp, wavelength) / reference_wavelength)
    return electron_coefficient * asfloat(xp, electron_density) * xp.exp(
        electron_exponent * log_ratio
    ) + hole_coefficient * asfloat(xp, hole_density) * xp.exp(hole_exponent * log_ratio)


@kernel(
    inputs={"wavelength": "nm", "electron_density": "cm^-3", "hole_density": "cm^-3"},
    output="1/cm",
    coefficients={
        "wavelengths": "nm",
        "electron_cross_sections": "cm^2",
        "hole_cross_sections": "cm^2",
    },
    nan_outside=("wavelength",),
)
def cross_sections_at_wavelengths(
    wavelength,
    electron_density,
    hole_density,
    *,
    wavelengths,
    electron_cross_sections,
    hole_cross_sections,
):
    """``alpha = sigma_n(lambda) n + sigma_p(lambda) p`` with sigma published at a
    few wavelengths; between them log(sigma) is linear in log(lambda) (a power
    law through neighbouring points), outside them NaN. Numpy arrays only (the
    interpolation between the published wavelengths uses numpy indexing).

    Parameters
    ----------
    wavelength : nm;  electron_density, hole_density : cm^-3
    wavelengths : nm (ascending);  electron_cross_sections, hole_cross_sections : cm^2
    """
    log_lambda = np.log(np.asarray(wavelength, dtype=float))
    grid = np.log(np.asarray(wavelengths, dtype=float))
    sigma_n = np.exp(linear_1d(log_lambda, grid, np.log(electron_cross_sections)))
    sigma_p = np.exp(linear_1d(log_lambda, grid, np.log(hole_cross_sections)))
    return sigma_n * np.asarray(electron_density, dtype=float) + sigma_p * np.asarray(
        hole_density, dtype=float
    )


@kernel(
    inputs={"wavelength": "nm", "electron_density": "cm^-3", "hole_density": "cm^-3"},
    output="1/cm",
    coefficients={
        "wavelengths": "nm",
        "electron_prefactors": "1/cm",
        "electron_exponents": "1",
        "hole_prefactors": "1/cm",
        "hole_exponents": "1",
    },
    nan_outside=("wavelength",),
)
def tabulated_power_laws(
    wavelength,
    electron_density,
    hole_density,
    *,
    wavelengths,
    electron_prefactors,
    electron_exponents,
    hole_prefactors,
    hole_exponents,
):
    """Power laws in density whose coefficients are published at a set of wavelengths.

    ``alpha = a_n(lambda) (n / 1 cm^-3)^b_n(lambda) + a_p(lambda) (p / 1 cm^-3)^b_p(lambda)``

    The prefactors a are in 1/cm for densities counted in cm^-3. Between the
    published wavelengths log(a) and b are interpolated linearly in log(lambda);
    outside them the result is NaN. Numpy arrays only (the interpolation between the
    published wavelengths uses numpy indexing).

    Parameters
    ----------
    wavelength : nm;  electron_density, hole_density : cm^-3
    wavelengths : nm (ascending)
    electron_prefactors, hole_prefactors : 1/cm;  electron_exponents, hole_exponents : 1
    """
    i, w = bracket(
        np.log(np.asarray(wavelength, dtype=float)), np.log(np.asarray(wavelengths, dtype=float))
    )

    def between(values):
        return values[i] * (1.0 - w) + values[i + 1] * w

    n = np.asarray(electron_density, dtype=float)
    p = np.asarray(hole_density, dtype=float)
    electrons = np.exp(between(np.log(electron_prefactors))) * np.power(
        n, between(np.asarray(electron_exponents, dtype=float))
    )
    holes = np.exp(between(np.log(hole_prefactors))) * np.power(
        p, between(np.asarray(hole_exponents, dtype=float))
    )
    return electrons + holes
