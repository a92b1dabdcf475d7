"""Records of the catalogue: sources, coefficients, validity ranges, models, releases.

Immutable definitions, separate from the files they are read from
(:mod:`matprops.catalogue.modelfile`) and from the catalogue that finds and checks those files
(:mod:`matprops.catalogue.store`). A :class:`Model` is a plain-array callable with its
provenance attached.
"""

from __future__ import annotations

import functools
import json
import re
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from pathlib import Path
from types import MappingProxyType
from typing import Any, Protocol

import numpy as np

from ..errors import (
    DatasetError,
    Error,
    UnknownNameError,
    UnknownVariantError,
    Unusable,
    ValidityError,
    ValidityWarning,
    warn,
)
from .regions import Region


class CatalogueLike(Protocol):
    """What a record needs of the catalogue that built it (records never import the
    catalogue: it hands itself to each record it builds)."""

    def model(self, quantity: str, model_id: str) -> Model: ...

    def release(self, release_id: str) -> Release: ...

    def table(self, name: str) -> Any: ...

    def table_path(self, name: str) -> Path: ...

    def checksums(self) -> dict[str, str]: ...

    def recorded(self, path: Path) -> str: ...

    @property
    def root(self) -> Path: ...


SOURCE_FIELDS = ("authors", "year", "title", "journal", "volume", "pages", "doi")
# Required fields of each kind of source record (``type`` in the file; default "article").
SOURCE_TYPES = {
    "article": SOURCE_FIELDS,
    "book": ("authors", "year", "title", "publisher", "doi"),
    # a lab's own measurement, fitted into a model of an overlay catalogue
    "measurement": ("authors", "year", "title", "description", "data", "data_sha256", "doi"),
}
BOOK_FIELDS = ("publisher", "edition", "address", "pages")
MEASUREMENT_FIELDS = ("lab", "description", "data", "data_sha256")


# --------------------------------------------------------------------------- records


@dataclass(frozen=True)
class Source:
    """A bibliographic record of the publication a model comes from.

    ``type`` is ``"article"`` (journal, volume, pages), ``"book"`` (publisher,
    optional edition, address and pages) or ``"measurement"`` (a lab's own measured
    data: the people who measured, the ``lab``, a ``description`` of the data and the
    file ``data`` in the overlay catalogue's ``measurements/`` folder with its
    ``data_sha256``); it decides the BibTeX entry type.
    """

    authors: tuple[str, ...]
    year: int
    title: str
    journal: str
    volume: str
    pages: str
    doi: str
    type: str = "article"
    publisher: str = ""
    edition: str = ""
    address: str = ""
    lab: str = ""
    description: str = ""
    data: str = ""
    data_sha256: str = ""

    def citation(self) -> str:
        authors = ", ".join(self.authors)
        doi = f", doi:{self.doi}" if self.doi else ""
        if self.type == "measurement":
            lab = f" ({self.lab})" if self.lab else ""
            return (
                f'{authors}{lab}, "{self.title}", own measurement ({self.year}), '
                f"data {self.data} (sha256 {self.data_sha256[:12]}){doi}"
            )
        if self.type == "book":
            edition = f", {self.edition} edition" if self.edition else ""
            place = f"{self.publisher}, {self.address}" if self.address else self.publisher
            pages = f", pp. {self.pages}" if self.pages else ""
            return f"{authors}, {self.title}{edition} ({place}, {self.year}){pages}{doi}"
        return (
            f'{authors}, "{self.title}", {self.journal} {self.volume}, '
            f"{self.pages} ({self.year}){doi}"
        )

    def bibtex(self, key: str) -> str:
        def esc(text):
            return str(text).replace("{", "").replace("}", "")

        lines = [
            f"@{self.type}{{{key},",
            f"  author = {{{' and '.join(esc(a) for a in self.authors)}}},",
            f"  title = {{{{{esc(self.title)}}}}},",
        ]
        if self.type == "measurement":
            lines[0] = f"@misc{{{key},"
            fields = [
                ("howpublished", f"own measurement, data {self.data}"),
                ("note", f"{self.lab + '; ' if self.lab else ''}sha256 {self.data_sha256}"),
            ]
        elif self.type == "book":
            fields = [
                ("edition", self.edition),
                ("publisher", self.publisher),
                ("address", self.address),
                ("pages", self.pages),
            ]
        else:
            fields = [("journal", self.journal), ("volume", self.volume), ("pages", self.pages)]
        lines += [f"  {name} = {{{esc(value)}}}," for name, value in fields if value]
        lines.append(f"  year = {{{self.year}}},")
        if self.doi:
            lines.append(f"  doi = {{{esc(self.doi)}}},")
        lines.append("}")
        return "\n".join(lines)

    def key(self) -> str:
        """A BibTeX key ``surname-year`` (lower-case ASCII) of the first author."""
        import unicodedata

        words = self.authors[0].split()
        # a person is written with initials ("M. A. Green"); an organisation is not
        surname = words[-1] if "." in self.authors[0] else words[0]
        ascii_name = unicodedata.normalize("NFKD", surname).encode("ascii", "ignore").decode()
        return f"{re.sub(r'[^a-z]', '', ascii_name.lower())}-{self.year}"

    def as_dict(self) -> dict:
        record = {
            "type": self.type,
            "authors": list(self.authors),
            "year": self.year,
            "title": self.title,
        }
        if self.type == "book":
            record.update({k: getattr(self, k) for k in BOOK_FIELDS if getattr(self, k)})
        elif self.type == "measurement":
            record.update({k: getattr(self, k) for k in MEASUREMENT_FIELDS if getattr(self, k)})
        else:
            record.update({"journal": self.journal, "volume": self.volume, "pages": self.pages})
        record["doi"] = self.doi
        return record


