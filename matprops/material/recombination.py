"""Recombination: radiative coefficient, intrinsic and SRH lifetimes, effective lifetime,
implied voltage.

Composition rules (each shown in the provenance of what it returns):

- Equilibrium densities n0, p0 come from the release's equilibrium solver (its
  ionisation, narrowing and statistics, hence its effective intrinsic density:
  ``n0 p0 = n_i,eff^2``), solved once per (T, Na, Nd) point and shared by every
  excess density; or they are given (``n0=``, ``p0=``). The excess density is uniform
  and the same for electrons and holes (no trapping).
- An intrinsic-lifetime model keeps the radiative term it was fitted with:
  ``richter-2012`` its B_low (4.73e-15 cm^3/s), ``kerr-2002`` its 9.5e-15 cm^3/s. Only
  a model without one (``dziewior-1977``) takes the release's radiative coefficient.
  The model file's ``[fit]`` section records the intrinsic density and narrowing the
  model was fitted with; where the release's narrowing is another, a ValidityWarning
  says so (the minority densities, and with them the lowest-injection lifetimes,
  differ).
- SRH: a defect level stays at its distance from the band edge it is quoted against
  (Nc, Nv of the release), ``n1 p1 = n0 p0``; capture times ``1/(sigma v_th N_t)``
  with the thermal velocity the cross-sections were extracted with when the defect
  names it, the release's otherwise. Several defects add their rates.
- Effective lifetime: ``1/tau_eff = 1/tau_intrinsic + sum 1/tau_SRH`` at the same
  excess density (no surface recombination).
- Implied voltage: steady state, uniform generation through the thickness, flat
  carrier profile (diffusion length well above the thickness, no surface
  recombination): ``G = J/(q W)`` or ``Phi/W`` equals ``dn / tau_eff(dn)``; then
  ``V = (kT/q) ln[(n0 + dn)(p0 + dn)/(n0 p0)]`` (Boltzmann statistics, the narrowing
  of equilibrium).

The numbers are model estimates: for decisions with consequences defer to measured
lifetimes and voltages.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping
from typing import TYPE_CHECKING, Any

import numpy as np

from ..catalogue import defects as defect_catalogue
from ..errors import (
    InputError,
    SolverError,
    UnitError,
)
from ..kernels import implied_voltage as voltage_kernel
from ..kernels import srh_lifetime as srh
from ..kernels._blocks import evaluate
from ..kernels.constants import BOLTZMANN_EV, ELEMENTARY_CHARGE
from ..units import coerce, quantity, unit
from .carriers import CARRIER_FIELDS
from .composition import complete_ionisation
from .registry import (
    EXCESS,
    LIFETIME_DOPING,
    LIFETIME_TEMPERATURES,
    TEMPERATURES,
    Part,
    case,
)
from .registry import quantity as declare
from .results import Result

__all__ = ["ImpliedVoltage", "Lifetimes", "RecombinationMethods"]

_EQUILIBRIUM = ("densities_of_states", "intrinsic_density", "gap_narrowing", "ionisation")
_SRH = ("srh_lifetime", "thermal_velocity", "band_gap")
_INJECTED = ("acceptor_density", "donor_density", "excess_density")


def _defect_cases(si):
    """Shockley-Read-Hall lifetime of every defect of the catalogue, p- and n-type."""
    if "srh_lifetime" not in si.models:
        return []
    cases = []
    for name in defect_catalogue.names(si.catalogue):
        entry = defect_catalogue.defect(name, si.catalogue)
        fixed = (
            {"defect": name, "density": 1e11}
            if entry.absolute
            else {"defect": name, "electron_capture_time": 1e-5}
        )
        for doping in ("Na", "Nd"):
            cases.append(
                case(
                    f"srh_lifetime_{name}_{doping}",
                    fixed=fixed,
                    temperature=[250.0, 300.0, 350.0],
                    **{doping: [1e14, 1e15, 1e16, 1e17]},
                    excess=[1e12, 1e14, 1e16],
                )
            )
    return cases


ASSUMPTIONS = (
    "steady state; generation uniform through the thickness; flat carrier "
    "profile (diffusion length well above the thickness) and no surface "
    "recombination; dn = dp (no trapping); Boltzmann statistics for the "
    "quasi-Fermi-level splitting, with the narrowing of equilibrium"
)
# with a narrowing that depends on the free carriers (Schenk's, its fit conventions say so)
ASSUMPTIONS_INJECTED = (
    "steady state; generation uniform through the thickness; flat carrier "
    "profile (diffusion length well above the thickness) and no surface "
    "recombination; dn = dp (no trapping); the quasi-Fermi-level splitting "
    "qV = kT ln[n p / (gamma_n gamma_p ni_eff(n, p)^2)] with the narrowing at the "
    "injected densities n = n0 + dn, p = p0 + dn and the Fermi-Dirac degeneracy "
    "factors gamma there; every recombination rate takes n p - ni_eff(n, p)^2"
)
LIFETIME_ASSUMPTIONS = (
    "dn = dp (no trapping); uniform excess density; the rates vanish in equilibrium (n p - n0 p0)"
)
LIFETIME_ASSUMPTIONS_INJECTED = (
    "dn = dp (no trapping); uniform excess density; every rate takes "
    "n p - ni_eff(n, p)^2 with the narrowing at the injected densities (the "
    "material's narrowing depends on the free carriers)"
)


@dataclasses.dataclass(frozen=True, repr=False)
class Lifetimes(Result):
    """Lifetimes at one excess density (arrays broadcast to one shape), s.

    ``effective_lifetime`` combines ``intrinsic_lifetime`` (whose parts are
    ``auger_lifetime`` and ``radiative_lifetime``) and ``srh_lifetime`` (all defects
    together; None without defects).
    """

    effective_lifetime: object
    intrinsic_lifetime: object
    auger_lifetime: object
    radiative_lifetime: object
    srh_lifetime: object
    excess_density: object
    equilibrium_electron_density: object
    equilibrium_hole_density: object
    assumptions: str
    provenance: dict = dataclasses.field(compare=False)


@dataclasses.dataclass(frozen=True, repr=False)
class ImpliedVoltage(Result):
    """Steady-state implied open-circuit voltage of a uniformly illuminated sample."""

    implied_voltage: object
    excess_density: object
    generation_rate: object
    effective_lifetime: object
    intrinsic_lifetime: object
    srh_lifetime: object
    equilibrium_electron_density: object
    equilibrium_hole_density: object
    assumptions: str
    provenance: dict = dataclasses.field(compare=False)


# the shortest step (relative to n0 + p0) over which the rise of ni_eff with injection is
# taken (see RecombinationMethods._injection_factor)
_SECANT = 1e-4


def _range(values):
    """(min, max) of an array; (inf, -inf) for an empty one (no check applies)."""
    array = np.asarray(values)
    return (float(array.min()), float(array.max())) if array.size else (np.inf, -np.inf)


def _optional(values):
    """The SRH lifetime as a quantity, or None when there is no defect."""
    return None if values is None else quantity(values, "s")


def _widen(state, items) -> None:
    """Make the state's shape span the defect densities and capture times too (arrays
    broadcast with the other inputs); an InputError names one that does not."""
    for defect, density, capture in items:
        for name, value in (("density", density), ("electron_capture_time", capture)):
            if value is None:
                continue
            shape = np.shape(getattr(value, "magnitude", value))
            try:
                state.shape = np.broadcast_shapes(state.shape, shape)
            except ValueError:
                raise InputError(
                    name,
                    f"a number or an array whose shape broadcasts with the other inputs' "
                    f"{state.shape} (for defect {defect.name!r})",
                    f"shape {shape}",
                ) from None


def _steady_state_failure(error, state, generation, thickness, shape) -> SolverError:
    """The steady-state solver's error, its first failing points named by their inputs."""
    points = getattr(error, "points", None)
    if not points:
        return error
    inputs = {
        "T": (state.temperature, "K"),
        "G": (generation, "cm^-2 s^-1"),
        "thickness": (thickness, "cm"),
        "n0": (state.n0, "cm^-3"),
        "p0": (state.p0, "cm^-3"),
    }
    shown = []
    for flat in points:
        where = np.unravel_index(flat, shape) if shape else ()
        values = ", ".join(
            f"{name}={float(np.broadcast_to(array, shape)[where]):.4g} {units}"
            for name, (array, units) in inputs.items()
        )
        shown.append(f"#{where if len(shape) > 1 else flat} ({values})")
    more = f"; and {error.count - len(points)} more" if error.count > len(points) else ""
    failure = SolverError(
        f"implied_voltage: the steady state was not found at {error.count} point(s) "
        f"({error.reason}): {'; '.join(shown)}{more}"
    )
    failure.points, failure.count = points, error.count
    return failure


