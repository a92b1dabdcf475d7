"""The chain behind one number: ``si.explain(quantity, ...)``.

For one point it lists the inputs as given and as converted, then every intermediate
quantity with its value, units, the model that produced it, that model's
coefficients (as the kernel uses them) and the fit conventions applied, and finally
the value, so that a reader can redo the arithmetic by hand. The numbers are printed
with ten significant digits and are the ones the library itself computes: the final
value is the public method's own result.

    >>> print(matprops.silicon().explain("resistivity", T="23 degC", Na=1.2e16))  # doctest: +SKIP

Resistivity, conductivity and doping from resistivity show the whole transport chain
(densities of states, intrinsic density, narrowing, ionisation, the equilibrium solve,
both mobilities, ``sigma = q (n mu_n + p mu_p)``); other quantities show their model,
what it is composed from, and the value.
"""

from __future__ import annotations

import inspect
import textwrap
from dataclasses import dataclass, field

import numpy as np

from ..errors import InputError
from ..kernels.constants import BOLTZMANN_EV, ELEMENTARY_CHARGE
from ..units import NEEDS_UNIT, coerce

__all__ = ["Step", "Trace", "explain"]

_FORMAT = ".10g"


def _number(value) -> str:
    return format(float(value), _FORMAT)


@dataclass
class Step:
    """One quantity in the chain: its value(s) with units, the model and what it took."""

    name: str
    values: dict  # label -> (value, units)
    model: str = ""
    formula: str = ""
    inputs: dict = field(default_factory=dict)  # label -> (value, units)
    coefficients: dict = field(default_factory=dict)  # name -> (value, units)
    conventions: dict = field(default_factory=dict)  # name -> value
    note: str = ""

    def lines(self, number: int, width: int) -> list[str]:
        def wrap(text, indent="     "):
            return textwrap.fill(
                text, width, initial_indent=indent, subsequent_indent=indent + "  "
            )

        out = [f"{number:>2}. {self.name}" + (f"  [model {self.model}]" if self.model else "")]
        if self.formula:
            out.append(wrap(self.formula))
        if self.inputs:
            out.append(
                wrap(
                    "inputs: "
                    + "; ".join(
                        f"{k} = {_number(v)} {u}".rstrip() for k, (v, u) in self.inputs.items()
                    )
                )
            )
        if self.coefficients:
            out.append(
                wrap(
                    "coefficients (kernel units): "
                    + "; ".join(
                        f"{k} = {v} {u}".rstrip() for k, (v, u) in self.coefficients.items()
                    )
                )
            )
        if self.conventions:
            out.append(
                wrap("fitted with: " + "; ".join(f"{k} {v}" for k, v in self.conventions.items()))
            )
        for label, (value, units) in self.values.items():
            out.append(f"     {label} = {_number(value)} {units}".rstrip())
        if self.note:
            out.append(wrap(self.note))
        return out


@dataclass
class Trace:
    """The chain of one value (see the module's docstring); ``str()`` prints it."""

    quantity: str
    given: dict  # argument -> as given (text)
    converted: dict  # argument -> (value, units)
    steps: list[Step]
    value: float
    units: str
    release: str = ""
    conventions: list[str] = field(default_factory=list)
    constants: dict = field(default_factory=dict)

    def text(self, width: int = 100) -> str:
        out = [f"{self.quantity}: the chain of one value (release {self.release})", "inputs:"]
        for name, shown in self.given.items():
            value, units = self.converted[name]
            converted = value if isinstance(value, str) else f"{_number(value)} {units}".rstrip()
            out.append(f"  {name} = {shown}  ->  {converted}")
        if self.constants:
            out.append(
                "constants: "
                + "; ".join(f"{k} = {_number(v)} {u}" for k, (v, u) in self.constants.items())
            )
        if self.conventions:
            out.append("conventions applied:")
            out += [
                textwrap.fill(c, width, initial_indent="  ", subsequent_indent="    ")
                for c in self.conventions
            ]
        out.append("steps:")
        for number, step in enumerate(self.steps, 1):
            out += step.lines(number, width)
        out.append(f"result: {self.quantity} = {_number(self.value)} {self.units}")
        return "\n".join(out)

    __str__ = text


