"""Writing an overlay catalogue folder (see :mod:`.overlay`): making it, its checksum
list, own release files, and the archive and seal of a frozen own release.

Every writer first checks that the folder's files match its checksum list
(:func:`check_unchanged`): re-recording the list after a change made behind matprops'
back would make that change look deliberate.
"""

from __future__ import annotations

import os
import re
import shutil
from collections.abc import Mapping
from pathlib import Path

from ..errors import DatasetError, UnknownModelError, UnknownReleaseError
from . import finality
from .records import CatalogueLike
from .store import CHECKSUM_FILE, DATA_FILES, RELEASE_ID, _parse_toml, parse_checksums

__all__ = [
    "IDENTITY",
    "MEASUREMENTS",
    "OVERLAY_NAME",
    "OWN_RELEASE_ID",
    "archive_own",
    "check_unchanged",
    "create",
    "forget",
    "overlay_files",
    "seal_own",
    "write_release",
]

IDENTITY = "overlay.toml"
MEASUREMENTS = "measurements"
# own release ids: lower-case words and numbers joined by hyphens or dots, starting
# with a letter (the shipped releases' YYYY.N cannot match)
OWN_RELEASE_ID = re.compile(r"^[a-z][a-z0-9]*([-.][a-z0-9]+)*$")
OVERLAY_NAME = re.compile(r"^[a-z][a-z0-9]*(-[a-z0-9]+)*$")
OVERLAY_FILES = {
    "models": DATA_FILES["models"],
    "releases": DATA_FILES["releases"],
    "tables": DATA_FILES["tables"],
    "archive": DATA_FILES["archive"],
    MEASUREMENTS: (".csv", ".nc", ".json", ".txt"),
}


def create(
    path: Path | str, name: str, description: str, contact: str = "", exist_ok: bool = False
) -> Path:
    """Make an empty overlay catalogue folder (``overlay.toml`` and its checksum list).

    ``name`` is lower-case words joined by hyphens (``"example-lab"``); ``description``
    says whose catalogue it is and what it holds. With ``exist_ok`` an existing
    overlay of the same name is left as it is.
    """
    from .store import _atomic_write_text

    root = Path(os.path.abspath(Path(path).expanduser()))
    if not OVERLAY_NAME.match(name or ""):
        raise DatasetError(
            root / IDENTITY,
            f"catalogue name must be lower-case words joined by hyphens, got {name!r}",
        )
    if not (description or "").strip():
        raise DatasetError(root / IDENTITY, "a catalogue needs a description (whose, what for)")
    identity = root / IDENTITY
    if identity.exists():
        if not exist_ok:
            raise DatasetError(identity, "exists already: this folder is an overlay catalogue")
        data = _parse_toml(identity, identity.read_bytes())
        if data.get("name") != name:
            raise DatasetError(identity, f"is catalogue {data.get('name')!r}, not {name!r}")
        return root
    if root.exists() and any(root.iterdir()):
        raise DatasetError(root, "is not empty: make an overlay catalogue in a new folder")
    root.mkdir(parents=True, exist_ok=True)
    lines = [f"name = {_toml_string(name)}", f"description = {_toml_string(description)}"]
    if contact:
        lines.append(f"contact = {_toml_string(contact)}")
    _atomic_write_text(identity, "\n".join(lines) + "\n")
    for sub in ("models", "releases", MEASUREMENTS):
        (root / sub).mkdir(exist_ok=True)
    _write_checksums_of(root)
    return root


MEASUREMENT_NAME = re.compile(r"^[A-Za-z0-9][A-Za-z0-9_.-]*\.(csv|nc|json|txt)$")


def named(folder: Path, name: str, kind: str) -> Path:
    """The file ``name`` of ``folder`` (a table or measurement an overlay's file names):
    a plain file name that stays inside the folder, or a DatasetError."""
    from .files import confined
    from .store import TABLE_NAME

    pattern = TABLE_NAME if kind == "table" else MEASUREMENT_NAME
    if not isinstance(name, str) or not pattern.match(name):
        raise DatasetError(
            folder / str(name),
            f"a {kind} is named by its file name in its folder (letters, digits, '-', '_', "
            "'.'; no folders): refusing to read it",
        )
    return confined(folder / name, folder)


