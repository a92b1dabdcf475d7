"""Bound kernels: the door for simulation codes.

``si.kernel(quantity, **fixed)`` hands out a :class:`BoundKernel`: the release's
model for that quantity bound to its coefficients, called on plain floats or
arrays in fixed internal units, with no unit handling and no validity check per
call. It describes itself (its docstring and repr state the inputs with their
units, the output units, the model id and the citation; ``.provenance`` holds
the full record), validates a whole mesh once with :meth:`BoundKernel.check`,
evaluates large inputs in blocks into one preallocated output, and, for the
smooth closed-form models, returns partial derivatives with
:meth:`BoundKernel.derivatives`.

Policies (stated in every kernel's docstring):

- **Names.** Inputs are named as in the argument vocabulary
  (:mod:`matprops.vocabulary`), and any of an input's names is accepted
  (``temperature`` or ``T``, ``donor_density`` or ``Nd``). Densities (cm^-3) are
  keyword-only: ``mobility(300.0, donor_density=nd, acceptor_density=na, ...)``; only
  the inputs before the first density may be given by position.
- **Units.** Internal units throughout (K, cm, cm^-3, eV, s, V, nm for
  wavelengths). Where the public method returns other units, the kernel says so
  loudly (``lattice_constant``: the kernel gives cm, ``si.lattice_constant`` nm).
  A pint quantity given to a kernel (or to ``kernel.check``) is *converted* to the
  input's internal unit (25 degC -> 298.15 K, 1e22 m^-3 -> 1e16 cm^-3, a photon
  energy -> nm), never stripped; a quantity of the wrong dimension is a
  :class:`~matprops.UnitError`. Dates and durations (numpy ``datetime64`` /
  ``timedelta64``, Python ``datetime`` / ``timedelta``) are refused with a
  :class:`~matprops.UnitError`. Plain floats and float arrays take no detour.
- **dtype.** Every kernel computes in float64 and returns float64 whatever the
  input dtype: doping quantities square densities up to 1e21 cm^-3 (1e42 is beyond
  float32's 3e38), Auger coefficients of 1e-30 cm^6/s lie below its smallest
  normal number (1e-38), and the equilibrium solver needs 1e-12 relative
  neutrality (float32 carries 6e-8). To store a result in float32, pass
  ``out=`` a float32 array: each block is computed in float64 and cast on writing.
  ``out=`` of any other dtype (integers, booleans, complex) is refused with a
  :class:`TypeError` (numpy would truncate a band gap of 1.12 eV to 1).
- **Memory.** Inputs of more than :data:`~matprops.kernels._blocks.BLOCK` points
  (numpy arrays) are evaluated in blocks of that size into one output: extra memory
  is the result plus a few block-sized temporaries, cost linear in the size.
- **Array API.** Closed-form kernels accept any array-API-standard array (CuPy,
  JAX, PyTorch through array-api-compat, ``array_api_strict``) and compute in its
  namespace, unblocked. Table interpolation and the equilibrium solver take numpy
  arrays only and raise :class:`TypeError` saying so.
"""

from __future__ import annotations

import datetime
import inspect
import sys
from collections.abc import Callable, Mapping

import numpy as np

from ..errors import InputError
from ..kernels._blocks import BLOCK, evaluate
from ..vocabulary import ARGUMENTS, canonical_name, dopant_species
from .composition import input_kinds, species_model

__all__ = ["BoundKernel", "make_kernel", "model_checker", "model_kernel", "validity_of"]

_DTYPE_NOTE = (
    "computes in float64 and returns float64 whatever the input dtype "
    "(densities squared overflow float32, Auger coefficients underflow it); "
    "pass out=<float32 array> to store the result in float32 (out= of another "
    "dtype is refused); pint quantities are converted to the internal units, dates "
    "and durations refused"
)


def _is_density(name: str) -> bool:
    """Whether a kernel input is a density (cm^-3): those are keyword-only."""
    spec = ARGUMENTS.get(canonical_name(name) or "")
    return spec is not None and spec.units == "cm^-3"


