"""Overlay catalogues: a lab's own models and releases over the shipped data, pinned and
checked like the shipped ones (matprops.catalogue.overlay).

The own model of these tests is a fit of passler-2002 to data generated from it with
invented noise (INVENTED data, for the tests only); the lab is fictional.
"""

import json
import pickle
import shutil

import numpy as np
import pytest

import matprops
from matprops.catalogue import overlay as overlays
from matprops.catalogue.overlay import catalogue_at
from matprops.outputs import reference

SOURCE = {
    "authors": ["A. Tester"],
    "lab": "Fictional Test Lab",
    "year": 2027,
    "title": "Band gap of an invented wafer (INVENTED data)",
    "description": "INVENTED: passler-2002 at 20-300 K plus Gaussian noise of 0.3 meV",
}


GAP, MOVED_GAP = "gap_at_zero]\nvalue = 1.17", "gap_at_zero]\nvalue = 1.18"


@pytest.fixture(autouse=True)
def no_user_seals(tmp_path, monkeypatch):
    # never read or write the user's own seals file
    monkeypatch.setenv("MATPROPS_SEALS", str(tmp_path / "user-seals.txt"))


def _invented_gap_data(seed=7):
    model = matprops.silicon("2026.1").model("band_gap")
    temperature = np.linspace(20.0, 300.0, 15)
    sigma = np.full(temperature.shape, 3e-4)
    values = model(temperature=temperature) + np.random.default_rng(seed).normal(0, sigma)
    return {
        "temperature": matprops.Q_(temperature, "K"),
        "band_gap": matprops.Q_(values, "eV"),
        "band_gap_uncertainty": matprops.Q_(sigma, "eV"),
    }


def _make_model(root):
    """An overlay with one model: passler-2002 refitted to invented data."""
    matprops.create_catalogue(root, name="test-lab", description="a fictional lab (tests)")
    fit = matprops.fit(
        "band_gap", "passler-2002", _invented_gap_data(), free=["gap_at_zero"], release="2026.1"
    )
    fit.write(root, "testlab-2027", source=SOURCE)


def _make_lab(root, seals):
    """The overlay with a release on the final 2026.1, frozen, and a draft release on
    top of that one choosing a shipped alternative (its reference not written)."""
    _make_model(root)
    matprops.create_release(
        "test-lab-1",
        base="2026.1",
        models={"band_gap": "testlab-2027"},
        notes="the lab's band gap over 2026.1 (tests)",
        catalogue=root,
        catalogues=[],
        seals=seals,
    )
    digest = matprops.freeze_release("test-lab-1", catalogues=[root], seals=seals)
    overlays.write_release(
        catalogue_at(None, [root], seals),
        "test-lab-2",
        "test-lab-1",
        {"mobility": "arora-1982"},
        "test-lab-1 with Arora's mobility (tests)",
    )
    return digest


@pytest.fixture(scope="module")
def lab(tmp_path_factory):
    """(overlay folder, seals file, seal digest) of a lab made once for this module
    (about a minute: two full evaluations of the release's reference cases)."""
    base = tmp_path_factory.mktemp("lab")
    root, seals = base / "lab", base / "seals.txt"
    with pytest.MonkeyPatch.context() as patch:
        patch.setenv("MATPROPS_SEALS", str(base / "user-seals.txt"))
        digest = _make_lab(root, seals)
    return root, seals, digest


@pytest.fixture
def lab_copy(lab, tmp_path):
    """A private copy of the lab (folder and seals file) to tamper with."""
    root, seals, digest = lab
    copy = tmp_path / "lab-copy"
    shutil.copytree(root, copy)
    seals_copy = tmp_path / "seals.txt"
    shutil.copyfile(seals, seals_copy)
    return copy, seals_copy, digest


@pytest.fixture
def small_lab(tmp_path):
    """An overlay with one fitted model and no release (fast)."""
    root = tmp_path / "small-lab"
    _make_model(root)
    return root, tmp_path / "seals.txt"


# ------------------------------------------------------------------ layering and files


def test_an_empty_overlay_changes_nothing(tmp_path):
    root = matprops.create_catalogue(tmp_path / "empty", name="empty-lab", description="x")
    si = matprops.silicon("2026.1", catalogues=[root])
    shipped = matprops.silicon("2026.1")
    assert si.models == shipped.models
    assert si.band_gap(300) == shipped.band_gap(300)
    assert matprops.releases(catalogues=[root]) == matprops.releases()


