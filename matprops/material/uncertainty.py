"""How sure is each number: ``uncertainty=True`` on every public method and bound kernel.

Two figures, never added together:

1. **Coefficient uncertainty** (``.uncertainty``): the standard uncertainty (k = 1) of
   the value that follows from the uncertainties the models' sources state - on their
   coefficients (with correlations where given) and as accuracies of their output over
   a range (see :mod:`matprops.material.propagation`). Propagated

   - *linearly* through analytic partial derivatives with respect to the coefficients
     (forward-mode differentiation of the kernel, :mod:`matprops.kernels._coefficients`)
     where the value comes from one bound kernel whose code is smooth arithmetic:
     ``u^2 = J C J^T``; or
   - by *Monte Carlo* (seeded; ``samples=`` draws of every uncertain number from its
     distribution: normal, or uniform for an uncorrelated bound; the whole method is
     evaluated on a material carrying each draw, so compositions and the equilibrium
     solver propagate through their parts). Used where the linear path does not apply
     (solved and composed quantities, tabulated models), or when asked for with
     ``method="monte-carlo"``.

   Where no model behind a value has a stated uncertainty, ``.uncertainty`` is NaN and
   ``.status`` says ``"not stated"`` (the sources were read and give none) or ``"not
   known"`` (not checked here) - never zero. ``"partial"``: some of the models behind
   the value state an uncertainty and some do not; the figure covers only the former
   and is a lower bound.
2. **Model spread** (``.model_spread``): largest minus smallest value over the
   catalogue's models valid at each point (the release's own and each alternative of
   each quantity behind the value, swapped in one at a time), with the number of
   models that were valid there (``.models_valid``). A different question ("how much
   do published models disagree"), reported beside the first.

The values are model estimates. Where they feed decisions with consequences, defer to
measured data, local codes and licensed practice.
"""

from __future__ import annotations

import dataclasses
import functools
import inspect
import math
from collections.abc import Mapping

import numpy as np

from ..errors import Error, InputError
from .propagation import (
    Direction,
    changed_material,
    covariance,
    directions,
    dual_values,
    models_of,
    values_for,
)

__all__ = ["KernelUncertain", "Uncertain", "UncertainFields", "public_methods", "with_uncertainty"]

METHODS = ("auto", "linear", "monte-carlo")
DEFAULT_SAMPLES = 1000
BUDGET_POINTS = 10_000  # the budget (contributions) is estimated on at most this many points


def public_methods() -> tuple[str, ...]:
    """The Silicon methods that answer uncertainty=True: every method serving a quantity
    of the registry."""
    from .registry import REGISTRY

    return tuple(REGISTRY.methods())


# a method that is one bound kernel's value under another name or shape:
# method -> (kernel quantity, which part of the kernel's tuple, or "sum" of the pair)
_KERNEL_OF = {
    "gap_narrowing": ("gap_narrowing", "sum"),
    "band_edge_shifts": ("gap_narrowing", None),
    "dopant_level": ("ionisation", None),
    "ionisation_energy": ("ionisation", 0),
}
# the method's arguments -> the kernel's inputs and options
_ALIASES = {
    "temperature": "temperature",
    "T": "temperature",
    "Na": "acceptor_density",
    "Nd": "donor_density",
    "n": "electron_density",
    "p": "hole_density",
    "excess": "excess_density",
    "wavelength": "wavelength",
    "N": "dopant_density",
    "field": "field",
}
_FIXED = ("carrier", "dopant", "donor", "acceptor")
_EQUILIBRIUM_PARTS = ("densities_of_states", "intrinsic_density", "gap_narrowing", "ionisation")


