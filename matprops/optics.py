"""Beer-Lambert tools and photon energy <-> wavelength, unit-aware.

Arguments are pint quantities or plain numbers in default units: absorption
coefficient in 1/cm, thickness in cm, wavelength in nm, photon energy in eV.
Arrays broadcast, so a spectrum of alpha against a thickness (or a grid of
thicknesses) works as it stands. Results are pint quantities.

For light entering the material (reflection not included) the intensity after a
path x is ``I(x) = I0 exp(-alpha x)`` (Beer-Lambert): the transmitted fraction of
a thickness W is ``exp(-alpha W)``, the absorbed fraction ``1 - exp(-alpha W)``,
the thickness that absorbs a fraction f is ``-ln(1 - f) / alpha``, and the
absorption depth (where I falls to 1/e) is ``1 / alpha``. Single pass, normal
incidence; light trapping, reflection and free-carrier absorption are the
caller's to add.
"""

from __future__ import annotations

import numpy as np

from .errors import InputError
from .kernels.constants import PHOTON_ENERGY_NM
from .units import check_broadcast, coerce, quantity, to_magnitude

__all__ = [
    "absorbed_fraction",
    "absorbed_fraction_spectrum",
    "absorption_depth",
    "photon_energy",
    "thickness_for_absorbed_fraction",
    "transmitted_fraction",
    "wavelength",
]


def _finite(values, units, argument, given, given_units):
    """``values`` as a quantity, or an InputError where a reciprocal overflowed (an
    input so close to zero that the result exceeds the floating-point range)."""
    if not np.all(np.isfinite(values)):
        raise InputError(
            argument,
            "large enough that the result is a finite number (its reciprocal overflows)",
            f"{np.min(given):g} {given_units}",
        )
    return quantity(values, units)


def _alpha(alpha):
    return to_magnitude(alpha, "absorption_coefficient")


def transmitted_fraction(alpha, thickness):
    """Fraction of the light entering the material that passes a thickness, exp(-alpha W)."""
    a, w = _alpha(alpha), to_magnitude(thickness, "thickness")
    check_broadcast(alpha=a, thickness=w)
    return quantity(np.exp(-a * w), "dimensionless")


def absorbed_fraction(alpha, thickness):
    """Fraction absorbed in a thickness in a single pass, 1 - exp(-alpha W)."""
    a, w = _alpha(alpha), to_magnitude(thickness, "thickness")
    check_broadcast(alpha=a, thickness=w)
    return quantity(-np.expm1(-a * w), "dimensionless")


def thickness_for_absorbed_fraction(alpha, fraction):
    """Thickness that absorbs ``fraction`` (0 < f < 1) in a single pass, µm."""
    a = _alpha(alpha)
    f, _, high = coerce(fraction, "fraction", "dimensionless", "positive")
    if high >= 1:
        raise InputError("fraction", "between 0 and 1 (exclusive)", f"{high:g}")
    check_broadcast(alpha=a, fraction=f)
    if np.any(a == 0):
        raise InputError("alpha", "> 0 1/cm (no thickness absorbs anything at alpha = 0)", "0 1/cm")
    with np.errstate(over="ignore"):  # checked by _finite
        return _finite(-np.log1p(-f) / a * 1e4, "um", "alpha", a, "1/cm")


def absorption_depth(alpha):
    """Depth at which the intensity falls to 1/e, 1/alpha, in µm."""
    a = _alpha(alpha)
    if np.any(a == 0):
        raise InputError("alpha", "> 0 1/cm (the depth is infinite at alpha = 0)", "0 1/cm")
    with np.errstate(over="ignore"):
        return _finite(1e4 / a, "um", "alpha", a, "1/cm")


def photon_energy(wavelength):
    """Photon energy of a vacuum wavelength, eV (E = hc/lambda)."""
    nm = to_magnitude(wavelength, "wavelength")
    with np.errstate(over="ignore"):
        return _finite(PHOTON_ENERGY_NM / nm, "eV", "wavelength", nm, "nm")


def wavelength(energy):
    """Vacuum wavelength of a photon energy, nm (lambda = hc/E)."""
    ev = to_magnitude(energy, "photon_energy")
    with np.errstate(over="ignore"):
        return _finite(PHOTON_ENERGY_NM / ev, "nm", "energy", ev, "eV")


def absorbed_fraction_spectrum(si, wavelengths, thickness, temperature):
    """Single-pass absorbed fraction of a silicon layer along a wavelength grid.

    Uses ``si.absorption`` (band to band). Returns (alpha [1/cm], fraction) with
    the broadcast shape of ``wavelengths`` and ``thickness``.
    """
    alpha = si.absorption(wavelengths, temperature)
    return alpha, absorbed_fraction(alpha, thickness)