# --------------------------------------------------------------------------- helpers


def _coefficients(model) -> dict:
    out = {}
    for name, coefficient in model.coefficients.items():
        value = coefficient.kernel_value
        if isinstance(value, (tuple, list, np.ndarray)):
            shown = "[" + ", ".join(_number(v) for v in np.ravel(value)) + "]"
        else:
            shown = _number(value)
        units = getattr(coefficient, "kernel_units", "") or ""
        out[name] = (shown, "" if units in ("1", "dimensionless") else units)
    return out


def _conventions(model) -> dict:
    conventions = getattr(model, "conventions", None)
    if not conventions:
        return {}
    shown = {}
    for name in conventions:
        entry = conventions[name]
        value = entry.value if entry.known else "not known"
        units = getattr(entry, "units", None)
        shown[name] = f"{value} {units}" if units and not isinstance(value, str) else str(value)
    return shown


def _first_line(function) -> str:
    doc = inspect.getdoc(function) or ""
    return " ".join(doc.split("\n\n")[0].split())


def _model_step(name, model, values, inputs=None, formula=None) -> Step:
    return Step(
        name=name,
        values=values,
        model=f"{model.quantity}/{model.id}",
        formula=formula if formula is not None else _first_line(model.kernel),
        inputs=inputs or {},
        coefficients=_coefficients(model),
        conventions=_conventions(model),
    )


def _scalar_in(value, ax) -> float:
    array, _, _ = coerce(value, ax.name, ax.units, ax.requirement)
    if np.ndim(array) != 0:
        raise InputError(
            ax.name, "one value (explain traces one point)", f"shape {np.shape(array)}"
        )
    return float(array)


def _shown(value) -> str:
    if hasattr(value, "units"):
        return f"{value:~P}"
    return str(value)


# --------------------------------------------------------------------------- transport


