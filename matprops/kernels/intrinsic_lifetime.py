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

import math

import numpy as np

from ._coefficients import number
from ._spec import derivatives_of, kernel
from ._xp import asfloat, errstate, namespace, power, zeros_like

PARTS = ("total", "auger", "radiative")

_INPUTS = {
    "temperature": "K",
    "equilibrium_electron_density": "cm^-3",
    "equilibrium_hole_density": "cm^-3",
    "excess_density": "cm^-3",
}


def _coefficient(auger, radiative, part):
    if part == "total":
        return auger + radiative
    if part == "auger":
        return auger
    if part == "radiative":
        return radiative
    raise ValueError(f"part must be one of {', '.join(PARTS)}, got {part!r}")


def _lifetime(shape, n0, p0, dn, auger, radiative, part, xp=np):
    """1 / [(n0 + p0 + dn) x coefficient] of the part asked for, with the shape of all
    inputs together (``auger`` may be a fresh array: it is reused in place)."""
    if xp is not np:  # the same arithmetic, without numpy's in-place outputs
        result = 1.0 / ((n0 + p0 + dn) * _coefficient(auger, radiative, part))
        return xp.broadcast_to(result, shape) if tuple(result.shape) != shape else result
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
    xp = namespace(*values)
    return (xp, *(asfloat(xp, v) for v in values))


def _shape(*arrays):
    return tuple(np.broadcast_shapes(*(tuple(a.shape) for a in arrays)))


def _power(xp, density, exponent):
    """density^exponent for densities in cm^-3 (np.power: on this machine kind about
    twice as fast as exp(exponent log x))."""
    return power(xp, density, exponent)


def _lifetime_derivatives(xp, shape, n0, p0, dn, auger, radiative, d_auger, d_radiative, part):
    """tau = 1/(S K) with S = n0 + p0 + dn and K the part's coefficient:
    ``d tau = -tau (dS/S + dK/K)``; ``d_auger``, ``d_radiative``: input -> partial
    (absent: zero)."""
    coefficient = _coefficient(auger, radiative, part)
    total = n0 + p0 + dn
    value = 1.0 / (total * coefficient)
    zero = 0.0 * value
    with errstate(xp, invalid="ignore", divide="ignore"):
        through_sum = -value / total  # dS/dx = 1 for the three densities
        through_k = -value / coefficient
        partials = {}
        for name in _INPUTS:
            uses = {
                "total": (d_auger, d_radiative),
                "auger": (d_auger,),
                "radiative": (d_radiative,),
            }[part]
            slopes = [d[name] for d in uses if name in d]
            d_k = slopes[0] if len(slopes) == 1 else (slopes[0] + slopes[1] if slopes else None)
            if name == "temperature":
                partial = zero if d_k is None else through_k * d_k
            elif d_k is None:
                partial = through_sum
            else:
                partial = through_k * d_k
                if xp is np and partial.shape == shape:
                    partial += through_sum  # in place: one array fewer
                else:
                    partial = partial + through_sum
            partials[name] = xp.broadcast_to(partial, shape)
    return xp.broadcast_to(value, shape), partials


@kernel(
    inputs=_INPUTS,
    output="s",
    coefficients={
        "electron_coefficient": "cm^6/s",
        "hole_coefficient": "cm^6/s",
        "injection_coefficient": "cm^3/s",
        "injection_exponent": "1",
        "eeh_enhancement": "1",
        "eeh_density": "cm^-3",
        "eeh_exponent": "1",
        "ehh_enhancement": "1",
        "ehh_density": "cm^-3",
        "ehh_exponent": "1",
        "radiative_coefficient": "cm^3/s",
    },
    array_api=True,
)
def richter(
    temperature,
    equilibrium_electron_density,
    equilibrium_hole_density,
    excess_density,
    *,
    electron_coefficient,
    hole_coefficient,
    injection_coefficient,
    injection_exponent,
    eeh_enhancement,
    eeh_density,
    eeh_exponent,
    ehh_enhancement,
    ehh_density,
    ehh_exponent,
    radiative_coefficient,
    part="total",
):
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
    xp, t, n0, p0, dn = _arrays(
        temperature, equilibrium_electron_density, equilibrium_hole_density, excess_density
    )
    shape = _shape(t, n0, p0, dn)
    g_eeh = 1.0 + eeh_enhancement * (1.0 - xp.tanh(_power(xp, n0 / eeh_density, eeh_exponent)))
    g_ehh = 1.0 + ehh_enhancement * (1.0 - xp.tanh(_power(xp, p0 / ehh_density, ehh_exponent)))
    auger = (
        electron_coefficient * g_eeh * n0
        + hole_coefficient * g_ehh * p0
        + injection_coefficient * _power(xp, dn, injection_exponent)
    )
    return _lifetime(shape, n0, p0, dn, auger, number(radiative_coefficient), part, xp)


