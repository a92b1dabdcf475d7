"""Optical quantities: band-to-band absorption, refractive index, free-carrier absorption."""

from __future__ import annotations

__all__ = ["OpticalMethods"]


class OpticalMethods:
    """Absorption and refraction of light."""

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

    def refractive_index(self, wavelength, temperature):
        """Real part of the complex refractive index (dimensionless)."""
        return self._quantity("refractive_index", wavelength=wavelength, temperature=temperature)

    def free_carrier_absorption(self, wavelength, n=0, p=0):
        """Free-carrier absorption coefficient, 1/cm, for electron and hole densities
        ``n`` and ``p`` (cm^-3); add it to :meth:`absorption` for doped or injected
        silicon. The release default is valid for doped layers (up to 1e20 cm^-3) at
        1300-14000 nm; see ``si.provenance("free_carrier_absorption")``."""
        return self._quantity(
            "free_carrier_absorption", wavelength=wavelength, electron_density=n, hole_density=p
        )
