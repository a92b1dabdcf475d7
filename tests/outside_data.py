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


# ASTM F723-99 (after Thurber et al., NBS SP 400-64, 1981): the standard conversion between
# resistivity and dopant density of boron- and phosphorus-doped silicon at 23 degC, as
# the release stores it (standard_resistivity / standard_dopant_density thurber-1981; its
# equations corroborated by the EMIS handbook table in test_transport). The physics route
# is compared with it in both directions; the points of the README's table.
F723_TEMPERATURE = 296.15  # K (23 degC)
F723_POINTS = (1e13, 1e14, 1e15, 1e16, 1e17, 3e17, 1e18, 3e18, 1e19, 3e19, 1e20)


def f723_agreement(si, densities, dopant):
    """(rho_F723 [ohm cm], rho_physics/rho_F723 - 1, N_physics/N_F723 - 1) at densities N:
    the resistivity direction at N, the density direction at the standard's resistivity
    of N (N_F723 from the standard's own resistivity-to-density equations)."""
    import warnings

    import matprops

    kind = "Na" if dopant == "boron" else "Nd"
    t = F723_TEMPERATURE
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)  # 1e13: below the data
        rho = si.resistivity(t, **{kind: densities}, conversion="standard").m_as("ohm*cm")
        physics = si.resistivity(t, **{kind: densities}, conversion="physics").m_as("ohm*cm")
        standard_n = si.doping_from_resistivity(rho, t, dopant, conversion="standard")
        physics_n = si.doping_from_resistivity(rho, t, dopant, conversion="physics")
    return rho, physics / rho - 1, (physics_n / standard_n).m_as("") - 1


def f723_table(si):
    """The README's agreement table (markdown rows), computed."""
    import numpy as np

    points = np.array(F723_POINTS)
    columns = {d: f723_agreement(si, points, d) for d in ("boron", "phosphorus")}
    rows = [
        "| N (cm^-3) | B: F723 rho (ohm cm) | B: physics rho | B: physics N "
        "| P: F723 rho (ohm cm) | P: physics rho | P: physics N |",
        "|---|---|---|---|---|---|---|",
    ]
    for i, n in enumerate(points):
        mantissa, exponent = f"{n:.0e}".split("e")
        cells = [f"{mantissa}e{int(exponent)}" if mantissa != "1" else f"1e{int(exponent)}"]
        for dopant in ("boron", "phosphorus"):
            rho, resistivity, density = columns[dopant]
            cells += [
                f"{rho[i]:.4g}",
                f"{100 * resistivity[i]:+.1f} %",
                f"{100 * density[i]:+.1f} %",
            ]
        rows.append("| " + " | ".join(cells) + " |")
    return "\n".join(rows)
