"""The catalogue: every data file validates; broken or tampered files are refused."""

import re

import pytest

import matprops
from matprops.catalogue.store import Catalogue, default_catalogue


def all_models():
    catalogue = default_catalogue()
    return [(q, m) for q in catalogue.quantities() for m in catalogue.model_ids(q)]


@pytest.mark.parametrize("quantity, model_id", all_models())
def test_every_model_file_loads_with_source_and_origin(quantity, model_id):
    model = default_catalogue().model(quantity, model_id)
    record = model.provenance()
    assert record["source"]["authors"] and record["source"]["year"] > 1900
    source = record["source"]
    assert source["title"] and (
        source["journal"] if source["type"] == "article" else source["publisher"]
    )
    assert len(record["obtained"]) > 40  # says how the numbers were obtained
    assert record["sha256"]
    assert model_id in repr(model)


def test_provenance_has_release_and_citation(si):
    record = si.provenance("intrinsic_density")
    assert record["release"] == matprops.releases()[-1] and record["model"] == "couderc-2014"
    assert record["doi"] == "10.1063/1.4867776"
    assert record["validity"]["temperature"] == {"min": 77.0, "max": 500.0, "units": "K"}
    assert record["overridden"] is False


def test_override_is_recorded():
    si = matprops.silicon(models={"band_gap": "thurmond-1975"})
    record = si.provenance("band_gap")
    assert record["overridden"] and record["release_choice"] == "passler-2002"
    assert "*" in repr(si)


def test_cite_bibtex_lists_every_source_once(si):
    text = si.cite()
    dois = set()
    for quantity in si.models:
        record = si.provenance(quantity)
        # a source without a DOI (a data monograph, an old letter) counts by its title
        dois.add(record["doi"] or record["source"]["title"])
        dois.update(s["doi"] or s["title"] for s in record.get("additional_sources", []))
    assert text.count("@article{") + text.count("@book{") == len(dois)
    for doi in dois:
        if doi.startswith("10."):
            assert text.count(f"doi = {{{doi}}}") == 1
    assert "@article{franta-2017," in text  # a combined model cites both its sources


def test_a_book_is_cited_as_a_book():
    si = matprops.silicon(models={"intrinsic_density": "boltzmann"})
    text = si.cite(quantities=["intrinsic_density"])
    assert "@book{sze-2007," in text and "publisher = {Wiley-Interscience}" in text
    assert "journal" not in text.split("@book{sze-2007,")[1].split("}\n")[0]
    record = si.provenance("intrinsic_density")["source"]
    assert record["type"] == "book" and "journal" not in record


def test_obtained_fields_are_traceable():
    # every coefficient's origin names a document, a secondary source, or says "recalled";
    # never an anonymous "public source code"
    catalogue = default_catalogue()
    for quantity, model_id in all_models():
        obtained = catalogue.model(quantity, model_id).obtained.lower()
        assert "public source code" not in obtained
        assert any(
            word in obtained
            for word in (
                "recalled",
                "read in",
                "transcribed",
                "tabulated values",
                "no coefficients",
                "combination",
                "abstract",
            )
        ), model_id


def test_model_as_xarray_dataset(si):
    data = si.model("band_gap").to_dataset()
    assert float(data["theta"]) == 446 and data["theta"].attrs["units"] == "K"
    assert data.attrs["model"] == "passler-2002"


def test_kernel_door_is_plain_numpy(si):
    import numpy as np

    kernel = si.kernel("intrinsic_density")
    t = np.linspace(250, 350, 5)
    np.testing.assert_allclose(
        kernel(temperature=t), si.intrinsic_density(t).m_as("cm^-3"), rtol=1e-15
    )


def _rewrite(root, relative, old, new):
    path = root / relative
    path.write_text(path.read_text().replace(old, new))
    return path


def test_tampered_file_is_refused(datasets_copy):
    root, catalogue = datasets_copy
    _rewrite(root, "models/band_gap/passler-2002.toml", "446", "447")
    with pytest.raises(
        matprops.ChecksumError, match=r"passler-2002\.toml: sha256 .* does not match"
    ):
        catalogue.model("band_gap", "passler-2002")


