"""Carrier velocities: thermal velocity, saturation velocity, field-dependent mobility.

Internal units: temperature in K, velocities in cm/s, electric field in V/cm,
mobility in cm^2/(V s).
"""

import numpy as np

from ._spec import kernel
from ._xp import asfloat, asin, asinh, errstate, namespace, zeros_like
from .band_gap import varshni
from .constants import BOLTZMANN_J, ELECTRON_MASS_KG

__all__ = [
    "field_dependent_mobility",
    "mean_speed_mass",
    "mean_thermal_speed",
    "power_of_temperature",
]

_MEAN_SPEED_CM = float(np.sqrt(8.0 * BOLTZMANN_J / (np.pi * ELECTRON_MASS_KG)) * 100.0)


def mean_speed_mass(longitudinal_mass, transverse_mass):
    """Mass (in m0) whose ``sqrt(8kT / (pi m))`` is the mean speed in one ellipsoidal valley.

    A valley with masses ``m_l, m_t, m_t`` has a Maxwell velocity distribution
    that is Gaussian with variances ``kT/m_i`` along its axes; its mean speed is
    ``sqrt(8kT/pi)`` times the angular average of ``sqrt(cos^2/m_l + sin^2/m_t)``,
    which integrates in closed form to

    ``m = 4 m_l / (1 + sqrt(m_l/m_t) g)^2``,  ``g = asin(d)/d`` with
    ``d = sqrt(1 - m_t/m_l)`` for a prolate valley (``m_l > m_t``, silicon's),
    ``g = asinh(d)/d`` with ``d = sqrt(m_t/m_l - 1)`` for an oblate one, and
    ``m = m_l = m_t`` for a sphere. (Derived here; the same expression gives
    Green's 1990 electron thermal-velocity mass.)
    """
    xp = namespace(longitudinal_mass, transverse_mass)
    m_l = asfloat(xp, longitudinal_mass)
    m_t = asfloat(xp, transverse_mass)
    ratio = m_t / m_l
    prolate = xp.sqrt(xp.maximum(1.0 - ratio, 0.0))
    if xp is np and prolate.size and prolate.min() > 1e-8:
        # every valley prolate (silicon's electrons): one branch, the same numbers
        return 4.0 * m_l / (1.0 + np.sqrt(m_l / m_t) * (np.arcsin(prolate) / prolate)) ** 2
    oblate = xp.sqrt(xp.maximum(ratio - 1.0, 0.0))
    with errstate(xp, invalid="ignore", divide="ignore"):
        one = zeros_like(xp, oblate) + 1.0
        g = xp.where(
            prolate > 1e-8,
            asin(xp, prolate) / xp.where(prolate > 1e-8, prolate, one),
            xp.where(oblate > 1e-8, asinh(xp, oblate) / xp.where(oblate > 1e-8, oblate, one), one),
        )
    return 4.0 * m_l / (1.0 + xp.sqrt(m_l / m_t) * g) ** 2


