"""Overlay catalogues: a lab's own models and releases, layered over the shipped data.

A modelling group re-fits a band gap to its own photoluminescence data or a mobility
to its own Hall measurements, and then needs every simulation to use exactly that
set. An *overlay* is a folder with the layout of ``datasets/``::

    overlay.toml                   name and description of the catalogue (who keeps it)
    checksums.sha256               the sha256 of every file below
    models/<quantity>/<id>.toml    its own model files (the same schema; a source may be
                                   an own measurement, type = "measurement")
    measurements/<file>            the measured data its fits used (CSV, netCDF, JSON)
    releases/<id>.toml             own releases: base = "<release>", [models] it chooses
    releases/<id>.reference.json   their frozen reference evaluations
    releases/<id>.seal.json        the seal of a final own release
    archive/<id>/                  what a final own release sealed (models, defects, tables)
    tables/                        optional tables of its own models

An overlay adds models and releases; it never redefines a model id, release id or
table of a catalogue below it (an error names both files), and the shipped files are
never copied or edited. Every file is verified against its own folder's checksum
list, and a table or measurement name cannot leave its folder.

An own release names the release it builds on (``base``, shipped or own) and the
models it chooses; every other quantity keeps the base's choice, read as the base
reads it (a final base from its archive). Own release ids are lower-case words and
numbers (``ourlab-2027.1``, ``example-lab-1``), never the shipped ``YYYY.N``.

Finality works as for the shipped releases (:mod:`.finality`): freezing an own release
archives every model file of every quantity it serves (its own and the base's, as it
sees them), the defect catalogue and the tables its models read into
``archive/<id>/``, seals them, and records the seal's digest in a seals file outside
the overlay (:class:`~.finality.SealRecord`). A final own release then reads only its
archive: the shipped draft it was based on may move, the release does not.

:func:`catalogue_at` gives the one shared catalogue of a combination (shipped folder,
overlays, seals); it pickles as the folders and the digests of their checksum lists,
and a process that finds different data there refuses it (raised when the catalogue
is used, so a worker pool never hangs on it).
"""

from __future__ import annotations

import hashlib
import os
import threading
from collections.abc import Iterable, Mapping, Sequence
from pathlib import Path
from types import MappingProxyType
from typing import cast

from ..errors import (
    DatasetError,
    Error,
    UnknownModelError,
    UnknownQuantityError,
    UnknownReleaseError,
    Unusable,
)
from . import finality
from .finality import SealRecord
from .folders import (  # the folder's layout and its writers, re-exported here
    IDENTITY,
    MEASUREMENTS,
    OVERLAY_NAME,
    OWN_RELEASE_ID,
    _write_checksums_of,
    archive_own,
    check_unchanged,
    create,
    forget,
    named,
    overlay_files,
    seal_own,
    write_release,
)
from .records import Model, Release
from .schema import OVERLAY, RELEASE, validate
from .store import (
    CHECKSUM_FILE,
    RELEASE_ID,
    Catalogue,
    _parse_toml,
    parse_checksums,
)
from .store import catalogue_at as _shipped_at

__all__ = [
    "IDENTITY",
    "MEASUREMENTS",
    "OWN_RELEASE_ID",
    "Overlay",
    "OverlayView",
    "OwnReleaseView",
    "archive_own",
    "catalogue_at",
    "catalogues_from_environment",
    "check_unchanged",
    "create",
    "file_label",
    "file_of_label",
    "forget",
    "from_key",
    "key_of",
    "overlay_files",
    "seal_own",
    "write_release",
]


