"""The model catalogue: reads ``datasets/``, validates it, binds kernels to numbers.

A model file (``datasets/models/<quantity>/<model-id>.toml``) holds a published
model's coefficients with units, its source, its validity ranges and how its
numbers were obtained. This module checks each file against the checksum recorded
in ``datasets/checksums.sha256`` and against the units its kernel declares, converts
the coefficients to the kernel's internal units, and returns a :class:`Model`: a
plain-array callable with its provenance attached.

Three kinds of model share that shape:

``closed-form``
    a kernel plus scalar or vector coefficients;
``table``
    a kernel that interpolates a netCDF table (``datasets/tables/``), whose arrays
    are bound like coefficients (loaded with xarray on first use);
``composed``
    a kernel that combines other quantities' models (``requires``), bound when a
    material chooses those models.

Releases (``datasets/releases/<id>.toml``) name one model per quantity.

The records themselves (:class:`Source`, :class:`Model`, :class:`Release`, ...) live
in :mod:`matprops.catalogue.records`, the checks and binding of a model file in
:mod:`matprops.catalogue.modelfile`; this module finds the files, verifies their checksums,
loads them once (thread-safe) and caches what it built.
"""

from __future__ import annotations

import contextlib
import hashlib
import os
import re
import threading
import tomllib
import weakref
from pathlib import Path
from types import MappingProxyType

import numpy as np

from ..errors import (
    ChecksumError,
    DatasetError,
    Error,
    UnknownModelError,
    UnknownNameError,
    UnknownQuantityError,
    UnknownReleaseError,
    Unusable,
)
from . import finality
from .fields import read_only
from .files import confined, forget, read_limited, temporary_for
from .modelfile import _build_model
from .records import (
    CatalogueLike,
    Coefficient,
    Model,
    Range,
    Release,
    Source,
)
from .regions import Region
from .schema import (
    MODEL,
    RELEASE,
    validate,
)

__all__ = [
    "Catalogue",
    "Coefficient",
    "Model",
    "Range",
    "Region",
    "Release",
    "Source",
    "catalogue_at",
    "datasets_root",
    "default_catalogue",
]

CHECKSUM_FILE = "checksums.sha256"
# folder -> suffixes of the data files in it, each covered by the checksum list
DATA_FILES = {
    "archive": (".toml", ".nc"),
    "models": (".toml",),
    "tables": (".nc",),
    "releases": (".toml", ".json"),
    "scenarios": (".toml",),
    "defects": (".toml",),
}
MODEL_ID = re.compile(r"^[a-z][a-z0-9]*(-[a-z0-9]+)*$")
TABLE_NAME = re.compile(r"^[A-Za-z0-9][A-Za-z0-9_.-]*\.nc$")
_NOT_FINITE = (
    "variable {!r} holds NaN, infinite or missing (masked) values: a stored table must "
    "hold numbers everywhere (a model outside its data says so itself); refusing to use it"
)
RELEASE_ID = re.compile(r"^\d{4}\.\d+$")

# The netCDF/HDF5 library is not thread-safe: two threads opening files at once can
# crash the process. Every read of a table goes through this one (process-wide) lock;
# what is read is then kept in read-only arrays and never changes.
_TABLE_LOCK = threading.RLock()
# every catalogue, so that a forked child can give each a fresh lock (see _after_fork)
_CATALOGUES: weakref.WeakSet = weakref.WeakSet()


def _before_fork() -> None:
    # no thread is inside the netCDF/HDF5 library while the process forks: the child
    # would inherit that library half-way through a read (and the lock held forever)
    _TABLE_LOCK.acquire()


def _after_fork_in_parent() -> None:
    _TABLE_LOCK.release()


def _after_fork_in_child() -> None:
    """A forked child has only the forking thread: locks another thread held at the
    fork would never be released there, so every lock of the catalogue is made anew
    (what those threads were loading is loaded again, by the child, when needed)."""
    global _TABLE_LOCK, _DEFAULT_LOCK
    _TABLE_LOCK = threading.RLock()
    _DEFAULT_LOCK = threading.Lock()
    for catalogue in list(_CATALOGUES):
        catalogue._lock = threading.RLock()


