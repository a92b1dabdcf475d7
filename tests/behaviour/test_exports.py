"""Files the analyst's tools open: netCDF checked against the CF conventions, CSV read
by pandas with default arguments, JSON with provenance objects; atomic writes."""

import json
import re

import netCDF4
import numpy as np
import pandas as pd
import pytest
import xarray as xr

import matprops
from matprops import export

# --------------------------------------------------------------------------- CF check
# Written from the CF conventions document (CF-1.11) and the UDUNITS grammar, not from
# what matprops writes:
# - 2.6.1: global attribute Conventions naming "CF-<version>";
# - 2.6.2: title, history, source, references describe the file (history: one line
#   per modification, a timestamp first by common practice);
# - 3.1: every dimensional variable carries a units string UDUNITS can parse;
#   3.1.2: temperatures carry units_metadata ("temperature: on_scale" for absolutes);
# - 3.2: long_name describes a variable;
# - 2.5.1 / 5: coordinate variables must not have missing values (no _FillValue);
# - 2.5.1: valid_min/valid_max/valid_range mean data outside are missing, so a model's
#   validity domain must not be written there;
# - 3.4 ancillary_variables name variables of the file.
# UDUNITS units: space-separated products of symbols with optional integer powers;
# UDUNITS-2's grammar (its manual, "Unit syntax") writes a power as "cm3", "cm^3" or
# "cm**3"; matprops writes "cm^-3", "cm^2 V^-1 s^-1" (which pint's default registry
# also reads, unlike "cm-3"); "1" for dimensionless. "/" and "*" are not used.
UDUNITS_SYMBOLS = {
    "K",
    "degC",
    "eV",
    "cm",
    "nm",
    "um",
    "m",
    "g",
    "kg",
    "mol",
    "s",
    "V",
    "A",
    "ohm",
    "W",
    "J",
    "%",
}
UDUNITS_TOKEN = re.compile(r"^([A-Za-z%]+)(\^-?\d+)?$")


def udunits_ok(text):
    if text == "1":
        return True
    tokens = text.split()
    return bool(tokens) and all(
        (m := UDUNITS_TOKEN.match(t)) and m.group(1) in UDUNITS_SYMBOLS for t in tokens
    )


def cf_problems(path):
    problems = []
    with netCDF4.Dataset(path) as nc:
        attrs = nc.__dict__
        if not str(attrs.get("Conventions", "")).startswith("CF-"):
            problems.append("Conventions missing")
        for name in ("title", "history", "source", "references"):
            if not str(attrs.get(name, "")).strip():
                problems.append(f"global {name} missing")
        for line in str(attrs.get("history", "")).splitlines():
            if not re.match(r"^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\dZ: ", line):
                problems.append(f"history line without timestamp: {line!r}")
        for name, var in nc.variables.items():
            vattrs = var.__dict__
            if "long_name" not in vattrs:
                problems.append(f"{name}: no long_name")
            if "flag_values" in vattrs:  # CF 3.5: flags carry meanings, not units
                if len(vattrs.get("flag_meanings", "").split()) != len(vattrs["flag_values"]):
                    problems.append(f"{name}: flag_meanings do not match flag_values")
                if vattrs["flag_values"].dtype != var.dtype:
                    problems.append(f"{name}: flag_values of another type than the variable")
            elif var.dtype != str and var.dtype.kind in "fi":
                units = vattrs.get("units")
                if units is None or not udunits_ok(str(units)):
                    problems.append(f"{name}: units {units!r} not UDUNITS")
            if (
                units_of_temperature(vattrs)
                and vattrs.get("units_metadata") != "temperature: on_scale"
            ):
                problems.append(f"{name}: temperature without units_metadata on_scale")
            for forbidden in ("valid_min", "valid_max", "valid_range"):
                if forbidden in vattrs:
                    problems.append(f"{name}: {forbidden} present")
            if name in nc.dimensions and "_FillValue" in vattrs:
                problems.append(f"{name}: coordinate with _FillValue")
            for other in str(vattrs.get("ancillary_variables", "")).split():
                if other not in nc.variables:
                    problems.append(f"{name}: ancillary variable {other} missing")
    return problems