class Overlay(Catalogue):
    """One overlay folder, layered over the catalogue ``below`` it.

    Lookups (models, releases, tables) search this folder, then ``below``; this
    folder's own files are verified against its own checksum list. ``seals`` is the
    record of final own releases (default: the seals file, see
    :func:`~.finality.seals_path`).
    """

    def __init__(self, root: Path | str, below: Catalogue, seals: SealRecord | None = None):
        super().__init__(root)
        if not self.root.is_dir():
            raise DatasetError(
                self.root,
                "overlay catalogue folder does not exist (make one with "
                "matprops.create_catalogue(path, name=..., description=...))",
            )
        self.below = below
        # the views of releases (this folder's own, and those of catalogues below)
        self._release_views: dict[str, _View] = {}
        self._seal_record = seals if seals is not None else SealRecord()
        self.digest = ""
        for layer in _layers(below):
            if self.root.is_relative_to(layer.root) or layer.root.is_relative_to(self.root):
                raise DatasetError(
                    self.root,
                    f"an overlay catalogue may not lie inside, or hold, another catalogue "
                    f"({layer.root})",
                )
        self.checksums()  # pins the digest of the checksum list it reads
        identity = self.root / IDENTITY
        data = _parse_toml(identity, self.verified_bytes(identity))
        validate(identity, data, OVERLAY)
        if not OVERLAY_NAME.match(data["name"]):
            raise DatasetError(
                identity,
                f"field 'name' must be lower-case words joined by hyphens, got {data['name']!r}",
            )
        self.name: str = data["name"]
        self.description: str = data["description"]
        self.contact: str = data.get("contact", "")
        for layer in _layers(below):
            if isinstance(layer, Overlay) and layer.name == self.name:
                raise DatasetError(
                    identity, f"catalogue name {self.name!r} is also the name of {layer.root}"
                )
        self._check_unique()

    # -- identity, pickling
    def describe(self) -> dict:
        record = {"name": self.name, "description": self.description, "path": str(self.root)}
        if self.contact:
            record["contact"] = self.contact
        return record

    def __repr__(self) -> str:
        return f"<overlay catalogue {self.name!r} at {self.root} over {self.below!r}>"

    def __reduce__(self):
        # the folder, the digest of its checksum list and the seals it trusts: a worker
        # reads its own copy of the folder and refuses one that differs
        return _overlay_from, (key_of(self),)

    @property
    def base(self) -> Overlay:
        return self

    @property
    def seals(self) -> dict[str, str]:
        """Release id -> seal digest of this catalogue's final own releases."""
        return self._seal_record.for_catalogue(self.name)

    @property
    def seal_record(self) -> SealRecord:
        return self._seal_record

    # -- checksums
    def _read_checksums(self) -> dict[str, str]:
        if self._checksums is None:
            path = self.root / CHECKSUM_FILE
            if not path.is_file():
                raise DatasetError(path, "checksum list is missing; refusing to load data")
            raw = path.read_bytes()  # read once: the digest is of the list it parses
            self._checksums = parse_checksums(path, raw)
            self.digest = hashlib.sha256(raw).hexdigest()
        return self._checksums

    def owns(self, path: Path) -> bool:
        """Whether a file lies in this folder (not in a catalogue below)."""
        return Path(path).is_relative_to(self.root)

    def verified_bytes(self, path: Path) -> bytes:
        if self.owns(path):
            return super().verified_bytes(path)
        return self.below.verified_bytes(path)

    def recorded(self, path: Path) -> str:
        return super().recorded(path) if self.owns(path) else self.below.recorded(path)

    def layer_of(self, path: Path):
        """The catalogue (this overlay or one below) whose folder holds ``path``."""
        for layer in _layers(self):
            if Path(path).is_relative_to(layer.root):
                return layer
        return None

    def data_files(self) -> list[str]:
        return overlay_files(self.root)

    def write_checksums(self) -> Path:
        with self._lock:
            target = _write_checksums_of(self.root)
            self._checksums = None
            self.checksums()  # the new digest
        return target

    # -- models
    def own_quantities(self) -> list[str]:
        folder = self.root / "models"
        return sorted(p.name for p in folder.iterdir() if p.is_dir()) if folder.is_dir() else []

    def own_model_ids(self, quantity: str) -> list[str]:
        folder = self.root / "models" / quantity
        return sorted(p.stem for p in folder.glob("*.toml")) if folder.is_dir() else []

    def quantities(self) -> list[str]:
        return sorted(set(self.own_quantities()) | set(self.below.quantities()))

    def model_ids(self, quantity: str) -> list[str]:
        below = self.below.model_ids(quantity) if quantity in self.below.quantities() else []
        own = self.own_model_ids(quantity)
        if not own and quantity not in self.below.quantities():
            raise UnknownQuantityError(quantity, self.quantities())
        return sorted(set(own) | set(below))

    def model(self, quantity: str, model_id: str) -> Model:
        if model_id in self.own_model_ids(quantity):
            return self.model_at(self.root / "models" / quantity / f"{model_id}.toml", self)
        known = self.model_ids(quantity)
        if model_id not in known:
            raise UnknownModelError(model_id, known, f"for quantity {quantity!r}")
        return self.below.model(quantity, model_id)

    def model_at(self, path: Path, owner) -> Model:
        if not self.owns(path):
            return self.below.model_at(path, owner)
        model = super().model_at(path, owner)
        self._check_measurement(model)
        return model

    def _check_measurement(self, model: Model) -> None:
        """A model fitted to own measurements cites a data file of this catalogue with
        the digest its checksum list records."""
        source = model.source
        if source.type != "measurement" or not source.data:
            return
        named(self.root / MEASUREMENTS, source.data, "measurement")
        relative = f"{MEASUREMENTS}/{source.data}"
        recorded = self.checksums().get(relative)
        if recorded is None:
            raise DatasetError(
                model.path,
                f"source.data {source.data!r}: no file {relative} is listed in "
                f"{self.root / CHECKSUM_FILE} (keep the data a model was fitted to beside it)",
            )
        if recorded != source.data_sha256:
            raise DatasetError(
                model.path,
                f"source.data_sha256 {source.data_sha256} is not the sha256 of {relative} "
                f"({recorded}): the model cites other data than the catalogue holds",
            )

    def measurement_path(self, name: str) -> Path:
        """A measurement file of this catalogue (the name cannot leave the folder)."""
        return named(self.root / MEASUREMENTS, name, "measurement")

    # -- tables and other data
    def table_path(self, name: str) -> Path:
        own = named(self.root / "tables", name, "table")
        return own if own.is_file() else self.below.table_path(name)

    def data_folder(self, name: str) -> Path:
        # the defect catalogue is the shipped one (an overlay holds models, releases,
        # tables and measurements); tables are found by name (table_path)
        return self.below.data_folder(name)

    def scenario_names(self) -> list[str]:
        return self.below.scenario_names()

    def scenario(self, name: str) -> dict:
        return self.below.scenario(name)

    # -- releases
    def own_release_ids(self) -> list[str]:
        folder = self.root / "releases"
        return sorted(p.stem for p in folder.glob("*.toml")) if folder.is_dir() else []

    def release_ids(self) -> list[str]:
        return self.below.release_ids() + self.own_release_ids()

    def newest_release_id(self) -> str:
        """The newest shipped release (own releases are asked for by name)."""
        return self.below.newest_release_id()

    def owner_of(self, release_id: str) -> Overlay | None:
        """The overlay (this one or one below) whose folder holds an own release."""
        for layer in _layers(self):
            if isinstance(layer, Overlay) and release_id in layer.own_release_ids():
                return layer
        return None

    def release(self, release_id: str) -> Release:
        if release_id not in self.own_release_ids():
            if release_id in self.below.release_ids():
                return self.below.release(release_id)
            raise UnknownReleaseError(release_id, self.release_ids())
        return self._own_release(release_id, ())

    def _own_release(self, release_id: str, chain: tuple[str, ...]) -> Release:
        path = self.root / "releases" / f"{release_id}.toml"
        data = _parse_toml(path, self.verified_bytes(path))
        validate(path, data, RELEASE)
        if data["release"] != release_id:
            raise DatasetError(
                path, f"field 'release' is {data['release']!r}, the file name says {release_id!r}"
            )
        base = data.get("base")
        if base is None:
            raise DatasetError(
                path,
                "missing field 'base': an own release names the release it builds on "
                '(base = "2026.2")',
            )
        if base == release_id or base in chain:
            raise DatasetError(
                path, f"field 'base': {' -> '.join((*chain, release_id, base))} runs in a circle"
            )
        chosen = dict(data["models"])
        final = finality.verify(
            self, release_id, data["status"], self.seals, self._seal_record.where
        )
        if final:  # the whole choice as sealed: the base's own choice may have moved since
            seal = finality.read_seal(self, release_id, self.seals, self._seal_record.where)
            models = dict(seal["models"])
            defaults = dict(seal.get("defaults", {}))
        else:
            if base in self.own_release_ids():
                below = self._own_release(base, (*chain, release_id))
            elif base in self.below.release_ids():
                below = self.below.release(base)
            else:
                raise UnknownReleaseError(
                    base, self.release_ids(), f"(the base of own release {release_id})"
                )
            models = {**below.models, **chosen}
            defaults = {**below.defaults, **data.get("defaults", {})}
        return Release(
            release_id,
            data["status"],
            str(data["date"]),
            data["notes"],
            MappingProxyType(models),
            path,
            self,
            MappingProxyType(defaults),
            base=base,
            chosen=MappingProxyType(chosen),
        )

    def for_release(self, release: Release):
        """The catalogue as a release sees it: a final own release reads its archive;
        a draft own release this folder's models over its base as the base sees them;
        a release of a catalogue below, this folder's models over that release's view
        (so ``models=`` may choose one of this folder's models)."""
        with self._lock:
            known = self._release_views.get(release.id)
        if known is not None:
            return known
        view: _View
        if self.owns(release.path):
            if release.final and (self.root / "archive" / release.id).is_dir():
                view = OwnReleaseView(self, release)
            else:
                if release.base is None:  # (the reader refuses one without)
                    raise DatasetError(release.path, "an own release names its base")
                base = self.release(release.base)
                lower = self.for_release(base) if self.owns(base.path) else None
                if lower is None:
                    lower = self.below.for_release(base)
                view = OverlayView(self, release, lower)
        else:
            view = OverlayView(self, release, self.below.for_release(release))
        with self._lock:
            return self._release_views.setdefault(release.id, view)

    # -- integrity
    def _check_unique(self) -> None:
        """An overlay adds; it never redefines what a catalogue below holds."""
        below_quantities = set(self.below.quantities())
        for quantity in self.own_quantities():
            if quantity not in below_quantities:
                raise DatasetError(
                    self.root / "models" / quantity,
                    f"no quantity {quantity!r} in the catalogues below (an overlay adds "
                    "models of the quantities matprops serves: "
                    f"{', '.join(sorted(below_quantities))})",
                )
            below = set(self.below.model_ids(quantity))
            for model_id in self.own_model_ids(quantity):
                if model_id in below:
                    raise DatasetError(
                        self.root / "models" / quantity / f"{model_id}.toml",
                        f"redefines model {quantity}/{model_id} of "
                        f"{_defining_file(self.below, quantity, model_id)}: an overlay "
                        "catalogue adds models, it never redefines one (give yours an id "
                        "of its own)",
                    )
        below_releases = set(self.below.release_ids())
        for release_id in self.own_release_ids():
            path = self.root / "releases" / f"{release_id}.toml"
            if RELEASE_ID.match(release_id) or not OWN_RELEASE_ID.match(release_id):
                raise DatasetError(
                    path,
                    f"release id {release_id!r}: an own release id is lower-case words and "
                    "numbers joined by hyphens or dots, starting with a letter "
                    "('ourlab-2027.1'); YYYY.N belongs to the shipped releases",
                )
            if release_id in below_releases:
                raise DatasetError(
                    path,
                    f"redefines release {release_id} of "
                    f"{_release_file(self.below, release_id)}: an overlay catalogue adds "
                    "releases, it never redefines one",
                )
        tables = self.root / "tables"
        if tables.is_dir():
            for path in sorted(tables.glob("*.nc")):
                try:
                    other = self.below.table_path(path.name)
                except DatasetError:
                    continue
                raise DatasetError(
                    path, f"redefines table {other}: an overlay catalogue adds tables"
                )


