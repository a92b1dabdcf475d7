"""The defect catalogue: recombination centres for Shockley-Read-Hall lifetimes.

Each file ``datasets/defects/<name>.toml`` describes one defect level as published:
its energy against the band edge it was measured from, the electron and hole
capture cross-sections (constant or with a temperature law) or, where the
publication determined only their ratio ``k = sigma_n / sigma_p`` (lifetime
spectroscopy), that ratio; the thermal-velocity convention the cross-sections
were extracted with; the source; and how the numbers were obtained. Files are
checked against ``datasets/checksums.sha256`` like every dataset file.

Only the product ``sigma v_th`` is measured: a cross-section is meaningful with the
thermal velocity its authors used. An entry names that convention as a
``thermal_velocity`` model of the catalogue when it is known; otherwise the
release's thermal velocity is used and the provenance says the convention is
unknown.

A defect can also be given inline, as a mapping::

    {"level": 0.38, "reference": "valence",          # eV, E_t - E_v
     "electron_cross_section": 5e-14,                 # cm^2 (or a pint quantity)
     "hole_cross_section": 7e-17, "name": "my Fe_i"}

with ``reference`` one of ``"conduction"`` (level = E_c - E_t), ``"valence"``
(E_t - E_v) or ``"intrinsic"`` (E_t - E_i, either sign); a cross-section may also
be a mapping ``{"value": ..., "law": "power", "exponent": ..., "reference_temperature":
...}`` or ``{"value": ..., "law": "activated", "activation_energy": ...}``.
"""

from __future__ import annotations

import dataclasses
import re
import weakref
from collections.abc import Mapping
from pathlib import Path

import numpy as np

from ..errors import DatasetError, InputError, UnknownDefectError
from ..kernels import srh_lifetime as srh
from .fields import convert, require
from .modelfile import sources_of
from .records import Source
from .schema import DEFECT, validate
from .store import Catalogue, _parse_toml, default_catalogue

__all__ = ["CrossSection", "Defect", "defect", "describe", "names", "parse"]

FOLDER = "defects"
NAME = re.compile(r"^[a-z][a-z0-9]*(-[a-z0-9]+)*$")


@dataclasses.dataclass(frozen=True)
class CrossSection:
    """A capture cross-section: the printed value and its temperature law.

    ``value`` is in cm^2 (the high-temperature limit for an activated law, the value
    at ``reference_temperature`` for a power law); ``printed`` keeps the numbers as
    the source gives them.
    """

    value: float
    law: str = "constant"
    reference_temperature: float = 300.0
    exponent: float = 0.0
    activation_energy: float = 0.0
    printed: Mapping = dataclasses.field(default_factory=dict, compare=False)

    def __call__(self, temperature):
        """sigma(T) in cm^2."""
        return srh.cross_section(
            temperature,
            value=self.value,
            law=self.law,
            reference_temperature=self.reference_temperature,
            exponent=self.exponent,
            activation_energy=self.activation_energy,
        )

    def describe(self) -> str:
        if self.law == "power":
            return f"{self.value:g} cm^2 x (T / {self.reference_temperature:g} K)^{self.exponent:g}"
        if self.law == "activated":
            return f"{self.value:g} cm^2 x exp(-{self.activation_energy:g} eV / kT)"
        return f"{self.value:g} cm^2"