def overlay_files(root: Path) -> list[str]:
    """Every data file of an overlay folder (relative paths): what its checksum list
    must cover."""
    found = [IDENTITY] if (root / IDENTITY).is_file() else []
    for sub, suffixes in OVERLAY_FILES.items():
        found += [
            path.relative_to(root).as_posix()
            for path in sorted((root / sub).rglob("*"))
            if path.is_file() and path.suffix in suffixes and not path.name.startswith(".")
        ]
    return found


def check_unchanged(root: Path) -> None:
    """Refuse to write into an overlay folder whose files differ from its checksum list
    (re-recording the list would make such a change look deliberate)."""
    from .store import sha256_of

    path = root / CHECKSUM_FILE
    if not path.is_file():
        raise DatasetError(path, "checksum list is missing: not an overlay catalogue folder")
    recorded = parse_checksums(path, path.read_bytes())
    on_disk = set(overlay_files(root))
    changed = sorted(
        [r for r in on_disk if r not in recorded]
        + [r for r in recorded if r not in on_disk]
        + [r for r in on_disk & set(recorded) if sha256_of(root / r) != recorded[r]]
    )
    if changed:
        raise DatasetError(
            root,
            f"files differ from its checksum list ({', '.join(changed[:5])}"
            f"{' ...' if len(changed) > 5 else ''}): matprops writes into a catalogue only "
            "while every file matches; check it (python -m matprops.catalogue --catalogue "
            "PATH) and re-record deliberate changes (--update-checksums)",
        )


def _write_checksums_of(root: Path) -> Path:
    """Record the sha256 of every data file of an overlay folder."""
    from .store import _atomic_write_text, sha256_of

    lines = [
        "# sha256 of every file of this overlay catalogue; matprops refuses files that differ.",
        "# After a deliberate change: python -m matprops.catalogue --catalogue <this folder> "
        "--update-checksums",
    ]
    lines += [f"{sha256_of(root / relative)}  {relative}" for relative in overlay_files(root)]
    target = root / CHECKSUM_FILE
    _atomic_write_text(target, "\n".join(lines) + "\n")
    return target


def write_release(
    overlay,
    release_id: str,
    base: str,
    models: Mapping[str, str],
    notes: str,
    date: str | None = None,
) -> Path:
    """Write a draft own release file ``releases/<id>.toml`` into an overlay (checked:
    the id's form, the base exists, every model named exists for its quantity) and
    re-record the overlay's checksums. Its reference is written by
    :func:`matprops.outputs.reference.regenerate`."""
    import datetime

    from .store import _atomic_write_text

    path = overlay.root / "releases" / f"{release_id}.toml"
    check_unchanged(overlay.root)
    if RELEASE_ID.match(release_id) or not OWN_RELEASE_ID.match(release_id):
        raise DatasetError(
            path,
            f"release id {release_id!r}: an own release id is lower-case words and numbers "
            "joined by hyphens or dots, starting with a letter ('ourlab-2027.1')",
        )
    if release_id in overlay.release_ids():
        raise DatasetError(path, f"release {release_id} exists already")
    if base not in overlay.release_ids():
        raise UnknownReleaseError(base, overlay.release_ids(), "(the base of a new release)")
    if not (notes or "").strip():
        raise DatasetError(path, "a release needs notes: what it changes against its base, why")
    for quantity, model_id in models.items():
        known = overlay.model_ids(quantity)  # UnknownQuantityError for an unknown quantity
        if model_id not in known:
            raise UnknownModelError(model_id, known, f"for quantity {quantity!r}")
    date = date or datetime.date.today().isoformat()
    lines = [
        f"release = {_toml_string(release_id)}",
        f"base = {_toml_string(base)}",
        'status = "draft"',
        f'date = "{date}"',
        f"notes = {_toml_string(notes)}",
        "",
        "[models]",
        *[f"{q} = {_toml_string(m)}" for q, m in sorted(models.items())],
    ]
    path.parent.mkdir(exist_ok=True)
    _atomic_write_text(path, "\n".join(lines) + "\n")
    overlay.write_checksums()
    return path