class _View:
    """What the views below share: the overlay's files, pickling by release id."""

    def __init__(self, overlay: Overlay, release: Release):
        self.overlay = overlay
        self.release_id = release.id

    def __getattr__(self, name):
        return getattr(self.overlay, name)

    @property
    def base(self) -> Overlay:
        return self.overlay

    @property
    def root(self) -> Path:
        return self.overlay.root

    def __reduce__(self):
        return _overlay_view, (self.overlay, self.release_id)

    def __copy__(self):
        return self

    def __deepcopy__(self, memo):
        return self

    # the catalogue's readers, through the view's own table_path and verified_bytes
    def table(self, name: str):
        return Catalogue.table(cast(Catalogue, self), name)

    def table_arrays(self, name: str):
        return Catalogue.table_arrays(cast(Catalogue, self), name)

    def for_release(self, release: Release):
        return self.overlay.for_release(release)

    def release(self, release_id: str) -> Release:
        return self.overlay.release(release_id)


class OverlayView(_View):
    """An overlay's models over the view of a release (a draft own release over its
    base, or a release of a catalogue below).

    A model the lower view sealed (a final base's archive) is read as it sealed it;
    otherwise the overlay's own file, else the lower view's.
    """

    def __init__(self, overlay: Overlay, release: Release, lower):
        super().__init__(overlay, release)
        self.lower = lower

    def __repr__(self) -> str:
        return (
            f"<catalogue {self.overlay.name!r} over {self.lower!r} as release "
            f"{self.release_id} sees it>"
        )

    def quantities(self) -> list[str]:
        return sorted(set(self.overlay.own_quantities()) | set(self.lower.quantities()))

    def model_ids(self, quantity: str) -> list[str]:
        lower = self.lower.model_ids(quantity) if quantity in self.lower.quantities() else []
        own = self.overlay.own_model_ids(quantity)
        if not own and quantity not in self.lower.quantities():
            raise UnknownQuantityError(quantity, self.quantities())
        return sorted(set(own) | set(lower))

    def archived_model_ids(self, quantity: str) -> list[str]:
        ids = getattr(self.lower, "archived_model_ids", None)
        return ids(quantity) if ids is not None else []

    def model(self, quantity: str, model_id: str) -> Model:
        if model_id in self.archived_model_ids(quantity):
            return self.lower.model(quantity, model_id)
        if model_id in self.overlay.own_model_ids(quantity):
            return self.overlay.model(quantity, model_id)
        known = self.model_ids(quantity)
        if model_id not in known:
            raise UnknownModelError(model_id, known, f"for quantity {quantity!r}")
        return self.lower.model(quantity, model_id)

    def data_folder(self, name: str) -> Path:
        return self.lower.data_folder(name)

    def table_path(self, name: str) -> Path:
        own = named(self.overlay.root / "tables", name, "table")
        return own if own.is_file() else self.lower.table_path(name)


