"""Integrity check of a whole ``datasets/`` folder: ``python -m matprops.catalogue``.

Every file the checksum list names must exist and match; every data file on disk
must be listed; every model file must load (schema, kernel, units) and every table it
reads must open and hold the variables it names; every release must load, name
models that exist and have a readable frozen reference (a final release's archived
model files must load as that release reads them); every scenario must pass its
schema, and every defect of the catalogue must load. A folder with no models or no
releases is a failure, not an empty success.
"""

from __future__ import annotations

import json

from ..errors import Error
from .store import CHECKSUM_FILE, Catalogue

__all__ = ["check"]


def _attempts(problems: list[str]):
    def attempt(action, *args):
        try:
            return action(*args)
        except Error as exc:
            # one problem per file: a corrupted file also fails to load
            if not any(str(exc).startswith(f"{p.partition(': ')[0]}: ") for p in problems):
                problems.append(str(exc))
            return None

    return attempt


def _files(catalogue, problems, attempt) -> int | None:
    """Check the checksum list against the files on disk; the number verified."""
    root = catalogue.root
    recorded = attempt(catalogue.checksums)
    if recorded is None:
        return None
    on_disk = set(catalogue.data_files())
    for relative in sorted(set(recorded) - on_disk):
        problems.append(f"{root / relative}: listed in {CHECKSUM_FILE} but missing")
    for relative in sorted(on_disk - set(recorded)):
        problems.append(
            f"{root / relative}: not listed in {CHECKSUM_FILE} (run python -m "
            "matprops.catalogue --update-checksums after a deliberate change)"
        )
    for relative in sorted(on_disk & set(recorded)):
        attempt(catalogue.verified_bytes, root / relative)
    return len(on_disk & set(recorded))


def check(catalogue: Catalogue) -> tuple[list[str], int]:
    """(problems, number of data files verified); no problems means all is well."""
    from .overlay import Overlay

    if isinstance(catalogue, Overlay):
        return check_overlay(catalogue)
    root = catalogue.root
    if not root.is_dir():
        return [f"{root}: the datasets folder does not exist"], 0
    problems: list[str] = []
    attempt = _attempts(problems)
    if _files(catalogue, problems, attempt) is None:
        return problems, 0
    on_disk = set(catalogue.data_files())
    recorded = catalogue.checksums()

    quantities = attempt(catalogue.quantities)  # None: the folder is missing (reported)
    if quantities == []:
        problems.append(f"{root / 'models'}: no model files")
    for quantity in quantities or []:
        for model_id in catalogue.model_ids(quantity):
            model = attempt(catalogue.model, quantity, model_id)
            if model is not None and model.kind == "table":
                attempt(model.function._load)  # opens and converts every table it reads

    releases = attempt(catalogue.release_ids)
    if releases == []:
        problems.append(f"{root / 'releases'}: no release files")
    for release_id in releases or []:
        release = attempt(catalogue.release, release_id)
        if release is None:
            continue
        for quantity, model_id in release.models.items():
            known = catalogue.model_ids(quantity) if quantity in (quantities or []) else []
            if model_id not in known:
                problems.append(
                    f"{release.path}: models.{quantity} = {model_id!r} does not "
                    f"exist (models of {quantity!r}: {', '.join(known) or 'none'})"
                )
        view = catalogue.for_release(release)
        if view is not catalogue:  # a final release's archive: its sealed model files load
            for quantity in view.quantities():
                for model_id in view.archived_model_ids(quantity):
                    attempt(view.model, quantity, model_id)
        reference = attempt(catalogue.verified_bytes, release.reference_path)
        if reference is not None:
            try:
                json.loads(reference)
            except ValueError as exc:
                problems.append(f"{release.reference_path}: not valid JSON: {exc}")

    for name in catalogue.scenario_names():  # (optional folder)
        attempt(catalogue.scenario, name)
    from . import defects  # the defect catalogue (optional folder)

    for name in defects.names(catalogue):
        attempt(defects.defect, name, catalogue)
    return problems, len(on_disk & set(recorded))


def check_overlay(overlay) -> tuple[list[str], int]:
    """The check of one overlay catalogue folder (:mod:`.overlay`): its checksum list
    against its files, every own model file (and the data it cites), every own
    release as it sees its models (a final one: its seal and its archive), and the
    frozen reference of each."""
    problems: list[str] = []
    attempt = _attempts(problems)
    checked = _files(overlay, problems, attempt)
    if checked is None:
        return problems, 0
    for quantity in overlay.own_quantities():
        for model_id in overlay.own_model_ids(quantity):
            model = attempt(overlay.model, quantity, model_id)
            if model is not None and model.kind == "table":
                attempt(model.function._load)
    for release_id in overlay.own_release_ids():
        release = attempt(overlay.release, release_id)
        if release is None:
            continue
        view = attempt(overlay.for_release, release)
        if view is None:
            continue
        for quantity, model_id in release.models.items():
            attempt(view.model, quantity, model_id)
        for quantity in view.quantities() if release.final else ():
            for model_id in view.archived_model_ids(quantity):
                attempt(view.model, quantity, model_id)
        if not release.reference_path.is_file():
            problems.append(
                f"{release.reference_path}: missing (an own release's frozen reference: "
                "python -m matprops.outputs.reference regenerate "
                f"{release_id} --catalogue {overlay.root})"
            )
            continue
        reference = attempt(overlay.verified_bytes, release.reference_path)
        if reference is not None:
            try:
                json.loads(reference)
            except ValueError as exc:
                problems.append(f"{release.reference_path}: not valid JSON: {exc}")
    for ignored in ("defects", "scenarios"):
        if (overlay.root / ignored).is_dir():
            problems.append(
                f"{overlay.root / ignored}: an overlay catalogue's {ignored} are not read "
                "(it holds models, releases, measurements and tables)"
            )
    return problems, checked
