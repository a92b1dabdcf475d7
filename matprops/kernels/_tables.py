"""Interpolation on tabulated data, shared by the optical kernels (pure numpy).

Outside a table the result is NaN: measured data are not extrapolated. The
material layer warns before that happens and names a model that covers the range.
"""

import math

import numpy as np

from ._blocks import BLOCK

_LOG_CACHE: dict[int, tuple[np.ndarray, np.ndarray]] = {}


def cached_log(values: np.ndarray) -> np.ndarray:
    """log(values), computed once per bound table array (kernels are called often)."""
    hit = _LOG_CACHE.get(id(values))
    if hit is not None and hit[0] is values:
        return hit[1]
    with np.errstate(divide="ignore"):
        logs = np.log(values)
    logs.flags.writeable = False  # shared by every thread that calls the kernel
    _LOG_CACHE[id(values)] = (values, logs)
    return logs


def bracket(x, grid):
    """Index i and weight w so that x = (1 - w) grid[i] + w grid[i + 1]; NaN outside."""
    i = np.clip(np.searchsorted(grid, x, side="right") - 1, 0, grid.size - 2)
    low = grid[i]
    w = (x - low) / (grid[i + 1] - low)
    return i, np.where((x < grid[0]) | (x > grid[-1]), np.nan, w)


def linear_1d(x, grid, values):
    """Piecewise-linear interpolation of values(grid) at x; NaN outside the grid."""
    i, w = bracket(np.asarray(x, dtype=float), grid)
    return values[i] * (1.0 - w) + values[i + 1] * w


def bilinear(y, x, y_grid, x_grid, values):
    """Bilinear interpolation of values[y, x] at (y, x), broadcasting; NaN outside."""
    i, u = bracket(np.asarray(y, dtype=float), y_grid)
    j, v = bracket(np.asarray(x, dtype=float), x_grid)
    i, u, j, v = np.broadcast_arrays(i, u, j, v)
    return (1.0 - u) * ((1.0 - v) * values[i, j] + v * values[i, j + 1]) + u * (
        (1.0 - v) * values[i + 1, j] + v * values[i + 1, j + 1]
    )


def broadcast_to_inputs(result, *inputs):
    """Give a result that depends on some inputs the broadcast shape of all of them."""
    shape = np.broadcast_shapes(np.shape(result), *(np.shape(a) for a in inputs))
    return result if np.shape(result) == shape else np.broadcast_to(result, shape).copy()


# --------------------------------------------------------------------------- prepared tables


