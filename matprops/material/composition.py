"""Composition by fit conventions: each model fed what its coefficients were fitted with.

A model file of a composed quantity states its fit conventions
(:mod:`matprops.catalogue.conventions`). The material reads them here:

- ``dopant_densities``: ``"total"`` -> the dopant densities as given; ``"ionised"`` ->
  the ionised densities of the equilibrium (of the model's carrier convention);
- ``carrier_densities``: ``"complete-ionisation"`` -> the equilibrium carriers with
  every dopant ionised (same statistics, narrowing and intrinsic density); ``"free"``
  or unknown -> the equilibrium free carriers, incomplete ionisation included;

An unknown convention ("not stated", "not known") composes the model as the release
did before conventions were recorded.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from ..errors import UnknownVariantError

__all__ = ["Consistency", "Mismatch", "complete_ionisation", "species_model"]


def complete_ionisation(model) -> bool:
    """Whether ``model`` was fitted with the carriers of complete ionisation."""
    conventions = model.conventions
    return conventions is not None and (
        conventions.value("carrier_densities") == "complete-ionisation"
    )


def species_model(model, species: str, catalogue):
    """``(model bound to the set serving a dopant species, StandIn or None)``.

    A species the model has no coefficient set for is served by what its file's
    ``[stand_ins]`` names (another species' set of the model, or another model of the
    quantity), labelled so in provenance; none named: an error listing both."""
    if model.variant_axis != "dopant":
        return model, None
    if species in model.variants:
        return model.select(species), None
    stand_ins = model.extra.get("stand_ins", {})
    stand_in = stand_ins.get(species)
    if stand_in is None:
        served = sorted(set(model.variants) | set(stand_ins))
        raise UnknownVariantError(
            species, served, f"(dopant) for model {model.quantity}/{model.id}"
        )
    if stand_in.variant is not None:
        return model.select(stand_in.variant), stand_in
    other = catalogue.model(model.quantity, stand_in.model)
    return other.select(species), stand_in


# --------------------------------------------------------------------------- the report

# standard points of the sizes: room temperature, n- and p-type, three decades of doping
STANDARD_TEMPERATURE = 300.0
STANDARD_DOPINGS = (1e15, 1e17, 1e19)


@dataclass(frozen=True)
class Mismatch:
    """A fit convention of a model in use that the material could not honour.

    ``sizes`` maps a standard point (``"300 K, Nd=1e+17"``) to the relative difference
    of ``effect`` between the fit's convention and what the material uses."""

    quantity: str
    model: str
    convention: str
    fitted: str
    used: str
    effect: str
    sizes: Mapping[str, float]

    def message(self) -> str:
        worst = max(self.sizes.items(), key=lambda kv: abs(kv[1])) if self.sizes else None
        size = (
            f"; {self.effect} differs by {worst[1]:+.1%} at {worst[0]}"
            f" ({', '.join(f'{k}: {v:+.1%}' for k, v in self.sizes.items())})"
            if worst
            else ""
        )
        return (
            f"model {self.quantity}/{self.model} was fitted with {self.convention} "
            f"{self.fitted}; the material uses {self.used}{size}"
        )

    def as_dict(self) -> dict:
        return {
            "quantity": self.quantity,
            "model": self.model,
            "convention": self.convention,
            "fitted": self.fitted,
            "used": self.used,
            "effect": self.effect,
            "sizes": dict(self.sizes),
        }


@dataclass(frozen=True)
class Consistency:
    """How a material's models are composed by their fit conventions.

    Its length is the number of :attr:`mismatches` (conventions the material could not
    honour, each with its size at standard points): zero for a consistent choice.
    :attr:`applied` says what the composition carried to honour the conventions,
    :attr:`unverified` which conventions are not known (composed as before they were
    recorded), :attr:`stand_ins` which dopant species are served by another's set.
    """

    release: str
    models: Mapping[str, str]
    mismatches: tuple[Mismatch, ...]
    applied: Mapping[str, tuple[str, ...]]
    unverified: tuple[str, ...]
    stand_ins: tuple[str, ...]

    def __len__(self) -> int:
        return len(self.mismatches)

    def __iter__(self):
        return iter(self.mismatches)

    def __bool__(self) -> bool:
        return bool(self.mismatches)

    def of(self, quantity: str) -> tuple[Mismatch, ...]:
        """The mismatches of one quantity's model."""
        return tuple(m for m in self.mismatches if m.quantity == quantity)

    def as_dict(self) -> dict:
        return {
            "release": self.release,
            "models": dict(self.models),
            "mismatches": [m.as_dict() for m in self.mismatches],
            "applied": {q: list(v) for q, v in self.applied.items()},
            "unverified": list(self.unverified),
            "stand_ins": list(self.stand_ins),
        }

    def __repr__(self) -> str:
        lines = [f"<Consistency of release {self.release}: {len(self)} mismatch(es)"]
        lines += [f"  MISMATCH {m.message()}" for m in self.mismatches]
        for entries in self.applied.values():
            lines += [f"  applied  {entry}" for entry in entries]
        lines += [f"  unverified {entry}" for entry in self.unverified]
        lines += [f"  stand-in {entry}" for entry in self.stand_ins]
        return "\n".join(lines) + "\n>"


