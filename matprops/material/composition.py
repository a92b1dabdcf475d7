"""Composition by fit conventions: each model fed what its coefficients were fitted with.

A model file of a composed quantity states its fit conventions
(:mod:`matprops.catalogue.conventions`). The material reads them here:

- ``dopant_densities``: ``"total"`` -> the dopant densities as given; ``"ionised"`` ->
  the ionised densities of the equilibrium (of the model's carrier convention);
- ``carrier_densities``: ``"complete-ionisation"`` -> the equilibrium carriers with
  every dopant ionised (same statistics, narrowing and intrinsic density); ``"free"``
  or unknown -> the equilibrium free carriers, incomplete ionisation included;

An unknown convention ("not stated", "not known") composes the model as the release
did before conventions were recorded.
"""

from __future__ import annotations

__all__ = ["complete_ionisation"]


def complete_ionisation(model) -> bool:
    """Whether ``model`` was fitted with the carriers of complete ionisation."""
    conventions = model.conventions
    return conventions is not None and (
        conventions.value("carrier_densities") == "complete-ionisation"
    )