class GridTable:
    """A table ``values[temperature, wavelength]`` (or ``values[wavelength]``) prepared
    once for fast evaluation: bilinear in (T, lambda), optionally exponentiated.

    Evaluation paths, all the same piecewise-(bi)linear function:

    - one temperature (a scalar, or an array of one value): the row at that
      temperature (two table rows blended, cached for the last few temperatures),
      then one ``np.interp`` over the wavelengths;
    - a grid (wavelength and temperature on different axes): every table row
      interpolated at the wavelengths once, then the two rows around each
      temperature blended;
    - scattered (wavelength, temperature) pairs: the four corners gathered.

    Outside the table the result is NaN, as for :func:`linear_1d` and
    :func:`bilinear`. ``temperature_grid=None`` makes a one-row table whose
    temperature input only sets the output's shape. Arrays are read-only.
    """

    _ROWS = 8  # rows cached for scalar temperatures

    def __init__(self, temperature_grid, wavelength_grid, values, exponentiate=False):
        self.wavelength_grid = _frozen(wavelength_grid)
        self.values = _frozen(np.atleast_2d(values))
        self.temperature_grid = None if temperature_grid is None else _frozen(temperature_grid)
        self.exponentiate = exponentiate
        self._locator = Locator(self.wavelength_grid)
        self._t_locator = None if temperature_grid is None else Locator(self.temperature_grid)
        self._flat = self.values.reshape(-1)
        self._rows: dict[float, np.ndarray] = {}

    @property
    def arrays(self):
        """The read-only arrays this table holds (for inspection and tests)."""
        grids = (self.wavelength_grid, self.values, *self._locator.arrays)
        return grids if self.temperature_grid is None else (*grids, self.temperature_grid)

    # evaluate() calls this table with the whole input: it blocks where blocks help
    blocks_itself = True

    def __call__(self, wavelength, temperature, out=None):
        lam = np.asarray(wavelength, dtype=float)
        t = np.asarray(temperature, dtype=float)
        shape = np.broadcast_shapes(lam.shape, t.shape)
        if math.prod(shape) == 0:  # an empty input: an empty result of the broadcast shape
            return self._finish(np.empty(shape), shape, out)
        if lam.ndim != t.ndim:  # one number of axes for both (views)
            lam = lam.reshape((1,) * (len(shape) - lam.ndim) + lam.shape)
            t = t.reshape((1,) * (len(shape) - t.ndim) + t.shape)
        if self.temperature_grid is None or t.size == 1:
            # one np.interp: no temporaries, nothing to gain from blocks
            row = (
                self.values[0] if self.temperature_grid is None else self._row(float(t.reshape(())))
            )
            result = np.interp(lam, self.wavelength_grid, row, left=np.nan, right=np.nan)
            return self._finish(result, shape, out)
        if out is not None or math.prod(shape) > BLOCK:
            from ._blocks import evaluate

            path = self._grid if _apart(lam.shape, t.shape) else self._pairs
            return evaluate(self._blockwise, {"lam": lam, "t": t}, out=out, path=path)
        result = self._grid(lam, t) if _apart(lam.shape, t.shape) else self._pairs(lam, t)
        return self._finish(result, shape, None)

    def _blockwise(self, lam, t, path):
        return self._finish(path(lam, t), np.broadcast_shapes(lam.shape, t.shape), None)

    def _finish(self, result, shape, out):
        """exp where the table holds logarithms, the broadcast shape, into ``out``."""
        if out is not None:
            if out.shape != shape:
                raise ValueError(f"out has shape {out.shape}; the inputs broadcast to {shape}")
            if self.exponentiate:
                return np.exp(np.broadcast_to(result, shape), out=out)
            np.copyto(out, np.broadcast_to(result, shape))
            return out
        if self.exponentiate:
            result = (
                np.exp(result, out=result)
                if isinstance(result, np.ndarray) and result.ndim
                else np.exp(result)
            )
        if np.shape(result) != shape:
            result = np.broadcast_to(result, shape).copy()
        return result

    # -- the three paths
    def _row(self, temperature: float) -> np.ndarray:
        """Values at one temperature on the wavelength grid (NaN outside the table)."""
        row = self._rows.get(temperature)
        if row is None:
            grid = self.temperature_grid
            assert grid is not None  # a one-row table never asks for a row
            if not grid[0] <= temperature <= grid[-1]:
                row = np.full(self.wavelength_grid.size, np.nan)
            else:
                i = min(
                    max(int(np.searchsorted(grid, temperature, side="right")) - 1, 0), grid.size - 2
                )
                u = (temperature - grid[i]) / (grid[i + 1] - grid[i])
                row = self.values[i] * (1.0 - u) + self.values[i + 1] * u
            row.flags.writeable = False
            if len(self._rows) >= self._ROWS:
                self._rows.clear()
            self._rows[temperature] = row
        return row

    def _along(self, lam, row):
        return np.interp(lam, self.wavelength_grid, row, left=np.nan, right=np.nan)

    def _bracket(self, x, locator):
        """Lower index and weight of x in the locator's grid; NaN outside the grid."""
        i = locator.locate(x)
        grid = locator.grid
        w = x - grid[i]
        w /= locator.step[i]
        if x.size and (x.min() < grid[0] or x.max() > grid[-1]):
            w[(x < grid[0]) | (x > grid[-1])] = np.nan
        return i, w

    def _temperature_bracket(self, t):
        return self._bracket(t, self._t_locator)

    def _grid(self, lam, t):
        """Wavelength and temperature on different axes: each table row at the
        wavelengths once, then the two rows around each temperature blended."""
        shape = np.broadcast_shapes(lam.shape, t.shape)
        j, v = self._bracket(lam.reshape(-1), self._locator)
        rows = self.values[:, j]
        rows *= 1.0 - v
        rows += self.values[:, j + 1] * v  # (table rows, wavelengths)
        i, u = self._temperature_bracket(t.reshape(-1))
        low = rows[i]
        high = rows[i + 1]  # (temperatures, wavelengths)
        low *= (1.0 - u)[:, None]
        high *= u[:, None]
        low += high
        t_axes = [d for d, n in enumerate(t.shape) if n > 1]
        lam_axes = [d for d, n in enumerate(lam.shape) if n > 1]
        low = low.reshape([shape[d] for d in t_axes] + [shape[d] for d in lam_axes])
        if t_axes and lam_axes and t_axes[-1] > lam_axes[0]:  # wavelength axes first
            low = low.transpose(np.argsort(t_axes + lam_axes))
        return low.reshape(shape)

    def _pairs(self, lam, t):
        """Scattered points: the four corners of each point's cell gathered."""
        j, v = self._bracket(lam, self._locator)
        i, u = self._temperature_bracket(t)
        width = self.values.shape[1]
        corner = i * width
        corner = corner + j
        flat = self._flat
        near = np.take(flat, corner)
        near *= 1.0 - v
        near += np.take(flat[1:], corner) * v
        far = np.take(flat[width:], corner)
        far *= 1.0 - v
        far += np.take(flat[width + 1 :], corner) * v
        near *= 1.0 - u
        far *= u
        near += far
        return near


