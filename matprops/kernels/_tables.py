"""Interpolation on tabulated data, shared by the optical kernels (pure numpy).

Outside a table the result is NaN: measured data are not extrapolated. The
material layer warns before that happens and names a model that covers the range.
"""

import numpy as np

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
    return ((1.0 - u) * ((1.0 - v) * values[i, j] + v * values[i, j + 1])
            + u * ((1.0 - v) * values[i + 1, j] + v * values[i + 1, j + 1]))


def broadcast_to_inputs(result, *inputs):
    """Give a result that depends on some inputs the broadcast shape of all of them."""
    shape = np.broadcast_shapes(np.shape(result), *(np.shape(a) for a in inputs))
    return result if np.shape(result) == shape else np.broadcast_to(result, shape).copy()
