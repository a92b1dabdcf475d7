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
from .store import CHECKSUM_FILE, Catalog

__all__ = ["check"]


def check(catalog: Catalog) -> tuple[list[str], int]:
    """(problems, number of data files verified); no problems means all is well."""
    root = catalog.root
    if not root.is_dir():
        return [f"{root}: the datasets folder does not exist"], 0
    problems: list[str] = []

    def attempt(action, *args):
        try:
            return action(*args)
        except Error as exc:
            # one problem per file: a corrupted file also fails to load
            if not any(str(exc).startswith(f"{p.partition(': ')[0]}: ") for p in problems):
                problems.append(str(exc))
            return None

    recorded = attempt(catalog.checksums)
    if recorded is None:
        return problems, 0
    on_disk = set(catalog.data_files())
    for relative in sorted(set(recorded) - on_disk):
        problems.append(f"{root / relative}: listed in {CHECKSUM_FILE} but missing")
    for relative in sorted(on_disk - set(recorded)):
        problems.append(
            f"{root / relative}: not listed in {CHECKSUM_FILE} (run python -m "
            "matprops.catalogue --update-checksums after a deliberate change)"
        )
    for relative in sorted(on_disk & set(recorded)):
        attempt(catalog.verified_bytes, root / relative)

    quantities = attempt(catalog.quantities)  # None: the folder is missing (reported)
    if quantities == []:
        problems.append(f"{root / 'models'}: no model files")
    for quantity in quantities or []:
        for model_id in catalog.model_ids(quantity):
            model = attempt(catalog.model, quantity, model_id)
            if model is not None and model.kind == "table":
                attempt(model.function._load)  # opens and converts every table it reads

    releases = attempt(catalog.release_ids)
    if releases == []:
        problems.append(f"{root / 'releases'}: no release files")
    for release_id in releases or []:
        release = attempt(catalog.release, release_id)
        if release is None:
            continue
        for quantity, model_id in release.models.items():
            known = catalog.model_ids(quantity) if quantity in (quantities or []) else []
            if model_id not in known:
                problems.append(
                    f"{release.path}: models.{quantity} = {model_id!r} does not "
                    f"exist (models of {quantity!r}: {', '.join(known) or 'none'})"
                )
        view = catalog.for_release(release)
        if view is not catalog:  # a final release's archive: its sealed model files load
            for quantity in view.quantities():
                for model_id in view.archived_model_ids(quantity):
                    attempt(view.model, quantity, model_id)
        reference = attempt(catalog.verified_bytes, release.reference_path)
        if reference is not None:
            try:
                json.loads(reference)
            except ValueError as exc:
                problems.append(f"{release.reference_path}: not valid JSON: {exc}")

    for name in catalog.scenario_names():  # (optional folder)
        attempt(catalog.scenario, name)
    from . import defects  # the defect catalogue (optional folder)

    for name in defects.names(catalog):
        attempt(defects.defect, name, catalog)
    return problems, len(on_disk & set(recorded))