@dataclasses.dataclass(frozen=True)
class Defect:
    """One defect level with its capture parameters and provenance.

    ``energy`` (eV) is measured from ``reference``: ``E_c - E_t`` ("conduction"),
    ``E_t - E_v`` ("valence") or ``E_t - E_i`` ("intrinsic"). Either both
    cross-sections are known, or only their ratio ``cross_section_ratio``
    (``sigma_n / sigma_p``). ``thermal_velocity`` is the id of the thermal-velocity
    model the cross-sections go with (None: not known; the release's is used).
    """

    name: str
    energy: float
    reference: str
    electron_cross_section: CrossSection | None
    hole_cross_section: CrossSection | None
    cross_section_ratio: float | None
    thermal_velocity: str | None
    thermal_velocity_note: str
    description: str = ""
    aliases: tuple[str, ...] = ()
    source: Source | None = None
    additional_sources: tuple[Source, ...] = ()
    obtained: str = "given inline by the user"
    notes: str = ""
    temperature_range: tuple[float, float] | None = None
    path: Path | None = None

    @property
    def inline(self) -> bool:
        return self.path is None

    @property
    def absolute(self) -> bool:
        """Whether both capture cross-sections are known (not only their ratio)."""
        return self.electron_cross_section is not None

    def ratio(self, temperature):
        """``k = sigma_n / sigma_p`` at the temperature(s)."""
        if self.absolute:
            return self.electron_cross_section(temperature) / self.hole_cross_section(temperature)
        return np.full(np.shape(temperature), float(self.cross_section_ratio))

    def level_text(self) -> str:
        if self.reference == "conduction":
            return f"E_c - {self.energy:g} eV"
        if self.reference == "valence":
            return f"E_v + {self.energy:g} eV"
        return f"E_i {'+' if self.energy >= 0 else '-'} {abs(self.energy):g} eV"

    def provenance(self) -> dict:
        record = {
            "defect": self.name,
            "level": self.level_text(),
            "level_energy": {"value": self.energy, "units": "eV", "measured_from": self.reference},
            "thermal_velocity": self.thermal_velocity or "the release's",
            "thermal_velocity_convention": self.thermal_velocity_note,
            "obtained": self.obtained,
        }
        if self.absolute:
            record["electron_cross_section"] = self.electron_cross_section.describe()
            record["hole_cross_section"] = self.hole_cross_section.describe()
        else:
            record["cross_section_ratio"] = self.cross_section_ratio
        if self.description:
            record["description"] = self.description
        if self.source is not None:
            record["citation"] = self.source.citation()
            record["doi"] = self.source.doi
            record["source"] = self.source.as_dict()
        if self.additional_sources:
            record["additional_sources"] = [s.as_dict() for s in self.additional_sources]
        if self.temperature_range:
            record["validity"] = {
                "temperature": {
                    "min": self.temperature_range[0],
                    "max": self.temperature_range[1],
                    "units": "K",
                }
            }
        if self.notes:
            record["notes"] = self.notes
        if self.path is not None:
            record["file"] = f"{FOLDER}/{self.path.name}"
        return record

    def sources(self) -> list[tuple[str, Source]]:
        found = [(s.key(), s) for s in ((self.source,) if self.source else ())]
        return found + [(s.key(), s) for s in self.additional_sources]

    def __repr__(self) -> str:
        if self.absolute:
            capture = (
                f"sigma_n {self.electron_cross_section.describe()}, "
                f"sigma_p {self.hole_cross_section.describe()}"
            )
        else:
            capture = f"sigma_n/sigma_p = {self.cross_section_ratio:g} (ratio only)"
        cited = f"; {self.source.citation()}" if self.source else "; inline"
        return f"<Defect {self.name}: {self.level_text()}; {capture}{cited}>"


# --------------------------------------------------------------------------- catalogue

_LOADED: weakref.WeakKeyDictionary = weakref.WeakKeyDictionary()


def _folder(catalogue: Catalogue) -> Path:
    return catalogue.data_folder(FOLDER)


def names(catalogue: Catalogue | None = None) -> list[str]:
    """Names of the defects in the catalogue (sorted)."""
    catalogue = catalogue or default_catalogue()
    folder = _folder(catalogue)
    return sorted(p.stem for p in folder.glob("*.toml")) if folder.is_dir() else []


def _aliases(catalogue: Catalogue) -> dict[str, str]:
    cache = _LOADED.setdefault(catalogue, {})
    if "__aliases__" not in cache:
        table = {}
        for name in names(catalogue):
            for alias in defect(name, catalogue).aliases:
                table[alias.lower()] = (alias, name)
        cache["__aliases__"] = table
    return cache["__aliases__"]


def defect(name: str, catalogue: Catalogue | None = None) -> Defect:
    """A catalogue entry by name or alias (``"iron-interstitial"``, ``"Fe_i"``)."""
    catalogue = catalogue or default_catalogue()
    cache = _LOADED.setdefault(catalogue, {})
    known = names(catalogue)
    key = str(name).strip()
    if key not in known:
        if key.lower() in known:
            key = key.lower()
        else:
            aliases = _aliases(catalogue)
            if key.lower() not in aliases:
                shown = known + sorted(f"{a} (= {n})" for a, n in aliases.values())
                raise UnknownDefectError(name, shown, "in the defect catalogue")
            key = aliases[key.lower()][1]
    if key not in cache:
        path = _folder(catalogue) / f"{key}.toml"
        cache[key] = _build(path, _parse_toml(path, catalogue.verified_bytes(path)))
    return cache[key]


def describe(catalogue: Catalogue | None = None) -> list[Defect]:
    """Every catalogue entry, loaded and checked (sorted by name)."""
    return [defect(name, catalogue) for name in names(catalogue)]


# --------------------------------------------------------------------------- parsing


def _number(path, where, value):
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise DatasetError(path, f"{where} must be a number, got {value!r}")
    return float(value)


def _quantity(path, where, entry, units):
    if not isinstance(entry, dict):
        raise DatasetError(path, f"{where} must be a table with value and units")
    require(path, entry, "value", where=where + ".")
    require(path, entry, "units", str, where=where + ".")
    return convert(
        path, where, _number(path, where + ".value", entry["value"]), entry["units"], units
    )