def test_unlisted_file_is_refused(datasets_copy):
    root, catalogue = datasets_copy
    source = root / "models/band_gap/alex-1996.toml"
    (root / "models/band_gap/extra-2020.toml").write_text(source.read_text())
    with pytest.raises(matprops.ChecksumError, match="no checksum recorded"):
        catalogue.model("band_gap", "extra-2020")


@pytest.mark.parametrize(
    "old, new, message",
    [
        ('units = "eV/K"', 'units = "nm"', r"coefficients.alpha: units 'nm' have dimension"),
        ('units = "eV/K"', 'units = "glorbs"', r"coefficients.alpha: units 'glorbs' do not parse"),
        ('doi = "10.1149/1.2134410"\n', "", r"missing required field 'source.doi'"),
        ('obtained = """', 'notes2 = """', r"unknown field 'notes2'"),
        (
            "beta = { value = 636",
            "gamma = { value = 636",
            r"missing \['beta'\], unexpected \['gamma'\]",
        ),
        ("max = 1000", "max = -1", r"validity.temperature: min must be below max"),
        ('kernel = "band_gap.varshni"', 'kernel = "band_gap.nothing"', r"not a declared kernel"),
        ('id = "thurmond-1975"', 'id = "Thurmond 1975"', r"field 'id' is 'Thurmond 1975'"),
        ("[source]", "[source", r"not valid TOML"),
    ],
)
def test_incomplete_or_wrong_file_names_file_and_field(datasets_copy, old, new, message):
    root, catalogue = datasets_copy
    _rewrite(root, "models/band_gap/thurmond-1975.toml", old, new)
    catalogue.write_checksums()  # a deliberate (but wrong) edit: the checksum is not the issue
    with pytest.raises(matprops.DatasetError, match=message) as info:
        catalogue.model("band_gap", "thurmond-1975")
    assert "thurmond-1975.toml" in str(info.value)


@pytest.mark.parametrize(
    "edit, message",
    [
        (
            ("[source]\n", '[source]\ntype = "thesis"\n'),
            r"source.type' must be one of article, book",
        ),
        (
            ('journal = "Journal of the Electrochemical Society"\n', 'type = "book"\n'),
            r"missing required field source.'publisher'",
        ),
    ],
)
def test_source_type_is_checked(datasets_copy, edit, message):
    root, catalogue = datasets_copy
    _rewrite(root, "models/band_gap/thurmond-1975.toml", *edit)
    catalogue.write_checksums()
    with pytest.raises(matprops.DatasetError, match=message):
        catalogue.model("band_gap", "thurmond-1975")


REGION = """
[[validity_region]]
input = "temperature"
limit = "max"
varies_with = "{by}"
points = {points}
units = ["nm", "K"]
reason = "a test"
"""


@pytest.mark.parametrize(
    "by, points, message",
    [
        ("wavelength", "[[900, 300], [800, 400]]", r"the wavelength values must increase"),
        ("pressure", "[[900, 300], [1000, 400]]", r"the kernel has no input 'pressure'"),
        ("wavelength", "[[900, 300]]", r"at least two"),
    ],
)
def test_validity_region_is_checked(datasets_copy, by, points, message):
    root, catalogue = datasets_copy
    path = root / "models/absorption/rajkanan-1979.toml"
    path.write_text(path.read_text() + REGION.format(by=by, points=points))
    catalogue.write_checksums()
    with pytest.raises(matprops.DatasetError, match=message):
        catalogue.model("absorption", "rajkanan-1979")


def test_missing_checksum_list_is_refused(datasets_copy):
    root, _ = datasets_copy
    (root / "checksums.sha256").unlink()
    with pytest.raises(matprops.DatasetError, match="checksum list is missing"):
        Catalogue(root).release("2026.1")


