"""Releases: frozen reference numbers, immutability of final releases."""

import json
import re

import pytest

import matprops
from matprops.catalogue.store import Catalogue, default_catalogue
from matprops.outputs.reference import compare, regenerate

RELEASES = matprops.releases()
FINAL = [r for r in RELEASES if default_catalogue().release(r).final]
DRAFTS = [r for r in RELEASES if r not in FINAL]


@pytest.mark.parametrize("release_id", RELEASES)
def test_release_reproduces_its_frozen_reference(release_id):
    # regression check of every number the release pinned, each case at its stored
    # tolerance (closed forms 1e-12, iterative results 1e-9; see reference.py)
    assert compare(release_id) == []


@pytest.mark.parametrize("release_id", RELEASES)
def test_release_lookup_and_listing(release_id):
    # a release serves the models its file names; the newest is the default
    release = default_catalogue().release(release_id)
    assert matprops.silicon(release=release_id).models == dict(release.models)
    assert release.status in ("draft", "final")
    assert RELEASES[-1] == matprops.silicon().release.id


@pytest.mark.parametrize("release_id", RELEASES)
def test_a_change_is_detected(datasets_copy, release_id):
    root, catalogue = datasets_copy
    path = root / f"releases/{release_id}.reference.json"
    content = json.loads(path.read_text())
    label = next(iter(content["cases"]))  # the first case of the release, whichever it is
    content["cases"][label]["values"][0][0] *= 1 + 1e-9
    path.write_text(json.dumps(content))
    catalogue.write_checksums()
    if release_id in FINAL:  # a final release's reference is sealed: it no longer loads
        with pytest.raises(matprops.FinalityError, match="sealed by final release"):
            compare(release_id, catalogue)
    else:
        problems = compare(release_id, catalogue)
        assert problems and label in problems[0]


def test_final_releases_say_so(capsys):
    from matprops.cli import main

    assert main(["releases"]) == 0
    out = capsys.readouterr().out
    for release_id in FINAL:
        assert f"{release_id} (final" in out


@pytest.mark.parametrize("release_id", RELEASES)
def test_reference_covers_every_model_species_and_defect(release_id):
    # every model the release pins is evaluated by some case of its frozen reference
    # (and every alternative model of its quantities, one swapped at a time), every
    # dopant species of its ionisation model and every defect it reads
    from matprops.catalogue import defects
    from matprops.outputs.reference import _needs

    si = matprops.silicon(release=release_id)
    catalogue = si.catalogue
    release = si.release
    frozen = json.loads(catalogue.verified_bytes(release.reference_path))
    covered = {
        q for case in frozen["cases"].values() for q in _needs(case["method"], case["fixed"])
    }
    assert set(release.models) <= covered
    assert set(frozen["model_files"]) == set(release.models)
    species = {
        case["fixed"]["dopant"]
        for case in frozen["cases"].values()
        if case["method"] == "dopant_level"
    }
    assert species == set(si.model("ionisation").variants)
    defects_covered = {
        case["fixed"]["defect"]
        for case in frozen["cases"].values()
        if case["method"] == "srh_lifetime"
    }
    assert defects_covered == set(defects.names(catalogue))
    assert {f"defects/{n}.toml" for n in defects_covered} == set(frozen["data_files"])
    alternatives = dict(frozen.get("alternatives", {}))
    supplement = release.reference_path.with_name(f"{release_id}.alternatives.json")
    if supplement.is_file():
        alternatives.update(json.loads(catalogue.verified_bytes(supplement))["cases"])
    swapped = {label.partition("@")[2] for label in alternatives}
    expected = {
        f"{quantity}={model_id}"
        for quantity, default in release.models.items()
        for model_id in catalogue.model_ids(quantity)
        if model_id != default
    }
    if release.final:  # models added to the catalogue after the release are not its own
        expected = {
            f"{quantity}={model_id}"
            for quantity, default in release.models.items()
            for model_id in catalogue.archived_model_ids(quantity)
            if model_id != default
        }
    assert swapped == expected


@pytest.mark.parametrize("release_id", RELEASES)
def test_reference_covers_every_quantity_it_serves(release_id):
    # a draft's frozen reference has a case of every quantity the release serves (its
    # models' and every derived one it composes, read from the quantity registry): a
    # draft that gained a quantity must be regenerated. A final release's reference
    # never changes, so it covers the quantities it pins; quantities derived by code
    # written later (conductivity, total absorption ...) are not its own
    from matprops.material.registry import REGISTRY
    from matprops.material.tables import available

    si = matprops.silicon(release=release_id)
    frozen = json.loads(si.catalogue.verified_bytes(si.release.reference_path))
    covered = {
        REGISTRY.for_method(case["method"], case["fixed"]).name for case in frozen["cases"].values()
    }
    expected = set(available(si))
    if si.release.final:
        expected &= set(si.release.models)
    assert expected - covered == set()


@pytest.mark.parametrize("release_id", FINAL)
def test_final_release_cannot_be_regenerated(datasets_copy, release_id):
    _, catalogue = datasets_copy
    with pytest.raises(matprops.ReleaseFrozenError, match="final"):
        regenerate(release_id, catalogue)