def _screen(arguments: dict, units: Mapping[str, str]) -> dict:
    """Inputs as the kernel takes them: plain numbers and numeric arrays unchanged (no
    cost, and pint is not imported for them), pint quantities converted to the internal
    unit, dates and durations refused."""
    for name, value in arguments.items():
        kind = type(value)
        if kind is float or kind is int:
            continue
        if isinstance(value, (np.ndarray, np.generic)):
            if value.dtype.kind not in "mM":
                continue
        elif isinstance(value, (list, tuple)):
            if np.asarray(value).dtype.kind not in "mMO":
                continue
        elif not isinstance(value, _DATES) and not _is_quantity(value):
            continue  # an array of another library: passed through
        from ..units import kernel_input  # (pint is loaded only when a quantity comes)

        arguments[name] = kernel_input(value, name, units[name])
    return arguments


_DATES = (datetime.date, datetime.time, datetime.timedelta)


def _is_quantity(value) -> bool:
    pint = sys.modules.get("pint")  # (no quantity can exist before pint is imported)
    return pint is not None and isinstance(value, pint.Quantity)


def _check_out_dtype(out, quantity: str) -> None:
    """``out=`` must hold floating-point arrays (each block is cast on writing)."""
    for target in out if isinstance(out, tuple) else (out,):
        dtype = getattr(target, "dtype", None)
        if dtype is not None and dtype.kind != "f":
            raise TypeError(
                f"out= of the {quantity} kernel must be a floating-point array "
                f"(float64, or float32 to store less); received dtype {dtype} "
                "(numpy would truncate or wrap the values silently)"
            )


def _foreign(value) -> bool:
    """Whether ``value`` is an array of another array library (not numpy)."""
    return hasattr(value, "__array_namespace__") and not isinstance(value, (np.ndarray, np.generic))


