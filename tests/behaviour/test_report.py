"""Reports from a user's own wafer spec (not one shipped in datasets/): the screen, the
files, the resistivity-to-doping step, the validity marks, and one-line errors."""

import json
import warnings

import numpy as np
import pytest
import xarray as xr

import matprops
from matprops.cli import main

# A spec as a new user writes it from the analyst's guide (invented numbers)
SPEC = """
title = "Line B wafers at our operating points"
quantities = ["band_gap", "mobility", "resistivity", "intrinsic_lifetime"]

[wafer]
dopant = "boron"
resistivity = "1.5 ohm cm"     # as measured by four-point probe
measured_at = "23 degC"

[layers.emitter]
dopant = "phosphorus"
density = "3e19 cm^-3"

[operating_points]
units = "degC"
winter = -20
stc = 25
summer = 75
"""


@pytest.fixture(scope="module")
def report():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        return matprops.report(SPEC)


def test_the_resistivity_to_doping_step_is_shown_and_right(report):
    si = matprops.silicon()
    step = report.doping
    # the release's own conversion at 23 degC (the public API's default)
    expected = si.doping_from_resistivity(1.5, matprops.Q_(23, "degC"), "boron").m_as("cm^-3")
    assert step.density == pytest.approx(expected, rel=1e-12)
    physics = si.doping_from_resistivity(1.5, "23 degC", "boron", conversion="physics")
    standard = si.doping_from_resistivity(1.5, "23 degC", "boron", conversion="standard")
    both = {step.conversion: step.density, step.other_conversion: step.other_density}
    assert both["physics"] == pytest.approx(physics.m_as("cm^-3"), rel=1e-12)
    assert both["standard"] == pytest.approx(standard.m_as("cm^-3"), rel=1e-12)
    # common practice: at 23 degC the physics and ASTM F723 (Thurber et al., NBS SP
    # 400-64) agree within 10 % for boron near 1e16 cm^-3
    assert both["physics"] == pytest.approx(both["standard"], rel=0.10)
    # the resistivity recomputed at the density: the physics route gives 1.5 back
    kind_density = step.density
    rho = si.resistivity("23 degC", Na=kind_density).m_as("ohm*cm")
    assert step.check_resistivity == pytest.approx(rho, rel=1e-9)
    if step.conversion == "physics":
        assert rho == pytest.approx(1.5, rel=1e-9)
    text = report.text()
    assert "1.5 Ω·cm as measured at 23 °C (296.15 K)" in text
    assert f"acceptor density {step.density:.4g} cm⁻³" in text
    assert "matprops explain doping_from_resistivity" in text


def test_a_chosen_conversion_is_kept():
    spec = SPEC.replace(
        'measured_at = "23 degC"', 'measured_at = "23 degC"\nconversion = "physics"'
    )
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        step = matprops.report(spec).doping
    assert step.conversion == "physics" and step.check_resistivity == pytest.approx(1.5, rel=1e-9)


def test_the_screen_has_sites_points_regions_and_marks(report):
    text = report.text()
    assert max(len(line) for line in text.splitlines()) <= 100
    assert "winter" in text and "stc" in text and "summer" in text
    assert "-- the wafer: Na" in text and "-- emitter: Na" in text
    # the release's lifetime model is fitted at 300 K: -20 degC is an extrapolation
    lifetime = report.dataset["intrinsic_lifetime_validity"]
    if (lifetime == 1).any():
        assert "*" in text and "outside the validity range" in text
    assert "defer to measured data" in " ".join(text.split())  # the caution, where it matters
    data = report.dataset
    na = data["acceptor_density"].sel(region="emitter").item()
    assert na == pytest.approx(report.doping.density)  # the wafer's boron under the emitter
    assert data["donor_density"].sel(region="emitter").item() == 3e19
    si = matprops.silicon()
    t = data["temperature"].values
    np.testing.assert_allclose(
        data["electron_mobility"].sel(region="wafer").values,
        si.mobility("electron", t, Na=report.doping.density).m_as("cm^2/(V*s)"),
        rtol=1e-12,
    )


def test_every_file_kind(report, tmp_path):
    written = []
    for suffix in ("nc", "csv", "json", "png", "svg"):
        written += report.write(tmp_path / f"r.{suffix}")
    assert (tmp_path / "r.provenance.json").exists()
    with xr.open_dataset(tmp_path / "r.nc") as back:
        back = back.load()
    assert json.loads(back.attrs["spec"])["wafer"]["resistivity_ohm_cm"] == 1.5
    assert json.loads(back.attrs["doping_from_resistivity"])["density"] == pytest.approx(
        report.doping.density
    )
    assert "intrinsic_lifetime_validity" in back
    assert back["intrinsic_lifetime"].attrs["ancillary_variables"] == "intrinsic_lifetime_validity"
    assert "defer to measured data" in back.attrs["comment"]
    header = (tmp_path / "r.csv").read_text().splitlines()[0]
    assert "intrinsic_lifetime_validity" in header


def test_report_command_and_demo_share_the_format(tmp_path, capsys):
    path = tmp_path / "line-b.toml"
    path.write_text(SPEC)
    assert main(["report", str(path)]) == 0
    out = capsys.readouterr().out
    assert "Line B wafers" in out and "INVENTED" not in out
    assert main(["report", str(path), "-o", str(tmp_path / "b.nc")]) == 0
    assert main(["demo"]) == 0
    out = capsys.readouterr().out
    assert "INVENTED" in out and "1.2 Ω·cm as measured" in out


@pytest.mark.parametrize(
    "change, message",
    [
        (('measured_at = "23 degC"', "measured_at = 23"), "wafer.measured_at' needs its unit"),
        (('dopant = "boron"', 'dopant = "bohr"'), "wafer.dopant' must be one of boron"),
        (("[wafer]", "[wafer]\nresistivty = 2"), "did you mean 'resistivity'"),
        (('resistivity = "1.5 ohm cm"', 'resistivity = "1.5 eV"'), "wafer.resistivity' must be"),
        (("winter = -20", "winter = -400"), "operating_points.winter"),
    ],
)
def test_spec_errors_name_the_field_in_one_line(tmp_path, capsys, change, message):
    path = tmp_path / "bad.toml"
    path.write_text(SPEC.replace(*change))
    assert main(["report", str(path)]) == 2
    err = capsys.readouterr().err
    assert message in err and len(err.strip().splitlines()) == 1 and "bad.toml" in err


def test_density_instead_of_resistivity_and_a_dict_spec():
    report = matprops.report(
        {
            "title": "n-type wafer",
            "quantities": ["band_gap", "resistivity"],
            "wafer": {"dopant": "phosphorus", "density": "5e15 cm-3"},
            "operating_points": {"stc": "25 degC", "hot": "358.15 K"},
        }
    )
    assert report.doping.density == 5e15 and report.doping.resistivity is None
    assert "phosphorus, donor density 5e+15 cm⁻³ (as given)" in report.text()
