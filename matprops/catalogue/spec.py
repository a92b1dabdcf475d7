"""A wafer spec: the user's own silicon, in words of the trade, for a report.

A spec is a small TOML file (or the same as a dict). The bundled invented scenario
``datasets/scenarios/two-site-modules.toml`` is one; ``docs/guides/analyst`` explains
every field. In short::

    title = "Line B wafers at the sites' operating points"
    quantities = ["band_gap", "mobility", "resistivity"]    # optional: a standard set
    carriers = ["electron", "hole"]                         # optional: both

    [wafer]
    dopant = "boron"                 # boron or phosphorus
    resistivity = "1.5 ohm cm"       # as measured (plain number: ohm cm) ...
    measured_at = "23 degC"          # ... at this temperature (a unit is required)
    # density = "1e16 cm^-3"         # instead of resistivity, if the density is known

    [layers.emitter]                 # any number of layers, each by its name
    dopant = "phosphorus"
    density = "3e19 cm^-3"           # plain number: cm^-3
    # on_wafer = true (default): the wafer's own doping is also in the layer

    [operating_points]               # name = temperature (a unit is required) ...
    stc = "25 degC"
    [operating_points.hot-site]      # ... or grouped by site
    noon = "64 degC"

Optional: ``description``, ``invented = true`` (marks made-up data everywhere),
``release = "2026.2"``, ``conversion = "physics"`` or ``"standard"`` in ``[wafer]``
(default: the release's choice; from 2026.2 the ASTM F723 conversion where it holds,
boron and phosphorus at 23 degC, the physics at the measuring temperature elsewhere),
``excess = "1e15 cm^-3"`` in ``[wafer]`` or a layer (injection for lifetimes),
``[models]`` (``quantity = "model-id"``: override the release's choice), and
``units = "degC"`` in ``[operating_points]`` or a site to give plain numbers a unit.

Values with units are strings ``"<number> <unit>"`` in any spelling matprops reads
(``"1e16 cm^-3"``, ``"1e16 cm-3"``, ``"1.5 Ω·cm"``, ``"25 °C"``). Every error names the
field and what it expects.
"""

from __future__ import annotations

import difflib
import math
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path

from ..errors import Error

__all__ = ["Layer", "OperatingPoint", "Spec", "SpecError", "Wafer", "parse_spec", "read_spec"]

DOPANTS = {"boron": "acceptor", "phosphorus": "donor"}
CONVERSIONS = ("physics", "standard")
DEFAULT_QUANTITIES = (
    "band_gap",
    "intrinsic_density",
    "gap_narrowing",
    "effective_intrinsic_density",
    "mobility",
    "diffusivity",
    "resistivity",
    "intrinsic_lifetime",
)


class SpecError(Error, ValueError):
    """A spec field that is missing, unknown, or not what it should be."""

    def __init__(self, source: str, where: str, requirement: str, received=None):
        self.source, self.where, self.requirement = source, where, requirement
        self.received = received
        got = "" if received is None else f"; received {received!r}"
        super().__init__(f"spec {source}: field '{where}' {requirement}{got}")


@dataclass(frozen=True)
class Wafer:
    """The wafer: its dopant, and the resistivity as measured (or the density)."""

    dopant: str
    resistivity: float | None = None  # ohm cm, as measured
    measured_at: float | None = None  # K
    measured_at_text: str = ""
    density: float | None = None  # cm^-3, when given instead of a resistivity
    conversion: str | None = None  # None: the release's choice
    excess: float = 0.0  # cm^-3


@dataclass(frozen=True)
class Layer:
    """A doped layer (emitter, back-surface field ...)."""

    name: str
    dopant: str
    density: float  # cm^-3
    on_wafer: bool = True  # the wafer's own doping is also in the layer
    excess: float = 0.0


@dataclass(frozen=True)
class OperatingPoint:
    name: str
    temperature: float  # K
    site: str | None = None
    units: str = "K"  # the temperature unit it was given in (shown in the report)

    @property
    def label(self) -> str:
        return f"{self.site}: {self.name}" if self.site else self.name


@dataclass(frozen=True)
class Spec:
    title: str
    wafer: Wafer
    points: tuple[OperatingPoint, ...]
    layers: tuple[Layer, ...] = ()
    quantities: tuple[str, ...] = DEFAULT_QUANTITIES
    carriers: tuple[str, ...] = ("electron", "hole")
    description: str = ""
    invented: bool = False
    release: str | None = None
    models: Mapping[str, str] = field(default_factory=dict)
    source: str = "spec"

    @property
    def sites(self) -> list[str | None]:
        return list(dict.fromkeys(p.site for p in self.points))

    @property
    def temperature_units(self) -> str:
        """The unit most operating points were given in."""
        units = [p.units for p in self.points]
        return max(set(units), key=units.count) if units else "K"

    def as_dict(self) -> dict:
        """The spec as read (plain values in K, cm^-3, ohm cm), for a file's metadata."""
        return {
            "title": self.title,
            "description": self.description,
            "invented": self.invented,
            "release": self.release,
            "models": dict(self.models),
            "quantities": list(self.quantities),
            "carriers": list(self.carriers),
            "wafer": {
                "dopant": self.wafer.dopant,
                "resistivity_ohm_cm": self.wafer.resistivity,
                "measured_at_K": self.wafer.measured_at,
                "density_cm-3": self.wafer.density,
                "conversion": self.wafer.conversion,
                "excess_cm-3": self.wafer.excess,
            },
            "layers": [
                {
                    "name": layer.name,
                    "dopant": layer.dopant,
                    "density_cm-3": layer.density,
                    "on_wafer": layer.on_wafer,
                    "excess_cm-3": layer.excess,
                }
                for layer in self.layers
            ],
            "operating_points": [
                {"site": p.site, "name": p.name, "temperature_K": p.temperature}
                for p in self.points
            ],
        }