@dataclass(frozen=True)
class Coefficient:
    """A coefficient as printed (value, units, uncertainty) and in kernel units.

    ``uncertainty`` is the source's "+-" as printed, in ``units``; ``uncertainty_kind``
    says what it is (``"standard"``, ``"expanded"`` with ``coverage_factor``,
    ``"bound"``: the half-width of limits, or ``"unspecified"``: the source does not
    say) and :attr:`standard_uncertainty` the standard uncertainty (k = 1) it stands
    for; ``kernel_uncertainty`` is that in the kernel's units. ``None``: the source
    states no uncertainty for this number.
    """

    name: str
    value: float | tuple[float, ...]
    units: str
    uncertainty: float | tuple[float, ...] | None
    kernel_value: Any  # float or ndarray in the kernel's units
    kernel_units: str
    obtained: str | None = None  # this number's own origin, where it differs from the model's
    uncertainty_kind: str = "unspecified"
    coverage_factor: float | None = None
    uncertainty_obtained: str | None = None
    kernel_uncertainty: Any = None  # standard uncertainty in the kernel's units

    @property
    def standard_uncertainty(self):
        """The standard uncertainty (k = 1) in the printed units, or None."""
        if self.uncertainty is None:
            return None
        return _plain(standard_from(self.uncertainty, self.uncertainty_kind, self.coverage_factor))

    def as_dict(self) -> dict:
        record = {"value": _plain(self.value), "units": self.units}
        if self.uncertainty is not None:
            record["uncertainty"] = _plain(self.uncertainty)
            record["uncertainty_kind"] = self.uncertainty_kind
            if self.coverage_factor is not None:
                record["coverage_factor"] = self.coverage_factor
            record["standard_uncertainty"] = self.standard_uncertainty
            if self.uncertainty_obtained:
                record["uncertainty_obtained"] = self.uncertainty_obtained
        if self.obtained:
            record["obtained"] = self.obtained
        return record


