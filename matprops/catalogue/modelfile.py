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

import numpy as np

from ..errors import (
    DatasetError,
)
from ..kernels import module_for
from .conventions import REQUIRED as REQUIRED_CONVENTIONS
from .conventions import legacy_conventions, parse_fit_conventions, parse_stand_ins
from .fields import convert, number_or_list, read_only, require, udunits_to_pint
from .records import (
    SOURCE_TYPES,
    CatalogueLike,
    Coefficient,
    Correlation,
    Model,
    OutputUncertainty,
    Range,
    Source,
    Uncertainty,
    standard_from,
)
from .regions import parse_regions
from .schema import (
    KINDS,
    THERMAL_VELOCITY_DEFINITIONS,
    UNCERTAINTY_KINDS,
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
    if kind == "measurement":
        digest = str(src["data_sha256"])
        if len(digest) != 64 or not all(c in "0123456789abcdef" for c in digest):
            raise DatasetError(path, f"field '{where}data_sha256' must be a sha256 (64 hex digits)")
        return Source(
            tuple(authors),
            int(src["year"]),
            str(src["title"]),
            "",
            "",
            "",
            str(src["doi"]),
            type="measurement",
            lab=str(src.get("lab", "")),
            description=str(src["description"]),
            data=str(src["data"]),
            data_sha256=digest,
        )
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


def _build_model(path: Path, data: Mapping, catalogue: CatalogueLike) -> Model:
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
    if fallback is not None and fallback not in catalogue.model_ids(quantity):
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
    extra = _extra_sections(path, quantity, data, catalogue, requires)
    if "fitted" in data:  # a model fitted to one's own measurements: how, and how well
        extra["fitted"] = _fitted_section(path, data["fitted"], catalogue)
    if "stand_ins" in data:  # what serves a dopant species without a set of its own
        extra["stand_ins"] = MappingProxyType(
            parse_stand_ins(
                path, quantity, data["stand_ins"], list(raw_variants or {}), variant_axis, catalogue
            )
        )
    common = {
        "quantity": quantity,
        "id": model_id,
        "name": name,
        "kind": kind,
        "kernel": kernel,
        "catalogue": catalogue,
        "source": source,
        "obtained": obtained,
        "notes": notes,
        "path": path,
        "sha256": catalogue.recorded(path),
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
            return _TableFunction(catalogue, path, kernel, table, table_arguments, bound)
        return None if requires else functools.partial(kernel, **bound)

    if raw_variants is None:
        common["uncertainty"] = _uncertainty_section(path, data, spec, shared, {})
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
    own_sets = {
        name: {k: c for k, c in model.coefficients.items() if k not in shared}
        for name, model in variants.items()
    }
    common["uncertainty"] = _uncertainty_section(path, data, spec, shared, own_sets)
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
        object.__setattr__(model, "uncertainty", common["uncertainty"])
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
    kind = entry.get("uncertainty_kind", "unspecified")
    coverage = entry.get("coverage_factor")
    said = entry.get("uncertainty_obtained")
    kernel_uncertainty = None
    if uncertainty is None:
        if any(k in entry for k in ("uncertainty_kind", "coverage_factor", "uncertainty_obtained")):
            raise DatasetError(path, f"{where}: uncertainty_* fields need an uncertainty")
    else:
        _check_spread(path, f"{where}.uncertainty", uncertainty, value, kind, coverage)
        # a difference converts by the units' scale (an offset cancels)
        low, high = convert(path, where, [0.0, 1.0], units, target_units)
        standard = np.asarray(standard_from(uncertainty, kind, coverage), dtype=float)
        kernel_uncertainty = standard * (high - low)
        kernel_uncertainty = (
            float(kernel_uncertainty)
            if kernel_uncertainty.ndim == 0
            else read_only(kernel_uncertainty)
        )
    return Coefficient(
        where.rpartition(".")[2],
        value,
        units,
        uncertainty,
        kernel_value,
        target_units,
        origin,
        uncertainty_kind=kind,
        coverage_factor=None if coverage is None else float(coverage),
        uncertainty_obtained=said,
        kernel_uncertainty=kernel_uncertainty,
    )


def _check_spread(path, where, uncertainty, value, kind, coverage) -> None:
    """An uncertainty: non-negative, shaped like its value, its kind complete."""
    if kind not in UNCERTAINTY_KINDS:
        raise DatasetError(
            path, f"{where}_kind must be one of {', '.join(UNCERTAINTY_KINDS)}, got {kind!r}"
        )
    if (kind == "expanded") != (coverage is not None):
        raise DatasetError(path, f"{where}: coverage_factor goes with (only) kind 'expanded'")
    if coverage is not None and not coverage > 0:
        raise DatasetError(path, f"{where}: coverage_factor must be positive, got {coverage!r}")
    values = uncertainty if isinstance(uncertainty, tuple) else (uncertainty,)
    if isinstance(uncertainty, tuple) != isinstance(value, tuple) or (
        isinstance(value, tuple) and len(value) != len(uncertainty)
    ):
        raise DatasetError(path, f"{where} must have one entry per entry of the value")
    if any(v < 0 for v in values):
        raise DatasetError(path, f"{where} must not be negative, got {uncertainty!r}")


def _uncertainty_section(path, data, spec, coefficients, variants) -> Uncertainty:
    """The ``[uncertainty]`` section: the source's statement, correlations between
    coefficients, and stated accuracies of the output (see :class:`.records.Uncertainty`)."""
    carried = any(c.uncertainty is not None for c in coefficients.values()) or any(
        c.uncertainty is not None for v in variants.values() for c in v.values()
    )
    entry = data.get("uncertainty")
    if entry is None:
        if carried:
            return Uncertainty(
                "stated", "coefficients carry uncertainties (no [uncertainty] section)"
            )
        return Uncertainty()
    statement = require(path, entry, "statement", str, where="uncertainty.")
    obtained = require(path, entry, "obtained", str, where="uncertainty.")
    if not obtained.strip():
        raise DatasetError(path, "uncertainty.obtained must say where the statement was read")
    outputs = []
    for index, raw in enumerate(entry.get("output", [])):
        where = f"uncertainty.output[{index}]"
        relative, absolute = raw.get("relative"), raw.get("absolute")
        if (relative is None) == (absolute is None):
            raise DatasetError(path, f"{where}: give one of relative or absolute")
        if (absolute is not None) != ("units" in raw):
            raise DatasetError(path, f"{where}: units go with (only) absolute")
        size = relative if relative is not None else absolute
        _check_spread(path, where, size, 1.0, raw["kind"], raw.get("coverage_factor"))
        validity = {
            k: (r.low, r.high)
            for k, r in _validity(path, raw.get("validity", {}), spec, where + ".validity").items()
        }
        at = {}
        for name, point in raw.get("at", {}).items():
            if name not in spec.inputs:
                raise DatasetError(path, f"{where}.at: the kernel has no input {name!r}")
            at[name] = convert(
                path, f"{where}.at.{name}", point["value"], point["units"], spec.inputs[name]
            )
        variant = raw.get("variant")
        if variant is not None and variant not in variants:
            raise DatasetError(path, f"{where}.variant: no coefficient set {variant!r}")
        outputs.append(
            OutputUncertainty(
                kind=raw["kind"],
                statement=raw["statement"],
                obtained=raw["obtained"],
                relative=None if relative is None else float(relative),
                absolute=None if absolute is None else float(absolute),
                units=raw.get("units"),
                coverage_factor=raw.get("coverage_factor"),
                validity=MappingProxyType(validity),
                at=MappingProxyType(at),
                variant=variant,
            )
        )
    correlations = []
    for index, raw in enumerate(entry.get("correlation", [])):
        where = f"uncertainty.correlation[{index}]"
        names = tuple(raw["coefficients"])
        matrix = np.asarray(raw["matrix"], dtype=float)
        if matrix.shape != (len(names), len(names)):
            raise DatasetError(path, f"{where}: the matrix must be {len(names)} x {len(names)}")
        if not np.allclose(matrix, matrix.T) or not np.all(np.diag(matrix) == 1.0):
            raise DatasetError(
                path, f"{where}: the matrix must be symmetric with 1 on its diagonal"
            )
        if np.any(np.abs(matrix) > 1.0) or np.linalg.eigvalsh(matrix).min() < -1e-12:
            raise DatasetError(path, f"{where}: not a correlation matrix (positive semi-definite)")
        for name in names:
            if coefficient_entry(name, coefficients, variants) is None:
                raise DatasetError(
                    path, f"{where}: {name!r} is not a coefficient with an uncertainty"
                )
        correlations.append(Correlation(names, tuple(map(tuple, matrix.tolist())), raw["obtained"]))
    if statement != "stated" and (carried or outputs):
        raise DatasetError(
            path,
            f"uncertainty.statement is {statement!r} but the file states uncertainties "
            "(on coefficients or in uncertainty.output): 'stated'",
        )
    if statement == "stated" and not (carried or outputs):
        raise DatasetError(
            path, "uncertainty.statement 'stated' but no coefficient or output carries one"
        )
    return Uncertainty(statement, obtained, tuple(correlations), tuple(outputs))


def coefficient_entry(name: str, coefficients, variants):
    """The Coefficient (and element index) a correlation names, if it has an uncertainty:
    ``"alpha"``, ``"low_coefficients[1]"``, ``"boron.alpha"`` -> (Coefficient, index)."""
    table = coefficients
    if "." in name:
        variant, _, name = name.partition(".")
        if variant not in variants:
            return None
        table = {**coefficients, **variants[variant]}
    index = None
    if name.endswith("]") and "[" in name:
        name, _, rest = name.partition("[")
        try:
            index = int(rest[:-1])
        except ValueError:
            return None
    coefficient = table.get(name)
    if coefficient is None or coefficient.uncertainty is None:
        return None
    if (index is not None) != isinstance(coefficient.value, tuple):
        return None  # an index for a vector's element, none for a number
    if index is not None and not 0 <= index < len(coefficient.value):
        return None
    return coefficient, index


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


def _archived(path: Path, catalogue) -> bool:
    """Whether the file is a final release's archive copy (``archive/<id>/models/...``)."""
    root = getattr(catalogue, "root", None)
    try:
        return root is not None and path.relative_to(root).parts[0] == "archive"
    except ValueError:
        return False


def _extra_sections(path, quantity, data, catalogue, requires=()) -> dict:
    """The quantity's own sections and the fit conventions, checked.

    A composed quantity's model file in the main tree must state its fit conventions;
    a final release's archive copy sealed before they existed gets them from its
    older fields (:func:`~.conventions.legacy_conventions`)."""
    with_conventions = "fit_conventions" in data
    if not with_conventions and quantity in REQUIRED_CONVENTIONS and not _archived(path, catalogue):
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
            path, quantity, data["fit_conventions"], catalogue
        )
    elif quantity in REQUIRED_CONVENTIONS:  # an archive copy sealed before the section
        narrowing_models = catalogue.model_ids("gap_narrowing") if "fit" in found else ()
        found["fit_conventions"] = legacy_conventions(
            quantity, found, "radiative_coefficient" in requires, narrowing_models
        )
    return found


def _fitted_section(path, entry, catalogue) -> dict:
    """The ``[fitted]`` section of a model fitted by :func:`matprops.fit`: the base
    model it started from, which coefficients were free, the method and the fit's
    statistics (schema: :data:`~.schema.FITTED`)."""
    quantity, _, model_id = entry["base_model"].partition("/")
    if quantity != path.parent.name or not MODEL_ID.match(model_id):
        raise DatasetError(
            path,
            f"fitted.base_model must be '<quantity>/<model-id>' of this quantity, "
            f"got {entry['base_model']!r}",
        )
    if entry["dof"] < 0 or entry["points"] < 1 or entry["chi2"] < 0:
        raise DatasetError(path, "fitted: points >= 1, dof >= 0 and chi2 >= 0")
    record = dict(entry)
    record["date"] = str(entry["date"])
    record["residuals"] = dict(entry["residuals"])
    return record


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

    def __init__(self, catalogue, path, kernel, table, table_arguments, bound):
        self._catalogue, self._path, self._kernel = catalogue, path, kernel
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
                opened[table] = self._catalogue.table_arrays(table)
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
