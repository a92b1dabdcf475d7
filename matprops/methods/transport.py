"""Carrier transport: thermal velocity (more to come in this family)."""

from __future__ import annotations

from ..errors import InputError
from ..units import coerce, quantity

__all__ = ["CARRIERS", "DERIVED", "KERNELS", "TransportMethods", "carrier_name"]

CARRIERS = ("electron", "hole")
_CARRIER_ALIASES = {"electrons": "electron", "holes": "hole", "e": "electron", "h": "hole"}

# Quantities computed from other quantities' models (no model file of their own).
DERIVED: dict = {}

# Quantities whose plain-array kernels this family hands out (see Silicon.kernel).
KERNELS = ("thermal_velocity",)


def carrier_name(value, argument: str = "carrier") -> str:
    """``"electron"`` or ``"hole"`` (plural and ``e``/``h`` accepted), else an error."""
    text = str(value).strip().lower()
    name = _CARRIER_ALIASES.get(text, text)
    if name not in CARRIERS:
        raise InputError(argument, f"one of {', '.join(CARRIERS)}", repr(value))
    return name


class TransportMethods:
    """Thermal velocity of electrons and holes."""

    # ------------------------------------------------------------------ velocities
    def thermal_velocity(self, carrier, temperature):
        """Thermal velocity of electrons or holes, cm/s.

        The release default (Green 1990) is the *mean speed* ``sqrt(8kT / (pi m))``
        with a thermal-velocity mass, the convention of Shockley-Read-Hall capture
        rates ``sigma v_th``; the root-mean-square speed ``sqrt(3kT/m)`` is about
        8.5 % larger. ``si.provenance("thermal_velocity")["definition"]`` says which
        convention the model in use follows.

        Parameters
        ----------
        carrier : ``"electron"`` or ``"hole"``
        temperature : K (or a pint quantity); arrays broadcast
        """
        model = self.model("thermal_velocity").select(carrier_name(carrier))
        return quantity(self._call(model, {"temperature": coerce(temperature, "temperature")}),
                        model.output_units)

    # ------------------------------------------------------------------ kernels
    def _transport_kernel(self, name: str, fixed: dict):
        """The plain-array callable of a transport quantity (see ``Silicon.kernel``)."""
        fixed = dict(fixed)
        carrier = fixed.pop("carrier", None)
        if carrier is None:
            raise InputError("carrier", f"given for {name} (one of {', '.join(CARRIERS)})",
                             None)
        model = self.model(name).select(carrier_name(carrier))
        if fixed:
            key = sorted(fixed)[0]
            raise InputError(key, f"not an option of the {name} kernel", fixed[key])
        return model