def standard_from(value, kind: str, coverage_factor: float | None = None):
    """The standard uncertainty (k = 1) a source's "+-" stands for.

    ``"standard"`` and ``"unspecified"`` (a "+-" whose meaning the source does not
    say, taken as a standard uncertainty; the answer says so) as they are;
    ``"expanded"`` divided by its coverage factor; ``"bound"`` (the half-width ``a``
    of limits the value lies within) as a rectangular distribution, ``a / sqrt(3)``
    (GUM, JCGM 100:2008, 4.3.7).
    """
    scale = {"standard": 1.0, "unspecified": 1.0, "bound": 1.0 / 3.0**0.5}.get(kind)
    if kind == "expanded":
        if coverage_factor is None:
            raise ValueError("an expanded uncertainty needs its coverage_factor")
        scale = 1.0 / float(coverage_factor)
    if isinstance(value, tuple):
        return tuple(v * scale for v in value)
    return value * scale


@dataclass(frozen=True)
class OutputUncertainty:
    """A source's stated accuracy of a model's output (not of its coefficients).

    ``relative`` (a fraction) or ``absolute`` (in ``units``), of the given ``kind``
    (see :func:`standard_from`), holding over the ranges ``validity`` (kernel input
    -> (low, high), kernel units) or stated at the point ``at`` (input -> value).
    """

    kind: str
    statement: str
    obtained: str
    relative: float | None = None
    absolute: float | None = None
    units: str | None = None
    coverage_factor: float | None = None
    validity: Mapping[str, tuple[float, float]] = field(default_factory=dict)
    at: Mapping[str, float] = field(default_factory=dict)
    variant: str | None = None

    @property
    def standard_relative(self) -> float | None:
        if self.relative is None:
            return None
        return standard_from(self.relative, self.kind, self.coverage_factor)

    @property
    def standard_absolute(self) -> float | None:
        if self.absolute is None:
            return None
        return standard_from(self.absolute, self.kind, self.coverage_factor)

    def as_dict(self) -> dict:
        record: dict[str, Any] = {"statement": self.statement, "kind": self.kind}
        if self.relative is not None:
            record["relative"] = self.relative
            record["standard_relative"] = self.standard_relative
        if self.absolute is not None:
            record.update(
                absolute=self.absolute, units=self.units, standard_absolute=self.standard_absolute
            )
        if self.coverage_factor is not None:
            record["coverage_factor"] = self.coverage_factor
        if self.validity:
            record["validity"] = {k: list(v) for k, v in self.validity.items()}
        if self.at:
            record["at"] = dict(self.at)
        if self.variant:
            record["variant"] = self.variant
        record["obtained"] = self.obtained
        return record


@dataclass(frozen=True)
class Correlation:
    """Correlation coefficients between some coefficients of one model."""

    coefficients: tuple[str, ...]  # "name", "name[i]" or "<variant>.name"
    matrix: tuple[tuple[float, ...], ...]
    obtained: str

    def as_dict(self) -> dict:
        return {
            "coefficients": list(self.coefficients),
            "matrix": [list(row) for row in self.matrix],
            "obtained": self.obtained,
        }


@dataclass(frozen=True)
class Uncertainty:
    """What a model's source states about its uncertainty (the ``[uncertainty]``
    section of its file; a file without one: ``"not known"``)."""

    statement: str = "not known"  # "stated", "not stated", "not known"
    obtained: str = "no [uncertainty] section in the model file: not recorded"
    correlations: tuple[Correlation, ...] = ()
    outputs: tuple[OutputUncertainty, ...] = ()

    def as_dict(self) -> dict:
        record: dict[str, Any] = {"statement": self.statement, "obtained": self.obtained}
        if self.correlations:
            record["correlation"] = [c.as_dict() for c in self.correlations]
        if self.outputs:
            record["output"] = [o.as_dict() for o in self.outputs]
        return record


@dataclass(frozen=True)
class Range:
    """A model's validity range for one input, in the kernel's units."""

    argument: str
    low: float
    high: float
    units: str

    def __str__(self) -> str:
        return f"{self.argument} {self.low:g}-{self.high:g} {self.units}"


def _plain(value):
    if isinstance(value, tuple):
        return list(value)
    return value


# --------------------------------------------------------------------------- model