class Locator:
    """Finds ``searchsorted(grid, x, side="right") - 1`` (clipped to a cell of the grid)
    without a binary search: random keys make numpy's binary search mispredict its
    branches (60 ns per key here against ~10 ns for this).

    The range of the grid is cut into ``K`` equal cells; ``cell(x) = trunc((x - g0) /
    h)`` clipped to ``0..K-1`` is non-decreasing in x, so every node whose cell is
    below x's cell lies below x, and every node whose cell is above lies above.
    ``below[c]`` counts the nodes of lower cells; the few nodes sharing x's own cell
    (at most :attr:`passes`) are compared one by one. The index is exactly
    searchsorted's, for any x.
    """

    def __init__(self, grid):
        grid = np.asarray(grid, dtype=float)
        self.grid = grid
        self.step = _frozen(np.diff(grid))
        self._bound = _frozen(np.append(grid, np.inf))  # grid[i + 1] for every i
        span = float(grid[-1] - grid[0])
        cells = 64
        while True:
            self.cells = cells
            self.scale = cells / span
            node_cells = self._cells(grid)
            passes = int(np.bincount(node_cells).max())
            if passes <= 2 or cells >= 1 << 20:
                break
            cells *= 2
        self.passes = passes
        # first[c] - 1: the index of the last node of the cells below c
        # the number of nodes in the cells below each cell
        below = np.searchsorted(node_cells, np.arange(cells), side="left").astype(np.intp)
        below.flags.writeable = False
        self._below = below

    @property
    def arrays(self):
        return (self.step, self._bound, self._below)

    def _cells(self, x):
        y = np.subtract(x, self.grid[0], out=np.empty(np.shape(x)))
        y *= self.scale
        np.maximum(y, 0.0, out=y)
        np.minimum(y, self.cells - 1, out=y)
        return y.astype(np.intp)

    def locate(self, x) -> np.ndarray:
        """Index i (0 .. n-2) of the grid cell holding each x."""
        count = np.take(self._below, self._cells(np.asarray(x, dtype=float)))
        for _ in range(self.passes):  # the nodes of x's own cell that are <= x
            count += np.take(self._bound, count) <= x
        count -= 1
        np.maximum(count, 0, out=count)
        np.minimum(count, self.grid.size - 2, out=count)
        return count


def _apart(first, second) -> bool:
    """Whether two broadcastable shapes vary along different axes (an outer product)."""
    ndim = max(len(first), len(second))
    first = (1,) * (ndim - len(first)) + tuple(first)
    second = (1,) * (ndim - len(second)) + tuple(second)
    return all(a == 1 or b == 1 for a, b in zip(first, second, strict=True))


def _frozen(values) -> np.ndarray:
    array = np.array(values, dtype=float)
    array.flags.writeable = False
    return array


def union_grid(first, second) -> np.ndarray:
    """The nodes of two ascending grids inside their common range, merged and sorted."""
    low, high = max(first[0], second[0]), min(first[-1], second[-1])
    keep = [g[(g >= low) & (g <= high)] for g in (np.asarray(first), np.asarray(second))]
    return np.union1d(*keep)