def test_an_overlay_may_not_redefine_a_shipped_model(tmp_path):
    root = matprops.create_catalogue(tmp_path / "lab", name="bad-lab", description="x")
    shipped = matprops.silicon().catalogue.root / "models" / "band_gap" / "passler-2002.toml"
    (root / "models" / "band_gap").mkdir()
    shutil.copyfile(shipped, root / "models" / "band_gap" / "passler-2002.toml")
    overlays._write_checksums_of(root)
    with pytest.raises(
        matprops.DatasetError, match=r"redefines model band_gap/passler-2002 of"
    ) as info:
        catalogue_at(None, [root], {})
    assert str(shipped) in str(info.value) and str(root) in str(info.value)


def test_an_overlay_may_not_use_a_shipped_release_id_or_its_form(tmp_path):
    root = matprops.create_catalogue(tmp_path / "lab", name="bad-lab", description="x")
    text = (
        'release = "{id}"\nbase = "2026.1"\nstatus = "draft"\ndate = "2027-01-01"\n'
        'notes = "x"\n[models]\n'
    )
    (root / "releases" / "2026.1.toml").write_text(text.format(id="2026.1"))
    overlays._write_checksums_of(root)
    with pytest.raises(matprops.DatasetError, match="YYYY.N belongs to the shipped releases"):
        catalogue_at(None, [root], {})
    (root / "releases" / "2026.1.toml").unlink()
    with pytest.raises(matprops.DatasetError, match="release id '2027.1'"):
        overlays.write_release(
            catalogue_at(None, [_fresh(root)], {}), "2027.1", "2026.1", {}, "notes"
        )


def _fresh(root):
    overlays._write_checksums_of(root)
    return root


def test_each_file_is_verified_against_its_own_folders_checksums(small_lab):
    root, seals = small_lab
    path = root / "models" / "band_gap" / "testlab-2027.toml"
    path.write_text(path.read_text().replace("Fictional Test Lab", "Another Lab"))
    catalogue = catalogue_at(None, [root], seals)
    with pytest.raises(matprops.ChecksumError, match=r"testlab-2027\.toml: sha256"):
        catalogue.model("band_gap", "testlab-2027")
    assert catalogue.model("band_gap", "passler-2002").id == "passler-2002"  # shipped: its own


def test_table_and_measurement_names_stay_in_their_folder(small_lab):
    root, seals = small_lab
    catalogue = catalogue_at(None, [root], seals)
    for name in ("../checksums.sha256", "/etc/passwd", "..", ".hidden.nc", "a/b.nc"):
        with pytest.raises(matprops.DatasetError, match="is named by its file name in its folder"):
            catalogue.table_path(name)
        with pytest.raises(matprops.DatasetError, match="is named by its file name in its folder"):
            catalogue.measurement_path(name)


def test_a_model_must_cite_the_data_the_catalogue_holds(small_lab):
    root, seals = small_lab
    data = root / "measurements" / "band_gap-testlab-2027.csv"
    data.write_text(data.read_text() + "# one more line\n")
    overlays._write_checksums_of(root)
    with pytest.raises(matprops.DatasetError, match="cites other data than the catalogue holds"):
        catalogue_at(None, [root], seals).model("band_gap", "testlab-2027")


def test_writing_refuses_a_folder_changed_behind_its_back(small_lab):
    root, seals = small_lab
    (root / "measurements" / "unlisted.csv").write_text("temperature [K]\n300\n")
    with pytest.raises(matprops.DatasetError, match="files differ from its checksum list"):
        matprops.create_release(
            "test-lab-9",
            base="2026.1",
            models={},
            notes="x",
            catalogue=root,
            catalogues=[],
            seals=seals,
        )


# ------------------------------------------------------------------ own releases