@dataclasses.dataclass(frozen=True, repr=False)
class Uncertain:
    """A value with its coefficient uncertainty and, beside it, the model spread.

    Attributes
    ----------
    value : pint quantity, as the method returns it without ``uncertainty=True``
    uncertainty : pint quantity, standard uncertainty (k = 1) from the sources' stated
        uncertainties; NaN where none is stated (see ``status``)
    status : ``"stated"`` (every model behind the value states one), ``"partial"`` (only
        some: a lower bound; ``unstated`` lists the others), ``"not stated"`` (the
        sources were read and state none), ``"not known"`` (not checked here)
    method : ``"linear"``, ``"monte-carlo"`` or ``"none"``
    samples, seed : of the Monte Carlo draws (0 and None for linear)
    contributions : uncertain number -> its share of the variance (linear, averaged over
        the points; by Monte Carlo not separated: empty)
    unstated : the models behind the value whose sources state no uncertainty
    model_spread : pint quantity or None; largest minus smallest value over the
        catalogue's models valid at each point (never added to ``uncertainty``)
    models_valid : number of models valid at each point (array) or None
    stated_accuracies : the sources' own statements of the output's accuracy that
        concern this value (dicts, for comparison)
    notes : what the figure covers and how it was obtained
    """

    value: object
    uncertainty: object
    status: str
    method: str
    samples: int = 0
    seed: int | None = None
    contributions: Mapping[str, float] = dataclasses.field(default_factory=dict)
    unstated: tuple[str, ...] = ()
    model_spread: object = None
    models_valid: object = None
    stated_accuracies: tuple = ()
    notes: tuple[str, ...] = ()

    def __iter__(self):  # value, uncertainty = si.band_gap(300, uncertainty=True)
        return iter((self.value, self.uncertainty))

    @property
    def relative_uncertainty(self):
        """``uncertainty / |value|`` (dimensionless)."""
        return (self.uncertainty / abs(self.value)).to("dimensionless")

    @property
    def largest_contribution(self) -> str | None:
        """The uncertain number that contributes most to the variance (linear only)."""
        if not self.contributions:
            return None
        return max(self.contributions, key=self.contributions.get)

    def as_dict(self) -> dict:
        """The figures and how they were obtained (magnitudes as lists, units as text)."""

        def plain(q):
            if q is None:
                return None
            return {"magnitude": np.asarray(q.magnitude).tolist(), "units": f"{q.units:~}"}

        return {
            "value": plain(self.value),
            "uncertainty": plain(self.uncertainty),
            "status": self.status,
            "method": self.method,
            "samples": self.samples,
            "seed": self.seed,
            "contributions": dict(self.contributions),
            "largest_contribution": self.largest_contribution,
            "unstated": list(self.unstated),
            "model_spread": plain(self.model_spread),
            "models_valid": None
            if self.models_valid is None
            else np.asarray(self.models_valid).tolist(),
            "stated_accuracies": list(self.stated_accuracies),
            "notes": list(self.notes),
        }

    def __repr__(self) -> str:
        def show(q):
            m = np.asarray(q.magnitude)
            text = (
                f"{m.item():.6g}" if m.size == 1 else np.array2string(m, precision=4, threshold=6)
            )
            return f"{text} {q.units:~P}"

        lines = [
            f"<Uncertain value = {show(self.value)}",
            f"  uncertainty (k=1) = {show(self.uncertainty)}  [{self.status}; {self.method}"
            + (f", {self.samples} samples, seed {self.seed}" if self.samples else "")
            + "]",
        ]
        if self.largest_contribution:
            lines.append(f"  largest contribution: {self.largest_contribution}")
        if self.unstated:
            lines.append(f"  no stated uncertainty: {', '.join(self.unstated)}")
        if self.model_spread is not None:
            lines.append(f"  model spread (beside, not added) = {show(self.model_spread)}")
        return "\n".join(lines) + "\n>"


@dataclasses.dataclass(frozen=True, repr=False)
class UncertainFields:
    """The answer of a method returning several fields (equilibrium, lifetimes ...):
    the plain result (``.result``) and one :class:`Uncertain` per quantity field."""

    result: object
    fields: Mapping[str, Uncertain]

    def __getattr__(self, name):
        fields = self.__dict__.get("fields", {})
        if name in fields:
            return fields[name]
        raise AttributeError(name)

    def __getitem__(self, name):
        return self.fields[name]

    def __iter__(self):
        return iter(self.fields.items())

    def __repr__(self) -> str:
        return "\n".join(f"{name}: {value!r}" for name, value in self.fields.items())