def test_catalog_command_verifies_everything(capsys):
    from matprops.catalogue.__main__ import main

    assert main([]) == 0
    out = capsys.readouterr().out
    assert re.search(r"all \d+ dataset files verified", out)
    listed = default_catalogue().checksums()
    assert f"all {len(listed)} dataset files" in out  # models, tables, releases, scenarios
    assert any(name.startswith("scenarios/") for name in listed)


def _alter_table(path):
    """Change one number inside a netCDF table: still a readable file, other data."""
    import netCDF4

    with netCDF4.Dataset(path, "a") as handle:
        variable = handle.variables["absorption_coefficient"]
        variable[0] = variable[0] * 2


def test_model_dataset_refuses_a_tampered_table(datasets_copy):
    # before: to_dataset() opened the table without its checksum check
    root, catalogue = datasets_copy
    _alter_table(root / "tables/green-2008.nc")
    with pytest.raises(matprops.ChecksumError, match=r"green-2008\.nc: sha256"):
        catalogue.model("absorption", "green-2008").to_dataset()


def _check(root, capsys):
    from matprops.catalogue.__main__ import main

    status = main(["--root", str(root)])
    return status, capsys.readouterr().out


def _problems(out):
    return [line for line in out.splitlines() if line.startswith("error: ")]


def test_check_command_fails_on_a_corrupted_table(datasets_copy, capsys):
    root, _ = datasets_copy
    _alter_table(root / "tables/green-2008.nc")
    status, out = _check(root, capsys)
    assert status == 1 and "verified" not in out
    assert len(_problems(out)) == 1 and "tables/green-2008.nc: sha256" in out


def test_check_command_fails_on_a_missing_table(datasets_copy, capsys):
    root, _ = datasets_copy
    (root / "tables/franta-2017.nc").unlink()
    status, out = _check(root, capsys)
    assert status == 1 and "tables/franta-2017.nc: listed in checksums.sha256 but missing" in out
    assert len(_problems(out)) == 1  # once, though three models read it


@pytest.mark.parametrize(
    "relative, change, expected",
    [
        (
            "scenarios/two-site-modules.toml",
            lambda t: t.replace("dawn = 12.0", "dawn = 13.0"),
            "two-site-modules.toml: sha256",
        ),
        (
            "releases/2026.1.reference.json",
            lambda t: t.replace("1.", "2.", 1),
            "2026.1.reference.json: sha256",
        ),
        ("models/band_gap/alex-1996.toml", lambda t: t + "\n", "alex-1996.toml: sha256"),
    ],
)
def test_check_command_covers_every_kind_of_file(datasets_copy, capsys, relative, change, expected):
    root, _ = datasets_copy
    path = root / relative
    path.write_text(change(path.read_text()))
    status, out = _check(root, capsys)
    assert status == 1 and expected in out


def test_check_command_fails_on_unlisted_files_and_bad_references(datasets_copy, capsys):
    root, catalogue = datasets_copy
    newest = catalogue.newest_release_id()  # a draft naming a model that does not exist
    text = (root / f"releases/{newest}.toml").read_text()
    text = text.replace(f'release = "{newest}"', 'release = "2030.1"')
    text = text.replace('status = "final"', 'status = "draft"')
    text = text.replace('band_gap = "passler-2002"', 'band_gap = "passler-2003"')
    (root / "releases/2030.1.toml").write_text(text)
    (root / "releases/2030.1.reference.json").write_text("{}")
    catalogue.write_checksums()
    (root / "scenarios/extra.toml").write_text("name = 'extra'\n")
    status, out = _check(root, capsys)
    assert status == 1
    assert "models.band_gap = 'passler-2003' does not exist" in out
    assert "scenarios/extra.toml: not listed in checksums.sha256" in out