def test_a_draft_own_release_over_a_draft_base(small_lab):
    root, seals = small_lab
    catalogue = catalogue_at(None, [root], seals)
    overlays.write_release(catalogue, "test-lab-0", "2026.2", {"band_gap": "testlab-2027"}, "x")
    si = matprops.silicon("test-lab-0", catalogues=[root], seals=seals)
    shipped = matprops.silicon("2026.2")
    assert si.release.base == "2026.2" and not si.release.final
    assert si.models == {**shipped.models, "band_gap": "testlab-2027"}
    assert si.mobility("electron", 300, Nd=1e16) == shipped.mobility("electron", 300, Nd=1e16)
    gap = si.provenance("band_gap")
    assert gap["file"] == "models/band_gap/testlab-2027.toml"
    assert gap["release_choice_from"] == "test-lab-0"
    assert si.provenance("mobility")["release_choice_from"] == "2026.2"
    clone = pickle.loads(pickle.dumps(si))
    assert clone.catalogue is si.catalogue and clone.band_gap(300) == si.band_gap(300)
    # a shipped release may choose an overlay's model too
    chosen = matprops.silicon("2026.2", models={"band_gap": "testlab-2027"}, catalogues=[root])
    assert chosen.band_gap(300) == si.band_gap(300)
    assert chosen.provenance("band_gap")["overridden"] is True
    with pytest.raises(matprops.UnknownReleaseError, match="the base of a new release"):
        overlays.write_release(catalogue, "test-lab-9", "2025.9", {}, "x")
    with pytest.raises(matprops.UnknownModelError, match="testlab-2026"):
        overlays.write_release(catalogue, "test-lab-9", "2026.2", {"band_gap": "testlab-2026"}, "x")


def test_the_environment_names_the_catalogues(small_lab, monkeypatch):
    root, seals = small_lab
    monkeypatch.setenv("MATPROPS_CATALOGUES", str(root))
    assert "testlab-2027" in matprops.models("band_gap")
    si = matprops.silicon(models={"band_gap": "testlab-2027"}, seals=seals)
    assert si.provenance("band_gap")["catalogue"]["name"] == "test-lab"


@pytest.mark.slow
def test_an_own_release_serves_its_models_and_its_bases(lab):
    root, seals, _ = lab
    si = matprops.silicon("test-lab-2", catalogues=[root], seals=seals)
    base = matprops.silicon("2026.1")
    assert si.models["band_gap"] == "testlab-2027" and si.models["mobility"] == "arora-1982"
    assert si.intrinsic_density(300) == base.intrinsic_density(300)  # inherited, as 2026.1
    assert si.band_gap(300) != base.band_gap(300)
    gap = si.provenance("band_gap")
    assert gap["release"] == "test-lab-2" and gap["release_base"] == "test-lab-1"
    assert gap["release_choice_from"] == "test-lab-1"
    assert gap["catalogue"]["name"] == "test-lab" and gap["catalogue"]["path"] == str(root)
    assert gap["release_catalogue"]["description"] == "a fictional lab (tests)"
    assert gap["source"]["type"] == "measurement" and gap["fitted"]["free"] == ["gap_at_zero"]
    # a model inherited from a final base is read as that base sealed it
    assert gap["file"] == "archive/test-lab-1/models/band_gap/testlab-2027.toml"
    density = si.provenance("intrinsic_density")
    assert density["release_choice_from"] == "2026.1"
    assert density["file"].startswith("archive/test-lab-1/")
    mobility = si.provenance("mobility")
    assert mobility["release_choice_from"] == "test-lab-2"
    # an alternative the final base sealed too: its copy, in the overlay's archive
    assert mobility["file"] == "archive/test-lab-1/models/mobility/arora-1982.toml"
    assert "test-lab-2" in matprops.releases(catalogues=[root])


@pytest.mark.slow
def test_a_final_own_release_reproduces_its_reference_and_is_recorded_outside(lab):
    root, seals, digest = lab
    catalogue = catalogue_at(None, [root], seals)
    assert catalogue.release("test-lab-1").final
    assert reference.compare("test-lab-1", catalogue) == []
    assert f"{digest}  test-lab-1  test-lab" in seals.read_text()
    seal = json.loads((root / "releases" / "test-lab-1.seal.json").read_text())
    assert seal["base"] == "2026.1" and seal["models"]["band_gap"] == "testlab-2027"
    assert "measurements/band_gap-testlab-2027.csv" in seal["files"]
    assert not any(path.startswith("..") for path in seal["files"])
    with pytest.raises(matprops.ReleaseFrozenError, match="final already"):
        reference.freeze("test-lab-1", catalogue)
    with pytest.raises(matprops.ReleaseFrozenError, match="is final"):
        reference.regenerate("test-lab-1", catalogue)


def _tampered(root, seals):
    overlays._forget_all(root)
    return catalogue_at(None, [root], seals)