# ---------------------------------------------------------------------- the wrapper
def with_uncertainty(method):
    """Give a Silicon method the options ``uncertainty=``, ``samples=``, ``seed=``,
    ``uncertainty_method=`` and ``spread=``; without ``uncertainty=True`` it is the
    method itself."""

    @functools.wraps(method)
    def wrapper(
        self,
        *args,
        uncertainty=False,
        samples=None,
        seed=0,
        uncertainty_method="auto",
        spread=True,
        **kwargs,
    ):
        if uncertainty is False or uncertainty is None:
            if samples is not None:
                raise InputError("samples", "given only with uncertainty=True", samples)
            return method(self, *args, **kwargs)
        if uncertainty is not True:
            raise InputError("uncertainty", "True or False", repr(uncertainty))

        def call(material):
            return method(material, *args, **kwargs)

        return evaluate(
            self,
            method.__name__,
            call,
            method,
            args,
            kwargs,
            samples=samples,
            seed=seed,
            how=uncertainty_method,
            spread=spread,
        )

    wrapper.__doc__ = (method.__doc__ or "") + _OPTIONS_DOC
    return wrapper


_OPTIONS_DOC = """

        With ``uncertainty=True`` the answer is an :class:`~matprops.material.uncertainty.
        Uncertain` (a result object of several fields: one per field): the value, its
        standard uncertainty from the sources' stated coefficient uncertainties (NaN and
        a status saying so where none is stated), and beside it the spread over the
        catalogue's models valid at each point. ``uncertainty_method``: ``"auto"``
        (linear where the value is one smooth kernel, else Monte Carlo), ``"linear"``,
        ``"monte-carlo"``; ``samples`` (default 1000) and ``seed`` (default 0) of the
        Monte Carlo draws where they are used; ``spread=False`` skips the model spread.
"""


# ---------------------------------------------------------------------- the engine
def _parts(result):
    """A method's result as named float arrays (magnitudes) and their units."""
    from .results import Result

    if isinstance(result, Result):
        return {
            n: (np.asarray(q.magnitude, float), q.units) for n, q in result.quantities().items()
        }
    if isinstance(result, tuple):
        return {i: (np.asarray(q.magnitude, float), q.units) for i, q in enumerate(result)}
    return {None: (np.asarray(result.magnitude, float), result.units)}


def used_models(si, name: str, options: Mapping | None = None) -> dict:
    """(quantity, model id) -> bound model, for every model a method's value depends on
    (the quantity registry's declaration: its models and the models it uses)."""
    from .registry import REGISTRY

    declared = REGISTRY.for_method(name, options or {})
    quantities = list(declared.needs) if declared is not None else [name]
    found: dict = {}
    for q in quantities:
        if q in si._models:
            models_of(si._models[q], found)
    # a model that depends on the free carriers gets them from the equilibrium solver
    if any("electron_density" in m.inputs for m in found.values()):
        for q in _EQUILIBRIUM_PARTS:
            if q in si._models:
                models_of(si._models[q], found)
    return found


def _selected_directions(models: Mapping[tuple, object], fixed=None) -> list[Direction]:
    found, seen = [], set()
    for model in models.values():
        chosen = [model]
        if model.variants and model.variant is None:
            chosen = list(model.variants.values())  # every coefficient set may be used
        for m in chosen:
            for d in directions(m, seen):
                found.append(d)
    return found


def _status(models: Mapping[tuple, object], found: list[Direction]):
    """(status, models without a stated uncertainty that propagates)."""
    with_numbers = {(d.quantity, d.model) for d in found}
    labels = {}
    for (q, _), m in models.items():
        if (q, m.id) in with_numbers:
            continue
        statement = m.uncertainty.statement
        if statement == "stated":  # only at points (e.g. ni at 300 K): reported beside
            statement = "not stated but at points, see stated_accuracies"
        labels[f"{q}/{m.id}"] = statement
    unstated = tuple(f"{k} ({v})" for k, v in labels.items())
    if not found:
        known = all(v.startswith("not stated") for v in labels.values())
        return ("not stated" if known else "not known"), unstated
    return ("stated" if not unstated else "partial"), unstated


