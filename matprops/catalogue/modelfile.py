"""Model files -> :class:`~.records.Model`: field checks, unit conversion, binding.

A model file (``datasets/models/<quantity>/<model-id>.toml``) is checked against
the strict schema (:mod:`matprops.catalogue.schema`) and against the units its kernel
declares; its coefficients are converted to the kernel's internal units and bound to
the kernel (per variant where the file has coefficient sets per dopant or carrier),
and quantity-specific sections (a narrowing's fitting assumptions, a mobility's
dopant densities, ...) are validated here.
"""

from __future__ import annotations

import functools
import os
import re
import threading
import weakref
from collections.abc import Mapping
from pathlib import Path
from types import MappingProxyType

from ..errors import (
    DatasetError,
)
from ..kernels import module_for
from .conventions import REQUIRED as REQUIRED_CONVENTIONS
from .conventions import legacy_conventions, parse_fit_conventions
from .fields import convert, number_or_list, require, udunits_to_pint
from .records import (
    SOURCE_TYPES,
    CatalogueLike,
    Coefficient,
    Model,
    Range,
    Source,
)
from .regions import parse_regions
from .schema import (
    KINDS,
    THERMAL_VELOCITY_DEFINITIONS,
    VARIANT_AXES,
)

MODEL_ID = re.compile(r"^[a-z][a-z0-9]*(-[a-z0-9]+)*$")


def _resolve_kernel(path, reference: str):
    module_name, _, function_name = reference.rpartition(".")
    if not module_name:
        raise DatasetError(path, f"field 'kernel' must be '<module>.<function>', got {reference!r}")
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
    source = _source(path, require(path, data, "source", dict), "source.")
    additional = data.get("additional_sources", [])
    if not isinstance(additional, list):
        raise DatasetError(path, "field 'additional_sources' must be a list of sources")
    return source, tuple(
        _source(path, entry, f"additional_sources[{i}].") for i, entry in enumerate(additional)
    )


def _source(path, src, where: str) -> Source:
    if not isinstance(src, dict):
        raise DatasetError(path, f"{where.rstrip('.')} must be a table of source fields")
    kind = src.get("type", "article")
    if kind not in SOURCE_TYPES:
        raise DatasetError(
            path, f"field '{where}type' must be one of {', '.join(SOURCE_TYPES)}, got {kind!r}"
        )
    for f in SOURCE_TYPES[kind]:
        require(path, src, f, where=where)
    authors = src["authors"]
    if not isinstance(authors, list) or not authors:
        raise DatasetError(path, f"field '{where}authors' must be a non-empty list")
    if kind == "book":
        return Source(
            tuple(authors),
            int(src["year"]),
            str(src["title"]),
            "",
            "",
            str(src.get("pages", "")),
            str(src["doi"]),
            type="book",
            publisher=str(src["publisher"]),
            edition=str(src.get("edition", "")),
            address=str(src.get("address", "")),
        )
    return Source(
        tuple(authors),
        int(src["year"]),
        str(src["title"]),
        str(src["journal"]),
        str(src["volume"]),
        str(src["pages"]),
        str(src["doi"]),
    )