def _points():
    """(label, Nd, Na) of the standard points."""
    for kind in ("Nd", "Na"):
        for density in STANDARD_DOPINGS:
            yield f"{STANDARD_TEMPERATURE:g} K, {kind}={density:g}", kind, density


def _quiet(material, method: str, *args, **kwargs):
    """``material.method(...)`` without validity checks (the sizes of a report are
    evaluated at the standard points whatever the ranges say), through the material's
    checked view: no warning filter is touched, so no other thread loses a warning."""
    return getattr(material._checked_already(), method)(*args, **kwargs)


def _with(si, **models):
    """The same material with other models for some quantities, neither strict nor
    reporting to the caller's collector (the sizes of a report are evaluated at
    standard points whatever the validity ranges say)."""
    return type(si)(
        release=si.release.id,
        models={**si._overrides, **models},
        catalogue=si.catalogue.base,
    )


def _product_sizes(si, other) -> dict:
    """n0 p0 of ``other`` against ``si`` at the standard points (carriers of complete
    ionisation: the narrowing's own effect, not the dopant model's)."""
    ni = float(si.intrinsic_density(STANDARD_TEMPERATURE).m)
    sizes = {}
    for label, kind, density in _points():
        majority, minority = density, ni * ni / density
        n, p = (majority, minority) if kind == "Nd" else (minority, majority)
        values = [
            float(
                _quiet(
                    material,
                    "effective_intrinsic_density",
                    STANDARD_TEMPERATURE,
                    n=n,
                    p=p,
                    **{kind: density},
                ).m
            )
            for material in (si, other)
        ]
        sizes[label] = (values[1] / values[0]) ** 2 - 1.0
    return sizes


def _statistics_sizes(si, fitted: str) -> dict:
    sizes = {}
    for label, kind, density in _points():
        states = [
            _quiet(si, "equilibrium", STANDARD_TEMPERATURE, statistics=s, **{kind: density})
            for s in (si._carriers().statistics, fitted)
        ]
        products = [float(s.n.m * s.p.m) for s in states]
        sizes[label] = products[1] / products[0] - 1.0
    return sizes


def _model_ratio(si, quantity: str, fitted: str, used) -> dict:
    """Relative difference of another model of ``quantity`` at the standard temperature."""
    t = STANDARD_TEMPERATURE
    other = si.catalogue.model(quantity, fitted)
    label = f"{t:g} K"
    if other.variant_axis == "carrier":
        return {
            f"{label}, {c}": float(other.select(c)(temperature=t))
            / float(used.select(c)(temperature=t))
            - 1.0
            for c in ("electron", "hole")
        }
    a, b = other(temperature=t), used(temperature=t)
    if isinstance(a, tuple):  # densities of states: (Nc, Nv)
        pairs = zip(("Nc", "Nv"), a, b, strict=True)
        return {f"{label}, {n}": float(x) / float(y) - 1.0 for n, x, y in pairs}
    return {label: float(a) / float(b) - 1.0}


def _density_text(entry) -> str:
    if entry.number:
        return f"{entry.value:g} {entry.units} at {entry.temperature:g} K"
    return str(entry.value)