os.register_at_fork(
    before=_before_fork,
    after_in_parent=_after_fork_in_parent,
    after_in_child=_after_fork_in_child,
)


def datasets_root() -> Path:
    """Where the data live: $MATPROPS_DATASETS, the installed copy, or the checkout.

    A relative MATPROPS_DATASETS is resolved against the working folder of this
    call (the default catalogue calls it once, so a later ``chdir`` changes
    nothing); a value that is not a folder is a DatasetError saying so. An empty
    value counts as unset.
    """
    override = os.environ.get("MATPROPS_DATASETS", "")
    if override.strip():
        given = Path(override).expanduser()
        root = Path(os.path.abspath(given))
        if not root.is_dir():
            where = (
                ""
                if given.is_absolute()
                else f", a relative path resolved against the working folder {os.getcwd()}"
            )
            raise DatasetError(
                root,
                "datasets folder does not exist; set MATPROPS_DATASETS "
                "to a matprops datasets folder (models/, tables/, releases/, "
                "checksums.sha256), or unset it to use the installed data "
                f"(MATPROPS_DATASETS={override!r}{where})",
            )
        return root
    package = Path(__file__).resolve().parent.parent
    installed = package / "datasets"  # where the wheel puts them
    if installed.is_dir():
        return installed
    return package.parent / "datasets"  # a source checkout


def sha256_of(path: Path) -> str:
    with open(path, "rb") as handle:  # (streamed: a large file is not held in memory)
        return hashlib.file_digest(handle, "sha256").hexdigest()


# --------------------------------------------------------------------------- loading


def _open_table(name: str, data: bytes):
    """An in-memory netCDF file (already verified) as a loaded xarray.Dataset."""
    import netCDF4
    import xarray as xr

    with _TABLE_LOCK:
        handle = netCDF4.Dataset(name, mode="r", memory=data)
        try:
            with xr.open_dataset(xr.backends.NetCDF4DataStore(handle)) as opened:
                return opened.load()  # closing the store closes the handle
        finally:
            if handle.isopen():
                handle.close()


