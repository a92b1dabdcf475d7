"""Crystal constants: lattice constant, thermal expansion, molar mass, permittivity and what
follows from them."""

from __future__ import annotations

from functools import cache

import numpy as np

from ..kernels import crystal
from ..kernels._blocks import evaluate
from ..units import coerce, quantity, unit
from ..vocabulary import canonical
from .registry import TEMPERATURES, case
from .registry import quantity as declare

__all__ = ["PLANES", "CrystalMethods"]

PLANES = tuple(crystal.PLANES)
_LATTICE = ("lattice_constant",)


def _plane(plane) -> str:
    return canonical("plane", plane)


class CrystalMethods:
    """Lattice constant, densities, areal densities of planes, permittivity."""

    def _lattice_cm(self, temperature):
        return self._evaluate("lattice_constant", temperature=temperature)[0]

    def _from_lattice(self, function, temperature, *args):
        """``function(a(T), *args)`` evaluated block by block with the lattice model,
        after the lattice model's input and validity checks."""
        model = self.model("lattice_constant")
        prepared = coerce(temperature, "temperature")
        self._check(model, "temperature", prepared[1], prepared[2])
        lattice = model.function

        def composed(temperature):
            return function(lattice(temperature=temperature), *args)

        return evaluate(composed, {"temperature": prepared[0]})

    @declare(units="nm", long_name="cubic lattice constant", cases=[case(temperature=TEMPERATURES)])
    def lattice_constant(self, temperature):
        """Cubic lattice constant a(T), nm.

        (The bound kernel, ``si.kernel("lattice_constant")``, returns cm: the
        kernels' internal length unit.)
        """
        result, units = self._evaluate("lattice_constant", temperature=temperature)
        # cm -> nm with pint's own factor (exactly what Quantity.to("nm") multiplies by),
        # looked up once instead of a unit conversion per call; in place on the fresh
        # result of an array
        factor = _factor(units, "nm")
        if (
            isinstance(result, np.ndarray)
            and result.ndim
            and result.flags.writeable
            and result.flags.owndata
        ):
            result *= factor
            return quantity(result, "nm")
        return quantity(result * factor, "nm")

    @declare(
        units="1/K",
        long_name="linear thermal-expansion coefficient",
        aliases=("thermal_expansion_coefficient",),
        cases=[case(temperature=TEMPERATURES)],
    )
    def thermal_expansion(self, temperature):
        """Linear thermal-expansion coefficient alpha(T) = (1/a) da/dT, 1/K.

        ``temperature`` in K (or a pint quantity); arrays broadcast. The release's
        model and its validity range: ``si.provenance("thermal_expansion")``.
        """
        return self._quantity("thermal_expansion", temperature=temperature)

    @declare(units="g/mol", long_name="molar mass (standard atomic weight)", cases=[case()])
    def molar_mass(self):
        """Molar mass (standard atomic weight) of natural silicon, g/mol."""
        return self._quantity("molar_mass")

    @declare(units="dimensionless", long_name="static relative permittivity", cases=[case()])
    def permittivity(self):
        """Static relative permittivity (dimensionless)."""
        return self._quantity("permittivity")

    @declare(
        units="cm^-3",
        long_name="silicon atoms per volume",
        models=_LATTICE,
        formula="N = 8 / a(T)^3",
        cases=[case(temperature=TEMPERATURES)],
    )
    def atomic_density(self, temperature):
        """Silicon atoms per volume, 8/a^3, cm^-3."""
        return quantity(self._from_lattice(crystal.atomic_density, temperature), "cm^-3")

    @declare(
        units="g/cm^3",
        long_name="mass density",
        models=("lattice_constant", "molar_mass"),
        formula="rho = 8 M / (N_A a(T)^3)",
        cases=[case(temperature=TEMPERATURES)],
    )
    def density(self, temperature):
        """Mass density from the lattice constant and the atomic weight, g/cm^3."""
        mass, _ = self._evaluate("molar_mass")
        return quantity(self._from_lattice(crystal.mass_density, temperature, mass), "g/cm^3")

    @declare(
        units="cm^-2",
        long_name="atoms per area in one atomic layer of the plane",
        models=_LATTICE,
        formula=(
            "atoms per area in one atomic layer of the plane, "
            "2/a^2 (100), 2 sqrt2/a^2 (110), 4/(sqrt3 a^2) (111)"
        ),
        cases=[
            case(f"surface_atom_density_{p}", fixed={"plane": p}, temperature=[300.0])
            for p in PLANES
        ],
    )
    def surface_atom_density(self, plane, temperature):
        """Atoms per area in one atomic layer of a (100), (110) or (111) plane, cm^-2."""
        plane = _plane(plane)
        return quantity(self._from_lattice(crystal.plane_atom_density, temperature, plane), "cm^-2")

    @declare(
        units="cm^-2",
        long_name="dangling bonds per area of the ideal unreconstructed surface",
        models=_LATTICE,
        formula=(
            "surface atom density x bonds cut per atom of the ideal "
            "unreconstructed surface: 2 (100), 1 (110), 1 (111)"
        ),
        cases=[
            case(f"dangling_bond_density_{p}", fixed={"plane": p}, temperature=[300.0])
            for p in PLANES
        ],
    )
    def dangling_bond_density(self, plane, temperature):
        """Dangling bonds per area of the ideal unreconstructed (100)/(110)/(111) surface, cm^-2."""
        plane = _plane(plane)
        return quantity(
            self._from_lattice(crystal.dangling_bond_density, temperature, plane), "cm^-2"
        )


@cache
def _factor(source: str, target: str) -> float:
    """pint's multiplier from ``source`` to ``target`` units (cached)."""
    from ..units import ureg

    return float(ureg.Quantity(1.0, unit(source)).to(unit(target)).magnitude)