def _build_model(path: Path, data: Mapping, catalog: CatalogueLike) -> Model:
    quantity = path.parent.name
    model_id = require(path, data, "id", str)
    if model_id != path.stem:
        raise DatasetError(path, f"field 'id' is {model_id!r}, the file name says {path.stem!r}")
    if not MODEL_ID.match(model_id):
        raise DatasetError(
            path, f"field 'id' {model_id!r} is not lower-case 'firstauthor-year' form"
        )
    if require(path, data, "quantity", str) != quantity:
        raise DatasetError(
            path, f"field 'quantity' is {data['quantity']!r}, the folder says {quantity!r}"
        )
    name = require(path, data, "name", str)
    kind = require(path, data, "kind", str)
    if kind not in KINDS:
        raise DatasetError(path, f"field 'kind' must be one of {', '.join(KINDS)}, got {kind!r}")
    obtained = require(path, data, "obtained", str)
    if not obtained.strip():
        raise DatasetError(path, "field 'obtained' must say how the numbers were obtained")
    notes = data.get("notes", "")
    kernel = _resolve_kernel(path, require(path, data, "kernel", str))
    spec = kernel.spec

    source, additional_sources = sources_of(path, data)
    fallback = data.get("fallback")
    if fallback is not None and fallback not in catalog.model_ids(quantity):
        raise DatasetError(path, f"field 'fallback': no model {fallback!r} for {quantity!r}")

    validity = _validity(path, data.get("validity", {}), spec, "validity")

    table = None
    table_arguments: dict[str, str] = {}
    if kind == "table":
        table = require(path, data, "table", str)
        table_arguments = dict(require(path, data, "table_arguments", dict))
    shared = _coefficients(
        path, data.get("coefficients", {}), spec, "coefficients", data["kernel"], table_arguments
    )
    raw_variants = data.get("variants")
    variant_axis = data.get("variant_axis")
    if (raw_variants is None) != (variant_axis is None):
        raise DatasetError(path, "fields 'variant_axis' and 'variants' go together")
    if variant_axis is not None and variant_axis not in VARIANT_AXES:
        raise DatasetError(
            path,
            f"field 'variant_axis' must be one of {', '.join(VARIANT_AXES)}, got {variant_axis!r}",
        )

    requires = tuple(spec.requires)
    if kind == "composed" and not requires:
        raise DatasetError(
            path,
            f"kind 'composed' needs a kernel that requires other "
            f"quantities; {data['kernel']!r} requires none",
        )
    extra = _extra_sections(path, quantity, data, catalog, requires)
    common = {
        "quantity": quantity,
        "id": model_id,
        "name": name,
        "kind": kind,
        "kernel": kernel,
        "catalogue": catalog,
        "source": source,
        "obtained": obtained,
        "notes": notes,
        "path": path,
        "sha256": catalog.checksums().get(path.relative_to(catalog.root).as_posix(), ""),
        "requires": requires,
        "additional_sources": additional_sources,
        "fallback": fallback,
        "table": table,
        "table_arguments": MappingProxyType(table_arguments),
        "variant_axis": variant_axis,
        "extra": MappingProxyType(extra),
        "regions": parse_regions(path, data, spec),
    }

    def bind(coefficients, kernel=kernel, kernel_name=data["kernel"]):
        _check_complete(path, kernel_name, kernel.spec, set(coefficients) | set(table_arguments))
        bound = {c.name: c.kernel_value for c in coefficients.values()}
        if kind == "table":
            return _TableFunction(catalog, path, kernel, table, table_arguments, bound)
        return None if requires else functools.partial(kernel, **bound)

    if raw_variants is None:
        return Model(
            **common,
            coefficients=MappingProxyType(shared),
            validity=MappingProxyType(validity),
            function=bind(shared),
        )

    if not isinstance(raw_variants, dict) or not raw_variants:
        raise DatasetError(path, "field 'variants' must hold one table per variant")
    variants = {}
    for variant, entry in raw_variants.items():
        where = f"variants.{variant}"
        if not isinstance(entry, dict):
            raise DatasetError(path, f"{where} must be a table")
        unknown = set(entry) - {"coefficients", "validity", "obtained", "kernel"}
        if unknown:
            raise DatasetError(
                path,
                f"{where}: unknown field(s) {sorted(unknown)} "
                "(allowed: coefficients, validity, obtained, kernel)",
            )
        # a variant may have an equation form of its own (e.g. a standard that gives
        # boron and phosphorus different forms), with the same inputs and output
        variant_kernel, kernel_name = kernel, data["kernel"]
        if "kernel" in entry:
            kernel_name = require(path, entry, "kernel", str, where=where + ".")
            variant_kernel = _resolve_kernel(path, kernel_name)
            if (
                dict(variant_kernel.spec.inputs) != dict(spec.inputs)
                or variant_kernel.spec.output != spec.output
                or variant_kernel.spec.requires != spec.requires
            ):
                raise DatasetError(
                    path,
                    f"{where}.kernel {kernel_name!r} must take the same "
                    f"inputs and give the same output as {data['kernel']!r}",
                )
        own = _coefficients(
            path,
            entry.get("coefficients", {}),
            variant_kernel.spec,
            f"{where}.coefficients",
            kernel_name,
            set(shared) | set(table_arguments),
        )
        overlap = sorted(set(own) & set(shared))
        if overlap:
            raise DatasetError(path, f"{where}: {overlap} also given in [coefficients]")
        merged = {**shared, **own}
        ranges = {
            **validity,
            **_validity(path, entry.get("validity", {}), spec, f"{where}.validity"),
        }
        variant_obtained = entry.get("obtained")
        variants[variant] = Model(
            **{
                **common,
                "kernel": variant_kernel,
                "obtained": obtained
                + (f"\n{variant}: {variant_obtained}" if variant_obtained else ""),
            },
            coefficients=MappingProxyType(merged),
            validity=MappingProxyType(ranges),
            function=bind(merged, variant_kernel, kernel_name),
            variant=variant,
        )
    parent = Model(
        **common,
        coefficients=MappingProxyType(shared),
        validity=MappingProxyType(validity),
        function=None,
    )
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
            raise DatasetError(
                path,
                f"{where}: the kernel has no input {argument!r} "
                f"(inputs: {', '.join(spec.inputs) or 'none'})",
            )
        for f in ("min", "max", "units"):
            require(path, entry, f, where=where + ".")
        low = convert(path, where, entry["min"], entry["units"], spec.inputs[argument])
        high = convert(path, where, entry["max"], entry["units"], spec.inputs[argument])
        if not low < high:
            raise DatasetError(path, f"{where}: min must be below max")
        validity[argument] = Range(argument, low, high, spec.inputs[argument])
    return validity