def evaluate(si, name, call, method, args, kwargs, *, samples, seed, how, spread):
    if how not in METHODS:
        raise InputError("uncertainty_method", f"one of {', '.join(METHODS)}", repr(how))
    if samples is not None and (
        isinstance(samples, bool) or not isinstance(samples, (int, np.integer)) or samples < 2
    ):
        raise InputError("samples", "an integer of at least 2", repr(samples))
    nominal = call(si)  # the value, with the usual checks and warnings
    parts = _parts(nominal)
    models = used_models(si, name, kwargs)
    found = _selected_directions(models)
    status, unstated = _status(models, found)
    accuracies = tuple(
        {"model": f"{q}/{m.id}", **o.as_dict()}
        for (q, _), m in models.items()
        for o in m.uncertainty.outputs
    )
    notes = []
    sigma = None
    used, drawn, contributions = "none", 0, {}
    if found:
        if how in ("auto", "linear"):
            linear = _linear_method(si, name, method, args, kwargs, found, models, parts)
            if linear is not None:
                sigma, contributions = linear
                used = "linear"
            elif how == "linear":
                raise InputError(
                    "uncertainty_method",
                    f"'monte-carlo' or 'auto' for {name}: its value is not one smooth "
                    "kernel's (composed, solved or tabulated)",
                    "'linear'",
                )
        if sigma is None:
            drawn = DEFAULT_SAMPLES if samples is None else int(samples)
            sigma, rejected = _monte_carlo(si, call, found, models, parts, drawn, seed)
            used = "monte-carlo"
            if rejected:
                notes.append(
                    f"{rejected} of {drawn} draws failed (solver or domain) and were left out"
                )
    else:
        notes.append(
            "no model behind this value states an uncertainty: the uncertainty is NaN, not zero"
        )
    if status == "partial":
        notes.append(
            "only some models behind this value state an uncertainty: the figure covers "
            "those only and is a lower bound"
        )
    spreads = _spread(si, name, call, method, args, kwargs, models, parts) if spread else None
    answers = {}
    for key, (value, units) in parts.items():
        s = np.full(np.shape(value), np.nan) if sigma is None else sigma[key]
        spread_value, count = (None, None) if spreads is None else spreads.get(key, (None, None))
        answers[key] = Uncertain(
            value=_quantity(value, units),
            uncertainty=_quantity(s, units),
            status=status,
            method=used,
            samples=drawn,
            seed=seed if drawn else None,
            contributions=contributions.get(key, {}) if contributions else {},
            unstated=unstated,
            model_spread=None if spread_value is None else _quantity(spread_value, units),
            models_valid=count,
            stated_accuracies=accuracies,
            notes=tuple(notes),
        )
    if list(answers) == [None]:
        return answers[None]
    if all(isinstance(k, int) for k in answers):
        return tuple(answers[k] for k in sorted(answers))
    return UncertainFields(nominal, answers)


def _quantity(value, units):
    from ..units import quantity

    value = np.asarray(value, dtype=float)
    return quantity(value if value.ndim else float(value), units)


# ---------------------------------------------------------------------- linear
def _kernel_call(si, name, method, args, kwargs):
    """(bound kernel, inputs in kernel units, how to read the kernel's result) for a
    method whose value is one bound kernel's; None otherwise."""
    from ..units import coerce

    quantity, part = _KERNEL_OF.get(name, (name, None))
    try:
        bound = inspect.signature(method).bind(si, *args, **kwargs)
    except TypeError:
        return None
    bound.apply_defaults()
    fixed, inputs = {}, {}
    defaults = inspect.signature(method).parameters
    for parameter, value in list(bound.arguments.items())[1:]:
        if parameter in _FIXED:
            fixed[parameter] = value
        elif parameter in _ALIASES:
            if value is None:
                continue
            inputs[_ALIASES[parameter]] = coerce(value, parameter)[0]
        elif value is not defaults[parameter].default:
            return None  # an option that changes the composition: Monte Carlo
        # (an option at its default: the kernel's value is compared with the method's)
    try:
        kernel = si.kernel(quantity, **fixed)
    except (Error, TypeError, KeyError):
        return None
    if set(inputs) - set(kernel.inputs) or (set(kernel.inputs) - kernel._optional) - set(inputs):
        return None
    return kernel, inputs, part


def _linear_method(si, name, method, args, kwargs, found, models, parts):
    """Linear propagation of a method's value through its kernel, or None."""
    made = _kernel_call(si, name, method, args, kwargs)
    if made is None:
        return None
    kernel, inputs, part = made
    result = kernel_linear(si, kernel, inputs, found, models, part=part)
    if result is None:
        return None
    value, sigma, contributions = result
    values = value if isinstance(value, tuple) else (value,)
    sigmas = sigma if isinstance(sigma, tuple) else (sigma,)
    shares = contributions if isinstance(value, tuple) else (contributions,)
    if len(values) != len(parts):
        return None
    out_sigma, out_shares = {}, {}
    for (key, (expected, _)), v, s, c in zip(parts.items(), values, sigmas, shares, strict=True):
        v = np.broadcast_to(v, np.shape(expected))
        # the method may return other units than the kernel (lattice constant: nm, cm)
        with np.errstate(divide="ignore", invalid="ignore"):
            ratio = np.where(v != 0, expected / v, 1.0)
        if not np.allclose(ratio, np.ravel(ratio)[0] if np.size(ratio) else 1.0, rtol=1e-9):
            return None  # not the same value: leave it to Monte Carlo
        scale = float(np.ravel(ratio)[0]) if np.size(ratio) else 1.0
        out_sigma[key] = np.broadcast_to(np.abs(scale) * s, np.shape(expected))
        out_shares[key] = c
    return out_sigma, out_shares


