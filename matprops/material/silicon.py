"""Silicon: one release's choice of models, behind unit-aware methods.

A :class:`Silicon` binds one model per quantity (from a release, with optional
overrides), converts inputs at the boundary (plain numbers in default units, or
pint quantities), checks validity ranges, calls the plain-numpy kernels, and
returns pint quantities. It also composes quantities (density from the lattice
constant and the atomic weight, an intrinsic density from the chosen gap and
densities of states) and reports the provenance of everything it returns.

The numbers are model estimates. Where they feed a decision with consequences
(thermal limits, electrical ratings), defer to measured data, local codes and
licensed practice.
"""

from __future__ import annotations

import os
from collections import Counter
from collections.abc import Iterable, Mapping, Sequence
from typing import Any

import numpy as np

from ..catalogue.records import report_violation
from ..catalogue.store import Catalogue, Model, default_catalogue
from ..errors import DatasetError, Error, InputError, UnknownQuantityError, Unusable
from ..kernels._blocks import evaluate
from ..units import check_broadcast, coerce, quantity
from ..units import name as check_name
from ..units import names as check_names
from .carriers import CarrierMethods
from .crystal import CrystalMethods
from .derived import DERIVED
from .optical import OpticalMethods
from .recombination import RecombinationMethods
from .registry import REGISTRY
from .thermal import ThermalMethods
from .transport import TransportMethods

__all__ = ["DERIVED", "Silicon", "models", "releases", "silicon"]


