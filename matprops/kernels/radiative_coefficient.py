"""Radiative (band-to-band) recombination coefficient B, in cm^3/s.

The net radiative rate is ``U = B (n p - n0 p0)``. The coefficient depends on
what it was measured for: the value of *intrinsic* silicon at low injection
(Trupke et al. 2003) is not the same quantity as a coefficient that already
includes the reduction of B at high carrier densities, and neither is the older
constant carried inside some intrinsic-lifetime parameterisations. Each model
file says which one it holds.
"""

import numpy as np

from ._spec import kernel


@kernel(inputs={"temperature": "K"}, output="cm^3/s", coefficients={"coefficient": "cm^3/s"})
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
    return np.full(np.shape(temperature), float(coefficient))