def kernel_linear(si, kernel, inputs, found, models, part=None):
    """Value, standard uncertainty and variance shares of a bound kernel at ``inputs``
    (kernel units) by linear propagation, or None where the kernel cannot be
    differentiated with respect to its coefficients (then Monte Carlo applies)."""
    from ..kernels._blocks import evaluate as blocks
    from ..kernels._coefficients import NotDifferentiable, split

    if not kernel._blocked:  # several fields from a solver
        return None
    cov = covariance(found, models)
    k = len(found)
    material = changed_material(si, dual_values(found, models))
    try:
        dual_kernel = material.kernel(kernel.quantity, **kernel._fixed)
    except Error:
        return None
    function = dual_kernel._function
    options = {}

    def flat(**block):
        value, tangent = split(function(**block, **options), k)
        if part == "sum":
            value, tangent = value[0] + value[1], tangent[0] + tangent[1]
        elif isinstance(part, int):
            value, tangent = value[part], tangent[part]
        if isinstance(value, tuple):
            return tuple(value) + tuple(_sigma(t, cov) for t in tangent)
        return value, _sigma(tangent, cov)

    flat.block = getattr(getattr(function, "func", function), "block", None) or 1 << 14
    try:
        probe = {n: np.ravel(np.asarray(v, float))[:1] for n, v in inputs.items()}
        flat(**probe)
        out = blocks(flat, inputs)
    except (NotDifferentiable, Error):
        return None
    half = len(out) // 2
    value, sigma = (out[:half], out[half:]) if half > 1 else (out[0], out[1])
    contributions = _budget(flat_tangent(function, k, part), inputs, found, cov)
    return value, sigma, contributions


def _sigma(tangent, cov):
    """sqrt(t C t^T) per point (tangent: points x k)."""
    variance = np.einsum("...i,ij,...j->...", tangent, cov, tangent)
    return np.sqrt(np.maximum(variance, 0.0))


def flat_tangent(function, k, part):
    from ..kernels._coefficients import split

    def tangents(**block):
        _, tangent = split(function(**block), k)
        if part == "sum":
            return tangent[0] + tangent[1]
        if isinstance(part, int):
            return tangent[part]
        return tangent

    return tangents


def _budget(tangents, inputs, found, cov):
    """Each uncertain number's share of the variance (its own term J_i^2 sigma_i^2 over
    the total; covariance terms not attributed), averaged over up to BUDGET_POINTS
    points."""
    arrays = {n: np.asarray(v, float) for n, v in inputs.items()}
    shape = np.broadcast_shapes(*(a.shape for a in arrays.values())) if arrays else ()
    size = math.prod(shape)
    if size > BUDGET_POINTS:
        pick = np.linspace(0, size - 1, BUDGET_POINTS).astype(int)
        arrays = {n: np.broadcast_to(a, shape).reshape(-1)[pick] for n, a in arrays.items()}
    t = tangents(**arrays)
    variances = np.diag(cov)

    def shares(tangent):
        terms = np.asarray(tangent) ** 2 * variances
        total = terms.sum(axis=-1, keepdims=True)
        with np.errstate(divide="ignore", invalid="ignore"):
            ratio = np.where(total > 0, terms / total, np.nan)
        mean = np.nanmean(ratio.reshape(-1, len(found)), axis=0) if ratio.size else ratio
        return {d.label: float(m) for d, m in zip(found, mean, strict=True) if np.isfinite(m)}

    if isinstance(t, tuple):
        return tuple(shares(x) for x in t)
    return shares(t)


