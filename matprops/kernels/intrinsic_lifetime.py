"""Intrinsic recombination (Auger and radiative) as a lifetime, in s.

Every model here writes the net band-to-band rate as

    U = (n p - n0 p0) [A + R],    n = n0 + dn,  p = p0 + dn  (no trapping: dn = dp)

with ``A`` the model's Auger and ``R`` its radiative coefficient (both cm^3/s,
``A`` depending on the densities). Since ``n p - n0 p0 = dn (n0 + p0 + dn)``
exactly, the lifetime is evaluated as

    tau = dn / U = 1 / [(n0 + p0 + dn) (A + R)]

without cancellation, finite in the low-injection limit dn -> 0. The papers write
``n_i,eff^2`` (or ``n_i^2``) where this writes ``n0 p0``: the same number with
Boltzmann statistics; with Fermi-Dirac statistics ``n0 p0`` is the product that
makes the rate vanish in equilibrium.

Densities enter the power laws as pure numbers in cm^-3, as the papers print them
(``3.0e-29 dn^0.92``): every coefficient of a power law is therefore given in
cm^3/s, the units of the term it makes.

Every kernel takes ``part="total"`` (Auger + radiative), ``"auger"`` or
``"radiative"`` to return the lifetime of one part alone.
"""

import numpy as np

from ._spec import kernel

PARTS = ("total", "auger", "radiative")

_INPUTS = {"temperature": "K", "equilibrium_electron_density": "cm^-3",
           "equilibrium_hole_density": "cm^-3", "excess_density": "cm^-3"}


def _lifetime(shape, n0, p0, dn, auger, radiative, part):
    """1 / [(n0 + p0 + dn) x coefficient] of the part asked for, with the shape of all
    inputs together (``auger`` may be a fresh array: it is reused in place)."""
    if part == "total":
        coefficient = np.add(auger, radiative, out=auger if _owned(auger, shape) else None)
    elif part == "auger":
        coefficient = auger
    elif part == "radiative":
        coefficient = radiative
    else:
        raise ValueError(f"part must be one of {', '.join(PARTS)}, got {part!r}")
    total = n0 + p0
    total = np.add(total, dn, out=total if _owned(total, shape) else None)
    with np.errstate(divide="ignore"):
        result = np.multiply(total, coefficient, out=total if _owned(total, shape) else None)
        result = np.divide(1.0, result, out=result if _owned(result, shape) else None)
    return np.broadcast_to(result, shape) if np.shape(result) != shape else result


def _owned(array, shape) -> bool:
    """Whether ``array`` is a float array of the full shape that may be overwritten."""
    return isinstance(array, np.ndarray) and array.shape == shape and array.dtype == float


def _arrays(*values):
    return tuple(np.asarray(v, dtype=float) for v in values)


def _power(density, exponent):
    """density^exponent for densities in cm^-3 (np.power: on this machine kind about
    twice as fast as exp(exponent log x))."""
    return np.power(density, exponent)


@kernel(inputs=_INPUTS, output="s",
        coefficients={"electron_coefficient": "cm^6/s", "hole_coefficient": "cm^6/s",
                      "injection_coefficient": "cm^3/s", "injection_exponent": "1",
                      "eeh_enhancement": "1", "eeh_density": "cm^-3", "eeh_exponent": "1",
                      "ehh_enhancement": "1", "ehh_density": "cm^-3", "ehh_exponent": "1",
                      "radiative_coefficient": "cm^3/s"})
def richter(temperature, equilibrium_electron_density, equilibrium_hole_density,
            excess_density, *, electron_coefficient, hole_coefficient,
            injection_coefficient, injection_exponent, eeh_enhancement, eeh_density,
            eeh_exponent, ehh_enhancement, ehh_density, ehh_exponent,
            radiative_coefficient, part="total"):
    """Richter et al. (2012): Coulomb-enhanced Auger terms, an injection term, radiative.

    ``A = C_n g_eeh n0 + C_p g_ehh p0 + C_dn dn^gamma``,
    ``g_eeh = 1 + a_eeh [1 - tanh((n0/N_eeh)^x_eeh)]``,
    ``g_ehh = 1 + a_ehh [1 - tanh((p0/N_ehh)^x_ehh)]`` and ``R = B_low`` (the
    relative radiative coefficient B_rel of Altermatt et al. 2006, by which the paper
    multiplies B_low, is taken as 1: see the model file).

    Parameters
    ----------
    temperature : array_like, K (a 300 K model: sets the shape only)
    equilibrium_electron_density, equilibrium_hole_density : array_like, cm^-3 (n0, p0)
    excess_density : array_like, cm^-3 (dn = dp)
    electron_coefficient, hole_coefficient : cm^6/s (C_n, C_p)
    injection_coefficient : cm^3/s (of dn^gamma, dn in cm^-3);  injection_exponent : 1
    eeh_enhancement, ehh_enhancement : 1;  eeh_density, ehh_density : cm^-3
    eeh_exponent, ehh_exponent : 1;  radiative_coefficient : cm^3/s (B_low)

    Returns
    -------
    lifetime, s
    """
    t, n0, p0, dn = _arrays(temperature, equilibrium_electron_density,
                            equilibrium_hole_density, excess_density)
    shape = np.broadcast_shapes(t.shape, n0.shape, p0.shape, dn.shape)
    g_eeh = 1.0 + eeh_enhancement * (1.0 - np.tanh(_power(n0 / eeh_density, eeh_exponent)))
    g_ehh = 1.0 + ehh_enhancement * (1.0 - np.tanh(_power(p0 / ehh_density, ehh_exponent)))
    auger = (electron_coefficient * g_eeh * n0 + hole_coefficient * g_ehh * p0
             + injection_coefficient * _power(dn, injection_exponent))
    return _lifetime(shape, n0, p0, dn, auger, float(radiative_coefficient), part)