# --------------------------------------------------------------------------- reading

_TOP = {
    "title",
    "description",
    "invented",
    "release",
    "quantities",
    "carriers",
    "wafer",
    "layers",
    "operating_points",
    "models",
    "name",  # a bundled scenario's file name (informative)
}
_WAFER = {"dopant", "resistivity", "measured_at", "density", "conversion", "excess", "note"}
_LAYER = {"dopant", "density", "on_wafer", "excess", "note"}


def read_spec(path) -> Spec:
    """Read and check a spec file (TOML)."""
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except UnicodeDecodeError as exc:
        raise SpecError(path.name, "(file)", "must be UTF-8 text", str(exc)) from exc
    return parse_text(text, path.name)


def parse_text(text: str, source: str = "spec") -> Spec:
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise SpecError(source, "(file)", "must be valid TOML", str(exc)) from exc
    return parse_spec(data, source)


def parse_spec(data: Mapping, source: str = "spec") -> Spec:
    """Check a spec given as a mapping (a parsed TOML file) -> :class:`Spec`."""
    if not isinstance(data, Mapping):
        raise SpecError(source, "(spec)", "must be a table of fields", type(data).__name__)
    _known(source, "", data, _TOP)
    for required in ("title", "wafer", "operating_points"):
        if required not in data:
            raise SpecError(source, required, "is required (see the analyst's guide)")
    title = _text(source, "title", data["title"])
    wafer = _wafer(source, data["wafer"])
    layers = _layers(source, data.get("layers", {}))
    points = _points(source, data["operating_points"])
    quantities = tuple(_names(source, "quantities", data.get("quantities", DEFAULT_QUANTITIES)))
    carriers = tuple(_names(source, "carriers", data.get("carriers", ("electron", "hole"))))
    for carrier in carriers:
        if carrier not in ("electron", "hole"):
            raise SpecError(source, "carriers", "must list electron and/or hole", carrier)
    models = data.get("models", {})
    if not isinstance(models, Mapping) or not all(isinstance(v, str) for v in models.values()):
        raise SpecError(source, "models", 'must be a table of quantity = "model-id"', models)
    invented = data.get("invented", False)
    if not isinstance(invented, bool):
        raise SpecError(source, "invented", "must be true or false", invented)
    release = data.get("release")
    if release is not None and not isinstance(release, str):
        raise SpecError(source, "release", 'must be a release id such as "2026.2"', release)
    return Spec(
        title=title,
        wafer=wafer,
        points=points,
        layers=layers,
        quantities=quantities,
        carriers=carriers,
        description=_text(source, "description", data.get("description", ""), empty=True),
        invented=invented,
        release=release,
        models=dict(models),
        source=source,
    )


def _known(source, where, data, allowed):
    for key in data:
        if key not in allowed:
            close = difflib.get_close_matches(str(key), sorted(allowed), n=1)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            raise SpecError(
                source,
                f"{where}{key}",
                f"is not a field here; allowed: {', '.join(sorted(allowed))}{hint}",
            )


def _text(source, where, value, empty=False) -> str:
    if not isinstance(value, str) or (not empty and not value.strip()):
        raise SpecError(source, where, "must be text", value)
    return value.strip()


def _names(source, where, value) -> list[str]:
    if isinstance(value, str):
        value = [value]
    if (
        not isinstance(value, (list, tuple))
        or not value
        or not all(isinstance(v, str) for v in value)
    ):
        raise SpecError(source, where, "must be a list of names", value)
    return list(value)


def _value(source, where, value, argument, units, needs_unit=False) -> float:
    """A number with units (a string "1.5 ohm cm" or a plain number in ``units``)."""
    from ..units import coerce

    if isinstance(value, bool) or not isinstance(value, (int, float, str)):
        raise SpecError(source, where, f"must be a number in {units} or text with a unit", value)
    if needs_unit and not isinstance(value, str):
        raise SpecError(
            source, where, 'needs its unit, as text: e.g. "23 degC" or "296.15 K"', value
        )
    if isinstance(value, str) and needs_unit:
        from ..units import _NUMBER_THEN_UNIT

        match = _NUMBER_THEN_UNIT.match(value)
        if match and not match.group(2):
            raise SpecError(
                source, where, 'needs its unit, as text: e.g. "23 degC" or "296.15 K"', value
            )
    try:
        array, _, _ = coerce(value, argument, units)
    except Error as exc:
        raise SpecError(source, where, f"must be a {argument.replace('_', ' ')} ({exc})") from exc
    number = float(array)
    if not math.isfinite(number):
        raise SpecError(source, where, "must be finite", value)
    return number