def _cross_section_file(path, where, entry) -> CrossSection:
    sigma = _quantity(path, where, entry, "cm^2")
    law = entry.get("law", "constant")
    if law not in srh.LAWS:
        raise DatasetError(path, f"{where}.law must be one of {', '.join(srh.LAWS)}, got {law!r}")
    kwargs = {}
    if law == "power":
        kwargs["exponent"] = _number(
            path, f"{where}.exponent", require(path, entry, "exponent", where=where + ".")
        )
        kwargs["reference_temperature"] = _quantity(
            path,
            f"{where}.reference_temperature",
            require(path, entry, "reference_temperature", where=where + "."),
            "K",
        )
    elif law == "activated":
        kwargs["activation_energy"] = _quantity(
            path,
            f"{where}.activation_energy",
            require(path, entry, "activation_energy", where=where + "."),
            "eV",
        )
    if not sigma > 0:
        raise DatasetError(path, f"{where}: a cross-section must be > 0 cm^2")
    return CrossSection(sigma, law, printed=dict(entry), **kwargs)


def _build(path: Path, data: Mapping) -> Defect:
    validate(path, data, DEFECT)
    name = require(path, data, "name", str)
    if name != path.stem or not NAME.match(name):
        raise DatasetError(
            path,
            f"field 'name' is {name!r}; it must equal the file name "
            "and be lower-case words joined by hyphens",
        )
    obtained = require(path, data, "obtained", str)
    if not obtained.strip():
        raise DatasetError(path, "field 'obtained' must say how the numbers were obtained")
    level = require(path, data, "level", dict)
    energy = _quantity(path, "level.energy", require(path, level, "energy", where="level."), "eV")
    reference = require(path, level, "reference", str, where="level.")
    if reference not in srh.REFERENCES:
        raise DatasetError(
            path, f"level.reference must be one of {', '.join(srh.REFERENCES)}, got {reference!r}"
        )
    if reference != "intrinsic" and not 0 < energy < 1.2:
        raise DatasetError(
            path, "level.energy must lie inside the gap (0 to about 1.2 eV from its reference edge)"
        )
    has_n, has_p = "electron_cross_section" in data, "hole_cross_section" in data
    ratio = data.get("cross_section_ratio")
    if has_n != has_p or (has_n and ratio is not None) or (not has_n and ratio is None):
        raise DatasetError(
            path,
            "give both electron_cross_section and hole_cross_section, "
            "or only cross_section_ratio (sigma_n / sigma_p)",
        )
    sigma_n = sigma_p = None
    if has_n:
        sigma_n = _cross_section_file(
            path, "electron_cross_section", data["electron_cross_section"]
        )
        sigma_p = _cross_section_file(path, "hole_cross_section", data["hole_cross_section"])
    else:
        ratio = _quantity(path, "cross_section_ratio", ratio, "dimensionless")
        if not ratio > 0:
            raise DatasetError(path, "cross_section_ratio must be > 0")
    velocity = require(path, data, "thermal_velocity", dict)
    convention = require(path, velocity, "convention", str, where="thermal_velocity.")
    model = velocity.get("model")
    if model is not None and not isinstance(model, str):
        raise DatasetError(path, "thermal_velocity.model must be a model id (string)")
    source, extra = sources_of(path, data)
    temperature_range = None
    validity = data.get("validity", {})
    if validity:
        entry = require(path, validity, "temperature", dict, where="validity.")
        for f in ("min", "max", "units"):
            require(path, entry, f, where="validity.temperature.")
        low = convert(path, "validity.temperature", entry["min"], entry["units"], "K")
        high = convert(path, "validity.temperature", entry["max"], entry["units"], "K")
        if not 0 < low < high:
            raise DatasetError(path, "validity.temperature: need 0 < min < max")
        temperature_range = (low, high)
    aliases = data.get("aliases", [])
    if not isinstance(aliases, list) or not all(isinstance(a, str) for a in aliases):
        raise DatasetError(path, "field 'aliases' must be a list of strings")
    return Defect(
        name=name,
        energy=energy,
        reference=reference,
        electron_cross_section=sigma_n,
        hole_cross_section=sigma_p,
        cross_section_ratio=ratio,
        thermal_velocity=model,
        thermal_velocity_note=convention,
        description=str(data.get("description", "")),
        aliases=tuple(aliases),
        source=source,
        additional_sources=extra,
        obtained=obtained,
        notes=str(data.get("notes", "")),
        temperature_range=temperature_range,
        path=path,
    )


# --------------------------------------------------------------------------- inline

_INLINE = {
    "level",
    "reference",
    "electron_cross_section",
    "hole_cross_section",
    "cross_section_ratio",
    "name",
    "thermal_velocity",
}


def _inline_number(value, argument, units, requirement=None):
    from ..units import coerce

    array, _, _ = coerce(value, argument, units, requirement)
    if array.ndim:
        raise InputError(argument, f"a single number in {units}", f"shape {array.shape}")
    return float(array)


