"""Shockley-Read-Hall recombination through one defect level, as a lifetime in s.

For a level with capture time constants ``tau_n0 = 1/(sigma_n v_n N_t)`` and
``tau_p0 = 1/(sigma_p v_p N_t)`` and emission densities ``n1``, ``p1`` (the
electron and hole densities the material would have with the Fermi level at the
defect level), the net rate is (Shockley and Read 1952; Hall 1952)

    U = (n p - n1 p1) / [tau_p0 (n + n1) + tau_n0 (p + p1)]

With ``n1 p1 = n0 p0`` (the rate vanishes in equilibrium), ``n = n0 + dn`` and
``p = p0 + dn`` (no trapping), the lifetime ``tau = dn / U`` is

    tau = [tau_p0 (n0 + n1 + dn) + tau_n0 (p0 + p1 + dn)] / (n0 + p0 + dn)

which is finite as dn -> 0 and tends to ``tau_n0 + tau_p0`` at high injection.
The helpers below give ``n1, p1`` from a level quoted against a band edge, a
capture cross-section that may vary with temperature, and the capture times.
"""

import numpy as np

from ._spec import kernel
from ._xp import asfloat, namespace
from .constants import BOLTZMANN_EV

REFERENCES = ("conduction", "valence", "intrinsic")
LAWS = ("constant", "power", "activated")


@kernel(
    inputs={
        "excess_density": "cm^-3",
        "equilibrium_electron_density": "cm^-3",
        "equilibrium_hole_density": "cm^-3",
        "electron_emission_density": "cm^-3",
        "hole_emission_density": "cm^-3",
        "electron_capture_time": "s",
        "hole_capture_time": "s",
    },
    output="s",
    array_api=True,
)
def single_level(
    excess_density,
    equilibrium_electron_density,
    equilibrium_hole_density,
    electron_emission_density,
    hole_emission_density,
    electron_capture_time,
    hole_capture_time,
):
    """SRH lifetime of one level (the second equation of the module notes).

    Parameters
    ----------
    excess_density : array_like, cm^-3 (dn = dp)
    equilibrium_electron_density, equilibrium_hole_density : array_like, cm^-3 (n0, p0)
    electron_emission_density, hole_emission_density : array_like, cm^-3 (n1, p1,
        with n1 p1 = n0 p0)
    electron_capture_time, hole_capture_time : array_like, s (tau_n0, tau_p0)

    Returns
    -------
    lifetime, s
    """
    xp = namespace(
        excess_density,
        equilibrium_electron_density,
        equilibrium_hole_density,
        electron_emission_density,
        hole_emission_density,
        electron_capture_time,
        hole_capture_time,
    )
    dn = asfloat(xp, excess_density)
    n0 = asfloat(xp, equilibrium_electron_density)
    p0 = asfloat(xp, equilibrium_hole_density)
    shape = np.broadcast_shapes(
        *(
            np.shape(a)
            for a in (
                dn,
                n0,
                p0,
                electron_emission_density,
                hole_emission_density,
                electron_capture_time,
                hole_capture_time,
            )
        )
    )
    if xp is np and shape:  # the same operations, in place (three arrays, no more)
        electrons = np.add(n0, electron_emission_density, out=np.empty(shape))
        electrons += dn
        electrons *= hole_capture_time
        holes = np.add(p0, hole_emission_density, out=np.empty(shape))
        holes += dn
        holes *= electron_capture_time
        electrons += holes
        total = np.add(n0, p0, out=holes)
        total += dn
        electrons /= total
        return electrons
    return (
        hole_capture_time * (n0 + electron_emission_density + dn)
        + electron_capture_time * (p0 + hole_emission_density + dn)
    ) / (n0 + p0 + dn)


single_level.block = 1 << 17  # a few operations per point: large blocks


def emission_densities(
    temperature, energy, reference, conduction_states, valence_states, equilibrium_product
):
    """``(n1, p1)`` of a level, cm^-3, with ``n1 p1`` equal to ``equilibrium_product``.

    The level stays at a fixed distance ``energy`` (eV, >= 0 into the gap) from the
    band edge it is quoted against:

    - ``"conduction"``: ``E_c - E_t = energy``; ``n1 = Nc exp(-energy/kT)``;
    - ``"valence"``: ``E_t - E_v = energy``; ``p1 = Nv exp(-energy/kT)``;
    - ``"intrinsic"``: ``E_t - E_i = energy`` (either sign); ``n1 = n_ie exp(energy/kT)``
      with ``n_ie = sqrt(equilibrium_product)``;

    and the other density follows from ``n1 p1 = n0 p0`` (so a narrowed gap moves the
    far edge, not the level). Inputs broadcast; ``conduction_states`` and
    ``valence_states`` (cm^-3) are Nc and Nv at the temperature.
    """
    kt = BOLTZMANN_EV * np.asarray(temperature, dtype=float)
    product = np.asarray(equilibrium_product, dtype=float)
    if reference == "conduction":
        n1 = conduction_states * np.exp(-energy / kt)
        return n1, product / n1
    if reference == "valence":
        p1 = valence_states * np.exp(-energy / kt)
        return product / p1, p1
    if reference == "intrinsic":
        root = np.sqrt(product)
        return root * np.exp(energy / kt), root * np.exp(-energy / kt)
    raise ValueError(f"reference must be one of {', '.join(REFERENCES)}, got {reference!r}")


def cross_section(
    temperature,
    *,
    value,
    law="constant",
    reference_temperature=300.0,
    exponent=0.0,
    activation_energy=0.0,
):
    """A capture cross-section, cm^2, constant or varying with temperature.

    - ``"constant"``: ``sigma = value``;
    - ``"power"``: ``sigma = value (T / reference_temperature)^exponent``;
    - ``"activated"``: ``sigma = value exp(-activation_energy / kT)`` (multiphonon
      capture; ``value`` is the high-temperature limit).

    Parameters
    ----------
    temperature : array_like, K;  value : cm^2;  reference_temperature : K
    exponent : 1;  activation_energy : eV
    """
    t = np.asarray(temperature, dtype=float)
    if law == "constant":
        return np.full(np.shape(t), float(value))
    if law == "power":
        return value * np.exp(exponent * np.log(t / reference_temperature))
    if law == "activated":
        return value * np.exp(-activation_energy / (BOLTZMANN_EV * t))
    raise ValueError(f"law must be one of {', '.join(LAWS)}, got {law!r}")


def capture_time(cross_section, thermal_velocity, density):
    """``1 / (sigma v_th N_t)``, s, from cm^2, cm/s and cm^-3 (inf where N_t = 0)."""
    with np.errstate(divide="ignore"):
        return 1.0 / (np.asarray(cross_section, dtype=float) * thermal_velocity * density)