# ---------------------------------------------------------------------- Monte Carlo
def draws(found: list[Direction], cov: np.ndarray, samples: int, seed) -> np.ndarray:
    """``samples`` x k deviations from the nominal numbers: normal with covariance
    ``cov``; an uncorrelated "bound" (limits) uniform within its limits (GUM 4.3.7)."""
    rng = np.random.default_rng(seed)
    k = len(found)
    correlated = np.abs(cov - np.diag(np.diag(cov))).sum(axis=0) > 0
    factor = np.linalg.cholesky(cov + np.eye(k) * 1e-300) if correlated.any() else None
    normal = rng.standard_normal((samples, k))
    deviations = normal @ factor.T if factor is not None else normal * np.sqrt(np.diag(cov))
    for j, d in enumerate(found):
        if d.kind == "bound" and not correlated[j]:
            half_width = d.sigma * math.sqrt(3.0)
            deviations[:, j] = rng.uniform(-half_width, half_width, samples)
    return deviations


def _monte_carlo(si, call, found, models, parts, samples, seed):
    """Standard deviation of the method's value over ``samples`` materials carrying
    drawn numbers; accumulated in place (memory: a few arrays of the result's size)."""
    deviations = draws(found, covariance(found, models), samples, seed)
    sums = {k: np.zeros(np.shape(v)) for k, (v, _) in parts.items()}
    squares = {k: np.zeros(np.shape(v)) for k, (v, _) in parts.items()}
    counts = {k: np.zeros(np.shape(v)) for k, (v, _) in parts.items()}
    cache: dict = {}
    rejected = 0
    for row in deviations:
        material = changed_material(si, values_for(found, row, models), cache)
        try:
            sample = _parts(call(material))
        except (Error, FloatingPointError, ArithmeticError):
            rejected += 1
            continue
        for key, (value, _) in parts.items():
            d = np.subtract(sample[key][0], value)
            ok = np.isfinite(d)
            d = np.where(ok, d, 0.0)
            sums[key] += d
            counts[key] += ok
            d *= d
            squares[key] += d
    sigma = {}
    for key in parts:
        n = counts[key]
        with np.errstate(divide="ignore", invalid="ignore"):
            variance = (squares[key] - sums[key] ** 2 / n) / (n - 1)
        sigma[key] = np.sqrt(np.maximum(variance, 0.0))
    return sigma, rejected


def kernel_monte_carlo(si, kernel, inputs, found, models, samples, seed, part=None):
    """Standard deviation of a bound kernel's value over ``samples`` draws."""
    from ..kernels._blocks import evaluate as blocks

    deviations = draws(found, covariance(found, models), samples, seed)
    value = kernel(**inputs)
    sums = squares = None
    cache: dict = {}
    buffer = None
    for row in deviations:
        material = changed_material(si, values_for(found, row, models), cache)
        changed = material.kernel(kernel.quantity, **kernel._fixed)
        if kernel._blocked:
            if buffer is None:
                buffer = (
                    tuple(np.empty_like(v) for v in value)
                    if isinstance(value, tuple)
                    else (np.empty_like(np.asarray(value, float)) if np.ndim(value) else None)
                )
            sample = blocks(changed._function, inputs, out=buffer)
        else:
            sample = changed(**inputs)
        sample = sample if isinstance(sample, tuple) else (sample,)
        nominal = value if isinstance(value, tuple) else (value,)
        if isinstance(sample[0], dict):
            sample, nominal = tuple(sample[0].values()), tuple(nominal[0].values())
        if sums is None:
            sums = [np.zeros(np.shape(v)) for v in nominal]
            squares = [np.zeros(np.shape(v)) for v in nominal]
        for j, (s, v) in enumerate(zip(sample, nominal, strict=True)):
            d = np.subtract(s, v, out=s if isinstance(s, np.ndarray) and s.dtype == float else None)
            sums[j] += d
            d *= d
            squares[j] += d
    sigmas = tuple(
        np.sqrt(np.maximum((q - s * s / samples) / (samples - 1), 0.0))
        for s, q in zip(sums, squares, strict=True)
    )
    if isinstance(value, dict):
        return value, dict(zip(value, sigmas, strict=True))
    return value, (sigmas if isinstance(value, tuple) else sigmas[0])


# ---------------------------------------------------------------------- model spread
def _valid(model, inputs: Mapping[str, np.ndarray], shape) -> np.ndarray:
    """Where a model's validity ranges hold (inputs it has ranges for; others pass)."""
    mask = np.ones(shape, dtype=bool)
    for name, rng in model.validity.items():
        if name in inputs:
            x = np.broadcast_to(inputs[name], shape)
            mask &= (x >= rng.low) & (x <= rng.high)
    for component in model.components.values():
        mask &= _valid(component, inputs, shape)
    return mask