@derivatives_of(richter)
def richter_derivatives(
    temperature,
    equilibrium_electron_density,
    equilibrium_hole_density,
    excess_density,
    *,
    electron_coefficient,
    hole_coefficient,
    injection_coefficient,
    injection_exponent,
    eeh_enhancement,
    eeh_density,
    eeh_exponent,
    ehh_enhancement,
    ehh_density,
    ehh_exponent,
    radiative_coefficient,
    part="total",
):
    """The lifetime and its partials: with ``y = (n0/N_eeh)^x``,
    ``dA/dn0 = C_n [g_eeh - a_eeh x y (1 - tanh^2 y)]`` (likewise p0),
    ``dA/ddn = C_dn gamma dn^(gamma - 1)`` (infinite at dn = 0); T does not enter."""
    xp, t, n0, p0, dn = _arrays(
        temperature, equilibrium_electron_density, equilibrium_hole_density, excess_density
    )
    shape = _shape(t, n0, p0, dn)
    y_e = _power(xp, n0 / eeh_density, eeh_exponent)
    y_h = _power(xp, p0 / ehh_density, ehh_exponent)
    tanh_e, tanh_h = xp.tanh(y_e), xp.tanh(y_h)
    g_eeh = 1.0 + eeh_enhancement * (1.0 - tanh_e)
    g_ehh = 1.0 + ehh_enhancement * (1.0 - tanh_h)
    injection = _power(xp, dn, injection_exponent)
    auger = (
        electron_coefficient * g_eeh * n0
        + hole_coefficient * g_ehh * p0
        + injection_coefficient * injection
    )
    with errstate(xp, divide="ignore", invalid="ignore"):
        d_auger = {
            "equilibrium_electron_density": electron_coefficient
            * (g_eeh - eeh_enhancement * eeh_exponent * y_e * (1.0 - tanh_e * tanh_e)),
            "equilibrium_hole_density": hole_coefficient
            * (g_ehh - ehh_enhancement * ehh_exponent * y_h * (1.0 - tanh_h * tanh_h)),
            "excess_density": (injection_coefficient * injection_exponent)
            * xp.where(dn > 0, injection / dn, zeros_like(xp, injection) + math.inf),
        }
    return _lifetime_derivatives(
        xp, shape, n0, p0, dn, auger, number(radiative_coefficient), d_auger, {}, part
    )


@kernel(
    inputs=_INPUTS,
    output="s",
    coefficients={
        "electron_coefficient": "cm^3/s",
        "electron_exponent": "1",
        "hole_coefficient": "cm^3/s",
        "hole_exponent": "1",
        "injection_coefficient": "cm^3/s",
        "injection_exponent": "1",
        "radiative_coefficient": "cm^3/s",
    },
    array_api=True,
)
def kerr_cuevas(
    temperature,
    equilibrium_electron_density,
    equilibrium_hole_density,
    excess_density,
    *,
    electron_coefficient,
    electron_exponent,
    hole_coefficient,
    hole_exponent,
    injection_coefficient,
    injection_exponent,
    radiative_coefficient,
    part="total",
):
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
    xp, t, n0, p0, dn = _arrays(
        temperature, equilibrium_electron_density, equilibrium_hole_density, excess_density
    )
    shape = _shape(t, n0, p0, dn)
    auger = electron_coefficient * _power(xp, n0, electron_exponent)
    auger = auger + hole_coefficient * _power(xp, p0, hole_exponent)
    auger = auger + injection_coefficient * _power(xp, dn, injection_exponent)
    return _lifetime(shape, n0, p0, dn, auger, number(radiative_coefficient), part, xp)


