"""Effective densities of states of the conduction and valence bands, in cm^-3.

For a band with density-of-states effective mass m,
``N = 2 (2 pi m k T / h^2)^(3/2)``; the kernels differ in how m depends on T.
"""

import numpy as np

from ._spec import kernel
from .band_gap import varshni
from .constants import STATES_PREFACTOR


def states_from_mass(temperature, mass_ratio):
    """``2 (2 pi m k T / h^2)^(3/2)`` in cm^-3 for ``m = mass_ratio * m0``."""
    mt = mass_ratio * temperature
    return STATES_PREFACTOR * mt * np.sqrt(mt)


@kernel(inputs={"temperature": "K"}, output=("cm^-3", "cm^-3"),
        coefficients={"transverse_mass_at_zero": "1", "longitudinal_mass": "1",
                      "valleys": "1", "gap_at_zero": "eV", "gap_alpha": "eV/K",
                      "gap_beta": "K", "hole_numerator": "1",
                      "hole_denominator": "1"})
def green(temperature, *, transverse_mass_at_zero, longitudinal_mass, valleys,
          gap_at_zero, gap_alpha, gap_beta, hole_numerator, hole_denominator):
    """Temperature-dependent density-of-states masses after Green (1990).

    Electrons: the transverse mass scales with the gap,
    ``m_t(T) = m_t(0) Eg(0)/Eg(T)``, the longitudinal mass is constant, and the six
    valleys give ``m_e = valleys^(2/3) (m_t^2 m_l)^(1/3)``; Eg(T) in Varshni's form.
    Holes: ``m_h = [P(T) / Q(T)]^(2/3)`` with P, Q power series in T (kelvin),
    ``P = sum a_k T^k`` (k = 0..4) and ``Q = 1 + sum b_k T^k`` (k = 1..4).

    Parameters
    ----------
    temperature : array_like, K
    transverse_mass_at_zero, longitudinal_mass : in units of m0
    valleys : number of equivalent conduction-band minima (6 in silicon)
    gap_at_zero, gap_alpha, gap_beta : Varshni gap used for the mass scaling
    hole_numerator : a_0..a_4 (T in K);  hole_denominator : b_1..b_4 (T in K)

    Returns
    -------
    (Nc, Nv) : cm^-3

    References
    ----------
    M. A. Green, J. Appl. Phys. 67, 2944 (1990), doi:10.1063/1.345414.
    """
    t = np.asarray(temperature, dtype=float)
    gap = varshni(t, gap_at_zero=gap_at_zero, alpha=gap_alpha, beta=gap_beta)
    m_t = transverse_mass_at_zero * gap_at_zero / gap
    m_e = valleys ** (2.0 / 3.0) * np.cbrt(m_t * m_t * longitudinal_mass)
    num = np.polynomial.polynomial.polyval(t, hole_numerator)
    den = 1.0 + t * np.polynomial.polynomial.polyval(t, hole_denominator)
    m_h = np.cbrt((num / den) ** 2)
    return states_from_mass(t, m_e), states_from_mass(t, m_h)


@kernel(inputs={"temperature": "K"}, output=("cm^-3", "cm^-3"),
        coefficients={"conduction_at_reference": "cm^-3",
                      "valence_at_reference": "cm^-3",
                      "conduction_exponent": "1", "valence_exponent": "1",
                      "reference_temperature": "K"})
def power_law(temperature, *, conduction_at_reference, valence_at_reference,
              conduction_exponent, valence_exponent, reference_temperature):
    """``Nc = Nc(Tr) (T/Tr)^xc``, ``Nv = Nv(Tr) (T/Tr)^xv``.

    Parameters
    ----------
    temperature : array_like, K
    conduction_at_reference, valence_at_reference : cm^-3
    conduction_exponent, valence_exponent : dimensionless
    reference_temperature : K
    """
    log_t = np.log(np.asarray(temperature, dtype=float) / reference_temperature)
    return (conduction_at_reference * np.exp(conduction_exponent * log_t),
            valence_at_reference * np.exp(valence_exponent * log_t))


@kernel(inputs={"temperature": "K"}, output=("cm^-3", "cm^-3"),
        coefficients={"prefactor": "cm^-3", "conduction_polynomial": "1",
                      "valence_polynomial": "1"})
def mass_polynomials(temperature, *, prefactor, conduction_polynomial,
                     valence_polynomial):
    """``N = A (m_d/m0)^(3/2) T^(3/2)`` with ``(m_d/m0)^(3/2)`` a polynomial in T.

    Parameters
    ----------
    temperature : array_like, K
    prefactor : cm^-3 (``2 (2 pi m0 k / h^2)^(3/2)`` as printed, T in kelvin)
    conduction_polynomial, valence_polynomial : coefficients of T^0, T^1, ...
        (T in kelvin) of ``(m_d/m0)^(3/2)``
    """
    t = np.asarray(temperature, dtype=float)
    t32 = prefactor * t * np.sqrt(t)
    return (t32 * np.polynomial.polynomial.polyval(t, conduction_polynomial),
            t32 * np.polynomial.polynomial.polyval(t, valence_polynomial))
