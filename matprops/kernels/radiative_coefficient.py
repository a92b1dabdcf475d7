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