@kernel(
    inputs={"temperature": "K"},
    output="cm/s",
    coefficients={
        "longitudinal_mass": "1",
        "transverse_mass_at_zero": "1",
        "transverse_mass_gap_scaling": "1",
        "gap_at_zero": "eV",
        "gap_alpha": "eV/K",
        "gap_beta": "K",
    },
    array_api=True,
)
def mean_thermal_speed(
    temperature,
    *,
    longitudinal_mass,
    transverse_mass_at_zero,
    transverse_mass_gap_scaling,
    gap_at_zero,
    gap_alpha,
    gap_beta,
):
    """Mean thermal speed ``v_th = sqrt(8 k T / (pi m_th))`` of carriers in one valley.

    The valley is an ellipsoid with longitudinal mass ``m_l`` and transverse mass
    ``m_t(T) = m_t(0) [Eg(0)/Eg(T)]^s`` (``s = 1``: Green's scaling of the electron
    transverse mass with the gap, Eg in Varshni's form; ``s = 0`` and
    ``m_l = m_t``: a spherical band of fixed mass). ``m_th`` is the mean-speed mass
    of that ellipsoid, :func:`mean_speed_mass`.

    The root-mean-square speed ``sqrt(3kT/m)`` of a spherical band of the same mass
    is ``sqrt(3 pi / 8) = 1.085`` times larger; the two conventions are not
    interchangeable.

    Parameters
    ----------
    temperature : array_like, K
    longitudinal_mass, transverse_mass_at_zero : in units of m0
    transverse_mass_gap_scaling : exponent s of Eg(0)/Eg(T) (dimensionless)
    gap_at_zero : eV;  gap_alpha : eV/K;  gap_beta : K  (Varshni gap for the scaling)

    Returns
    -------
    cm/s

    References
    ----------
    M. A. Green, J. Appl. Phys. 67, 2944 (1990), doi:10.1063/1.345414.
    """
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    if transverse_mass_gap_scaling:
        gap = varshni(t, gap_at_zero=gap_at_zero, alpha=gap_alpha, beta=gap_beta)
        m_t = transverse_mass_at_zero * (gap_at_zero / gap) ** transverse_mass_gap_scaling
    elif transverse_mass_at_zero == longitudinal_mass:
        # a spherical band of fixed mass: the mean-speed mass is that mass (exactly
        # what mean_speed_mass gives, without the arrays)
        return _MEAN_SPEED_CM * xp.sqrt(t / float(longitudinal_mass))
    else:
        m_t = zeros_like(xp, t) + transverse_mass_at_zero
    mass = mean_speed_mass(longitudinal_mass, m_t)
    return _MEAN_SPEED_CM * xp.sqrt(t / mass)


@kernel(
    inputs={"temperature": "K"},
    output="cm/s",
    coefficients={"prefactor": "cm/s", "exponent": "1", "reference_temperature": "K"},
    array_api=True,
)
def power_of_temperature(temperature, *, prefactor, exponent, reference_temperature):
    """``v = A (T / T_ref)^gamma`` (Jacoboni et al. write ``A T^gamma``, T in K: T_ref = 1 K).

    Parameters
    ----------
    temperature : array_like, K
    prefactor : cm/s;  exponent : dimensionless;  reference_temperature : K

    Returns
    -------
    cm/s
    """
    xp = namespace(temperature)
    t = asfloat(xp, temperature)
    return prefactor * xp.exp(exponent * xp.log(t / reference_temperature))


power_of_temperature.block = 1 << 17  # a few operations per point: large blocks


@kernel(
    inputs={
        "field": "V/cm",
        "temperature": "K",
        "low_field_mobility": "cm^2/(V*s)",
        "saturation_velocity": "cm/s",
    },
    output="cm^2/(V*s)",
    coefficients={"beta_prefactor": "1", "beta_exponent": "1", "reference_temperature": "K"},
    array_api=True,
)
def field_dependent_mobility(
    field,
    temperature,
    low_field_mobility,
    saturation_velocity,
    *,
    beta_prefactor,
    beta_exponent,
    reference_temperature,
):
    """Mobility in a field of the Caughey-Thomas form, with a temperature-dependent beta.

    ``mu(E) = mu_0 / [1 + (mu_0 E / v_sat)^beta]^(1/beta)``,
    ``beta = beta_A (T / T_ref)^b``. It tends to ``mu_0`` at low field and the
    drift velocity ``mu E`` to ``v_sat`` at high field. Evaluated as
    ``mu_0 exp(-log1p(x^beta)/beta)`` with ``x = mu_0 E / v_sat`` (no overflow).

    Parameters
    ----------
    field : array_like, V/cm (magnitude of the driving field, >= 0)
    temperature : array_like, K
    low_field_mobility : array_like, cm^2/(V s)
    saturation_velocity : array_like, cm/s
    beta_prefactor, beta_exponent : dimensionless;  reference_temperature : K

    Returns
    -------
    cm^2/(V s)
    """
    xp = namespace(field, temperature, low_field_mobility, saturation_velocity)
    t = asfloat(xp, temperature)
    mu0 = asfloat(xp, low_field_mobility)
    beta = beta_prefactor * xp.exp(beta_exponent * xp.log(t / reference_temperature))
    x = mu0 * asfloat(xp, field) / asfloat(xp, saturation_velocity)
    with errstate(xp, divide="ignore"):
        log_x = xp.log(x)
    return mu0 * xp.exp(-xp.log1p(xp.exp(beta * log_x)) / beta)
