"""The model catalogue: reads ``datasets/``, validates it, binds kernels to numbers.

A model file (``datasets/models/<quantity>/<model-id>.toml``) holds a published
model's coefficients with units, its source, its validity ranges and how its
numbers were obtained. This module checks each file against the checksum recorded
in ``datasets/checksums.sha256`` and against the units its kernel declares, converts
the coefficients to the kernel's internal units, and returns a :class:`Model`: a
plain-array callable with its provenance attached.

Three kinds of model share that shape:

``closed-form``
    a kernel plus scalar or vector coefficients;
``table``
    a kernel that interpolates a netCDF table (``datasets/tables/``), whose arrays
    are bound like coefficients (loaded with xarray on first use);
``composed``
    a kernel that combines other quantities' models (``requires``), bound when a
    material chooses those models.

Releases (``datasets/releases/<id>.toml``) name one model per quantity.
"""

from __future__ import annotations

import functools
import hashlib
import json
import os
import re
import threading
import tomllib
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from pathlib import Path
from types import MappingProxyType
from typing import Any

import numpy as np

from .errors import (
    ChecksumError,
    DatasetError,
    UnknownModelError,
    UnknownNameError,
    UnknownQuantityError,
    UnknownReleaseError,
    UnknownVariantError,
    ValidityError,
    ValidityWarning,
    warn,
)
from .kernels import module_for
from .regions import Region, parse_regions
from .schema import (
    KINDS,
    MODEL,
    RELEASE,
    THERMAL_VELOCITY_DEFINITIONS,
    VARIANT_AXES,
    validate,
)

__all__ = [
    "Catalog",
    "Coefficient",
    "Model",
    "Range",
    "Region",
    "Release",
    "Source",
    "catalog_at",
    "datasets_root",
    "default_catalog",
]

CHECKSUM_FILE = "checksums.sha256"
# folder -> suffixes of the data files in it, each covered by the checksum list
DATA_FILES = {"models": (".toml",), "tables": (".nc",), "releases": (".toml", ".json"),
              "scenarios": (".toml",), "defects": (".toml",)}
MODEL_ID = re.compile(r"^[a-z][a-z0-9]*(-[a-z0-9]+)*$")
RELEASE_ID = re.compile(r"^\d{4}\.\d+$")

# The netCDF/HDF5 library is not thread-safe: two threads opening files at once can
# crash the process. Every read of a table goes through this one (process-wide) lock;
# what is read is then kept in read-only arrays and never changes.
_TABLE_LOCK = threading.RLock()
SOURCE_FIELDS = ("authors", "year", "title", "journal", "volume", "pages", "doi")
# Required fields of each kind of source record (``type`` in the file; default "article").
SOURCE_TYPES = {
    "article": SOURCE_FIELDS,
    "book": ("authors", "year", "title", "publisher", "doi"),
}
BOOK_FIELDS = ("publisher", "edition", "address", "pages")


def datasets_root() -> Path:
    """Where the data live: $MATPROPS_DATASETS, the installed copy, or the checkout.

    A relative MATPROPS_DATASETS is resolved against the working folder of this
    call (the default catalogue calls it once, so a later ``chdir`` changes
    nothing); a value that is not a folder is a DatasetError saying so. An empty
    value counts as unset.
    """
    override = os.environ.get("MATPROPS_DATASETS", "")
    if override.strip():
        given = Path(override).expanduser()
        root = Path(os.path.abspath(given))
        if not root.is_dir():
            where = ("" if given.is_absolute() else
                     f", a relative path resolved against the working folder {os.getcwd()}")
            raise DatasetError(root, "datasets folder does not exist; set MATPROPS_DATASETS "
                               "to a matprops datasets folder (models/, tables/, releases/, "
                               "checksums.sha256), or unset it to use the installed data "
                               f"(MATPROPS_DATASETS={override!r}{where})")
        return root
    installed = Path(__file__).resolve().parent / "datasets"
    if installed.is_dir():
        return installed
    return Path(__file__).resolve().parent.parent / "datasets"