def _transport_chain(si, t, na, nd, donor, acceptor):
    """Steps of sigma = q (n mu_n + p mu_p) at one point, exactly as the material
    computes it (:meth:`~matprops.material.transport.TransportMethods._conductivity`).

    Returns (steps, conventions text, sigma)."""
    from .composition import complete_ionisation
    from .transport import CARRIERS

    bound = si._carriers()
    fermi_dirac = bound.statistics == "fermi-dirac"
    models = {c: si._mobility_model(c, donor, acceptor) for c in CARRIERS}
    steps, conventions = [], []
    T = np.array([t])
    nc, nv = bound.dos(temperature=T)
    steps.append(
        _model_step(
            "densities of states",
            si.model("densities_of_states"),
            {"Nc": (nc[0], "cm^-3"), "Nv": (nv[0], "cm^-3")},
            {"T": (t, "K")},
        )
    )
    ni = bound.ni(temperature=T)
    steps.append(
        _model_step(
            "intrinsic density (undoped)",
            si.model("intrinsic_density"),
            {"ni": (ni[0], "cm^-3")},
            {"T": (t, "K")},
        )
    )
    kt = BOLTZMANN_EV * t
    gap = kt * np.log(nc[0] * nv[0] / ni[0] ** 2)
    steps.append(
        Step(
            "band gap consistent with ni, Nc, Nv",
            {"Eg": (gap, "eV"), "kT": (kt, "eV")},
            formula="Eg = kT ln(Nc Nv / ni^2): undoped silicon reproduces ni exactly",
        )
    )
    solved = {}
    for carrier, model in models.items():
        complete = complete_ionisation(model)
        conventions.append(
            f"{carrier} mobility {model.id}: fitted with "
            f"{model.conventions.value('dopant_densities', 'total')} dopant densities and "
            + (
                "the carriers of complete ionisation (every dopant ionised): sigma takes "
                "those carriers"
                if complete
                else "free carriers (incomplete ionisation): sigma takes the equilibrium ones"
            )
        )
        if complete in solved:
            continue
        species = acceptor if na > 0 or nd == 0 else donor
        (level, share), degeneracy = bound.level(
            species, np.array([na if species == acceptor else nd]), T, complete
        )
        result = bound.equilibrium(
            T, np.array([nd]), np.array([na]), donor, acceptor, fermi_dirac, complete
        )
        solved[complete] = result
        steps.append(
            _model_step(
                f"ionisation of {species}",
                si.model("ionisation").select(species),
                {
                    "E_dopant": (level[0] if np.ndim(level) else level, "eV"),
                    "localised share b": (share[0] if np.ndim(share) else share, ""),
                    "degeneracy g": (degeneracy, ""),
                },
                {"N": (na if species == acceptor else nd, "cm^-3")},
            )
        )
        notes = []
        if complete:
            notes.append("complete ionisation (the mobility's fit convention): b taken as 0")
        if bound.level_states is not None:
            notes.append(
                "the level carries the model's own densities of states: E_dopant + kT "
                f"ln(N/N_fit) with N_fit of {bound.level_states.id}"
            )
        steps[-1].note = "; ".join(notes)
        dec, dev = result["conduction_edge_shift"][0], result["valence_edge_shift"][0]
        steps.append(
            _model_step(
                "band-gap narrowing at the solution",
                si.model("gap_narrowing"),
                {"dEc": (dec, "eV"), "dEv": (dev, "eV"), "dEg": (dec + dev, "eV")},
                {
                    "T": (t, "K"),
                    "Na": (na, "cm^-3"),
                    "Nd": (nd, "cm^-3"),
                    "n": (result["electron_density"][0], "cm^-3"),
                    "p": (result["hole_density"][0], "cm^-3"),
                },
            )
        )
        eta = result["reduced_fermi_level"][0]
        offset = float(bound.gap_offset(t))
        narrowed = gap - dec - dev - offset
        eta_v = -eta - narrowed / kt
        gap_label = "Eg' = Eg - dEg" + (
            f" - {_number(offset)} eV (the apparent narrowing's ni offset)" if offset else ""
        )
        statistics = "Fermi-Dirac, F = F_1/2" if fermi_dirac else "Boltzmann, F = exp"
        by_density = bound.occupancy_from_densities and fermi_dirac
        acceptor_label = (
            "Na- = Na [(1-b) + b / (1 + g (p0/Nv) exp(E_dopant/kT))]"
            if by_density
            else "Na- = Na [(1-b) + b / (1 + g exp(E_dopant/kT + eta_v))]"
        )
        donor_label = (
            "Nd+ = Nd [(1-b) + b / (1 + g (n0/Nc) exp(E_dopant/kT))]"
            if by_density
            else "Nd+ = Nd [(1-b) + b / (1 + g exp(E_dopant/kT + eta))]"
        )
        steps.append(
            Step(
                "equilibrium (charge neutrality p + Nd+ = n + Na-)"
                + (", complete ionisation" if complete else ""),
                {
                    gap_label: (narrowed, "eV"),
                    "eta = (E_F - Ec')/kT": (eta, ""),
                    "eta_v = (Ev' - E_F)/kT = -eta - Eg'/kT": (eta_v, ""),
                    "n0 = Nc F(eta)": (result["electron_density"][0], "cm^-3"),
                    "p0 = Nv F(eta_v)": (result["hole_density"][0], "cm^-3"),
                    acceptor_label: (result["ionised_acceptors"][0], "cm^-3"),
                    donor_label: (result["ionised_donors"][0], "cm^-3"),
                },
                formula=f"statistics: {statistics}; F_1/2 normalised, F_1/2(x) -> exp(x) "
                "for x << 0"
                + (
                    "; the dopants' occupancy written with n0/Nc and p0/Nv (their ionisation "
                    "model was fitted with Boltzmann statistics)"
                    if by_density
                    else ""
                )
                + "; relative neutrality residual "
                f"{abs(float(result['residual'][0])):.1e}",
            )
        )
    densities = {}
    for carrier, model in models.items():
        result = solved[complete_ionisation(model)]
        ionised = model.conventions.value("dopant_densities") == "ionised"
        values = {
            "temperature": T,
            "donor_density": result["ionised_donors"] if ionised else np.array([nd]),
            "acceptor_density": result["ionised_acceptors"] if ionised else np.array([na]),
            "electron_density": result["electron_density"],
            "hole_density": result["hole_density"],
        }
        mobility = float(model(**{k: values[k] for k in model.inputs})[0])
        short = {
            "temperature": ("T", "K"),
            "donor_density": ("Nd+" if ionised else "Nd", "cm^-3"),
            "acceptor_density": ("Na-" if ionised else "Na", "cm^-3"),
            "electron_density": ("n", "cm^-3"),
            "hole_density": ("p", "cm^-3"),
        }
        steps.append(
            _model_step(
                f"{carrier} mobility",
                model,
                {"mu_n" if carrier == "electron" else "mu_p": (mobility, "cm^2 V^-1 s^-1")},
                {short[k][0]: (float(values[k][0]), short[k][1]) for k in model.inputs},
            )
        )
        density = values["electron_density" if carrier == "electron" else "hole_density"][0]
        densities[carrier] = (float(density), mobility)
    (n, mu_n), (p, mu_p) = densities["electron"], densities["hole"]
    sigma = ELEMENTARY_CHARGE * (n * mu_n + p * mu_p)
    steps.append(
        Step(
            "conductivity",
            {"sigma": (sigma, "S/cm")},
            formula="sigma = q (n mu_n + p mu_p), with the n and p of each mobility's "
            "convention above",
            inputs={
                "n": (n, "cm^-3"),
                "mu_n": (mu_n, "cm^2 V^-1 s^-1"),
                "p": (p, "cm^-3"),
                "mu_p": (mu_p, "cm^2 V^-1 s^-1"),
            },
        )
    )
    return steps, conventions, sigma