@pytest.mark.slow
def test_tampering_with_a_final_own_release_is_caught(lab_copy):
    root, seals, _ = lab_copy
    archived = root / "archive" / "test-lab-1" / "models" / "band_gap" / "testlab-2027.toml"
    original = archived.read_text()
    archived.write_text(
        original.replace("gap_at_zero]\nvalue = 1.17", "gap_at_zero]\nvalue = 1.18")
    )
    assert archived.read_text() != original
    # the file no longer matches the checksum list
    with pytest.raises(matprops.ChecksumError):
        matprops.silicon("test-lab-1", catalogues=[root], seals=seals)
    # ... re-recorded: no longer what the release sealed
    overlays._write_checksums_of(root)
    with pytest.raises(matprops.FinalityError, match="sealed by final release test-lab-1"):
        _tampered(root, seals).release("test-lab-1")
    # ... and sealed again: not the seal recorded outside the folder
    seal_file = root / "releases" / "test-lab-1.seal.json"
    seal = json.loads(seal_file.read_text())
    relative = "archive/test-lab-1/models/band_gap/testlab-2027.toml"
    seal["files"][relative] = matprops.catalogue.sha256_of(archived)
    seal_file.write_text(json.dumps(seal, indent=1) + "\n")
    overlays._write_checksums_of(root)
    with pytest.raises(matprops.FinalityError, match=f"not the seal recorded .* in {seals}"):
        _tampered(root, seals).release("test-lab-1")


@pytest.mark.slow
def test_a_final_own_release_never_returns_to_draft(lab_copy):
    root, seals, _ = lab_copy
    path = root / "releases" / "test-lab-1.toml"
    path.write_text(path.read_text().replace('status = "final"', 'status = "draft"'))
    overlays._write_checksums_of(root)
    with pytest.raises(matprops.FinalityError, match="a final release never returns to draft"):
        _tampered(root, seals).release("test-lab-1")


@pytest.mark.slow
def test_a_final_own_release_needs_its_seal_line(lab_copy, tmp_path):
    root, _, _ = lab_copy
    elsewhere = tmp_path / "a-colleagues-seals.txt"  # no line for test-lab-1
    with pytest.raises(matprops.FinalityError, match=f"{elsewhere} records no seal"):
        matprops.silicon("test-lab-1", catalogues=[root], seals=elsewhere)


@pytest.mark.slow
def test_the_main_tree_may_move_after_freezing(lab_copy):
    root, seals, _ = lab_copy
    frozen = matprops.silicon("test-lab-1", catalogues=[root], seals=seals).band_gap(300)
    path = root / "models" / "band_gap" / "testlab-2027.toml"
    path.write_text(
        path.read_text().replace("gap_at_zero]\nvalue = 1.17", "gap_at_zero]\nvalue = 1.18")
    )
    overlays._write_checksums_of(root)
    catalogue = _tampered(root, seals)
    assert matprops.Silicon("test-lab-1", catalogue=catalogue).band_gap(300) == frozen
    draft = matprops.Silicon("test-lab-1", models={"band_gap": "testlab-2027"}, catalogue=catalogue)
    assert draft.band_gap(300) == frozen  # the archive's copy: the release sealed this id
    assert reference.compare("test-lab-1", catalogue) == []


@pytest.mark.slow
def test_a_release_frozen_on_a_draft_base_keeps_its_numbers(datasets_with_draft, tmp_path):
    shipped, shipped_catalogue, draft = datasets_with_draft
    root, seals = tmp_path / "lab", tmp_path / "seals.txt"
    matprops.create_catalogue(root, name="draft-lab", description="x")
    top = catalogue_at(shipped, [root], seals)
    overlays.write_release(top, "draft-lab-1", draft, {}, f"{draft} as of today (tests)")
    reference.regenerate("draft-lab-1", top)
    reference.freeze("draft-lab-1", top)
    before = matprops.Silicon("draft-lab-1", catalogue=top).band_gap([100.0, 300.0])
    # the shipped draft moves on
    path = shipped / "models" / "band_gap" / "passler-2002.toml"
    path.write_text(path.read_text().replace("value = 1.1701", "value = 1.1801"))
    shipped_catalogue.write_checksums()
    from matprops.catalogue import store

    store._CATALOGS.pop(shipped, None)
    overlays._forget_all(root)
    top = catalogue_at(shipped, [root], seals)
    assert matprops.Silicon(draft, catalogue=top).band_gap(300.0) != before[1]
    after = matprops.Silicon("draft-lab-1", catalogue=top).band_gap([100.0, 300.0])
    np.testing.assert_array_equal(after.m_as("eV"), before.m_as("eV"))