class Silicon(
    CarrierMethods,
    CrystalMethods,
    OpticalMethods,
    TransportMethods,
    RecombinationMethods,
    ThermalMethods,
):
    """Crystalline silicon as described by one release of matprops.

    Parameters
    ----------
    release : str, optional
        Release id such as ``"2026.1"``; the newest release when omitted.
    models : mapping of quantity -> model id, optional
        Override the release's choice for some quantities (the provenance says so).
    strict : bool
        Raise :class:`matprops.ValidityError` instead of warning when an input
        leaves a model's validity range.
    catalogue : Catalogue, optional
        Where the data come from (default: the installed ``datasets/``).
    workers : int, optional
        Threads that evaluate the blocks of a large input side by side (numpy releases
        the GIL inside its loops). None or 1: one thread. The numbers are the same bit
        for bit whatever the number of workers (the blocks are the same).

    Inputs are plain numbers or arrays in default units (temperature in K) or pint
    quantities (``matprops.Q_(25, "degC")``); arrays broadcast; a scalar input
    gives a scalar output. Outputs are pint quantities.
    """

    # validity policy besides ``strict`` (see _check); class defaults, so that copies
    # made without __init__ (propagation.changed_material) have them too
    _checked = False  # a view whose inputs were checked already skips the checks
    _report = None  # a callable taking each validity message instead of a warning
    workers: int | None = None  # (a copy made without __init__ works on one thread)

    def __init__(
        self,
        release: str | None = None,
        models: Mapping[str, str] | None = None,
        strict: bool = False,
        catalogue: Catalogue | None = None,
        workers: int | None = None,
        catalog: Catalogue | None = None,
    ):
        # ``catalog`` is the former spelling of ``catalogue``, still accepted
        catalogue = catalogue or catalog or default_catalogue()
        self.release = catalogue.release(
            release if release is not None else catalogue.newest_release_id()
        )
        # a final release reads the model and defect files it sealed (its archive)
        self.catalogue = catalogue.for_release(self.release)
        if not isinstance(strict, (bool, np.bool_)):  # strict="no" is not False
            raise InputError("strict", "True or False", repr(strict))
        self.strict = bool(strict)
        from ..kernels._blocks import check_workers

        check_workers(workers)
        self.workers = workers
        overrides = dict(models or {})
        known = set(self.catalogue.quantities())
        for name in overrides:
            if name not in known:
                raise UnknownQuantityError(name, known, "in models=")
        self._overrides = overrides
        self.overridden = frozenset(
            q for q, m in overrides.items() if self.release.models.get(q) != m
        )
        choice = {**self.release.models, **overrides}
        self._models: dict[str, Model] = {}
        for name in choice:
            self._bind(name, choice)

    @property
    def catalog(self):
        """Former spelling of :attr:`catalogue`, still served."""
        return self.catalogue

    def __reduce__(self):
        # pickled by release, overrides, strict flag and catalogue (its folders as plain
        # data, None: the receiver's installed data; an overlay with the digest of its
        # checksum list), re-bound on load; the digests of every data file the material
        # reads travel along, so that both sides use the same numbers
        from ..catalogue.overlay import key_of

        return _restore, (
            key_of(self.catalogue.base),
            self.release.id,
            self._overrides,
            self.strict,
            self._data_digests(),
            self.workers,
        )

    def _data_digests(self) -> dict[str, str]:
        """Relative path -> recorded sha256 of every data file this material's numbers
        are read from: the release file, the model file of every bound model (and of the
        models they are composed of), the tables those read, every defect file of the
        catalogue and the thermal-velocity model each defect names. Every file is
        verified against the checksum list when read, so equal digests mean equal data."""
        digests = self.__dict__.get("_digests")
        if digests is None:
            digests = _data_digests(self)
            self.__dict__["_digests"] = digests
        return digests

    def _digest_mismatch(self, expected: Mapping[str, str]) -> DatasetError | None:
        """The first data file whose digest here differs from ``expected`` (those of the
        process that pickled the material or made the lazy table), as an error."""
        from ..catalogue.overlay import file_of_label

        here = self._data_digests()
        for path in sorted(set(here) | set(expected)):
            mine, theirs = here.get(path), expected.get(path)
            if mine != theirs:
                return DatasetError(
                    file_of_label(self.catalogue.base, path),
                    f"has sha256 {mine or '(no such file)'} here but "
                    f"{theirs or '(no such file)'} where the material was pickled (or the "
                    "lazy table made): the two processes read different data; give the "
                    "workers the same datasets folder and release",
                )
        return None

    def _bind(self, name: str, choice: Mapping[str, str], chain=()) -> Model:
        if name in self._models:
            return self._models[name]
        if name not in choice:
            raise UnknownQuantityError(name, choice, f"in release {self.release.id}")
        if name in chain:
            raise InputError(
                "models", "free of circular compositions", " -> ".join(chain + (name,))
            )
        model = self.catalogue.model(name, choice[name])
        if model.requires:
            model = model.compose(
                **{q: self._bind(q, choice, chain + (name,)) for q in model.requires}
            )
        self._models[name] = model
        return model

    # ------------------------------------------------------------------ plumbing
    @property
    def models(self) -> dict[str, str]:
        """Quantity -> model id in use."""
        return {q: m.id for q, m in self._models.items()}

    def model(self, name: str) -> Model:
        """The bound :class:`~matprops.catalogue.records.Model` serving a quantity."""
        name = REGISTRY.canonical(check_name(name))
        if name not in self._models:
            if name in DERIVED:
                raise UnknownQuantityError(
                    name,
                    self._models,
                    f"with a model of its own: it is derived from "
                    f"{' and '.join(DERIVED[name][0])} (see si.provenance({name!r}))",
                )
            raise UnknownQuantityError(name, list(self._models) + list(DERIVED))
        return self._models[name]

    def kernel(self, name: str, **fixed):
        """A plain-array callable for a quantity: the door for simulation codes.

        Returns a :class:`~matprops.material.bound.BoundKernel`: inputs and outputs in the
        internal units its docstring and repr list (K, cm^-3, eV, ...), no unit
        handling and no validity check per call (``kernel.check(...)`` validates a
        mesh once), large arrays evaluated in blocks into one output,
        ``kernel.provenance`` and, for the smooth closed-form models,
        ``kernel.derivatives(...)``. ``fixed`` chooses what a quantity needs fixed:
        ``carrier=`` (and ``donor=`` / ``acceptor=`` where the model has one
        coefficient set per dopant) for the transport quantities; ``dopant=`` for
        ionisation; ``donor=``, ``acceptor=``, ``statistics=`` and ``complete_ionisation=``
        (every dopant ionised) for ``equilibrium`` (a callable ``(temperature, *,
        donor_density, acceptor_density) -> dict of arrays``). Densities are keyword-only
        in every bound kernel, so a positional call cannot swap donors and acceptors; any
        name of the argument vocabulary is accepted (``T``, ``Nd``, ``donor_density``).
        """
        from .bound import make_kernel

        name = REGISTRY.canonical(check_name(name))
        try:
            key = (name, tuple(sorted(fixed.items())))
            hash(key)
        except TypeError:
            key = None
        cache = self.__dict__.setdefault("_kernel_cache", {})
        if key is not None and key in cache:
            return cache[key]
        made = make_kernel(self, name, fixed)
        if key is not None:
            cache[key] = made
        return made

    def _evaluate(self, name: str, **arguments):
        """Coerce ``arguments`` (named as the kernel's inputs), check, call the model."""
        model = self.model(name)
        prepared = {a: coerce(raw, a) for a, raw in arguments.items()}
        if len(prepared) > 1:  # before the validity checks: a shape error comes first
            check_broadcast(**{a: array for a, (array, _, _) in prepared.items()})
        return self._call(model, prepared), model.output_units

    def _call(self, model: Model, prepared: Mapping[str, tuple]):
        """Check validity and call ``model`` with the inputs it declares.

        ``prepared`` maps kernel input names to ``(array, min, max)`` as returned by
        :func:`matprops.units.coerce`; inputs the model does not take are ignored.
        """
        values, ranges = {}, {}
        for argument in model.inputs:
            array, low, high = prepared[argument]
            self._check(model, argument, low, high)
            values[argument] = array
            ranges[argument] = (low, high)
        if model.regions:
            self._check_regions(model, values, ranges)
        # in blocks for large inputs (on ``workers`` threads)
        return evaluate(model.function or model, values, workers=self.workers)

    # ------------------------------------------------------------------ validity
    # Every validity check of the material goes through these three: a warning (or a
    # ValidityError when strict), a message handed to the application's reporter, or
    # nothing in a view whose inputs were checked already (a table checks its grid's
    # extremes once and evaluates its blocks with such a view). No warning filter is
    # ever touched, so another thread's warnings are never lost.
    def _check(self, model: Model, argument: str, low: float, high: float) -> None:
        if not self._checked:
            model.check(argument, low, high, self.strict, self._report)

    def _check_regions(self, model: Model, values, ranges=None) -> None:
        if not self._checked:
            model.check_regions(values, self.strict, ranges, self._report)

    def _violation(self, message: str) -> None:
        """A validity message of the material's own (not of one model's range)."""
        if not self._checked:
            report_violation(message, self.strict, self._report)

    def _checked_already(self) -> Silicon:
        """A view of this material whose methods skip the validity checks: the caller
        has checked the inputs' ranges already (a table, on its grid's extremes) or
        crosses them on purpose (the reference grid). Shares the bound models."""
        view = self.__dict__.get("_checked_view")
        if view is None:
            view = object.__new__(type(self))
            view.__dict__.update(self.__dict__)
            view.__dict__.pop("_kernel_cache", None)
            view._checked = True
            self.__dict__["_checked_view"] = view
        return view

    def _sibling(self, models: Mapping[str, str]) -> Silicon:
        """The same release, strictness, catalogue and reporter with other model
        choices (``models`` are overrides on top of the release's)."""
        sibling = type(self)(
            release=self.release.id,
            models=models,
            strict=self.strict,
            catalogue=self.catalogue.base,
        )
        sibling._report = self._report
        return sibling

    def _quantity(self, name: str, **arguments):
        result, units = self._evaluate(name, **arguments)
        return quantity(result, units)

    # ------------------------------------------------------------------ provenance
    def provenance(self, name: str) -> dict:
        """Model id, source, DOI, validity, coefficients, release, and overrides."""
        name = REGISTRY.canonical(check_name(name))
        record: dict[str, Any]
        if name in DERIVED:
            parts, formula = DERIVED[name]
            record = {
                "quantity": name,
                "model": "derived",
                "formula": formula,
                "components": {q: self.provenance(q) for q in parts},
            }
            note = self._composition_note(name)
            if note:
                record["composition"] = note
        else:
            record = self.model(name).provenance()
        # how the fit conventions of the models behind it were honoured (or not)
        parts = DERIVED[name][0] if name in DERIVED else (name,)
        report = self.consistency()
        applied = [entry for q in parts for entry in report.applied.get(q, ())]
        if applied:
            record["conventions_applied"] = applied
        mismatched = [m.as_dict() for q in parts for m in report.of(q)]
        if mismatched:
            record["conventions_mismatched"] = mismatched
        if name == "doping_from_resistivity":
            record["conversion_default"] = self.release.defaults.get(
                "doping_from_resistivity", "physics"
            )
        record.update(self.release.origin())  # which release, of which catalogue
        if self.release.base is not None and name not in DERIVED:
            # an own release chooses some models and inherits the others from its base
            record["release_choice_from"] = self.release.chosen_by(name)
        if self.release.final and name not in DERIVED:
            # a final release serves what it sealed; a model added to the catalogue
            # later (chosen with models=) is not part of it
            record["sealed_with_release"] = record["file"].startswith("archive/")
        record["overridden"] = name in self.overridden
        if name in self.overridden:
            record["release_choice"] = self.release.models.get(name)
        return record

    def consistency(self):
        """Whether the models in use are fed what their coefficients were fitted with.

        Returns a :class:`~matprops.material.composition.Consistency` report: its
        ``mismatches`` (empty for a consistent choice, such as every release's
        default) list each fit convention of a model in use that the material could not
        honour (a lifetime parameterisation fitted with another narrowing, ...) with
        its size at standard points (300 K; 1e15, 1e17, 1e19 cm^-3 of donors and of
        acceptors); ``applied`` says, per quantity, what the composition carried to
        honour the conventions (densities fed, the fit's own intrinsic density or
        densities of states, statistics); ``unverified`` lists conventions not known;
        ``stand_ins`` the dopant species served by another's coefficient set.
        Computing model that uses a mismatched composition warns (a ValidityWarning),
        or raises with ``strict=True``.
        """
        report = self.__dict__.get("_consistency")
        if report is None:
            from .composition import consistency

            report = self.__dict__["_consistency"] = consistency(self)
        return report

    def _warn_mismatches(self, quantity: str) -> None:
        """Warn (raise when strict) for each fit convention of ``quantity``'s model that
        the material cannot honour (see :meth:`consistency`)."""
        for mismatch in self.consistency().of(quantity):
            self._violation(mismatch.message())

    def sources(self, names: Iterable[str] | None = None):
        """Unique (citation key, Source) pairs behind the given quantities (default: all)."""
        names = check_names(names) if names is not None else list(self._models)
        seen, found = set(), []
        for name in names:
            parts = DERIVED[name][0] if name in DERIVED else (name,)
            for part in parts:
                for key, source in self.model(part).sources():
                    identity = source.doi or source.title
                    if identity not in seen:
                        seen.add(identity)
                        found.append((key, source))
        # one key per entry: two papers of one first author and year become -1992a, -1992b
        counts = Counter(key for key, _ in found)
        suffixes: dict[str, int] = {}
        unique = []
        for key, source in found:
            if counts[key] > 1:
                suffixes[key] = suffixes.get(key, 0) + 1
                key = f"{key}{'abcdefghijklmnopqrstuvwxyz'[suffixes[key] - 1]}"
            unique.append((key, source))
        return unique

    def cite(self, format: str = "bibtex", quantities: Iterable[str] | None = None) -> str:
        """References of the models in use, as BibTeX (default) or plain text."""
        sources = self.sources(quantities)
        if format == "bibtex":
            return "\n\n".join(source.bibtex(key) for key, source in sources)
        if format == "text":
            return "\n".join(f"[{key}] {source.citation()}" for key, source in sources)
        raise InputError("format", "'bibtex' or 'text'", repr(format))

    def table(self, quantities=None, temperature=None, **grid):
        """Evaluate quantities on a grid -> xarray.Dataset.

        Axes by name or alias (``T``, ``Na``, ``Nd``, ``excess``, ``n``, ``p``,
        ``wavelength``, ``carrier``, ``plane``) and ``chunks=`` for a lazy dask-backed
        Dataset; a grid of more than ``max_values`` values (1e8 by default, 0.8 GB;
        ``None`` for no limit) is an InputError before anything is allocated; see
        :func:`matprops.material.tables.table`.
        """
        from .tables import table

        if temperature is not None:
            grid["temperature"] = temperature
        return table(self, quantities, **grid)

    def compare(self, quantity, models=None, **grid):
        """The same grid evaluated by several models of one quantity -> xarray.Dataset
        with a ``model`` dimension and the spread; see :func:`matprops.material.tables.compare`."""
        from .tables import compare

        return compare(self, quantity, models, **grid)

    def explain(self, quantity, **inputs):
        """The chain behind one value: inputs as given and converted, every intermediate
        quantity with its value, units, model, coefficients and the conventions applied,
        and the value; ``print()`` it. See :mod:`matprops.material.trace`.

        ``si.explain("resistivity", T="23 degC", Na=1.2e16)``
        """
        from .trace import explain

        return explain(self, quantity, **inputs)

    def __repr__(self) -> str:
        chosen = ", ".join(
            f"{q}={m.id}{'*' if q in self.overridden else ''}" for q, m in self._models.items()
        )
        return (
            f"<Silicon release {self.release.id} ({self.release.status}); {chosen}"
            f"{'; * overridden' if self.overridden else ''}>"
        )