def _coefficient(path, where: str, entry, target_units: str) -> Coefficient:
    if not isinstance(entry, dict):
        raise DatasetError(path, f"{where} must be a table with value and units")
    value = number_or_list(path, where + ".value", require(path, entry, "value", where=where + "."))
    units = require(path, entry, "units", str, where=where + ".")
    uncertainty = entry.get("uncertainty")
    if uncertainty is not None:
        uncertainty = number_or_list(path, where + ".uncertainty", uncertainty)
    origin = entry.get("obtained")
    if origin is not None and not (isinstance(origin, str) and origin.strip()):
        raise DatasetError(path, f"{where}.obtained must be a non-empty string")
    kernel_value = convert(path, where, value, units, target_units)
    return Coefficient(
        where.rpartition(".")[2], value, units, uncertainty, kernel_value, target_units, origin
    )


def _coefficients(path, raw, spec, prefix, kernel_name, also=()) -> dict[str, Coefficient]:
    """Parse a coefficient table; ``also`` are names supplied elsewhere in the file."""
    if not isinstance(raw, dict):
        raise DatasetError(path, f"{prefix} must be a table of coefficients")
    if set(raw) - set(spec.coefficients):
        _check_complete(path, kernel_name, spec, set(raw) | set(also))
    return {
        name: _coefficient(path, f"{prefix}.{name}", entry, spec.coefficients[name])
        for name, entry in raw.items()
    }


def _check_complete(path, kernel_name, spec, supplied) -> None:
    expected = set(spec.coefficients)
    if supplied != expected:
        missing, extra = sorted(expected - supplied), sorted(supplied - expected)
        raise DatasetError(
            path,
            "coefficients do not match kernel "
            f"{kernel_name!r}: missing {missing or 'none'}, "
            f"unexpected {extra or 'none'}",
        )


# Sections a model file may carry for its quantity only, each checked by a function
# that is told whether the file states its fit conventions (the older fields that
# carried part of them are then refused: one place for each fact).
def _narrowing_section(path, entry, with_conventions: bool) -> dict:
    where = "narrowing"
    if not isinstance(entry, dict):
        raise DatasetError(path, f"{where} must be a table")
    unknown = set(entry) - {"type", "statistics", "intrinsic_density", "split"}
    if unknown:
        raise DatasetError(path, f"{where}: unknown field(s) {sorted(unknown)}")
    kind = require(path, entry, "type", str, where=where + ".")
    if kind not in ("apparent", "physical"):
        raise DatasetError(path, f"{where}.type must be 'apparent' or 'physical', got {kind!r}")
    record = {"type": kind, "split": require(path, entry, "split", str, where=where + ".")}
    if with_conventions:
        for moved in ("statistics", "intrinsic_density"):
            if moved in entry:
                raise DatasetError(
                    path,
                    f"{where}.{moved}: stated in [fit_conventions] (this field is the "
                    "form of files sealed before that section)",
                )
        return record
    statistics = require(path, entry, "statistics", str, where=where + ".")
    if statistics not in ("boltzmann", "fermi-dirac"):
        raise DatasetError(path, f"{where}.statistics must be 'boltzmann' or 'fermi-dirac'")
    record["statistics"] = statistics
    if kind == "apparent":
        density = require(path, entry, "intrinsic_density", dict, where=where + ".")
        temperature = require(path, density, "temperature", where=where + ".intrinsic_density.")
        coefficient = _coefficient(
            path,
            f"{where}.intrinsic_density",
            {k: v for k, v in density.items() if k != "temperature"},
            "cm^-3",
        )
        record["intrinsic_density"] = coefficient
        record["intrinsic_density_temperature"] = convert(
            path, f"{where}.intrinsic_density.temperature", temperature, "K", "K"
        )
    elif "intrinsic_density" in entry:
        raise DatasetError(path, f"{where}.intrinsic_density belongs to apparent narrowings")
    return record


def _dopant_densities(path, value, with_conventions: bool) -> str:
    if with_conventions:
        raise DatasetError(
            path,
            "field 'dopant_densities': stated in [fit_conventions] (this field is the "
            "form of files sealed before that section)",
        )
    if value not in ("total", "ionised"):
        raise DatasetError(
            path, f"field 'dopant_densities' must be 'total' or 'ionised', got {value!r}"
        )
    return value


