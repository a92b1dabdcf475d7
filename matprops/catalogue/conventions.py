"""Fit conventions: what a model's coefficients were fitted with, recorded as data.

A published parameter set holds only with the inputs its authors fitted it with: a
mobility fitted against the *total* dopant density with every dopant taken as
ionised, a lifetime parameterisation against equilibrium densities computed with one
intrinsic density and one narrowing, an ionisation model with one pair of densities
of states and Boltzmann statistics. A model file of a composed quantity (one whose
model the material feeds with what other models give; :data:`REQUIRED`) says so in
its ``[fit_conventions]`` section, one entry per convention, each with where that was
read::

    [fit_conventions]
    dopant_densities = { value = "total", obtained = "read in ... (secondary)" }
    carrier_densities = { value = "complete-ionisation", obtained = "recalled, not checked" }
    intrinsic_density = { value = 9.65e9, units = "cm^-3", temperature = 300, obtained = "..." }
    densities_of_states = { value = "green-1990", obtained = "..." }
    statistics = { value = "boltzmann", obtained = "not stated in the source" }

Conventions and the values each takes (:data:`WORDS`, :data:`REFERENCES`):

``dopant_densities``
    ``"total"`` (the dopant density as grown or implanted) or ``"ionised"``;
``carrier_densities``
    ``"complete-ionisation"`` (the carrier densities of the fit are those of silicon
    with every dopant ionised: the dopant density stands for the majority density) or
    ``"free"`` (the actual free-carrier densities: incomplete ionisation included);
``statistics``
    ``"boltzmann"`` or ``"fermi-dirac"``;
``intrinsic_density``, ``densities_of_states``, ``gap_narrowing``, ``radiative_coefficient``,
``ionisation``, ``saturation_velocity``, ``band_gap``
    the id of that quantity's model the fit used (``"green-1990"``); ``"own"`` (a term
    among this model's own coefficients), ``"composed"`` (the model takes the
    material's) or ``"none"`` (fitted without one); ``intrinsic_density`` and
    ``radiative_coefficient`` may also be a number with ``units`` (and, for a density,
    the ``temperature`` in K it holds at).

Every convention may instead be ``"not stated"`` (the source was read and does not
say) or ``"not known"`` (the source could not be read here and no witness says);
``obtained`` then says which. The material composes each model by these entries (see
:mod:`matprops.material.consistency`); an unknown convention is composed as the
release did before conventions were recorded and is listed as unverified.

Archives of final releases hold model files sealed before this section existed: such
a file's conventions are synthesised from its older fields (a mobility's
``dopant_densities``, an intrinsic lifetime's ``[fit]``, a narrowing's ``[narrowing]``)
with everything else "not known", which composes it exactly as that release did
(:attr:`FitConventions.recorded` is False). The main tree's files must carry the
section.
"""

from __future__ import annotations

from collections.abc import Iterator, Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

from ..errors import DatasetError
from .fields import convert

__all__ = [
    "CONVENTION_NAMES",
    "REFERENCES",
    "REQUIRED",
    "SPECIES",
    "UNKNOWN",
    "WORDS",
    "Convention",
    "FitConventions",
    "StandIn",
    "legacy_conventions",
    "parse_fit_conventions",
    "parse_stand_ins",
]

UNKNOWN = ("not stated", "not known")

# conventions whose value is one word of a fixed list
WORDS = {
    "dopant_densities": ("total", "ionised"),
    "carrier_densities": ("complete-ionisation", "free"),
    "statistics": ("boltzmann", "fermi-dirac"),
}
# conventions that name another quantity's model (or a word, or a number where allowed):
# quantity -> (units of a number, whether a number needs a temperature), None: no number
REFERENCES = {
    "intrinsic_density": ("cm^-3", True),
    "radiative_coefficient": ("cm^3/s", False),
    "densities_of_states": None,
    "gap_narrowing": None,
    "ionisation": None,
    "saturation_velocity": None,
    "band_gap": None,
}
REFERENCE_WORDS = ("own", "composed", "none")
CONVENTION_NAMES = (*WORDS, *REFERENCES)

