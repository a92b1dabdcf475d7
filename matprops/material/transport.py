"""Carrier transport: mobility, velocities, diffusivity, resistivity and the doping conversion.

Composition rules (each shown in the provenance of what it returns):

- A mobility model's file says whether it takes the *total* or the *ionised*
  dopant densities (``dopant_densities``). Users pass totals (``Na``, ``Nd``);
  for a model that takes ionised densities the material passes the ionised ones
  of thermal equilibrium at (T, Na, Nd) from the equilibrium solver. A caller
  that already has ionised densities says ``dopant_densities="ionised"`` and they
  are passed unchanged (no solve).
- A model with one coefficient set per dopant species (``variant_axis =
  "dopant"``) gives electrons the donor species' set and holes the acceptor's.
- Where a model needs the free-carrier densities and ``n``, ``p`` are omitted,
  they are the equilibrium densities.
- Diffusivity is the Einstein relation with the Fermi-Dirac factor
  ``F_1/2(eta) / F_-1/2(eta)``, eta the reduced Fermi level from the band edge (the
  equilibrium one, or the quasi-Fermi level of the given n or p); 1 with
  Boltzmann statistics.
- Resistivity is ``1 / q (n0 mu_n + p0 mu_p)`` with the equilibrium carriers and the
  release's mobility; its inverse for one dopant species is solved for all points
  at once (secant steps in ln N kept inside a bracket, each equilibrium started from
  the last one; no per-point loop).
- The standard's conversions (ASTM F723, 23 degC) are models of their own,
  reached with ``conversion="standard"``; asked at another temperature they warn.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

import numpy as np

from ..errors import (
    InputError,
)
from ..kernels import resistivity as resistivity_kernels
from ..kernels._blocks import evaluate, solver_error
from ..kernels.constants import BOLTZMANN_EV, ELEMENTARY_CHARGE
from ..kernels.diffusivity import einstein_factor
from ..units import coerce, quantity, unit
from ..vocabulary import CARRIERS, DOPANTS, carrier_name, dopant_species
from .bound import model_kernel
from .composition import complete_ionisation, species_model
from .registry import DOPINGS, TEMPERATURES, TRANSPORT_TEMPERATURES, case
from .registry import quantity as declare

__all__ = ["CARRIERS", "CONVERSIONS", "TransportMethods", "carrier_name"]

CONVERSIONS = ("physics", "standard")
DOPANT_DENSITIES = ("total", "ionised")
_EQUILIBRIUM = ("densities_of_states", "intrinsic_density", "gap_narrowing", "ionisation")
_DOPANTS = ("acceptor_density", "donor_density")
_RESISTIVITIES = [1e-3, 0.1, 1.0, 10.0, 1e3]
_STANDARD_DOPINGS = [1e12, 1e14, 1e16, 1e18, 1e20]

_HIGHEST_DENSITY = 1e21  # cm^-3: the top of the bracket for doping from resistivity
# the equilibrium's outputs the transport quantities use (a large solve keeps only those)
_TRANSPORT_FIELDS = (
    "temperature",
    "ionised_donors",
    "ionised_acceptors",
    "electron_density",
    "hole_density",
)


def _carrier_kernel(si, name, fixed):
    """The bound kernel of a transport quantity (``carrier=`` required; see
    ``TransportMethods._transport_kernel``)."""
    model = si._transport_kernel(name, fixed)
    note = ""
    if name == "mobility" and model.variant_axis == "dopant":
        carrier = carrier_name(fixed.get("carrier"))
        key, default = ("donor", "phosphorus") if carrier == "electron" else ("acceptor", "boron")
        species = dopant_species(fixed.get(key, default), key, key)
        stand_in = species_model(si.model("mobility"), species, si.catalogue)[1]
        if stand_in is not None:  # another species' coefficient set: labelled
            note = f"The dopant {stand_in.describe()}"
    return model_kernel(si, name, model, fixed, note)


def _per_carrier(name, **grid):
    return [case(f"{name}_{c}", fixed={"carrier": c}, **grid) for c in CARRIERS]


def _in_units(values, units: str, target: str):
    """Plain values in ``units`` expressed in ``target`` (no conversion when they agree)."""
    if units == target or unit(units) == unit(target):
        return values
    from ..units import Q_

    return Q_(values, unit(units)).m_as(unit(target))


def _choice(value, argument, allowed):
    if value not in allowed:
        raise InputError(argument, f"one of {', '.join(map(repr, allowed))}", repr(value))
    return value


def _extremes(array):
    array = np.asarray(array, dtype=float)
    if array.size == 0:
        return array, np.inf, -np.inf
    return array, float(array.min()), float(array.max())


class TransportMethods:
    """Mobility, velocities, diffusivity, resistivity and the resistivity-doping conversion."""

    if TYPE_CHECKING:  # provided by the facade (silicon.Silicon) these methods serve
        model: Any
        catalogue: Any

    # ------------------------------------------------------------------ velocities
    @declare(
        units="cm/s",
        long_name="thermal velocity (mean thermal speed)",
        cases=_per_carrier("thermal_velocity", temperature=TEMPERATURES),
        kernel=_carrier_kernel,
    )
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
        return quantity(
            self._call(model, {"temperature": coerce(temperature, "temperature")}),
            model.output_units,
        )

    @declare(
        units="cm/s",
        long_name="saturation drift velocity",
        cases=_per_carrier("saturation_velocity", temperature=TEMPERATURES),
        kernel=_carrier_kernel,
    )
    def saturation_velocity(self, carrier, temperature):
        """Saturation drift velocity of electrons or holes at high field, cm/s."""
        model = self.model("saturation_velocity").select(carrier_name(carrier))
        return quantity(
            self._call(model, {"temperature": coerce(temperature, "temperature")}),
            model.output_units,
        )

    # ------------------------------------------------------------------ mobility
    def _mobility_model(self, carrier: str, donor: str, acceptor: str):
        """The release's mobility model bound to the coefficient set for ``carrier``."""
        model = self.model("mobility")
        if model.variant_axis == "dopant":
            species = donor if carrier == "electron" else acceptor
            return species_model(model, species, self.catalogue)[0]
        if model.variant_axis == "carrier":
            return model.select(carrier)
        return model

    def _transport_inputs(
        self,
        model,
        temperature,
        Na,
        Nd,
        n,
        p,
        donor,
        acceptor,
        dopant_densities="total",
        statistics=None,
        carriers=False,
    ):
        """Kernel inputs ``{name: (array, min, max)}`` for a mobility model.

        Solves the equilibrium once if the model wants ionised densities from the
        totals given, or the carrier densities (``carriers=True`` always wants
        them) and ``n``, ``p`` were omitted.
        """
        _choice(dopant_densities, "dopant_densities", DOPANT_DENSITIES)
        takes_ionised = model.conventions.value("dopant_densities") == "ionised"
        if dopant_densities == "ionised" and not takes_ionised:
            raise InputError(
                "dopant_densities",
                f"'total' for model mobility/{model.id}, which takes total dopant densities",
                "'ionised'",
            )
        if (n is None) != (p is None):
            raise InputError(
                "n" if n is None else "p",
                f"given together with {'p' if n is None else 'n'} (or both omitted)",
                None,
            )
        wants_carriers = carriers or "electron_density" in model.inputs
        prepared = self._inputs(temperature=temperature, Na=Na, Nd=Nd, n=n, p=p)
        ionise = takes_ionised and dopant_densities == "total"
        if ionise or (wants_carriers and n is None):
            result, *_ = self._solve(
                temperature,
                Na,
                Nd,
                donor,
                acceptor,
                statistics,
                complete_ionisation(model),
                fields=_TRANSPORT_FIELDS,
            )
            if ionise:
                prepared["donor_density"] = _extremes(result["ionised_donors"])
                prepared["acceptor_density"] = _extremes(result["ionised_acceptors"])
            if wants_carriers and n is None:
                prepared["electron_density"] = _extremes(result["electron_density"])
                prepared["hole_density"] = _extremes(result["hole_density"])
            prepared["temperature"] = _extremes(result["temperature"])
        return prepared

    def _broadcast_all(self, value, prepared):
        shape = np.broadcast_shapes(*(a.shape for a, _, _ in prepared.values()))
        return np.broadcast_to(np.asarray(value, dtype=float), shape)

    @declare(
        units="cm^2/(V*s)",
        long_name="low-field carrier mobility",
        log=True,
        cases=[
            case(
                "mobility_electron_arsenic",
                fixed={"carrier": "electron", "donor": "arsenic"},
                temperature=[250.0, 300.0, 400.0],
                Nd=[1e15, 1e17, 1e19, 1e20],
            ),
            *_per_carrier("mobility", temperature=TRANSPORT_TEMPERATURES, Na=DOPINGS, Nd=DOPINGS),
        ],
        kernel=_carrier_kernel,
    )
    def mobility(
        self,
        carrier,
        temperature,
        Na=0,
        Nd=0,
        n=None,
        p=None,
        *,
        donor="phosphorus",
        acceptor="boron",
        dopant_densities="total",
    ):
        """Low-field mobility of electrons or holes, majority or minority, cm^2/(V s).

        Parameters
        ----------
        carrier : ``"electron"`` or ``"hole"``
        temperature : K (or a pint quantity)
        Na, Nd : acceptor and donor densities, cm^-3 (total, unless
            ``dopant_densities="ionised"``)
        n, p : free electron and hole densities, cm^-3, for a model that uses them
            (Klaassen's); when omitted, the equilibrium densities
        donor, acceptor : dopant species; electrons take the donor's coefficient
            set, holes the acceptor's, where the model has one set per species
        dopant_densities : ``"total"`` (default): the material passes what the model
            takes (ionised densities from the equilibrium solver for a model fitted
            against them); ``"ionised"``: ``Na`` and ``Nd`` are already ionised
            densities and are passed unchanged (only to a model that takes them)

        Arrays broadcast. ``si.provenance("mobility")["dopant_densities"]`` says what
        the model in use takes.
        """
        values, units = self._mobility_values(
            carrier, temperature, Na, Nd, n, p, donor, acceptor, dopant_densities
        )
        return quantity(values, units)

    def _mobility_values(self, carrier, temperature, Na, Nd, n, p, donor, acceptor, densities):
        """:meth:`mobility` as (plain array, units): what :meth:`high_field_mobility`
        builds on, without a quantity made and read back."""
        carrier = carrier_name(carrier)
        donor = dopant_species(donor, "donor", "donor")
        acceptor = dopant_species(acceptor, "acceptor", "acceptor")
        model = self._mobility_model(carrier, donor, acceptor)
        blockwise = self._solved_blockwise(
            model, temperature, Na, Nd, n, p, donor, acceptor, densities
        )
        if blockwise is not None:
            return blockwise, model.output_units
        prepared = self._transport_inputs(
            model, temperature, Na, Nd, n, p, donor, acceptor, densities
        )
        return self._broadcast_all(self._call(model, prepared), prepared), model.output_units

    def _solved_blockwise(self, model, temperature, Na, Nd, n, p, donor, acceptor, densities):
        """A mobility model at the equilibrium it needs (ionised dopants, or the carriers
        where n, p are omitted), solved block by block with the model for a large input
        (memory: the output and a few blocks, not the solve's fields); None where no solve
        is needed or the input fits one block (then :meth:`_transport_inputs`)."""
        from ..kernels.equilibrium import BLOCK

        _choice(densities, "dopant_densities", DOPANT_DENSITIES)
        takes_ionised = model.conventions.value("dopant_densities") == "ionised"
        ionise = takes_ionised and densities == "total"
        solve = ionise or ("electron_density" in model.inputs and n is None and p is None)
        if not solve or model.regions:  # (regions are checked on whole arrays)
            return None
        prepared = self._inputs(temperature=temperature, Na=Na, Nd=Nd)
        shape = np.broadcast_shapes(*(a.shape for a, _, _ in prepared.values()))
        if int(np.prod(shape)) <= BLOCK:
            return None
        options = self._solve_options(
            temperature, Na, Nd, donor, acceptor, None, complete_ionisation(model)
        )
        bound, seen = self._carriers(), []

        def block(temperature, donor_density, acceptor_density):
            result = bound._equilibrium_block(
                temperature, donor_density, acceptor_density, **options, fields=_TRANSPORT_FIELDS
            )
            values = {
                "temperature": result["temperature"],
                "donor_density": result["ionised_donors"] if ionise else donor_density,
                "acceptor_density": result["ionised_acceptors"] if ionise else acceptor_density,
                "electron_density": result["electron_density"],
                "hole_density": result["hole_density"],
            }
            values = {k: values[k] for k in model.inputs}
            seen.append({k: _extremes(v)[1:] for k, v in values.items()})
            return model(**values)

        block.block = getattr(bound._equilibrium_block, "block", None)
        value = evaluate(
            block,
            {
                "temperature": prepared["temperature"][0],
                "donor_density": prepared["donor_density"][0],
                "acceptor_density": prepared["acceptor_density"][0],
            },
            workers=self.workers,
        )
        for name in model.inputs:
            low = min(ranges[name][0] for ranges in seen)
            high = max(ranges[name][1] for ranges in seen)
            self._check(model, name, low, high)
        return np.broadcast_to(value, shape) if np.shape(value) != shape else value

    @declare(
        units="cm^2/(V*s)",
        long_name="carrier mobility in an electric field",
        uses=("mobility", "saturation_velocity"),
        log=True,
        cases=_per_carrier(
            "high_field_mobility",
            field=[0.0, 1e3, 1e4, 3e4, 6e4],
            temperature=[250.0, 300.0, 400.0],
            Nd=[1e15, 1e18],
        ),
        kernel=_carrier_kernel,
    )
    def high_field_mobility(
        self,
        carrier,
        field,
        temperature,
        Na=0,
        Nd=0,
        n=None,
        p=None,
        *,
        donor="phosphorus",
        acceptor="boron",
        dopant_densities="total",
    ):
        """Mobility in an electric field, cm^2/(V s): the release's low-field
        :meth:`mobility` carried to high field with the Caughey-Thomas form and the
        release's :meth:`saturation_velocity`, ``mu = mu_0 / [1 + (mu_0 E / v_sat)^beta]^(1/beta)``
        with the published ``beta(T)``.

        ``field`` : magnitude of the driving field, V/cm (or a pint quantity, e.g.
        kV/cm), >= 0. Other arguments as for :meth:`mobility`.
        """
        carrier = carrier_name(carrier)
        self._warn_mismatches("high_field_mobility")
        model = self.model("high_field_mobility").select(carrier)
        low, low_units = self._mobility_values(
            carrier, temperature, Na, Nd, n, p, donor, acceptor, dopant_densities
        )
        velocity_model = self.model("saturation_velocity").select(carrier)
        temperatures = coerce(temperature, "temperature")
        velocity = self._call(velocity_model, {"temperature": temperatures})
        prepared = {
            "field": coerce(field, "field"),
            "temperature": temperatures,
            "low_field_mobility": _extremes(_in_units(low, low_units, "cm^2/(V*s)")),
            "saturation_velocity": _extremes(
                _in_units(velocity, velocity_model.output_units, "cm/s")
            ),
        }
        return quantity(
            self._broadcast_all(self._call(model, prepared), prepared), model.output_units
        )

    @declare(
        units="cm^2/s",
        long_name="carrier diffusion coefficient (Einstein relation)",
        models=("mobility", *_EQUILIBRIUM),
        formula=(
            "D = mu kT/q F_1/2(eta)/F_-1/2(eta) (Einstein relation; the factor is 1 with "
            "Boltzmann statistics), eta = (E_F - E_c')/kT for electrons, (E_v' - E_F)/kT for "
            "holes: the equilibrium reduced Fermi level, or the quasi-Fermi level of the given "
            "n or p (n = Nc F_1/2(eta))"
        ),
        log=True,
        cases=_per_carrier(
            "diffusivity",
            temperature=[250.0, 300.0, 400.0],
            Na=[0.0, 1e17, 1e20],
            Nd=[0.0, 1e15, 1e20],
        ),
    )
    def diffusivity(
        self,
        carrier,
        temperature,
        Na=0,
        Nd=0,
        n=None,
        p=None,
        *,
        donor="phosphorus",
        acceptor="boron",
        statistics=None,
        dopant_densities="total",
    ):
        """Diffusion coefficient of electrons or holes, cm^2/s (Einstein relation).

        ``D = mu kT/q x F_1/2(eta) / F_-1/2(eta)``: the Fermi-Dirac factor (> 1 in
        degenerate silicon) at the equilibrium reduced Fermi level (of the free
        carriers, whatever carriers the mobility's fit took), or at the quasi-Fermi
        level of the given ``n`` (electrons) or ``p`` (holes).
        ``statistics``: ``"fermi-dirac"``, ``"boltzmann"`` (factor 1) or None (the
        narrowing model's own, as for :meth:`equilibrium`). Other arguments as for
        :meth:`mobility`.
        """
        carrier = carrier_name(carrier)
        donor = dopant_species(donor, "donor", "donor")
        acceptor = dopant_species(acceptor, "acceptor", "acceptor")
        bound = self._carriers()
        fermi_dirac = self._check_statistics(statistics, bound)
        statistics = "fermi-dirac" if fermi_dirac else "boltzmann"
        model = self._mobility_model(carrier, donor, acceptor)
        prepared = self._transport_inputs(
            model,
            temperature,
            Na,
            Nd,
            n,
            p,
            donor,
            acceptor,
            dopant_densities,
            statistics,
            carriers=True,
        )
        mu = self._broadcast_all(self._call(model, prepared), prepared)
        t = prepared["temperature"][0]
        factor = 1.0
        if fermi_dirac:
            nc, nv = bound.dos(temperature=t)
            densities = prepared
            if n is None and complete_ionisation(model):
                # the mobility takes the carriers of its fit; the degeneracy of the
                # Einstein relation is that of the free carriers there are
                free, *_ = self._solve(temperature, Na, Nd, donor, acceptor, statistics)
                densities = {
                    "electron_density": (free["electron_density"],),
                    "hole_density": (free["hole_density"],),
                }
            density, states = (
                (densities["electron_density"][0], nc)
                if carrier == "electron"
                else (densities["hole_density"][0], nv)
            )
            with np.errstate(divide="ignore"):
                factor = einstein_factor(np.log(density) - np.log(states))
        return quantity(mu * BOLTZMANN_EV * t * factor, "cm^2/s")

    # ------------------------------------------------------------------ resistivity
    def _conductivity(self, t, nd, na, donor, acceptor, check=True):
        """sigma (S/cm) of equilibrium silicon on plain arrays; validity checked if ``check``.

        The carriers are those of the mobility model's fit convention: a mobility
        reduced from conductivity with the dopant density standing for the majority
        density (``carrier_densities = "complete-ionisation"``) already holds the
        incomplete ionisation of its data in its product n mu, so sigma takes the
        complete-ionisation carriers; otherwise the equilibrium free carriers.

        Large inputs are evaluated block by block (equilibrium, mobilities and sigma of
        each block together), so that memory stays about the output; the validity of the
        mobility models is checked on the extremes of every block's inputs.
        """
        seen = [] if check else None
        sigma = evaluate(
            self._conductivity_block,
            {"t": t, "nd": nd, "na": na},
            workers=self.workers,
            donor=donor,
            acceptor=acceptor,
            seen=seen,
        )
        if check:
            ranges = {}
            for model, name, low, high in seen:
                old = ranges.get((id(model), name), (model, np.inf, -np.inf))
                ranges[(id(model), name)] = (model, min(old[1], low), max(old[2], high))
            for (_, name), (model, low, high) in ranges.items():
                if low <= high:
                    self._check(model, name, low, high)
        return sigma

    def _conductivity_block(
        self, t, nd, na, donor, acceptor, seen=None, start=None, keep=None, states=None
    ):
        """sigma of one block (see :meth:`_conductivity`); ``seen``: a list that collects
        (model, input, min, max) for the validity checks; ``start``: {(complete, donor,
        acceptor): (eta, s)} to start each equilibrium from; ``keep``: a dict that
        receives the solved equilibria {(complete, donor, acceptor): result};
        ``states``: (Nc, Nv, ni) at ``t`` if known."""
        bound = self._carriers()
        fermi_dirac = bound.statistics == "fermi-dirac"
        models = [self._mobility_model(carrier, donor, acceptor) for carrier in CARRIERS]
        solved = {}

        def equilibrium(complete, donor=donor, acceptor=acceptor):
            key = (complete, donor, acceptor)
            if key not in solved:
                solved[key] = bound._equilibrium_block(
                    t,
                    nd,
                    na,
                    donor,
                    acceptor,
                    fermi_dirac,
                    complete,
                    *(start[key] if start and key in start else (None, None)),
                    states=states,
                )
            return solved[key]

        conductivities = []
        for carrier, model in zip(CARRIERS, models, strict=True):
            complete = complete_ionisation(model)
            result = equilibrium(complete)
            ionised = model.conventions.value("dopant_densities") == "ionised"
            values = {
                "temperature": result["temperature"],
                "donor_density": result["ionised_donors"] if ionised else nd,
                "acceptor_density": result["ionised_acceptors"] if ionised else na,
                "electron_density": result["electron_density"],
                "hole_density": result["hole_density"],
            }
            if seen is not None:
                for name in model.inputs:
                    seen.append((model, name, *_extremes(values[name])[1:]))
            mobility = model(**{k: values[k] for k in model.inputs})
            key = "electron_density" if carrier == "electron" else "hole_density"
            density = values[key]
            species = donor if carrier == "electron" else acceptor
            if complete and model.variant_axis == "dopant" and model.variant != species:
                # a stand-in set (boron's for gallium): its fit holds the set's own
                # species' incomplete ionisation in n mu; the species' carriers are
                # those scaled by the ratio of the two species' free-carrier densities
                swapped = {"donor" if carrier == "electron" else "acceptor": model.variant}
                density = density * (equilibrium(False)[key] / equilibrium(False, **swapped)[key])
            conductivities.append((density, mobility))
        if keep is not None:
            keep.update(solved)
        (n, mu_n), (p, mu_p) = conductivities
        return resistivity_kernels.conductivity(n, p, mu_n, mu_p)

    def _physics_inputs(self, temperature, Na, Nd, donor, acceptor):
        donor = dopant_species(donor, "donor", "donor")
        acceptor = dopant_species(acceptor, "acceptor", "acceptor")
        bound = self._carriers()
        prepared = self._inputs(temperature=temperature, Na=Na, Nd=Nd)
        self._check_equilibrium(prepared, donor, acceptor, bound)
        t, nd, na = np.broadcast_arrays(
            prepared["temperature"][0],
            prepared["donor_density"][0],
            prepared["acceptor_density"][0],
        )
        return t, nd, na, donor, acceptor

    def _check_equilibrium(self, prepared, donor, acceptor, bound):
        """The validity checks the equilibrium solver's models make (as in ``_solve``)."""
        _, low, high = prepared["temperature"]
        for name in ("densities_of_states", "intrinsic_density"):
            self._check(self.model(name), "temperature", low, high)
        self._check_narrowing(prepared, bound)
        self._check_dopants(prepared, donor, acceptor)

    @declare(
        units="S/cm",
        long_name="conductivity of silicon in equilibrium",
        models=("mobility", *_EQUILIBRIUM),
        formula=(
            "sigma = q (n0 mu_n + p0 mu_p): equilibrium n0, p0 and ionised dopants; mu_n with "
            "the donor species' coefficients, mu_p with the acceptor's; dopant densities total "
            "or ionised as the mobility model takes them"
        ),
        wants=_DOPANTS,
        log=True,
        cases=[case(temperature=TRANSPORT_TEMPERATURES, Na=DOPINGS, Nd=DOPINGS)],
    )
    def conductivity(self, temperature, Na=0, Nd=0, *, donor="phosphorus", acceptor="boron"):
        """Electrical conductivity of silicon in equilibrium, S/cm.

        ``sigma = q (n0 mu_n + p0 mu_p)`` with the equilibrium carriers (incomplete
        ionisation, gap narrowing) and the release's mobility at those carriers.
        ``Na``, ``Nd``: total acceptor and donor densities, cm^-3.
        """
        t, nd, na, donor, acceptor = self._physics_inputs(temperature, Na, Nd, donor, acceptor)
        return quantity(self._conductivity(t, nd, na, donor, acceptor), "S/cm")

    @declare(
        "standard_resistivity",
        units="ohm*cm",
        long_name="resistivity by the standard conversion (23 degC)",
        fixed={"conversion": "standard"},
        wants=_DOPANTS,
        log=True,
        by_default=False,
        cases=[
            case(f"standard_resistivity_{d}", temperature=[296.15], **{kind: _STANDARD_DOPINGS})
            for d, kind in (("boron", "Na"), ("phosphorus", "Nd"))
        ],
    )
    @declare(
        units="ohm*cm",
        long_name="resistivity of silicon in equilibrium",
        models=("mobility", *_EQUILIBRIUM),
        formula="rho = 1 / (q (n0 mu_n + p0 mu_p)), as for conductivity",
        wants=_DOPANTS,
        log=True,
        cases=[case(temperature=TRANSPORT_TEMPERATURES, Na=DOPINGS, Nd=DOPINGS)],
    )
    def resistivity(
        self, temperature, Na=0, Nd=0, *, donor="phosphorus", acceptor="boron", conversion="physics"
    ):
        """Resistivity of silicon, ohm cm.

        ``conversion="physics"`` (default): ``1 / conductivity`` at the temperature
        given (equilibrium carriers and the release's mobility).
        ``conversion="standard"``: the standard's conversion from dopant density
        (ASTM F723 at 23 degC; boron and phosphorus), for singly doped silicon; any
        other temperature warns (the conversion holds at 23 degC only).
        """
        _choice(conversion, "conversion", CONVERSIONS)
        if conversion == "standard":
            return self._standard_resistivity(temperature, Na, Nd, donor, acceptor)
        t, nd, na, donor, acceptor = self._physics_inputs(temperature, Na, Nd, donor, acceptor)
        return quantity(1.0 / self._conductivity(t, nd, na, donor, acceptor), "ohm*cm")

    def _standard_resistivity(self, temperature, Na, Nd, donor, acceptor):
        donor = dopant_species(donor, "donor", "donor")
        acceptor = dopant_species(acceptor, "acceptor", "acceptor")
        prepared = self._inputs(temperature=temperature, Na=Na, Nd=Nd)
        t, nd, na = np.broadcast_arrays(
            *(prepared[k][0] for k in ("temperature", "donor_density", "acceptor_density"))
        )
        compensated = (nd > 0) & (na > 0)
        if compensated.any():
            message = (
                f"model standard_resistivity/{self.model('standard_resistivity').id}: "
                f"the standard conversion covers singly doped silicon; "
                f"{np.count_nonzero(compensated)} point(s) with both Na and Nd > 0 "
                "are NaN (conversion='physics' handles them)"
            )
            self._violation(message)
        model = self.model("standard_resistivity")
        out = np.full(t.shape, np.nan)
        for species, where in ((acceptor, (na > 0) & ~compensated), (donor, ~(na > 0))):
            if not where.any():
                continue
            chosen = species_model(model, species, self.catalogue)[0]
            values = {
                "temperature": _extremes(t[where]),
                "dopant_density": _extremes((na if species == acceptor else nd)[where]),
            }
            with np.errstate(divide="ignore"):
                out[where] = self._call(chosen, values)
        return quantity(out, "ohm*cm")

    @declare(
        "standard_dopant_density",
        units="cm^-3",
        long_name="dopant density by the standard conversion (23 degC)",
        fixed={"conversion": "standard"},
        log=True,
        by_default=False,
        cases=[
            case(
                f"standard_dopant_density_{d}",
                fixed={"dopant": d},
                resistivity=_RESISTIVITIES,
                temperature=[296.15],
            )
            for d in ("boron", "phosphorus")
        ],
    )
    @declare(
        units="cm^-3",
        long_name="density of the dopant species that gives the resistivity",
        models=("mobility", *_EQUILIBRIUM),
        formula=(
            "the density N of one dopant species with rho(T, N) equal to the given "
            "resistivity, rho as for resistivity; solved for all points at once (secant "
            "steps in ln N from N = 1/(q rho mu) at the low-density mobility, kept in a "
            "bracket, each equilibrium started from the last one; until rho is reproduced "
            "to 1e-12 relative or ln N moves by less than 1e-13) on the doping-dominated "
            "branch: for "
            "acceptors above the resistivity maximum at N = ni (sqrt(r) - 1/sqrt(r)), "
            "r = mu_n/mu_p of intrinsic silicon"
        ),
        log=True,
        cases=[
            case(
                f"doping_from_resistivity_{d}",
                fixed={"dopant": d},
                resistivity=_RESISTIVITIES,
                temperature=[250.0, 300.0, 400.0],
            )
            for d in ("boron", "phosphorus")
        ],
    )
    def doping_from_resistivity(self, resistivity, temperature, dopant, *, conversion=None):
        """Density of one dopant species that gives silicon a resistivity, cm^-3.

        Parameters
        ----------
        resistivity : ohm cm (or a pint quantity of resistivity), > 0
        temperature : K (or a pint quantity)
        dopant : the species (``"boron"``, ``"phosphorus"``, ``"gallium"``, ...); the
            silicon holds that dopant only
        conversion : None (default): the release's choice (``si.release.defaults``;
            from 2026.2: the standard's conversion where it holds, boron and
            phosphorus at 23 degC within its validity of +-0.5 K, and the physics route
            everywhere else, point by point; 2026.1: the physics route); ``"physics"``:
            the inverse of
            :meth:`resistivity` at the temperature given, solved for every point at
            once; ``"standard"``: the standard's own conversion (ASTM F723 at 23 degC;
            boron and phosphorus, its phosphorus conversion also for arsenic and
            antimony as its scope allows), which warns at any other temperature

        Why the default: at 23 degC the physics route (Klaassen's mobility, fed as it
        was fitted) lies within the ASTM F723 conversion by -12..+9 % (boron) and
        -11..+13 % (phosphorus) in density, beyond +-10 % near 5e17 (boron), 5e18-1e19
        and 1e20 cm^-3 (phosphorus), while the standard condenses Thurber et al.'s
        measurements at that temperature (``si.provenance("doping_from_resistivity")``
        and the README's agreement table). A species the mobility model has no set
        for (gallium, aluminium, indium: boron's; antimony: phosphorus's) is labelled
        so in the provenance of ``mobility``.

        A resistivity that no density of the dopant gives at that temperature
        (above that of nearly intrinsic silicon, or below that of 1e21 cm^-3) is an
        error naming the range; a density outside the models' validity warns.
        Acceptors first raise the resistivity of intrinsic silicon (they remove its
        more mobile electrons) up to a maximum near ``N = ni (sqrt(r) - 1/sqrt(r))``,
        ``r = mu_n / mu_p``; the answer is the density above that maximum.
        """
        if conversion is not None:
            _choice(conversion, "conversion", CONVERSIONS)
        species = dopant_species(dopant, "dopant")
        rho = coerce(resistivity, "resistivity")
        t = coerce(temperature, "temperature")
        try:
            shape = np.broadcast_shapes(rho[0].shape, t[0].shape)
        except ValueError:
            raise InputError(
                "resistivity, temperature",
                "arrays whose shapes broadcast together",
                f"{rho[0].shape}, {t[0].shape}",
            ) from None
        if conversion == "standard":
            model = species_model(self.model("standard_dopant_density"), species, self.catalogue)[0]
            value = self._call(model, {"temperature": t, "resistivity": rho})
            return quantity(np.broadcast_to(value, shape).astype(float), "cm^-3")
        # views of the inputs in their broadcast shape (the blocks are cut from them)
        target = np.broadcast_to(rho[0], shape)
        temperatures = np.broadcast_to(t[0], shape)
        standard = self._standard_applies(species, temperatures, conversion)
        if not standard.any():
            density = self._physics_doping(target, temperatures, species)
            return quantity(np.asarray(density, dtype=float).reshape(shape), "cm^-3")
        density = np.empty(shape)
        model = self.model("standard_dopant_density").select(species)
        values = {
            "temperature": _extremes(temperatures[standard]),
            "resistivity": _extremes(target[standard]),
        }
        density[standard] = self._call(model, values)
        physics = ~standard
        if physics.any():
            density[physics] = self._physics_doping(target[physics], temperatures[physics], species)
        return quantity(density, "cm^-3")

    def _standard_applies(self, species, temperatures, conversion):
        """Points (1-D mask) the default conversion answers with the standard's: the
        species has a conversion of its own and the temperature lies in its validity."""
        if conversion is None:  # the release's choice (2026.1: the physics route)
            conversion = self.release.defaults.get("doping_from_resistivity", "physics")
        if conversion == "physics":
            return np.zeros(temperatures.shape, dtype=bool)
        model = self.model("standard_dopant_density")
        if species not in model.variants:
            return np.zeros(temperatures.shape, dtype=bool)
        valid = model.select(species).validity.get("temperature")
        if valid is None:
            return np.ones(temperatures.shape, dtype=bool)
        return (temperatures >= valid.low) & (temperatures <= valid.high)

    def _physics_doping(self, target, temperatures, species):
        """The physics route's N for resistivities ``target`` at ``temperatures`` (arrays
        of one shape, views or copies)."""
        kind = DOPANTS[species]
        donor = species if kind == "donor" else "phosphorus"
        acceptor = species if kind == "acceptor" else "boron"
        density = self._invert_resistivity(target, temperatures, species, donor, acceptor)
        # validity of every model on the answer's range (warn, or raise if strict)
        found = _extremes(density)
        none = (np.zeros(()), 0.0, 0.0) if density.size else (np.zeros(()), np.inf, -np.inf)
        prepared = {
            "temperature": _extremes(temperatures),
            "donor_density": found if kind == "donor" else none,
            "acceptor_density": none if kind == "donor" else found,
        }
        self._check_equilibrium(prepared, donor, acceptor, self._carriers())
        for carrier in CARRIERS:
            model = self._mobility_model(carrier, donor, acceptor)
            for name in ("temperature", "donor_density", "acceptor_density"):
                if name in model.inputs:
                    self._check(model, name, *prepared[name][1:])
        return density

    def _lowest_density(self, temperatures, kind, donor, acceptor):
        """Where the doping-dominated branch of rho(N) starts (cm^-3, 1-D).

        Donors: rho falls from the intrinsic value for any N, so 1e-3 ni. Acceptors:
        rho peaks where p = ni sqrt(r), r = mu_n/mu_p of intrinsic silicon, i.e. at
        N = ni (sqrt(r) - 1/sqrt(r)); the branch above it falls monotonically.
        """
        ni = self._carriers().ni(temperature=temperatures)
        if kind == "donor":
            return np.maximum(1e-3 * ni, 1e-30)
        mu = self._intrinsic_mobilities(temperatures, donor, acceptor)
        root = np.sqrt(np.maximum(mu["electron"] / mu["hole"], 1.0))
        return np.maximum(ni * (root - 1.0 / root), 1e-3 * ni)

    def _intrinsic_mobilities(self, temperatures, donor, acceptor):
        """{carrier: mobility} of intrinsic silicon (no dopants, n = p = ni), cm^2/(V s)."""
        ni = self._carriers().ni(temperature=temperatures)
        zeros = np.zeros_like(ni)
        state = {
            "temperature": temperatures,
            "donor_density": zeros,
            "acceptor_density": zeros,
            "electron_density": ni,
            "hole_density": ni,
        }
        return {
            carrier: model(**{k: state[k] for k in model.inputs})
            for carrier, model in ((c, self._mobility_model(c, donor, acceptor)) for c in CARRIERS)
        }

    def _invert_resistivity(self, target, temperatures, species, donor, acceptor):
        """N (the broadcast shape) with rho(T, N) = target on the doping-dominated branch,
        solved block by block (the memory of a block, not of the whole input)."""
        if target.size == 0:
            return np.zeros(target.shape)
        return evaluate(
            self._invert_block,
            {"target": target, "temperatures": temperatures},
            locate=True,
            workers=self.workers,
            species=species,
            donor=donor,
            acceptor=acceptor,
        )

    def _invert_block(self, target, temperatures, species, donor, acceptor, offset=0):
        """The inversion of one block (1-D); ``offset``: the block's first point's index.

        Secant steps in ln N from a first guess, inside a bracket (see
        :func:`~matprops.kernels.resistivity.solve_decreasing_from`). From the third
        evaluation of a point on, its equilibria start from the reduced Fermi level and
        narrowing extrapolated linearly in ln N from its last two solved states (the
        secant steps shrink fast, so that start is close and each solve takes one or two
        Newton passes instead of three); the first two start from the solver's own guess
        (the first step can move ln N by a few units)."""
        kind = DOPANTS[species]
        shape = np.broadcast_shapes(np.shape(target), np.shape(temperatures))
        target = np.broadcast_to(np.asarray(target, dtype=float), shape).reshape(-1)
        temperatures = np.broadcast_to(temperatures, shape).reshape(-1)
        log_target = np.log(target)
        # (complete, donor, acceptor) of each equilibrium -> [(ln N, eta, s) arrays of its
        # last two states, newest last]
        history = {}
        bound = self._carriers()
        states = tuple(
            np.broadcast_to(a, target.shape)
            for a in (*bound.dos(temperature=temperatures), bound.ni(temperature=temperatures))
        )
        seen = np.zeros(target.size, dtype=np.int8)  # evaluations of each point so far

        def log_rho(log_n, index):
            density = np.exp(log_n)
            zeros = np.zeros_like(density)
            nd, na = (density, zeros) if kind == "donor" else (zeros, density)
            start = None
            if history and seen[index].min() >= 2:
                start = {}
                for key, ((x0, e0, s0), (x1, e1, s1)) in history.items():
                    step = log_n - x1[index]
                    with np.errstate(divide="ignore", invalid="ignore"):
                        run = x1[index] - x0[index]
                        slope_e = np.where(run != 0, (e1[index] - e0[index]) / run, 0.0)
                        slope_s = np.where(run != 0, (s1[index] - s0[index]) / run, 0.0)
                    start[key] = (e1[index] + slope_e * step, s1[index] + slope_s * step)
            keep = {}
            sigma = self._conductivity_block(
                temperatures[index],
                nd,
                na,
                donor,
                acceptor,
                start=start,
                keep=keep,
                states=tuple(a[index] for a in states),
            )
            for key, result in keep.items():
                if key not in history:
                    history[key] = [
                        tuple(np.zeros(target.size) for _ in range(3)) for _ in range(2)
                    ]
                older, newer = history[key]
                for kept, fresh in zip(older, newer, strict=True):
                    kept[index] = fresh[index]  # the newest becomes the older
                x, eta, s = newer
                x[index] = log_n
                eta[index] = result["reduced_fermi_level"]
                s[index] = (result["conduction_edge_shift"] + result["valence_edge_shift"]) / (
                    BOLTZMANN_EV * result["temperature"]
                )
            seen[index] += 1
            return -np.log(sigma)

        low = np.log(self._lowest_density(temperatures, kind, donor, acceptor))
        high = np.full(target.size, np.log(_HIGHEST_DENSITY))
        # first guess: the majority carriers alone at their low-density mobility
        # (N = 1 / (q rho mu_L), an underestimate where the mobility falls with N)
        carrier = CARRIERS[0] if kind == "donor" else CARRIERS[1]
        mobility = self._intrinsic_mobilities(temperatures, donor, acceptor)[carrier]
        guess = -np.log(ELEMENTARY_CHARGE * mobility) - log_target
        log_n, converged, reach = resistivity_kernels.solve_decreasing_from(
            log_rho, log_target, guess, low, high
        )
        for where, limit, what in ((-1, low, "at most"), (1, high, "at least")):
            bad = reach == where
            if bad.any():
                i = np.flatnonzero(bad)[0]
                edge = np.exp(log_rho(limit[i : i + 1], np.array([i]))[0])
                raise InputError(
                    "resistivity",
                    f"{what} {edge:.4g} ohm*cm for "
                    f"{species}-doped silicon at {temperatures[i]:g} K (what "
                    f"{np.exp(low[i]):.3g}-{_HIGHEST_DENSITY:.0e} cm^-3 give)",
                    f"{target[i]:g} ohm*cm at point #{offset + i} "
                    f"({np.count_nonzero(bad)} point(s) out of reach among "
                    f"#{offset}-#{offset + target.size - 1})",
                )
        if not converged.all():
            bad = np.flatnonzero(~converged)
            points = [
                {
                    "index": int(offset + i),
                    "flat": int(offset + i),
                    "inputs": (f"{target[i]:g} ohm*cm at {temperatures[i]:g} K", species),
                    "detail": "the iterations ran out",
                }
                for i in bad[:5]
            ]
            raise solver_error("doping_from_resistivity", "did not converge", bad.size, points)
        return np.exp(log_n).reshape(shape)

    # ------------------------------------------------------------------ kernels
    def _transport_kernel(self, name: str, fixed: dict):
        """The plain-array callable of a transport quantity (see ``Silicon.kernel``).

        ``carrier=`` is required; for ``mobility`` also ``donor=`` / ``acceptor=``
        (defaults phosphorus, boron) where the model has one set per dopant species.
        The callable takes the model's inputs (``si.model(name).inputs``) in internal
        units; a mobility model takes the dopant densities and carriers its fit
        conventions name (the kernel's ``input_kinds``), nothing is converted.
        """
        fixed = dict(fixed)
        carrier = fixed.pop("carrier", None)
        if carrier is None:
            raise InputError("carrier", f"given for {name} (one of {', '.join(CARRIERS)})", None)
        carrier = carrier_name(carrier)
        if name == "mobility":
            donor = dopant_species(fixed.pop("donor", "phosphorus"), "donor", "donor")
            acceptor = dopant_species(fixed.pop("acceptor", "boron"), "acceptor", "acceptor")
            model = self._mobility_model(carrier, donor, acceptor)
        else:
            model = self.model(name).select(carrier)
        if fixed:
            key = min(fixed)
            raise InputError(key, f"not an option of the {name} kernel", fixed[key])
        return model