@dataclass(frozen=True, eq=False)
class Model:
    """One published model for one quantity, bound to its coefficients.

    Calling the model evaluates it on plain arrays in the kernel's internal units
    (see :attr:`inputs`) with no unit handling and no validity check: the door for
    simulation codes. :meth:`check` does the validity check separately.
    """

    quantity: str
    id: str
    name: str
    kind: str
    kernel: Any  # a kernel function carrying its .spec (kernels._spec)
    source: Source
    obtained: str
    notes: str
    coefficients: Mapping[str, Coefficient]
    validity: Mapping[str, Range]
    path: Path
    sha256: str
    requires: tuple[str, ...] = ()
    additional_sources: tuple[Source, ...] = ()
    fallback: str | None = None
    table: str | None = None
    table_arguments: Mapping[str, str] = field(default_factory=dict)
    components: Mapping[str, Model] = field(default_factory=dict)
    function: Callable | None = None
    # coefficient sets per dopant species or per carrier: variant name -> bound Model
    variant_axis: str | None = None
    variants: Mapping[str, Model] = field(default_factory=dict)
    variant: str | None = None
    # quantity-specific sections of the model file (e.g. ``narrowing``), validated
    extra: Mapping[str, Any] = field(default_factory=dict)
    # validity limits of one input that depend on another (see matprops.catalogue.regions)
    regions: tuple[Region, ...] = ()
    # what the source states about uncertainty (coefficients carry their own)
    uncertainty: Uncertainty = field(default_factory=Uncertainty)
    # the catalogue that built this record: tables are read and pickles re-bound there
    catalogue: CatalogueLike | None = field(default=None, repr=False)

    def select(self, variant: str) -> Model:
        """The model bound to one coefficient set (a dopant species or a carrier)."""
        if self.variant == variant:
            return self
        if variant not in self.variants:
            if not self.variants:
                raise UnknownNameError(
                    variant,
                    [],
                    f"for model {self.quantity}/{self.id}, which has a single coefficient set",
                )
            raise UnknownVariantError(
                variant, self.variants, f"({self.variant_axis}) for model {self.quantity}/{self.id}"
            )
        return self.variants[variant]

    @property
    def conventions(self):
        """What the coefficients were fitted with
        (:class:`~matprops.catalogue.conventions.FitConventions`: dopant and carrier
        densities, intrinsic density, densities of states, narrowing, statistics,
        radiative term, each with where that was read); None for a quantity that is
        not composed with others."""
        return self.extra.get("fit_conventions")

    @property
    def tables(self) -> list[str]:
        """Files in ``datasets/tables/`` this model reads (sorted; empty if none)."""
        if not self.table:
            return []
        return sorted(
            {self.table}
            | {ref.rpartition(":")[0] for ref in self.table_arguments.values() if ":" in ref}
        )

    # -- evaluation
    @property
    def inputs(self) -> Mapping[str, str]:
        """Input name -> internal unit string."""
        return self.kernel.spec.inputs

    @property
    def output_units(self):
        return self.kernel.spec.output

    @property
    def array_api(self) -> bool:
        """Whether the kernel (and every model it is composed from) accepts arrays of
        any array-API namespace, not only numpy's."""
        return self.kernel.spec.array_api and all(c.array_api for c in self.components.values())

    @property
    def derivative(self):
        """The kernel's analytic derivatives bound to this model's coefficients:
        ``(**inputs) -> (value, {input: partial})``; None for a model without them."""
        function = getattr(self.kernel, "derivatives", None)
        if function is None or self.kind == "table" or (self.variants and self.variant is None):
            return None
        if self.requires and not self.components:
            return None
        if any(c.derivative is None for c in self.components.values()):
            return None
        own = {c.name: c.kernel_value for c in self.coefficients.values()}
        return functools.partial(function, **own, **dict(self.components))

    def __call__(self, *args, **kwargs):
        if self.function is None and self.variants:
            raise UnknownVariantError(
                "(none)",
                self.variants,
                f"({self.variant_axis}): model {self.quantity}/"
                f"{self.id} has one coefficient set per "
                f"{self.variant_axis}; choose one with .select()",
            )
        if self.function is None:
            missing = [q for q in self.requires if q not in self.components]
            raise DatasetError(
                self.path,
                f"model {self.id!r} is composed from "
                f"{', '.join(missing)}; bind them with .compose()",
            )
        return self.function(*args, **kwargs)

    def compose(self, **components: Model) -> Model:
        """Bind the models this composed model requires (e.g. band_gap=...)."""
        missing = [q for q in self.requires if q not in components]
        if missing:
            raise DatasetError(self.path, f"composed model {self.id!r} needs {', '.join(missing)}")
        chosen = {q: components[q] for q in self.requires}
        own = {c.name: c.kernel_value for c in self.coefficients.values()}
        function = functools.partial(self.kernel, **own, **chosen)
        return _replace(self, components=MappingProxyType(chosen), function=function)

    def check(
        self, argument: str, low: float, high: float, strict: bool = False, report=None
    ) -> list[str]:
        """Warn (or raise, if strict) when [low, high] leaves the validity range.

        ``report``, a callable taking the message, replaces the warning (an application
        that prints its own messages passes one; no warning filter is touched).
        Returns the messages (this model's and those of the models it is composed of).
        """
        messages = []
        rng = self.validity.get(argument)
        if rng is not None and (low < rng.low or high > rng.high):
            if argument in getattr(self.kernel.spec, "nan_outside", ()):
                consequence = (
                    "the value is NaN there (its coefficients were published only inside "
                    "this range; nothing is extrapolated)"
                )
            elif self.kind == "table":
                consequence = (
                    "the value is NaN where its table has no data and unvalidated elsewhere"
                )
            else:
                consequence = "the value is an extrapolation"
            message = (
                f"model {self.quantity}/{self.id}: {argument} "
                f"{_span(low, high)} {rng.units} is outside its validity range "
                f"{rng.low:g}-{rng.high:g} {rng.units}; {consequence}"
            )
            if self.fallback:
                message += (
                    f"; the model {self.fallback!r} covers a wider range "
                    f"(models={{{self.quantity!r}: {self.fallback!r}}})"
                )
            messages.append(report_violation(message, strict, report))
        for component in self.components.values():
            messages += component.check(argument, low, high, strict, report)
        return messages

    def check_regions(
        self,
        values: Mapping[str, Any],
        strict: bool = False,
        ranges: Mapping[str, tuple[float, float]] | None = None,
        report=None,
    ) -> list[str]:
        """Warn (or raise) where inputs leave a validity region of several inputs.

        ``values`` maps input names to arrays in kernel units (broadcast together);
        ``ranges``, input -> (min, max) where known, spare a pass over the points when
        the extremes already show every point inside. ``report`` as for :meth:`check`;
        returns the messages.
        """
        messages = []
        for region in self.regions:
            message = region.violation(values, f"{self.quantity}/{self.id}", ranges)
            if message is not None:
                messages.append(report_violation(message, strict, report))
        return messages

    # -- provenance
    def provenance(self) -> dict:
        """Everything a modeller needs to trace this model's numbers."""
        record = {
            "quantity": self.quantity,
            "model": self.id,
            "name": self.name,
            "kind": self.kind,
            "citation": self.source.citation(),
            "doi": self.source.doi,
            "source": self.source.as_dict(),
            "validity": {
                k: {"min": r.low, "max": r.high, "units": r.units} for k, r in self.validity.items()
            },
            "validity_regions": [r.as_dict() for r in self.regions],
            "obtained": self.obtained,
            "notes": self.notes,
            "coefficients": {k: c.as_dict() for k, c in self.coefficients.items()},
            "uncertainty": self.uncertainty.as_dict(),
            "file": self._relative_path(),
            "sha256": self.sha256,
        }
        describe = getattr(self.catalogue, "describe", None)
        if describe is not None:  # which catalogue the file was read from
            record["catalogue"] = describe()
        if self.table:
            record["tables"] = [f"tables/{t}" for t in self.tables]
        if self.additional_sources:
            record["additional_sources"] = [s.as_dict() for s in self.additional_sources]
        if self.fallback:
            record["fallback"] = self.fallback
        if self.components:
            record["components"] = {q: m.provenance() for q, m in self.components.items()}
        if self.variant_axis:
            record["variant_axis"] = self.variant_axis
            if self.variant is not None:
                record["variant"] = self.variant
            else:
                record["variants"] = {
                    name: {
                        k: c.as_dict()
                        for k, c in m.coefficients.items()
                        if k not in self.coefficients
                    }
                    for name, m in self.variants.items()
                }
        for key, value in self.extra.items():
            record[key] = _plain_extra(value)
        return record

    def _relative_path(self) -> str:
        """The model file relative to its datasets folder (a final release's archive
        copy shows as ``archive/<release>/models/...``)."""
        root = getattr(self.catalogue, "root", None)
        if root is not None and self.path.is_relative_to(root):
            return self.path.relative_to(root).as_posix()
        return f"models/{self.quantity}/{self.path.name}"

    def sources(self) -> list[tuple[str, Source]]:
        """(citation key, source) of this model and every model it is composed from."""
        found = [(self.source.key(), self.source)]
        found += [(s.key(), s) for s in self.additional_sources]
        for component in self.components.values():
            found += component.sources()
        return found

    def to_dataset(self):
        """The model's numbers as an xarray.Dataset with provenance attributes."""
        import xarray as xr

        if self.kind == "table":  # read through the checksum check, like the kernel
            data = self.catalogue.table(self.table)
            data.attrs = {f"table_{k}": v for k, v in data.attrs.items()}
        else:
            variables = {}
            for name, coef in self.coefficients.items():
                value = np.asarray(coef.value, dtype=float)
                dims = () if value.ndim == 0 else (f"{name}_index",)
                attrs = {"units": coef.units, "kernel_units": coef.kernel_units}
                if coef.uncertainty is not None:
                    attrs["uncertainty"] = _plain(coef.uncertainty)
                variables[name] = xr.Variable(dims, value, attrs)
            data = xr.Dataset(variables)
        data.attrs.update(
            {
                "quantity": self.quantity,
                "model": self.id,
                "title": self.name,
                "references": self.source.citation(),
                "obtained": self.obtained,
                "provenance": json.dumps(self.provenance(), ensure_ascii=False),
            }
        )
        return data

    # -- pickling (process pools, dask workers) and copying
    def __reduce__(self):
        # by name, re-bound on load from the catalogue at the same root (or the
        # receiver's installed data when this came from the default catalogue)
        return _rebind_model, (
            self.catalogue,
            self.quantity,
            self.id,
            self.sha256,
            dict(self.components),
            self.variant,
            self._table_digests(),
        )

    def _table_digests(self) -> dict[str, str]:
        """Table file name -> recorded sha256, for the tables this model reads."""
        if not self.tables or self.catalogue is None:
            return {}
        # (recorded by the folder that holds each table: an overlay's model may read a
        # table of the shipped data)
        return {
            name: self.catalogue.recorded(self.catalogue.table_path(name)) for name in self.tables
        }

    def __copy__(self):
        return self  # immutable

    def __deepcopy__(self, memo):
        return self

    def __repr__(self) -> str:
        ranges = ", ".join(str(r) for r in self.validity.values()) or "no limits"
        inputs = ", ".join(f"{k} [{u}]" for k, u in self.inputs.items()) or "none"
        return (
            f"<Model {self.quantity}/{self.id} ({self.kind}): {self.name}; "
            f"inputs {inputs}; valid {ranges}; {self.source.citation()}>"
        )