# Composed quantities and the conventions each model file of theirs must state.
# (srh_lifetime is an exact rate equation with no fitted coefficients: its defects'
# conventions live in the defect files; tables of undoped silicon are not composed.)
REQUIRED = {
    "mobility": ("dopant_densities", "carrier_densities"),
    "gap_narrowing": ("dopant_densities", "statistics", "intrinsic_density"),
    "ionisation": ("densities_of_states", "statistics"),
    "intrinsic_lifetime": (
        "carrier_densities",
        "intrinsic_density",
        "gap_narrowing",
        "statistics",
        "radiative_coefficient",
    ),
    "radiative_coefficient": ("intrinsic_density", "carrier_densities"),
    "free_carrier_absorption": ("carrier_densities",),
    "high_field_mobility": ("saturation_velocity",),
}


# Dopant species of silicon (the material layer classifies them as donors and acceptors).
SPECIES = ("phosphorus", "arsenic", "antimony", "boron", "aluminium", "gallium", "indium")


@dataclass(frozen=True)
class StandIn:
    """What serves a dopant species a model has no coefficient set for: another
    species' set of the same model (``variant``) or another model of the same quantity
    that has the species (``model``), and why (``obtained``)."""

    species: str
    variant: str | None
    model: str | None
    obtained: str

    def describe(self) -> str:
        what = f"the {self.variant} set" if self.variant else f"model {self.model}"
        return f"{self.species}: {what} ({' '.join(self.obtained.split())})"

    def as_dict(self) -> dict:
        record = {"variant": self.variant} if self.variant else {"model": self.model}
        record["obtained"] = self.obtained
        return record


def parse_stand_ins(path, quantity: str, raw, variants, variant_axis, catalogue) -> dict:
    """The ``[stand_ins]`` section of a model with one coefficient set per dopant."""
    if variant_axis != "dopant":
        raise DatasetError(path, "field 'stand_ins' goes with variant_axis = 'dopant'")
    found = {}
    for species, entry in raw.items():
        where = f"stand_ins.{species}"
        if species not in SPECIES:
            raise DatasetError(
                path, f"{where}: not a dopant species of silicon ({', '.join(SPECIES)})"
            )
        if species in variants:
            raise DatasetError(path, f"{where}: the model has a coefficient set of its own")
        variant, model = entry.get("variant"), entry.get("model")
        if (variant is None) == (model is None):
            raise DatasetError(path, f"{where}: give either 'variant' or 'model'")
        if variant is not None and variant not in variants:
            raise DatasetError(
                path,
                f"{where}.variant {variant!r} is not a set of this model ({', '.join(variants)})",
            )
        if model is not None and model not in catalogue.model_ids(quantity):
            raise DatasetError(
                path,
                f"{where}.model {model!r} is not a model of {quantity!r} "
                f"({', '.join(catalogue.model_ids(quantity))})",
            )
        obtained = entry.get("obtained", "")
        if not obtained.strip():
            raise DatasetError(path, f"{where}.obtained must say why")
        found[species] = StandIn(species, variant, model, obtained)
    return found


