"""Quantities computed from other quantities' models (no model file of their own).

``DERIVED`` maps each such quantity to ``(quantities it is built from, formula shown
in the provenance)``; each family of methods declares its own.
"""

from __future__ import annotations

from .carriers import DERIVED as CARRIER_DERIVED
from .crystal import DERIVED as CRYSTAL_DERIVED
from .optical import DERIVED as OPTICAL_DERIVED
from .recombination import DERIVED as RECOMBINATION_DERIVED
from .thermal import DERIVED as THERMAL_DERIVED
from .transport import DERIVED as TRANSPORT_DERIVED

__all__ = ["DERIVED"]

DERIVED = {
    **CRYSTAL_DERIVED,
    **OPTICAL_DERIVED,
    **CARRIER_DERIVED,
    **TRANSPORT_DERIVED,
    **RECOMBINATION_DERIVED,
    **THERMAL_DERIVED,
}