def test_check_command_fails_on_an_empty_or_missing_folder(tmp_path, capsys):
    # before: "all dataset files verified" for an empty folder
    empty = tmp_path / "datasets"
    empty.mkdir()
    status, out = _check(empty, capsys)
    assert status == 1 and "checksum list is missing" in out
    (empty / "checksums.sha256").write_text("")
    status, out = _check(empty, capsys)
    assert status == 1 and "models: folder is missing" in out
    (empty / "models").mkdir()
    (empty / "releases").mkdir()
    status, out = _check(empty, capsys)
    assert status == 1 and "no model files" in out and "no release files" in out
    status, out = _check(tmp_path / "nowhere", capsys)
    assert status == 1 and "does not exist" in out


def test_scenario_is_read_verified_and_checked(datasets_copy):
    root, catalogue = datasets_copy
    scenario = catalogue.scenario("two-site-modules")
    assert scenario.invented is True and scenario.wafer.dopant == "boron"
    _rewrite(root, "scenarios/two-site-modules.toml", "invented = true", "invented = 1")
    with pytest.raises(matprops.ChecksumError):
        catalogue.scenario("two-site-modules")
    catalogue.write_checksums()
    with pytest.raises(matprops.DatasetError, match="field 'invented' must be true or false"):
        catalogue.scenario("two-site-modules")
    _rewrite(root, "scenarios/two-site-modules.toml", "invented = 1", "invented = true")
    _rewrite(root, "scenarios/two-site-modules.toml", "dawn = 12.0", "dawn = nan")
    catalogue.write_checksums()
    with pytest.raises(
        matprops.DatasetError, match=r"field 'operating_points.hot-site.dawn' must be a temperature"
    ):
        catalogue.scenario("two-site-modules")


def test_model_catalogue_in_docs_is_generated_from_datasets():
    # docs/models.md must be exactly what `python -m matprops.outputs.modeldocs` writes
    from pathlib import Path

    from matprops.outputs.modeldocs import render

    committed = Path(__file__).resolve().parents[2] / "docs" / "models.md"
    assert committed.read_text() == render(), "regenerate: python -m matprops.outputs.modeldocs"


# ------------------------------------------------------------------ the strict schema


@pytest.mark.parametrize(
    "old, new, message",
    [
        # unknown or misspelt keys, at every level (a misspelt validity section used to
        # remove range checking without a word)
        ('notes = "', 'note = "x"\nnotes = "', r"unknown field 'note' .*did you mean 'notes'\?"),
        (
            "[validity.temperature]",
            "[validty.temperature]",
            r"unknown field 'validty' .*did you mean 'validity'\?",
        ),
        ("max = 1000", "maks = 1000", r"unknown field 'validity.temperature.maks'"),
        (
            'beta = { value = 636, units = "K" }',
            'beta = { value = 636, unit = "K" }',
            r"unknown field 'coefficients.beta.unit' .*did you mean 'units'\?",
        ),
        ("[source]", "[sauce]", r"unknown field 'sauce'"),
        ('journal = "', 'jornal = "', r"unknown field 'source.jornal'"),
        # numbers that are not finite: coefficient, limit, uncertainty, list entry
        ("value = 636", "value = nan", r"field 'coefficients.beta.value' must be a finite number"),
        ("max = 1000", "max = inf", r"field 'validity.temperature.max' must be a finite number"),
        ("min = 0", "min = -inf", r"field 'validity.temperature.min' must be a finite number"),
        (
            'value = 4.73e-4, units = "eV/K"',
            'value = 4.73e-4, units = "eV/K", uncertainty = nan',
            r"field 'coefficients.alpha.uncertainty' must be a finite number",
        ),
        (
            "value = 1.17,",
            "value = [1.17, nan],",
            r"field 'coefficients.gap_at_zero.value\[1\]' must be a finite number",
        ),
        # wrong kinds of value
        ("year = 1975", 'year = "1975"', r"field 'source.year' must be an integer"),
        ('kind = "closed-form"', 'kind = "closed form"', r"field 'kind' must be one of"),
        (
            "value = 636",
            'value = "636"',
            r"field 'coefficients.beta.value' must be a finite number",
        ),
        (
            'authors = ["C. D. Thurmond"]',
            'authors = "C. D. Thurmond"',
            r"field 'source.authors' must be a list of text",
        ),
    ],
)
def test_model_file_schema(datasets_copy, old, new, message):
    root, catalogue = datasets_copy
    path = _rewrite(root, "models/band_gap/thurmond-1975.toml", old, new)
    assert new in path.read_text()
    catalogue.write_checksums()
    with pytest.raises(matprops.DatasetError, match=message) as info:
        catalogue.model("band_gap", "thurmond-1975")
    assert str(path) in str(info.value)


