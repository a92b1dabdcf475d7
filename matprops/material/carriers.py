"""Bands and carriers: gap, densities of states, intrinsic density, and the doping axis.

Composition rules (each shown in the provenance of what it returns):

- The equilibrium solver takes Nc and Nv from the release's densities of states and
  ni from its intrinsic density; the gap entering the statistics is the one consistent
  with them, ``kT ln(Nc Nv / ni^2)``, so undoped silicon reproduces the release's ni.
- An *apparent* narrowing was fitted with Boltzmann statistics and one particular
  intrinsic density ``ni_fit`` (at ``T_fit``), recorded in its model file. It is
  composed with that density, never silently with another: the effective intrinsic
  density is ``ni(T) * [ni_fit / ni(T_fit)] * exp(dEg / 2kT)`` with ni the release's
  intrinsic density, and equilibrium uses Boltzmann statistics by default. Asking for
  Fermi-Dirac statistics with an apparent narrowing warns (it counts degeneracy twice).
- A *physical* narrowing (Schenk's) is composed with the release's ni as it is, uses
  Fermi-Dirac statistics by default, and depends on the free-carrier densities: where
  ``n`` and ``p`` are not given they are the equilibrium densities, solved
  self-consistently with the narrowing.
"""

from __future__ import annotations

import dataclasses
import functools
from typing import TYPE_CHECKING, Any

import numpy as np

from ..errors import (
    InputError,
)
from ..kernels import equilibrium as equilibrium_kernel
from ..kernels._blocks import evaluate
from ..kernels._xp import asfloat, namespace
from ..kernels.constants import BOLTZMANN_EV
from ..units import coerce, quantity
from ..vocabulary import DOPANTS, dopant_species
from .bound import SOLVER_REASON, BoundKernel, model_checker, validity_of
from .composition import input_kinds, species_model
from .registry import (
    DOPANTS_GRID,
    DOPING_GRID,
    TEMPERATURES,
    Part,
    case,
    method_of,
)
from .registry import quantity as declare
from .results import Result

__all__ = ["DOPANTS", "CarrierMethods", "Equilibrium", "dopant_species"]

STATISTICS = ("fermi-dirac", "boltzmann")
# the equilibrium's outputs a caller keeps (a large solve holds only those)
CARRIER_FIELDS = ("electron_density", "hole_density")
_SHIFT_FIELDS = ("conduction_edge_shift", "valence_edge_shift")
_DOPING = ("acceptor_density", "donor_density", "electron_density", "hole_density")
_EQUILIBRIUM_MODELS = ("densities_of_states", "intrinsic_density", "gap_narrowing", "ionisation")
_IONISATION_DENSITIES = [0.0, 1e14, 1e16, 1e18, 3e18, 1e19, 1e20]


def _ionisation_cases(si):
    """Every coefficient set of the ionisation model (one case per dopant species)."""
    if "ionisation" not in si.models:
        return []
    return [
        case(
            f"dopant_level_{species}",
            fixed={"dopant": species},
            N=_IONISATION_DENSITIES,
        )
        for species in si.model("ionisation").variants
    ]


@dataclasses.dataclass(frozen=True, repr=False)
class Equilibrium(Result):
    """Thermal-equilibrium state of doped silicon (arrays broadcast to one shape).

    ``n0 p0 = gamma_n gamma_p ni_eff^2`` (see :attr:`degeneracy_factors`; the gammas
    are 1 with Boltzmann statistics). Energies are in eV. ``fermi_level`` is measured
    from the intrinsic level of undoped silicon at the same temperature
    (``E_i = E_c - kT ln(Nc/ni)``);
    ``fermi_level_from_conduction_edge`` (negative inside the gap) and
    ``fermi_level_from_valence_edge`` (positive inside the gap) are measured from
    the band edges *after* narrowing.
    """

    temperature: object
    fermi_level: object
    fermi_level_from_conduction_edge: object
    fermi_level_from_valence_edge: object
    electron_density: object
    hole_density: object
    ionised_donors: object
    ionised_acceptors: object
    gap_narrowing: object
    conduction_edge_shift: object
    valence_edge_shift: object
    effective_intrinsic_density: object
    statistics: str
    donor: str
    acceptor: str
    provenance: dict = dataclasses.field(compare=False)

    @property
    def n(self):
        return self.electron_density

    @property
    def degeneracy_factors(self):
        """``(gamma_n, gamma_p)``, dimensionless: ``n0 = gamma_n Nc exp(eta_n)`` and
        ``p0 = gamma_p Nv exp(eta_p)``, ``gamma = F_1/2(eta) / exp(eta)`` (1 with
        Boltzmann statistics, below 1 in degenerate silicon).

        The law that holds: ``n0 p0 = gamma_n gamma_p ni_eff^2`` with the
        :attr:`effective_intrinsic_density`; ``n0 p0 = ni_eff^2`` only with Boltzmann
        statistics (at 1e20 cm^-3 of phosphorus the product is about 0.3 ni_eff^2).
        A minority density is ``gamma_n gamma_p ni_eff^2 / (majority density)``.
        """
        from ..kernels.fermi_dirac import fd_half

        kt = BOLTZMANN_EV * np.asarray(self.temperature.m_as("K"), dtype=float)
        reduced = (
            np.asarray(self.fermi_level_from_conduction_edge.m_as("eV"), float) / kt,
            -np.asarray(self.fermi_level_from_valence_edge.m_as("eV"), float) / kt,
        )
        if self.statistics != "fermi-dirac":
            return tuple(quantity(np.ones_like(eta), "dimensionless") for eta in reduced)
        return tuple(
            quantity(np.asarray(fd_half(eta), float) * np.exp(-eta), "dimensionless")
            for eta in reduced
        )

    @property
    def p(self):
        return self.hole_density