class Catalogue:
    """The models, tables and releases found under one ``datasets/`` folder."""

    def __init__(self, root: Path | str | None = None):
        # absolute once, so a later change of working folder changes nothing
        self.root = Path(os.path.abspath(root)) if root is not None else datasets_root()
        self._models: dict[Path, Model] = {}  # by file: a release's archive has its own
        self._views: dict[str, ReleaseCatalogue] = {}
        self._checksums: dict[str, str] | None = None
        self._lock = threading.RLock()  # models are built once, even from many threads
        _CATALOGUES.add(self)

    def __reduce__(self):
        # a catalogue pickles as its root; the default one as "the receiver's default",
        # so a worker on another machine reads its own installed copy
        default = bool(_DEFAULT) and self is _DEFAULT[0]
        return _unpickle_catalogue, (None if default else str(self.root),)

    def __copy__(self):
        return self  # a cache of immutable records: one per root is enough

    def __deepcopy__(self, memo):
        return self

    @property
    def base(self) -> Catalogue:
        """The catalogue itself (a release's view answers with the one it views)."""
        return self

    def data_folder(self, name: str) -> Path:
        """Where this catalogue reads one kind of data (``"defects"``, ``"tables"``)."""
        return self.root / name

    def recorded(self, path: Path) -> str:
        """The sha256 the checksum list of the folder holding ``path`` records for it
        ("" if none: not listed, or outside every folder this catalogue reads)."""
        try:
            relative = Path(path).relative_to(self.root).as_posix()
        except ValueError:
            return ""
        return self.checksums().get(relative, "")

    def describe(self) -> dict:
        """Which catalogue this is (for provenance): the data shipped with matprops."""
        from .._version import __version__

        return {
            "name": "matprops",
            "description": f"the data shipped with matprops {__version__}",
            "path": str(self.root),
        }

    # -- listing
    def _folder(self, name: str) -> Path:
        folder = self.root / name
        if not folder.is_dir():
            origin = (
                " (set by MATPROPS_DATASETS)"
                if os.environ.get("MATPROPS_DATASETS", "").strip()
                else ""
            )
            raise DatasetError(
                folder, f"folder is missing: {self.root}{origin} is not a matprops datasets folder"
            )
        return folder

    def quantities(self) -> list[str]:
        return sorted(p.name for p in self._folder("models").iterdir() if p.is_dir())

    def model_ids(self, quantity: str) -> list[str]:
        if quantity not in self.quantities():
            raise UnknownQuantityError(quantity, self.quantities())
        return sorted(p.stem for p in (self.root / "models" / quantity).glob("*.toml"))

    def release_ids(self) -> list[str]:
        ids = [p.stem for p in self._folder("releases").glob("*.toml") if RELEASE_ID.match(p.stem)]
        return sorted(ids, key=lambda r: tuple(int(x) for x in r.split(".")))

    def newest_release_id(self) -> str:
        """The newest release's id; a DatasetError when there is none."""
        ids = self.release_ids()
        if not ids:
            raise DatasetError(
                self.root / "releases",
                "no release file (<YYYY.N>.toml) in "
                "this folder; a release names the model of each quantity",
            )
        return ids[-1]

    # -- checksums
    def checksums(self) -> dict[str, str]:
        with self._lock:
            return self._read_checksums()

    def _read_checksums(self) -> dict[str, str]:
        if self._checksums is None:
            path = self.root / CHECKSUM_FILE
            if not path.is_file():
                raise DatasetError(path, "checksum list is missing; refusing to load data")
            self._checksums = parse_checksums(path, read_limited(path))
        return self._checksums

    def verified_bytes(self, path: Path) -> bytes:
        """Read a dataset file, refusing it if its sha256 differs from the record.

        The path must lie inside the datasets folder (after ``..`` and symbolic links),
        be a regular file and no larger than its kind's limit
        (:data:`matprops.catalogue.files.LIMITS`), checked before reading."""
        confined(path, self.root)
        try:
            relative = path.relative_to(self.root).as_posix()
        except ValueError:
            relative = path.resolve().relative_to(self.root.resolve()).as_posix()
        recorded = self.checksums().get(relative)
        if recorded is None:
            raise ChecksumError(
                path, f"no checksum recorded in {CHECKSUM_FILE}; refusing to load an unlisted file"
            )
        data = read_limited(path)
        actual = hashlib.sha256(data).hexdigest()
        if actual != recorded:
            raise ChecksumError(
                path,
                f"sha256 {actual} does not match the recorded "
                f"{recorded}; the file was changed or corrupted. "
                "Refusing to load it.",
            )
        return data

    def data_files(self) -> list[str]:
        """Every data file under the root (relative paths): the files the checksum
        list must cover."""
        found = []
        for sub, suffixes in DATA_FILES.items():
            found += [
                path.relative_to(self.root).as_posix()
                for path in sorted((self.root / sub).rglob("*"))
                if path.is_file() and path.suffix in suffixes
            ]
        return found

    def write_checksums(self) -> Path:
        """Record the sha256 of every data file (see :meth:`data_files`)."""
        lines = [
            "# sha256 of every dataset file; loaders refuse files that differ.",
            (
                "# Regenerate after a deliberate change: python -m matprops.catalogue "
                "--update-checksums"
            ),
        ]
        for relative in self.data_files():
            lines.append(f"{sha256_of(self.root / relative)}  {relative}")
        target = self.root / CHECKSUM_FILE
        _atomic_write_text(target, "\n".join(lines) + "\n")
        self._checksums = None
        return target

    # -- models
    def model(self, quantity: str, model_id: str) -> Model:
        path = self.root / "models" / quantity / f"{model_id}.toml"
        model = self._models.get(path)
        if model is not None:
            return model
        known = self.model_ids(quantity)
        if model_id not in known:
            raise UnknownModelError(model_id, known, f"for quantity {quantity!r}")
        return self.model_at(path, self)

    def model_at(self, path: Path, owner: CatalogueLike) -> Model:
        """The model of one file (built once); ``owner`` is the catalogue the record
        answers to (this one, or the view of a release whose archive holds the file)."""
        model = self._models.get(path)
        if model is not None:
            return model
        with self._lock:
            if path not in self._models:
                raw = self.verified_bytes(path)
                data = _parse_toml(path, raw)
                validate(path, data, MODEL)
                self._models[path] = _build_model(path, data, owner)
            return self._models[path]

    def for_release(self, release: Release) -> Catalogue | ReleaseCatalogue:
        """The catalogue as a release sees it: a final release reads the model and
        defect files it sealed from its archive (``archive/<id>/``), so the main tree
        may move on; a draft reads the main tree."""
        if not release.final or not (self.root / "archive" / release.id).is_dir():
            return self
        with self._lock:
            if release.id not in self._views:
                self._views[release.id] = ReleaseCatalogue(self, release.id)
            return self._views[release.id]

    # -- releases
    def release(self, release_id: str) -> Release:
        known = self.release_ids()
        if release_id not in known:
            raise UnknownReleaseError(release_id, known)
        path = self.root / "releases" / f"{release_id}.toml"
        data = _parse_toml(path, self.verified_bytes(path))
        validate(path, data, RELEASE)
        if data["release"] != release_id:
            raise DatasetError(
                path, f"field 'release' is {data['release']!r}, the file name says {release_id!r}"
            )
        if "base" in data:
            raise DatasetError(
                path,
                "field 'base' belongs to the own releases of an overlay catalogue; a "
                "release of this folder names every model itself",
            )
        finality.verify(self, release_id, data["status"])
        return Release(
            release_id,
            data["status"],
            str(data["date"]),
            data["notes"],
            MappingProxyType(dict(data["models"])),
            path,
            self,
            MappingProxyType(dict(data.get("defaults", {}))),
        )

    def table_path(self, name: str) -> Path:
        folder = self.data_folder("tables")
        if not TABLE_NAME.match(str(name)):
            raise DatasetError(
                folder / str(name),
                "a table is named by its file name in the tables folder (letters, digits, "
                "'-', '_', '.', ending in .nc; no folders): refusing to read it",
            )
        path = folder / name
        confined(path, self.root)
        if not path.is_file():
            raise DatasetError(path, "table file is missing")
        return path

    def table(self, name: str):
        """A verified netCDF table from ``datasets/tables/`` as an xarray.Dataset
        (read from the checked bytes themselves: no window between check and read)."""
        path = self.table_path(name)
        data = _open_table(path.name, self.verified_bytes(path))
        for key, variable in data.variables.items():
            if variable.dtype.kind == "f" and not np.isfinite(variable.values).all():
                raise DatasetError(path, _NOT_FINITE.format(key))
        return data

    # -- scenarios (invented demonstration data)
    def scenario_names(self) -> list[str]:
        return sorted(p.stem for p in (self.root / "scenarios").glob("*.toml"))

    def scenario(self, name: str):
        """A verified, checked scenario from ``datasets/scenarios/``: a wafer spec
        (:class:`matprops.catalogue.spec.Spec`) of invented demonstration data."""
        from .spec import SpecError, parse_spec

        known = self.scenario_names()
        if name not in known:
            raise UnknownNameError(name, known, "among the scenarios")
        path = self.root / "scenarios" / f"{name}.toml"
        data = _parse_toml(path, self.verified_bytes(path))
        try:
            spec = parse_spec(data, path.name)
        except SpecError as exc:
            raise DatasetError(
                path,
                f"field '{exc.where}' {exc.requirement}"
                + ("" if exc.received is None else f", got {exc.received!r}"),
            ) from exc
        if not spec.invented:
            raise DatasetError(path, "a bundled scenario must say invented = true")
        return spec

    def table_arrays(self, name: str) -> dict[str, tuple[np.ndarray, str]]:
        """Variables of a verified table as ``{name: (values, UDUNITS units)}``.

        Reads the checked bytes themselves with netCDF4 (cheaper to import than
        xarray, and no window between the check and the read).
        """
        import netCDF4

        path = self.table_path(name)
        data = self.verified_bytes(path)
        with _TABLE_LOCK, netCDF4.Dataset(path.name, mode="r", memory=data) as handle:
            arrays = {}
            for key, variable in handle.variables.items():
                values = variable[:]
                if np.ma.is_masked(values) or not np.isfinite(np.ma.getdata(values)).all():
                    raise DatasetError(path, _NOT_FINITE.format(key))
                arrays[key] = (
                    read_only(np.array(np.ma.getdata(values), dtype=float)),
                    str(getattr(variable, "units", "1")),
                )
            return arrays