def _dopant(source, where, value) -> str:
    text = str(value).strip().lower()
    if text not in DOPANTS:
        raise SpecError(
            source,
            where,
            f"must be one of {', '.join(DOPANTS)} (the species whose coefficient sets the "
            "report's quantities take)",
            value,
        )
    return text


def _wafer(source, data) -> Wafer:
    if not isinstance(data, Mapping):
        raise SpecError(source, "wafer", "must be a table ([wafer])", data)
    _known(source, "wafer.", data, _WAFER)
    if "dopant" not in data:
        raise SpecError(source, "wafer.dopant", "is required (boron or phosphorus)")
    dopant = _dopant(source, "wafer.dopant", data["dopant"])
    has_rho, has_density = "resistivity" in data, "density" in data
    if has_rho == has_density:
        raise SpecError(
            source,
            "wafer.resistivity",
            "or wafer.density must be given (one of them: the resistivity as measured, "
            "with measured_at, or the dopant density)",
        )
    conversion = data.get("conversion")
    if conversion is not None and conversion not in CONVERSIONS:
        raise SpecError(source, "wafer.conversion", f"must be one of {CONVERSIONS}", conversion)
    excess = _value(source, "wafer.excess", data.get("excess", 0.0), "excess_density", "cm^-3")
    if has_density:
        density = _value(source, "wafer.density", data["density"], "dopant_density", "cm^-3")
        if "measured_at" in data:
            raise SpecError(
                source, "wafer.measured_at", "goes with wafer.resistivity, not wafer.density"
            )
        return Wafer(dopant=dopant, density=density, conversion=conversion, excess=excess)
    rho = _value(source, "wafer.resistivity", data["resistivity"], "resistivity", "ohm*cm")
    if rho <= 0:
        raise SpecError(source, "wafer.resistivity", "must be > 0", data["resistivity"])
    if "measured_at" not in data:
        raise SpecError(
            source,
            "wafer.measured_at",
            'is required with a resistivity: the temperature it was measured at, e.g. "23 degC"',
        )
    t = _value(
        source, "wafer.measured_at", data["measured_at"], "temperature", "K", needs_unit=True
    )
    return Wafer(
        dopant=dopant,
        resistivity=rho,
        measured_at=t,
        measured_at_text=str(data["measured_at"]),
        conversion=conversion,
        excess=excess,
    )


def _layers(source, data) -> tuple[Layer, ...]:
    if not isinstance(data, Mapping):
        raise SpecError(source, "layers", "must be tables [layers.<name>]", data)
    layers = []
    for name, spec in data.items():
        where = f"layers.{name}."
        if not isinstance(spec, Mapping):
            raise SpecError(source, f"layers.{name}", "must be a table", spec)
        _known(source, where, spec, _LAYER)
        for required in ("dopant", "density"):
            if required not in spec:
                raise SpecError(source, where + required, "is required")
        on_wafer = spec.get("on_wafer", True)
        if not isinstance(on_wafer, bool):
            raise SpecError(source, where + "on_wafer", "must be true or false", on_wafer)
        layers.append(
            Layer(
                name=str(name),
                dopant=_dopant(source, where + "dopant", spec["dopant"]),
                density=_value(
                    source, where + "density", spec["density"], "dopant_density", "cm^-3"
                ),
                on_wafer=on_wafer,
                excess=_value(
                    source, where + "excess", spec.get("excess", 0.0), "excess_density", "cm^-3"
                ),
            )
        )
    if "wafer" in {layer.name for layer in layers}:
        raise SpecError(source, "layers.wafer", "is the wafer itself: name the layer otherwise")
    return tuple(layers)


def _points(source, data) -> tuple[OperatingPoint, ...]:
    if not isinstance(data, Mapping) or not data:
        raise SpecError(source, "operating_points", 'must be a table of name = "temperature"', data)
    points = []

    def one(where, name, value, site, units):
        if isinstance(value, (int, float)) and not isinstance(value, bool) and units:
            value = f"{value} {units}"
        t = _value(source, where, value, "temperature", "K", needs_unit=True)
        shown = _temperature_unit(str(value))
        points.append(OperatingPoint(name=str(name), temperature=t, site=site, units=shown))

    units = data.get("units")
    for key, value in data.items():
        if key == "units":
            continue
        if isinstance(value, Mapping):  # a site
            site_units = value.get("units", units)
            for name, temperature in value.items():
                if name == "units":
                    continue
                one(f"operating_points.{key}.{name}", name, temperature, str(key), site_units)
        else:
            one(f"operating_points.{key}", key, value, None, units)
    if not points:
        raise SpecError(source, "operating_points", "must name at least one operating point")
    return tuple(points)


def _temperature_unit(text: str) -> str:
    lowered = text.lower()
    if "degc" in lowered or "°c" in lowered or "celsius" in lowered:
        return "degC"
    if "degf" in lowered or "°f" in lowered:
        return "degF"
    return "K"
