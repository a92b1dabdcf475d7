"""Metadata that a kernel carries: the units of its inputs, coefficients and output.

Kernels are plain numpy functions. The catalogue needs to know, without running
them, which inputs they take and in which units, and which coefficients a model
file must supply (and in which units, so the loader can check and convert them).
:func:`kernel` attaches that as attributes; it changes nothing about the call.

Unit strings here are written in the grammar pint parses (``cm^-3``, ``eV/K``);
this module itself never imports pint.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from types import MappingProxyType

__all__ = ["KernelSpec", "derivatives_of", "kernel"]


class KernelSpec:
    """Units of a kernel's inputs, coefficients and output (read-only)."""

    __slots__ = ("array_api", "coefficients", "inputs", "nan_outside", "output", "requires")

    def __init__(self, inputs, coefficients, output, requires, array_api=False, nan_outside=()):
        self.inputs: Mapping[str, str] = MappingProxyType(dict(inputs))
        self.coefficients: Mapping[str, str] = MappingProxyType(dict(coefficients))
        self.output = output
        self.requires: tuple[str, ...] = tuple(requires)
        self.array_api = bool(array_api)
        self.nan_outside: tuple[str, ...] = tuple(nan_outside)

    def __repr__(self) -> str:
        return (
            f"KernelSpec(inputs={dict(self.inputs)}, "
            f"coefficients={dict(self.coefficients)}, output={self.output!r}, "
            f"requires={self.requires}, array_api={self.array_api}, "
            f"nan_outside={self.nan_outside})"
        )


def kernel(
    *,
    inputs: Mapping[str, str],
    output,
    coefficients: Mapping[str, str] | None = None,
    requires: tuple[str, ...] = (),
    array_api: bool = False,
    nan_outside: tuple[str, ...] = (),
) -> Callable:
    """Declare a function's units for the catalogue.

    Parameters
    ----------
    inputs : mapping of input name -> unit string (the kernel's internal units)
    output : unit string, or a tuple of unit strings for a kernel returning a tuple
    coefficients : mapping of coefficient name -> unit string, as the model file
        must supply them (values in other units of the same dimension are converted)
    requires : names of quantities whose bound kernels are passed as keyword
        arguments (composed models, e.g. an intrinsic density from a gap and
        densities of states)
    array_api : the kernel computes with the namespace of its inputs
        (:func:`matprops.kernels._xp.namespace`), so any array-API-standard array
        works, not only numpy's
    nan_outside : inputs outside whose published points the kernel returns NaN
        instead of extrapolating (coefficients given at a few wavelengths, say); a
        validity warning for such an input says that the value is NaN there
    """
    unknown = set(nan_outside) - set(inputs)
    if unknown:
        raise ValueError(f"nan_outside names inputs the kernel does not take: {sorted(unknown)}")

    def attach(func: Callable) -> Callable:
        coefficient_units = dict(coefficients or {})
        spec = KernelSpec(inputs, coefficient_units, output, requires, array_api, nan_outside)
        setattr(func, "spec", spec)  # noqa: B010 (an attribute a plain function does not declare)
        return func

    return attach


def derivatives_of(function: Callable) -> Callable:
    """Declare a function as the analytic derivatives of kernel ``function``.

    The derivative function takes the kernel's inputs and coefficients and returns
    ``(value, {input name: partial derivative})`` with the kernel's output structure
    (a tuple of arrays for a kernel returning a tuple). It becomes
    ``function.derivatives``; the catalogue binds it with the same coefficients.
    """

    def attach(derivative: Callable) -> Callable:
        setattr(function, "derivatives", derivative)  # noqa: B010 (as for spec above)
        return derivative

    return attach
