"""Helpers shared by the test modules (imported as ``from helpers import ...``).

Fixtures live in ``conftest.py``; outside tables, each loader naming its source, in
``outside_data.py``; worker set-up for process pools in ``spawn_helpers.py``.
"""

import warnings

import numpy as np

import matprops


def quiet(function, *args, **kwargs):
    """``function(*args, **kwargs)`` with validity warnings silenced (for grids that
    cross a model's validity range on purpose)."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        return function(*args, **kwargs)


def with_model(quantity, model_id, **more):
    """The newest release with ``model_id`` serving ``quantity`` (and ``more``
    overrides)."""
    return matprops.silicon(models={quantity: model_id, **more})


def minimum_ionised_fraction(si, species):
    """The lowest ionised fraction of a dopant species at 300 K over 1e16-1e20 cm^-3."""
    dopings = np.logspace(16, 20, 161)
    kwargs = (
        {"Nd": dopings, "donor": species}
        if species != "boron"
        else {"Na": dopings, "acceptor": species}
    )
    state = quiet(si.equilibrium, 300, **kwargs)
    ionised = state.ionised_donors if species != "boron" else state.ionised_acceptors
    return float(np.min(ionised.m_as("cm^-3") / dopings))


H = 6.62607015e-34  # J s
C = 2.99792458e10  # cm/s
K = 1.380649e-23  # J/K


def van_roosbroeck_shockley(si, temperature):
    """B(T) from the band-to-band absorption by the van Roosbroeck-Shockley relation,
    B ni^2 = integral of 8 pi n^2 nu^2 alpha(nu) exp(-h nu / kT) / c^2 d nu (the route
    of Trupke et al. 2003 and Nguyen et al. 2014, abstracts read)."""
    wavelength = np.arange(950.0, 1181.0, 1.0)  # nm: the band edge, inside the model's range
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        alpha = si.absorption(wavelength, temperature).m_as("1/cm")
        index = si.refractive_index(wavelength, temperature).m
        ni = si.intrinsic_density(temperature).m_as("cm^-3")
    nu = C / (wavelength * 1e-7)
    integrand = 8 * np.pi * index**2 * nu**2 / C**2 * alpha * np.exp(-H * nu / (K * temperature))
    return -np.trapezoid(integrand, nu) / ni**2
