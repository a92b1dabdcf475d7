"""Quantities computed from other quantities' models (no model file of their own).

``DERIVED`` maps each such quantity to ``(quantities it is built from, formula shown
in the provenance)``; it is read from the quantity registry (:mod:`.registry`), where
each family of methods declares its quantities.
"""

from __future__ import annotations

from . import (  # noqa: F401 (declarations)
    carriers,
    crystal,
    optical,
    recombination,
    thermal,
    transport,
)
from .registry import REGISTRY

__all__ = ["DERIVED"]

DERIVED = REGISTRY.derived()
