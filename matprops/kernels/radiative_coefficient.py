"""Radiative (band-to-band) recombination coefficient B, in cm^3/s.

The net radiative rate is ``U = B (n p - n0 p0)``. The coefficient depends on
what it was measured for: the value of *intrinsic* silicon at low injection
(Trupke et al. 2003) is not the same quantity as a coefficient that already
includes the reduction of B at high carrier densities, and neither is the older
constant carried inside some intrinsic-lifetime parameterisations. Each model
file says which one it holds.
"""

import numpy as np

from ._coefficients import is_dual, number
from ._spec import derivatives_of, kernel
from ._xp import asfloat, namespace, zeros_like


@kernel(
    inputs={"temperature": "K"},
    output="cm^3/s",
    coefficients={"coefficient": "cm^3/s"},
    array_api=True,
)
def constant(temperature, *, coefficient):
    """A coefficient that does not vary inside the model's temperature range.

    Parameters
    ----------
    temperature : array_like, K (sets the shape only)
    coefficient : cm^3/s

    Returns
    -------
    B, cm^3/s, with the shape of ``temperature``
    """
    xp = namespace(temperature)
    if xp is np:
        if is_dual(coefficient):
            return coefficient + np.zeros(np.shape(temperature))
        return np.full(np.shape(temperature), float(coefficient))
    return zeros_like(xp, asfloat(xp, temperature)) + number(coefficient)


constant.unblocked = True  # fills its output and nothing else: no blocks needed


@derivatives_of(constant)
def constant_derivatives(temperature, *, coefficient):
    """B and ``dB/dT = 0``."""
    xp = namespace(temperature)
    if xp is np:
        shape = np.shape(temperature)
        return np.full(shape, float(coefficient)), {"temperature": np.zeros(shape)}
    zero = zeros_like(xp, asfloat(xp, temperature))
    return zero + float(coefficient), {"temperature": zero}


constant_derivatives.unblocked = True


@kernel(
    inputs={"temperature": "K"},
    output="cm^3/s",
    coefficients={"temperatures": "K", "coefficients": "cm^3/s"},
)
def temperature_table(temperature, *, temperatures, coefficients):
    """A coefficient published at a set of temperatures.

    Between the published temperatures log(B) is linear in T (B changes by orders
    of magnitude between 77 and 300 K, smoothly); outside them the end values are held
    (an extrapolation: the model's validity warning says so). numpy arrays only.

    Parameters
    ----------
    temperature : array_like, K
    temperatures : K (ascending);  coefficients : cm^3/s (B at those temperatures)

    Returns
    -------
    B, cm^3/s
    """
    return temperature_table_derivatives(
        temperature, temperatures=temperatures, coefficients=coefficients
    )[0]


@derivatives_of(temperature_table)
def temperature_table_derivatives(temperature, *, temperatures, coefficients):
    """B and ``dB/dT = B d(log B)/dT`` (zero where an end value is held)."""
    grid = np.asarray(temperatures, dtype=float)
    logs = np.log(np.asarray(coefficients, dtype=float))
    t = np.asarray(temperature, dtype=float)
    held = np.clip(t, grid[0], grid[-1])
    i = np.clip(np.searchsorted(grid, held, side="right") - 1, 0, grid.size - 2)
    slope = (logs[i + 1] - logs[i]) / (grid[i + 1] - grid[i])
    value = np.exp(logs[i] + slope * (held - grid[i]))
    inside = (t >= grid[0]) & (t <= grid[-1])
    return value, {"temperature": np.where(inside, value * slope, 0.0)}
