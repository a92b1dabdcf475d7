"""Evaluate a kernel on large inputs block by block, into preallocated outputs.

A numpy expression of a dozen operations on N points makes a dozen full-size
temporaries: on 1e7 points that is 7-10 times the memory of the result, and the
cost per point grows once the temporaries leave the processor's caches (measured
here: 245 ns/point in blocks against 513 ns/point in one go for the absorption
kernel). :func:`evaluate` calls the kernel on blocks of about :data:`BLOCK` points
of the broadcast inputs and writes each block's result into an output allocated
once, so that the extra memory is the output plus a few block-sized temporaries,
and the cost stays linear in N. Kernels that make no temporaries (a constant: the
attribute ``unblocked``) and prepared tables (``blocks_itself``) are called whole.

Blocks are views: each input keeps its own (broadcastable) shape, sliced along
the axes it spans, so a grid ``T[:, None]`` x ``N[None, :]`` is never expanded.
Inputs of at most :data:`BLOCK` points are passed straight through (no copies,
no overhead beyond one shape check). Pure numpy; other array namespaces are
passed through unblocked (their libraries manage their own memory).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from typing import Any

import numpy as np

__all__ = ["BLOCK", "evaluate"]

# Points per block: 128 kB per float64 temporary, so that a kernel's temporaries stay
# in the 2 MB L2 cache of this machine kind and are recycled by the heap allocator (at
# 2^16 points each temporary is an mmap of its own, and page faults cost more than the
# arithmetic; measured: 2^13-2^14 fastest at 1e5 points, flat from 2^13 to 2^16 at 1e7).
BLOCK = 1 << 14

_SCALARS = (float, int)


def evaluate(
    function: Callable,
    arguments: Mapping[str, Any],
    out=None,
    block: int | None = None,
    **options,
):
    """``function(**arguments, **options)`` evaluated in blocks of ~``block`` points.

    Parameters
    ----------
    function : a kernel: array inputs (broadcasting) -> an array, a tuple of arrays,
        or a dict of arrays (several named fields; not with ``out``)
    arguments : input name -> scalar or numpy array (they must broadcast together)
    out : array, or tuple of arrays for a kernel that returns a tuple, optional
        Where to write the result (any float dtype: each block is cast on writing,
        e.g. to keep a 1e8-point result in float32). Shape: the broadcast shape.
    block : points per block (default: the kernel's ``block`` attribute, else
        :data:`BLOCK`; light kernels of a few operations take larger blocks, since
        their time per block is short against the Python round trip)
    options : keyword arguments passed unchanged to every call (not blocked)

    Returns
    -------
    The kernel's result: a float64 array (or tuple of arrays) of the broadcast
    shape when blocked, else whatever the kernel returns; ``out`` when given.
    """
    kernel = getattr(function, "func", function)  # a kernel bound with functools.partial
    if block is None:
        block = getattr(kernel, "block", BLOCK)
    if getattr(function, "blocks_itself", False):  # a prepared table: blocks where it helps
        if out is None:
            return function(**arguments, **options)
        return function(**arguments, out=out, **options)
    if getattr(kernel, "unblocked", False):  # it only fills its output (a constant)
        result = function(**arguments, **options)
        if out is None:
            return result
        shape = np.broadcast_shapes(*(np.shape(v) for v in arguments.values()))
        return _write(out, result, shape, ())
    shape, mixed = (), False
    for value in arguments.values():
        if type(value) in _SCALARS:
            continue
        if not isinstance(value, (np.ndarray, np.generic)):
            if hasattr(value, "__array_namespace__"):  # another array library: no blocks
                if out is not None:
                    raise TypeError("out= is supported for numpy inputs only")
                return function(**arguments, **options)
            value = np.asarray(value)
        if value.shape != shape:
            if shape:
                mixed = True
            else:
                shape = value.shape
    if mixed:  # (shapes that differ: numpy's broadcasting rules, once)
        shape = np.broadcast_shapes(*(np.shape(v) for v in arguments.values()))
    size = math.prod(shape)
    if size <= block:
        result = function(**arguments, **options)
        return result if out is None else _write(out, result, shape, ())
    if out is not None:
        _check_out(out, shape)
    arrays = {name: np.asarray(value) for name, value in arguments.items()}
    ndim = len(shape)
    # each input as an ndim view (leading axes of length 1), so one index fits all
    padded = {name: a.reshape((1,) * (ndim - a.ndim) + a.shape) for name, a in arrays.items()}
    # split along `axis`: the axes after it fit whole in a block, the ones before it
    # are taken one index at a time
    inner, axis = 1, ndim - 1
    while inner * shape[axis] <= block:
        inner *= shape[axis]
        axis -= 1
    step = max(1, block // inner)
    outputs = out
    for outer in np.ndindex(*shape[:axis]):
        for start in range(0, shape[axis], step):
            stop = min(start + step, shape[axis])
            values = {name: a[_index(a, outer, start, stop, axis)] for name, a in padded.items()}
            result = function(**values, **options)
            if isinstance(result, dict):  # several named fields (the equilibrium solver)
                if outputs is None:
                    outputs = {
                        key: np.empty(shape, dtype=np.result_type(part, np.float64))
                        for key, part in result.items()
                    }
                for key, part in result.items():
                    outputs[key][outer + (slice(start, stop),)] = part
                continue
            if outputs is None:
                parts = result if isinstance(result, tuple) else (result,)
                outputs = tuple(np.empty(shape, dtype=np.result_type(p, np.float64)) for p in parts)
                outputs = outputs if isinstance(result, tuple) else outputs[0]
            _write(outputs, result, shape, outer + (slice(start, stop),))
    return outputs


def _check_out(out, shape):
    for target in out if isinstance(out, tuple) else (out,):
        if not isinstance(target, np.ndarray) or target.shape != shape:
            raise ValueError(
                f"out must be a numpy array (or a tuple of them, one per "
                f"output) of the inputs' broadcast shape {shape}; received "
                f"{type(target).__name__} of shape {np.shape(target)}"
            )


def _write(out, result, shape, index):
    """Write one block's result (an array or a tuple of arrays) into ``out``."""
    if index == ():
        _check_out(out, shape)
    if isinstance(out, tuple) != isinstance(result, tuple):
        raise ValueError("out must be a tuple of arrays exactly when the kernel returns a tuple")
    for target, part in zip(
        *((out, result) if isinstance(out, tuple) else ((out,), (result,))), strict=True
    ):
        target[index] = part
    return out


def _index(array, outer, start, stop, axis):
    """The block of ``array`` (ndim view) for outer indices ``outer`` and
    ``start:stop`` along ``axis``; axes of length 1 are kept whole (they broadcast)."""
    shape = array.shape
    picks = tuple(i if shape[d] > 1 else 0 for d, i in enumerate(outer))
    along = slice(start, stop) if shape[axis] > 1 else slice(None)
    return picks + (along,)