def units_of_temperature(vattrs):
    return str(vattrs.get("units")) in ("K", "degC")


def test_cf_checker_catches_what_it_should(tmp_path):
    bad = xr.Dataset(
        {"x": ("t", [1.0, 2.0], {"units": "cm**-3", "valid_min": 0.0})},
        coords={"t": ("t", [1.0, 2.0], {"units": "K"})},
    )
    bad.to_netcdf(tmp_path / "bad.nc")
    problems = cf_problems(tmp_path / "bad.nc")
    assert any("Conventions" in p for p in problems)
    assert any("x: units 'cm**-3'" in p for p in problems)
    assert any("valid_min" in p for p in problems)
    assert any("t: temperature without units_metadata" in p for p in problems)
    assert any("_FillValue" in p for p in problems)


def test_netcdf_passes_the_cf_check(si, tmp_path):
    data = si.table(
        ["band_gap", "intrinsic_density", "absorption", "permittivity", "density"],
        T=matprops.Q_([-40, 25, 85], "degC"),
        wavelength=[500.0, 1000.0],
    )
    path = tmp_path / "t.nc"
    export.write(data, path, command="matprops table -t -40,25,85degC")
    assert cf_problems(path) == []
    with xr.open_dataset(path) as back:
        assert re.match(r"^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\dZ$", back.attrs["date_created"])
        first, second = back.attrs["history"].splitlines()
        assert first.endswith(": matprops table -t -40,25,85degC")
        assert "si.table(" in second
        xr.testing.assert_allclose(back.band_gap, data.band_gap)
        assert json.loads(back.band_gap.attrs["provenance"])["model"] == "passler-2002"


def test_comparison_netcdf_passes_the_cf_check(si, tmp_path):
    data = si.compare("band_gap", ["passler-2002", "thurmond-1975"], T=[250.0, 300.0])
    export.write(data, tmp_path / "c.nc")
    assert cf_problems(tmp_path / "c.nc") == []


def test_csv_opens_in_pandas_with_default_arguments(si, tmp_path):
    data = si.table(
        ["band_gap", "absorption"],
        T=matprops.Q_([25, 85], "degC"),
        wavelength=[500.0, 800.0, 1000.0],
    )
    path = tmp_path / "t.csv"
    written = export.write(data, path)
    assert written == [path, tmp_path / "t.provenance.json"]
    frame = pd.read_csv(path)
    assert list(frame.columns) == [
        "temperature [degC]",
        "temperature [K]",
        "wavelength [nm]",
        "band_gap [eV]",
        "absorption [cm^-1]",
        "band_gap_validity",
        "absorption_validity",
    ]
    assert len(frame) == 6
    np.testing.assert_allclose(frame["temperature [degC]"], [25, 25, 25, 85, 85, 85])
    np.testing.assert_allclose(
        frame["absorption [cm^-1]"],
        data.absorption.values.ravel(),
        rtol=1e-9,
    )
    provenance = json.loads((tmp_path / "t.provenance.json").read_text())
    assert provenance["describes"] == "t.csv"
    record = provenance["data_vars"]["absorption"]["attrs"]["provenance"]
    assert record["model"] == "green-2008-franta-2017" and record["tables"]


def test_wide_csv_has_one_row_per_temperature(si, tmp_path):
    data = si.table(["band_gap", "absorption"], T=[300.0, 350.0], wavelength=[500.0, 800.0])
    path = tmp_path / "wide.csv"
    export.write(data, path, layout="wide")
    frame = pd.read_csv(path)
    assert len(frame) == 2
    assert "absorption [cm^-1] at wavelength=800 nm" in frame.columns
    np.testing.assert_allclose(
        frame["absorption [cm^-1] at wavelength=800 nm"],
        data.absorption.values[:, 1],
        rtol=1e-9,
    )
    np.testing.assert_allclose(frame["band_gap [eV]"], data.band_gap.values, rtol=1e-9)


