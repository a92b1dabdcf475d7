"""The command line and the import cost."""

import subprocess
import sys

import numpy as np
import pytest
import xarray as xr

from matprops.cli import main, parse_grid


def test_help(capsys):
    with pytest.raises(SystemExit) as info:
        main(["--help"])
    assert info.value.code == 0
    assert "table" in capsys.readouterr().out


def test_table_with_celsius(capsys):
    assert main(["table", "band_gap", "intrinsic_density", "--temperature=-40,25,85degC"]) == 0
    out = capsys.readouterr().out
    assert "298.15" in out and "band_gap [eV]" in out and "couderc-2014" in out


def test_temperature_ranges():
    np.testing.assert_allclose(parse_grid("250:400:50 K").m_as("K"), [250, 300, 350, 400])
    np.testing.assert_allclose(parse_grid("300"), [300])


def test_bad_input_is_a_clean_error(capsys):
    assert main(["table", "--temperature=-400degC"]) == 2
    assert "'temperature' must be > 0 K" in capsys.readouterr().err
    assert main(["table", "--temperature=300 glorbs"]) == 2
    assert "'--temperature' expects" in capsys.readouterr().err
    assert main(["table", "--temperature=300 m"]) == 2
    assert "'temperature' expects a quantity in K" in capsys.readouterr().err
    assert main(["table", "--temperature=300", "--model", "band_gap=passler-2003"]) == 2
    assert "Did you mean 'passler-2002'" in capsys.readouterr().err
    assert main(["table", "--temperature=300", "--release", "2030.1"]) == 2
    assert "known: 2026.1" in capsys.readouterr().err


def test_export_netcdf_and_csv(tmp_path):
    nc = tmp_path / "t.nc"
    assert main(["table", "-t", "250:350:50 K", "-o", str(nc)]) == 0
    with xr.open_dataset(nc) as data:
        assert data.attrs["Conventions"] == "CF-1.11"
        assert data["intrinsic_density"].attrs["units"] == "cm-3"
        assert data["band_gap"].attrs["model"] == "passler-2002"
        assert data.temperature.attrs["units_metadata"] == "temperature: on_scale"
    csv = tmp_path / "t.csv"
    assert main(["demo", "-o", str(csv)]) == 0
    text = csv.read_text()
    assert "# release: 2026.1" in text and "temperature [K]" in text
    assert not list(tmp_path.glob(".*tmp*"))  # atomic writes leave no temporary file


def test_demo_marks_invented_data(capsys):
    assert main(["demo"]) == 0
    assert "INVENTED" in capsys.readouterr().out


def test_listing_commands(capsys):
    for argv in (["models"], ["models", "band_gap"], ["releases"], ["cite"],
                 ["provenance", "density"]):
        assert main(argv) == 0
    out = capsys.readouterr().out
    assert "thurmond-1975" in out and "@article{passler-2002" in out


def test_import_is_light():
    # xarray, netCDF4, dask, matplotlib and pint load on first use, not on import
    code = ("import sys, matprops; heavy = [m for m in ('xarray', 'netCDF4', 'dask', "
            "'matplotlib', 'pint', 'scipy') if m in sys.modules]; print(heavy)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"


def test_optical_table(tmp_path, capsys):
    assert main(["table", "absorption", "refractive_index", "-t", "25,85degC",
                 "-w", "800:1100:100 nm"]) == 0
    out = capsys.readouterr().out
    assert "absorption_coefficient [cm-1]" in out and "green-2008-franta-2017" in out
    path = tmp_path / "optics.nc"
    assert main(["table", "-t", "300", "-w", "1000", "-o", str(path)]) == 0
    with xr.open_dataset(path) as data:
        assert data.absorption_coefficient.dims == ("wavelength", "temperature")
        assert data.absorption_coefficient.values.item() == pytest.approx(64.0, rel=1e-3)
    assert main(["table", "absorption", "-t", "300"]) == 2
    assert "'wavelength' must be given" in capsys.readouterr().err
