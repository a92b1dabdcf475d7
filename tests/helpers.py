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
