"""``matprops.explain(quantity, ...)``: the chain behind one value, for the newest
release (or ``si=``); the same as ``si.explain(...)`` (:mod:`matprops.material.trace`)."""

from __future__ import annotations

__all__ = ["explain"]


def explain(quantity: str, *, si=None, **inputs):
    """The chain behind one value of ``quantity`` (a :class:`~matprops.material.trace.Trace`;
    ``print()`` it). ``si``: the material (default: the newest release)."""
    from ..material.silicon import Silicon

    return (si or Silicon()).explain(quantity, **inputs)