class BoundKernel:
    """A quantity's model bound to its coefficients: plain arrays in internal units.

    Call it with the inputs named in :attr:`inputs`, by name (any name of the argument
    vocabulary: ``temperature`` or ``T``, ``donor_density`` or ``Nd``); the inputs
    before the first density may also be given by position, in that order. Densities
    are keyword-only, so that a positional call cannot swap donors and acceptors. It
    returns the output in :attr:`output_units`. See the module notes for
    the units, dtype, memory and array-API policies, and ``help(kernel)`` or
    ``print(kernel.__doc__)`` for this kernel's own.

    Attributes
    ----------
    quantity : str
    model : the bound :class:`~matprops.catalogue.records.Model` (None for a composition)
    model_id : str
    inputs : mapping input name -> internal unit string
    output_units : unit string, or tuple of them for a kernel returning a tuple
    api_units : what the public method returns (differs from ``output_units`` only
        where the docstring says so)
    array_api : whether the kernel accepts arrays of any array-API namespace
    """

    def __init__(
        self,
        si,
        quantity: str,
        function: Callable,
        inputs: Mapping[str, str],
        output_units,
        *,
        model=None,
        model_id: str,
        citation: str,
        validity: Mapping[str, tuple] | None = None,
        regions=(),
        checker: Callable | None = None,
        derivative: Callable | None = None,
        array_api: bool = True,
        blocked: bool = True,
        api_units=None,
        api_method: str | None = None,
        numpy_only_reason: str = "",
        options: Mapping[str, object] | None = None,
        optional=(),
        fixed=None,
        description: str = "",
        returns: str = "",
        kinds: Mapping[str, tuple[str, str]] | None = None,
    ):
        self._si = si
        self.quantity = quantity
        self.model = model
        self.model_id = model_id
        self.citation = citation
        self._function = function
        self.inputs = dict(inputs)
        self._names = tuple(self.inputs)
        # densities are keyword-only: only the inputs before the first density may be
        # given by position (so a positional call cannot swap donors and acceptors)
        positional = []
        for name in self._names:
            if _is_density(name):
                break
            positional.append(name)
        self._positional = tuple(positional)
        self._all_positional = len(positional) == len(self._names)
        # every name of the argument vocabulary is accepted for an input (T, Nd ...)
        self._aliases = {
            other: name
            for name in self._names
            if (spec := ARGUMENTS.get(canonical_name(name) or "")) is not None
            for other in spec.names
            if other != name
        }
        self._optional = frozenset(optional)
        self.output_units = output_units
        self.api_units = output_units if api_units is None else api_units
        self.api_method = api_method or quantity
        self.array_api = array_api
        self._blocked = blocked
        self._numpy_only_reason = numpy_only_reason
        self._validity = dict(validity or {})
        self._regions = tuple(regions)
        self._checker = checker
        self._derivative = derivative
        self._options = dict(options or {})
        self._fixed = dict(fixed or {})
        self._description = description
        self._returns = returns
        # input -> (short kind, description) of each density: total or ionised dopants,
        # free carriers, carriers of complete ionisation (the model's fit conventions)
        kinds = kinds or {}
        self.input_kinds = {name: kinds[name][0] for name in kinds}
        self._kind_text = {name: kinds[name][1] for name in kinds}
        self.__doc__ = self._document()

    # ------------------------------------------------------------------ calling
    def _arguments(self, args, kwargs, what="kernel"):
        """Positional and keyword inputs -> (inputs by name, options)."""
        if len(args) > len(self._positional):
            named = [n for n in self._names if n not in self._positional]
            raise TypeError(
                f"the {self.quantity} {what} takes at most {len(self._positional)} "
                f"positional input(s) ({', '.join(self._positional) or 'none'})"
                + (
                    f"; {', '.join(named)} are keyword-only (densities are named, so that "
                    "donors and acceptors, electrons and holes cannot be swapped)"
                    if named
                    else ""
                )
                + f"; received {len(args)}"
            )
        arguments = dict(zip(self._names, args, strict=False))
        options = {}
        for name, value in kwargs.items():
            name = self._aliases.get(name, name)
            if name in self.inputs:
                if name in arguments:
                    raise TypeError(
                        f"input {name!r} of the {self.quantity} {what} given "
                        "twice (by position and by name, or by two of its names)"
                    )
                arguments[name] = value
            elif name in self._options:
                options[name] = value
            else:
                raise TypeError(
                    f"the {self.quantity} {what} has no input or option "
                    f"{name!r}; inputs: {', '.join(self._names) or 'none'}"
                    + (f"; options: {', '.join(self._options)}" if self._options else "")
                )
        for name in self._names:
            if name not in arguments or arguments[name] is None:
                if name in self._optional:
                    arguments.pop(name, None)
                    continue
                raise TypeError(
                    f"the {self.quantity} {what} needs input {name!r} [{self.inputs[name]}]"
                )
        return arguments, options

    def __call__(self, *args, out=None, uncertainty=False, workers=None, **kwargs):
        """The kernel at the inputs given; ``out=`` an array (or tuple of arrays) to
        write into; ``workers=`` threads evaluating the blocks of a large input side by
        side (default: the material's ``workers``; the same numbers bit for bit)."""
        if uncertainty is not False:
            return self._uncertain(args, out, uncertainty, kwargs)
        if workers is None:
            workers = self._si.workers
        if not kwargs and len(args) == len(self._names) and self._all_positional:
            arguments, options = dict(zip(self._names, args, strict=False)), {}
            if self._optional and any(v is None for v in args):
                arguments, options = self._arguments(args, kwargs)
        else:
            arguments, options = self._arguments(args, kwargs)
        arguments = _screen(arguments, self.inputs)
        if out is not None:
            _check_out_dtype(out, self.quantity)
        if not self.array_api:
            self._refuse_foreign(arguments)
        if not self._blocked:
            if out is not None:
                raise TypeError(
                    f"the {self.quantity} kernel returns several fields; out= is not supported"
                )
            return self._function(**arguments, **options, workers=workers)
        return evaluate(self._function, arguments, out=out, workers=workers, **options)

    def _uncertain(self, args, out, uncertainty, kwargs):
        """``kernel(..., uncertainty=True[, samples=, seed=, uncertainty_method=])``:
        value and standard uncertainty (see matprops.material.uncertainty)."""
        from .uncertainty import kernel_answer

        if uncertainty is not True:
            raise InputError("uncertainty", "True or False", repr(uncertainty))
        if out is not None:
            raise TypeError("out= is not supported with uncertainty=True")
        settings = {k: kwargs.pop(k) for k in ("samples", "seed") if k in kwargs}
        how = kwargs.pop("uncertainty_method", "auto")
        arguments, options = self._arguments(args, kwargs)
        if options:
            raise TypeError(f"options {sorted(options)} are not supported with uncertainty=True")
        if not self.array_api:
            self._refuse_foreign(arguments)
        return kernel_answer(self, arguments, how=how, **settings)

    def _refuse_foreign(self, arguments):
        for name, value in arguments.items():
            if _foreign(value):
                raise TypeError(
                    f"the {self.quantity} kernel ({self.model_id}) takes numpy arrays "
                    f"only: {self._numpy_only_reason}; input {name!r} is a "
                    f"{type(value).__module__}.{type(value).__name__}. Convert it with "
                    "numpy.asarray (or the library's own to-numpy function) first"
                )

    def derivatives(self, *args, out=None, workers=None, **kwargs):
        """Value and partial derivatives with respect to every input.

        Returns
        -------
        (value, partials) : the kernel's value and a dict input name -> partial
            derivative of the value (same structure: a tuple of arrays for a kernel
            that returns a tuple), in output units per input unit (eV/K, eV cm^3, ...).
            Analytic, evaluated in the same blocks as the value.

        ``out=(value_out, {input: partial_out})`` writes into arrays the caller keeps
        (a simulation code reuses them every iteration; fresh arrays cost page faults);
        ``workers=`` as for a call.
        """
        if self._derivative is None:
            raise TypeError(
                f"the {self.quantity} kernel ({self.model_id}) has no "
                "derivatives: they are provided for the smooth closed-form "
                "models (band gap, narrowing, intrinsic and effective "
                "intrinsic density, radiative coefficient, intrinsic "
                "lifetime, mobility)"
            )
        arguments, options = self._arguments(args, kwargs, "derivatives")
        arguments = _screen(arguments, self.inputs)
        names = tuple(arguments)
        function = self._derivative

        def flat(**values):
            value, partials = function(**values, **options)
            parts = value if isinstance(value, tuple) else (value,)
            for name in names:
                d = partials[name]
                parts += d if isinstance(d, tuple) else (d,)
            return parts

        derivative = getattr(function, "func", function)
        for attribute in ("block", "unblocked"):  # the derivative kernel's own block size
            if hasattr(derivative, attribute):
                setattr(flat, attribute, getattr(derivative, attribute))

        width = len(self.output_units) if isinstance(self.output_units, tuple) else 1
        flat_out = None
        if out is not None:
            try:
                value_out, partial_out = out
                flat_out = value_out if width > 1 else (value_out,)
                for name in names:
                    flat_out += tuple(partial_out[name]) if width > 1 else (partial_out[name],)
            except (TypeError, ValueError, KeyError):
                raise TypeError(
                    "out must be (value array(s), {input: partial array(s)}) "
                    f"with a partial for each input given ({', '.join(names)})"
                ) from None
        if flat_out is not None:
            _check_out_dtype(flat_out, self.quantity)
        if workers is None:
            workers = self._si.workers
        parts = evaluate(flat, arguments, out=flat_out, workers=workers)

        def pick(k):
            chunk = parts[k * width : (k + 1) * width]
            return chunk if width > 1 else chunk[0]

        return pick(0), {name: pick(k + 1) for k, name in enumerate(names)}

    # ------------------------------------------------------------------ checking
    def check(self, *args, strict: bool | None = None, **kwargs) -> list[str]:
        """Validate a whole mesh once, before a simulation calls the kernel on it.

        Each input (positionally or by name, as for a call) must hold finite numbers
        in its internal units (positive temperatures and wavelengths, non-negative
        densities): an :class:`~matprops.InputError` names the first that does not.
        Then every validity range of the model (and of the models it is composed
        from) and every validity region is checked on the extremes and points given.

        Parameters
        ----------
        strict : bool, optional
            Raise :class:`~matprops.ValidityError` at the first violation (default:
            the material's own ``strict`` setting); otherwise each violation is a
            :class:`~matprops.ValidityWarning`.

        Returns
        -------
        list of str : the validity messages (empty when the whole mesh is inside).
        """
        from ..units import ARGUMENTS, check_values

        arguments, _ = self._arguments(args, kwargs, "check")
        arguments = _screen(arguments, self.inputs)
        arrays, ranges = {}, {}
        for name, value in arguments.items():
            if _foreign(value):
                value = _to_numpy(value)
            array = np.asarray(value, dtype=float)
            requirement = ARGUMENTS.get(name, (None, "non-negative"))[1]
            ranges[name] = check_values(array, name, self.inputs[name], requirement)
            arrays[name] = array
        shapes = [a.shape for a in arrays.values()]
        try:
            np.broadcast_shapes(*shapes)
        except ValueError:
            raise InputError(
                ", ".join(arrays),
                "arrays whose shapes broadcast together",
                ", ".join(f"{n} {a.shape}" for n, a in arrays.items()),
            ) from None
        strict = self._si.strict if strict is None else bool(strict)
        # each check warns (or raises) itself and returns its messages: no warning
        # filter is touched
        if self._checker is None:
            return []
        return self._checker(arrays, ranges, strict, self._si._report)

    # ------------------------------------------------------------------ description
    @property
    def provenance(self) -> dict:
        """Model id, source, DOI, validity, coefficients and release (a fresh dict)."""
        record = self._si.provenance(self.quantity)
        if self.model is not None and self.model.variant is not None:
            record = {**record, **self.model.provenance()}
            record["release"] = self._si.release.id
        if self._fixed:
            record["kernel_options"] = dict(self._fixed)
        if self.input_kinds:
            record["input_kinds"] = dict(self._kind_text)
        return record

    def _signature(self) -> str:
        names = [f"{n}=None" if n in self._optional else n for n in self._positional]
        named = [f"{n}=None" if n in self._optional else n for n in self._names[len(names) :]]
        if named:
            names += ["*", *named]
        names += [f"{k}={v!r}" for k, v in self._options.items()]
        return f"({', '.join(names)})"

    def _document(self) -> str:
        units = self.output_units
        shown = " and ".join(units) if isinstance(units, tuple) else units
        lines = [
            (
                f"Bound kernel of {self.quantity}: model {self.model_id} "
                f"(release {self._si.release.id})."
            ),
            "",
            f"kernel{self._signature()} -> {self._returns or shown}",
        ]
        if self._description:
            lines += ["", self._description]
        lines += ["", "Inputs (internal units; floats or arrays that broadcast)"]
        for name, unit in self.inputs.items():
            valid = self._validity.get(name)
            span = f"; valid {valid[0]:g}-{valid[1]:g} {unit}" if valid else ""
            optional = " (optional)" if name in self._optional else ""
            kind = f", {self._kind_text[name]}" if name in self._kind_text else ""
            lines.append(f"    {name} : {unit}{kind}{span}{optional}")
        for region in self._regions:
            lines.append(f"    validity region: {region}")
        lines += ["", f"Output: {shown}"]
        if self.api_units != self.output_units:
            api = (
                " and ".join(self.api_units)
                if isinstance(self.api_units, tuple)
                else self.api_units
            )
            lines.append(
                f"    NOTE: units differ from the public method: this kernel "
                f"returns {shown}, si.{self.api_method}() returns {api}."
            )
        else:
            lines.append(f"    (the same units as si.{self.api_method}())")
        if self._options:
            lines += ["", "Options: " + ", ".join(f"{k}={v!r}" for k, v in self._options.items())]
        lines += [
            "",
            "Model: " + self.model_id,
            "    " + self.citation,
            "",
            (
                "No unit handling and no validity check per call: call "
                "kernel.check(...) once on your mesh (ranges and validity regions); "
                "kernel.provenance holds the full record."
            ),
            f"dtype: {_DTYPE_NOTE}.",
            f"Memory: numpy inputs above {BLOCK} points are evaluated in blocks "
            "into one output (out= to supply it)."
            if self._blocked
            else "Memory: the solver works in blocks of its own; out= is not supported.",
            (
                "Array API: accepts any array-API-standard array (computed in its "
                "namespace, unblocked)."
                if self.array_api
                else f"Array API: numpy arrays only ({self._numpy_only_reason}); other "
                "arrays raise TypeError."
            ),
            (
                "Derivatives: kernel.derivatives(...) -> (value, {input: partial})."
                if self._derivative is not None
                else "Derivatives: none."
            ),
        ]
        if self.model is not None and self.model.kernel.__doc__:
            lines += ["", "The model's kernel:", "", inspect.cleandoc(self.model.kernel.__doc__)]
        return "\n".join(lines)

    def __repr__(self) -> str:
        units = self.output_units
        shown = ", ".join(units) if isinstance(units, tuple) else units
        inputs = ", ".join(
            f"{n} [{u}, {self.input_kinds[n]}]" if n in self.input_kinds else f"{n} [{u}]"
            for n, u in self.inputs.items()
        )
        valid = (
            "; ".join(
                f"{n} {lo:g}-{hi:g} {self.inputs.get(n, '')}".rstrip()
                for n, (lo, hi) in self._validity.items()
            )
            or "no limits"
        )
        note = ""
        if self.api_units != self.output_units:
            note = f" (NOTE: si.{self.api_method}() returns {self.api_units})"
        fixed = "".join(f", {k}={v!r}" for k, v in self._fixed.items())
        return (
            f"<BoundKernel {self.quantity}/{self.model_id}{fixed}: ({inputs}) -> "
            f"[{shown}]{note}; valid {valid}; release {self._si.release.id}; "
            f"{self.citation}>"
        )

    # ------------------------------------------------------------------ compatibility
    def __getattr__(self, name):
        # the Model's attributes (path, variant, coefficients, validity ...) for code
        # written when si.kernel returned the Model itself
        model = self.__dict__.get("model")
        if model is not None and not name.startswith("__"):
            return getattr(model, name)
        raise AttributeError(f"{type(self).__name__} has no attribute {name!r}")

    def __reduce__(self):
        return _rebuild, (self._si, self.quantity, self._fixed)

    def __copy__(self):
        return self  # immutable

    def __deepcopy__(self, memo):
        return self