# --------------------------------------------------------------------------- explain


def explain(si, quantity: str, **inputs) -> Trace:
    """The chain behind one value of ``quantity`` at one point -> :class:`Trace`.

    ``inputs`` are the method's arguments by name or table alias (``T``/``temperature``,
    ``Na``, ``Nd``, ``carrier``, ``rho``/``resistivity``, ``dopant``, ``wavelength``
    ...), one value each, plain numbers in default units or with units.
    """
    from ..units import name as check_name
    from .tables import QUANTITIES, axis

    quantity = check_name(quantity, "quantity")
    if quantity not in QUANTITIES:
        from ..errors import UnknownQuantityError

        raise UnknownQuantityError(quantity, QUANTITIES, "to explain")
    entry = QUANTITIES[quantity]
    given: dict[str, str] = {}
    converted: dict[str, tuple[object, str]] = {}  # (value, kernel units)
    values: dict[str, object] = {}
    for key, value in inputs.items():
        ax = axis(key)
        if ax.name not in entry.takes:
            raise InputError(
                key,
                f"an input of {quantity} ({', '.join(entry.takes) or 'none'})",
                repr(value),
            )
        given[ax.name] = _shown(value)
        if ax.category:
            values[ax.name] = str(value)
            converted[ax.name] = (str(value), "")
        else:
            number = _scalar_in(value, ax)
            values[ax.name] = value if ax.name in NEEDS_UNIT else number  # thickness: with its unit
            converted[ax.name] = (number, ax.units or "")
    missing = [a for a in entry.required if a not in values]
    if missing:
        raise InputError(missing[0], f"given for {quantity}", "nothing")
    result = entry.call(si, values)
    parts = (
        result
        if isinstance(result, tuple)
        else (tuple(getattr(result, f) for f in entry.fields) if entry.fields else (result,))
    )
    value = parts[0]
    from ..units import cf_units

    units = cf_units(value.units)
    steps, conventions = [], []
    constants = {}
    t = values.get("temperature")
    if quantity in ("resistivity", "conductivity") and not entry.fixed:
        steps, conventions, sigma = _transport_chain(
            si,
            t,
            values.get("acceptor_density", 0.0),
            values.get("donor_density", 0.0),
            "phosphorus",
            "boron",
        )
        constants = {"q": (ELEMENTARY_CHARGE, "C"), "k": (BOLTZMANN_EV, "eV/K")}
        if quantity == "resistivity":
            steps.append(
                Step("resistivity", {"rho": (1.0 / sigma, "ohm cm")}, formula="rho = 1 / sigma")
            )
    elif quantity == "doping_from_resistivity":
        density = float(value.m_as("cm^-3"))
        dopant = str(values.get("dopant"))
        from .carriers import DOPANTS

        kind = DOPANTS[dopant]
        na, nd = (density, 0.0) if kind == "acceptor" else (0.0, density)
        donor = dopant if kind == "donor" else "phosphorus"
        acceptor = dopant if kind == "acceptor" else "boron"
        steps.append(
            Step(
                f"{dopant} density that gives the resistivity",
                {"N": (density, "cm^-3")},
                formula=_first_line_of_derived(quantity),
                inputs={"rho": (values["resistivity"], "ohm*cm"), "T": (t, "K")},
            )
        )
        standard = bool(si._standard_applies(dopant, np.array([t]), None)[0])
        if standard:
            model = si.model("standard_dopant_density").select(dopant)
            steps[-1] = _model_step(
                f"{dopant} density by the standard's conversion",
                model,
                {"N": (density, "cm^-3")},
                {"rho": (values["resistivity"], "ohm cm"), "T": (t, "K")},
            )
        chain, conventions, sigma = _transport_chain(si, t, na, nd, donor, acceptor)
        route = (
            "the standard's (ASTM F723), the release's default where it holds (23 degC "
            "+-0.5 K); the physics chain below shows what the release's models give at "
            "that density"
            if standard
            else "the release's physics, inverted: the chain below reproduces the resistivity"
        )
        conventions.insert(0, f"conversion: {route}")
        steps += chain
        steps.append(
            Step(
                "check: resistivity at that density (the release's physics)",
                {"rho": (1.0 / sigma, "ohm cm")},
                formula="rho = 1 / sigma"
                + ("" if standard else ": it reproduces the resistivity given"),
            )
        )
        constants = {"q": (ELEMENTARY_CHARGE, "C"), "k": (BOLTZMANN_EV, "eV/K")}
    else:
        steps = _generic_steps(si, entry, values)
    for name in entry.model_quantities():
        try:
            model = si.model(name)
        except Exception:  # a derived part (no model of its own)
            continue
        if name in si.overridden:
            conventions.append(
                f"{name}: {model.id} chosen with models= (the release chose "
                f"{si.release.models.get(name)})"
            )
    return Trace(
        quantity=quantity,
        given=given,
        converted=converted,
        steps=steps,
        value=float(np.asarray(value.magnitude).item()),
        units=units,
        release=f"{si.release.id} ({si.release.status})",
        conventions=conventions,
        constants=constants,
    )


