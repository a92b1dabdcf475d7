"""Coefficient uncertainties of a material's models, and materials with changed coefficients.

The machinery behind ``uncertainty=True`` (:mod:`matprops.material.uncertainty`):

- :func:`directions` lists the uncertain numbers of a model (and of the models it is
  composed from): each coefficient (or element of a coefficient list) whose source
  states an uncertainty, and each stated accuracy of a model's *output* that holds over
  a range (a relative or absolute error of the whole output, carried as one more
  uncertain number: a factor ``1 + e`` or a term ``+ e`` on the output, where it
  holds). :func:`covariance` is their covariance matrix (standard uncertainties and
  the correlations the sources give; independent otherwise).
- :func:`substitute` is a model with other values in place of some of those numbers
  (drawn values for Monte Carlo, :class:`~matprops.kernels._coefficients.Dual` numbers
  for linear propagation) and without validity ranges (they were checked on the
  nominal evaluation; a changed copy must not warn again).
- :func:`changed_material` is a material whose models are so changed, so that *any*
  method, composed or solved, runs unchanged with the changed numbers.
"""

from __future__ import annotations

import dataclasses
import functools
from collections.abc import Mapping
from types import MappingProxyType

import numpy as np

from ..catalogue.records import Model, OutputUncertainty

__all__ = [
    "Direction",
    "changed_material",
    "covariance",
    "directions",
    "dual_values",
    "substitute",
    "values_for",
]

OUTPUT = "(output)"  # the name of an output accuracy's uncertain number


@dataclasses.dataclass(frozen=True)
class Direction:
    """One uncertain number of a model: a coefficient (element) or an output accuracy.

    ``sigma`` is its standard uncertainty in kernel units (for an output accuracy:
    relative, or absolute in output units). ``key`` identifies the model and the
    coefficient set (a variant) it belongs to.
    """

    quantity: str
    model: str
    variant: str | None
    name: str
    index: int | None
    sigma: float
    kind: str
    obtained: str = ""
    output: OutputUncertainty | None = None

    @property
    def key(self) -> tuple:
        return (self.quantity, self.variant)

    @property
    def label(self) -> str:
        where = f"{self.quantity}/{self.model}" + (f"[{self.variant}]" if self.variant else "")
        element = f"[{self.index}]" if self.index is not None else ""
        if self.output is not None:
            kind = "relative" if self.output.relative is not None else "absolute"
            return f"{where}:stated output accuracy ({kind}, {self.output.statement})"
        return f"{where}:{self.name}{element}"

    def as_dict(self) -> dict:
        record = {"label": self.label, "standard_uncertainty": self.sigma, "kind": self.kind}
        if self.output is not None:
            record["output_statement"] = self.output.as_dict()
        elif self.obtained:
            record["obtained"] = self.obtained
        return record


def _own_directions(model: Model) -> list[Direction]:
    found = []
    for coefficient in model.coefficients.values():
        sigma = coefficient.kernel_uncertainty
        if sigma is None:
            continue
        common = {
            "quantity": model.quantity,
            "model": model.id,
            "variant": model.variant,
            "name": coefficient.name,
            "kind": coefficient.uncertainty_kind,
            "obtained": coefficient.uncertainty_obtained or "",
        }
        if np.ndim(sigma) == 0:
            if sigma > 0:
                found.append(Direction(index=None, sigma=float(sigma), **common))
        else:
            found += [
                Direction(index=i, sigma=float(s), **common)
                for i, s in enumerate(np.asarray(sigma))
                if s > 0
            ]
    for number, output in enumerate(model.uncertainty.outputs):
        if output.at or output.variant not in (None, model.variant):
            continue  # a point statement is reported, not propagated
        sigma = output.standard_relative
        if sigma is None:
            sigma = output.standard_absolute
        found.append(
            Direction(
                quantity=model.quantity,
                model=model.id,
                variant=model.variant,
                name=OUTPUT,
                index=number,
                sigma=float(sigma),
                kind=output.kind,
                obtained=output.obtained,
                output=output,
            )
        )
    return found


def directions(model: Model, seen=None) -> list[Direction]:
    """The uncertain numbers of a bound model and of the models it is composed from."""
    seen = set() if seen is None else seen
    found = []
    if (model.quantity, model.id, model.variant) in seen:
        return found
    seen.add((model.quantity, model.id, model.variant))
    found += _own_directions(model)
    for component in model.components.values():
        found += directions(component, seen)
    return found


