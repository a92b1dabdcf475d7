"""The array namespace a closed-form kernel computes in (array API standard).

Closed-form kernels are written against the array API standard
(https://data-apis.org/array-api/): they take ``xp = namespace(*inputs)`` and call
``xp.exp``, ``xp.log`` ... For numpy arrays and plain numbers ``xp`` is numpy itself,
so the numpy path is numpy's own functions (same numbers, no wrapper); an array of
another library that implements the standard (``array_api_strict``, CuPy, JAX,
PyTorch through array-api-compat ...) is computed in its own namespace. Arrays of two
libraries in one call are not mixed: convert one first.

Kernels compute in float64 (see :mod:`matprops.material.bound` for why); the helpers here
convert inputs accordingly.
"""

from __future__ import annotations

import contextlib

import numpy as np

__all__ = [
    "asfloat",
    "asin",
    "asinh",
    "cbrt",
    "errstate",
    "interp",
    "namespace",
    "power",
    "zeros_like",
]

_NUMPY_TYPES = (np.ndarray, np.generic)


def namespace(*values):
    """numpy, unless an input is an array of another array-API library (then its
    namespace)."""
    for value in values:
        if type(value) in (float, int) or isinstance(value, _NUMPY_TYPES):
            continue
        get = getattr(value, "__array_namespace__", None)
        if get is not None:
            return get()
    return np


def asfloat(xp, value):
    """``value`` as a float64 array of namespace ``xp`` (no copy when it already is)."""
    if xp is np:
        return np.asarray(value, dtype=float)
    if hasattr(value, "__array_namespace__"):
        return value if value.dtype == xp.float64 else xp.astype(value, xp.float64)
    return xp.asarray(value, dtype=xp.float64)


def cbrt(xp, x):
    """Cube root of non-negative values (numpy's cbrt; a power elsewhere: the standard
    has no cbrt)."""
    return np.cbrt(x) if xp is np else xp.pow(x, 1.0 / 3.0)


def zeros_like(xp, x):
    """Zeros of x's shape, float64."""
    return np.zeros(np.shape(x)) if xp is np else xp.zeros(x.shape, dtype=xp.float64)


def errstate(xp, **kw):
    """Floating-point error handling for a block of kernel code (numpy's errstate;
    nothing for other namespaces)."""
    return np.errstate(**kw) if xp is np else contextlib.nullcontext()


# names the standard took from C (pow, asin, asinh) exist in numpy only from 2.0
def power(xp, x, exponent):
    """``x ** exponent`` (numpy's power; the standard's pow elsewhere)."""
    return np.power(x, exponent) if xp is np else xp.pow(x, exponent)


def asin(xp, x):
    return np.arcsin(x) if xp is np else xp.asin(x)


def asinh(xp, x):
    return np.arcsinh(x) if xp is np else xp.asinh(x)


def interp(xp, x, grid, values):
    """Piecewise-linear interpolation in a 1-D table (numpy's interp; the same formula
    with the standard's searchsorted and take elsewhere), clamped at the ends."""
    if xp is np:
        return np.interp(x, grid, values)
    x = asfloat(xp, x)
    g = xp.asarray(np.asarray(grid, dtype=float))
    v = xp.asarray(np.asarray(values, dtype=float))
    flat = xp.reshape(xp.clip(x, float(grid[0]), float(grid[-1])), (-1,))
    j = xp.clip(xp.searchsorted(g, flat, side="right") - 1, 0, g.shape[0] - 2)
    g0, g1 = xp.take(g, j), xp.take(g, j + 1)
    v0, v1 = xp.take(v, j), xp.take(v, j + 1)
    return xp.reshape((v1 - v0) / (g1 - g0) * (flat - g0) + v0, x.shape)
