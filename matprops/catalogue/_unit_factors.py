"""pint's factors for the unit strings of the data files (generated: do not edit).

Written by tools/make_unit_factors.py with pint 0.25.3: (units as written in a data
file, the kernel's internal units) -> the factor pint multiplies by. Loading the
catalogue converts with these, so it needs no unit registry; the tests check every
factor against pint.
"""

FACTORS = {
    ("1/(cm*eV^0.5)", "1/(cm*eV^0.5)"): 1.0,
    ("1/(cm*eV^2)", "1/(cm*eV^2)"): 1.0,
    ("1/(ohm*cm)", "1/(ohm*cm)"): 1.0,
    ("1/C", "1/C"): 1.0,
    ("1/K", "1/K"): 1.0,
    ("1/K^2", "1/K^2"): 1.0,
    ("1/V", "1/V"): 1.0,
    ("1/cm", "1/cm"): 1.0,
    ("J/(mol*K)", "J/(mol*K)"): 1.0,
    ("K", "K"): 1.0,
    ("V/(cm*K)", "V/(cm*K)"): 1.0,
    ("V/cm", "V/cm"): 1.0,
    ("W/(cm*K)", "W/(cm*K)"): 1.0,
    ("angstrom", "cm"): 1e-08,
    ("cm/s", "cm/s"): 1.0,
    ("cm^-1", "1/cm"): 1.0,
    ("cm^-2", "cm^-2"): 1.0,
    ("cm^-3", "cm^-3"): 1.0,
    ("cm^2", "cm^2"): 1.0,
    ("cm^2/(V*s)", "cm^2/(V*s)"): 1.0,
    ("cm^3", "cm^3"): 1.0,
    ("cm^3/s", "cm^3/s"): 1.0,
    ("cm^6/s", "cm^6/s"): 1.0,
    ("dimensionless", "1"): 1.0,
    ("dimensionless", "dimensionless"): 1.0,
    ("eV", "eV"): 1.0,
    ("eV/K", "eV/K"): 1.0,
    ("g/mol", "g/mol"): 1.0,
    ("m^2", "cm^2"): 10000.0,
    ("meV", "eV"): 0.001,
    ("nm", "cm"): 1.0000000000000001e-07,
    ("nm", "nm"): 1.0,
    ("ohm*cm", "ohm*cm"): 1.0,
    ("ohm/cm^2", "ohm/cm^2"): 1.0,
}