class ReleaseCatalogue:
    """A catalogue as one final release sees it (see :meth:`Catalogue.for_release`).

    Model and defect files come from ``archive/<release>/`` when the release sealed
    them (every model of every quantity it served, defaults and alternatives, and the
    defect catalogue); models added to the catalogue later come from the main tree
    (their provenance says they are not part of the release). Everything else is the
    viewed catalogue's.
    """

    def __init__(self, base: Catalogue, release_id: str):
        self.base = base
        self.release_id = release_id
        self.archive = base.root / "archive" / release_id

    def __getattr__(self, name):
        return getattr(self.base, name)

    def __reduce__(self):
        return _release_view, (self.base, self.release_id)

    def __copy__(self):
        return self

    def __deepcopy__(self, memo):
        return self

    def __repr__(self) -> str:
        return f"<catalogue {self.base.root} as final release {self.release_id} sees it>"

    def data_folder(self, name: str) -> Path:
        archived = self.archive / name
        return archived if archived.is_dir() else self.base.data_folder(name)

    def archived_model_ids(self, quantity: str) -> list[str]:
        """Models of a quantity the release sealed (empty for a later quantity)."""
        return sorted(p.stem for p in (self.archive / "models" / quantity).glob("*.toml"))

    def model_ids(self, quantity: str) -> list[str]:
        later = self.base.model_ids(quantity) if quantity in self.base.quantities() else []
        return sorted(set(self.archived_model_ids(quantity)) | set(later))

    def quantities(self) -> list[str]:
        archived = [p.name for p in (self.archive / "models").iterdir() if p.is_dir()]
        return sorted(set(archived) | set(self.base.quantities()))

    def model(self, quantity: str, model_id: str) -> Model:
        path = self.archive / "models" / quantity / f"{model_id}.toml"
        if path.is_file():
            return self.base.model_at(path, self)
        return self.base.model(quantity, model_id)

    def for_release(self, release: Release) -> Catalogue | ReleaseCatalogue:
        return self.base.for_release(release)