def _toml_string(text: str) -> str:
    """A TOML basic string (JSON's escapes are TOML's for these characters)."""
    import json

    return json.dumps(str(text), ensure_ascii=False)


def archive_own(overlay, release) -> Path:
    """Copy into ``archive/<id>/`` of the overlay every file an own release's numbers
    depend on, as the release sees them now: every model file of every quantity it
    serves (its own and its base's, alternatives too), the defect catalogue, and the
    tables those models read. The copies are of verified bytes."""
    check_unchanged(overlay.root)
    view = overlay.for_release(release)
    target = overlay.root / "archive" / release.id
    if target.exists():
        raise DatasetError(target, "exists already: an own release is archived once")
    copies: dict[Path, bytes] = {}
    tables: set[tuple[str, CatalogueLike]] = set()  # table name, catalogue that reads it
    for quantity in sorted(release.models):
        for model_id in view.model_ids(quantity):
            model = view.model(quantity, model_id)
            copies[target / "models" / quantity / f"{model_id}.toml"] = overlay.verified_bytes(
                model.path
            )
            if model.catalogue is not None:
                tables.update((name, model.catalogue) for name in model.tables)
    defects = view.data_folder("defects")
    for path in sorted(defects.glob("*.toml")) if defects.is_dir() else []:
        copies[target / "defects" / path.name] = overlay.verified_bytes(path)
    for name, owner in sorted(tables, key=lambda t: t[0]):
        path = owner.table_path(name)
        copies[target / "tables" / name] = overlay.verified_bytes(path)
    # written into a hidden folder and renamed: an interrupted freeze leaves no half archive
    staging = target.with_name(f".{target.name}.tmp-{os.getpid()}")
    try:
        for destination, data in copies.items():
            path = staging / destination.relative_to(target)
            path.parent.mkdir(parents=True, exist_ok=True)
            path.write_bytes(data)
        os.replace(staging, target)
    finally:
        shutil.rmtree(staging, ignore_errors=True)
    return target


def seal_own(overlay, release, date: str) -> tuple[Path, str]:
    """Write ``releases/<id>.seal.json`` of a (just archived) own release: the sha256 of
    its release file, references, archive and the measurements its models cite, and its
    whole model choice. Returns the seal and its digest (the line for the seals file)."""
    import json

    from .store import _atomic_write_text, sha256_of

    root = overlay.root
    releases = root / "releases"
    paths = [releases / f"{release.id}.toml", releases / f"{release.id}.reference.json"]
    archive = root / "archive" / release.id
    paths += sorted(p for p in archive.rglob("*") if p.is_file())
    cited = set()
    for path in archive.glob("models/*/*.toml"):
        source = _parse_toml(path, path.read_bytes()).get("source", {})
        if source.get("type") == "measurement" and source.get("data"):
            cited.add(overlay.measurement_path(source["data"]))
    paths += sorted(p for p in cited if p.is_file())
    files = {p.relative_to(root).as_posix(): sha256_of(p) for p in paths}
    base = overlay.release(release.base)
    seal = {
        "release": release.id,
        "catalogue": overlay.name,
        "base": release.base,
        "base_status": base.status,
        "sealed": date,
        "version": finality.SEAL_VERSION,
        "models": dict(sorted(release.models.items())),
        "defaults": dict(sorted(release.defaults.items())),
        "files": files,
    }
    target = releases / f"{release.id}.seal.json"
    _atomic_write_text(target, json.dumps(seal, indent=1, ensure_ascii=False) + "\n")
    return target, sha256_of(target)


def forget(overlay, release_id: str) -> None:
    """Drop what an overlay has built for a release (after it was frozen)."""
    with overlay._lock:
        overlay._release_views.pop(release_id, None)