class _Bound:
    """The carrier models of one material, composed on plain arrays (internal units)."""

    def __init__(self, si):
        self.dos = si.model("densities_of_states")
        self.ni = si.model("intrinsic_density")
        self.narrowing = si.model("gap_narrowing")
        self.ionisation = si.model("ionisation")
        self.apparent = self.narrowing.extra["narrowing"]["type"] == "apparent"
        conventions = self.narrowing.conventions
        self.statistics = conventions.value(
            "statistics", "boltzmann" if self.apparent else "fermi-dirac"
        )
        self.fitted_density = conventions.get("intrinsic_density")
        self.uses_carriers = "electron_density" in self.narrowing.inputs
        self.catalogue = si.catalogue
        # the ionisation model's own densities of states and statistics, carried into
        # the occupancy of its levels where they differ from the material's
        ionisation = self.ionisation.conventions
        states = ionisation.value("densities_of_states")
        self.level_states = (
            self.catalogue.model("densities_of_states", states)
            if states not in (None, "none", "own", "composed") and states != self.dos.id
            else None
        )
        self.occupancy_from_densities = ionisation.value("statistics") == "boltzmann"

    def narrowing_args(self, temperature, donor_density, acceptor_density, n, p):
        values = {
            "temperature": temperature,
            "donor_density": donor_density,
            "acceptor_density": acceptor_density,
            "electron_density": n,
            "hole_density": p,
        }
        return {k: values[k] for k in self.narrowing.inputs}

    def shifts(self, temperature, donor_density, acceptor_density, n=None, p=None):
        return self.narrowing(
            **self.narrowing_args(temperature, donor_density, acceptor_density, n, p)
        )

    def reference_ratio(self):
        """ni_fit / ni(T_fit) for an apparent narrowing, 1 for a physical one."""
        fitted = self.fitted_density
        if not self.apparent or fitted is None or not fitted.number:
            return 1.0
        return fitted.kernel_value / float(self.ni(temperature=fitted.temperature))

    def gap_offset(self, temperature):
        """The extra narrowing that reconciles an apparent narrowing with the release's ni."""
        return 2.0 * BOLTZMANN_EV * temperature * np.log(self.reference_ratio())

    def species_level(self, species):
        """The ionisation model serving a dopant species, and its stand-in record."""
        return species_model(self.ionisation, species, self.catalogue)

    def level(self, species, density, temperature=None, complete=False, states=None):
        """((E_dop, localised share b), degeneracy) of a dopant species.

        ``complete``: the share is 0, every dopant ionised (the carrier convention of
        fits that took the dopant density for the majority density). Where the
        ionisation model was fitted with other densities of states (its fit
        conventions), the level carries them: ``E_dop + kT ln(N/N_fit)`` with N = Nc
        (donors) or Nv (acceptors), exact for an occupancy written with the carrier
        density (``n/N_fit``), as the solver writes it for a Boltzmann-fitted model.
        ``states``: ``(Nc, Nv)`` at ``temperature`` if already computed.
        """
        model, _ = self.species_level(species)
        energy, share = model(dopant_density=density)
        if complete:
            share = np.zeros(np.shape(density))
        if self.level_states is not None and temperature is not None:
            band = 0 if DOPANTS[species] == "donor" else 1
            own = (states if states is not None else self.dos(temperature=temperature))[band]
            fitted = self.level_states(temperature=temperature)[band]
            energy = energy + BOLTZMANN_EV * temperature * np.log(own / fitted)
        return (energy, share), model.coefficients["degeneracy"].kernel_value

    def equilibrium(
        self,
        temperature,
        donor_density,
        acceptor_density,
        donor="phosphorus",
        acceptor="boron",
        fermi_dirac=True,
        complete=False,
        workers=None,
        start=None,
        fields=None,
    ):
        """The equilibrium solve on plain arrays; ``complete``: every dopant ionised.

        Large inputs are solved block by block (each block's densities of states,
        levels and narrowing computed with it), so that memory stays the outputs plus a
        few blocks; ``workers``: threads solving blocks side by side; ``start``: the
        reduced Fermi level and narrowing ``(eta, s)`` to start from (see
        :func:`matprops.kernels.equilibrium.solve`); ``fields``: the outputs to keep
        (None: every one, and ``temperature``)."""
        arguments = {
            "temperature": temperature,
            "donor_density": donor_density,
            "acceptor_density": acceptor_density,
        }
        if start is not None:
            arguments["start_eta"], arguments["start_s"] = start
        return evaluate(
            self._equilibrium_block,
            arguments,
            workers=workers,
            donor=donor,
            acceptor=acceptor,
            fermi_dirac=fermi_dirac,
            complete=complete,
            fields=fields,
        )

    def _equilibrium_block(
        self,
        temperature,
        donor_density,
        acceptor_density,
        donor="phosphorus",
        acceptor="boron",
        fermi_dirac=True,
        complete=False,
        start_eta=None,
        start_s=None,
        fields=None,
        states=None,
    ):
        """The equilibrium solve of one block (see :meth:`equilibrium`); ``states``:
        ``(Nc, Nv, ni)`` at these temperatures if already known (an inverse problem
        solves at the same temperatures again and again)."""
        t, nd, na = np.broadcast_arrays(
            *(np.asarray(a, dtype=float) for a in (temperature, donor_density, acceptor_density))
        )
        nc, nv, ni = states if states is not None else (*self.dos(temperature=t), None)
        if ni is None:
            ni = self.ni(temperature=t)
        donor_level, g_d = self.level(donor, nd, t, complete, states=(nc, nv))
        acceptor_level, g_a = self.level(acceptor, na, t, complete, states=(nc, nv))

        fixed = getattr(self.narrowing.kernel, "with_fixed_dopants", None)
        coefficients = {name: c.kernel_value for name, c in self.narrowing.coefficients.items()}

        def narrowing(t, nd, na):
            if fixed is not None:  # the dopant part computed once, not at every iteration
                return fixed(t, nd, na, **coefficients)
            return lambda n, p: self.shifts(t, nd, na, n, p)

        result = equilibrium_kernel.solve(
            t,
            nd,
            na,
            conduction_states=nc,
            valence_states=nv,
            intrinsic_density=ni,
            narrowing=narrowing,
            narrowing_uses_carriers=self.uses_carriers,
            donor_level=donor_level,
            acceptor_level=acceptor_level,
            donor_degeneracy=g_d,
            acceptor_degeneracy=g_a,
            gap_offset=self.gap_offset(t),
            fermi_dirac=fermi_dirac,
            occupancy_from_densities=self.occupancy_from_densities,
            start=None if start_eta is None else (start_eta, start_s),
        )
        result["temperature"] = t
        if fields is not None:
            return {key: result[key] for key in fields}
        return result

    def effective_intrinsic_density(
        self, temperature, donor_density, acceptor_density, electron_density=None, hole_density=None
    ):
        xp = namespace(temperature, donor_density, acceptor_density, electron_density, hole_density)
        dec, dev = self.shifts(
            temperature, donor_density, acceptor_density, electron_density, hole_density
        )
        kt = BOLTZMANN_EV * asfloat(xp, temperature)
        return (
            self.ni(temperature=temperature)
            * float(self.reference_ratio())
            * xp.exp((dec + dev) / (2.0 * kt))
        )

    def effective_intrinsic_density_derivatives(
        self, temperature, donor_density, acceptor_density, electron_density=None, hole_density=None
    ):
        """ni_eff and its partials: ``d ln ni_eff = d ln ni + d(dEc + dEv)/2kT`` with
        ``d/dT`` also taking ``-(dEc + dEv)/2kT^2``."""
        xp = namespace(temperature, donor_density, acceptor_density, electron_density, hole_density)
        t = asfloat(xp, temperature)
        values = {
            "temperature": temperature,
            "donor_density": donor_density,
            "acceptor_density": acceptor_density,
            "electron_density": electron_density,
            "hole_density": hole_density,
        }
        (dec, dev), shifts = self.narrowing.derivative(
            **{k: values[k] for k in self.narrowing.inputs}
        )
        ni, slopes = self.ni.derivative(temperature=temperature)
        kt = BOLTZMANN_EV * t
        two_kt = 2.0 * kt
        value = ni * float(self.reference_ratio()) * xp.exp((dec + dev) / two_kt)
        partials = {}
        for name, given in values.items():
            if given is None:
                continue
            pair = shifts.get(name)
            log_slope = 0.0 if pair is None else (pair[0] + pair[1]) / two_kt
            if name == "temperature":
                log_slope = log_slope + slopes["temperature"] / ni - (dec + dev) / (two_kt * t)
            partials[name] = value * log_slope
        return value, partials