@dataclass(frozen=True)
class Convention:
    """One convention of a fit: its value and where that was read.

    ``value`` is a word (``"total"``), a model id of the quantity the convention is
    named after, or a number in ``units`` (``kernel_value`` in internal units, at
    ``temperature`` K for a density).
    """

    name: str
    value: str | float
    obtained: str
    units: str | None = None
    temperature: float | None = None
    kernel_value: float | None = None

    @property
    def known(self) -> bool:
        """False for "not stated" and "not known"."""
        return self.value not in UNKNOWN

    @property
    def model(self) -> str | None:
        """The id of the model this convention names, if it names one."""
        if self.name not in REFERENCES or not isinstance(self.value, str):
            return None
        return None if self.value in (*UNKNOWN, *REFERENCE_WORDS) else self.value

    @property
    def number(self) -> bool:
        return not isinstance(self.value, str)

    def describe(self) -> str:
        """``"total (read in ...)"``: the value and where it was read, on one line."""
        if self.number:
            at = f" at {self.temperature:g} K" if self.temperature is not None else ""
            text = f"{self.value:g} {self.units}{at}"
        else:
            text = str(self.value)
        return f"{text} ({' '.join(self.obtained.split())})"

    def as_dict(self) -> dict:
        record: dict = {"value": self.value}
        if self.units is not None:
            record["units"] = self.units
        if self.temperature is not None:
            record["temperature"] = self.temperature
        record["obtained"] = self.obtained
        return record


@dataclass(frozen=True)
class FitConventions(Mapping):
    """The conventions of one model file (name -> :class:`Convention`).

    ``recorded`` is False for a file sealed in a release's archive before the section
    existed: its conventions are synthesised from the older fields and compose it as
    that release did.
    """

    entries: Mapping[str, Convention] = field(default_factory=dict)
    recorded: bool = True

    def __getitem__(self, name: str) -> Convention:
        return self.entries[name]

    def __iter__(self) -> Iterator[str]:
        return iter(self.entries)

    def __len__(self) -> int:
        return len(self.entries)

    def value(self, name: str, default=None):
        """The value of a convention, or ``default`` when it is absent or unknown."""
        entry = self.entries.get(name)
        return entry.value if entry is not None and entry.known else default

    def as_dict(self) -> dict:
        record = {name: entry.as_dict() for name, entry in self.entries.items()}
        if not self.recorded:
            record["recorded"] = False
        return record


def _entry(path, name: str, raw, catalogue) -> Convention:
    where = f"fit_conventions.{name}"
    if not isinstance(raw, Mapping):
        raise DatasetError(path, f"{where} must be a table {{ value = ..., obtained = ... }}")
    unknown = set(raw) - {"value", "units", "temperature", "obtained"}
    if unknown:
        raise DatasetError(path, f"{where}: unknown field(s) {sorted(unknown)}")
    if "value" not in raw or "obtained" not in raw:
        missing = "value" if "value" not in raw else "obtained"
        raise DatasetError(path, f"{where}: missing required field {missing!r}")
    value, obtained = raw["value"], raw["obtained"]
    if not isinstance(obtained, str) or not obtained.strip():
        raise DatasetError(
            path,
            f"{where}.obtained must say where the convention was read, or "
            f"'not stated in the source', got {obtained!r}",
        )
    if isinstance(value, str):
        for extra in ("units", "temperature"):
            if extra in raw:
                raise DatasetError(path, f"{where}.{extra} belongs to a number, not {value!r}")
        if value in UNKNOWN:
            return Convention(name, value, obtained)
        if name in WORDS:
            if value not in WORDS[name]:
                allowed = ", ".join(repr(w) for w in (*WORDS[name], *UNKNOWN))
                raise DatasetError(path, f"{where}.value must be one of {allowed}, got {value!r}")
            return Convention(name, value, obtained)
        if value in REFERENCE_WORDS:
            return Convention(name, value, obtained)
        known = catalogue.model_ids(name) if name in catalogue.quantities() else []
        if value not in known:
            raise DatasetError(
                path,
                f"{where}.value {value!r} is neither a model of {name!r} "
                f"({', '.join(known) or 'none'}) nor one of "
                f"{', '.join(repr(w) for w in (*REFERENCE_WORDS, *UNKNOWN))}",
            )
        return Convention(name, value, obtained)
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise DatasetError(path, f"{where}.value must be text or a number, got {value!r}")
    number = REFERENCES.get(name)
    if number is None:
        raise DatasetError(
            path, f"{where}.value must be text (a word or a model id), got {value!r}"
        )
    target, needs_temperature = number
    if "units" not in raw:
        raise DatasetError(path, f"{where}: a number needs its units (e.g. {target!r})")
    kernel_value = convert(path, where, value, raw["units"], target)
    temperature = raw.get("temperature")
    if needs_temperature and temperature is None:
        raise DatasetError(path, f"{where}: a density needs the temperature (K) it holds at")
    if temperature is not None:
        if isinstance(temperature, bool) or not isinstance(temperature, (int, float)):
            raise DatasetError(path, f"{where}.temperature must be a number (K)")
        if not temperature > 0:
            raise DatasetError(path, f"{where}.temperature must be > 0 K, got {temperature!r}")
        temperature = float(temperature)
    return Convention(name, float(value), obtained, raw["units"], temperature, kernel_value)