def consistency(si) -> Consistency:
    """The consistency report of a material (see :meth:`Silicon.consistency`)."""
    bound = si._carriers()
    t = STANDARD_TEMPERATURE
    kt = 8.617333262e-5 * t
    mismatches, unverified, stand_ins = [], [], []
    applied: dict[str, list[str]] = {}
    for quantity, model in si._models.items():
        conventions = model.conventions
        if conventions is None:
            continue
        name = f"{quantity}/{model.id}"
        notes = applied.setdefault(quantity, [])
        if not conventions.recorded:
            notes.append(
                f"{name}: no fit conventions recorded (a file sealed before they existed): "
                "composed as its release did"
            )
        for record in model.extra.get("stand_ins", {}).values():
            stand_ins.append(f"{name}: {record.describe()}")
        for convention, entry in conventions.items():
            if not entry.known:
                if conventions.recorded:
                    unverified.append(f"{name}: {convention} {entry.value}")
                continue
            value = entry.value
            # -- densities fed to the model
            if convention == "dopant_densities":
                notes.append(f"{name}: fed the {value} dopant densities (its fit's)")
            elif convention == "carrier_densities":
                if quantity == "free_carrier_absorption":
                    notes.append(
                        f"{name}: takes the n, p given; fitted with "
                        + (
                            "free-carrier densities"
                            if value == "free"
                            else "dopant densities standing for the carriers"
                        )
                    )
                elif quantity == "radiative_coefficient":
                    notes.append(
                        f"{name}: multiplies n p - n0 p0 of the "
                        + ("free carriers" if value == "free" else "carriers of its fit")
                    )
                elif value == "complete-ionisation":
                    also = " (also in the conductivity)" if quantity == "mobility" else ""
                    notes.append(f"{name}: fed the carriers of complete ionisation{also}")
                else:
                    notes.append(f"{name}: fed the equilibrium free carriers")
            # -- statistics
            elif convention == "statistics":
                solver = bound.statistics
                if quantity == "gap_narrowing":
                    notes.append(f"{name}: sets the equilibrium's statistics ({value})")
                elif quantity == "ionisation":
                    if value == "boltzmann" and solver == "fermi-dirac":
                        notes.append(
                            f"{name}: its levels' occupancy written with n/Nc and p/Nv "
                            "(the Boltzmann relation of its fit) in the Fermi-Dirac solve"
                        )
                elif value != solver:
                    mismatches.append(
                        Mismatch(
                            quantity,
                            model.id,
                            "statistics",
                            value,
                            f"{solver} (of {bound.narrowing.id})",
                            "n0 p0",
                            _statistics_sizes(_with(si), value),
                        )
                    )
            # -- another quantity's model or number
            elif convention == "intrinsic_density":
                if value == "none":
                    continue
                if quantity == "gap_narrowing" or quantity == "intrinsic_lifetime":
                    if entry.number:
                        ratio = entry.kernel_value / float(bound.ni(temperature=entry.temperature))
                    else:
                        other = si.catalogue.model("intrinsic_density", value)
                        ratio = float(other(temperature=t)) / float(bound.ni(temperature=t))
                    what = "ni_eff" if quantity == "gap_narrowing" else "the minority densities"
                    power = "" if quantity == "gap_narrowing" else "^2"
                    notes.append(
                        f"{name}: {what} carry the intrinsic density it was fitted with, "
                        f"{_density_text(entry)} (x {ratio:.4g}{power} against "
                        f"{bound.ni.id})"
                    )
                else:
                    fitted = (
                        entry.kernel_value
                        if entry.number
                        else float(si.catalogue.model("intrinsic_density", value)(temperature=t))
                    )
                    at = entry.temperature if entry.number else t
                    used = float(bound.ni(temperature=at))
                    mismatches.append(
                        Mismatch(
                            quantity,
                            model.id,
                            "intrinsic_density",
                            _density_text(entry),
                            f"{bound.ni.id} ({used:.4g} cm^-3 at {at:g} K)",
                            "ni^2",
                            {f"{at:g} K": (fitted / used) ** 2 - 1.0},
                        )
                    )
            elif convention == "densities_of_states":
                if value in ("none", "own", "composed") or value == bound.dos.id:
                    continue
                if quantity == "ionisation":
                    nc, nv = bound.dos(temperature=t)
                    fc, fv = si.catalogue.model("densities_of_states", value)(temperature=t)
                    notes.append(
                        f"{name}: its levels carry the densities of states it was fitted "
                        f"with, {value} (E_dop + kT ln(N/N_fit): donors "
                        f"{1e3 * kt * float(np.log(nc / fc)):+.2f} meV, acceptors "
                        f"{1e3 * kt * float(np.log(nv / fv)):+.2f} meV at {t:g} K)"
                    )
                else:
                    mismatches.append(
                        Mismatch(
                            quantity,
                            model.id,
                            "densities_of_states",
                            value,
                            bound.dos.id,
                            "Nc, Nv",
                            _model_ratio(si, "densities_of_states", value, bound.dos),
                        )
                    )
            elif convention == "gap_narrowing":
                used = bound.narrowing.id
                if value == used:
                    notes.append(f"{name}: fitted with {used}, the material's narrowing")
                    continue
                if value == "none":  # fitted without narrowing: ni^2 against ni_eff^2
                    sizes = {
                        label: 1.0 / (1.0 + size) - 1.0
                        for label, size in _narrowing_only(si).items()
                    }
                else:
                    sizes = _product_sizes(_with(si), _with(si, gap_narrowing=value))
                mismatches.append(
                    Mismatch(
                        quantity,
                        model.id,
                        "gap_narrowing",
                        value,
                        used,
                        "ni_eff^2 (n0 p0, the minority densities)",
                        sizes,
                    )
                )
            elif convention == "radiative_coefficient":
                if value == "own":
                    notes.append(f"{name}: keeps its own radiative term")
                elif value == "composed":
                    notes.append(
                        f"{name}: takes the material's radiative coefficient "
                        f"({si._models['radiative_coefficient'].id})"
                    )
                elif entry.number:
                    used = si._models["radiative_coefficient"]
                    b = float(used(temperature=t))
                    mismatches.append(
                        Mismatch(
                            quantity,
                            model.id,
                            "radiative_coefficient",
                            f"{entry.value:g} {entry.units}",
                            used.id,
                            "B",
                            {f"{t:g} K": b / entry.kernel_value - 1.0},
                        )
                    )
                elif value != si._models["radiative_coefficient"].id:
                    used = si._models["radiative_coefficient"]
                    mismatches.append(
                        Mismatch(
                            quantity,
                            model.id,
                            "radiative_coefficient",
                            value,
                            used.id,
                            "B",
                            _model_ratio(si, "radiative_coefficient", value, used),
                        )
                    )
            elif convention in ("saturation_velocity", "band_gap", "ionisation"):
                used = si._models.get(convention)
                if value in ("none", "own", "composed") or used is None or value == used.id:
                    continue
                sizes = (
                    _model_ratio(si, convention, value, used) if convention != "ionisation" else {}
                )
                mismatches.append(
                    Mismatch(quantity, model.id, convention, value, used.id, convention, sizes)
                )
    return Consistency(
        si.release.id,
        dict(si.models),
        tuple(mismatches),
        {q: tuple(v) for q, v in applied.items() if v},
        tuple(unverified),
        tuple(stand_ins),
    )