# points per block of the equilibrium solve (the solver's own choice)
_Bound._equilibrium_block.block = equilibrium_kernel.BLOCK  # type: ignore[attr-defined]


class CarrierMethods:
    """Band gap, densities of states, intrinsic and effective intrinsic density,
    gap narrowing, dopant ionisation and equilibrium carrier statistics."""

    if TYPE_CHECKING:  # provided by the facade (silicon.Silicon) these methods serve
        _violation: Any
        _check: Any
        _check_regions: Any
        provenance: Any

    # ------------------------------------------------------------------ undoped
    @declare(
        units="eV",
        long_name="fundamental (indirect) band gap, undoped, no narrowing",
        cases=[case(temperature=TEMPERATURES)],
    )
    def band_gap(self, temperature):
        """Fundamental (indirect) band gap of undoped silicon, eV; no narrowing."""
        return self._quantity("band_gap", temperature=temperature)

    @declare(
        units=("cm^-3", "cm^-3"),
        parts=(
            Part("conduction_band_states", "effective density of states of the conduction band"),
            Part("valence_band_states", "effective density of states of the valence band"),
        ),
        log=True,
        cases=[case(temperature=TEMPERATURES)],
        kernel_note="Returns (Nc, Nv).",
    )
    def densities_of_states(self, temperature):
        """Effective densities of states ``(Nc, Nv)`` of the conduction and valence bands, cm^-3."""
        (nc, nv), (uc, uv) = self._evaluate("densities_of_states", temperature=temperature)
        return quantity(nc, uc), quantity(nv, uv)

    @declare(
        units="cm^-3",
        long_name="intrinsic carrier density, undoped",
        log=True,
        cases=[case(temperature=TEMPERATURES)],
    )
    def intrinsic_density(self, temperature):
        """Intrinsic carrier density of undoped silicon (no gap narrowing), cm^-3."""
        return self._quantity("intrinsic_density", temperature=temperature)

    # ------------------------------------------------------------------ plumbing
    def _carriers(self) -> _Bound:
        bound = self.__dict__.get("_bound_carriers")
        if bound is None:
            bound = self.__dict__["_bound_carriers"] = _Bound(self)
        return bound

    def _inputs(self, **named):
        """Coerce user arguments (``T``, ``Na``, ``Nd``, ``n``, ``p`` ...) and check that
        they broadcast; returns ``{kernel input name: (array, min, max)}``."""
        kernel_names = {
            "temperature": "temperature",
            "Na": "acceptor_density",
            "Nd": "donor_density",
            "n": "electron_density",
            "p": "hole_density",
            "excess": "excess_density",
        }
        # None means "not given" only for the optional carrier densities n and p;
        # elsewhere coerce says what was received
        named = {k: v for k, v in named.items() if v is not None or k not in ("n", "p")}
        prepared = {kernel_names[name]: coerce(value, name) for name, value in named.items()}
        try:
            np.broadcast_shapes(*(a.shape for a, _, _ in prepared.values()))
        except ValueError:
            shapes = ", ".join(
                f"{name} {np.shape(coerce(value, name)[0])}"
                for name, value in named.items()
                if value is not None
            )
            raise InputError(
                ", ".join(n for n, v in named.items() if v is not None),
                "arrays whose shapes broadcast together",
                shapes,
            ) from None
        return prepared

    def _check_statistics(self, statistics, bound: _Bound) -> bool:
        """True for Fermi-Dirac; warns when the narrowing was fitted with other statistics."""
        if statistics is None:
            statistics = bound.statistics
        if statistics not in STATISTICS:
            raise InputError(
                "statistics",
                f"one of {', '.join(STATISTICS)} or None (the narrowing model's own)",
                repr(statistics),
            )
        if bound.apparent and statistics != bound.statistics:
            message = (
                f"model gap_narrowing/{bound.narrowing.id} is an apparent narrowing "
                f"fitted with {bound.statistics} statistics; combined with "
                f"{statistics} statistics it counts degeneracy twice"
            )
            self._violation(message)
        return statistics == "fermi-dirac"

    def _check_narrowing(self, prepared, bound: _Bound):
        """Validity ranges and regions of the narrowing model at the inputs given."""
        values, ranges = {}, {}
        for argument in bound.narrowing.inputs:
            if argument in prepared:
                array, low, high = prepared[argument]
                self._check(bound.narrowing, argument, low, high)
                values[argument], ranges[argument] = array, (low, high)
        if bound.narrowing.regions and values:
            self._check_regions(bound.narrowing, values, ranges)

    def _check_dopants(self, prepared, donor, acceptor):
        """Validity of the ionisation models for the dopant densities given."""
        bound = self._carriers()
        for species, key in ((donor, "donor_density"), (acceptor, "acceptor_density")):
            _, low, high = prepared[key]
            self._check(bound.species_level(species)[0], "dopant_density", low, high)

    def _solve(self, temperature, Na, Nd, donor, acceptor, statistics, complete=False, fields=None):
        """The equilibrium at the public inputs (checked); ``fields``: the outputs to keep
        (None: all), so that a large solve holds only those in memory."""
        options = self._solve_options(temperature, Na, Nd, donor, acceptor, statistics, complete)
        prepared = self._inputs(temperature=temperature, Na=Na, Nd=Nd)
        result = self._carriers().equilibrium(
            prepared["temperature"][0],
            prepared["donor_density"][0],
            prepared["acceptor_density"][0],
            **options,
            workers=self.workers,
            fields=fields,
        )
        return result, options["donor"], options["acceptor"], options["fermi_dirac"]

    def _solve_options(self, temperature, Na, Nd, donor, acceptor, statistics, complete=False):
        """Check what an equilibrium solve at these inputs uses (species, statistics, the
        validity of its models) and return its options (donor, acceptor, fermi_dirac,
        complete) for :meth:`_Bound.equilibrium` or a block of it."""
        donor = dopant_species(donor, "donor", "donor")
        acceptor = dopant_species(acceptor, "acceptor", "acceptor")
        bound = self._carriers()
        prepared = self._inputs(temperature=temperature, Na=Na, Nd=Nd)
        fermi_dirac = self._check_statistics(statistics, bound)
        _, low, high = prepared["temperature"]
        for quantity_name in ("densities_of_states", "intrinsic_density"):
            self._check(self.model(quantity_name), "temperature", low, high)
        self._check_narrowing(prepared, bound)
        self._check_dopants(prepared, donor, acceptor)
        return {
            "donor": donor,
            "acceptor": acceptor,
            "fermi_dirac": fermi_dirac,
            "complete": complete,
        }

    # ------------------------------------------------------------------ narrowing
    @method_of(
        "gap_narrowing",
        cases=[
            case(
                temperature=[250.0, 300.0, 400.0],
                Nd=[0.0, 1e18, 1e20],
                Na=[0.0, 1e17],
                n=[1e10, 1e18, 1e20],
                p=[1e3, 1e16, 1e19],
            )
        ],
    )
    def band_edge_shifts(
        self, temperature, Na=0, Nd=0, n=None, p=None, *, donor="phosphorus", acceptor="boron"
    ):
        """Shifts ``(dEc, dEv)`` of the conduction- and valence-band edges, eV (>= 0).

        ``Na``, ``Nd``: total acceptor and donor densities, cm^-3. ``n``, ``p``: free
        electron and hole densities, cm^-3, for a narrowing that depends on them
        (Schenk's); when omitted, the equilibrium densities (self-consistent). An
        apparent narrowing has no physical split: it is given in equal halves.
        """
        dec, dev = self._edge_shifts(temperature, Na, Nd, n, p, donor, acceptor)
        return quantity(np.asarray(dec, float), "eV"), quantity(np.asarray(dev, float), "eV")

    def _edge_shifts(self, temperature, Na, Nd, n, p, donor, acceptor):
        """(dEc, dEv) as float arrays in eV (see :meth:`band_edge_shifts`)."""
        bound = self._carriers()
        if bound.uses_carriers and (n is None or p is None):
            if n is not None or p is not None:
                raise InputError(
                    "n" if n is None else "p",
                    f"given together with {'p' if n is None else 'n'} (or both omitted)",
                    None,
                )
            result, *_ = self._solve(
                temperature, Na, Nd, donor, acceptor, None, fields=_SHIFT_FIELDS
            )
            return result["conduction_edge_shift"], result["valence_edge_shift"]
        prepared = self._inputs(temperature=temperature, Na=Na, Nd=Nd, n=n, p=p)
        dec, dev = self._call(bound.narrowing, prepared)
        if not bound.uses_carriers:  # broadcast to every argument's shape
            shape = np.broadcast_shapes(*(a.shape for a, _, _ in prepared.values()))
            dec, dev = np.broadcast_to(dec, shape), np.broadcast_to(dev, shape)
        return dec, dev

    @declare(
        units="eV",
        long_name="band-gap narrowing",
        wants=_DOPING,
        cases=[case(**DOPING_GRID)],
        kernel_method="band_edge_shifts",
        kernel_note=(
            "Returns the pair (conduction-edge shift, valence-edge shift), each "
            ">= 0; si.gap_narrowing() returns their sum, si.band_edge_shifts() "
            "the pair."
        ),
    )
    def gap_narrowing(
        self, temperature, Na=0, Nd=0, n=None, p=None, *, donor="phosphorus", acceptor="boron"
    ):
        """Band-gap narrowing, eV (>= 0): the sum of :meth:`band_edge_shifts`.

        For an apparent narrowing this is the published dEg (to be used with the
        intrinsic density it was fitted with, see :meth:`effective_intrinsic_density`).
        """
        dec, dev = self._edge_shifts(temperature, Na, Nd, n, p, donor, acceptor)
        return quantity(np.add(dec, dev, dtype=float), "eV")

    @declare(
        units="cm^-3",
        long_name="effective intrinsic carrier density, with band-gap narrowing",
        models=("intrinsic_density", "gap_narrowing"),
        formula=(
            "ni_eff = ni(T) exp(dEg / 2kT); for an apparent narrowing ni(T) is scaled by "
            "ni_fit / ni(T_fit), the intrinsic density the narrowing was fitted with. "
            "In equilibrium n0 p0 = gamma_n gamma_p ni_eff^2, gamma = F_1/2(eta)/exp(eta) "
            "(1 with Boltzmann statistics)"
        ),
        wants=_DOPING,
        log=True,
        cases=[case(**DOPING_GRID)],
        kernel=lambda si, name, fixed: _effective_intrinsic_density_kernel(si, fixed),
    )
    def effective_intrinsic_density(
        self, temperature, Na=0, Nd=0, n=None, p=None, *, donor="phosphorus", acceptor="boron"
    ):
        """Effective intrinsic density ``ni_eff = ni exp(dEg / 2kT)``, cm^-3.

        Composed from the release's intrinsic density and gap narrowing (its
        provenance names both and says how they were combined, see the module
        notes). ``n``, ``p`` as in :meth:`band_edge_shifts`.

        The law it enters: ``n0 p0 = gamma_n gamma_p ni_eff^2`` with the Fermi-Dirac
        degeneracy factors ``gamma = F_1/2(eta)/exp(eta)`` of the equilibrium
        (``si.equilibrium(...).degeneracy_factors``); only with Boltzmann statistics
        (an apparent narrowing's) is ``n0 p0 = ni_eff^2``. With the release default
        (Schenk's narrowing, Fermi-Dirac statistics) the product is about 0.3 ni_eff^2
        at 1e20 cm^-3: a minority density taken as ni_eff^2 / N is then several
        times too high.
        """
        bound = self._carriers()
        if bound.uses_carriers and (n is None or p is None):
            if n is not None or p is not None:
                raise InputError(
                    "n" if n is None else "p",
                    f"given together with {'p' if n is None else 'n'} (or both omitted)",
                    None,
                )
            result, *_ = self._solve(
                temperature, Na, Nd, donor, acceptor, None, fields=CARRIER_FIELDS
            )
            n, p = result["electron_density"], result["hole_density"]
        prepared = self._inputs(temperature=temperature, Na=Na, Nd=Nd, n=n, p=p)
        self._check(self.model("intrinsic_density"), "temperature", *prepared["temperature"][1:])
        self._check_narrowing(prepared, bound)
        arrays = {k: v[0] for k, v in prepared.items()}
        arrays.setdefault("donor_density", 0.0)
        arrays.setdefault("acceptor_density", 0.0)
        # blocks if large
        value = evaluate(bound.effective_intrinsic_density, arrays, workers=self.workers)
        shape = np.broadcast_shapes(*(np.shape(a) for a in arrays.values()))
        if np.shape(value) != shape:
            value = np.broadcast_to(value, shape)
        return quantity(np.asarray(value, dtype=float), "cm^-3")

    # ------------------------------------------------------------------ dopants
    @declare(
        "ionisation",
        units=("eV", "dimensionless"),
        parts=(
            Part("ionisation_energy", "ionisation energy of the dopant level"),
            Part("localised_share", "share of the dopant's states still localised"),
        ),
        wants=("dopant_density",),
        cases=[_ionisation_cases],
        kernel_note="Returns (ionisation energy [eV], share of states still localised [1]).",
    )
    def dopant_level(self, N, dopant="phosphorus"):
        """``(ionisation energy [eV], share of states still localised [1])`` of a dopant
        at total density ``N`` (cm^-3); the rest of its states has merged into the band."""
        species = dopant_species(dopant, "dopant")
        model, _ = species_model(self.model("ionisation"), species, self.catalogue)
        array, low, high = coerce(N, "N")
        self._check(model, "dopant_density", low, high)
        energy, share = model(dopant_density=array)
        return quantity(np.asarray(energy, float), "eV"), quantity(
            np.asarray(share, float), "dimensionless"
        )

    @method_of("ionisation")
    def ionisation_energy(self, N, dopant="phosphorus"):
        """Ionisation energy of a dopant at total density ``N`` (cm^-3), eV."""
        return self.dopant_level(N, dopant)[0]

    # ------------------------------------------------------------------ equilibrium
    @declare(
        units=("eV", "eV", "cm^-3", "cm^-3", "cm^-3", "cm^-3"),
        parts=(
            Part(
                "fermi_level",
                "Fermi level from the intrinsic level of undoped silicon",
                "fermi_level",
            ),
            Part(
                "fermi_level_from_conduction_edge",
                "Fermi level from the conduction-band edge after narrowing",
                "fermi_level_from_conduction_edge",
            ),
            Part(
                "equilibrium_electron_density",
                "electron density in equilibrium",
                "electron_density",
            ),
            Part("equilibrium_hole_density", "hole density in equilibrium", "hole_density"),
            Part("ionised_donor_density", "ionised donor density", "ionised_donors"),
            Part("ionised_acceptor_density", "ionised acceptor density", "ionised_acceptors"),
        ),
        models=_EQUILIBRIUM_MODELS,
        formula=(
            "charge neutrality p + Nd+ = n + Na- solved for the Fermi level with "
            "n = Nc F(eta), p = Nv F(-eta - Eg'/kT), Eg' = kT ln(Nc Nv / ni^2) - dEg"
        ),
        wants=_DOPING[:2],
        cases=[
            case(temperature=[77.0, 200.0, 300.0, 400.0, 500.0], **DOPANTS_GRID),
            case(
                "equilibrium_boltzmann",
                fixed={"statistics": "boltzmann"},
                temperature=[300.0],
                **DOPANTS_GRID,
            ),
        ],
        kernel=lambda si, name, fixed: _equilibrium_kernel(si, fixed),
    )
    def equilibrium(
        self, temperature, Na=0, Nd=0, *, donor="phosphorus", acceptor="boron", statistics=None
    ) -> Equilibrium:
        """Thermal-equilibrium carriers of doped silicon, with incomplete ionisation.

        Parameters
        ----------
        temperature : K (or a pint quantity);  Na, Nd : total acceptor and donor
            densities, cm^-3; arrays broadcast
        donor, acceptor : dopant species (``"phosphorus"``, ``"arsenic"``, ...;
            ``"boron"``, ...) whose ionisation model applies
        statistics : ``"fermi-dirac"``, ``"boltzmann"`` or None (the statistics the
            narrowing model goes with: Fermi-Dirac for a physical narrowing,
            Boltzmann for an apparent one)

        Returns
        -------
        :class:`Equilibrium` (Fermi level with its references, n0, p0, ionised dopant
        densities, the narrowing and effective intrinsic density used, provenance).
        Every point meets charge neutrality to 1e-12 relative, or
        :class:`matprops.SolverError` names the points that did not converge.
        """
        result, donor, acceptor, fermi_dirac = self._solve(
            temperature, Na, Nd, donor, acceptor, statistics
        )
        bound = self._carriers()
        t = result["temperature"]
        kt = BOLTZMANN_EV * t
        dec, dev = result["conduction_edge_shift"], result["valence_edge_shift"]
        ni_eff = (
            bound.ni(temperature=t) * bound.reference_ratio() * np.exp((dec + dev) / (2.0 * kt))
        )
        statistics = "fermi-dirac" if fermi_dirac else "boltzmann"
        provenance = self.provenance("equilibrium")
        provenance["statistics"] = statistics
        provenance["species"] = {"donor": donor, "acceptor": acceptor}
        return Equilibrium(
            temperature=quantity(t, "K"),
            fermi_level=quantity(result["fermi_from_intrinsic"], "eV"),
            fermi_level_from_conduction_edge=quantity(result["fermi_from_conduction_edge"], "eV"),
            fermi_level_from_valence_edge=quantity(result["fermi_from_valence_edge"], "eV"),
            electron_density=quantity(result["electron_density"], "cm^-3"),
            hole_density=quantity(result["hole_density"], "cm^-3"),
            ionised_donors=quantity(result["ionised_donors"], "cm^-3"),
            ionised_acceptors=quantity(result["ionised_acceptors"], "cm^-3"),
            gap_narrowing=quantity(dec + dev, "eV"),
            conduction_edge_shift=quantity(dec, "eV"),
            valence_edge_shift=quantity(dev, "eV"),
            effective_intrinsic_density=quantity(ni_eff, "cm^-3"),
            statistics=statistics,
            donor=donor,
            acceptor=acceptor,
            provenance=provenance,
        )

    def _composition_note(self, name: str) -> str | None:
        """How the narrowing was composed with the intrinsic density (for provenance)."""
        if name not in ("effective_intrinsic_density", "equilibrium"):
            return None
        bound = self._carriers()
        if bound.apparent:
            fitted = bound.fitted_density
            return (
                f"apparent narrowing {bound.narrowing.id} composed with the intrinsic "
                f"density it was fitted with: ni(T) x [{fitted.value:g} cm^-3 / "
                f"ni({fitted.temperature:g} K) = "
                f"{bound.reference_ratio():.6g}] x exp(dEg/2kT), ni from "
                f"{bound.ni.id}; default statistics {bound.statistics}"
            )
        return (
            f"physical narrowing {bound.narrowing.id} composed with the release's "
            f"intrinsic density {bound.ni.id} as it is; default statistics "
            f"{bound.statistics}"
        )