def _restore(key, release, overrides, strict, digests, workers=None) -> Silicon | Unusable:
    """Unpickle a material; never raises (see :class:`matprops.errors.Unusable`): a
    material whose data differ here, or cannot be read, raises on its first use."""
    from ..catalogue.overlay import from_key

    try:
        catalogue = from_key(key)  # (an overlay whose checksum list differs: refused)
        si = Silicon(
            release=release, models=overrides, strict=strict, catalogue=catalogue, workers=workers
        )
        mismatch = si._digest_mismatch(digests)
    except Error as exc:
        return Unusable(exc, Silicon)
    return si if mismatch is None else Unusable(mismatch, Silicon)


def _data_digests(si: Silicon) -> dict[str, str]:
    from ..catalogue import defects

    files = {si.release.path}
    seen = set()

    def walk(model):
        if id(model) in seen:
            return
        seen.add(id(model))
        files.add(model.path)
        for name in model.tables:
            files.add(model.catalogue.table_path(name))
        for component in model.components.values():
            walk(component)

    for model in si._models.values():
        walk(model)
    for entry in defects.describe(si.catalogue):
        if entry.path is not None:
            files.add(entry.path)
        if entry.thermal_velocity:
            files.add(si.catalogue.model("thermal_velocity", entry.thermal_velocity).path)
    from ..catalogue.overlay import file_label

    base = si.catalogue.base  # (a file of an overlay is labelled '<catalogue name>:<path>')
    return {file_label(base, path): base.recorded(path) for path in files}