def _narrowing_only(si) -> dict:
    """ni_eff^2 / ni^2 - 1 of the material's narrowing at the standard points."""
    ni = float(si.intrinsic_density(STANDARD_TEMPERATURE).m)
    sizes = {}
    for label, kind, density in _points():
        majority, minority = density, ni * ni / density
        n, p = (majority, minority) if kind == "Nd" else (minority, majority)
        value = float(
            _quiet(
                si,
                "effective_intrinsic_density",
                STANDARD_TEMPERATURE,
                n=n,
                p=p,
                **{kind: density},
            ).m
        )
        sizes[label] = (value / ni) ** 2 - 1.0
    return sizes


# --------------------------------------------------------------------------- input kinds

_KINDS = {
    "total": ("total", "total dopant density (as grown or implanted, ionised or not)"),
    "ionised": ("ionised", "ionised dopant density (of thermal equilibrium)"),
    "free": ("free carriers", "free-carrier density (incomplete ionisation included)"),
    "complete-ionisation": (
        "carriers of complete ionisation",
        "carrier density with every dopant ionised (majority density = net dopant "
        "density), as the model was fitted",
    ),
    "equilibrium free": (
        "equilibrium free carriers",
        "thermal-equilibrium free-carrier density (incomplete ionisation included)",
    ),
    "equilibrium complete": (
        "equilibrium carriers of complete ionisation",
        "thermal-equilibrium carrier density with every dopant ionised, as the model was fitted",
    ),
    "excess": ("excess carriers", "excess carrier density dn = dp"),
}


def input_kinds(quantity: str, model=None) -> dict:
    """Input name -> (short kind, description) of every density a kernel takes: the
    kind of density (total or ionised dopants, free carriers, carriers of complete
    ionisation) the model asks for, by its fit conventions."""
    conventions = getattr(model, "conventions", None)
    dopants = (conventions.value("dopant_densities") if conventions else None) or "total"
    carriers = conventions.value("carrier_densities") if conventions else None
    carriers = "complete-ionisation" if carriers == "complete-ionisation" else "free"
    inputs = model.inputs if model is not None else {}
    if quantity in ("effective_intrinsic_density", "equilibrium"):
        inputs = {"donor_density": 0, "acceptor_density": 0}
        if quantity == "effective_intrinsic_density":
            inputs.update(electron_density=0, hole_density=0)
    kinds = {}
    for name in inputs:
        if name in ("donor_density", "acceptor_density"):
            kinds[name] = _KINDS[dopants if quantity in ("mobility", "gap_narrowing") else "total"]
        elif name == "dopant_density":
            kinds[name] = _KINDS["total"]
        elif name in ("electron_density", "hole_density"):
            kinds[name] = _KINDS[carriers if quantity == "mobility" else "free"]
        elif name in ("equilibrium_electron_density", "equilibrium_hole_density"):
            kinds[name] = _KINDS[
                "equilibrium complete" if carriers == "complete-ionisation" else "equilibrium free"
            ]
        elif name == "excess_density":
            kinds[name] = _KINDS["excess"]
    return kinds
