"""One units grammar: what the screen and the files print, every input reads; the files'
units are read by pint's default registry, by cf-xarray's registry and by pint-xarray."""

import io
import json

import numpy as np
import pandas as pd
import pint
import pytest

import matprops
from matprops.cli import main


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


@pytest.mark.parametrize(
    "text", ["1e16 cm^-3", "1e16cm-3", "1e16 cm⁻³", "1e16 cm**-3", "1e16 1/cm^3", "1e22 m^-3"]
)
def test_every_spelling_of_a_density_is_read(capsys, text):
    code, out, err = run(
        capsys, "table", "gap_narrowing", "-t", "300", "--Na", text, "--format", "csv"
    )
    assert code == 0, err
    assert pd.read_csv(io.StringIO(out))["acceptor_density [cm^-3]"].tolist() == [1e16]


def test_what_the_screen_prints_the_command_line_accepts(capsys):
    code, out, _ = run(
        capsys, "table", "mobility", "--carrier", "electron", "-t", "25,85degC", "--Nd", "1e15"
    )
    assert code == 0
    heading = next(line for line in out.splitlines() if "[" in line and "cm" in line)
    for units in ("°C", "cm⁻³", "cm²/(V·s)"):
        assert units in out
    # the units as printed go back in
    code, out2, err = run(
        capsys, "table", "mobility", "--carrier", "electron", "-t", "25,85 °C", "--Nd", "1e15 cm⁻³"
    )
    assert code == 0, err
    assert out2.splitlines()[:6] == out.splitlines()[:6], heading
    assert matprops.Q_(1, "cm²/(V·s)").m_as("cm^2/(V*s)") == 1
    assert matprops.Q_(1.5, "Ω·cm").m_as("ohm*cm") == 1.5


CHECK = """
import json, sys
import numpy as np, pint, xarray as xr
path, expected = sys.argv[1], json.loads(sys.argv[2])
plain = pint.UnitRegistry(force_ndarray_like=True)  # pint's default definitions, nothing added
with xr.open_dataset(path) as back:
    back = back.load()
for name, units in expected.items():
    assert back[name].attrs["units"] == units, (name, back[name].attrs["units"], units)
    plain.parse_units(units)
values = back.drop_vars([n for n in back.data_vars if n.endswith("_validity")])
import pint_xarray  # noqa: F401  (pint-xarray with pint's default registry)
quantified = values.pint.quantify(unit_registry=plain)
mobility = quantified["mobility"].pint.to("m^2/(V*s)")
print(json.dumps(np.asarray(mobility.data.magnitude).ravel().tolist()))
import cf_xarray.units as cf  # cf-xarray's registry (it changes pint's application registry,
for units in expected.values():  # hence this separate process)
    cf.units.parse_units(units)
quantified = values.pint.quantify(unit_registry=cf.units)
print(json.dumps(str(quantified["resistivity"].data.units)))
"""


def test_file_units_read_by_pint_cf_xarray_and_pint_xarray(tmp_path):
    import importlib.util
    import subprocess
    import sys

    # looked up, not imported: importing them here would change pint's application
    # registry for every later test (the check runs in its own process)
    for package in ("cf_xarray", "pint_xarray"):
        if importlib.util.find_spec(package) is None:
            pytest.skip(f"{package} is not installed")
    si = matprops.silicon()
    data = si.table(
        ["mobility", "resistivity", "radiative_coefficient", "absorption"],
        carrier="electron",
        T=[300.0, 320.0],
        Nd=[1e15, 1e16],
        wavelength=[800.0],
    )
    path = tmp_path / "t.nc"
    matprops.export.write(data, path)
    expected = {n: v.attrs["units"] for n, v in data.variables.items() if "units" in v.attrs}
    assert expected["mobility"] == "cm^2 V^-1 s^-1" and expected["resistivity"] == "ohm cm"
    done = subprocess.run(
        [sys.executable, "-c", CHECK, str(path), json.dumps(expected)],
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert done.returncode == 0, done.stderr
    lines = done.stdout.splitlines()
    np.testing.assert_allclose(
        json.loads(lines[0]),
        data["mobility"].transpose(*data["mobility"].dims).values.ravel() * 1e-4,
    )
    assert "centimeter" in json.loads(lines[1]) and "ohm" in json.loads(lines[1])
    document = json.loads(matprops.export.to_json(data))
    pint.UnitRegistry().parse_units(document["data_vars"]["resistivity"]["attrs"]["units"])
