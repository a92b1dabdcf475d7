"""Bands and carriers: gap, densities of states, intrinsic density, and the doping axis."""

from __future__ import annotations

from ..units import quantity

__all__ = ["CarrierMethods"]


class CarrierMethods:
    """Band gap, densities of states, intrinsic and effective intrinsic density,
    gap narrowing, dopant ionisation and equilibrium carrier statistics."""

    def band_gap(self, temperature):
        """Fundamental (indirect) band gap of undoped silicon, eV; no narrowing."""
        return self._quantity("band_gap", temperature=temperature)

    def densities_of_states(self, temperature):
        """Effective densities of states ``(Nc, Nv)`` of the conduction and valence bands, cm^-3."""
        (nc, nv), (uc, uv) = self._evaluate("densities_of_states", temperature=temperature)
        return quantity(nc, uc), quantity(nv, uv)

    def intrinsic_density(self, temperature):
        """Intrinsic carrier density of undoped silicon (no gap narrowing), cm^-3."""
        return self._quantity("intrinsic_density", temperature=temperature)