def covariance(found: list[Direction], models: Mapping[tuple, Model] | None = None) -> np.ndarray:
    """Covariance matrix of the uncertain numbers (kernel units): sigma_i sigma_j r_ij,
    with the correlations r_ij of each model's ``[uncertainty.correlation]`` blocks."""
    sigma = np.array([d.sigma for d in found])
    matrix = np.diag(sigma * sigma)
    position = {
        (d.quantity, d.model, d.variant, d.name, d.index): i
        for i, d in enumerate(found)
        if d.output is None
    }
    blocks = {}
    for d in found:
        if d.output is None and (d.quantity, d.model) not in blocks:
            blocks[(d.quantity, d.model)] = d
    for (quantity, model_id), d in blocks.items():
        model = (models or {}).get((quantity, model_id))
        if model is None:
            continue
        for block in model.uncertainty.correlations:
            where = [
                _locate(name, quantity, model_id, d.variant, position)
                for name in block.coefficients
            ]
            for a, i in enumerate(where):
                for b, j in enumerate(where):
                    if i is not None and j is not None and i != j:
                        matrix[i, j] = block.matrix[a][b] * sigma[i] * sigma[j]
    return matrix


def _locate(name, quantity, model_id, variant, position):
    if "." in name:
        wanted, _, name = name.partition(".")
        if wanted != variant:
            return None
    index = None
    if name.endswith("]"):
        name, _, rest = name.partition("[")
        index = int(rest[:-1])
    for v in (variant, None):
        found = position.get((quantity, model_id, v, name, index))
        if found is not None:
            return found
    return None


def models_of(model: Model, found=None) -> dict:
    """(quantity, model id) -> model, for a model and its components."""
    found = {} if found is None else found
    found.setdefault((model.quantity, model.id), model)
    for component in model.components.values():
        models_of(component, found)
    return found


# ---------------------------------------------------------------------- substitution
class _OutputChange:
    """A model's function with its output scaled (``1 + e``) or shifted (``+ e``) where a
    stated output accuracy holds (its validity ranges, by input name)."""

    def __init__(self, function, changes):
        self._function = function
        self._changes = changes  # [(OutputUncertainty, e)]
        self.func = getattr(function, "func", function)  # evaluate's block size

    def __getattr__(self, name):
        return getattr(self._function, name)

    def __call__(self, *args, **kwargs):
        result = self._function(*args, **kwargs)
        for output, e in self._changes:
            inside = True
            for name, (low, high) in output.validity.items():
                if name in kwargs:
                    x = np.asarray(kwargs[name], dtype=float)
                    inside = inside & (x >= low) & (x <= high)
            result = _change(result, output, e, inside)
        return result


def _change(result, output, e, inside):
    if isinstance(result, tuple):
        return tuple(_change(part, output, e, inside) for part in result)
    if output.relative is not None:
        step = result * e
    else:
        step = e + 0.0 * result
    if inside is True:
        return result + step
    return result + np.where(inside, step, 0.0 * step)


def substitute(model: Model, values: Mapping, cache: dict | None = None) -> Model:
    """``model`` with other values for some uncertain numbers, and no validity ranges.

    Parameters
    ----------
    values : (quantity, variant, name) -> new kernel value of that coefficient (a float,
        an array for a coefficient list, or a Dual), and (quantity, variant, OUTPUT)
        -> list of (OutputUncertainty, e) for output accuracies. Keys with variant None
        apply to every coefficient set of the model.
    cache : reused for models none of whose numbers change (keyed by identity)
    """
    cache = {} if cache is None else cache
    changed_components = {q: substitute(c, values, cache) for q, c in model.components.items()}
    touched = any(k[0] == model.quantity for k in values) or any(
        changed_components[q] is not c for q, c in model.components.items()
    )
    if not touched:
        key = id(model)
        if key not in cache:
            cache[key] = _stripped(model)
        return cache[key]
    if model.variants and model.variant is None:  # the parent of coefficient sets
        variants = {name: substitute(v, values, cache) for name, v in model.variants.items()}
        parent = dataclasses.replace(model, validity=MappingProxyType({}), regions=())
        frozen = MappingProxyType(variants)
        object.__setattr__(parent, "variants", frozen)
        for v in variants.values():
            object.__setattr__(v, "variants", frozen)
        return parent
    coefficients = {}
    for name, coefficient in model.coefficients.items():
        new = values.get((model.quantity, model.variant, name))
        if new is None:
            new = values.get((model.quantity, None, name))
        coefficients[name] = (
            coefficient if new is None else dataclasses.replace(coefficient, kernel_value=new)
        )
    own = {c.name: c.kernel_value for c in coefficients.values()}
    if model.kind == "table":
        function = model.function  # tabulated numbers: only output accuracies change
    elif model.requires:
        function = functools.partial(model.kernel, **own, **changed_components)
    else:
        function = functools.partial(model.kernel, **own)
    outputs = values.get((model.quantity, model.variant, OUTPUT)) or values.get(
        (model.quantity, None, OUTPUT)
    )
    if outputs:
        function = _OutputChange(function, outputs)
    changed = dataclasses.replace(
        model,
        coefficients=MappingProxyType(coefficients),
        validity=MappingProxyType({}),
        regions=(),
        components=MappingProxyType(changed_components),
        function=function,
    )
    if model.variants:  # a selected coefficient set keeps its siblings (unchanged)
        object.__setattr__(changed, "variants", model.variants)
    return changed