def _release_view(base: Catalogue, release_id: str) -> Catalogue | ReleaseCatalogue | Unusable:
    if isinstance(base, Unusable):
        return base
    try:
        return base.for_release(base.release(release_id))
    except Error as exc:  # (never raise while unpickling: see errors.Unusable)
        return Unusable(exc, ReleaseCatalogue)


def _unpickle_catalogue(root: str | None) -> Catalogue | Unusable:
    try:
        return catalogue_at(root)
    except Error as exc:  # e.g. MATPROPS_DATASETS names no folder in this process
        return Unusable(exc, Catalogue)


#: Deepest nesting of tables and arrays a data file may have (the catalogue's files
#: nest three or four levels; Python's TOML reader fails near a thousand).
MAX_NESTING = 32


def parse_checksums(path: Path, raw: bytes) -> dict[str, str]:
    """A checksum list (lines ``<sha256>  <relative path>``) as relative path -> sha256."""
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise DatasetError(path, f"is not UTF-8 text ({exc})") from exc
    sums = {}
    for number, line in enumerate(text.splitlines(), 1):
        if not line.strip() or line.startswith("#"):
            continue
        parts = line.split(maxsplit=1)
        if len(parts) != 2 or len(parts[0]) != 64:
            raise DatasetError(path, f"line {number} is not '<sha256>  <path>'")
        sums[parts[1].strip()] = parts[0]
    return sums