def test_missing_required_field_is_named(datasets_copy):
    import re

    root, catalogue = datasets_copy
    path = root / "models/band_gap/thurmond-1975.toml"
    path.write_text(re.sub(r'obtained = """.*?"""\n', "", path.read_text(), flags=re.DOTALL))
    catalogue.write_checksums()
    with pytest.raises(
        matprops.DatasetError,
        match=r"thurmond-1975.toml: missing required "
        r"field 'obtained'",
    ):
        catalogue.model("band_gap", "thurmond-1975")


@pytest.mark.parametrize(
    "old, new, message",
    [
        (
            'status = "final"',
            'status = "draft"\nstatuss = "draft"',
            r"unknown field 'statuss' .*did you mean 'status'\?",
        ),
        ('date = "2026-12-02"\n', "", r"missing required field 'date'"),
        (
            'status = "final"',
            'status = "frozen"',
            r"field 'status' must be one of draft, final, got 'frozen'",
        ),
        ('band_gap = "passler-2002"', "band_gap = 2002", r"field 'models.band_gap' must be text"),
        ('date = "2026-12-02"', 'date = "1 December"', r"field 'date' must be a date"),
    ],
)
def test_release_file_schema(datasets_copy, old, new, message):
    root, catalogue = datasets_copy
    path = _rewrite(root, "releases/2026.1.toml", old, new)
    assert new in path.read_text()
    catalogue.write_checksums()
    with pytest.raises(matprops.DatasetError, match=message) as info:
        catalogue.release("2026.1")
    assert str(path) in str(info.value)


def test_schema_accepts_every_shipped_file():
    import tomllib

    from matprops.catalogue.schema import MODEL, RELEASE, validate

    catalogue = default_catalogue()
    for path in sorted((catalogue.root / "models").rglob("*.toml")):
        validate(path, tomllib.loads(path.read_text()), MODEL)
    for path in sorted((catalogue.root / "releases").glob("*.toml")):
        validate(path, tomllib.loads(path.read_text()), RELEASE)


# ------------------------------------------------------------------ where the data are


def test_datasets_variable_pointing_nowhere_is_named(tmp_path, monkeypatch):
    # before: a bare IndexError from the empty list of releases
    from matprops.catalogue.store import datasets_root

    monkeypatch.setenv("MATPROPS_DATASETS", str(tmp_path / "nowhere"))
    with pytest.raises(
        matprops.DatasetError,
        match=r"nowhere: datasets folder does not "
        r"exist; set MATPROPS_DATASETS .*\(MATPROPS_DATASETS='.*nowhere'\)",
    ):
        datasets_root()
    monkeypatch.chdir(tmp_path)
    monkeypatch.setenv("MATPROPS_DATASETS", "data")
    with pytest.raises(
        matprops.DatasetError,
        match=r"MATPROPS_DATASETS='data', a relative "
        r"path resolved against the working folder",
    ):
        datasets_root()


def test_empty_datasets_folder_is_named(tmp_path, monkeypatch):
    monkeypatch.setenv("MATPROPS_DATASETS", str(tmp_path))
    with pytest.raises(
        matprops.DatasetError,
        match=r"releases: folder is missing: .* \(set "
        r"by MATPROPS_DATASETS\) is not a matprops datasets folder",
    ):
        matprops.Silicon(catalogue=Catalogue())
    (tmp_path / "releases").mkdir()
    with pytest.raises(matprops.DatasetError, match=r"releases: no release file"):
        matprops.Silicon(catalogue=Catalogue())