def _plain_extra(value):
    if hasattr(value, "as_dict"):  # a Coefficient, the fit conventions
        return value.as_dict()
    if isinstance(value, Mapping):
        return {k: _plain_extra(v) for k, v in value.items()}
    return value


def _rebind_model(
    catalogue: CatalogueLike,
    quantity: str,
    model_id: str,
    sha256: str,
    components: Mapping[str, Model],
    variant: str | None = None,
    tables: Mapping[str, str] | None = None,
) -> Model | Unusable:
    """Unpickle a model; never raises (see :class:`matprops.errors.Unusable`): a model
    whose file or tables differ here, or cannot be read, raises on its first use."""
    for part in (catalogue, *components.values()):
        if isinstance(part, Unusable):
            return Unusable(part.error, Model)
    try:
        model = catalogue.model(quantity, model_id)
        here: dict[str, tuple[Path, str | None, str]] = {
            "model file": (model.path, model.sha256, sha256)
        }
        for name, digest in (tables or {}).items():
            here[name] = (catalogue.table_path(name), model._table_digests().get(name), digest)
        for mine_path, mine, theirs in here.values():
            if mine != theirs:
                raise DatasetError(
                    mine_path,
                    f"has sha256 {mine or '(none)'} here but {theirs} where the model was "
                    "pickled: the two processes read different data",
                )
        if variant is not None:
            model = model.select(variant)
        return model.compose(**components) if components else model
    except Error as exc:
        return Unusable(exc, Model)


