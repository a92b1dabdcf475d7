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

from collections import Counter
from collections.abc import Iterable, Mapping

import numpy as np

from ..catalogue.store import Catalog, Model, default_catalog
from ..errors import DatasetError, InputError, UnknownQuantityError
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
    catalog : Catalog, optional
        Where the data come from (default: the installed ``datasets/``).

    Inputs are plain numbers or arrays in default units (temperature in K) or pint
    quantities (``matprops.Q_(25, "degC")``); arrays broadcast; a scalar input
    gives a scalar output. Outputs are pint quantities.
    """

    def __init__(
        self,
        release: str | None = None,
        models: Mapping[str, str] | None = None,
        strict: bool = False,
        catalog: Catalog | None = None,
    ):
        catalog = catalog or default_catalog()
        self.release = catalog.release(
            release if release is not None else catalog.newest_release_id()
        )
        # a final release reads the model and defect files it sealed (its archive)
        self.catalog = catalog.for_release(self.release)
        if not isinstance(strict, (bool, np.bool_)):  # strict="no" is not False
            raise InputError("strict", "True or False", repr(strict))
        self.strict = bool(strict)
        overrides = dict(models or {})
        known = set(self.catalog.quantities())
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

    def __reduce__(self):
        # pickled by release, overrides, strict flag and catalogue, re-bound on load;
        # the model files' hashes travel along so that both sides use the same numbers
        hashes = {q: m.sha256 for q, m in self._models.items()}
        return _restore, (self.catalog, self.release.id, self._overrides, self.strict, hashes)

    def _bind(self, name: str, choice: Mapping[str, str], chain=()) -> Model:
        if name in self._models:
            return self._models[name]
        if name not in choice:
            raise UnknownQuantityError(name, choice, f"in release {self.release.id}")
        if name in chain:
            raise InputError(
                "models", "free of circular compositions", " -> ".join(chain + (name,))
            )
        model = self.catalog.model(name, choice[name])
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
        ionisation; ``donor=``, ``acceptor=`` and ``statistics=`` for ``equilibrium``
        (a callable ``(temperature, donor_density, acceptor_density) -> dict of
        arrays``).
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
            model.check(argument, low, high, self.strict)
            values[argument] = array
            ranges[argument] = (low, high)
        if model.regions:
            model.check_regions(values, self.strict, ranges)
        return evaluate(model.function or model, values)  # in blocks for large inputs

    def _quantity(self, name: str, **arguments):
        result, units = self._evaluate(name, **arguments)
        return quantity(result, units)

    # ------------------------------------------------------------------ provenance
    def provenance(self, name: str) -> dict:
        """Model id, source, DOI, validity, coefficients, release, and overrides."""
        name = REGISTRY.canonical(check_name(name))
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
        record["release"] = self.release.id
        record["release_status"] = self.release.status
        if self.release.final and name not in DERIVED:
            # a final release serves what it sealed; a model added to the catalogue
            # later (chosen with models=) is not part of it
            record["sealed_with_release"] = record["file"].startswith("archive/")
        record["overridden"] = name in self.overridden
        if name in self.overridden:
            record["release_choice"] = self.release.models.get(name)
        return record

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
        Dataset; see :func:`matprops.tables.table`.
        """
        from .tables import table

        if temperature is not None:
            grid["temperature"] = temperature
        return table(self, quantities, **grid)

    def compare(self, quantity, models=None, **grid):
        """The same grid evaluated by several models of one quantity -> xarray.Dataset
        with a ``model`` dimension and the spread; see :func:`matprops.tables.compare`."""
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


def _restore(catalog, release, overrides, strict, hashes) -> Silicon:
    si = Silicon(release=release, models=overrides, strict=strict, catalog=catalog)
    for name, model in si._models.items():
        if model.sha256 != hashes.get(name):
            raise DatasetError(
                model.path,
                f"has sha256 {model.sha256} here but "
                f"{hashes.get(name)} where the material was pickled: "
                "the two processes read different data",
            )
    return si


def silicon(
    release: str | None = None, models: Mapping[str, str] | None = None, strict: bool = False
) -> Silicon:
    """Silicon as described by a release (newest by default); see :class:`Silicon`."""
    return Silicon(release=release, models=models, strict=strict)


def releases() -> list[str]:
    """Ids of every release, oldest first."""
    return default_catalog().release_ids()


def models(quantity: str | None = None):
    """Model ids for one quantity, or a dict quantity -> ids for all."""
    catalog = default_catalog()
    if quantity is None:
        return {q: catalog.model_ids(q) for q in catalog.quantities()}
    return catalog.model_ids(quantity)


def _give_uncertainty():
    """Every public method answers uncertainty=True (see matprops.material.uncertainty)."""
    from .uncertainty import public_methods, with_uncertainty

    for method_name in public_methods():
        setattr(Silicon, method_name, with_uncertainty(getattr(Silicon, method_name)))


_give_uncertainty()