def _rebuild(si, quantity, fixed):
    """Unpickle a kernel; never raises (see :class:`matprops.errors.Unusable`)."""
    from ..errors import Error, Unusable

    if isinstance(si, Unusable):
        return Unusable(si.error, BoundKernel)
    try:
        return si.kernel(quantity, **fixed)
    except Error as exc:
        return Unusable(exc, BoundKernel)


def _to_numpy(value):
    """An array of another array library as a numpy array (for checks only)."""
    try:
        return np.asarray(value)
    except Exception:
        return np.from_dlpack(value)


# ---------------------------------------------------------------------------- factory

TABLE_REASON = "it interpolates measured tables with numpy's searchsorted and interp"
SOLVER_REASON = "an iterative Newton solver working on numpy blocks"


def make_kernel(si, name: str, fixed: Mapping[str, object]) -> BoundKernel:
    """The :class:`BoundKernel` of quantity ``name`` for ``si`` (see ``Silicon.kernel``).

    The quantity's declaration (:mod:`.registry`) says how: a family that composes
    models or fixes a carrier hands its own factory; otherwise the model the material
    serves is bound as it is, with ``dopant=`` choosing the coefficient set of a model
    that has one per dopant species.
    """
    from .registry import REGISTRY

    fixed = dict(fixed)
    declared = REGISTRY.get(name)
    if declared is not None and declared.kernel is not None:
        return declared.kernel(si, name, fixed)
    model = si.model(name)
    chosen, note = {}, ""
    if model.variant_axis == "dopant":
        species = fixed.pop("dopant", None)
        if species is None:
            raise InputError(
                "dopant", f"given for {name} (one of {', '.join(model.variants)})", None
            )
        species = dopant_species(species, "dopant")
        model, stand_in = species_model(model, species, si.catalogue)
        chosen = {"dopant": species}
        if stand_in is not None:  # served by another species' set or model: labelled
            note = f"The dopant {stand_in.describe()}"
    if fixed:
        key = min(fixed)
        raise InputError(key, f"not an option of the {name} kernel", fixed[key])
    return model_kernel(si, name, model, chosen, note)


