"""Optical quantities: band-to-band absorption, refractive index, free-carrier absorption."""

from __future__ import annotations

from .registry import OPTICAL_TEMPERATURES, WAVELENGTHS, case
from .registry import quantity as declare

__all__ = ["OpticalMethods"]


class OpticalMethods:
    """Absorption and refraction of light."""

    @declare(
        units="1/cm",
        long_name="band-to-band absorption coefficient",
        log=True,
        cases=[case(wavelength=WAVELENGTHS, temperature=OPTICAL_TEMPERATURES)],
    )
    def absorption(self, wavelength, temperature):
        """Band-to-band absorption coefficient, 1/cm.

        ``wavelength`` in nm (or a pint length, photon energy, frequency or
        wavenumber); ``temperature`` in K. Arrays broadcast: pass
        ``wavelength[:, None]`` and ``temperature[None, :]`` for a grid.

        Besides its ranges, a model may limit wavelength and temperature together (a
        validity region: the release default stops at shorter wavelengths at low
        temperature, where band-to-band absorption ends); points outside it warn.
        ``si.provenance("absorption")["validity_regions"]`` lists the limits.
        """
        return self._quantity("absorption", wavelength=wavelength, temperature=temperature)

    @declare(
        units="dimensionless",
        long_name="real part of the complex refractive index",
        cases=[case(wavelength=WAVELENGTHS, temperature=OPTICAL_TEMPERATURES)],
    )
    def refractive_index(self, wavelength, temperature):
        """Real part of the complex refractive index (dimensionless)."""
        return self._quantity("refractive_index", wavelength=wavelength, temperature=temperature)

    @declare(
        units="1/cm",
        long_name="free-carrier absorption coefficient",
        wants=("electron_density", "hole_density"),
        log=True,
        cases=[
            case(
                wavelength=[1000.0, 1300.0, 1450.0, 1550.0, 2000.0, 5000.0],
                n=[0.0, 1e16, 1e19],
                p=[0.0, 1e16, 1e19],
            )
        ],
    )
    def free_carrier_absorption(self, wavelength, n=0, p=0):
        """Free-carrier absorption coefficient, 1/cm, for electron and hole densities
        ``n`` and ``p`` (cm^-3); add it to :meth:`absorption` for doped or injected
        silicon. The release default is valid for doped layers (up to 1e20 cm^-3) at
        1300-14000 nm; see ``si.provenance("free_carrier_absorption")``."""
        return self._quantity(
            "free_carrier_absorption", wavelength=wavelength, electron_density=n, hole_density=p
        )