def _spread(si, name, call, method, args, kwargs, models, parts):
    """part -> (largest minus smallest over the models valid at each point, count)."""
    from ..units import coerce

    try:
        bound = inspect.signature(method).bind(si, *args, **kwargs)
        bound.apply_defaults()
    except TypeError:
        return None
    inputs = {}
    for parameter, value in list(bound.arguments.items())[1:]:
        if parameter in _ALIASES and value is not None:
            try:
                inputs[_ALIASES[parameter]] = coerce(value, parameter)[0]
            except Error:
                pass
    quantities = sorted({q for q, _ in models})
    shape = np.shape(next(iter(parts.values()))[0])
    own_mask = np.ones(shape, dtype=bool)
    for model in models.values():
        own_mask &= _valid(model, inputs, shape)
    low = {k: np.where(own_mask, v, np.inf) for k, (v, _) in parts.items()}
    high = {k: np.where(own_mask, v, -np.inf) for k, (v, _) in parts.items()}
    count = own_mask.astype(int)
    overrides = dict(si._overrides)
    for quantity in quantities:
        for model_id in si.catalogue.model_ids(quantity):
            if model_id == si._models[quantity].id:
                continue
            try:
                other = type(si)(
                    release=si.release.id,
                    models={**overrides, quantity: model_id},
                    catalogue=si.catalogue,
                )
                changed = changed_material(other, {})
                sample = _parts(call(changed))
            except Exception:  # an alternative that cannot serve these inputs: skipped
                continue
            mask = np.ones(shape, dtype=bool)
            for key in models:
                q = key[0]
                if q in other._models:
                    mask &= _valid(other._models[q], inputs, shape)
            for key in parts:
                v = np.broadcast_to(sample[key][0], shape)
                ok = mask & np.isfinite(v)
                low[key] = np.where(ok, np.minimum(low[key], v), low[key])
                high[key] = np.where(ok, np.maximum(high[key], v), high[key])
            count = count + mask
    result = {}
    for key in parts:
        with np.errstate(invalid="ignore"):
            spread = np.where(count > 0, high[key] - low[key], np.nan)
        result[key] = (spread, count)
    return result


# ---------------------------------------------------------------------- bound kernels
@dataclasses.dataclass(frozen=True, repr=False)
class KernelUncertain:
    """A bound kernel's value and standard uncertainty as plain arrays (kernel units).

    ``value, sigma = kernel(T, uncertainty=True)`` unpacks the two; ``status``,
    ``method``, ``contributions`` and ``unstated`` as for :class:`Uncertain` (``sigma``
    NaN where no source states an uncertainty). The same structure as the kernel's
    value: a tuple of arrays for a kernel returning a tuple, a dict for equilibrium.
    """

    value: object
    uncertainty: object
    status: str
    method: str
    samples: int = 0
    seed: int | None = None
    contributions: Mapping[str, float] = dataclasses.field(default_factory=dict)
    unstated: tuple[str, ...] = ()

    def __iter__(self):
        return iter((self.value, self.uncertainty))

    def __repr__(self) -> str:
        return (
            f"<KernelUncertain {self.status}; {self.method}: value {self.value!r}, "
            f"uncertainty {self.uncertainty!r}>"
        )


def kernel_answer(kernel, arguments, *, samples=None, seed=0, how="auto"):
    """``kernel(**arguments, uncertainty=True)``: see :class:`KernelUncertain`."""
    if how not in METHODS:
        raise InputError("uncertainty_method", f"one of {', '.join(METHODS)}", repr(how))
    si = kernel._si
    if kernel.model is not None:
        models = models_of(kernel.model, {})
    else:
        models = used_models(si, kernel.quantity)
    found = _selected_directions(models)
    status, unstated = _status(models, found)
    if not found:
        value = kernel(**arguments)
        return KernelUncertain(value, _nan_like(value), status, "none", unstated=unstated)
    if how != "monte-carlo":
        linear = kernel_linear(si, kernel, arguments, found, models)
        if linear is not None:
            value, sigma, shares = linear
            return KernelUncertain(value, sigma, status, "linear", 0, None, shares, unstated)
        if how == "linear":
            raise InputError(
                "uncertainty_method",
                f"'monte-carlo' or 'auto' for the {kernel.quantity} kernel "
                "(not differentiable with respect to its coefficients)",
                "'linear'",
            )
    drawn = DEFAULT_SAMPLES if samples is None else int(samples)
    value, sigma = kernel_monte_carlo(si, kernel, arguments, found, models, drawn, seed)
    return KernelUncertain(value, sigma, status, "monte-carlo", drawn, seed, {}, unstated)