def _full(values, shape):
    """A float array of ``shape`` (no copy when the values already have it)."""
    array = np.asarray(values, dtype=float)
    return array if array.shape == shape else np.broadcast_to(array, shape).copy()


@dataclasses.dataclass
class _State:
    """Inputs of the recombination kernels, in internal units (arrays broadcast)."""

    temperature: np.ndarray
    n0: Any  # an array; None while a lazy state leaves it to the blocks
    p0: Any
    excess: np.ndarray
    shape: tuple
    given: bool  # n0, p0 given by the caller instead of solved
    ranges: dict  # kernel input -> (min, max), for the validity checks
    # the equilibrium densities as the intrinsic-lifetime model was fitted with them
    # (its carrier convention and intrinsic density); n0, p0 where they are the same
    fit_n0: np.ndarray | None = None
    fit_p0: np.ndarray | None = None
    # (T, Nd, Na) of a solved state, for the narrowing at the injected densities
    dopants: tuple | None = None
    # n0, p0 to be solved block by block with the lifetime (the dopant densities and the
    # solve's options), instead of held whole: see RecombinationMethods._intrinsic
    lazy: tuple | None = None

    def kernel_inputs(self, excess=None):
        return {
            "temperature": self.temperature,
            "equilibrium_electron_density": self.n0 if self.fit_n0 is None else self.fit_n0,
            "equilibrium_hole_density": self.p0 if self.fit_p0 is None else self.fit_p0,
            "excess_density": self.excess if excess is None else excess,
        }