class OwnReleaseView(_View):
    """A final own release: every model, defect and table file it sealed comes from
    ``archive/<release>/`` in its overlay; models added later come from the catalogues
    (their provenance says they are not part of the release)."""

    def __init__(self, overlay: Overlay, release: Release):
        super().__init__(overlay, release)
        self.archive = overlay.root / "archive" / release.id

    def __repr__(self) -> str:
        return f"<catalogue {self.overlay.name!r} as final release {self.release_id} sees it>"

    def archived_model_ids(self, quantity: str) -> list[str]:
        return sorted(p.stem for p in (self.archive / "models" / quantity).glob("*.toml"))

    def quantities(self) -> list[str]:
        folder = self.archive / "models"
        archived = [p.name for p in folder.iterdir() if p.is_dir()] if folder.is_dir() else []
        return sorted(set(archived) | set(self.overlay.quantities()))

    def model_ids(self, quantity: str) -> list[str]:
        later = self.overlay.model_ids(quantity) if quantity in self.overlay.quantities() else []
        archived = self.archived_model_ids(quantity)
        if not archived and not later:
            raise UnknownQuantityError(quantity, self.quantities())
        return sorted(set(archived) | set(later))

    def model(self, quantity: str, model_id: str) -> Model:
        path = self.archive / "models" / quantity / f"{model_id}.toml"
        if path.is_file():
            return self.overlay.model_at(path, self)
        return self.overlay.model(quantity, model_id)

    def data_folder(self, name: str) -> Path:
        archived = self.archive / name
        return archived if archived.is_dir() else self.overlay.data_folder(name)

    def table_path(self, name: str) -> Path:
        archived = named(self.archive / "tables", name, "table")
        return archived if archived.is_file() else self.overlay.table_path(name)