def silicon(
    release: str | None = None,
    models: Mapping[str, str] | None = None,
    strict: bool = False,
    workers: int | None = None,
    catalogues: Sequence[str | os.PathLike] | None = None,
    seals: str | os.PathLike | None = None,
) -> Silicon:
    """Silicon as described by a release (newest shipped release by default).

    Parameters
    ----------
    release, models, strict, workers
        See :class:`Silicon`.
    catalogues : list of folders, optional
        Overlay catalogues of your own models and releases, searched in this order
        before the shipped data (default: ``$MATPROPS_CATALOGUES``, folders separated by
        ``os.pathsep``); ``release`` may then name an own release (``"ourlab-2027.1"``).
        See :mod:`matprops.catalogue.overlay`.
    seals : path, optional
        The file that records the seals of final own releases (default
        ``$MATPROPS_SEALS``, else ``matprops/seals.txt`` in the user's configuration
        folder).
    """
    return Silicon(
        release=release,
        models=models,
        strict=strict,
        workers=workers,
        catalogue=_catalogue(catalogues, seals),
    )


def _catalogue(catalogues, seals=None) -> Catalogue:
    """The shipped catalogue, with the overlays given (or named by the environment)."""
    from ..catalogue.overlay import catalogue_at, catalogues_from_environment

    if catalogues is None:
        catalogues = catalogues_from_environment()
    elif isinstance(catalogues, (str, os.PathLike)):
        catalogues = [catalogues]
    if not catalogues:
        return default_catalogue()
    return catalogue_at(None, [os.path.abspath(os.path.expanduser(p)) for p in catalogues], seals)


def releases(catalogues: Sequence[str | os.PathLike] | None = None) -> list[str]:
    """Ids of every release, oldest shipped first, then the own releases of the
    overlay catalogues (default: ``$MATPROPS_CATALOGUES``)."""
    return _catalogue(catalogues).release_ids()


def models(quantity: str | None = None, catalogues: Sequence[str | os.PathLike] | None = None):
    """Model ids for one quantity, or a dict quantity -> ids for all (with the models of
    the overlay catalogues given, default ``$MATPROPS_CATALOGUES``)."""
    catalogue = _catalogue(catalogues)
    if quantity is None:
        return {q: catalogue.model_ids(q) for q in catalogue.quantities()}
    return catalogue.model_ids(quantity)


def _give_uncertainty():
    """Every public method answers uncertainty=True (see matprops.material.uncertainty)."""
    from .uncertainty import public_methods, with_uncertainty

    for method_name in public_methods():
        setattr(Silicon, method_name, with_uncertainty(getattr(Silicon, method_name)))


_give_uncertainty()