def test_relative_datasets_path_is_resolved_once(datasets_copy, monkeypatch, tmp_path):
    root, _ = datasets_copy
    monkeypatch.chdir(root.parent)
    monkeypatch.setenv("MATPROPS_DATASETS", root.name)
    catalogue = Catalogue()
    assert catalogue.root == root and catalogue.root.is_absolute()
    monkeypatch.chdir(tmp_path.parent)  # elsewhere: the catalogue still finds its data
    assert matprops.Silicon(catalogue=catalogue).band_gap(300).m_as("eV") > 1
    monkeypatch.setenv("MATPROPS_DATASETS", "")  # empty counts as unset
    assert Catalogue().root == default_catalogue().root


def test_missing_release_file_is_named(datasets_copy):
    root, catalogue = datasets_copy
    for path in (root / "releases").glob("*.toml"):
        path.unlink()
    with pytest.raises(matprops.DatasetError, match=r"releases: no release file"):
        matprops.Silicon(catalogue=catalogue)


def test_malformed_release_file_is_named(datasets_copy):
    # before: tomllib's error with no file name
    root, catalogue = datasets_copy
    newest = catalogue.newest_release_id()
    _rewrite(root, f"releases/{newest}.toml", "[models]", "[models")
    catalogue.write_checksums()
    with pytest.raises(matprops.DatasetError, match=rf"{newest}\.toml: not valid TOML"):
        matprops.Silicon(catalogue=catalogue)


def test_bibtex_keys_are_unique(si):
    # two parts of one paper (Klaassen 1992 I and II, Altermatt 2006 I and II) must not
    # share a BibTeX key: a duplicate key silently drops an entry in LaTeX
    keys = [key for key, _ in si.sources()]
    assert len(keys) == len(set(keys))
    assert "klaassen-1992a" in keys and "klaassen-1992b" in keys
    assert "astm-1999" in keys  # an organisation is keyed by its first word


# ----------------------------------------------------------------- fit conventions


def _drop_section(text, section):
    """The model file's text without the tables [section.*] (up to the next other table)."""
    import re

    return re.sub(
        rf"^\[{re.escape(section)}(\.[a-z_]+)?\]\n(?:(?!^\[(?!{re.escape(section)}[.\]])).*\n)*",
        "",
        text,
        flags=re.MULTILINE,
    )


@pytest.mark.parametrize(
    "quantity, model_id",
    [
        ("mobility", "klaassen-1992"),
        ("gap_narrowing", "schenk-1998"),
        ("ionisation", "altermatt-2006"),
        ("intrinsic_lifetime", "richter-2012"),
        ("radiative_coefficient", "trupke-2003"),
        ("free_carrier_absorption", "soref-1987"),
        ("high_field_mobility", "canali-1975"),
    ],
)
def test_a_composed_model_file_must_state_its_fit_conventions(datasets_copy, quantity, model_id):
    root, catalogue = datasets_copy
    path = root / f"models/{quantity}/{model_id}.toml"
    text = path.read_text()
    assert "[fit_conventions." in text
    path.write_text(_drop_section(text, "fit_conventions"))
    catalogue.write_checksums()
    with pytest.raises(matprops.DatasetError, match=r"missing section \[fit_conventions\]"):
        catalogue.model(quantity, model_id)


def test_every_main_tree_model_of_a_composed_quantity_has_its_conventions():
    from matprops.catalogue.conventions import REQUIRED

    catalogue = matprops.catalogue.default_catalogue()
    for quantity, names in REQUIRED.items():
        for model_id in catalogue.model_ids(quantity):
            conventions = catalogue.model(quantity, model_id).conventions
            assert conventions.recorded, (quantity, model_id)
            assert set(names) <= set(conventions), (quantity, model_id)
            for entry in conventions.values():
                assert entry.obtained.strip()


def test_a_final_release_archive_without_conventions_composes_as_it_did():
    # archived 2026.1 files were valid when sealed: their conventions are synthesised from
    # the older fields (a mobility's dopant_densities), everything else "not known"
    si = matprops.silicon(release="2026.1")
    conventions = si.model("mobility").conventions
    assert not conventions.recorded
    assert conventions["dopant_densities"].value == "ionised"
    assert conventions["carrier_densities"].value == "not known"
    assert si.provenance("mobility")["file"].startswith("archive/2026.1/")


