"""Thermal and high-field quantities: thermal conductivity, heat capacity, specific heat,
impact ionisation coefficients."""

from __future__ import annotations

from ..units import check_broadcast, coerce, quantity
from ..vocabulary import CARRIERS, carrier_name
from .bound import model_kernel
from .registry import case
from .registry import quantity as declare

__all__ = ["ThermalMethods"]

THERMAL_TEMPERATURES = [200.0, 298.15, 300.0, 350.0, 400.0, 600.0, 1000.0]
IONISATION_FIELDS = [0.0, 1e5, 2e5, 3e5, 4e5, 6e5]


def _carrier_kernel(si, name, fixed):
    """The bound kernel of a quantity with one coefficient set per carrier
    (``carrier=`` required)."""
    from ..errors import InputError

    fixed = dict(fixed)
    carrier = fixed.pop("carrier", None)
    if carrier is None:
        raise InputError("carrier", f"given for {name} (one of {', '.join(CARRIERS)})", None)
    if fixed:
        key = min(fixed)
        raise InputError(key, f"not an option of the {name} kernel", fixed[key])
    carrier = carrier_name(carrier)
    return model_kernel(si, name, si.model(name).select(carrier), {"carrier": carrier})


class ThermalMethods:
    """Lattice heat conduction and storage; avalanche multiplication."""

    @declare(
        units="W/(cm*K)",
        long_name="thermal conductivity of single-crystal silicon",
        cases=[case(temperature=THERMAL_TEMPERATURES)],
    )
    def thermal_conductivity(self, temperature):
        """Thermal conductivity of single-crystal silicon, W/(cm K).

        The lattice (phonon) conductivity of pure or lightly doped silicon; the
        reduction by heavy doping is not modelled (see the model's notes).

        Parameters
        ----------
        temperature : K (or a pint quantity); arrays broadcast
        """
        return self._quantity("thermal_conductivity", temperature=temperature)

    @declare(
        units="J/(mol*K)",
        long_name="molar heat capacity at constant pressure",
        cases=[case(temperature=THERMAL_TEMPERATURES)],
    )
    def heat_capacity(self, temperature):
        """Molar heat capacity at constant pressure, J/(mol K)."""
        return self._quantity("heat_capacity", temperature=temperature)

    @declare(
        units="J/(g*K)",
        long_name="specific heat capacity at constant pressure",
        models=("heat_capacity", "molar_mass"),
        formula="c_p = C_p(T) / M: the molar heat capacity divided by the molar mass",
        cases=[case(temperature=THERMAL_TEMPERATURES)],
    )
    def specific_heat(self, temperature):
        """Specific heat capacity at constant pressure, J/(g K): the release's molar
        heat capacity divided by its molar mass."""
        molar, _ = self._evaluate("heat_capacity", temperature=temperature)
        mass, _ = self._evaluate("molar_mass")
        return quantity(molar / mass, "J/(g*K)")

    @declare(
        units="1/cm",
        long_name="impact ionisation coefficient",
        wants=("field",),
        log=True,
        cases=[
            case(
                f"impact_ionisation_{c}",
                fixed={"carrier": c},
                field=IONISATION_FIELDS,
                temperature=[200.0, 300.0, 400.0],
            )
            for c in CARRIERS
        ],
        kernel=_carrier_kernel,
    )
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