def test_csv_with_provenance_header_is_opt_in(si, tmp_path):
    data = si.table(["band_gap"], T=[300.0])
    path = tmp_path / "h.csv"
    assert export.write(data, path, provenance="header") == [path]
    assert path.read_text().startswith("# Conventions: CF-1.11")
    frame = pd.read_csv(path, comment="#")
    assert frame["band_gap [eV]"].item() == pytest.approx(data.band_gap.item(), rel=1e-9)


def test_json_provenance_is_an_object_and_nan_is_null(si, tmp_path):
    with pytest.warns(matprops.ValidityWarning):
        data = si.table(["absorption"], T=[300.0], wavelength=[200.0, 800.0])
    path = tmp_path / "t.json"
    export.write(data, path)
    document = json.loads(path.read_text())  # strict JSON: no NaN tokens
    variable = document["data_vars"]["absorption"]
    assert isinstance(variable["attrs"]["provenance"], dict)
    assert variable["attrs"]["provenance"]["model"] == "green-2008-franta-2017"
    assert variable["data"][0][0] is None
    back = xr.Dataset.from_dict(document)
    assert back.absorption.values[0, 1] == pytest.approx(data.absorption.values[0, 1])


def test_existing_files_are_refused_unless_overwrite(si, tmp_path):
    data = si.table(["band_gap"], T=[300.0])
    path = tmp_path / "t.nc"
    export.write(data, path)
    before = path.read_bytes()
    with pytest.raises(matprops.InputError, match="'path' must be a new file"):
        export.write(data, path)
    assert path.read_bytes() == before
    export.write(data, path, overwrite=True)
    (tmp_path / "c.provenance.json").write_text("{}")
    with pytest.raises(matprops.InputError, match="c.provenance.json"):
        export.write(data, tmp_path / "c.csv")
    assert not (tmp_path / "c.csv").exists()


@pytest.mark.parametrize(
    "name, format, expected",
    [
        ("T.CSV", None, "csv"),
        ("T.Nc", None, "netcdf"),
        ("t.json", "JSON", "json"),
        ("t.dat", "csv", "csv"),
    ],
)
def test_formats_from_extensions(name, format, expected):
    assert export.format_for(name, format) == expected


@pytest.mark.parametrize(
    "name, format, pattern",
    [
        ("t.csv", "json", "'format' must be csv for a file named"),
        ("t.txt", None, "implied by the file extension"),
        ("t.nc", "xlsx", "one of netcdf, csv, json"),
    ],
)
def test_bad_formats(name, format, pattern):
    with pytest.raises(matprops.InputError, match=pattern):
        export.format_for(name, format)


def test_a_failed_write_leaves_nothing(si, tmp_path, monkeypatch):
    data = si.table(["band_gap"], T=[300.0])

    def crash(self, path, *args, **kwargs):
        with open(path, "wb") as handle:
            handle.write(b"CDF half")
        raise RuntimeError("disk gone")

    monkeypatch.setattr(xr.Dataset, "to_netcdf", crash)
    with pytest.raises(RuntimeError, match="disk gone"):
        export.write(data, tmp_path / "t.nc")
    assert list(tmp_path.iterdir()) == []


def test_missing_folder_is_refused(si, tmp_path):
    with pytest.raises(matprops.InputError, match="existing folder"):
        export.write(si.table(["band_gap"], T=[300.0]), tmp_path / "no" / "t.csv")


def test_lazy_table_writes_the_same_netcdf(si, tmp_path):
    pytest.importorskip("dask")
    t = np.linspace(250.0, 400.0, 20)
    eager = si.table(["absorption"], T=t, wavelength=[500.0, 900.0])
    lazy = si.table(["absorption"], T=t, wavelength=[500.0, 900.0], chunks=6)
    export.write(lazy, tmp_path / "lazy.nc")
    with xr.open_dataset(tmp_path / "lazy.nc") as back:
        np.testing.assert_array_equal(back.absorption, eager.absorption)
    assert cf_problems(tmp_path / "lazy.nc") == []
