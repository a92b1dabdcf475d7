"""Pure-numpy physics, one module per quantity.

Kernels take plain floats or numpy arrays in fixed internal units — kelvin,
centimetre, electron-volt, second, volt; densities in cm^-3 — and return the same.
They know nothing of pint, xarray or files: coefficients arrive as keyword
arguments, bound by :mod:`matprops.catalogue.store` from the model files in ``datasets/``.
Each kernel declares its units with :func:`matprops.kernels._spec.kernel`.

Simulation codes that want no per-call overhead take a bound kernel from
``matprops.silicon().kernel(quantity)`` rather than calling these directly.
"""

from importlib import import_module

__all__ = ["module_for"]


def module_for(quantity: str):
    """The kernel module that serves a quantity (``band_gap`` -> kernels.band_gap)."""
    return import_module(f"{__name__}.{quantity}")
