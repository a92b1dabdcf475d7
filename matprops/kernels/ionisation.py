"""Dopant levels: ionisation energy and the share of dopant states still localised.

A dopant's kernel returns ``(E_dop, b)``: its ionisation energy (eV, measured
from the band edge it binds to) and the share ``b`` of its states that are still
localised at that density; the rest, ``1 - b``, has merged into the band and
counts as ionised. With the reduced Fermi level ``eta`` (the distance of the
Fermi level beyond that band edge into the band, in units of kT: ``(E_F - E_c)/kT``
for donors, ``(E_v - E_F)/kT`` for acceptors) the ionised fraction is

``f = 1 - b / (1 + (1/g) exp(-eta - E_dop/kT)) = 1 - b * logistic(eta + E_dop/kT + ln g)``

with ``g`` the level's degeneracy factor (2 for donors, 4 for acceptors in
silicon). :func:`ionised_fraction` evaluates it; the equilibrium solver uses the
same expression.
"""

import functools

import numpy as np

from ._coefficients import is_dual, number
from ._spec import kernel
from ._xp import asfloat, errstate, namespace, zeros_like
from .constants import BOLTZMANN_EV


@kernel(
    inputs={"dopant_density": "cm^-3"},
    output=("eV", "1"),
    coefficients={
        "energy_at_low_density": "eV",
        "energy_density": "cm^-3",
        "energy_exponent": "1",
        "merging_density": "cm^-3",
        "merging_exponent": "1",
        "degeneracy": "1",
    },
    array_api=True,
)
def lowered_level(
    dopant_density,
    *,
    energy_at_low_density,
    energy_density,
    energy_exponent,
    merging_density,
    merging_exponent,
    degeneracy,
):
    """A level whose energy falls with density and whose states merge into the band.

    ``E_dop(N) = E_0 / (1 + (N / N_r)^c)`` and ``b(N) = 1 / (1 + (N / N_b)^d)``
    (Altermatt et al. 2006). ``degeneracy`` is carried for
    :func:`ionised_fraction`; it does not enter these two.

    Parameters
    ----------
    dopant_density : array_like, cm^-3 (total density of this dopant)
    energy_at_low_density : eV;  energy_density : cm^-3;  energy_exponent : 1
    merging_density : cm^-3;  merging_exponent : 1;  degeneracy : 1

    Returns
    -------
    (ionisation energy [eV], localised share [1])
    """
    xp = namespace(dopant_density)
    n = asfloat(xp, dopant_density)
    with errstate(xp, divide="ignore"):  # N = 0: log -> -inf, power -> 0
        log_n = xp.log(n)
    if xp is np and log_n.ndim:  # the same operations, in place (no temporaries)
        return (
            _fraction(log_n, _log(energy_density), energy_exponent, energy_at_low_density),
            _fraction(log_n, _log(merging_density), merging_exponent, 1.0),
        )
    energy = energy_at_low_density / (
        1.0 + xp.exp(energy_exponent * (log_n - _log(energy_density)))
    )
    share = 1.0 / (1.0 + xp.exp(merging_exponent * (log_n - _log(merging_density))))
    return energy, share


def _fraction(log_n, log_reference, exponent, numerator):
    """``numerator / (1 + exp(exponent (log_n - log_reference)))`` in one array."""
    result = np.subtract(log_n, log_reference)
    result *= exponent
    np.exp(result, out=result)
    result += 1.0
    return np.divide(numerator, result, out=result)


lowered_level.block = 1 << 17  # a few operations per point: large blocks


@kernel(
    inputs={"dopant_density": "cm^-3"},
    output=("eV", "1"),
    coefficients={"energy": "eV", "degeneracy": "1"},
    array_api=True,
)
def fixed_level(dopant_density, *, energy, degeneracy):
    """A level at a fixed ionisation energy whose states all stay localised (``b = 1``).

    Parameters
    ----------
    dopant_density : array_like, cm^-3 (only sets the shape of the result)
    energy : eV;  degeneracy : 1

    Returns
    -------
    (ionisation energy [eV], localised share [1])
    """
    xp = namespace(dopant_density)
    if xp is np:
        shape = np.shape(dopant_density)
        if is_dual(energy):
            return energy + np.zeros(shape), np.ones(shape)
        return np.full(shape, float(energy)), np.ones(shape)
    zero = zeros_like(xp, asfloat(xp, dopant_density))
    return zero + number(energy), zero + 1.0


fixed_level.unblocked = True  # fills its outputs and nothing else: no blocks needed


def _log(value):
    """numpy's log of a coefficient, as a Python float, computed once (a coefficient
    under differentiation: its log)."""
    return np.log(value) if is_dual(value) else _cached_log(value)


@functools.lru_cache(maxsize=64)
def _cached_log(value: float) -> float:
    return float(np.log(value))


def ionised_fraction(reduced_fermi_level, temperature, energy, share, degeneracy):
    """Ionised fraction of a dopant: ``1 - b * logistic(eta + E_dop/kT + ln g)``.

    Parameters
    ----------
    reduced_fermi_level : array_like, 1 (``eta``, see the module docstring)
    temperature : array_like, K
    energy : array_like, eV (ionisation energy);  share : array_like, 1 (``b``)
    degeneracy : float, 1
    """
    x = (
        np.asarray(reduced_fermi_level, dtype=float)
        + energy / (BOLTZMANN_EV * np.asarray(temperature, dtype=float))
        + np.log(degeneracy)
    )
    return 1.0 - share * _logistic(x)


def _logistic(x):
    """``1 / (1 + exp(-x))`` without overflow for large |x|."""
    z = np.exp(-np.abs(x))
    return np.where(x >= 0, 1.0 / (1.0 + z), z / (1.0 + z))