@derivatives_of(kerr_cuevas)
def kerr_cuevas_derivatives(
    temperature,
    equilibrium_electron_density,
    equilibrium_hole_density,
    excess_density,
    *,
    electron_coefficient,
    electron_exponent,
    hole_coefficient,
    hole_exponent,
    injection_coefficient,
    injection_exponent,
    radiative_coefficient,
    part="total",
):
    """The lifetime and its partials (``dA/dn0 = c_n a_n n0^(a_n - 1)`` ...; T does not
    enter)."""
    xp, t, n0, p0, dn = _arrays(
        temperature, equilibrium_electron_density, equilibrium_hole_density, excess_density
    )
    shape = _shape(t, n0, p0, dn)
    auger = electron_coefficient * _power(xp, n0, electron_exponent)
    auger = auger + hole_coefficient * _power(xp, p0, hole_exponent)
    auger = auger + injection_coefficient * _power(xp, dn, injection_exponent)
    with errstate(xp, divide="ignore"):
        d_auger = {
            "equilibrium_electron_density": electron_coefficient
            * electron_exponent
            * _power(xp, n0, electron_exponent - 1.0),
            "equilibrium_hole_density": hole_coefficient
            * hole_exponent
            * _power(xp, p0, hole_exponent - 1.0),
            "excess_density": injection_coefficient
            * injection_exponent
            * _power(xp, dn, injection_exponent - 1.0),
        }
    return _lifetime_derivatives(
        xp, shape, n0, p0, dn, auger, number(radiative_coefficient), d_auger, {}, part
    )


@kernel(
    inputs=_INPUTS,
    output="s",
    coefficients={"electron_coefficient": "cm^6/s", "hole_coefficient": "cm^6/s"},
    requires=("radiative_coefficient",),
    array_api=True,
)
def constant_coefficients(
    temperature,
    equilibrium_electron_density,
    equilibrium_hole_density,
    excess_density,
    *,
    electron_coefficient,
    hole_coefficient,
    radiative_coefficient,
    part="total",
):
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
    xp, t, n0, p0, dn = _arrays(
        temperature, equilibrium_electron_density, equilibrium_hole_density, excess_density
    )
    shape = _shape(t, n0, p0, dn)
    auger = electron_coefficient * (n0 + dn) + hole_coefficient * (p0 + dn)
    radiative = asfloat(xp, radiative_coefficient(temperature=t))
    return _lifetime(shape, n0, p0, dn, auger, radiative, part, xp)


@derivatives_of(constant_coefficients)
def constant_coefficients_derivatives(
    temperature,
    equilibrium_electron_density,
    equilibrium_hole_density,
    excess_density,
    *,
    electron_coefficient,
    hole_coefficient,
    radiative_coefficient,
    part="total",
):
    """The lifetime and its partials: ``dA/dn0 = C_n``, ``dA/dp0 = C_p``,
    ``dA/ddn = C_n + C_p`` and ``dR/dT = dB/dT`` from the radiative model."""
    xp, t, n0, p0, dn = _arrays(
        temperature, equilibrium_electron_density, equilibrium_hole_density, excess_density
    )
    shape = _shape(t, n0, p0, dn)
    auger = electron_coefficient * (n0 + dn) + hole_coefficient * (p0 + dn)
    radiative, slopes = radiative_coefficient.derivative(temperature=t)
    radiative = asfloat(xp, radiative)
    d_auger = {
        "equilibrium_electron_density": electron_coefficient + 0.0 * auger,
        "equilibrium_hole_density": hole_coefficient + 0.0 * auger,
        "excess_density": (electron_coefficient + hole_coefficient) + 0.0 * auger,
    }
    return _lifetime_derivatives(
        xp,
        shape,
        n0,
        p0,
        dn,
        auger,
        radiative,
        d_auger,
        {"temperature": asfloat(xp, slopes["temperature"])},
        part,
    )


def _free_particle_ratio(t, a, b, c):
    """(a + b tau + c tau^2) / (a + b + c) with tau = T / 300 K: a free-particle Auger
    coefficient relative to its 300 K value."""
    tau = t / 300.0
    return (a + tau * (b + tau * c)) / (a + b + c)