class RecombinationMethods:
    """Radiative coefficient, intrinsic (Auger + radiative) and SRH lifetimes, the
    defect catalogue, effective lifetime and implied open-circuit voltage."""

    if TYPE_CHECKING:  # provided by the facade (silicon.Silicon) these methods serve
        _inputs: Any
        _solve_options: Any
        workers: Any
        _solve: Any
        model: Any
        _check: Any
        _check_regions: Any
        _warn_mismatches: Any
        catalogue: Any
        _carriers: Any

    # ------------------------------------------------------------------ radiative
    @declare(
        units="cm^3/s",
        long_name="radiative recombination coefficient",
        log=True,
        cases=[case(temperature=TEMPERATURES)],
    )
    def radiative_coefficient(self, temperature):
        """Radiative recombination coefficient B, cm^3/s (``U = B (n p - n0 p0)``).

        The release's model says which quantity it is: ``trupke-2003`` is the
        coefficient of intrinsic silicon at low injection (see its provenance). A
        model fitted with another intrinsic density than the release's warns (see
        :meth:`consistency`).
        """
        self._warn_mismatches("radiative_coefficient")
        return self._quantity("radiative_coefficient", temperature=temperature)

    # ------------------------------------------------------------------ state
    def _recombination_state(
        self, temperature, Na, Nd, excess, n0, p0, donor, acceptor, statistics, lazy=False
    ) -> _State:
        """Coerce the inputs and get n0, p0 (solved once per (T, Na, Nd) point).

        ``lazy``: where n0, p0 are to be solved for a large input and the lifetime model
        has no validity regions, they are left to :meth:`_intrinsic`, which solves them
        block by block with the lifetime (memory: the output and a few blocks); the state
        then holds the checked dopant densities and the solve's options instead."""
        prepared = self._inputs(temperature=temperature, Na=Na, Nd=Nd, excess=excess)
        t = prepared["temperature"][0]
        dn = prepared["excess_density"][0]
        if n0 is not None or p0 is not None:
            if n0 is None or p0 is None:
                missing = "n0" if n0 is None else "p0"
                raise InputError(
                    missing,
                    f"given together with {'p0' if n0 is None else 'n0'}"
                    " (equilibrium densities in cm^-3), or both omitted",
                    None,
                )
            if prepared["acceptor_density"][2] > 0 or prepared["donor_density"][2] > 0:
                raise InputError(
                    "Na, Nd",
                    "omitted (zero) when the equilibrium densities n0 and p0 are given",
                    "dopant densities as well",
                )
            n0_array, *n0_range = coerce(n0, "n0")
            p0_array, *p0_range = coerce(p0, "p0")
            given = True
        elif lazy and self._lazy_solve_pays(prepared):
            options = self._solve_options(temperature, Na, Nd, donor, acceptor, statistics)
            nd, na = prepared["donor_density"][0], prepared["acceptor_density"][0]
            shape = np.broadcast_shapes(t.shape, nd.shape, na.shape, dn.shape)
            ranges = {
                "temperature": prepared["temperature"][1:],
                "excess_density": prepared["excess_density"][1:],
            }
            return _State(t, None, None, dn, shape, False, ranges, lazy=(nd, na, options))
        else:
            result, _, _, fermi_dirac = self._solve(
                temperature,
                Na,
                Nd,
                donor,
                acceptor,
                statistics,
                fields=(*CARRIER_FIELDS, "temperature"),
            )
            n0_array, p0_array = result["electron_density"], result["hole_density"]
            given = False
            fit_n0, fit_p0 = self._fitted_equilibrium(
                n0_array,
                p0_array,
                result["temperature"],
                lambda: self._solve(
                    temperature, Na, Nd, donor, acceptor, statistics, True, CARRIER_FIELDS
                )[0],
            )
            n0_range, p0_range = _range(fit_n0), _range(fit_p0)
        try:
            shape = np.broadcast_shapes(t.shape, n0_array.shape, p0_array.shape, dn.shape)
        except ValueError:
            raise InputError(
                "n0, p0",
                "arrays whose shapes broadcast with T and excess",
                f"shapes {n0_array.shape}, {p0_array.shape}",
            ) from None
        ranges = {
            "temperature": prepared["temperature"][1:],
            "equilibrium_electron_density": tuple(n0_range),
            "equilibrium_hole_density": tuple(p0_range),
            "excess_density": prepared["excess_density"][1:],
        }
        state = _State(t, n0_array, p0_array, dn, shape, given, ranges)
        if not given:
            state.fit_n0 = None if fit_n0 is n0_array else fit_n0
            state.fit_p0 = None if fit_p0 is p0_array else fit_p0
            state.dopants = (
                result["temperature"],
                np.broadcast_to(prepared["donor_density"][0], result["temperature"].shape),
                np.broadcast_to(prepared["acceptor_density"][0], result["temperature"].shape),
                fermi_dirac,
            )
        return state

    def _fitted_equilibrium(self, n0, p0, temperature, solve_complete):
        """n0, p0 as the intrinsic-lifetime model was fitted with them: the equilibrium of
        its carrier convention (complete ionisation, or the free carriers), with the
        product n0 p0 scaled to its own intrinsic density (``(ni_fit/ni(T_fit))^2``,
        the net doping n0 - p0 kept). Unknown conventions: the equilibrium as solved.
        ``n0, p0``: the equilibrium solved at ``temperature``; ``solve_complete()``: the
        same points solved with every dopant ionised (called only where needed)."""
        model = self.model("intrinsic_lifetime")
        if complete_ionisation(model):
            complete = solve_complete()
            n0, p0 = complete["electron_density"], complete["hole_density"]
        ratio = self._fitted_ni_ratio(model, temperature)
        if ratio is None:
            return n0, p0
        net = n0 - p0
        product = n0 * p0 * ratio * ratio
        majority = 0.5 * np.abs(net) + np.sqrt(0.25 * net * net + product)
        minority = product / majority
        return np.where(net >= 0, majority, minority), np.where(net >= 0, minority, majority)

    def _fitted_ni_ratio(self, model, temperature):
        """ni_fit / ni of a model's intrinsic-density convention (None: not carried)."""
        entry = model.conventions.get("intrinsic_density") if model.conventions else None
        if entry is None or not entry.known or entry.value in ("none", "own", "composed"):
            return None
        ni = self.model("intrinsic_density")
        if entry.number:
            return entry.kernel_value / float(ni(temperature=entry.temperature))
        other = self.catalogue.model("intrinsic_density", entry.value)
        return other(temperature=temperature) / ni(temperature=temperature)

    def _lazy_solve_pays(self, prepared) -> bool:
        """Whether n0, p0 are better solved block by block with the lifetime: an input
        larger than one block of the solver, and a lifetime model without validity
        regions (those are checked on the whole arrays)."""
        from ..kernels.equilibrium import BLOCK

        size = int(np.prod(np.broadcast_shapes(*(a.shape for a, _, _ in prepared.values()))))
        return size > BLOCK and not self.model("intrinsic_lifetime").regions

    def _check_intrinsic(self, state: _State):
        """Validity of the intrinsic-lifetime model at these inputs; fit conventions."""
        model = self.model("intrinsic_lifetime")
        for argument, (low, high) in state.ranges.items():
            if low <= high:  # (an empty array has no range)
                self._check(model, argument, low, high)
        if model.regions:
            self._check_regions(model, state.kernel_inputs())
        if not state.given:
            self._warn_mismatches("intrinsic_lifetime")
        return model

    def _intrinsic(self, state: _State, part="total", excess=None):
        if state.lazy is None:
            return self._intrinsic_solved(state, part, excess, self.workers)
        nd, na, options = state.lazy
        bound, seen = self._carriers(), []
        complete = {**options, "complete": True}

        def block(temperature, donor_density, acceptor_density, excess_density):
            # one block's n0, p0 (and the lifetime's fitted ones), then its lifetime
            t, nd, na = np.broadcast_arrays(temperature, donor_density, acceptor_density)
            solved = bound._equilibrium_block(t, nd, na, **options, fields=CARRIER_FIELDS)
            n0, p0 = solved["electron_density"], solved["hole_density"]
            fit_n0, fit_p0 = self._fitted_equilibrium(
                n0,
                p0,
                t,
                lambda: bound._equilibrium_block(t, nd, na, **complete, fields=CARRIER_FIELDS),
            )
            seen.append((*_range(fit_n0), *_range(fit_p0)))
            shape = np.broadcast_shapes(t.shape, np.shape(excess_density))
            solved_state = _State(t, n0, p0, excess_density, shape, False, {})
            solved_state.fit_n0 = None if fit_n0 is n0 else fit_n0
            solved_state.fit_p0 = None if fit_p0 is p0 else fit_p0
            solved_state.dopants = (t, nd, na, options["fermi_dirac"])
            return self._intrinsic_solved(solved_state, part, None, None)

        block.block = getattr(bound._equilibrium_block, "block", None)  # type: ignore[attr-defined]
        value = evaluate(
            block,
            {
                "temperature": state.temperature,
                "donor_density": nd,
                "acceptor_density": na,
                "excess_density": state.excess if excess is None else excess,
            },
            workers=self.workers,
        )
        lows_n, highs_n, lows_p, highs_p = zip(*seen, strict=True) if seen else ((),) * 4
        state.ranges["equilibrium_electron_density"] = (
            min(lows_n, default=np.inf),
            max(highs_n, default=-np.inf),
        )
        state.ranges["equilibrium_hole_density"] = (
            min(lows_p, default=np.inf),
            max(highs_p, default=-np.inf),
        )
        return value

    def _intrinsic_solved(self, state: _State, part, excess, workers):
        """The intrinsic lifetime of a state holding its n0, p0: the model at the
        densities it was fitted with, over the share of the rate the narrowing at the
        injected densities leaves."""
        model = self.model("intrinsic_lifetime")
        tau = evaluate(
            model.function or model, state.kernel_inputs(excess), workers=workers, part=part
        )
        factor = self._injection_factor(state, excess)
        return tau if factor is None else tau / factor

    # ------------------------------------------------------------------ intrinsic
    @declare(
        units="s",
        long_name="intrinsic (Auger and radiative) lifetime",
        uses=_EQUILIBRIUM,
        wants=_INJECTED,
        log=True,
        cases=[
            case(
                "intrinsic_lifetime_n_type",
                temperature=LIFETIME_TEMPERATURES,
                Nd=LIFETIME_DOPING,
                excess=EXCESS,
            ),
            case(
                "intrinsic_lifetime_p_type",
                temperature=LIFETIME_TEMPERATURES,
                Na=LIFETIME_DOPING,
                excess=EXCESS,
            ),
        ],
        kernel_note=(
            "Option part='total' (Auger + radiative), 'auger' or "
            "'radiative': the lifetime of that part alone."
        ),
    )
    def intrinsic_lifetime(
        self,
        temperature,
        Na=0,
        Nd=0,
        excess=0,
        *,
        n0=None,
        p0=None,
        donor="phosphorus",
        acceptor="boron",
        statistics=None,
    ):
        """Intrinsic (band-to-band: Auger + radiative) lifetime, s.

        Parameters
        ----------
        temperature : K (or a pint quantity)
        Na, Nd : total acceptor and donor densities, cm^-3
        excess : excess carrier density dn = dp, cm^-3 (>= 0; 0 is the low-injection
            limit)
        n0, p0 : equilibrium electron and hole densities, cm^-3, instead of Na and Nd
            (e.g. from your own solver); by default solved by :meth:`equilibrium`
        donor, acceptor, statistics : as for :meth:`equilibrium`

        Returns
        -------
        pint quantity in s, arrays broadcast. The release's model and its temperature
        range: ``richter-2012`` (default) and ``kerr-2002`` are 300 K models (a
        ValidityWarning outside 295-305 K), ``dziewior-1977`` holds only where n0 or
        p0 reaches 5e18 cm^-3. ``si.provenance("intrinsic_lifetime")`` says what each
        was fitted with.

        Examples
        --------
        >>> si.intrinsic_lifetime(300, Nd=1e16, excess=1e15)        # doctest: +SKIP
        """
        state = self._recombination_state(
            temperature, Na, Nd, excess, n0, p0, donor, acceptor, statistics, lazy=True
        )
        if state.lazy is not None:  # n0, p0 solved with the lifetime: checked after
            value = self._intrinsic(state)
            self._check_intrinsic(state)
            return quantity(_full(value, state.shape), "s")
        self._check_intrinsic(state)
        return quantity(_full(self._intrinsic(state), state.shape), "s")

    @declare(
        units="s",
        long_name="Auger lifetime (the Auger part of the intrinsic lifetime)",
        models=("intrinsic_lifetime", *_EQUILIBRIUM),
        formula="the Auger part of the intrinsic-lifetime model alone: 1/[(n0 + p0 + dn) A]",
        wants=_INJECTED,
        log=True,
        cases=[
            case(
                "auger_lifetime_n_type",
                temperature=[300.0],
                Nd=LIFETIME_DOPING,
                excess=EXCESS,
            )
        ],
    )
    def auger_lifetime(
        self,
        temperature,
        Na=0,
        Nd=0,
        excess=0,
        *,
        n0=None,
        p0=None,
        donor="phosphorus",
        acceptor="boron",
        statistics=None,
    ):
        """The Auger part of the intrinsic lifetime alone (the model's own split), s.

        Arguments as for :meth:`intrinsic_lifetime`.
        """
        state = self._recombination_state(
            temperature, Na, Nd, excess, n0, p0, donor, acceptor, statistics, lazy=True
        )
        if state.lazy is not None:  # n0, p0 solved with the lifetime: checked after
            value = self._intrinsic(state, "auger")
            self._check_intrinsic(state)
            return quantity(_full(value, state.shape), "s")
        self._check_intrinsic(state)
        return quantity(_full(self._intrinsic(state, "auger"), state.shape), "s")

    # ------------------------------------------------------------------ SRH
    def defect(self, name):
        """A defect of the catalogue by name or alias (see :mod:`matprops.catalogue.defects`)."""
        return defect_catalogue.defect(name, self.catalogue)

    def defects(self) -> list[str]:
        """Names of the defects in the catalogue."""
        return defect_catalogue.names(self.catalogue)

    def _velocities(self, defect, t):
        """Thermal velocities (v_n, v_p) in cm/s for a defect's cross-sections, and the
        id of the model that gave them."""
        if defect.thermal_velocity:
            model = self.catalogue.model("thermal_velocity", defect.thermal_velocity)
        else:
            model = self.model("thermal_velocity")
        velocities = []
        low, high = _range(t)
        for carrier in ("electron", "hole"):
            bound = model.select(carrier) if model.variant_axis == "carrier" else model
            if low <= high:
                self._check(bound, "temperature", low, high)
            arguments = {"temperature": t}
            if "carrier" in bound.inputs:
                arguments["carrier"] = carrier
            velocities.append(np.asarray(bound(**arguments), dtype=float))
        return velocities[0], velocities[1], model.id

    def _check_level(self, defect, t):
        """The level must lie inside the (unnarrowed) gap at every temperature."""
        if np.size(t) == 0:
            return
        gap = np.asarray(self.model("band_gap")(temperature=t), dtype=float)
        energy = defect.energy
        if defect.reference == "intrinsic":
            outside = np.abs(energy) >= 0.5 * gap
            limit = "half the gap"
        else:
            outside = (energy <= 0) | (energy >= gap)
            limit = "the gap"
        if np.any(outside):
            bound = float(np.min(gap)) * (0.5 if defect.reference == "intrinsic" else 1.0)
            edge = {
                "conduction": "the conduction-band edge",
                "valence": "the valence-band edge",
                "intrinsic": "the intrinsic level (either way)",
            }[defect.reference]
            raise InputError(
                "defect",
                f"a level inside the band gap, between 0 and {limit} "
                f"({bound:.4g} eV at {float(np.max(t)):g} K) from {edge}, for "
                f"{defect.name!r}",
                defect.level_text(),
            )
        if defect.temperature_range is not None:
            low, high = defect.temperature_range
            t_low, t_high = float(np.min(t)), float(np.max(t))
            if t_low < low or t_high > high:
                message = (
                    f"defect {defect.name}: temperature {t_low:g}-{t_high:g} K is "
                    f"outside the range of its data, {low:g}-{high:g} K; the capture "
                    "parameters are extrapolated"
                )
                self._violation(message)

    def _capture_times(self, defect, t, density, electron_capture_time):
        """(tau_n0, tau_p0) in s for one defect, and a provenance record."""
        v_n, v_p, velocity_model = self._velocities(defect, t)
        record = {**defect.provenance(), "thermal_velocity_model": velocity_model}
        if electron_capture_time is not None:
            if density is not None:
                raise InputError(
                    "density",
                    "omitted when electron_capture_time is given (it already contains the density)",
                    "both",
                )
            tau_n0, _, _ = coerce(electron_capture_time, "electron_capture_time", "s", "positive")
            tau_p0 = tau_n0 * defect.ratio(t) * v_n / v_p
            record["electron_capture_time"] = "given"
            return tau_n0, tau_p0, record
        if density is None:
            raise InputError(
                "density",
                "given: the defect density in cm^-3 (or electron_capture_time in s)",
                "nothing",
            )
        if not defect.absolute:
            raise InputError(
                "electron_capture_time",
                f"given for {defect.name!r}, whose "
                f"entry has only the ratio sigma_n/sigma_p = "
                f"{defect.cross_section_ratio:g} (no absolute cross-section):"
                " tau_n0 = 1/(sigma_n v_n N_t) in s",
                "nothing (a density)",
            )
        n_t, _, _ = coerce(density, "density", "cm^-3", "positive")
        tau_n0 = srh.capture_time(defect.electron_cross_section(t), v_n, n_t)
        tau_p0 = srh.capture_time(defect.hole_cross_section(t), v_p, n_t)
        return tau_n0, tau_p0, record

    def _srh(self, state: _State, items, excess=None):
        """SRH lifetime of several (defect, density, electron_capture_time) items."""
        if not items:
            return None, []
        _widen(state, items)
        model = self.model("srh_lifetime")
        nc, nv = self.model("densities_of_states")(temperature=state.temperature)
        product = state.n0 * state.p0
        rate = 0.0
        records = []
        for defect, density, capture in items:
            self._check_level(defect, state.temperature)
            tau_n0, tau_p0, record = self._capture_times(
                defect, state.temperature, density, capture
            )
            n1, p1 = srh.emission_densities(
                state.temperature, defect.energy, defect.reference, nc, nv, product
            )
            tau = model(
                excess_density=state.excess if excess is None else excess,
                equilibrium_electron_density=state.n0,
                equilibrium_hole_density=state.p0,
                electron_emission_density=n1,
                hole_emission_density=p1,
                electron_capture_time=tau_n0,
                hole_capture_time=tau_p0,
            )
            with np.errstate(divide="ignore"):
                rate = rate + 1.0 / tau
            records.append(record)
        factor = self._injection_factor(state, excess)  # every rate: n p - ni_eff(n, p)^2
        with np.errstate(divide="ignore"):
            value = 1.0 / rate if factor is None else 1.0 / (rate * factor)
            return _full(value, state.shape), records

    def _defect_items(self, defect, density, electron_capture_time, defects):
        """Normalise the ways of naming defects into (Defect, density, tau_n0) items."""
        items = []
        if defect is not None:
            items.append(
                (defect_catalogue.parse(defect, self.catalogue), density, electron_capture_time)
            )
        elif density is not None or electron_capture_time is not None:
            raise InputError("defect", "given with density (or electron_capture_time)", "nothing")
        if defects is not None:
            pairs = defects.items() if isinstance(defects, Mapping) else defects
            for number, pair in enumerate(pairs):
                if not (isinstance(pair, (tuple, list)) and len(pair) == 2):
                    raise InputError(f"defects[{number}]", "a (defect, density) pair", repr(pair))
                items.append(
                    (
                        defect_catalogue.parse(pair[0], self.catalogue, f"defects[{number}]"),
                        pair[1],
                        None,
                    )
                )
        return items

    @declare(
        units="s",
        long_name="Shockley-Read-Hall lifetime through the defect",
        uses=(*_SRH[1:], *_EQUILIBRIUM),
        log=True,
        cases=[_defect_cases],
    )
    def srh_lifetime(
        self,
        defect,
        temperature,
        Na=0,
        Nd=0,
        excess=0,
        *,
        density=None,
        electron_capture_time=None,
        n0=None,
        p0=None,
        donor="phosphorus",
        acceptor="boron",
        statistics=None,
    ):
        """Shockley-Read-Hall lifetime through one defect level, s.

        Parameters
        ----------
        defect : a catalogue name or alias (``si.defects()``: ``"iron-interstitial"``,
            ``"Fe_i"``, ...), or an inline mapping (see :mod:`matprops.catalogue.defects`)
        temperature, Na, Nd, excess, n0, p0, donor, acceptor, statistics : as for
            :meth:`intrinsic_lifetime`
        density : defect density N_t, cm^-3 (> 0)
        electron_capture_time : tau_n0 = 1/(sigma_n v_n N_t), s, instead of
            ``density`` (needed for entries that give only sigma_n/sigma_p)

        Returns
        -------
        pint quantity in s. Capture cross-sections are used with the thermal velocity
        their source extracted them with where the entry names it, else the release's
        (``si.provenance("srh_lifetime")``).

        Examples
        --------
        >>> si.srh_lifetime("Fe_i", 300, Na=1e16, excess=1e14, density=1e11)  # doctest: +SKIP
        """
        items = self._defect_items(defect, density, electron_capture_time, None)
        state = self._recombination_state(
            temperature, Na, Nd, excess, n0, p0, donor, acceptor, statistics
        )
        _widen(state, items)  # (array densities broadcast with the other inputs)
        value, _ = self._srh(state, items)
        return quantity(value, "s")

    # ------------------------------------------------------------------ effective
    @declare(
        units="s",
        parts=(
            Part(
                "effective_lifetime",
                "effective bulk lifetime (intrinsic and SRH)",
                "effective_lifetime",
            ),
        ),
        models=("intrinsic_lifetime", *_SRH, *_EQUILIBRIUM),
        formula=(
            "1/tau_eff = 1/tau_intrinsic + sum over defects of 1/tau_SRH, at the same excess "
            "density; no surface recombination"
        ),
        wants=_INJECTED,
        log=True,
        cases=[
            case(
                fixed={"defect": "iron-boron-pair", "density": 1e11},
                temperature=[300.0],
                Na=[1e15, 1e16],
                excess=EXCESS,
            )
        ],
    )
    def effective_lifetime(
        self,
        temperature,
        Na=0,
        Nd=0,
        excess=0,
        *,
        defect=None,
        density=None,
        electron_capture_time=None,
        defects=None,
        n0=None,
        p0=None,
        donor="phosphorus",
        acceptor="boron",
        statistics=None,
    ) -> Lifetimes:
        """Effective bulk lifetime, ``1/tau = 1/tau_intrinsic + sum 1/tau_SRH``.

        Parameters
        ----------
        temperature, Na, Nd, excess, n0, p0, donor, acceptor, statistics : as for
            :meth:`intrinsic_lifetime`
        defect, density, electron_capture_time : one defect, as for :meth:`srh_lifetime`
        defects : further defects, as a mapping name -> density or a sequence of
            (defect, density) pairs

        Returns
        -------
        :class:`Lifetimes` (effective, intrinsic, Auger, radiative and SRH lifetimes,
        the excess density and the equilibrium densities used, provenance). Surface
        recombination is not included.
        """
        items = self._defect_items(defect, density, electron_capture_time, defects)
        state = self._recombination_state(
            temperature, Na, Nd, excess, n0, p0, donor, acceptor, statistics
        )
        _widen(state, items)  # (array densities broadcast with the other inputs)
        self._check_intrinsic(state)
        parts = self._lifetime_parts(state, items)
        provenance = self._recombination_provenance("effective_lifetime", parts["records"], state)
        return Lifetimes(
            effective_lifetime=quantity(parts["effective"], "s"),
            intrinsic_lifetime=quantity(parts["intrinsic"], "s"),
            auger_lifetime=quantity(parts["auger"], "s"),
            radiative_lifetime=quantity(parts["radiative"], "s"),
            srh_lifetime=_optional(parts["srh"]),
            excess_density=quantity(_full(state.excess, state.shape), "cm^-3"),
            equilibrium_electron_density=quantity(_full(state.n0, state.shape), "cm^-3"),
            equilibrium_hole_density=quantity(_full(state.p0, state.shape), "cm^-3"),
            assumptions=(
                LIFETIME_ASSUMPTIONS_INJECTED
                if not state.given and self._injection_narrows()
                else LIFETIME_ASSUMPTIONS
            ),
            provenance=provenance,
        )

    def _lifetime_parts(self, state, items, excess=None):
        auger = _full(self._intrinsic(state, "auger", excess), state.shape)
        radiative = _full(self._intrinsic(state, "radiative", excess), state.shape)
        intrinsic = 1.0 / (1.0 / auger + 1.0 / radiative)
        srh_value, records = self._srh(state, items, excess)
        effective = intrinsic if srh_value is None else 1.0 / (1.0 / intrinsic + 1.0 / srh_value)
        return {
            "effective": effective,
            "intrinsic": intrinsic,
            "auger": auger,
            "radiative": radiative,
            "srh": srh_value,
            "records": records,
        }

    def _injection_narrows(self) -> bool:
        """Whether the narrowing depends on the free carriers and says so in its fit
        conventions (Schenk's): then the injected densities narrow the gap further."""
        bound = self._carriers()
        conventions = bound.narrowing.conventions
        return (
            bound.uses_carriers
            and conventions.recorded
            and conventions.value("carrier_densities") == "free"
        )

    def _injected_narrowing(self, state, excess, floor=0.0):
        """(dEg(n, p) - dEg(n0, p0)) / kT at the injected densities n0 + dn, p0 + dn,
        dn raised to ``floor`` x (n0 + p0) at least (None: no change)."""
        if state.given or state.dopants is None or not self._injection_narrows():
            return None
        dn = state.excess if excess is None else excess
        t, nd, na, _ = state.dopants
        bound = self._carriers()
        n0, p0 = state.n0, state.p0
        if floor:
            dn = np.maximum(dn, floor * (n0 + p0))
        before = bound.shifts(t, nd, na, n0, p0)
        after = bound.shifts(t, nd, na, n0 + dn, p0 + dn)
        kt = BOLTZMANN_EV * t
        return ((after[0] - before[0]) + (after[1] - before[1])) / kt

    def _degeneracy_change(self, state, dn):
        """ln(gamma_n gamma_p) at n0 + dn, p0 + dn less its equilibrium value (0 with
        Boltzmann statistics): gamma = F_1/2(eta) / exp(eta), n = Nc F_1/2(eta)."""
        t, _, _, fermi_dirac = state.dopants
        if not fermi_dirac:
            return 0.0
        from ..kernels.fermi_dirac import fd_half_inverse

        nc, nv = self._carriers().dos(temperature=t)

        def log_gamma(density, states):
            reduced = density / states
            return np.log(reduced) - fd_half_inverse(reduced)

        return (
            log_gamma(state.n0 + dn, nc)
            + log_gamma(state.p0 + dn, nv)
            - log_gamma(state.n0, nc)
            - log_gamma(state.p0, nv)
        )

    def _injection_factor(self, state, excess):
        """``(n p - ni_eff(n, p)^2) / (n p - n0 p0)``: the share of every net rate left
        when the narrowing at the injected densities (Schenk's) raises ni_eff; None
        where the narrowing does not depend on the carriers (or n0, p0 were given)."""
        # the rise of ni_eff^2 per excess carrier, (ni_eff(n, p)^2/n0 p0 - 1) / dn, taken
        # over at least 1e-4 (n0 + p0): a secant that tends to the derivative as dn -> 0
        # without the round-off of a difference over a vanishing step
        extra = self._injected_narrowing(state, excess, floor=_SECANT)
        if extra is None:
            return None
        dn = state.excess if excess is None else excess
        n0, p0 = state.n0, state.p0
        step = np.maximum(dn, _SECANT * (n0 + p0))
        share = 1.0 - n0 * p0 * (np.expm1(extra) / step) / (n0 + p0 + dn)
        return _full(share, state.shape)

    def _recombination_provenance(self, name, records, state):
        provenance = self.provenance(name)
        provenance["defects"] = records
        provenance["equilibrium_densities"] = (
            "given by the caller" if state.given else "solved by the equilibrium model"
        )
        return provenance

    # ------------------------------------------------------------------ implied voltage
    @declare(
        units=("V", "cm^-3"),
        parts=(
            Part(
                "implied_voltage",
                (
                    "implied open-circuit voltage (steady state, uniform "
                    "generation, flat carrier profile)"
                ),
                "implied_voltage",
            ),
            Part(
                "steady_state_excess_density",
                "excess carrier density in steady state",
                "excess_density",
            ),
        ),
        models=("intrinsic_lifetime", *_SRH, *_EQUILIBRIUM),
        formula=(
            "steady state G = dn/tau_eff(dn) with G the generation per area over the "
            "thickness (uniform generation, flat carrier profile), then "
            "V = (kT/q) ln[(n0 + dn)(p0 + dn)/(n0 p0)]"
        ),
        cases=[
            case(
                fixed={"thickness": 0.018},
                temperature=[298.15, 300.0],
                Na=[1e15, 1e16],
                generation=[1e15, 1e17, 2.5e17],
            )
        ],
    )
    def implied_voltage(
        self,
        temperature,
        generation,
        thickness,
        Na=0,
        Nd=0,
        *,
        defect=None,
        density=None,
        electron_capture_time=None,
        defects=None,
        n0=None,
        p0=None,
        donor="phosphorus",
        acceptor="boron",
        statistics=None,
    ) -> ImpliedVoltage:
        """Implied open-circuit voltage of a sample under steady uniform generation.

        Parameters
        ----------
        temperature : K (or a pint quantity)
        generation : photons absorbed per area and time, cm^-2 s^-1 (> 0), or the
            photogenerated current density as a pint quantity (e.g. ``Q_(40, "mA/cm^2")``)
        thickness : sample thickness, cm (or a pint length)
        Na, Nd, n0, p0, donor, acceptor, statistics : as for :meth:`intrinsic_lifetime`
        defect, density, electron_capture_time, defects : as for :meth:`effective_lifetime`

        Returns
        -------
        :class:`ImpliedVoltage`: the implied voltage (V), the steady-state excess
        density, the generation rate per volume and the lifetimes there. Assumptions
        (also in the result): steady state; generation uniform through the thickness;
        flat carrier profile and no surface recombination; dn = dp; Boltzmann
        statistics for the quasi-Fermi-level splitting.

        Examples
        --------
        >>> si.implied_voltage(300, Q_(40, "mA/cm^2"), Q_(180, "um"), Na=1e15)  # doctest: +SKIP
        """
        items = self._defect_items(defect, density, electron_capture_time, defects)
        g_area = self._generation(generation)
        w, _, _ = coerce(thickness, "thickness")
        rate = g_area / w  # cm^-3 s^-1
        state = self._recombination_state(
            temperature, Na, Nd, 0.0, n0, p0, donor, acceptor, statistics
        )
        _widen(state, items)
        shape = np.broadcast_shapes(state.shape, rate.shape)
        state.shape = shape
        state.excess = np.zeros(shape)
        rate = np.broadcast_to(rate, shape).astype(float)

        def recombination(dn):
            parts = self._lifetime_parts(state, items, dn)
            return dn / parts["effective"]

        low_injection = self._lifetime_parts(state, items, np.zeros(shape))["effective"]
        guess = np.clip(rate * low_injection, 1.0, 1e22)
        try:
            dn = voltage_kernel.steady_state_excess(recombination, rate, guess)
        except SolverError as error:  # name the failing points by their inputs
            raise _steady_state_failure(error, state, g_area, w, shape) from None
        state.excess = dn
        state.ranges["excess_density"] = _range(dn)
        self._check_intrinsic(state)  # the excess densities reached
        parts = self._lifetime_parts(state, items)
        volts = voltage_kernel.implied_voltage(state.temperature, state.n0, state.p0, dn)
        extra = self._injected_narrowing(state, dn)
        if extra is not None:  # qV = kT ln[n p / (gamma_n gamma_p ni_eff(n, p)^2)]
            volts = volts - BOLTZMANN_EV * state.temperature * (
                extra + self._degeneracy_change(state, dn)
            )
        provenance = self._recombination_provenance("implied_voltage", parts["records"], state)
        assumptions = ASSUMPTIONS_INJECTED if extra is not None else ASSUMPTIONS
        provenance["assumptions"] = assumptions
        return ImpliedVoltage(
            implied_voltage=quantity(_full(volts, shape), "V"),
            excess_density=quantity(_full(dn, shape), "cm^-3"),
            generation_rate=quantity(_full(rate, shape), "cm^-3/s"),
            effective_lifetime=quantity(parts["effective"], "s"),
            intrinsic_lifetime=quantity(parts["intrinsic"], "s"),
            srh_lifetime=_optional(parts["srh"]),
            equilibrium_electron_density=quantity(_full(state.n0, shape), "cm^-3"),
            equilibrium_hole_density=quantity(_full(state.p0, shape), "cm^-3"),
            assumptions=assumptions,
            provenance=provenance,
        )

    @staticmethod
    def _generation(generation):
        """Generation per area, cm^-2 s^-1, from a photon flux or a current density."""
        import pint

        if isinstance(generation, pint.Quantity):
            current = unit("A/cm^2")
            if generation.dimensionality == current.dimensionality:
                magnitude = np.asarray(generation.m_as(current), dtype=float)
                if not np.all(np.isfinite(magnitude)) or np.any(magnitude <= 0):
                    raise InputError(
                        "generation", "> 0 (a photogenerated current density)", repr(generation)
                    )
                return magnitude / ELEMENTARY_CHARGE
        try:
            return coerce(generation, "generation")[0]
        except UnitError:
            raise UnitError(
                "generation",
                "cm^-2/s (photons absorbed per area and time) or "
                "A/cm^2 (photogenerated current density)",
                generation,
                plain="cm^-2/s",
            ) from None