def _overlay_view(overlay: Overlay, release_id: str):
    if isinstance(overlay, Unusable):
        return Unusable(overlay.error, OverlayView)
    try:
        return overlay.for_release(overlay.release(release_id))
    except Error as exc:  # (never raise while unpickling: see errors.Unusable)
        return Unusable(exc, OverlayView)


def _layers(catalogue) -> Iterable[Catalogue]:
    """A catalogue and every one below it, top first."""
    while catalogue is not None:
        yield catalogue
        catalogue = getattr(catalogue, "below", None)


def _defining_file(catalogue, quantity: str, model_id: str) -> Path:
    for layer in _layers(catalogue):
        if isinstance(layer, Overlay):
            if model_id in layer.own_model_ids(quantity):
                return layer.root / "models" / quantity / f"{model_id}.toml"
        else:
            return layer.root / "models" / quantity / f"{model_id}.toml"
    raise AssertionError("unreachable")  # pragma: no cover


def _release_file(catalogue, release_id: str) -> Path:
    for layer in _layers(catalogue):
        if not isinstance(layer, Overlay) or release_id in layer.own_release_ids():
            return layer.root / "releases" / f"{release_id}.toml"
    raise AssertionError("unreachable")  # pragma: no cover


# --------------------------------------------------------------------------- sharing

