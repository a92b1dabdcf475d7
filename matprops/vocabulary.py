"""The argument vocabulary: one name, its aliases, units and rules for every argument.

Methods, bound kernels, tables and the command line all speak this vocabulary: an
argument has one canonical name (``temperature``, ``acceptor_density``), a short
alias where the trade has one (``T``, ``Na``) and sometimes further accepted names
(``density`` for a defect density), default and internal units, and what its value
must be (``positive``, ``non-negative``). Category arguments (a carrier, a dopant
species, a crystal plane, an option such as ``statistics``) have a fixed set of
canonical values and accept the usual spellings (``"electrons"``, ``"B"``,
``"(111)"``), turned into the canonical value by :func:`canonical`.

*Axes* are the arguments a table can span (:data:`AXES`, in the order of a table's
dimensions); the others are options or inputs that are never gridded.

This module imports nothing from matprops but its errors: every layer above may use
it, and the units layer builds its table of default units from it.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

from .errors import InputError

__all__ = [
    "ARGUMENTS",
    "AXES",
    "CARRIERS",
    "DOPANTS",
    "Argument",
    "argument",
    "canonical",
    "canonical_name",
    "carrier_name",
    "dopant_species",
]


@dataclass(frozen=True)
class Argument:
    """One argument of the vocabulary.

    Parameters
    ----------
    name : the canonical name (a table's coordinate, a kernel's input, a keyword)
    long_name : what it is, for tables, files and help texts
    units : default and internal units (None for a category)
    requirement : ``"positive"`` or ``"non-negative"`` for a number, else None
    short : the short alias of the trade (``T``, ``Na``): also a command-line option
    aliases : further names accepted in its place (e.g. a method's keyword)
    axis : whether a table can span it (a grid axis)
    log : its values span decades (log-spaced ranges, a log plot axis)
    choices : the canonical values of a category
    spellings : other spellings of a category's values -> the canonical value
    kind : for a dopant species, ``"donor"`` or ``"acceptor"`` restricts the choices
    """

    name: str
    long_name: str
    units: str | None = None
    requirement: str | None = None
    short: str | None = None
    aliases: tuple[str, ...] = ()
    axis: bool = False
    log: bool = False
    choices: tuple[str, ...] = ()
    spellings: Mapping[str, str] | None = None
    kind: str | None = None

    @property
    def category(self) -> bool:
        """Whether the argument takes names (a carrier, a plane ...) rather than numbers."""
        return self.units is None

    @property
    def names(self) -> tuple[str, ...]:
        """Every name the argument answers to: canonical, short, further aliases."""
        return (self.name, *((self.short,) if self.short else ()), *self.aliases)

    @property
    def option(self) -> str:
        """The command-line option (``--acceptor-density``)."""
        return "--" + self.name.replace("_", "-")

    @property
    def alias(self) -> str | None:
        """The short alias (the name tables and the command line used before)."""
        return self.short


# Dopant species of silicon and which kind each is (a classification, not a coefficient).
DOPANTS = {
    "phosphorus": "donor",
    "arsenic": "donor",
    "antimony": "donor",
    "boron": "acceptor",
    "aluminium": "acceptor",
    "gallium": "acceptor",
    "indium": "acceptor",
}
_DOPANT_SPELLINGS = {
    "p": "phosphorus",
    "as": "arsenic",
    "sb": "antimony",
    "b": "boron",
    "al": "aluminium",
    "aluminum": "aluminium",
    "ga": "gallium",
    "in": "indium",
}
CARRIERS = ("electron", "hole")
_CARRIER_SPELLINGS = {"electrons": "electron", "holes": "hole", "e": "electron", "h": "hole"}
PLANES = ("100", "110", "111")


def _density(name, long_name, short=None, aliases=(), axis=True, requirement="non-negative"):
    return Argument(
        name, long_name, "cm^-3", requirement, short, tuple(aliases), axis=axis, log=True
    )


# Axes first, in the order of a table's dimensions (the last varies fastest).
_ALL = (
    Argument(
        "carrier",
        "charge carrier",
        axis=True,
        choices=CARRIERS,
        spellings=_CARRIER_SPELLINGS,
    ),
    Argument("plane", "crystal plane (Miller indices)", axis=True, choices=PLANES),
    # the defect catalogue's names and aliases are data: matprops.catalogue.defects
    Argument("defect", "recombination centre of the defect catalogue", axis=True),
    Argument("temperature", "temperature", "K", "positive", "T", axis=True),
    _density("acceptor_density", "acceptor density", "Na"),
    _density("donor_density", "donor density", "Nd"),
    _density("excess_density", "excess carrier density", "excess"),
    _density("electron_density", "electron density", "n"),
    _density("hole_density", "hole density", "p"),
    Argument("field", "electric field strength", "V/cm", "non-negative", axis=True, log=True),
    Argument("resistivity", "resistivity", "ohm*cm", "positive", "rho", axis=True, log=True),
    _density("defect_density", "defect density", aliases=("density",)),
    Argument(
        "generation",
        "photogeneration per area (absorbed photon flux)",
        "cm^-2/s",
        "positive",
        axis=True,
        log=True,
    ),
    Argument("thickness", "sample thickness", "cm", "positive", axis=True),
    Argument("wavelength", "vacuum wavelength", "nm", "positive", axis=True),
    Argument(
        "dopant",
        "dopant species",
        axis=True,
        choices=tuple(DOPANTS),
        spellings=_DOPANT_SPELLINGS,
    ),
    _density("dopant_density", "density of one dopant species", "N"),
    # options and inputs that are never gridded
    Argument(
        "donor",
        "donor species",
        choices=tuple(d for d, k in DOPANTS.items() if k == "donor"),
        spellings=_DOPANT_SPELLINGS,
        kind="donor",
    ),
    Argument(
        "acceptor",
        "acceptor species",
        choices=tuple(d for d, k in DOPANTS.items() if k == "acceptor"),
        spellings=_DOPANT_SPELLINGS,
        kind="acceptor",
    ),
    Argument("statistics", "carrier statistics", choices=("fermi-dirac", "boltzmann")),
    Argument("conversion", "resistivity conversion", choices=("physics", "standard")),
    Argument(
        "dopant_densities",
        "what the dopant densities given are",
        choices=("total", "ionised"),
    ),
    Argument("defects", "several defects: a mapping defect -> density, or (defect, density) pairs"),
    _density(
        "equilibrium_electron_density",
        "equilibrium electron density",
        "n0",
        axis=False,
        requirement="positive",
    ),
    _density(
        "equilibrium_hole_density",
        "equilibrium hole density",
        "p0",
        axis=False,
        requirement="positive",
    ),
    Argument("electron_capture_time", "electron capture time 1/(sigma_n v_n N_t)", "s", "positive"),
    Argument("reference_temperature", "reference temperature", "K", "positive"),
    Argument("absorption_coefficient", "absorption coefficient", "1/cm", "non-negative"),
    Argument("photon_energy", "photon energy", "eV", "positive"),
    Argument("low_field_mobility", "low-field mobility", "cm^2/(V*s)", "non-negative"),
    Argument("saturation_velocity", "saturation velocity", "cm/s", "positive"),
)

#: canonical name -> :class:`Argument`, in the order of a table's dimensions for axes
ARGUMENTS: dict[str, Argument] = {a.name: a for a in _ALL}
#: the grid axes, in the order of a table's dimensions
AXES: dict[str, Argument] = {a.name: a for a in _ALL if a.axis}
_BY_NAME: dict[str, Argument] = {}
for _argument in _ALL:
    for _name in _argument.names:
        if _name in _BY_NAME:  # pragma: no cover - a mistake in the table above
            raise ValueError(f"argument name {_name!r} used twice in the vocabulary")
        _BY_NAME[_name] = _argument


def argument(name: str) -> Argument:
    """The :class:`Argument` a name or alias stands for (``"Na"`` -> acceptor_density)."""
    found = _BY_NAME.get(name)
    if found is None:
        known = sorted(_BY_NAME)
        raise InputError(name, f"an argument: one of {', '.join(known)}", "an unknown keyword")
    return found


def canonical_name(name: str) -> str | None:
    """The canonical name of an argument name or alias (None for a name it does not know)."""
    found = _BY_NAME.get(name)
    return None if found is None else found.name


def canonical(name: str, value, argument_name: str | None = None) -> str:
    """The canonical value of a category argument (``"electrons"`` -> ``"electron"``).

    ``name`` is the argument (or an alias); ``argument_name`` the name to show in an
    error (default: ``name``). Raises :class:`~matprops.InputError` listing the choices.
    """
    spec = argument(name)
    shown = argument_name or name
    if isinstance(value, str) and value in spec.choices:  # canonical already
        return value
    if spec.name == "plane":
        text = str(value).strip().strip("(){}[]<>").replace(" ", "").replace(",", "")
        if text in spec.choices:
            return text
        raise InputError(shown, f"one of {', '.join(spec.choices)} (Miller indices)", repr(value))
    if isinstance(value, str):
        spelled = value.strip().lower()
        spelled = (spec.spellings or {}).get(spelled, spelled)
        if spelled in spec.choices:
            return spelled
    if spec.name in ("dopant", "donor", "acceptor"):
        what = {"donor": "a donor species", "acceptor": "an acceptor species"}.get(
            spec.kind or "", "a dopant species"
        )
        raise InputError(shown, f"{what}: one of {', '.join(spec.choices)}", repr(value))
    raise InputError(shown, f"one of {', '.join(spec.choices)}", repr(value))


def carrier_name(value, argument_name: str = "carrier") -> str:
    """``"electron"`` or ``"hole"`` (plural and ``e``/``h`` accepted), else an error."""
    if isinstance(value, str) and value in CARRIERS:
        return value
    return canonical("carrier", value, argument_name)


def dopant_species(value, argument_name: str = "dopant", kind: str | None = None) -> str:
    """The canonical name of a dopant species (``"P"``, ``"phosphorus"`` -> ``"phosphorus"``);
    ``kind`` (``"donor"`` or ``"acceptor"``) restricts the species accepted."""
    if isinstance(value, str) and value in DOPANTS and kind in (None, DOPANTS[value]):
        return value
    return canonical(kind or "dopant", value, argument_name)