# ------------------------------------------------------------------ tables, kernels


@pytest.mark.slow
def test_tables_and_kernels_use_the_own_release(lab):
    root, seals, _ = lab
    si = matprops.silicon("test-lab-2", catalogues=[root], seals=seals)
    temperature = np.array([250.0, 275.0, 300.0])  # in arora-1982's range
    table = si.table(["band_gap", "mobility"], T=temperature, Nd=1e16, carrier="electron")
    np.testing.assert_array_equal(table["band_gap"].values, si.band_gap(temperature).m_as("eV"))
    assert json.loads(table["band_gap"].attrs["provenance"])["catalogue"]["name"] == "test-lab"
    assert table.attrs["release"] == "test-lab-2"
    kernel = si.kernel("band_gap")
    np.testing.assert_array_equal(
        kernel(temperature=temperature), si.band_gap(temperature).m_as("eV")
    )
    assert kernel.provenance["catalogue"]["name"] == "test-lab"


# ------------------------------------------------------------------ pickling


@pytest.mark.slow
def test_an_own_release_pickles_as_folders_and_digests(lab):
    root, seals, _ = lab
    si = matprops.silicon("test-lab-1", catalogues=[root], seals=seals)
    data = pickle.dumps(si)
    assert str(root).encode() in data
    clone = pickle.loads(data)
    assert clone.catalogue is si.catalogue  # the shared one of this process
    assert clone.band_gap(300) == si.band_gap(300)


@pytest.mark.slow
def test_a_spawn_pool_verifies_the_overlay(spawn_pool, lab_copy):
    root, seals, _ = lab_copy
    si = matprops.silicon("test-lab-1", catalogues=[root], seals=seals)
    temperature = np.array([50.0, 300.0])
    result = spawn_pool.apply_async(si.band_gap, (temperature,)).get(timeout=120)
    np.testing.assert_array_equal(result.m_as("eV"), si.band_gap(temperature).m_as("eV"))
    kernel = si.kernel("band_gap")
    result = spawn_pool.apply_async(kernel, (), {"temperature": temperature}).get(timeout=120)
    np.testing.assert_array_equal(result, kernel(temperature=temperature))
    # another copy changes behind the client's back: a worker that reads it finds
    # other data than the client pickled
    other = root.parent / "other-copy"
    shutil.copytree(root, other)
    si = matprops.silicon("test-lab-1", catalogues=[other], seals=seals)
    notes = other / "overlay.toml"
    notes.write_text(notes.read_text() + "# edited\n")
    overlays._write_checksums_of(other)
    pending = spawn_pool.apply_async(si.band_gap, (temperature,))
    with pytest.raises(matprops.DatasetError, match="read different overlay data"):
        pending.get(timeout=120)  # an error on the client, not a hang


@pytest.mark.slow
def test_a_dask_cluster_verifies_the_overlay(lab_copy):
    from distributed import Client, LocalCluster

    root, seals, _ = lab_copy
    si = matprops.silicon("test-lab-1", catalogues=[root], seals=seals)
    temperature = np.linspace(50.0, 300.0, 8)
    with (
        LocalCluster(
            n_workers=2,
            threads_per_worker=1,
            processes=True,
            host="127.0.0.1",
            dashboard_address=None,
        ) as cluster,
        Client(cluster) as client,
    ):
        gaps = client.gather(client.map(si.band_gap, np.split(temperature, 4)))
        np.testing.assert_array_equal(
            np.concatenate([g.m_as("eV") for g in gaps]), si.band_gap(temperature).m_as("eV")
        )
        lazy = si.table(["band_gap"], T=temperature, chunks=2)
        np.testing.assert_array_equal(
            lazy["band_gap"].compute().values, si.band_gap(temperature).m_as("eV")
        )
        notes = root / "overlay.toml"
        notes.write_text(notes.read_text() + "# edited\n")
        overlays._write_checksums_of(root)
        client.restart()  # fresh workers read the changed folder
        with pytest.raises(matprops.DatasetError, match="read different overlay data"):
            client.gather(client.map(si.band_gap, np.split(temperature, 4)), errors="raise")
        with pytest.raises(matprops.DatasetError, match="read different overlay data"):
            si.table(["band_gap"], T=temperature, chunks=2)["band_gap"].compute()