def relative_radiative_coefficient(
    temperature,
    carrier_sum,
    *,
    rel_low_limit,
    rel_high_limit,
    rel_temperature,
    rel_temperature_exponent,
    first_density_low,
    first_density_high,
    first_temperature,
    first_temperature_exponent,
    first_exponent,
    second_density_low,
    second_density_high,
    second_temperature,
    second_temperature_exponent,
    second_exponent,
):
    """Altermatt et al.'s (2005) relative radiative coefficient B_rel(n + p, T) <= 1.

    ``B_rel = b_min + (1 - b_min) / [1 + ((n+p)/b_1)^e_1 + ((n+p)/b_3)^e_3]`` with
    ``b_min = r_max + (r_min - r_max) / [1 + (T/r_1)^r_2]`` and ``b_1``, ``b_3`` of the
    same logistic form in T (``s``, ``w`` sets): the screening of the electron-hole
    attraction by free carriers lowers B at high carrier densities.
    """
    xp = namespace(temperature, carrier_sum)
    t = asfloat(xp, temperature)
    total = asfloat(xp, carrier_sum)

    def logistic(low, high, scale, exponent):
        return high + (low - high) / (1.0 + _power(xp, t / scale, exponent))

    b_min = logistic(rel_low_limit, rel_high_limit, rel_temperature, rel_temperature_exponent)
    b_1 = logistic(
        first_density_low, first_density_high, first_temperature, first_temperature_exponent
    )
    b_3 = logistic(
        second_density_low, second_density_high, second_temperature, second_temperature_exponent
    )
    denominator = (
        1.0 + _power(xp, total / b_1, first_exponent) + _power(xp, total / b_3, second_exponent)
    )
    return b_min + (1.0 - b_min) / denominator


_RELATIVE_RADIATIVE = {
    "rel_low_limit": "1",
    "rel_high_limit": "1",
    "rel_temperature": "K",
    "rel_temperature_exponent": "1",
    "first_density_low": "cm^-3",
    "first_density_high": "cm^-3",
    "first_temperature": "K",
    "first_temperature_exponent": "1",
    "first_exponent": "1",
    "second_density_low": "cm^-3",
    "second_density_high": "cm^-3",
    "second_temperature": "K",
    "second_temperature_exponent": "1",
    "second_exponent": "1",
}


