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

Own releases of an overlay catalogue (a lab's own models and releases, see
:mod:`matprops.catalogue.overlay`) are sealed the same way, and their seals are recorded
outside the overlay folder too: in a seals file (:class:`SealRecord`; by default
``$MATPROPS_SEALS``, else ``matprops/seals.txt`` in the user's configuration folder),
one line per final own release, which ``freeze`` appends to. Whoever uses an own
release (a colleague, a worker process) needs that line: it is the trusted record,
as :data:`FINAL_SEALS` is for the shipped releases.
"""

from __future__ import annotations

import hashlib
import json
import os
import re
from collections.abc import Mapping
from pathlib import Path
from typing import Any, Protocol

from ..errors import DatasetError, FinalityError
from .files import forget, read_limited, temporary_for

__all__ = [
    "FINAL_SEALS",
    "SEAL_VERSION",
    "SealRecord",
    "is_final",
    "seal_path",
    "sealed_files",
    "seals_path",
    "verify",
]

# release id -> sha256 of datasets/releases/<id>.seal.json. Add lines; never edit one.
FINAL_SEALS: Mapping[str, str] = {
    "2026.1": "37ea59bc53a3d47a47ddcdeb1610839f2792b707d8cf1cd30fd046d514aeff61",
    "2026.2": "581dab9a745f3e352837734a99e8a52d4e7ff2d310a3dac1b26c6e0e457b7c3f",
}

SEAL_VERSION = 1


class _Catalogue(Protocol):
    root: Any

    def checksums(self) -> dict[str, str]: ...


def is_final(release_id: str, seals: Mapping[str, str] | None = None) -> bool:
    """True when the record (default: the package code's) holds a seal for this release."""
    return release_id in (FINAL_SEALS if seals is None else seals)


def seal_path(catalogue: _Catalogue, release_id: str):
    return catalogue.root / "releases" / f"{release_id}.seal.json"


_IN_MATPROPS = "matprops"


def read_seal(
    catalogue: _Catalogue,
    release_id: str,
    seals: Mapping[str, str] | None = None,
    where: str = _IN_MATPROPS,
) -> dict:
    """A final release's seal (its files and their sha256, and what else it records),
    after checking the seal file itself against the recorded digest (``seals``, default
    :data:`FINAL_SEALS`; ``where`` names the record in messages)."""
    seals = FINAL_SEALS if seals is None else seals
    path = seal_path(catalogue, release_id)
    try:
        data = read_limited(path)  # (a regular file, its size checked before reading)
    except DatasetError as exc:
        raise FinalityError(
            path,
            f"release {release_id} is final (its seal is recorded in {where}), but its "
            f"seal file cannot be read ({exc.problem})",
        ) from exc
    digest = hashlib.sha256(data).hexdigest()
    if digest != seals[release_id]:
        raise FinalityError(
            path,
            f"sha256 {digest} is not the seal recorded for final release {release_id} in "
            f"{where} ({seals[release_id]}): the release's sealed files were "
            "changed. Refusing to load it; corrections make a new release.",
        )
    return json.loads(data)


def sealed_files(
    catalogue: _Catalogue,
    release_id: str,
    seals: Mapping[str, str] | None = None,
    where: str = _IN_MATPROPS,
) -> dict[str, str]:
    """The files a final release's seal lists (relative path -> sha256), after checking
    the seal itself against the record (default :data:`FINAL_SEALS`)."""
    return dict(read_seal(catalogue, release_id, seals, where)["files"])


def verify(
    catalogue: _Catalogue,
    release_id: str,
    status: str,
    seals: Mapping[str, str] | None = None,
    where: str = _IN_MATPROPS,
) -> bool:
    """Check a release against the recorded seals; return whether it is final.

    ``seals`` is the record (release id -> sha256 of its seal file; default
    :data:`FINAL_SEALS`, the shipped releases'), ``where`` names it in messages.
    Raises :class:`~matprops.errors.FinalityError` when the release file's ``status``
    disagrees with the record, or when a sealed file's recorded checksum differs from
    its seal (the loaders refuse files that differ from the checksum list, so together
    every sealed byte is checked when it is read).
    """
    release_file = catalogue.root / "releases" / f"{release_id}.toml"
    if not is_final(release_id, seals):
        if status == "final":
            how = (
                "this version of matprops records no seal"
                if where == _IN_MATPROPS
                else f"{where} records no seal"
            )
            raise FinalityError(
                release_file,
                f'says status = "final", but {how} for release {release_id}; a release '
                "becomes final only by being sealed (python -m matprops.outputs.reference "
                "freeze), and its seal must be recorded where its users read it",
            )
        return False
    if status != "final":
        raise FinalityError(
            release_file,
            f"says status = {status!r}, but release {release_id} is final (its seal is "
            f"recorded in {where}): a final release never returns to draft",
        )
    recorded = catalogue.checksums()
    for relative, digest in sealed_files(catalogue, release_id, seals, where).items():
        if recorded.get(relative) != digest:
            raise FinalityError(
                catalogue.root / relative,
                f"sealed by final release {release_id} with sha256 {digest}, but the "
                f"checksum list records {recorded.get(relative)}: the file was changed, "
                "replaced or removed. Refusing to load the release.",
            )
    return True


# --------------------------------------------------------------------------- own releases

_SEAL_LINE = re.compile(r"^([0-9a-f]{64})\s+(\S+)\s+(\S+)\s*$")


def seals_path() -> Path:
    """Where the seals of final own releases are recorded by default: ``$MATPROPS_SEALS``,
    else ``matprops/seals.txt`` in ``$XDG_CONFIG_HOME`` (default ``~/.config``)."""
    given = os.environ.get("MATPROPS_SEALS", "").strip()
    if given:
        return Path(os.path.abspath(Path(given).expanduser()))
    config = os.environ.get("XDG_CONFIG_HOME", "").strip() or str(Path.home() / ".config")
    return Path(os.path.abspath(Path(config).expanduser())) / "matprops" / "seals.txt"


class SealRecord:
    """The record of final own releases, kept outside the overlay folders: a text file
    of lines ``<sha256 of releases/<id>.seal.json>  <release id>  <catalogue name>``.

    Lines are only ever added (by ``freeze``). Keep the file where the users of the
    releases read it (a colleague's configuration folder, the simulation code's
    repository with ``MATPROPS_SEALS`` pointing to it), never inside the overlay.
    ``SealRecord(mapping)`` holds given seals instead of a file's (what a pickled
    material carries to its workers).
    """

    def __init__(self, source: Path | str | Mapping | None = None):
        if isinstance(source, Mapping):
            self.path = None
            self._entries = {
                (str(name), str(release)): str(digest) for (name, release), digest in source.items()
            }
            return
        self.path = seals_path() if source is None else Path(os.path.abspath(Path(source)))
        self._entries = self._read()

    def _read(self) -> dict[tuple[str, str], str]:
        entries: dict[tuple[str, str], str] = {}
        if self.path is None or not self.path.is_file():
            return entries
        for number, line in enumerate(self.path.read_text().splitlines(), 1):
            if not line.strip() or line.lstrip().startswith("#"):
                continue
            match = _SEAL_LINE.match(line.strip())
            if match is None:
                raise DatasetError(
                    self.path,
                    f"line {number} is not '<sha256>  <release id>  <catalogue name>'",
                )
            digest, release, name = match.groups()
            if entries.get((name, release), digest) != digest:
                raise FinalityError(
                    self.path,
                    f"line {number} records a second, different seal for release {release} "
                    f"of catalogue {name}: a final release has one seal",
                )
            entries[(name, release)] = digest
        return entries

    @property
    def where(self) -> str:
        return str(self.path) if self.path is not None else "the seals given to matprops"

    def for_catalogue(self, name: str) -> dict[str, str]:
        """Release id -> seal digest of one overlay catalogue's final releases."""
        return {release: d for (owner, release), d in self._entries.items() if owner == name}

    def entries(self) -> dict[tuple[str, str], str]:
        return dict(self._entries)

    def add(self, name: str, release: str, digest: str) -> Path | None:
        """Record a seal (append a line to the file; written atomically)."""
        known = self._entries.get((name, release))
        if known is not None and known != digest:
            raise FinalityError(
                self.where,
                f"already records seal {known} for release {release} of catalogue {name}",
            )
        self._entries[(name, release)] = digest
        if self.path is None:
            return None
        self.path.parent.mkdir(parents=True, exist_ok=True)
        text = (
            self.path.read_text()
            if self.path.is_file()
            else (
                "# matprops: seals of final own releases (add lines; never edit one)\n"
                "# <sha256 of releases/<id>.seal.json>  <release id>  <catalogue name>\n"
            )
        )
        if text and not text.endswith("\n"):
            text += "\n"
        tmp = temporary_for(self.path)  # (removed by an interrupted application)
        try:
            tmp.write_text(text + f"{digest}  {release}  {name}\n")
            os.replace(tmp, self.path)
        finally:
            tmp.unlink(missing_ok=True)
            forget(tmp)
        return self.path
