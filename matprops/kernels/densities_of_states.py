"""Effective densities of states of the conduction and valence bands, in cm^-3.

For a band with density-of-states effective mass m,
``N = 2 (2 pi m k T / h^2)^(3/2)``; the kernels differ in how m depends on T.
Written against the array API standard (see :mod:`._xp`); each kernel has analytic
derivatives (``(Nc, Nv)`` and ``(dNc/dT, dNv/dT)`` in cm^-3/K).
"""

from ._spec import derivatives_of, kernel
from ._xp import asfloat, cbrt, namespace
from .band_gap import horner, horner_derivative, varshni, varshni_derivatives
from .constants import STATES_PREFACTOR


def states_from_mass(temperature, mass_ratio, xp=None):
    """``2 (2 pi m k T / h^2)^(3/2)`` in cm^-3 for ``m = mass_ratio * m0``."""
    xp = xp or namespace(temperature, mass_ratio)
    mt = mass_ratio * temperature
    return STATES_PREFACTOR * mt * xp.sqrt(mt)


@kernel(
    inputs={"temperature": "K"},
    output=("cm^-3", "cm^-3"),
    coefficients={
        "transverse_mass_at_zero": "1",
        "longitudinal_mass": "1",
        "valleys": "1",
        "gap_at_zero": "eV",
        "gap_alpha": "eV/K",
        "gap_beta": "K",
        "hole_numerator": "1",
        "hole_denominator": "1",
    },
    array_api=True,
)
def green(
    temperature,
    *,
    transverse_mass_at_zero,
    longitudinal_mass,
    valleys,
    gap_at_zero,
    gap_alpha,
    gap_beta,
    hole_numerator,
    hole_denominator,
):
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
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    gap = varshni(t, gap_at_zero=gap_at_zero, alpha=gap_alpha, beta=gap_beta)
    m_t = transverse_mass_at_zero * gap_at_zero / gap
    m_e = valleys ** (2.0 / 3.0) * cbrt(xp, m_t * m_t * longitudinal_mass)
    num = horner(t, hole_numerator)
    den = 1.0 + t * horner(t, hole_denominator)
    ratio = num / den
    m_h = cbrt(xp, ratio * ratio)
    return states_from_mass(t, m_e, xp), states_from_mass(t, m_h, xp)


@derivatives_of(green)
def green_derivatives(
    temperature,
    *,
    transverse_mass_at_zero,
    longitudinal_mass,
    valleys,
    gap_at_zero,
    gap_alpha,
    gap_beta,
    hole_numerator,
    hole_denominator,
):
    """``N = S (m T)^(3/2)`` gives ``dN/dT = 1.5 N (1/T + m'/m)``, with
    ``m_e'/m_e = -(2/3) Eg'/Eg`` and ``m_h'/m_h = (2/3) (P'/P - Q'/Q)``."""
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    gap, slopes = varshni_derivatives(t, gap_at_zero=gap_at_zero, alpha=gap_alpha, beta=gap_beta)
    nc, nv = green(
        t,
        transverse_mass_at_zero=transverse_mass_at_zero,
        longitudinal_mass=longitudinal_mass,
        valleys=valleys,
        gap_at_zero=gap_at_zero,
        gap_alpha=gap_alpha,
        gap_beta=gap_beta,
        hole_numerator=hole_numerator,
        hole_denominator=hole_denominator,
    )
    num = horner(t, hole_numerator)
    d_num = horner_derivative(t, hole_numerator)
    series = horner(t, hole_denominator)
    den = 1.0 + t * series
    d_den = series + t * horner_derivative(t, hole_denominator)
    electron = -(2.0 / 3.0) * slopes["temperature"] / gap
    hole = (2.0 / 3.0) * (d_num / num - d_den / den)
    inverse_t = 1.0 / t
    return (nc, nv), {
        "temperature": (1.5 * nc * (inverse_t + electron), 1.5 * nv * (inverse_t + hole))
    }


@kernel(
    inputs={"temperature": "K"},
    output=("cm^-3", "cm^-3"),
    coefficients={
        "conduction_at_reference": "cm^-3",
        "valence_at_reference": "cm^-3",
        "conduction_exponent": "1",
        "valence_exponent": "1",
        "reference_temperature": "K",
    },
    array_api=True,
)
def power_law(
    temperature,
    *,
    conduction_at_reference,
    valence_at_reference,
    conduction_exponent,
    valence_exponent,
    reference_temperature,
):
    """``Nc = Nc(Tr) (T/Tr)^xc``, ``Nv = Nv(Tr) (T/Tr)^xv``.

    Parameters
    ----------
    temperature : array_like, K
    conduction_at_reference, valence_at_reference : cm^-3
    conduction_exponent, valence_exponent : dimensionless
    reference_temperature : K
    """
    xp = namespace(temperature)
    log_t = xp.log(asfloat(xp, temperature) / reference_temperature)
    return (
        conduction_at_reference * xp.exp(conduction_exponent * log_t),
        valence_at_reference * xp.exp(valence_exponent * log_t),
    )


@derivatives_of(power_law)
def power_law_derivatives(temperature, **coefficients):
    """``dN/dT = x N / T``."""
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    nc, nv = power_law(t, **coefficients)
    return (nc, nv), {
        "temperature": (
            coefficients["conduction_exponent"] * nc / t,
            coefficients["valence_exponent"] * nv / t,
        )
    }


@kernel(
    inputs={"temperature": "K"},
    output=("cm^-3", "cm^-3"),
    coefficients={"prefactor": "cm^-3", "conduction_polynomial": "1", "valence_polynomial": "1"},
    array_api=True,
)
def mass_polynomials(temperature, *, prefactor, conduction_polynomial, valence_polynomial):
    """``N = A (m_d/m0)^(3/2) T^(3/2)`` with ``(m_d/m0)^(3/2)`` a polynomial in T.

    Parameters
    ----------
    temperature : array_like, K
    prefactor : cm^-3 (``2 (2 pi m0 k / h^2)^(3/2)`` as printed, T in kelvin)
    conduction_polynomial, valence_polynomial : coefficients of T^0, T^1, ...
        (T in kelvin) of ``(m_d/m0)^(3/2)``
    """
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    t32 = prefactor * t * xp.sqrt(t)
    return (t32 * horner(t, conduction_polynomial), t32 * horner(t, valence_polynomial))


@derivatives_of(mass_polynomials)
def mass_polynomials_derivatives(
    temperature, *, prefactor, conduction_polynomial, valence_polynomial
):
    """``dN/dT = A T^(1/2) [1.5 P(T) + T P'(T)]``."""
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    root = xp.sqrt(t)
    t32 = prefactor * t * root
    scale = prefactor * root
    values, slopes = [], []
    for c in (conduction_polynomial, valence_polynomial):
        mass = horner(t, c)
        values.append(t32 * mass)
        slopes.append(scale * (1.5 * mass + t * horner_derivative(t, c)))
    return tuple(values), {"temperature": tuple(slopes)}


# a few operations per point: large blocks (a 1e5-point call in one piece)
for _light in (mass_polynomials, power_law):
    _light.block = 1 << 17