# --------------------------------------------------------------------------- kernels


def _effective_intrinsic_density_kernel(si, fixed) -> BoundKernel:
    """The bound kernel of the effective intrinsic density (see ``Silicon.kernel``)."""
    if fixed:
        key = min(fixed)
        raise InputError(key, "not an option of the effective_intrinsic_density kernel", fixed[key])
    bound = si._carriers()
    inputs = {
        "temperature": "K",
        "donor_density": "cm^-3",
        "acceptor_density": "cm^-3",
        "electron_density": "cm^-3",
        "hole_density": "cm^-3",
    }
    optional = () if bound.uses_carriers else ("electron_density", "hole_density")
    models = [bound.ni, bound.narrowing]
    citation = "; ".join(dict.fromkeys(m.source.citation() for m in models))
    carriers = (
        "the free-carrier densities n and p are required (the narrowing "
        f"{bound.narrowing.id} depends on them)"
        if bound.uses_carriers
        else f"electron_density and hole_density are ignored (the narrowing "
        f"{bound.narrowing.id} does not depend on them)"
    )
    return BoundKernel(
        si,
        "effective_intrinsic_density",
        bound.effective_intrinsic_density,
        inputs,
        "cm^-3",
        model=None,
        model_id=f"derived ({bound.ni.id} x {bound.narrowing.id})",
        citation=citation,
        validity=validity_of(models),
        checker=model_checker(models),
        derivative=(
            bound.effective_intrinsic_density_derivatives
            if bound.ni.derivative is not None and bound.narrowing.derivative is not None
            else None
        ),
        array_api=bound.ni.array_api and bound.narrowing.array_api,
        numpy_only_reason="one of its models takes numpy arrays only",
        optional=optional,
        description=(
            "ni_eff = ni(T) x ratio x exp((dEc + dEv) / 2kT), composed as "
            "si.effective_intrinsic_density() does (see its provenance); " + carriers + ". "
            "In equilibrium n0 p0 = gamma_n gamma_p ni_eff^2 (Fermi-Dirac degeneracy "
            "factors, 1 with Boltzmann statistics)."
        ),
        kinds=input_kinds("effective_intrinsic_density"),
    )


