"""Thermal and high-field quantities: thermal conductivity, heat capacity, specific heat,
impact ionisation coefficients."""

from __future__ import annotations

from ..units import check_broadcast, coerce, quantity
from .transport import carrier_name

__all__ = ["DERIVED", "ThermalMethods"]

# Quantities computed from other quantities' models (no model file of their own).
DERIVED = {
    "specific_heat": (
        ("heat_capacity", "molar_mass"),
        "c_p = C_p(T) / M: the molar heat capacity divided by the molar mass",
    ),
}


class ThermalMethods:
    """Lattice heat conduction and storage; avalanche multiplication."""

    def thermal_conductivity(self, temperature):
        """Thermal conductivity of single-crystal silicon, W/(cm K).

        The lattice (phonon) conductivity of pure or lightly doped silicon; the
        reduction by heavy doping is not modelled (see the model's notes).

        Parameters
        ----------
        temperature : K (or a pint quantity); arrays broadcast
        """
        return self._quantity("thermal_conductivity", temperature=temperature)

    def heat_capacity(self, temperature):
        """Molar heat capacity at constant pressure, J/(mol K)."""
        return self._quantity("heat_capacity", temperature=temperature)

    def specific_heat(self, temperature):
        """Specific heat capacity at constant pressure, J/(g K): the release's molar
        heat capacity divided by its molar mass."""
        molar, _ = self._evaluate("heat_capacity", temperature=temperature)
        mass, _ = self._evaluate("molar_mass")
        return quantity(molar / mass, "J/(g*K)")

    def impact_ionisation(self, carrier, field, temperature):
        """Impact ionisation coefficient of electrons or holes, 1/cm.

        Electron-hole pairs created per centimetre that one carrier travels along a
        uniform field (the avalanche multiplication of power devices and avalanche
        photodiodes).

        Parameters
        ----------
        carrier : ``"electron"`` or ``"hole"``
        field : V/cm (field strength, >= 0; or a pint quantity)
        temperature : K (or a pint quantity); arrays broadcast
        """
        model = self.model("impact_ionisation").select(carrier_name(carrier))
        prepared = {
            "field": coerce(field, "field"),
            "temperature": coerce(temperature, "temperature"),
        }
        check_broadcast(**{a: array for a, (array, _, _) in prepared.items()})
        return quantity(self._call(model, prepared), model.output_units)