def parse_fit_conventions(path, quantity: str, raw, catalogue) -> FitConventions:
    """The ``[fit_conventions]`` section of a model file, checked."""
    if not isinstance(raw, Mapping):
        raise DatasetError(path, "field 'fit_conventions' must be a table")
    entries = {}
    for name, entry in raw.items():
        if name not in CONVENTION_NAMES:
            raise DatasetError(
                path,
                f"unknown field 'fit_conventions.{name}' "
                f"(allowed here: {', '.join(CONVENTION_NAMES)})",
            )
        entries[name] = _entry(path, name, entry, catalogue)
    missing = [name for name in REQUIRED.get(quantity, ()) if name not in entries]
    if missing:
        raise DatasetError(
            path,
            f"fit_conventions of a {quantity} model must state {', '.join(missing)} "
            "(each with where it was read, or value 'not stated' / 'not known')",
        )
    return FitConventions(MappingProxyType(entries), recorded=True)


_SEALED = "not recorded when the release was sealed; composed as that release did"


def legacy_conventions(
    quantity: str, extra: Mapping, composed_radiative: bool = False, narrowing_models=()
) -> FitConventions:
    """Conventions of a model file sealed before ``[fit_conventions]`` existed.

    Taken from its older fields (``extra``: the quantity's sections as parsed); every
    other convention is "not known", which composes the model as the release did.
    ``composed_radiative``: the model's kernel takes the material's radiative
    coefficient; ``narrowing_models``: the ids of the narrowing models that exist.
    """
    entries: dict[str, Convention] = {}
    for name in REQUIRED.get(quantity, ()):
        entries[name] = Convention(name, "not known", _SEALED)
    if quantity == "mobility" and "dopant_densities" in extra:
        entries["dopant_densities"] = Convention(
            "dopant_densities",
            extra["dopant_densities"],
            "the file's field 'dopant_densities' (as sealed)",
        )
    narrowing = extra.get("narrowing") or {}
    if "statistics" in narrowing:
        entries["statistics"] = Convention(
            "statistics", narrowing["statistics"], "the file's [narrowing] section (as sealed)"
        )
    if "intrinsic_density" in narrowing:
        density = narrowing["intrinsic_density"]
        entries["intrinsic_density"] = Convention(
            "intrinsic_density",
            density.value,
            density.obtained or "the file's [narrowing] section (as sealed)",
            density.units,
            narrowing["intrinsic_density_temperature"],
            density.kernel_value,
        )
    fit = extra.get("fit") or {}
    if fit:
        # the lifetime's own radiative term was kept; its narrowing was compared (a
        # warning where the material's differed); its intrinsic density was not applied
        entries["radiative_coefficient"] = Convention(
            "radiative_coefficient",
            "composed" if composed_radiative else "own",
            f"the file's [fit] section (as sealed): {fit['radiative']}",
        )
        entries["gap_narrowing"] = Convention(
            "gap_narrowing",
            fit["gap_narrowing"] if fit["gap_narrowing"] in narrowing_models else "not known",
            f"the file's [fit] section (as sealed): {fit['gap_narrowing']}",
        )
    return FitConventions(MappingProxyType(entries), recorded=False)
