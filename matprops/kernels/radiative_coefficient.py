"""Radiative (band-to-band) recombination coefficient B, in cm^3/s.

The net radiative rate is ``U = B (n p - n0 p0)``. The coefficient depends on
what it was measured for: the value of *intrinsic* silicon at low injection
(Trupke et al. 2003) is not the same quantity as a coefficient that already
includes the reduction of B at high carrier densities, and neither is the older
constant carried inside some intrinsic-lifetime parameterisations. Each model
file says which one it holds.
"""

import numpy as np

from ._spec import derivatives_of, kernel
from ._tables import linear_1d
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
        return np.full(np.shape(temperature), float(coefficient))
    return zeros_like(xp, asfloat(xp, temperature)) + float(coefficient)


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
    nan_outside=("temperature",),
)
def temperature_table(temperature, *, temperatures, coefficients):
    """A coefficient published at a set of temperatures.

    Between the published temperatures log(B) is linear in T (B changes by orders
    of magnitude between 77 and 300 K, smoothly); outside them the result is NaN.
    Numpy arrays only.

    Parameters
    ----------
    temperature : array_like, K
    temperatures : K (ascending);  coefficients : cm^3/s (B at those temperatures)

    Returns
    -------
    B, cm^3/s
    """
    t = np.asarray(temperature, dtype=float)
    return np.exp(linear_1d(t, np.asarray(temperatures, dtype=float), np.log(coefficients)))