def _stripped(model: Model) -> Model:
    """The model without validity ranges (same numbers)."""
    changed = dataclasses.replace(model, validity=MappingProxyType({}), regions=())
    if model.variants and model.variant is None:
        variants = {name: _stripped(v) for name, v in model.variants.items()}
        frozen = MappingProxyType(variants)
        object.__setattr__(changed, "variants", frozen)
        for v in variants.values():
            object.__setattr__(v, "variants", frozen)
    return changed


# attributes a Silicon is built with; everything else in its __dict__ is a cache
_MATERIAL_STATE = (
    "release",
    "catalogue",
    "strict",
    "_overrides",
    "overridden",
    "_models",
    "_report",
)


def changed_material(si, values: Mapping, cache: dict | None = None):
    """A copy of material ``si`` whose models carry the changed numbers ``values`` (see
    :func:`substitute`), with no validity ranges and ``strict`` off; its caches (bound
    compositions, kernels) are rebuilt from the changed models on first use."""
    new = object.__new__(type(si))
    new.__dict__.update({k: v for k, v in si.__dict__.items() if k in _MATERIAL_STATE})
    new.strict = False
    new._models = {q: substitute(m, values, cache) for q, m in si._models.items()}
    return new


def values_for(found: list[Direction], deviations, models: Mapping[tuple, Model]) -> dict:
    """The substitution mapping for one set of deviations from the nominal numbers
    (``deviations[j]`` for ``found[j]``: floats, or Duals' seeds)."""
    values: dict = {}
    for d, e in zip(found, deviations, strict=True):
        if d.output is not None:
            values.setdefault((d.quantity, d.variant, OUTPUT), []).append((d.output, e))
            continue
        key = (d.quantity, d.variant, d.name)
        if key not in values:
            model = models[(d.quantity, d.model)]
            if d.variant is not None:
                model = model.select(d.variant)
            nominal = model.coefficients[d.name].kernel_value
            values[key] = np.array(nominal, dtype=float) if d.index is not None else float(nominal)
        if d.index is None:
            values[key] = values[key] + e
        else:
            values[key][d.index] += e
    return values


def dual_values(found: list[Direction], models: Mapping[tuple, Model]) -> dict:
    """The substitution mapping with a :class:`~matprops.kernels._coefficients.Dual` for
    each uncertain number: direction ``j`` of every tangent is ``found[j]``."""
    from ..kernels._coefficients import Dual

    k = len(found)
    values: dict = {}
    for j, d in enumerate(found):
        unit = np.zeros(k)
        unit[j] = 1.0
        if d.output is not None:
            values.setdefault((d.quantity, d.variant, OUTPUT), []).append(
                (d.output, Dual(0.0, unit))
            )
            continue
        key = (d.quantity, d.variant, d.name)
        if key not in values:
            model = models[(d.quantity, d.model)]
            if d.variant is not None:
                model = model.select(d.variant)
            nominal = model.coefficients[d.name].kernel_value
            value = np.array(nominal, dtype=float) if np.ndim(nominal) else float(nominal)
            values[key] = Dual(value, np.zeros(np.shape(value) + (k,)))
        if d.index is None:
            values[key].tangent[..., j] = 1.0
        else:
            values[key].tangent[d.index, j] = 1.0
    return values