def _first_line_of_derived(quantity) -> str:
    from .derived import DERIVED

    return DERIVED[quantity][1] if quantity in DERIVED else ""


def _generic_steps(si, entry, values) -> list[Step]:
    """Every model behind a quantity, its components evaluated where they take only the
    temperature, then the value."""
    steps = []
    t = values.get("temperature")
    seen = set()

    def visit(model):
        key = (model.quantity, model.id)
        if key in seen:
            return
        seen.add(key)
        for component in model.components.values():
            visit(component)
        evaluated = {}
        if t is not None and set(model.inputs) <= {"temperature"} and not model.requires:
            try:
                out = model(temperature=np.array([t]))
                out = out if isinstance(out, tuple) else (out,)
                labels = (
                    ("Nc", "Nv") if model.quantity == "densities_of_states" else (model.quantity,)
                )
                evaluated = {
                    label: (float(np.ravel(o)[0]), model.output_units)
                    for label, o in zip(labels, out, strict=False)
                }
            except Exception:  # a variant model needs its variant first
                evaluated = {}
        inputs = {"T": (t, "K")} if t is not None and "temperature" in model.inputs else {}
        steps.append(_model_step(model.quantity.replace("_", " "), model, evaluated, inputs))

    from .derived import DERIVED

    for name in entry.model_quantities():
        try:
            visit(si.model(name))
        except Exception:  # derived: no model of its own
            continue
    if entry.name in DERIVED:
        steps.append(Step(entry.name.replace("_", " "), {}, formula=DERIVED[entry.name][1]))
    return steps