@kernel(
    inputs=_INPUTS,
    output="s",
    coefficients={
        "electron_coefficient": "cm^6/s",
        "hole_coefficient": "cm^6/s",
        "injection_coefficient": "cm^3/s",
        "injection_exponent": "1",
        "eeh_enhancement": "1",
        "eeh_density": "cm^-3",
        "eeh_exponent": "1",
        "ehh_enhancement": "1",
        "ehh_density": "cm^-3",
        "ehh_exponent": "1",
        "electron_free_constant": "cm^6/s",
        "electron_free_linear": "cm^6/s",
        "electron_free_quadratic": "cm^6/s",
        "hole_free_constant": "cm^6/s",
        "hole_free_linear": "cm^6/s",
        "hole_free_quadratic": "cm^6/s",
        **_RELATIVE_RADIATIVE,
    },
    requires=("radiative_coefficient",),
)
def richter_temperature(
    temperature,
    equilibrium_electron_density,
    equilibrium_hole_density,
    excess_density,
    *,
    electron_coefficient,
    hole_coefficient,
    injection_coefficient,
    injection_exponent,
    eeh_enhancement,
    eeh_density,
    eeh_exponent,
    ehh_enhancement,
    ehh_density,
    ehh_exponent,
    electron_free_constant,
    electron_free_linear,
    electron_free_quadratic,
    hole_free_constant,
    hole_free_linear,
    hole_free_quadratic,
    radiative_coefficient,
    part="total",
    **relative,
):
    """Richter et al.'s (2012) 300 K parameterisation carried in temperature.

    ``A(T) = f_n(T) C_n g_eeh n0 + f_p(T) C_p g_ehh p0 + f_a(T) C_dn dn^gamma`` with
    Richter's terms (see :func:`richter`) and the free-particle temperature factors
    ``f_n = (a_n + b_n tau + c_n tau^2) / (a_n + b_n + c_n)``, ``tau = T / 300 K``
    (likewise ``f_p``; ``f_a`` is the ratio of the sums for electrons and holes), so
    that ``A(300 K)`` is Richter's. ``R = B_rel(n + p, T) B_low(T)`` with ``B_low``
    from the material's radiative model (a bound model) and ``B_rel`` of Altermatt et
    al. (2005) (:func:`relative_radiative_coefficient`), ``n = n0 + dn``,
    ``p = p0 + dn``.

    Parameters
    ----------
    temperature : array_like, K
    equilibrium_electron_density, equilibrium_hole_density : array_like, cm^-3 (n0, p0)
    excess_density : array_like, cm^-3 (dn = dp)
    electron_coefficient ... ehh_exponent : Richter's coefficients (see :func:`richter`)
    electron_free_constant, electron_free_linear, electron_free_quadratic,
    hole_free_constant, hole_free_linear, hole_free_quadratic : cm^6/s (a, b, c of the
        free-particle coefficients' polynomials in T / 300 K)
    radiative_coefficient : callable ``(temperature=K) -> cm^3/s`` (B_low)
    **relative : the B_rel coefficients (see :func:`relative_radiative_coefficient`)

    Returns
    -------
    lifetime, s
    """
    xp, t, n0, p0, dn = _arrays(
        temperature, equilibrium_electron_density, equilibrium_hole_density, excess_density
    )
    shape = _shape(t, n0, p0, dn)
    f_n = _free_particle_ratio(
        t, electron_free_constant, electron_free_linear, electron_free_quadratic
    )
    f_p = _free_particle_ratio(t, hole_free_constant, hole_free_linear, hole_free_quadratic)
    f_a = _free_particle_ratio(
        t,
        electron_free_constant + hole_free_constant,
        electron_free_linear + hole_free_linear,
        electron_free_quadratic + hole_free_quadratic,
    )
    g_eeh = 1.0 + eeh_enhancement * (1.0 - xp.tanh(_power(xp, n0 / eeh_density, eeh_exponent)))
    g_ehh = 1.0 + ehh_enhancement * (1.0 - xp.tanh(_power(xp, p0 / ehh_density, ehh_exponent)))
    electron_term = electron_coefficient * g_eeh * n0
    hole_term = hole_coefficient * g_ehh * p0
    injection_term = injection_coefficient * _power(xp, dn, injection_exponent)
    auger = f_n * electron_term + f_p * hole_term + f_a * injection_term
    b_low = asfloat(xp, radiative_coefficient(temperature=t))
    radiative = b_low * relative_radiative_coefficient(t, n0 + p0 + 2.0 * dn, **relative)
    return _lifetime(shape, n0, p0, dn, auger, radiative, part, xp)


def _relative_radiative_with_slopes(xp, t, total, relative):
    """B_rel and its partials with respect to T and to the carrier sum n + p."""
    r = relative

    def logistic(low, high, scale, exponent):
        x = _power(xp, t / scale, exponent)
        value = high + (low - high) / (1.0 + x)
        slope = -(low - high) * exponent * x / (t * (1.0 + x) * (1.0 + x))
        return value, slope

    b_min, d_b_min = logistic(
        r["rel_low_limit"],
        r["rel_high_limit"],
        r["rel_temperature"],
        r["rel_temperature_exponent"],
    )
    b_1, d_b_1 = logistic(
        r["first_density_low"],
        r["first_density_high"],
        r["first_temperature"],
        r["first_temperature_exponent"],
    )
    b_3, d_b_3 = logistic(
        r["second_density_low"],
        r["second_density_high"],
        r["second_temperature"],
        r["second_temperature_exponent"],
    )
    e_1, e_3 = r["first_exponent"], r["second_exponent"]
    y_1 = _power(xp, total / b_1, e_1)
    y_3 = _power(xp, total / b_3, e_3)
    d = 1.0 + y_1 + y_3
    value = b_min + (1.0 - b_min) / d
    with errstate(xp, divide="ignore", invalid="ignore"):
        d_d_total = (e_1 * y_1 + e_3 * y_3) / total
    d_d_t = -e_1 * y_1 * d_b_1 / b_1 - e_3 * y_3 * d_b_3 / b_3
    d_total = -(1.0 - b_min) * d_d_total / (d * d)
    d_t = d_b_min * (1.0 - 1.0 / d) - (1.0 - b_min) * d_d_t / (d * d)
    return value, d_t, d_total


