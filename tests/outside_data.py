"""Outside data used by several test modules, each loader naming its source."""

from functools import cache
from pathlib import Path

import numpy as np

DATA = Path(__file__).resolve().parent / "data"


@cache
def green_2008_copy():
    """Green 2008's Table 1 as transcribed in Genius TCAD Open's source (see the file header).

    Returns wavelength (nm), alpha (1/cm), n, and the temperature coefficients C_n and
    C_alpha (1/K) as numpy arrays.
    """
    path = DATA / "green-2008-table1-second-copy.csv"
    table = np.loadtxt(path, delimiter=",", comments="#", skiprows=7)
    wavelength = np.round(table[:, 0] * 1000.0, 6)
    return wavelength, table[:, 1], table[:, 2], table[:, 3] * 1e-4, table[:, 4] * 1e-4


def green_temperature_ratio(wavelength, temperature):
    """alpha(T)/alpha(300 K) from Green 2008's coefficients, applied as (T/300 K)^(300 K C).

    Only at the table's wavelengths (10-nm steps); raises for other wavelengths.
    """
    lam, _, _, _, c_alpha = green_2008_copy()
    index = np.searchsorted(lam, wavelength)
    if not np.all(lam[index] == wavelength):
        raise ValueError("Green's coefficients are tabulated every 10 nm")
    return (temperature / 300.0) ** (300.0 * c_alpha[index])