@pytest.mark.parametrize("release_id", FINAL)
def test_the_main_tree_moves_on_without_moving_a_final_release(datasets_copy, release_id):
    # a final release reads the model and defect files it sealed from its archive:
    # editing (correcting) the main tree's copies changes nothing of it
    root, catalogue = datasets_copy
    release = catalogue.release(release_id)
    quantity = next(q for q in release.models if catalogue.model(q, release.models[q]).coefficients)
    model = root / f"models/{quantity}/{release.models[quantity]}.toml"
    text = model.read_text()
    number = re.search(r"value = (-?[0-9.]+(?:e-?[0-9]+)?)", text)  # the first coefficient
    corrected = repr(float(number[1]) * 1.01)
    model.write_text(text[: number.start(1)] + corrected + text[number.end(1) :])
    defect = root / "defects/iron-interstitial.toml"
    defect.write_text(defect.read_text() + "\n# a later correction\n")
    catalogue.write_checksums()
    assert compare(release_id, catalogue) == []
    si = matprops.Silicon(release=release_id, catalogue=catalogue)
    assert "archive" in si.model(quantity).path.parts


@pytest.mark.slow  # about 5 s or more
def test_a_draft_regenerates_within_its_tolerances(datasets_with_draft):
    # regression check: regenerating a draft with the same code and data reproduces
    # its reference: every field exactly, the numbers within each case's tolerance
    root, catalogue, release_id = datasets_with_draft
    path = root / f"releases/{release_id}.reference.json"
    before = json.loads(path.read_text())
    regenerate(release_id, catalogue)
    after = json.loads(path.read_text())
    for part in ("cases", "alternatives"):
        for case in (*before[part].values(), *after[part].values()):
            case.pop("values", None)
    assert after == before
    assert compare(release_id, catalogue) == []


def _scale_table(root, name, variable, wavelength, factor, temperature=None):
    import xarray as xr

    path = root / "tables" / name
    with xr.open_dataset(path) as opened:
        data = opened.load()
    where = {"wavelength": wavelength}
    if temperature is not None:
        where["temperature"] = temperature
    data[variable].loc[where] = data[variable].loc[where] * factor
    data.to_netcdf(path)


@pytest.mark.slow  # about 5 s or more
@pytest.mark.parametrize(
    "name, variable, wavelength, temperature",
    [
        # 810 nm lies between the fixed grid's 800 and 900 nm
        ("green-2008.nc", "absorption_coefficient", 810.0, None),
        ("green-2008.nc", "refractive_index", 1230.0, None),
        # a point of the temperature series on no wavelength of Green's grid
        ("franta-2017.nc", "absorption_coefficient", None, 150.0),
    ],
)
def test_an_edit_anywhere_in_a_table_is_detected(
    datasets_with_draft, name, variable, wavelength, temperature
):
    root, catalogue, draft = datasets_with_draft
    if wavelength is None:  # pick a Franta wavelength between two of Green's
        table = catalogue.table("franta-2017.nc")
        lam = table.wavelength.values
        wavelength = float(lam[(lam > 1001) & (lam < 1009)][0])
    _scale_table(root, name, variable, wavelength, 1.10, temperature)
    catalogue.write_checksums()  # a deliberate edit: the checksum list is not the guard here
    catalogue = Catalogue(root)  # a fresh reader (the draft's evaluation kept the old table)
    problems = compare(draft, catalogue)  # a draft's reference catches the moved numbers
    assert any(f"table {name}" in p for p in problems)
    if name == "green-2008.nc":  # and the evaluation at every stored point moves too
        assert any("_stored_points: differs" in p for p in problems)
    for release_id in FINAL:  # a final release sealed the table file itself
        with pytest.raises(matprops.FinalityError, match=f"tables/{name}"):
            compare(release_id, catalogue)


# ------------------------------------------------------------------ read-only installs


@pytest.fixture
def read_only(monkeypatch):
    """Make writes under a folder fail as on a read-only install. (Tests run as root,
    for whom file permissions do not bind, so the refusal is simulated at the call
    that writes.)"""
    import errno
    from pathlib import Path

    folders = []
    original = Path.write_text

    def write_text(self, *args, **kwargs):
        if any(self.is_relative_to(folder) for folder in folders):
            raise PermissionError(errno.EACCES, "Permission denied", str(self))
        return original(self, *args, **kwargs)

    monkeypatch.setattr(Path, "write_text", write_text)
    return folders.append


def test_update_checksums_on_a_read_only_install_says_so(datasets_copy, read_only, capsys):
    # before: an OSError traceback
    from matprops.catalogue.__main__ import main

    root, _ = datasets_copy
    read_only(root)
    before = (root / "checksums.sha256").read_text()
    assert main(["--update-checksums", "--root", str(root)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and err.startswith("error: ")
    assert "checksums.sha256: cannot be written (Permission denied)" in err
    assert "read-only" in err and "Traceback" not in err
    assert (root / "checksums.sha256").read_text() == before
    assert not list(root.glob(".*tmp*"))


@pytest.mark.slow  # about 5 s or more
def test_reference_regenerate_on_a_read_only_install_says_so(
    datasets_with_draft, read_only, capsys, monkeypatch
):
    from matprops.catalogue import store as catalogue_module
    from matprops.outputs.reference import main

    root, catalogue, draft = datasets_with_draft  # (a final release refuses first)
    monkeypatch.setattr(catalogue_module, "_DEFAULT", [catalogue])  # the "installed" copy
    read_only(root)
    assert main(["regenerate", draft]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and f"{draft}.reference.json: cannot be written" in err
    assert main(["regenerate", "2099.1"]) == 2  # and an unknown release: no traceback
    assert "unknown release '2099.1'" in capsys.readouterr().err