@kernel(inputs=_INPUTS, output="s",
        coefficients={"electron_coefficient": "cm^3/s", "electron_exponent": "1",
                      "hole_coefficient": "cm^3/s", "hole_exponent": "1",
                      "injection_coefficient": "cm^3/s", "injection_exponent": "1",
                      "radiative_coefficient": "cm^3/s"})
def kerr_cuevas(temperature, equilibrium_electron_density, equilibrium_hole_density,
                excess_density, *, electron_coefficient, electron_exponent,
                hole_coefficient, hole_exponent, injection_coefficient,
                injection_exponent, radiative_coefficient, part="total"):
    """Kerr and Cuevas (2002): power laws in n0, p0 and dn plus a constant radiative term.

    ``A = c_n n0^a_n + c_p p0^a_p + c_dn dn^a_dn`` and ``R`` the constant the
    parameterisation was fitted with.

    Parameters
    ----------
    temperature : array_like, K (a 300 K model: sets the shape only)
    equilibrium_electron_density, equilibrium_hole_density : array_like, cm^-3 (n0, p0)
    excess_density : array_like, cm^-3 (dn = dp)
    electron_coefficient, hole_coefficient, injection_coefficient : cm^3/s (of the
        density in cm^-3 raised to its exponent);  *_exponent : 1
    radiative_coefficient : cm^3/s

    Returns
    -------
    lifetime, s
    """
    t, n0, p0, dn = _arrays(temperature, equilibrium_electron_density,
                            equilibrium_hole_density, excess_density)
    shape = np.broadcast_shapes(t.shape, n0.shape, p0.shape, dn.shape)
    auger = electron_coefficient * _power(n0, electron_exponent)
    auger = auger + hole_coefficient * _power(p0, hole_exponent)
    auger = auger + injection_coefficient * _power(dn, injection_exponent)
    return _lifetime(shape, n0, p0, dn, auger, float(radiative_coefficient), part)


@kernel(inputs=_INPUTS, output="s",
        coefficients={"electron_coefficient": "cm^6/s", "hole_coefficient": "cm^6/s"},
        requires=("radiative_coefficient",))
def constant_coefficients(temperature, equilibrium_electron_density,
                          equilibrium_hole_density, excess_density, *,
                          electron_coefficient, hole_coefficient, radiative_coefficient,
                          part="total"):
    """Free-particle Auger recombination with constant coefficients, plus radiative.

    ``U_Auger = (C_n n + C_p p)(n p - n0 p0)`` with ``n = n0 + dn``, ``p = p0 + dn``
    (Dziewior and Schmid 1977), and ``R = B(T)`` from the material's radiative model
    (``radiative_coefficient``, a bound model: ``B = radiative_coefficient(temperature=T)``).

    Parameters
    ----------
    temperature : array_like, K
    equilibrium_electron_density, equilibrium_hole_density : array_like, cm^-3 (n0, p0)
    excess_density : array_like, cm^-3 (dn = dp)
    electron_coefficient, hole_coefficient : cm^6/s (C_n for eeh, C_p for ehh)
    radiative_coefficient : callable ``(temperature=K) -> cm^3/s``

    Returns
    -------
    lifetime, s
    """
    t, n0, p0, dn = _arrays(temperature, equilibrium_electron_density,
                            equilibrium_hole_density, excess_density)
    shape = np.broadcast_shapes(t.shape, n0.shape, p0.shape, dn.shape)
    auger = electron_coefficient * (n0 + dn) + hole_coefficient * (p0 + dn)
    radiative = np.asarray(radiative_coefficient(temperature=t), dtype=float)
    return _lifetime(shape, n0, p0, dn, auger, radiative, part)
