"""The worked example of docs/ (a fictional lab, INVENTED data) runs from its measurements
to a frozen own release, its tables and a wafer report made with it."""

import importlib.util
from pathlib import Path

import pytest

import matprops

EXAMPLE = Path(__file__).resolve().parents[2] / "docs" / "own_release_example.py"
DATA = EXAMPLE.with_suffix("")


def test_the_example_and_its_data_say_they_are_invented():
    assert "INVENTED SCENARIO" in EXAMPLE.read_text().split("\n\n")[1]
    for path in sorted(DATA.glob("*.csv")):
        assert path.read_text().startswith("# INVENTED DATA - not measured."), path.name


@pytest.mark.slow
def test_the_example_makes_fits_a_frozen_release_and_tables(tmp_path, monkeypatch, capsys):
    monkeypatch.setenv("MATPROPS_SEALS", str(tmp_path / "user-seals.txt"))  # never the user's
    spec = importlib.util.spec_from_file_location("own_release_example", EXAMPLE)
    example = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(example)
    assert example.main(tmp_path / "out") == 0
    out = capsys.readouterr().out
    catalogue, seals = tmp_path / "out" / "example-lab", tmp_path / "out" / "seals.txt"
    si = matprops.silicon("example-lab-1", catalogues=[catalogue], seals=seals)
    assert si.release.final and si.release.base == "2026.2"
    assert "example-lab-1  example-lab" in seals.read_text()
    assert not (tmp_path / "user-seals.txt").exists()
    gap = si.provenance("band_gap")
    assert gap["catalogue"]["name"] == "example-lab" and gap["source"]["type"] == "measurement"
    # the invented truth (the data files' headers) lies within three standard uncertainties
    truth = {"gap_at_zero": 1.16985, "alpha": 3.35e-4}
    for name, value in truth.items():
        coefficient = si.model("band_gap").coefficients[name]
        assert abs(coefficient.value - value) < 3 * coefficient.uncertainty
    mobility = si.model("mobility").select("electron").coefficients
    assert (
        abs(mobility["doping_exponent"].value + 2.30) < 3 * mobility["doping_exponent"].uncertainty
    )
    reports = tmp_path / "out" / "reports"
    for name in (
        "band-gap-fit.png",
        "mobility-fit.png",
        "example-lab-1-wafers.csv",
        "example-lab-1-wafer-report.csv",
    ):
        assert (reports / name).is_file()
    assert "example-lab-1 is final" in out and "INVENTED" in out
    # the analyst's report of a wafer, made with the own release and its fitted mobility
    assert "release example-lab-1 (final)" in out and "mobility examplelab-2027" in out
