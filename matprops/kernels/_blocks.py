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
import os
import threading
from collections.abc import Callable, Mapping
from typing import Any

import numpy as np

from ..errors import SolverError

__all__ = ["BLOCK", "check_workers", "evaluate", "relocated", "solver_error"]

# Points per block: 128 kB per float64 temporary, so that a kernel's temporaries stay
# in the 2 MB L2 cache of this machine kind and are recycled by the heap allocator (at
# 2^16 points each temporary is an mmap of its own, and page faults cost more than the
# arithmetic; measured: 2^13-2^14 fastest at 1e5 points, flat from 2^13 to 2^16 at 1e7).
BLOCK = 1 << 14
# Points per block when threads share the work (workers > 1) for kernels without a block
# size of their own (closed forms; solvers set theirs, and keep it, since how many
# iterations a block takes depends on its points): at 2^14 points a block's ~0.2 ms of
# numpy leaves too little time between the GIL's hand-overs, and two threads ran no
# faster than one (measured here); elementwise formulas give the same numbers whatever
# the blocks.
BLOCK_THREADED = 1 << 16

_SCALARS = (float, int)


def evaluate(
    function: Callable,
    arguments: Mapping[str, Any],
    out=None,
    block: int | None = None,
    workers: int | None = None,
    locate: bool = False,
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
    workers : threads evaluating blocks side by side (None or 1: this thread only).
        numpy releases the GIL inside its loops, so blocks of a heavy kernel run in
        parallel; the blocks are the same as without workers and each is computed by
        the same code, so the numbers are the same bit for bit.
    locate : pass each call ``offset=``, the flat index (C order) of its first point in
        the whole input (a block's points are consecutive flat indices), so that the
        kernel can name a point in an error
    options : keyword arguments passed unchanged to every call (not blocked)

    Returns
    -------
    The kernel's result: a float64 array (or tuple of arrays) of the broadcast
    shape when blocked, else whatever the kernel returns; ``out`` when given.
    A :class:`~matprops.errors.SolverError` raised by a block names its points by
    their index in the whole input.
    """
    kernel = getattr(function, "func", function)  # a kernel bound with functools.partial
    if block is None:
        block = getattr(kernel, "block", None)
        if block is None:
            block = BLOCK if workers in (None, 1) else BLOCK_THREADED
    if getattr(function, "blocks_itself", False):  # a prepared table: blocks where it helps
        if workers is not None:
            options["workers"] = workers
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
        if locate:
            options["offset"] = 0
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
    blocks = [
        (outer, start, min(start + step, shape[axis]))
        for outer in np.ndindex(*shape[:axis])
        for start in range(0, shape[axis], step)
    ]
    state = {"outputs": out}

    def compute(where):
        outer, start, stop = where
        values = {name: a[_index(a, outer, start, stop, axis)] for name, a in padded.items()}
        if locate:
            first = outer + (start,) + (0,) * (ndim - axis - 1)
            values["offset"] = int(np.ravel_multi_index(first, shape))
        try:
            return function(**values, **options)
        except SolverError as error:
            raise relocated(error, shape, where, axis, first_only=len(blocks) > 1) from None

    def store(where, result):
        outer, start, stop = where
        outputs = state["outputs"]
        if isinstance(result, dict):  # several named fields (the equilibrium solver)
            if outputs is None:
                outputs = state["outputs"] = {
                    key: np.empty(shape, dtype=np.result_type(part, np.float64))
                    for key, part in result.items()
                }
            for key, part in result.items():
                outputs[key][outer + (slice(start, stop),)] = part
            return
        if outputs is None:
            parts = result if isinstance(result, tuple) else (result,)
            outputs = tuple(np.empty(shape, dtype=np.result_type(p, np.float64)) for p in parts)
            outputs = state["outputs"] = outputs if isinstance(result, tuple) else outputs[0]
        _write(outputs, result, shape, outer + (slice(start, stop),))

    # the first block here: it allocates the outputs (their structure and dtype)
    store(blocks[0], compute(blocks[0]))
    workers = check_workers(workers)
    if workers > 1 and len(blocks) > 1:
        _parallel(blocks[1:], lambda where: store(where, compute(where)), workers)
    else:
        for where in blocks[1:]:
            store(where, compute(where))
    return state["outputs"]


def check_workers(workers) -> int:
    """The number of threads ``workers`` asks for (None: 1), or an InputError."""
    if workers is None:
        return 1
    if isinstance(workers, bool) or not isinstance(workers, (int, np.integer)) or workers < 1:
        from ..errors import InputError

        raise InputError("workers", "a whole number >= 1 (threads), or None", repr(workers))
    return int(workers)


def _parallel(items, task, workers):
    """``task(item)`` for every item on a pool of ``workers`` threads; the first error
    (in the items' order) is raised once every started task has ended."""
    pool = _pool(workers)
    futures = [pool.submit(task, item) for item in items]
    error = None
    for future in futures:
        if error is not None:
            future.cancel()
            continue
        try:
            future.result()
        except BaseException as caught:
            error = caught
    if error is not None:
        for future in futures:
            if not future.cancelled():
                try:
                    future.result()
                except BaseException:
                    pass
        raise error


_POOLS: dict[int, object] = {}
_POOLS_LOCK = threading.Lock()


def _pool(workers):
    """A thread pool of ``workers`` threads, made once per size and process."""
    with _POOLS_LOCK:
        pool = _POOLS.get(workers)
        if pool is None:
            from concurrent.futures import ThreadPoolExecutor

            pool = _POOLS[workers] = ThreadPoolExecutor(
                max_workers=workers, thread_name_prefix="matprops-block"
            )
        return pool


def _forget_pools():  # a forked child has none of the parent's threads
    global _POOLS_LOCK
    _POOLS.clear()
    _POOLS_LOCK = threading.Lock()


if hasattr(os, "register_at_fork"):
    os.register_at_fork(after_in_child=_forget_pools)


def relocated(error, shape, where=None, axis=None, first_only=False):
    """A solver error whose points (``error.points``, indices into the block) are
    named by their index in the whole input of ``shape`` (the block ``where`` =
    (outer indices, start, stop) along ``axis``, as :func:`evaluate` cuts them);
    ``first_only``: the input had several blocks and this one failed first (the count
    is this block's; later blocks were not solved)."""
    points = getattr(error, "points", None)
    if points is None:
        return error
    moved = []
    for point in points:
        point = dict(point)
        flat = int(point["flat"] if "flat" in point else point["index"])
        if where is None:
            index = np.unravel_index(flat, shape) if shape else (flat,)
        else:
            outer, start, stop = where
            local = np.unravel_index(flat, (stop - start,) + tuple(shape[axis + 1 :]))
            index = tuple(outer) + (start + int(local[0]),) + tuple(local[1:])
        point["index"] = tuple(int(i) for i in index)
        point["flat"] = int(np.ravel_multi_index(point["index"], shape)) if shape else flat
        moved.append(point)
    what = error.what
    if first_only and where is not None:
        outer, start, stop = where
        size = (stop - start) * math.prod(shape[axis + 1 :])
        first = int(
            np.ravel_multi_index(tuple(outer) + (start,) + (0,) * (len(shape) - axis - 1), shape)
        )
        what = (
            f"{what} in the first block that failed (points #{first}-#{first + size - 1} "
            "in C order; the blocks after it were not solved)"
        )
    return solver_error(error.subject, what, error.count, moved)


def solver_error(subject, what, count, points):
    """A :class:`~matprops.errors.SolverError` naming the first failing points.

    ``points``: dicts with ``index`` (a tuple, or an int before relocation), the
    inputs (name -> value, with units in the name's text) under ``inputs``, and a
    ``detail`` (the residual reached, or why the point could not be solved)."""
    shown = "; ".join(
        f"#{_index_text(p['index'])} ({', '.join(p['inputs'])}): {p['detail']}" for p in points
    )
    more = f"; and {count - len(points)} more" if count > len(points) else ""
    error = SolverError(f"{subject}: {count} point(s) {what}: {shown}{more}")
    error.subject, error.what, error.count, error.points = subject, what, count, points
    return error


def _index_text(index):
    if isinstance(index, (int, np.integer)):
        return str(int(index))
    return str(index[0]) if len(index) == 1 else str(tuple(index))


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