def model_checker(models):
    """A checker of the inputs each model takes (ranges, then regions)."""

    def check(arrays, ranges, strict, report=None) -> list[str]:
        messages = []
        for model in models:
            for argument in model.inputs:
                if argument in ranges and ranges[argument][0] <= ranges[argument][1]:
                    messages += model.check(argument, *ranges[argument], strict, report)
            if model.regions:
                messages += model.check_regions(
                    {k: arrays[k] for k in model.inputs if k in arrays}, strict, ranges, report
                )
        return messages

    return check


def validity_of(models) -> dict:
    found: dict[str, tuple[float, float]] = {}
    for model in models:
        for name, rng in model.validity.items():
            low, high = found.get(name, (-np.inf, np.inf))
            found[name] = (max(low, rng.low), min(high, rng.high))
        for component in model.components.values():
            for name, (low, high) in validity_of([component]).items():
                old = found.get(name, (-np.inf, np.inf))
                found[name] = (max(old[0], low), min(old[1], high))
    return found


def _options(model) -> dict:
    """Keyword options of a kernel besides its coefficients (e.g. ``part``)."""
    spec = model.kernel.spec
    options = {}
    for parameter in inspect.signature(model.kernel).parameters.values():
        if (
            parameter.kind is parameter.KEYWORD_ONLY
            and parameter.default is not parameter.empty
            and parameter.name not in spec.coefficients
            and parameter.name not in spec.requires
        ):
            options[parameter.name] = parameter.default
    return options


def model_kernel(si, name, model, fixed, note: str = "") -> BoundKernel:
    """The bound kernel of a model as it is (its inputs, units, validity, derivatives);
    the public method's units and description come from the quantity's declaration."""
    from .registry import REGISTRY

    table = model.kind == "table"
    declared = REGISTRY.get(name)
    api_units = None
    api_method = None
    if declared is not None:
        api_method = declared.kernel_method or declared.method
        if declared.kernel_method is None and declared.units != model.output_units:
            api_units = declared.units
    return BoundKernel(
        si,
        name,
        model.function or model,
        model.inputs,
        model.output_units,
        model=model,
        model_id=model.id,
        citation=model.source.citation(),
        validity=validity_of([model]),
        regions=model.regions,
        checker=model_checker([model]),
        derivative=model.derivative,
        array_api=model.array_api,
        api_units=api_units,
        api_method=api_method,
        numpy_only_reason=(
            TABLE_REASON
            if table
            else "it interpolates coefficients published at a few wavelengths with numpy indexing"
        ),
        options=_options(model),
        fixed=fixed,
        description=" ".join(
            part for part in (declared.kernel_note if declared is not None else "", note) if part
        ),
        kinds=input_kinds(name, model),
    )