def test_the_check_command_checks_an_overlay(small_lab, capsys):
    from matprops.catalogue.__main__ import main

    root, seals = small_lab
    assert main(["--catalogue", str(root), "--seals", str(seals)]) == 0
    assert "all 3 dataset files verified" in capsys.readouterr().out
    (root / "measurements" / "later.csv").write_text("temperature [K]\n300\n")
    (root / "defects").mkdir()
    assert main(["--catalogue", str(root), "--seals", str(seals)]) == 1
    out = capsys.readouterr().out
    assert "later.csv: not listed in checksums.sha256" in out
    assert "an overlay catalogue's defects are not read" in out
    overlays._forget_all(root)
    assert main(["--catalogue", str(root), "--update-checksums", "--seals", str(seals)]) == 1
    out = capsys.readouterr().out
    assert "not listed" not in out and "defects are not read" in out


def test_an_overlay_model_reads_its_own_table_and_no_other_folders(small_lab):
    root, seals = small_lab
    shipped = matprops.silicon().catalogue.root
    (root / "tables").mkdir()
    shutil.copyfile(shipped / "tables" / "green-2008.nc", root / "tables" / "ourlab-optics.nc")
    text = (shipped / "models" / "absorption" / "green-2008.toml").read_text()
    own = text.replace('id = "green-2008"', 'id = "testlab-2027"').replace(
        'table = "green-2008.nc"', 'table = "ourlab-optics.nc"'
    )
    (root / "models" / "absorption").mkdir()
    (root / "models" / "absorption" / "testlab-2027.toml").write_text(own)
    overlays._write_checksums_of(root)
    si = matprops.silicon(models={"absorption": "testlab-2027"}, catalogues=[root], seals=seals)
    shipped_si = matprops.silicon(models={"absorption": "green-2008"})
    assert si.absorption(800, 300) == shipped_si.absorption(800, 300)
    assert si.provenance("absorption")["tables"] == ["tables/ourlab-optics.nc"]
    # a table name that leaves the folder is refused
    (root / "models" / "absorption" / "testlab-2027.toml").write_text(
        own.replace('table = "ourlab-optics.nc"', 'table = "../measurements/x.nc"')
    )
    overlays._write_checksums_of(root)
    overlays._forget_all(root)
    refused = matprops.silicon(
        models={"absorption": "testlab-2027"}, catalogues=[root], seals=seals
    )
    with pytest.raises(matprops.DatasetError, match="is named by its file name in its folder"):
        refused.absorption(800, 300)
    # a table of the shipped data may not be redefined
    shutil.copyfile(shipped / "tables" / "green-2008.nc", root / "tables" / "green-2008.nc")
    overlays._write_checksums_of(root)
    overlays._forget_all(root)
    with pytest.raises(matprops.DatasetError, match="redefines table"):
        catalogue_at(None, [root], seals)


def test_the_consistency_report_covers_an_own_model(small_lab):
    root, seals = small_lab
    arora = matprops.silicon().catalogue.model("mobility", "arora-1982")
    temperature = np.linspace(250.0, 450.0, 9)
    values = arora.select("electron")(
        temperature=temperature, donor_density=1e15, acceptor_density=0.0
    )
    data = {
        "temperature": (temperature, "K"),
        "mobility": (values, "cm^2/(V*s)"),
        "mobility_uncertainty": (0.02 * values, "cm^2/(V*s)"),
    }
    fit = matprops.fit(
        "mobility",
        arora,
        data,
        variant="electron",
        free=["min_mobility"],
        inputs={"Nd": 1e15, "Na": 0},
    )
    stated = {
        "dopant_densities": {"value": "total", "obtained": "INVENTED: the wafer's, as grown"},
        "carrier_densities": {"value": "free", "obtained": "INVENTED: the Hall densities"},
    }
    fit.write(root, "testlab-2027", source=SOURCE, conventions=stated)
    catalogue = catalogue_at(None, [root], seals)
    overlays.write_release(catalogue, "test-lab-0", "2026.2", {"mobility": "testlab-2027"}, "x")
    si = matprops.silicon("test-lab-0", catalogues=[root], seals=seals)
    report = str(si.consistency())
    assert "mobility/testlab-2027: fed the total dopant densities" in report
    applied = si.provenance("mobility")["conventions_applied"]
    assert any("testlab-2027" in entry for entry in applied)
    assert si.provenance("mobility")["fit_conventions"]["carrier_densities"]["value"] == "free"