@derivatives_of(richter_temperature)
def richter_temperature_derivatives(
    temperature,
    equilibrium_electron_density,
    equilibrium_hole_density,
    excess_density,
    *,
    electron_coefficient,
    hole_coefficient,
    injection_coefficient,
    injection_exponent,
    eeh_enhancement,
    eeh_density,
    eeh_exponent,
    ehh_enhancement,
    ehh_density,
    ehh_exponent,
    electron_free_constant,
    electron_free_linear,
    electron_free_quadratic,
    hole_free_constant,
    hole_free_linear,
    hole_free_quadratic,
    radiative_coefficient,
    part="total",
    **relative,
):
    """The lifetime and its partials: the Auger partials of :func:`richter_derivatives`
    times the temperature factors, ``dA/dT`` through the factors'
    ``(b + 2 c tau) / (300 K (a + b + c))``, and ``dR/dx = B dB_rel/dx`` (x = n0, p0;
    twice that for dn) plus ``dR/dT = B' B_rel + B dB_rel/dT``."""
    xp, t, n0, p0, dn = _arrays(
        temperature, equilibrium_electron_density, equilibrium_hole_density, excess_density
    )
    shape = _shape(t, n0, p0, dn)

    def factor(a, b, c):
        value = _free_particle_ratio(t, a, b, c)
        slope = (b + 2.0 * c * (t / 300.0)) / (300.0 * (a + b + c))
        return value, slope

    f_n, df_n = factor(electron_free_constant, electron_free_linear, electron_free_quadratic)
    f_p, df_p = factor(hole_free_constant, hole_free_linear, hole_free_quadratic)
    f_a, df_a = factor(
        electron_free_constant + hole_free_constant,
        electron_free_linear + hole_free_linear,
        electron_free_quadratic + hole_free_quadratic,
    )
    y_e = _power(xp, n0 / eeh_density, eeh_exponent)
    y_h = _power(xp, p0 / ehh_density, ehh_exponent)
    tanh_e, tanh_h = xp.tanh(y_e), xp.tanh(y_h)
    g_eeh = 1.0 + eeh_enhancement * (1.0 - tanh_e)
    g_ehh = 1.0 + ehh_enhancement * (1.0 - tanh_h)
    injection = _power(xp, dn, injection_exponent)
    electron_term = electron_coefficient * g_eeh * n0
    hole_term = hole_coefficient * g_ehh * p0
    injection_term = injection_coefficient * injection
    auger = f_n * electron_term + f_p * hole_term + f_a * injection_term
    b_low, b_slopes = radiative_coefficient.derivative(temperature=t)
    b_low = asfloat(xp, b_low)
    d_b_low = asfloat(xp, b_slopes["temperature"])
    b_rel, d_rel_t, d_rel_total = _relative_radiative_with_slopes(
        xp, t, n0 + p0 + 2.0 * dn, relative
    )
    radiative = b_low * b_rel
    with errstate(xp, divide="ignore", invalid="ignore"):
        d_auger = {
            "temperature": df_n * electron_term + df_p * hole_term + df_a * injection_term,
            "equilibrium_electron_density": f_n
            * electron_coefficient
            * (g_eeh - eeh_enhancement * eeh_exponent * y_e * (1.0 - tanh_e * tanh_e)),
            "equilibrium_hole_density": f_p
            * hole_coefficient
            * (g_ehh - ehh_enhancement * ehh_exponent * y_h * (1.0 - tanh_h * tanh_h)),
            "excess_density": f_a
            * (injection_coefficient * injection_exponent)
            * xp.where(dn > 0, injection / dn, zeros_like(xp, injection) + math.inf),
        }
    d_radiative = {
        "temperature": d_b_low * b_rel + b_low * d_rel_t,
        "equilibrium_electron_density": b_low * d_rel_total,
        "equilibrium_hole_density": b_low * d_rel_total,
        "excess_density": 2.0 * b_low * d_rel_total,
    }
    return _lifetime_derivatives(
        xp, shape, n0, p0, dn, auger, radiative, d_auger, d_radiative, part
    )