def _fit_section(path, entry, with_conventions: bool) -> dict:
    """What an intrinsic-lifetime model was fitted with, in the form of files sealed
    before [fit_conventions] (its radiative term, intrinsic density and narrowing)."""
    where = "fit"
    if with_conventions:
        raise DatasetError(
            path,
            "section [fit]: stated in [fit_conventions] (this section is the form of "
            "files sealed before that section)",
        )
    if not isinstance(entry, dict):
        raise DatasetError(path, f"{where} must be a table")
    unknown = set(entry) - {"radiative", "intrinsic_density", "gap_narrowing"}
    if unknown:
        raise DatasetError(path, f"{where}: unknown field(s) {sorted(unknown)}")
    record = {
        "radiative": require(path, entry, "radiative", str, where=where + "."),
        "gap_narrowing": require(path, entry, "gap_narrowing", str, where=where + "."),
    }
    density = entry.get("intrinsic_density")
    if density is not None:
        if not isinstance(density, dict):
            raise DatasetError(path, f"{where}.intrinsic_density must be a table")
        temperature = require(path, density, "temperature", where=where + ".intrinsic_density.")
        record["intrinsic_density"] = _coefficient(
            path,
            f"{where}.intrinsic_density",
            {k: v for k, v in density.items() if k != "temperature"},
            "cm^-3",
        )
        record["intrinsic_density_temperature"] = convert(
            path, f"{where}.intrinsic_density.temperature", temperature, "K", "K"
        )
    return record


def _velocity_definition(path, value, with_conventions: bool) -> str:
    if value not in THERMAL_VELOCITY_DEFINITIONS:
        raise DatasetError(
            path,
            "field 'definition' must be one of "
            f"{', '.join(map(repr, THERMAL_VELOCITY_DEFINITIONS))}, "
            f"got {value!r}",
        )
    return value


# (A thermal velocity is either the mean speed sqrt(8kT/(pi m)) or the root-mean-square
# speed sqrt(3kT/m), sqrt(3 pi/8) = 1.085 apart, so every such model says which.)
# section -> check (it refuses a field that [fit_conventions] now holds); each section is
# required of a file without [fit_conventions], the older form of some of them
QUANTITY_SECTIONS = {
    "gap_narrowing": {"narrowing": _narrowing_section},
    "intrinsic_lifetime": {"fit": _fit_section},
    "mobility": {"dopant_densities": _dopant_densities},
    "thermal_velocity": {"definition": _velocity_definition},
}
# sections still required of a file with [fit_conventions]
_KEPT = {"narrowing", "definition"}


def _archived(path: Path, catalog) -> bool:
    """Whether the file is a final release's archive copy (``archive/<id>/models/...``)."""
    root = getattr(catalog, "root", None)
    try:
        return root is not None and path.relative_to(root).parts[0] == "archive"
    except ValueError:
        return False


def _extra_sections(path, quantity, data, catalog, requires=()) -> dict:
    """The quantity's own sections and the fit conventions, checked.

    A composed quantity's model file in the main tree must state its fit conventions;
    a final release's archive copy sealed before they existed gets them from its
    older fields (:func:`~.conventions.legacy_conventions`)."""
    with_conventions = "fit_conventions" in data
    if not with_conventions and quantity in REQUIRED_CONVENTIONS and not _archived(path, catalog):
        raise DatasetError(
            path,
            f"missing section [fit_conventions]: a {quantity} model is composed with "
            "other models, so its file must state what its coefficients were fitted "
            f"with ({', '.join(REQUIRED_CONVENTIONS[quantity])}; see "
            "matprops.catalogue.conventions)",
        )
    found = {}
    for key, check in QUANTITY_SECTIONS.get(quantity, {}).items():
        if key in data:
            found[key] = check(path, data[key], with_conventions)
        elif key in _KEPT or not with_conventions:
            raise DatasetError(path, f"missing required field {key!r} for a {quantity} model")
    if with_conventions:
        found["fit_conventions"] = parse_fit_conventions(
            path, quantity, data["fit_conventions"], catalog
        )
    elif quantity in REQUIRED_CONVENTIONS:  # an archive copy sealed before the section
        narrowing_models = catalog.model_ids("gap_narrowing") if "fit" in found else ()
        found["fit_conventions"] = legacy_conventions(
            quantity, found, "radiative_coefficient" in requires, narrowing_models
        )
    return found


# every table function, so that a forked child can give each a fresh lock: a lock held
# by another thread at the fork would never be released in the child
_TABLE_FUNCTIONS: weakref.WeakSet = weakref.WeakSet()


def _after_fork_in_child() -> None:
    for function in list(_TABLE_FUNCTIONS):
        function._lock = threading.Lock()


os.register_at_fork(after_in_child=_after_fork_in_child)


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
        _TABLE_FUNCTIONS.add(self)

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
                raise DatasetError(self._path, f"{where} does not exist (has: {', '.join(data)})")
            values, units = data[variable]
            arrays[argument] = convert(
                self._path, where, values, udunits_to_pint(units), spec.coefficients[argument]
            )
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