def _inline_cross_section(value, argument) -> CrossSection:
    if isinstance(value, Mapping):
        unknown = set(value) - {
            "value",
            "law",
            "exponent",
            "reference_temperature",
            "activation_energy",
        }
        if unknown:
            raise InputError(
                argument,
                "a mapping with value, law and its parameters",
                f"unknown key(s) {sorted(unknown)}",
            )
        if "value" not in value:
            raise InputError(argument, "a mapping with a 'value'", repr(dict(value)))
        law = value.get("law", "constant")
        if law not in srh.LAWS:
            raise InputError(f"{argument}.law", f"one of {', '.join(srh.LAWS)}", repr(law))
        kwargs = {}
        if law == "power":
            kwargs["exponent"] = _inline_number(
                value.get("exponent"), f"{argument}.exponent", "dimensionless"
            )
            kwargs["reference_temperature"] = _inline_number(
                value.get("reference_temperature", 300.0),
                f"{argument}.reference_temperature",
                "K",
                "positive",
            )
        elif law == "activated":
            kwargs["activation_energy"] = _inline_number(
                value.get("activation_energy"), f"{argument}.activation_energy", "eV"
            )
        sigma = _inline_number(value["value"], argument, "cm^2")
        if not sigma > 0:
            raise InputError(argument, "> 0 cm^2 (a capture cross-section)", f"{sigma:g} cm^2")
        return CrossSection(sigma, law, printed=dict(value), **kwargs)
    sigma = _inline_number(value, argument, "cm^2")
    if not sigma > 0:
        raise InputError(argument, "> 0 cm^2 (a capture cross-section)", f"{sigma:g} cm^2")
    return CrossSection(sigma, printed={"value": value})


def parse(value, catalogue: Catalogue | None = None, argument: str = "defect") -> Defect:
    """A :class:`Defect` from a catalogue name, an inline mapping, or a Defect."""
    if isinstance(value, Defect):
        return value
    if isinstance(value, str):
        return defect(value, catalogue)
    if not isinstance(value, Mapping):
        raise InputError(
            argument,
            "a catalogue name (matprops.catalogue.defects.names()) or a "
            "mapping with level, reference and cross-sections",
            repr(value),
        )
    unknown = set(value) - _INLINE
    if unknown:
        raise InputError(
            argument,
            f"a mapping with keys among {', '.join(sorted(_INLINE))}",
            f"unknown key(s) {sorted(unknown)}",
        )
    for key in ("level", "reference"):
        if key not in value:
            raise InputError(
                f"{argument}.{key}",
                f"given (level in eV; reference one of {', '.join(srh.REFERENCES)})",
                "nothing",
            )
    reference = value["reference"]
    if reference not in srh.REFERENCES:
        raise InputError(
            f"{argument}.reference", f"one of {', '.join(srh.REFERENCES)}", repr(reference)
        )
    energy = _inline_number(value["level"], f"{argument}.level", "eV")
    if reference != "intrinsic" and energy <= 0:
        raise InputError(
            f"{argument}.level",
            f"> 0 eV into the gap from the {reference} "
            "band edge (a level outside the gap is no recombination centre)",
            f"{energy:g} eV",
        )
    has_n = "electron_cross_section" in value
    has_p = "hole_cross_section" in value
    has_k = "cross_section_ratio" in value
    if not ((has_n and has_p and not has_k) or (has_k and not has_n and not has_p)):
        raise InputError(
            argument,
            "both electron_cross_section and hole_cross_section "
            "(cm^2), or only cross_section_ratio (sigma_n / sigma_p)",
            f"keys {sorted(value)}",
        )
    sigma_n = sigma_p = ratio = None
    if has_n:
        sigma_n = _inline_cross_section(
            value["electron_cross_section"], f"{argument}.electron_cross_section"
        )
        sigma_p = _inline_cross_section(
            value["hole_cross_section"], f"{argument}.hole_cross_section"
        )
    else:
        ratio = _inline_number(
            value["cross_section_ratio"], f"{argument}.cross_section_ratio", "dimensionless"
        )
        if not ratio > 0:
            raise InputError(f"{argument}.cross_section_ratio", "> 0", f"{ratio:g}")
    model = value.get("thermal_velocity")
    if model is not None and not isinstance(model, str):
        raise InputError(f"{argument}.thermal_velocity", "a thermal_velocity model id", repr(model))
    return Defect(
        name=str(value.get("name", "inline defect")),
        energy=energy,
        reference=reference,
        electron_cross_section=sigma_n,
        hole_cross_section=sigma_p,
        cross_section_ratio=ratio,
        thermal_velocity=model,
        thermal_velocity_note=(
            "the model named by the user"
            if model
            else "not stated; the release's thermal velocity is used"
        ),
    )