_LOCK = threading.RLock()
_OVERLAYS: dict[tuple, Overlay] = {}
_RECORDS: dict[Path, SealRecord] = {}


def _record(seals) -> SealRecord:
    """The shared record of a seals file (default: the user's), or a given one."""
    if isinstance(seals, SealRecord):
        return seals
    if isinstance(seals, Mapping):
        return SealRecord(seals)
    path = finality.seals_path() if seals is None else Path(os.path.abspath(Path(seals)))
    with _LOCK:
        if path not in _RECORDS:
            _RECORDS[path] = SealRecord(path)
        return _RECORDS[path]


def _record_key(record: SealRecord):
    if record.path is not None:
        return ("file", record.path)
    return ("given", frozenset(record.entries().items()))


def _overlay(root: Path, below: Catalogue, record: SealRecord) -> Overlay:
    key = (Path(os.path.abspath(root)), id(below), _record_key(record))
    with _LOCK:
        overlay = _OVERLAYS.get(key)
        if overlay is None or overlay.below is not below:
            overlay = Overlay(root, below, record)
            _OVERLAYS[key] = overlay
        return overlay


def _forget_all(root: Path | str) -> None:
    """Drop the shared catalogues of an overlay folder, as in a fresh process (after the
    folder was changed by hand: tests, or a tool that rewrote it)."""
    root = Path(os.path.abspath(Path(root)))
    with _LOCK:
        for key in [k for k in _OVERLAYS if k[0] == root]:
            del _OVERLAYS[key]


def catalogue_at(
    root: Path | str | None = None,
    overlays: Sequence[Path | str] = (),
    seals: Path | str | Mapping | SealRecord | None = None,
) -> Catalogue:
    """The shared catalogue of a shipped datasets folder (``None``: the installed one)
    with overlay catalogues over it.

    ``overlays`` are searched in the order given, then the shipped data: each may build
    on (name the releases of) those listed after it. ``seals`` is where final own
    releases are recorded: a seals file (default ``$MATPROPS_SEALS`` or the user's
    configuration folder) or a mapping ``{(catalogue name, release id): digest}``.
    Without overlays this is :func:`matprops.catalogue.store.catalogue_at`.
    """
    catalogue = _shipped_at(root)
    if isinstance(overlays, (str, os.PathLike)):
        overlays = [overlays]
    if not overlays:
        return catalogue
    record = _record(seals)
    for path in reversed([Path(p).expanduser() for p in overlays]):
        catalogue = _overlay(path, catalogue, record)
    return catalogue


