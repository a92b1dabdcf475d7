"""Crystal constants of the diamond lattice: lattice constant, densities, planes.

Lengths in cm, mass in g, areal densities in cm^-2.
"""

import functools

import numpy as np

from ._coefficients import is_dual
from ._spec import derivatives_of, kernel
from ._xp import asfloat, namespace
from .constants import AVOGADRO

ATOMS_PER_CUBIC_CELL = 8  # diamond structure: fcc lattice with a two-atom basis

# Low-index planes of the diamond lattice, for a cubic cell of side a:
# atoms per a^2 in one atomic layer, and dangling bonds per surface atom of the
# ideal, unreconstructed surface (each atom has four bonds; the cut breaks these).
PLANES = {
    "100": (2.0, 2),  # square net 2/a^2; two bonds cut per atom
    "110": (2.0 * np.sqrt(2.0), 1),  # 4 atoms per (a x a sqrt2) rectangle; one cut
    "111": (4.0 / np.sqrt(3.0), 1),  # hexagonal net of side a/sqrt2; one cut
}


@kernel(
    inputs={"temperature": "K"},
    output="cm",
    coefficients={
        "reference_lattice_constant": "cm",
        "reference_temperature": "K",
        "c1": "1/K",
        "c2": "1/K",
        "c3": "1/K^2",
        "onset_temperature": "K",
    },
    array_api=True,
)
def okada_tokumaru(
    temperature, *, reference_lattice_constant, reference_temperature, c1, c2, c3, onset_temperature
):
    """Lattice constant from the integrated linear thermal-expansion coefficient.

    ``alpha(T) = c1 [1 - exp(-c2 (T - T1))] + c3 T`` and
    ``a(T) = a(Tr) exp( int_Tr^T alpha dT )`` with the closed-form integral
    ``F(T) = c1 [T + exp(-c2 (T - T1)) / c2] + c3 T^2 / 2``.

    Parameters
    ----------
    temperature : array_like, K
    reference_lattice_constant : cm, at reference_temperature (K)
    c1 : 1/K;  c2 : 1/K;  c3 : 1/K^2;  onset_temperature (T1) : K

    References
    ----------
    Y. Okada and Y. Tokumaru, J. Appl. Phys. 56, 314 (1984), doi:10.1063/1.333965.
    """
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    reference = _okada_integral(reference_temperature, c1, c2, c3, onset_temperature)
    if xp is np and t.ndim:  # the same operations, in place (two arrays)
        power = np.subtract(t, onset_temperature)
        power *= -c2
        np.exp(power, out=power)
        power /= c2
        power += t
        power *= c1
        square = np.multiply(0.5 * c3, t)
        square *= t
        power += square
        power -= reference
        np.exp(power, out=power)
        power *= reference_lattice_constant
        return power
    return reference_lattice_constant * xp.exp(
        _okada_integral(t, c1, c2, c3, onset_temperature, xp.exp) - reference
    )


okada_tokumaru.block = 1 << 17  # a few operations per point: large blocks


def _okada_integral(x, c1, c2, c3, onset_temperature, exp=None):
    """``F(x) = c1 [x + exp(-c2 (x - T1)) / c2] + c3 x^2 / 2`` (a float for a float x,
    computed once per set of coefficients)."""
    if exp is None:
        if any(is_dual(c) for c in (c1, c2, c3, onset_temperature)):
            return _okada_integral(x, c1, c2, c3, onset_temperature, np.exp)
        return _okada_constant(float(x), c1, c2, c3, onset_temperature)
    return c1 * (x + exp(-c2 * (x - onset_temperature)) / c2) + 0.5 * c3 * x * x


@functools.lru_cache(maxsize=16)
def _okada_constant(x, c1, c2, c3, onset_temperature):
    return float(_okada_integral(x, c1, c2, c3, onset_temperature, np.exp))


@kernel(
    inputs={"temperature": "K"},
    output="1/K",
    coefficients={"c1": "1/K", "c2": "1/K", "c3": "1/K^2", "onset_temperature": "K"},
    array_api=True,
)
def okada_tokumaru_expansion(temperature, *, c1, c2, c3, onset_temperature):
    """Linear thermal-expansion coefficient of Okada and Tokumaru.

    ``alpha(T) = c1 [1 - exp(-c2 (T - T1))] + c3 T``

    (the derivative ``d ln a / dT`` of :func:`okada_tokumaru`'s lattice constant).

    Parameters
    ----------
    temperature : array_like, K
    c1 : 1/K;  c2 : 1/K;  c3 : 1/K^2;  onset_temperature (T1) : K

    Returns
    -------
    alpha : 1/K

    References
    ----------
    Y. Okada and Y. Tokumaru, J. Appl. Phys. 56, 314 (1984), doi:10.1063/1.333965.
    """
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    return c1 * (1.0 - xp.exp(-c2 * (t - onset_temperature))) + c3 * t


@derivatives_of(okada_tokumaru_expansion)
def okada_tokumaru_expansion_derivatives(temperature, *, c1, c2, c3, onset_temperature):
    """alpha(T) and ``d alpha / dT = c1 c2 exp(-c2 (T - T1)) + c3``."""
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    decay = xp.exp(-c2 * (t - onset_temperature))
    return c1 * (1.0 - decay) + c3 * t, {"temperature": c1 * c2 * decay + c3}


def atomic_density(lattice_constant):
    """Atoms per cm^3 of the diamond lattice, ``8 / a^3`` (a in cm)."""
    a = asfloat(namespace(lattice_constant), lattice_constant)
    return ATOMS_PER_CUBIC_CELL / (a * a * a)


def mass_density(lattice_constant, atomic_mass):
    """Mass density in g/cm^3 from the lattice constant (cm) and molar mass (g/mol)."""
    return atomic_density(lattice_constant) * atomic_mass / AVOGADRO


def plane_atom_density(lattice_constant, plane):
    """Atoms per cm^2 in one atomic layer of a {100}, {110} or {111} plane."""
    a = asfloat(namespace(lattice_constant), lattice_constant)
    return PLANES[plane][0] / (a * a)


def dangling_bond_density(lattice_constant, plane):
    """Dangling bonds per cm^2 of an ideal, unreconstructed {100}/{110}/{111} surface."""
    return plane_atom_density(lattice_constant, plane) * PLANES[plane][1]


@kernel(inputs={}, output="1", coefficients={"value": "1"}, array_api=True)
def constant(*, value):
    """A temperature-independent dimensionless value (e.g. relative permittivity)."""
    return value


@kernel(inputs={}, output="g/mol", coefficients={"value": "g/mol"}, array_api=True)
def molar_mass(*, value):
    """A molar mass (standard atomic weight times 1 g/mol)."""
    return value