def sha256_of(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


# --------------------------------------------------------------------------- records


@dataclass(frozen=True)
class Source:
    """A bibliographic record of the publication a model comes from.

    ``type`` is ``"article"`` (journal, volume, pages) or ``"book"`` (publisher,
    optional edition, address and pages); it decides the BibTeX entry type.
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

    def citation(self) -> str:
        authors = ", ".join(self.authors)
        doi = f", doi:{self.doi}" if self.doi else ""
        if self.type == "book":
            edition = f", {self.edition} edition" if self.edition else ""
            place = f"{self.publisher}, {self.address}" if self.address else self.publisher
            pages = f", pp. {self.pages}" if self.pages else ""
            return f"{authors}, {self.title}{edition} ({place}, {self.year}){pages}{doi}"
        return (f"{authors}, \"{self.title}\", {self.journal} {self.volume}, "
                f"{self.pages} ({self.year}){doi}")

    def bibtex(self, key: str) -> str:
        def esc(text):
            return str(text).replace("{", "").replace("}", "")

        lines = [f"@{self.type}{{{key},",
                 f"  author = {{{' and '.join(esc(a) for a in self.authors)}}},",
                 f"  title = {{{{{esc(self.title)}}}}},"]
        if self.type == "book":
            fields = [("edition", self.edition), ("publisher", self.publisher),
                      ("address", self.address), ("pages", self.pages)]
        else:
            fields = [("journal", self.journal), ("volume", self.volume),
                      ("pages", self.pages)]
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
        record = {"type": self.type, "authors": list(self.authors), "year": self.year,
                  "title": self.title}
        if self.type == "book":
            record.update({k: getattr(self, k) for k in BOOK_FIELDS if getattr(self, k)})
        else:
            record.update({"journal": self.journal, "volume": self.volume,
                           "pages": self.pages})
        record["doi"] = self.doi
        return record


@dataclass(frozen=True)
class Coefficient:
    """A coefficient as printed (value, units, uncertainty) and in kernel units."""

    name: str
    value: float | tuple[float, ...]
    units: str
    uncertainty: float | tuple[float, ...] | None
    kernel_value: Any  # float or ndarray in the kernel's units
    kernel_units: str
    obtained: str | None = None  # this number's own origin, where it differs from the model's

    def as_dict(self) -> dict:
        record = {"value": _plain(self.value), "units": self.units}
        if self.uncertainty is not None:
            record["uncertainty"] = _plain(self.uncertainty)
        if self.obtained:
            record["obtained"] = self.obtained
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
    kernel: Callable
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
    # validity limits of one input that depend on another (see matprops.regions)
    regions: tuple[Region, ...] = ()

    def select(self, variant: str) -> Model:
        """The model bound to one coefficient set (a dopant species or a carrier)."""
        if self.variant == variant:
            return self
        if variant not in self.variants:
            if not self.variants:
                raise UnknownNameError(variant, [], f"for model {self.quantity}/{self.id}, "
                                       "which has a single coefficient set")
            raise UnknownVariantError(variant, self.variants,
                                      f"({self.variant_axis}) for model "
                                      f"{self.quantity}/{self.id}")
        return self.variants[variant]

    @property
    def tables(self) -> list[str]:
        """Files in ``datasets/tables/`` this model reads (sorted; empty if none)."""
        if not self.table:
            return []
        return sorted({self.table} | {ref.rpartition(":")[0] for ref in
                                      self.table_arguments.values() if ":" in ref})

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
        return self.kernel.spec.array_api and all(c.array_api
                                                  for c in self.components.values())

    @property
    def derivative(self):
        """The kernel's analytic derivatives bound to this model's coefficients:
        ``(**inputs) -> (value, {input: partial})``; None for a model without them."""
        function = getattr(self.kernel, "derivatives", None)
        if function is None or self.kind == "table" or (self.variants and
                                                         self.variant is None):
            return None
        if self.requires and not self.components:
            return None
        if any(c.derivative is None for c in self.components.values()):
            return None
        own = {c.name: c.kernel_value for c in self.coefficients.values()}
        return functools.partial(function, **own, **dict(self.components))

    def __call__(self, *args, **kwargs):
        if self.function is None and self.variants:
            raise UnknownVariantError("(none)", self.variants,
                                      f"({self.variant_axis}): model {self.quantity}/"
                                      f"{self.id} has one coefficient set per "
                                      f"{self.variant_axis}; choose one with .select()")
        if self.function is None:
            missing = [q for q in self.requires if q not in self.components]
            raise DatasetError(self.path, f"model {self.id!r} is composed from "
                               f"{', '.join(missing)}; bind them with .compose()")
        return self.function(*args, **kwargs)

    def compose(self, **components: Model) -> Model:
        """Bind the models this composed model requires (e.g. band_gap=...)."""
        missing = [q for q in self.requires if q not in components]
        if missing:
            raise DatasetError(self.path, f"composed model {self.id!r} needs "
                               f"{', '.join(missing)}")
        chosen = {q: components[q] for q in self.requires}
        own = {c.name: c.kernel_value for c in self.coefficients.values()}
        function = functools.partial(self.kernel, **own, **chosen)
        return _replace(self, components=MappingProxyType(chosen), function=function)

    def check(self, argument: str, low: float, high: float, strict: bool = False) -> None:
        """Warn (or raise, if strict) when [low, high] leaves the validity range."""
        rng = self.validity.get(argument)
        if rng is not None and (low < rng.low or high > rng.high):
            consequence = ("the value is NaN where its table has no data and "
                           "unvalidated elsewhere" if self.kind == "table"
                           else "the value is an extrapolation")
            message = (f"model {self.quantity}/{self.id}: {argument} "
                       f"{_span(low, high)} {rng.units} is outside its validity range "
                       f"{rng.low:g}-{rng.high:g} {rng.units}; {consequence}")
            if self.fallback:
                message += (f"; the model {self.fallback!r} covers a wider range "
                            f"(models={{{self.quantity!r}: {self.fallback!r}}})")
            if strict:
                raise ValidityError(message)
            warn(message, ValidityWarning)
        for component in self.components.values():
            component.check(argument, low, high, strict)

    def check_regions(self, values: Mapping[str, Any], strict: bool = False,
                      ranges: Mapping[str, tuple[float, float]] | None = None) -> None:
        """Warn (or raise) where inputs leave a validity region of several inputs.

        ``values`` maps input names to arrays in kernel units (broadcast together);
        ``ranges``, input -> (min, max) where known, spare a pass over the points when
        the extremes already show every point inside.
        """
        for region in self.regions:
            message = region.violation(values, f"{self.quantity}/{self.id}", ranges)
            if message is None:
                continue
            if strict:
                raise ValidityError(message)
            warn(message, ValidityWarning)

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
            "validity": {k: {"min": r.low, "max": r.high, "units": r.units}
                         for k, r in self.validity.items()},
            "validity_regions": [r.as_dict() for r in self.regions],
            "obtained": self.obtained,
            "notes": self.notes,
            "coefficients": {k: c.as_dict() for k, c in self.coefficients.items()},
            "file": f"models/{self.quantity}/{self.path.name}",
            "sha256": self.sha256,
        }
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
                record["variants"] = {name: {k: c.as_dict() for k, c in
                                             m.coefficients.items()
                                             if k not in self.coefficients}
                                      for name, m in self.variants.items()}
        for key, value in self.extra.items():
            record[key] = _plain_extra(value)
        return record

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
            data = catalog_at(self.path.parent.parent.parent).table(self.table)
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
        data.attrs.update({
            "quantity": self.quantity, "model": self.id, "title": self.name,
            "references": self.source.citation(), "obtained": self.obtained,
            "provenance": json.dumps(self.provenance(), ensure_ascii=False),
        })
        return data

    # -- pickling (process pools, dask workers) and copying
    def __reduce__(self):
        # by name, re-bound on load from the catalogue at the same root (or the
        # receiver's installed data when this came from the default catalogue)
        return _rebind_model, (catalog_at(self.path.parent.parent.parent), self.quantity,
                               self.id, self.sha256, dict(self.components), self.variant)

    def __copy__(self):
        return self  # immutable

    def __deepcopy__(self, memo):
        return self

    def __repr__(self) -> str:
        ranges = ", ".join(str(r) for r in self.validity.values()) or "no limits"
        inputs = ", ".join(f"{k} [{u}]" for k, u in self.inputs.items()) or "none"
        return (f"<Model {self.quantity}/{self.id} ({self.kind}): {self.name}; "
                f"inputs {inputs}; valid {ranges}; {self.source.citation()}>")


def _plain_extra(value):
    if isinstance(value, Coefficient):
        return value.as_dict()
    if isinstance(value, Mapping):
        return {k: _plain_extra(v) for k, v in value.items()}
    return value


def _rebind_model(catalog: Catalog, quantity: str, model_id: str, sha256: str,
                  components: Mapping[str, Model], variant: str | None = None) -> Model:
    model = catalog.model(quantity, model_id)
    if model.sha256 != sha256:
        raise DatasetError(model.path, f"has sha256 {model.sha256} here but {sha256} where "
                           "the model was pickled: the two processes read different data")
    if variant is not None:
        model = model.select(variant)
    return model.compose(**components) if components else model


def _span(low, high) -> str:
    return f"{low:g}" if low == high else f"{low:g}-{high:g}"


def _replace(model: Model, **changes) -> Model:
    import dataclasses
    return dataclasses.replace(model, **changes)


@dataclass(frozen=True)
class Release:
    """A named bundle: one model per quantity, a status, a date, notes."""

    id: str
    status: str  # "draft" or "final"
    date: str
    notes: str
    models: Mapping[str, str]
    path: Path

    @property
    def final(self) -> bool:
        return self.status == "final"

    @property
    def reference_path(self) -> Path:
        return self.path.with_name(f"{self.id}.reference.json")

    def __reduce__(self):
        return _reload_release, (catalog_at(self.path.parent.parent), self.id)

    def __copy__(self):
        return self  # immutable

    def __deepcopy__(self, memo):
        return self


def _reload_release(catalog: Catalog, release_id: str) -> Release:
    return catalog.release(release_id)


# --------------------------------------------------------------------------- loading


def _open_table(name: str, data: bytes):
    """An in-memory netCDF file (already verified) as a loaded xarray.Dataset."""
    import netCDF4
    import xarray as xr

    with _TABLE_LOCK:
        handle = netCDF4.Dataset(name, mode="r", memory=data)
        try:
            with xr.open_dataset(xr.backends.NetCDF4DataStore(handle)) as opened:
                return opened.load()  # closing the store closes the handle
        finally:
            if handle.isopen():
                handle.close()


def _read_only(value):
    """Freeze an array that a bound model shares between threads."""
    if isinstance(value, np.ndarray):
        value.flags.writeable = False
    return value


_UDUNITS_POWER = re.compile(r"([A-Za-z]+)(-?\d+)")


def udunits_to_pint(text: str) -> str:
    """Translate a UDUNITS string (``cm-3``, ``cm2 V-1 s-1``) to pint's grammar."""
    text = text.strip()
    if text in ("", "1"):
        return "dimensionless"
    return "*".join(_UDUNITS_POWER.sub(r"\1^\2", part) for part in text.split())


class Catalog:
    """The models, tables and releases found under one ``datasets/`` folder."""

    def __init__(self, root: Path | str | None = None):
        # absolute once, so a later change of working folder changes nothing
        self.root = Path(os.path.abspath(root)) if root is not None else datasets_root()
        self._models: dict[tuple[str, str], Model] = {}
        self._checksums: dict[str, str] | None = None
        self._lock = threading.RLock()  # models are built once, even from many threads

    def __reduce__(self):
        # a catalogue pickles as its root; the default one as "the receiver's default",
        # so a worker on another machine reads its own installed copy
        default = bool(_DEFAULT) and self is _DEFAULT[0]
        return catalog_at, (None if default else str(self.root),)

    def __copy__(self):
        return self  # a cache of immutable records: one per root is enough

    def __deepcopy__(self, memo):
        return self

    # -- listing
    def _folder(self, name: str) -> Path:
        folder = self.root / name
        if not folder.is_dir():
            origin = (" (set by MATPROPS_DATASETS)"
                      if os.environ.get("MATPROPS_DATASETS", "").strip() else "")
            raise DatasetError(folder, f"folder is missing: {self.root}{origin} is not a "
                               "matprops datasets folder")
        return folder

    def quantities(self) -> list[str]:
        return sorted(p.name for p in self._folder("models").iterdir() if p.is_dir())

    def model_ids(self, quantity: str) -> list[str]:
        if quantity not in self.quantities():
            raise UnknownQuantityError(quantity, self.quantities())
        return sorted(p.stem for p in (self.root / "models" / quantity).glob("*.toml"))

    def release_ids(self) -> list[str]:
        ids = [p.stem for p in self._folder("releases").glob("*.toml")
               if RELEASE_ID.match(p.stem)]
        return sorted(ids, key=lambda r: tuple(int(x) for x in r.split(".")))

    def newest_release_id(self) -> str:
        """The newest release's id; a DatasetError when there is none."""
        ids = self.release_ids()
        if not ids:
            raise DatasetError(self.root / "releases", "no release file (<YYYY.N>.toml) in "
                               "this folder; a release names the model of each quantity")
        return ids[-1]

    # -- checksums
    def checksums(self) -> dict[str, str]:
        with self._lock:
            return self._read_checksums()

    def _read_checksums(self) -> dict[str, str]:
        if self._checksums is None:
            path = self.root / CHECKSUM_FILE
            if not path.is_file():
                raise DatasetError(path, "checksum list is missing; refusing to load data")
            sums = {}
            for number, line in enumerate(path.read_text().splitlines(), 1):
                if not line.strip() or line.startswith("#"):
                    continue
                parts = line.split(maxsplit=1)
                if len(parts) != 2 or len(parts[0]) != 64:
                    raise DatasetError(path, f"line {number} is not '<sha256>  <path>'")
                sums[parts[1].strip()] = parts[0]
            self._checksums = sums
        return self._checksums

    def verified_bytes(self, path: Path) -> bytes:
        """Read a dataset file, refusing it if its sha256 differs from the record."""
        relative = path.relative_to(self.root).as_posix()
        recorded = self.checksums().get(relative)
        if recorded is None:
            raise ChecksumError(path, f"no checksum recorded in {CHECKSUM_FILE}; "
                                "refusing to load an unlisted file")
        try:
            data = path.read_bytes()
        except OSError as exc:
            raise DatasetError(path, f"cannot be read ({exc.strerror or exc}); it is "
                               f"listed in {CHECKSUM_FILE}") from exc
        actual = hashlib.sha256(data).hexdigest()
        if actual != recorded:
            raise ChecksumError(path, f"sha256 {actual} does not match the recorded "
                                f"{recorded}; the file was changed or corrupted. "
                                "Refusing to load it.")
        return data

    def data_files(self) -> list[str]:
        """Every data file under the root (relative paths): the files the checksum
        list must cover."""
        found = []
        for sub, suffixes in DATA_FILES.items():
            found += [path.relative_to(self.root).as_posix()
                      for path in sorted((self.root / sub).rglob("*"))
                      if path.is_file() and path.suffix in suffixes]
        return found

    def write_checksums(self) -> Path:
        """Record the sha256 of every data file (see :meth:`data_files`)."""
        lines = ["# sha256 of every dataset file; loaders refuse files that differ.",
                 ("# Regenerate after a deliberate change: python -m matprops.catalog "
                  "--update-checksums")]
        for relative in self.data_files():
            lines.append(f"{sha256_of(self.root / relative)}  {relative}")
        target = self.root / CHECKSUM_FILE
        _atomic_write_text(target, "\n".join(lines) + "\n")
        self._checksums = None
        return target

    # -- models
    def model(self, quantity: str, model_id: str) -> Model:
        key = (quantity, model_id)
        model = self._models.get(key)
        if model is not None:
            return model
        with self._lock:
            if key not in self._models:
                known = self.model_ids(quantity)
                if model_id not in known:
                    raise UnknownModelError(model_id, known, f"for quantity {quantity!r}")
                self._models[key] = self._load_model(
                    self.root / "models" / quantity / f"{model_id}.toml")
            return self._models[key]

    def _load_model(self, path: Path) -> Model:
        raw = self.verified_bytes(path)
        data = _parse_toml(path, raw)
        validate(path, data, MODEL)
        return _build_model(path, data, self)

    # -- releases
    def release(self, release_id: str) -> Release:
        known = self.release_ids()
        if release_id not in known:
            raise UnknownReleaseError(release_id, known)
        path = self.root / "releases" / f"{release_id}.toml"
        data = _parse_toml(path, self.verified_bytes(path))
        validate(path, data, RELEASE)
        if data["release"] != release_id:
            raise DatasetError(path, f"field 'release' is {data['release']!r}, "
                               f"the file name says {release_id!r}")
        return Release(release_id, data["status"], str(data["date"]), data["notes"],
                       MappingProxyType(dict(data["models"])), path)

    def table_path(self, name: str) -> Path:
        path = self.root / "tables" / name
        if not path.is_file():
            raise DatasetError(path, "table file is missing")
        return path

    def table(self, name: str):
        """A verified netCDF table from ``datasets/tables/`` as an xarray.Dataset
        (read from the checked bytes themselves: no window between check and read)."""
        path = self.table_path(name)
        return _open_table(path.name, self.verified_bytes(path))

    # -- scenarios (invented demonstration data)
    def scenario_names(self) -> list[str]:
        return sorted(p.stem for p in (self.root / "scenarios").glob("*.toml"))

    def scenario(self, name: str) -> dict:
        """A verified, schema-checked scenario file from ``datasets/scenarios/``."""
        from .errors import UnknownNameError
        from .schema import SCENARIO

        known = self.scenario_names()
        if name not in known:
            raise UnknownNameError(name, known, "among the scenarios")
        path = self.root / "scenarios" / f"{name}.toml"
        data = _parse_toml(path, self.verified_bytes(path))
        validate(path, data, SCENARIO)
        return data

    def table_arrays(self, name: str) -> dict[str, tuple[np.ndarray, str]]:
        """Variables of a verified table as ``{name: (values, UDUNITS units)}``.

        Reads the checked bytes themselves with netCDF4 (cheaper to import than
        xarray, and no window between the check and the read).
        """
        import netCDF4

        path = self.table_path(name)
        data = self.verified_bytes(path)
        with _TABLE_LOCK, netCDF4.Dataset(path.name, mode="r", memory=data) as handle:
            return {key: (_read_only(np.array(var[:], dtype=float)),
                          str(getattr(var, "units", "1")))
                    for key, var in handle.variables.items()}


def _parse_toml(path: Path, raw: bytes) -> dict:
    try:
        return tomllib.loads(raw.decode("utf-8"))
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise DatasetError(path, f"not valid TOML: {exc}") from exc


def _atomic_write_text(target: Path, text: str) -> None:
    """Write through a temporary file and a rename; a folder that cannot be written
    (a read-only install) is a DatasetError saying so, not an OSError traceback."""
    tmp = target.with_name(f".{target.name}.tmp-{os.getpid()}")
    try:
        tmp.write_text(text)
        os.replace(tmp, target)
    except OSError as exc:
        try:
            tmp.unlink(missing_ok=True)
        except OSError:
            pass
        raise DatasetError(target, f"cannot be written ({exc.strerror or exc}): this "
                           "command changes the datasets folder itself, which is read-only "
                           "here (an installed copy?); run it in a writable checkout, or "
                           "on a writable copy (--root or MATPROPS_DATASETS)") from exc


# --------------------------------------------------------------------------- validation


def _require(path, data: Mapping, name: str, kind=None, where: str = ""):
    if name not in data:
        raise DatasetError(path, f"missing required field {where}{name!r}")
    value = data[name]
    if kind is not None and not isinstance(value, kind):
        raise DatasetError(path, f"field {where}{name!r} must be {kind.__name__ if isinstance(kind, type) else kind}, "
                           f"got {value!r}")
    return value


def _convert(path, where: str, value, units: str, target: str):
    """Convert value (float or list) from ``units`` to ``target`` with pint."""
    import pint

    from .units import Q_, unit

    try:
        source_unit = unit(units)
    except Exception as exc:
        raise DatasetError(path, f"{where}: units {units!r} do not parse") from exc
    target_unit = unit(target)
    if source_unit.dimensionality != target_unit.dimensionality:
        raise DatasetError(path, f"{where}: units {units!r} have dimension "
                           f"{source_unit.dimensionality}, expected {target!r} "
                           f"({target_unit.dimensionality})")
    array = np.asarray(value, dtype=float)
    try:
        converted = Q_(array, source_unit).m_as(target_unit)
    except pint.PintError as exc:  # pragma: no cover - dimension checked above
        raise DatasetError(path, f"{where}: cannot convert {units!r} to {target!r}") from exc
    return float(converted) if np.ndim(converted) == 0 else _read_only(np.array(converted))


def _number_or_list(path, where, value):
    if isinstance(value, bool):
        raise DatasetError(path, f"{where} must be a number or list of numbers, got {value!r}")
    if isinstance(value, (int, float)):
        return float(value)
    if isinstance(value, list) and value and all(
            isinstance(v, (int, float)) and not isinstance(v, bool) for v in value):
        return tuple(float(v) for v in value)
    raise DatasetError(path, f"{where} must be a number or list of numbers, got {value!r}")


def _resolve_kernel(path, reference: str):
    module_name, _, function_name = reference.rpartition(".")
    if not module_name:
        raise DatasetError(path, f"field 'kernel' must be '<module>.<function>', "
                           f"got {reference!r}")
    try:
        module = module_for(module_name)
    except ModuleNotFoundError as exc:
        raise DatasetError(path, f"field 'kernel': no kernel module {module_name!r}") from exc
    function = getattr(module, function_name, None)
    if function is None or not hasattr(function, "spec"):
        raise DatasetError(path, f"field 'kernel': {reference!r} is not a declared kernel")
    return function


def sources_of(path, data) -> tuple[Source, tuple[Source, ...]]:
    """A data file's ``source`` and ``additional_sources`` records."""
    source = _source(path, _require(path, data, "source", dict), "source.")
    additional = data.get("additional_sources", [])
    if not isinstance(additional, list):
        raise DatasetError(path, "field 'additional_sources' must be a list of sources")
    return source, tuple(_source(path, entry, f"additional_sources[{i}].")
                         for i, entry in enumerate(additional))


def _source(path, src, where: str) -> Source:
    if not isinstance(src, dict):
        raise DatasetError(path, f"{where.rstrip('.')} must be a table of source fields")
    kind = src.get("type", "article")
    if kind not in SOURCE_TYPES:
        raise DatasetError(path, f"field '{where}type' must be one of "
                           f"{', '.join(SOURCE_TYPES)}, got {kind!r}")
    for f in SOURCE_TYPES[kind]:
        _require(path, src, f, where=where)
    authors = src["authors"]
    if not isinstance(authors, list) or not authors:
        raise DatasetError(path, f"field '{where}authors' must be a non-empty list")
    if kind == "book":
        return Source(tuple(authors), int(src["year"]), str(src["title"]), "", "",
                      str(src.get("pages", "")), str(src["doi"]), type="book",
                      publisher=str(src["publisher"]), edition=str(src.get("edition", "")),
                      address=str(src.get("address", "")))
    return Source(tuple(authors), int(src["year"]), str(src["title"]), str(src["journal"]),
                  str(src["volume"]), str(src["pages"]), str(src["doi"]))


def _build_model(path: Path, data: Mapping, catalog: Catalog) -> Model:
    quantity = path.parent.name
    model_id = _require(path, data, "id", str)
    if model_id != path.stem:
        raise DatasetError(path, f"field 'id' is {model_id!r}, the file name says {path.stem!r}")
    if not MODEL_ID.match(model_id):
        raise DatasetError(path, f"field 'id' {model_id!r} is not lower-case "
                           "'firstauthor-year' form")
    if _require(path, data, "quantity", str) != quantity:
        raise DatasetError(path, f"field 'quantity' is {data['quantity']!r}, "
                           f"the folder says {quantity!r}")
    name = _require(path, data, "name", str)
    kind = _require(path, data, "kind", str)
    if kind not in KINDS:
        raise DatasetError(path, f"field 'kind' must be one of {', '.join(KINDS)}, got {kind!r}")
    obtained = _require(path, data, "obtained", str)
    if not obtained.strip():
        raise DatasetError(path, "field 'obtained' must say how the numbers were obtained")
    notes = data.get("notes", "")
    kernel = _resolve_kernel(path, _require(path, data, "kernel", str))
    spec = kernel.spec

    source, additional_sources = sources_of(path, data)
    fallback = data.get("fallback")
    if fallback is not None and fallback not in catalog.model_ids(quantity):
        raise DatasetError(path, f"field 'fallback': no model {fallback!r} for {quantity!r}")

    validity = _validity(path, data.get("validity", {}), spec, "validity")

    table = None
    table_arguments: dict[str, str] = {}
    if kind == "table":
        table = _require(path, data, "table", str)
        table_arguments = dict(_require(path, data, "table_arguments", dict))
    shared = _coefficients(path, data.get("coefficients", {}), spec, "coefficients",
                           data["kernel"], table_arguments)
    raw_variants = data.get("variants")
    variant_axis = data.get("variant_axis")
    if (raw_variants is None) != (variant_axis is None):
        raise DatasetError(path, "fields 'variant_axis' and 'variants' go together")
    if variant_axis is not None and variant_axis not in VARIANT_AXES:
        raise DatasetError(path, f"field 'variant_axis' must be one of "
                           f"{', '.join(VARIANT_AXES)}, got {variant_axis!r}")

    requires = tuple(spec.requires)
    if kind == "composed" and not requires:
        raise DatasetError(path, f"kind 'composed' needs a kernel that requires other "
                           f"quantities; {data['kernel']!r} requires none")
    extra = _extra_sections(path, quantity, data)
    common = dict(quantity=quantity, id=model_id, name=name, kind=kind, kernel=kernel,  # noqa: C408
                  source=source, obtained=obtained, notes=notes, path=path,
                  sha256=catalog.checksums().get(path.relative_to(catalog.root).as_posix(), ""),
                  requires=requires, additional_sources=additional_sources,
                  fallback=fallback, table=table,
                  table_arguments=MappingProxyType(table_arguments),
                  variant_axis=variant_axis, extra=MappingProxyType(extra),
                  regions=parse_regions(path, data, spec))

    def bind(coefficients, kernel=kernel, kernel_name=data["kernel"]):
        _check_complete(path, kernel_name, kernel.spec,
                        set(coefficients) | set(table_arguments))
        bound = {c.name: c.kernel_value for c in coefficients.values()}
        if kind == "table":
            return _TableFunction(catalog, path, kernel, table, table_arguments, bound)
        return None if requires else functools.partial(kernel, **bound)

    if raw_variants is None:
        return Model(**common, coefficients=MappingProxyType(shared),
                     validity=MappingProxyType(validity), function=bind(shared))

    if not isinstance(raw_variants, dict) or not raw_variants:
        raise DatasetError(path, "field 'variants' must hold one table per variant")
    variants = {}
    for variant, entry in raw_variants.items():
        where = f"variants.{variant}"
        if not isinstance(entry, dict):
            raise DatasetError(path, f"{where} must be a table")
        unknown = set(entry) - {"coefficients", "validity", "obtained", "kernel"}
        if unknown:
            raise DatasetError(path, f"{where}: unknown field(s) {sorted(unknown)} "
                               "(allowed: coefficients, validity, obtained, kernel)")
        # a variant may have an equation form of its own (e.g. a standard that gives
        # boron and phosphorus different forms), with the same inputs and output
        variant_kernel, kernel_name = kernel, data["kernel"]
        if "kernel" in entry:
            kernel_name = _require(path, entry, "kernel", str, where=where + ".")
            variant_kernel = _resolve_kernel(path, kernel_name)
            if (dict(variant_kernel.spec.inputs) != dict(spec.inputs)
                    or variant_kernel.spec.output != spec.output
                    or variant_kernel.spec.requires != spec.requires):
                raise DatasetError(path, f"{where}.kernel {kernel_name!r} must take the same "
                                   f"inputs and give the same output as {data['kernel']!r}")
        own = _coefficients(path, entry.get("coefficients", {}), variant_kernel.spec,
                            f"{where}.coefficients", kernel_name,
                            set(shared) | set(table_arguments))
        overlap = sorted(set(own) & set(shared))
        if overlap:
            raise DatasetError(path, f"{where}: {overlap} also given in [coefficients]")
        merged = {**shared, **own}
        ranges = {**validity, **_validity(path, entry.get("validity", {}), spec,
                                          f"{where}.validity")}
        variant_obtained = entry.get("obtained")
        variants[variant] = Model(
            **{**common, "kernel": variant_kernel,
               "obtained": obtained + (f"\n{variant}: {variant_obtained}"
                                       if variant_obtained else "")},
            coefficients=MappingProxyType(merged), validity=MappingProxyType(ranges),
            function=bind(merged, variant_kernel, kernel_name), variant=variant)
    parent = Model(**common, coefficients=MappingProxyType(shared),
                   validity=MappingProxyType(validity), function=None)
    frozen = MappingProxyType(variants)
    object.__setattr__(parent, "variants", frozen)
    for model in variants.values():
        object.__setattr__(model, "variants", frozen)
    return parent


def _validity(path, raw, spec, prefix) -> dict[str, Range]:
    validity = {}
    if not isinstance(raw, dict):
        raise DatasetError(path, f"{prefix} must be a table of ranges")
    for argument, entry in raw.items():
        where = f"{prefix}.{argument}"
        if argument not in spec.inputs:
            raise DatasetError(path, f"{where}: the kernel has no input {argument!r} "
                               f"(inputs: {', '.join(spec.inputs) or 'none'})")
        for f in ("min", "max", "units"):
            _require(path, entry, f, where=where + ".")
        low = _convert(path, where, entry["min"], entry["units"], spec.inputs[argument])
        high = _convert(path, where, entry["max"], entry["units"], spec.inputs[argument])
        if not low < high:
            raise DatasetError(path, f"{where}: min must be below max")
        validity[argument] = Range(argument, low, high, spec.inputs[argument])
    return validity


def _coefficient(path, where: str, entry, target_units: str) -> Coefficient:
    if not isinstance(entry, dict):
        raise DatasetError(path, f"{where} must be a table with value and units")
    value = _number_or_list(path, where + ".value",
                            _require(path, entry, "value", where=where + "."))
    units = _require(path, entry, "units", str, where=where + ".")
    uncertainty = entry.get("uncertainty")
    if uncertainty is not None:
        uncertainty = _number_or_list(path, where + ".uncertainty", uncertainty)
    origin = entry.get("obtained")
    if origin is not None and not (isinstance(origin, str) and origin.strip()):
        raise DatasetError(path, f"{where}.obtained must be a non-empty string")
    kernel_value = _convert(path, where, value, units, target_units)
    return Coefficient(where.rpartition(".")[2], value, units, uncertainty, kernel_value,
                       target_units, origin)


def _coefficients(path, raw, spec, prefix, kernel_name, also=()) -> dict[str, Coefficient]:
    """Parse a coefficient table; ``also`` are names supplied elsewhere in the file."""
    if not isinstance(raw, dict):
        raise DatasetError(path, f"{prefix} must be a table of coefficients")
    if set(raw) - set(spec.coefficients):
        _check_complete(path, kernel_name, spec, set(raw) | set(also))
    return {name: _coefficient(path, f"{prefix}.{name}", entry, spec.coefficients[name])
            for name, entry in raw.items()}


def _check_complete(path, kernel_name, spec, supplied) -> None:
    expected = set(spec.coefficients)
    if supplied != expected:
        missing, extra = sorted(expected - supplied), sorted(supplied - expected)
        raise DatasetError(path, "coefficients do not match kernel "
                           f"{kernel_name!r}: missing {missing or 'none'}, "
                           f"unexpected {extra or 'none'}")


# Sections a model file may carry for its quantity only, each checked by a function.
def _narrowing_section(path, entry) -> dict:
    where = "narrowing"
    if not isinstance(entry, dict):
        raise DatasetError(path, f"{where} must be a table")
    unknown = set(entry) - {"type", "statistics", "intrinsic_density", "split"}
    if unknown:
        raise DatasetError(path, f"{where}: unknown field(s) {sorted(unknown)}")
    kind = _require(path, entry, "type", str, where=where + ".")
    if kind not in ("apparent", "physical"):
        raise DatasetError(path, f"{where}.type must be 'apparent' or 'physical', got {kind!r}")
    statistics = _require(path, entry, "statistics", str, where=where + ".")
    if statistics not in ("boltzmann", "fermi-dirac"):
        raise DatasetError(path, f"{where}.statistics must be 'boltzmann' or 'fermi-dirac'")
    record = {"type": kind, "statistics": statistics,
              "split": _require(path, entry, "split", str, where=where + ".")}
    if kind == "apparent":
        density = _require(path, entry, "intrinsic_density", dict, where=where + ".")
        temperature = _require(path, density, "temperature", where=where + ".intrinsic_density.")
        coefficient = _coefficient(path, f"{where}.intrinsic_density",
                                   {k: v for k, v in density.items() if k != "temperature"},
                                   "cm^-3")
        record["intrinsic_density"] = coefficient
        record["intrinsic_density_temperature"] = _convert(
            path, f"{where}.intrinsic_density.temperature", temperature, "K", "K")
    elif "intrinsic_density" in entry:
        raise DatasetError(path, f"{where}.intrinsic_density belongs to apparent narrowings")
    return record


def _dopant_densities(path, value) -> str:
    if value not in ("total", "ionised"):
        raise DatasetError(path, f"field 'dopant_densities' must be 'total' or 'ionised', "
                           f"got {value!r}")
    return value


def _fit_section(path, entry) -> dict:
    """What an intrinsic-lifetime model was fitted with (its radiative term, intrinsic
    density and narrowing), so that the material composes it consistently."""
    where = "fit"
    if not isinstance(entry, dict):
        raise DatasetError(path, f"{where} must be a table")
    unknown = set(entry) - {"radiative", "intrinsic_density", "gap_narrowing"}
    if unknown:
        raise DatasetError(path, f"{where}: unknown field(s) {sorted(unknown)}")
    record = {"radiative": _require(path, entry, "radiative", str, where=where + "."),
              "gap_narrowing": _require(path, entry, "gap_narrowing", str,
                                        where=where + ".")}
    density = entry.get("intrinsic_density")
    if density is not None:
        if not isinstance(density, dict):
            raise DatasetError(path, f"{where}.intrinsic_density must be a table")
        temperature = _require(path, density, "temperature",
                               where=where + ".intrinsic_density.")
        record["intrinsic_density"] = _coefficient(
            path, f"{where}.intrinsic_density",
            {k: v for k, v in density.items() if k != "temperature"}, "cm^-3")
        record["intrinsic_density_temperature"] = _convert(
            path, f"{where}.intrinsic_density.temperature", temperature, "K", "K")
    return record


def _velocity_definition(path, value) -> str:
    if value not in THERMAL_VELOCITY_DEFINITIONS:
        raise DatasetError(path, "field 'definition' must be one of "
                           f"{', '.join(map(repr, THERMAL_VELOCITY_DEFINITIONS))}, "
                           f"got {value!r}")
    return value


# (A thermal velocity is either the mean speed sqrt(8kT/(pi m)) or the root-mean-square
# speed sqrt(3kT/m), sqrt(3 pi/8) = 1.085 apart, so every such model says which.)
QUANTITY_SECTIONS = {
    "gap_narrowing": {"narrowing": _narrowing_section},
    "intrinsic_lifetime": {"fit": _fit_section},
    "mobility": {"dopant_densities": _dopant_densities},
    "thermal_velocity": {"definition": _velocity_definition},
}


def _extra_sections(path, quantity, data) -> dict:
    allowed = QUANTITY_SECTIONS.get(quantity, {})
    found = {}
    for key, check in allowed.items():
        if key not in data:
            raise DatasetError(path, f"missing required field {key!r} for a "
                               f"{quantity} model")
        found[key] = check(path, data[key])
    return found


class _TableFunction:
    """A table kernel whose arrays are read (and checked) on first call.

    ``table_arguments`` maps a kernel coefficient to a variable of the model's
    table, or to ``"<other table file>:<variable>"`` for a model that combines
    two tables.
    """

    def __init__(self, catalog, path, kernel, table, table_arguments, bound):
        self._catalog, self._path, self._kernel = catalog, path, kernel
        self._table, self._arguments, self._bound = table, table_arguments, bound
        self._function = None
        self._lock = threading.Lock()

    def _load(self):
        with self._lock:  # the first callers wait for one load; later calls take no lock
            if self._function is None:
                self._function = self._read_tables()
        return self._function

    def _read_tables(self):
        spec = self._kernel.spec
        arrays, opened = {}, {}
        for argument, reference in self._arguments.items():
            table, _, variable = reference.rpartition(":")
            table = table or self._table
            if table not in opened:
                opened[table] = self._catalog.table_arrays(table)
            data = opened[table]
            where = f"table {table}, variable {variable!r}"
            if variable not in data:
                raise DatasetError(self._path, f"{where} does not exist "
                                   f"(has: {', '.join(data)})")
            values, units = data[variable]
            arrays[argument] = _convert(self._path, where, values, udunits_to_pint(units),
                                        spec.coefficients[argument])
        prepare = getattr(self._kernel, "prepare", None)
        if prepare is not None:  # the same function, prepared once for fast evaluation
            return prepare(**self._bound, **arrays)
        return functools.partial(self._kernel, **self._bound, **arrays)

    @property
    def blocks_itself(self) -> bool:
        """Whether the prepared table evaluates large inputs in blocks of its own."""
        return hasattr(self._kernel, "prepare")

    def __call__(self, *args, **kwargs):
        function = self._function or self._load()
        return function(*args, **kwargs)


_DEFAULT: list[Catalog] = []
_DEFAULT_LOCK = threading.Lock()


def default_catalog() -> Catalog:
    """The catalogue of the installed datasets (created once, on first use)."""
    if not _DEFAULT:
        with _DEFAULT_LOCK:
            if not _DEFAULT:
                _DEFAULT.append(Catalog())
    return _DEFAULT[0]


def _forget_default() -> None:
    """Drop the default catalogue (tests that change MATPROPS_DATASETS call this)."""
    with _DEFAULT_LOCK:
        _DEFAULT.clear()


default_catalog.cache_clear = _forget_default  # the name functools.lru_cache gives it


_CATALOGS: dict[Path, Catalog] = {}


def catalog_at(root: Path | str | None) -> Catalog:
    """The shared catalogue of a datasets folder (the default one for ``None``).

    Unpickled models and materials find their catalogue here, so a worker reads and
    checks each file once however many objects it receives.
    """
    if root is None:
        return default_catalog()
    root = Path(root)
    with _DEFAULT_LOCK:
        if _DEFAULT and _DEFAULT[0].root == root:
            return _DEFAULT[0]
        if root not in _CATALOGS:
            _CATALOGS[root] = Catalog(root)
        return _CATALOGS[root]


def main(argv=None) -> int:
    """Developer tool: ``python -m matprops.catalog [--update-checksums]``.

    Checks every data file (see :func:`matprops.integrity.check`); exit status 1 when
    anything is wrong.
    """
    import argparse
    import sys

    from .errors import Error
    from .integrity import check

    parser = argparse.ArgumentParser(prog="python -m matprops.catalog",
                                     description="Check or re-record dataset checksums.")
    parser.add_argument("--update-checksums", action="store_true",
                        help="record the sha256 of every dataset file (after a deliberate change)")
    parser.add_argument("--root", type=Path, default=None, help="datasets folder")
    args = parser.parse_args(argv)
    try:
        catalog = Catalog(args.root)
        if args.update_checksums:
            print(f"wrote {catalog.write_checksums()}")
    except Error as exc:  # e.g. a read-only install, MATPROPS_DATASETS pointing nowhere
        print(f"error: {exc}", file=sys.stderr)
        return 2
    problems, checked = check(catalog)
    for problem in problems:
        print(f"error: {problem}")
    print(f"{catalog.root}: all {checked} dataset files verified" if not problems
          else f"{len(problems)} problem(s) in {catalog.root}")
    return 1 if problems else 0


if __name__ == "__main__":
    raise SystemExit(main())