def report_violation(message: str, strict: bool = False, report=None) -> str:
    """Raise :class:`ValidityError` (strict), hand the message to ``report``, or warn
    (:class:`ValidityWarning`, attributed to the caller outside matprops); returns the
    message. Never touches the warning filters."""
    if strict:
        raise ValidityError(message)
    if report is not None:
        report(message)
    else:
        warn(message, ValidityWarning)
    return message


def _span(low, high) -> str:
    return f"{low:g}" if low == high else f"{low:g}-{high:g}"


def _replace(model: Model, **changes) -> Model:
    import dataclasses

    return dataclasses.replace(model, **changes)


@dataclass(frozen=True)
class Release:
    """A named bundle: one model per quantity, a status, a date, notes.

    An own release of an overlay catalogue names the release it builds on (``base``)
    and the models it chooses itself (``chosen``); ``models`` is the whole choice (the
    base's, then its own).
    """

    id: str
    status: str  # "draft" or "final"
    date: str
    notes: str
    models: Mapping[str, str]
    path: Path
    catalogue: CatalogueLike | None = field(default=None, repr=False, compare=False)
    # defaults of methods' options the release chooses (e.g. doping_from_resistivity)
    defaults: Mapping[str, str] = field(default_factory=dict)
    base: str | None = None
    chosen: Mapping[str, str] | None = field(default=None, compare=False)

    @property
    def final(self) -> bool:
        return self.status == "final"

    def chosen_by(self, quantity: str) -> str:
        """The id of the release whose file chose the model of a quantity: this one,
        or (for an own release) the base it inherits the choice from."""
        if self.base is None or quantity in (self.chosen or {}):
            return self.id
        if self.catalogue is None:
            return self.base
        return self.catalogue.release(self.base).chosen_by(quantity)

    def origin(self) -> dict:
        """Which release and catalogue this is (for provenance)."""
        record = {"release": self.id, "release_status": self.status}
        if self.base is not None:
            record["release_base"] = self.base
        describe = getattr(self.catalogue, "describe", None)
        if describe is not None:
            record["release_catalogue"] = describe()
        return record

    @property
    def reference_path(self) -> Path:
        return self.path.with_name(f"{self.id}.reference.json")

    def __reduce__(self):
        return _reload_release, (self.catalogue, self.id)

    def __copy__(self):
        return self  # immutable

    def __deepcopy__(self, memo):
        return self


def _reload_release(catalogue: CatalogueLike, release_id: str) -> Release | Unusable:
    if isinstance(catalogue, Unusable):
        return Unusable(catalogue.error, Release)
    try:
        return catalogue.release(release_id)
    except Error as exc:  # (never raise while unpickling: see errors.Unusable)
        return Unusable(exc, Release)