def _equilibrium_kernel(si, fixed) -> BoundKernel:
    unknown = set(fixed) - {"donor", "acceptor", "statistics", "complete_ionisation"}
    if unknown:
        raise InputError(
            min(unknown),
            "one of donor, acceptor, statistics, complete_ionisation",
            fixed[min(unknown)],
        )
    bound = si._carriers()
    statistics = fixed.get("statistics") or bound.statistics
    donor = dopant_species(fixed.get("donor", "phosphorus"), "donor", "donor")
    acceptor = dopant_species(fixed.get("acceptor", "boron"), "acceptor", "acceptor")
    fermi_dirac = si._check_statistics(statistics, bound)
    complete = fixed.get("complete_ionisation", False)
    if not isinstance(complete, (bool, np.bool_)):
        raise InputError("complete_ionisation", "True or False", repr(complete))
    function = functools.partial(
        bound.equilibrium,
        donor=donor,
        acceptor=acceptor,
        fermi_dirac=fermi_dirac,
        complete=bool(complete),
    )
    models = [bound.dos, bound.ni, bound.narrowing]
    donor_model = bound.species_level(donor)[0]
    acceptor_model = bound.species_level(acceptor)[0]
    base = model_checker(models)

    def check(arrays, ranges, strict, report=None) -> list[str]:
        messages = base(arrays, ranges, strict, report)
        for model, key in ((donor_model, "donor_density"), (acceptor_model, "acceptor_density")):
            low, high = ranges[key]
            if low <= high:
                messages += model.check("dopant_density", low, high, strict, report)
        return messages

    validity = validity_of(models)
    validity.pop("electron_density", None)
    validity.pop("hole_density", None)
    ids = ", ".join(f"{m.quantity} {m.id}" for m in (*models, bound.ionisation))
    return BoundKernel(
        si,
        "equilibrium",
        function,
        {"temperature": "K", "donor_density": "cm^-3", "acceptor_density": "cm^-3"},
        "dict",
        model=None,
        model_id=f"derived ({ids})",
        citation="; ".join(dict.fromkeys(m.source.citation() for m in (*models, bound.ionisation))),
        validity=validity,
        checker=check,
        array_api=False,
        blocked=False,  # the solver blocks its own work (and takes workers=)
        numpy_only_reason=SOLVER_REASON,
        fixed={
            "donor": donor,
            "acceptor": acceptor,
            "statistics": "fermi-dirac" if fermi_dirac else "boltzmann",
            **({"complete_ionisation": True} if complete else {}),
        },
        kinds=input_kinds("equilibrium"),
        returns=(
            "dict of arrays: electron_density, hole_density, ionised_donors, "
            "ionised_acceptors [cm^-3]; conduction_edge_shift, valence_edge_shift, "
            "fermi_from_conduction_edge, fermi_from_valence_edge, "
            "fermi_from_intrinsic [eV]; reduced_fermi_level, residual [1]; "
            "temperature [K]"
        ),
        description=(
            f"Charge neutrality with {'Fermi-Dirac' if fermi_dirac else 'Boltzmann'}"
            f" statistics, donor {donor}, acceptor {acceptor}: the solver of "
            "si.equilibrium() on plain arrays; every point converges to 1e-12 "
            "relative neutrality or SolverError names those that did not."
        ),
    )
