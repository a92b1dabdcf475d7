"""Which releases are final, recorded where editing ``datasets/`` cannot reach.

A release becomes final when it is sealed: ``datasets/releases/<id>.seal.json`` lists
the sha256 of every file its numbers depend on — the release file, its frozen
reference(s), a copy of every model file of every quantity it serves (defaults and
alternatives, kept in ``datasets/archive/<id>/models/``), every defect file (kept in
``datasets/archive/<id>/defects/``) and every table — and the sha256 of that seal is
written into :data:`FINAL_SEALS` below, in the package code.

At run time a release is final only if it appears in :data:`FINAL_SEALS`, its seal
file has exactly the recorded digest, its release file says ``status = "final"``, and
every sealed file is listed in the checksum list with the sealed digest (the loaders
then refuse any file that differs from the checksum list). Anything else is a
:class:`~matprops.errors.FinalityError`: a release file that claims finality without a
recorded seal, a final release whose file was toggled back to draft, a sealed file
that was edited (even with every checksum re-recorded and the reference regenerated).

Lines of :data:`FINAL_SEALS` are only ever added (``tests/regression/
test_finality.py`` checks the table against its git history and a copy kept in the
tests). ``python -m matprops.outputs.reference freeze <id>`` seals a draft and adds
its line here.
"""

from __future__ import annotations

import hashlib
import json
from collections.abc import Mapping
from typing import Any, Protocol

from ..errors import DatasetError, FinalityError
from .files import read_limited

__all__ = ["FINAL_SEALS", "SEAL_VERSION", "is_final", "seal_path", "sealed_files", "verify"]

# release id -> sha256 of datasets/releases/<id>.seal.json. Add lines; never edit one.
FINAL_SEALS: Mapping[str, str] = {
    "2026.1": "37ea59bc53a3d47a47ddcdeb1610839f2792b707d8cf1cd30fd046d514aeff61",
}

SEAL_VERSION = 1


class _Catalogue(Protocol):
    root: Any

    def checksums(self) -> dict[str, str]: ...


def is_final(release_id: str) -> bool:
    """True when the package code records a seal for this release."""
    return release_id in FINAL_SEALS


def seal_path(catalogue: _Catalogue, release_id: str):
    return catalogue.root / "releases" / f"{release_id}.seal.json"


def sealed_files(catalogue: _Catalogue, release_id: str) -> dict[str, str]:
    """The files a final release's seal lists (relative path -> sha256), after checking
    the seal itself against :data:`FINAL_SEALS`."""
    path = seal_path(catalogue, release_id)
    try:
        data = read_limited(path)  # (a regular file, its size checked before reading)
    except DatasetError as exc:
        raise FinalityError(
            path,
            f"release {release_id} is final (its seal is recorded in matprops), but its "
            f"seal file cannot be read ({exc.problem})",
        ) from exc
    digest = hashlib.sha256(data).hexdigest()
    if digest != FINAL_SEALS[release_id]:
        raise FinalityError(
            path,
            f"sha256 {digest} is not the seal recorded for final release {release_id} in "
            f"matprops ({FINAL_SEALS[release_id]}): the release's sealed files were "
            "changed. Refusing to load it; corrections make a new release.",
        )
    seal = json.loads(data)
    return dict(seal["files"])


def verify(catalogue: _Catalogue, release_id: str, status: str) -> bool:
    """Check a release against the recorded seals; return whether it is final.

    Raises :class:`~matprops.errors.FinalityError` when the release file's ``status``
    disagrees with the record, or when a sealed file's recorded checksum differs from
    its seal (the loaders refuse files that differ from the checksum list, so together
    every sealed byte is checked when it is read).
    """
    release_file = catalogue.root / "releases" / f"{release_id}.toml"
    if not is_final(release_id):
        if status == "final":
            raise FinalityError(
                release_file,
                f'says status = "final", but this version of matprops records no seal '
                f"for release {release_id}; a release becomes final only by being sealed "
                "(python -m matprops.outputs.reference freeze)",
            )
        return False
    if status != "final":
        raise FinalityError(
            release_file,
            f"says status = {status!r}, but release {release_id} is final (its seal is "
            "recorded in matprops): a final release never returns to draft",
        )
    recorded = catalogue.checksums()
    for relative, digest in sealed_files(catalogue, release_id).items():
        if recorded.get(relative) != digest:
            raise FinalityError(
                catalogue.root / relative,
                f"sealed by final release {release_id} with sha256 {digest}, but the "
                f"checksum list records {recorded.get(relative)}: the file was changed, "
                "replaced or removed. Refusing to load the release.",
            )
    return True
