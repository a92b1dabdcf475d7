"""Optical quantities: band-to-band absorption, refractive index, free-carrier absorption."""

from __future__ import annotations

import numpy as np

from .registry import OPTICAL_TEMPERATURES, WAVELENGTHS, case
from .registry import quantity as declare

__all__ = ["OpticalMethods"]

_BAND_EDGE_END_NM = 1450.0  # the long end of Green 2008's and Schinke 2015's tables
_EQUILIBRIUM = ("densities_of_states", "intrinsic_density", "gap_narrowing", "ionisation")


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

    @declare(
        units="1/cm",
        long_name="absorption coefficient, band-to-band plus free-carrier",
        models=("absorption", "free_carrier_absorption", *_EQUILIBRIUM),
        formula=(
            "alpha = alpha_bb(lambda, T) + alpha_fc(lambda, n0 + dn, p0 + dn): band-to-band "
            "absorption of undoped silicon plus free-carrier absorption of the equilibrium "
            "carriers (incomplete ionisation included) and the excess density"
        ),
        wants=("wavelength",),
        log=True,
        cases=[
            case(
                f"total_absorption_{kind}",
                wavelength=[600.0, 1000.0, 1150.0, 1300.0, 1400.0, 1550.0, 3000.0],
                temperature=[250.0, 300.0, 350.0],
                **{kind: [0.0, 1e16, 1e19]},
            )
            for kind in ("Na", "Nd")
        ],
    )
    def total_absorption(
        self,
        wavelength,
        temperature,
        Na=0,
        Nd=0,
        excess=0,
        *,
        donor="phosphorus",
        acceptor="boron",
    ):
        """Absorption coefficient of doped (and injected) silicon, 1/cm: band-to-band
        plus free-carrier absorption.

        ``alpha = alpha_bb(lambda, T) + alpha_fc(lambda, n0 + dn, p0 + dn)``: the
        release's :meth:`absorption` (of undoped silicon) plus its
        :meth:`free_carrier_absorption` of the free carriers, ``n0`` and ``p0`` from
        :meth:`equilibrium` (incomplete ionisation included) and ``excess`` = dn = dp.
        Band-gap narrowing's shift of the absorption edge in heavily doped silicon is
        not included (no readable model). Beyond 1450 nm, the long end of the
        band-to-band tables, the band-to-band part is counted as zero: at 1450 nm it is
        about 1e-8 /cm at 300 K and 3e-7 /cm at 400 K (green-2008-franta-2017), far
        below the free-carrier absorption of any doped layer. Where either part has no
        value (the release's free-carrier model starts at 1300 nm: no readable model
        covers doped layers at 1000-1300 nm) the total is NaN and the part's validity
        warning says so. In undoped silicon without injection the free-carrier part
        (of intrinsic carriers, below 1e12 cm^-3 up to 400 K) is counted as zero.

        Parameters
        ----------
        wavelength : nm (or a pint length, photon energy, ...);  temperature : K
        Na, Nd : total acceptor and donor densities, cm^-3;  excess : cm^-3 (>= 0)
        donor, acceptor : dopant species, as for :meth:`equilibrium`
        """
        from ..units import coerce, quantity

        lam = coerce(wavelength, "wavelength")[0]
        # beyond the band edge's last tabulated wavelength band-to-band absorption is
        # counted as zero (see _BAND_EDGE_END_NM); the band model is asked only up to it
        band = self.absorption(np.minimum(lam, _BAND_EDGE_END_NM), temperature).m_as("1/cm")
        band = np.where(lam > _BAND_EDGE_END_NM, 0.0, band)
        state = self.equilibrium(temperature, Na, Nd, donor=donor, acceptor=acceptor)
        excess = self._inputs(excess=excess)["excess_density"][0]
        n = state.electron_density.m_as("cm^-3") + excess
        p = state.hole_density.m_as("cm^-3") + excess
        # undoped, uninjected points: the intrinsic carriers' free-carrier absorption is
        # counted as zero (below 1e-9 /cm up to 400 K at 1450 nm), and the free-carrier
        # model is asked at a wavelength it covers there, so it neither warns nor NaNs
        doped = (
            self._inputs(Na=Na)["acceptor_density"][0]
            + self._inputs(Nd=Nd)["donor_density"][0]
            + excess
        ) > 0
        doped = np.broadcast_to(doped, np.broadcast_shapes(np.shape(doped), np.shape(lam)))
        covered = self.model("free_carrier_absorption").validity.get("wavelength")
        asked = np.where(doped, lam, covered.low if covered is not None else lam)
        free = self.free_carrier_absorption(asked, n=n, p=p).m_as("1/cm")
        free = np.where(doped, free, 0.0)
        total = band + free
        return quantity(total[()] if np.ndim(total) == 0 else total, "1/cm")

    @declare(
        units="dimensionless",
        long_name="extinction coefficient (imaginary part of the complex refractive index)",
        models=("absorption", "free_carrier_absorption", *_EQUILIBRIUM),
        formula=(
            "k = alpha lambda / (4 pi), alpha the total absorption (band-to-band + free-carrier)"
        ),
        wants=("wavelength",),
        log=True,
        cases=[case(wavelength=[1000.0, 1400.0, 2000.0], temperature=[300.0], Nd=[0.0, 1e19])],
    )
    def extinction_coefficient(
        self,
        wavelength,
        temperature,
        Na=0,
        Nd=0,
        excess=0,
        *,
        donor="phosphorus",
        acceptor="boron",
    ):
        """Extinction coefficient k (imaginary part of the complex refractive index,
        dimensionless) of doped silicon: ``k = alpha lambda / (4 pi)`` with alpha the
        :meth:`total_absorption` (band-to-band plus free-carrier). Arguments as for
        :meth:`total_absorption`."""
        from ..units import coerce, quantity

        alpha = self.total_absorption(
            wavelength, temperature, Na, Nd, excess, donor=donor, acceptor=acceptor
        ).m_as("1/cm")
        lam = coerce(wavelength, "wavelength")[0] * 1e-7  # nm -> cm
        return quantity(alpha * lam / (4.0 * np.pi), "dimensionless")