def catalogues_from_environment() -> list[str]:
    """The overlay folders named by ``$MATPROPS_CATALOGUES`` (separated by
    ``os.pathsep``; relative ones resolved against the working folder now)."""
    value = os.environ.get("MATPROPS_CATALOGUES", "")
    return [os.path.abspath(os.path.expanduser(p)) for p in value.split(os.pathsep) if p.strip()]


def key_of(catalogue) -> tuple | None:
    """A catalogue as plain data, the same in every process that holds the same data:
    ``None`` for the installed one, ``("datasets", folder)``, or for an overlay
    ``("overlay", folder, digest of its checksum list, name, its seals, key below)``.
    :func:`from_key` rebuilds it (and refuses an overlay whose files differ)."""
    from .store import default_catalogue

    if isinstance(catalogue, Overlay):
        seals = tuple(sorted(catalogue.seals.items()))
        return (
            "overlay",
            str(catalogue.root),
            catalogue.digest,
            catalogue.name,
            seals,
            key_of(catalogue.below),
        )
    if catalogue is default_catalogue():
        return None
    return ("datasets", str(catalogue.root))


def from_key(key: tuple | None) -> Catalogue:
    """The shared catalogue a :func:`key_of` key describes, in this process."""
    if key is None or key[0] == "datasets":
        return _shipped_at(None if key is None else key[1])
    _, root, digest, name, seals, below = key
    return _rebuild_overlay(root, digest, from_key(below), {(name, r): d for r, d in seals})


def _overlay_from(key) -> Overlay | Unusable:
    try:  # (an overlay's key: the rebuilt catalogue is an overlay)
        _, root, digest, name, seals, below = key
        return _rebuild_overlay(root, digest, from_key(below), {(name, r): d for r, d in seals})
    except Error as exc:  # (never raise while unpickling: see errors.Unusable)
        return Unusable(exc, Overlay)


def file_label(catalogue, path: Path) -> str:
    """A data file as the digests of a pickled material name it: its path relative to
    the shipped folder, or ``<catalogue name>:<path>`` in an overlay."""
    layer = catalogue.layer_of(path) if isinstance(catalogue, Overlay) else catalogue
    if layer is None:
        return str(path)
    relative = Path(path).relative_to(layer.root).as_posix()
    return f"{layer.name}:{relative}" if isinstance(layer, Overlay) else relative


def file_of_label(catalogue, label: str) -> Path:
    """The file a :func:`file_label` names, in this process."""
    name, sep, relative = label.partition(":")
    for layer in _layers(catalogue):
        if sep and isinstance(layer, Overlay) and layer.name == name:
            return layer.root / relative
        if not sep and not isinstance(layer, Overlay):
            return layer.root / label
    return Path(label)


def _rebuild_overlay(root, digest, below, seals) -> Overlay:
    root = Path(os.path.abspath(root))
    given = {release: d for (_, release), d in dict(seals).items()}
    with _LOCK:  # the same process (or one that has it already): the shared one
        for (path, _, _), known in _OVERLAYS.items():
            if path == root and known.below is below and known.seals == given:
                overlay = known
                break
        else:
            overlay = _overlay(root, below, _record(dict(seals)))
    if overlay.digest != digest:
        raise DatasetError(
            overlay.root / CHECKSUM_FILE,
            f"has sha256 {overlay.digest} in this process but {digest} where the catalogue "
            "was pickled: the two processes read different overlay data (give every "
            "worker the same copy of the folder)",
        )
    return overlay


catalog_at = catalogue_at  # former spelling, still served