BLOCK = '[fit_conventions.dopant_densities]\nvalue = "total"\n'


@pytest.mark.parametrize(
    "old, new, message",
    [
        (BLOCK, BLOCK.replace('"total"', '"all"'), r"dopant_densities.value must be one of"),
        (
            BLOCK,
            "[fit_conventions.doping]\nvalue = 'total'\nobtained = 'x'\n\n" + BLOCK,
            r"unknown field 'fit_conventions.doping'",
        ),
        (
            BLOCK,
            BLOCK.replace('"total"', "3.0"),
            r"dopant_densities.value must be text",
        ),
        (
            'id = "klaassen-1992"\n',
            'id = "klaassen-1992"\ndopant_densities = "total"\n',
            r"'dopant_densities': stated in \[fit_conventions\]",
        ),
    ],
)
def test_fit_conventions_schema(datasets_copy, old, new, message):
    root, catalogue = datasets_copy
    path = root / "models/mobility/klaassen-1992.toml"
    text = path.read_text()
    assert old in text
    path.write_text(text.replace(old, new, 1))
    catalogue.write_checksums()
    with pytest.raises(matprops.DatasetError, match=message):
        catalogue.model("mobility", "klaassen-1992")


def test_a_convention_must_say_where_it_was_read(datasets_copy):
    import re

    root, catalogue = datasets_copy
    path = root / "models/mobility/klaassen-1992.toml"
    text = re.sub(
        r'(\[fit_conventions.dopant_densities\]\nvalue = "total"\nobtained = )""".*?"""',
        r'\1" "',
        path.read_text(),
        flags=re.DOTALL,
    )
    path.write_text(text)
    catalogue.write_checksums()
    with pytest.raises(matprops.DatasetError, match=r"obtained must say where"):
        catalogue.model("mobility", "klaassen-1992")


def test_a_convention_naming_a_model_must_name_one_that_exists(datasets_copy):
    root, catalogue = datasets_copy
    path = root / "models/ionisation/altermatt-2006.toml"
    text = path.read_text()
    path.write_text(text.replace('value = "green-1990"', 'value = "green-1991"'))
    catalogue.write_checksums()
    with pytest.raises(matprops.DatasetError, match=r"neither a model of 'densities_of_states'"):
        catalogue.model("ionisation", "altermatt-2006")


def test_a_numeric_convention_needs_units_and_temperature(datasets_copy):
    root, catalogue = datasets_copy
    path = root / "models/intrinsic_lifetime/richter-2012.toml"
    text = path.read_text()
    path.write_text(text.replace('units = "cm^-3"\ntemperature = 300\n', 'units = "cm^-3"\n'))
    catalogue.write_checksums()
    with pytest.raises(matprops.DatasetError, match=r"needs the temperature"):
        catalogue.model("intrinsic_lifetime", "richter-2012")
    path.write_text(text.replace('units = "cm^-3"\ntemperature = 300\n', "temperature = 300\n"))
    catalogue.write_checksums()
    with pytest.raises(matprops.DatasetError, match=r"needs its units"):
        catalogue.model("intrinsic_lifetime", "richter-2012")


def test_former_american_spellings_are_still_served():
    # identifiers are British (catalogue); the former names stay as aliases for callers
    import matprops.catalogue as layer
    from matprops.catalogue import overlay, store

    assert layer.Catalog is layer.Catalogue and layer.default_catalog is layer.default_catalogue
    assert store.Catalog is store.Catalogue
    assert store.default_catalog is store.default_catalogue
    assert store.catalog_at is store.catalogue_at
    assert overlay.catalog_at is overlay.catalogue_at
    si = matprops.Silicon(catalog=store.default_catalogue())
    assert si.catalog is si.catalogue
    assert si.band_gap(300) == matprops.silicon().band_gap(300)
