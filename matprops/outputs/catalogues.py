"""A lab's own catalogue: make it, add own releases, freeze them.

    import matprops
    matprops.create_catalogue("~/lab-catalogue", name="our-lab",
                              description="Our Lab's refits, kept by A. Person")
    fit = matprops.fit("band_gap", "passler-2002", "gap.csv", free=["gap_at_zero", "alpha"])
    fit.write("~/lab-catalogue", "ourlab-2027", source={...})
    matprops.create_release("ourlab-2027.1", base="2026.2",
                            models={"band_gap": "ourlab-2027"}, notes="...",
                            catalogue="~/lab-catalogue")
    matprops.freeze_release("ourlab-2027.1", catalogues=["~/lab-catalogue"])
    si = matprops.silicon("ourlab-2027.1", catalogues=["~/lab-catalogue"])

Creating a release writes its file (a draft) and its frozen reference evaluations, as
for the shipped releases; freezing checks that the reference reproduces, archives every
file its numbers depend on, seals it, and records the seal in the seals file (default
``$MATPROPS_SEALS`` or ``matprops/seals.txt`` in the user's configuration folder). The
layout and the rules are in :mod:`matprops.catalogue.overlay`.
"""

from __future__ import annotations

import os
from collections.abc import Mapping, Sequence
from pathlib import Path

__all__ = ["create_catalogue", "create_release", "freeze_release"]


def create_catalogue(path, *, name: str, description: str, contact: str = "") -> Path:
    """Make an empty overlay catalogue folder; see :func:`matprops.catalogue.overlay.create`."""
    from ..catalogue.overlay import create

    return create(path, name, description, contact)


def _stack(catalogue, catalogues, seals):
    """The layered catalogue with ``catalogue`` (where the release goes) on top."""
    from ..catalogue.overlay import catalogue_at, catalogues_from_environment

    root = os.path.abspath(os.path.expanduser(os.fspath(catalogue)))
    others = catalogues_from_environment() if catalogues is None else list(catalogues)
    others = [os.path.abspath(os.path.expanduser(os.fspath(p))) for p in others]
    return catalogue_at(None, [root, *(p for p in others if p != root)], seals)


def create_release(
    release: str,
    *,
    base: str,
    models: Mapping[str, str],
    notes: str,
    catalogue,
    catalogues: Sequence | None = None,
    seals=None,
    date: str | None = None,
) -> Path:
    """Write a draft own release into an overlay catalogue and its frozen reference.

    Parameters
    ----------
    release : the new release's id (``"ourlab-2027.1"``: lower-case words and numbers)
    base : the release it builds on (shipped ``"2026.2"`` or an own one)
    models : quantity -> model id it chooses (its own models or any other)
    notes : what it changes against its base, and why
    catalogue : the overlay folder that holds it
    catalogues : further overlays below it (default ``$MATPROPS_CATALOGUES``)

    Returns the reference file's path.
    """
    from ..catalogue.overlay import write_release
    from .reference import regenerate

    top = _stack(catalogue, catalogues, seals)
    write_release(top, release, base, dict(models), notes, date)
    return regenerate(release, top)


def freeze_release(
    release: str, *, catalogues: Sequence | None = None, seals=None, date: str | None = None
) -> str:
    """Make a draft own release final (see :func:`matprops.outputs.reference.freeze`);
    returns the seal's digest, recorded in ``seals`` (default: the user's seals file)."""
    from ..catalogue.overlay import catalogue_at, catalogues_from_environment
    from .reference import freeze

    if catalogues is None:
        catalogues = catalogues_from_environment()
    top = catalogue_at(None, [os.path.abspath(os.path.expanduser(p)) for p in catalogues], seals)
    return freeze(release, top, date)
