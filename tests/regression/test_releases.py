"""Releases: frozen reference numbers, immutability of final releases."""

import json

import pytest

import matprops
from matprops.outputs.reference import compare, regenerate


@pytest.mark.parametrize("release_id", matprops.releases())
def test_release_reproduces_its_frozen_reference(release_id):
    # regression check (1e-12 relative) of every number the release pinned
    assert compare(release_id) == []


def test_release_lookup_and_listing():
    assert matprops.releases()[-1] == matprops.silicon().release.id
    assert matprops.silicon(release="2026.1").models["band_gap"] == "passler-2002"


def test_a_change_is_detected(datasets_copy):
    root, catalog = datasets_copy
    path = root / "releases/2026.1.reference.json"
    content = json.loads(path.read_text())
    content["cases"]["band_gap"]["values"][0][3] *= 1 + 1e-9
    path.write_text(json.dumps(content))
    catalog.write_checksums()
    problems = compare("2026.1", catalog)
    assert problems and "band_gap" in problems[0]


def test_the_release_is_final_and_says_so(capsys):
    from matprops.catalogue.store import default_catalog
    from matprops.cli import main

    assert default_catalog().release("2026.1").final
    assert main(["releases"]) == 0
    assert "2026.1 (final" in capsys.readouterr().out


def test_final_reference_covers_every_pinned_quantity_and_data_file():
    # every model the release pins is evaluated by some case of its frozen reference,
    # every dopant species of its ionisation model and every defect of the catalogue
    from matprops.catalogue.store import default_catalog
    from matprops.outputs.reference import _needs

    catalog = default_catalog()
    release = catalog.release("2026.1")
    frozen = json.loads(catalog.verified_bytes(release.reference_path))
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
    assert species == set(catalog.model("ionisation", release.models["ionisation"]).variants)
    from matprops.catalogue import defects

    defects_covered = {
        case["fixed"]["defect"]
        for case in frozen["cases"].values()
        if case["method"] == "srh_lifetime"
    }
    assert defects_covered == set(defects.names(catalog))
    assert {f"defects/{n}.toml" for n in defects_covered} == set(frozen["data_files"])


def test_final_release_cannot_be_regenerated_or_changed(datasets_copy):
    root, catalog = datasets_copy
    with pytest.raises(matprops.ReleaseFrozenError, match="final"):
        regenerate("2026.1", catalog)
    # editing a model file the final release pinned is caught even if the numbers
    # happened not to move (the file's hash is frozen with the release)
    model = root / "models/band_gap/passler-2002.toml"
    model.write_text(model.read_text() + "\n# an innocent-looking edit\n")
    # ... and so is an edit of a defect of the catalogue
    defect = root / "defects/iron-interstitial.toml"
    defect.write_text(defect.read_text() + "\n# another innocent-looking edit\n")
    catalog.write_checksums()
    problems = compare("2026.1", catalog)
    assert any("passler-2002 changed in a final release" in p for p in problems)
    assert any("defects/iron-interstitial.toml: data file changed" in p for p in problems)


def test_a_draft_regenerates_identically(datasets_copy):
    # regression check: regenerating a draft with the same code and data reproduces its
    # reference exactly (the release itself is final: a draft copy of it is made here)
    root, catalog = datasets_copy
    toml = root / "releases/2026.1.toml"
    toml.write_text(toml.read_text().replace('status = "final"', 'status = "draft"'))
    catalog.write_checksums()
    before = json.loads((root / "releases/2026.1.reference.json").read_text())
    regenerate("2026.1", catalog)
    after = json.loads((root / "releases/2026.1.reference.json").read_text())
    assert after == before


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
    datasets_copy, name, variable, wavelength, temperature
):
    root, catalog = datasets_copy
    if wavelength is None:  # pick a Franta wavelength between two of Green's
        table = catalog.table("franta-2017.nc")
        lam = table.wavelength.values
        wavelength = float(lam[(lam > 1001) & (lam < 1009)][0])
    _scale_table(root, name, variable, wavelength, 1.10, temperature)
    catalog.write_checksums()  # a deliberate edit: the checksum list is not the guard here
    problems = compare("2026.1", catalog)
    assert any(f"table {name}" in p for p in problems)
    if name == "green-2008.nc":  # and the evaluation at every stored point moves too
        assert any("_stored_points: differs" in p for p in problems)


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


def test_reference_regenerate_on_a_read_only_install_says_so(
    datasets_copy, read_only, capsys, monkeypatch
):
    from matprops.catalogue import store as catalog_module
    from matprops.outputs.reference import main

    root, catalog = datasets_copy
    toml = root / "releases/2026.1.toml"  # a draft (a final release refuses first)
    toml.write_text(toml.read_text().replace('status = "final"', 'status = "draft"'))
    catalog.write_checksums()
    monkeypatch.setattr(catalog_module, "_DEFAULT", [catalog])  # the "installed" copy
    read_only(root)
    assert main(["regenerate", "2026.1"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "2026.1.reference.json: cannot be written" in err
    assert main(["regenerate", "2030.1"]) == 2  # and an unknown release: no traceback
    assert "unknown release '2030.1'" in capsys.readouterr().err