def _nan_like(value):
    if isinstance(value, tuple):
        return tuple(_nan_like(v) for v in value)
    if isinstance(value, dict):
        return {k: _nan_like(v) for k, v in value.items()}
    return np.full(np.shape(value), np.nan)


# ---------------------------------------------------------------------- tables
class _Figures:
    """A table entry whose parts are the uncertainty and the model spread of the entry's
    outputs (for the table's block evaluation)."""

    def __init__(self, entry, options, record):
        self._entry, self._options, self._record = entry, options, record
        self.takes = entry.takes
        self.fields = ()

    def call(self, si, values):
        entry = self._entry
        names = entry.parameters(si)
        result = getattr(si, entry.method or entry.name)(
            **{names[ax][0]: value for ax, value in values.items() if ax in names},
            **entry.fixed,
            **self._options,
        )
        if isinstance(result, tuple):
            parts = list(result)
        elif entry.fields:
            parts = [result[name] for name in entry.fields]
        else:
            parts = [result]
        for (variable, _), part in zip(entry.outputs, parts, strict=True):
            self._record.setdefault(variable, []).append(part)
        spreads = tuple(
            part.model_spread if part.model_spread is not None else part.uncertainty * np.nan
            for part in parts
        )
        return tuple(part.uncertainty for part in parts) + spreads


def table_figures(si, data, entries, grid, call_block, *, samples=None, seed=0, spread=True):
    """Add ``<variable>_uncertainty`` (and ``<variable>_model_spread``) to a table,
    linked to their variable by CF ``ancillary_variables`` (``call_block``: the table's
    block evaluation)."""
    from ..units import cf_units

    options = {"uncertainty": True, "samples": samples, "seed": seed, "spread": spread}
    for entry in entries:
        dims = grid.dims_of(entry)
        values = {n: grid.values[n] for n in entry.takes if n in grid}
        record: dict = {}
        outs, units = call_block(si, _Figures(entry, options, record), values, dims)
        count = len(entry.outputs)
        for j, (variable, long_name) in enumerate(entry.outputs):
            answers = record.get(variable, [])
            statuses = sorted({a.status for a in answers})
            methods = sorted({a.method for a in answers})
            unstated = sorted({u for a in answers for u in a.unstated})
            contributions: dict = {}
            for a in answers:
                for label, share in a.contributions.items():
                    contributions[label] = max(contributions.get(label, 0.0), share)
            name = f"{variable}_uncertainty"
            attrs = {
                "units": cf_units(units[j]),
                "long_name": f"standard uncertainty (k = 1) of {long_name}, from the "
                "sources' stated coefficient uncertainties",
                "uncertainty_status": ", ".join(statuses),
                "uncertainty_method": ", ".join(methods),
                "comment": "NaN where no source behind the value states an uncertainty "
                "(not zero); the model spread is a separate variable, never added",
            }
            if unstated:
                attrs["models_without_stated_uncertainty"] = "; ".join(unstated)
            if contributions:
                attrs["largest_contribution"] = max(contributions, key=contributions.get)
            if samples is not None or "monte-carlo" in methods:
                attrs["monte_carlo"] = f"{samples or DEFAULT_SAMPLES} samples, seed {seed}"
            parent = data[variable].attrs
            if "standard_name" in parent:  # CF's standard-name modifier
                attrs["standard_name"] = f"{parent['standard_name']} standard_error"
            data[name] = (tuple(dims), outs[j], attrs)
            ancillary = [name]
            if spread:
                spread_name = f"{variable}_model_spread"
                data[spread_name] = (
                    tuple(dims),
                    outs[count + j],
                    {
                        "units": cf_units(units[count + j]),
                        "long_name": f"spread (largest minus smallest) of {long_name} over "
                        "the catalogue's models valid at each point; beside the "
                        "uncertainty, not added to it",
                    },
                )
                ancillary.append(spread_name)
            data[variable].attrs["ancillary_variables"] = " ".join(ancillary)
    return data