def _parse_toml(path: Path, raw: bytes) -> dict:
    try:
        data = tomllib.loads(raw.decode("utf-8"))
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise DatasetError(path, f"not valid TOML: {exc}") from exc
    except RecursionError:
        raise DatasetError(
            path, f"nests tables or arrays too deeply to be read (at most {MAX_NESTING} levels)"
        ) from None
    depth = _nesting(data)
    if depth > MAX_NESTING:
        raise DatasetError(
            path, f"nests tables or arrays {depth} levels deep; at most {MAX_NESTING} are read"
        )
    return data


def _nesting(value) -> int:
    """How deeply tables and arrays nest in a parsed TOML document (no recursion)."""
    deepest, stack = 0, [(value, 1)]
    while stack:
        item, depth = stack.pop()
        deepest = max(deepest, depth)
        if depth > MAX_NESTING:
            break
        children = item.values() if isinstance(item, dict) else item
        stack.extend((c, depth + 1) for c in children if isinstance(c, (dict, list)))
    return deepest


def _atomic_write_text(target: Path, text: str) -> None:
    """Write through a temporary file and a rename; a folder that cannot be written
    (a read-only install) is a DatasetError saying so, not an OSError traceback."""
    tmp = temporary_for(target)  # (removed by an interrupted application: files.py)
    try:
        tmp.write_text(text)
        os.replace(tmp, target)
    except OSError as exc:
        raise DatasetError(
            target,
            f"cannot be written ({exc.strerror or exc}): this "
            "command changes the datasets folder itself, which is read-only "
            "here (an installed copy?); run it in a writable checkout, or "
            "on a writable copy (--root or MATPROPS_DATASETS)",
        ) from exc
    finally:  # (after an error or a KeyboardInterrupt: no temporary stays behind)
        with contextlib.suppress(OSError):
            tmp.unlink(missing_ok=True)
        forget(tmp)


_DEFAULT: list[Catalogue] = []
_DEFAULT_LOCK = threading.Lock()


def default_catalogue() -> Catalogue:
    """The catalogue of the installed datasets (created once, on first use)."""
    if not _DEFAULT:
        with _DEFAULT_LOCK:
            if not _DEFAULT:
                _DEFAULT.append(Catalogue())
    return _DEFAULT[0]


def _forget_default() -> None:
    """Drop the default catalogue (tests that change MATPROPS_DATASETS call this)."""
    with _DEFAULT_LOCK:
        _DEFAULT.clear()


default_catalogue.cache_clear = _forget_default  # the name functools.lru_cache gives it


_CATALOGS: dict[Path, Catalogue] = {}


def catalogue_at(root: Path | str | None) -> Catalogue:
    """The shared catalogue of a datasets folder (the default one for ``None``).

    Unpickled models and materials find their catalogue here, so a worker reads and
    checks each file once however many objects it receives.
    """
    if root is None:
        return default_catalogue()
    root = Path(root)
    with _DEFAULT_LOCK:
        if _DEFAULT and _DEFAULT[0].root == root:
            return _DEFAULT[0]
        if root not in _CATALOGS:
            _CATALOGS[root] = Catalogue(root)
        return _CATALOGS[root]


# former spellings, still served
Catalog = Catalogue
default_catalog = default_catalogue
catalog_at = catalogue_at
