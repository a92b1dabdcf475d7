"""The command line of own catalogues: catalogue create/check, fit, release create/freeze,
and --catalogue / --seals on the other commands. Data are INVENTED (the worked example's
files, docs/own_release_example/)."""

from pathlib import Path

import pytest

from matprops.cli import main

DATA = Path(__file__).resolve().parents[2] / "docs" / "own_release_example"
GAP = str(DATA / "gap-photoluminescence.csv")
SOURCE = [
    "--author",
    "Example Lab (fictional)",
    "--year",
    "2027",
    "--title",
    "Gap (INVENTED)",
    "--description",
    "INVENTED data",
]


@pytest.fixture(autouse=True)
def no_user_seals(tmp_path, monkeypatch):
    monkeypatch.setenv("MATPROPS_SEALS", str(tmp_path / "seals.txt"))
    monkeypatch.delenv("MATPROPS_CATALOGUES", raising=False)


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def one_line_error(code, err, fragment):
    assert code == 2
    assert err.count("\n") == 1 and err.startswith("matprops: error: "), err
    assert fragment in err, err


@pytest.fixture
def lab(tmp_path, capsys):
    root = tmp_path / "lab"
    code, out, _ = run(
        capsys,
        "catalogue",
        "create",
        root,
        "--name",
        "cli-lab",
        "--description",
        "a fictional lab (tests)",
    )
    assert code == 0 and "made overlay catalogue 'cli-lab'" in out
    code, out, err = run(
        capsys,
        "fit",
        "band_gap",
        "passler-2002",
        GAP,
        "--free",
        "gap_at_zero,alpha",
        "--report",
        tmp_path / "gap.png",
        "--into",
        root,
        "--id",
        "clilab-2027",
        *SOURCE,
    )
    assert code == 0, err
    assert "gap_at_zero" in out and "wrote" in out and (tmp_path / "gap.csv").is_file()
    return root


def test_fit_prints_the_coefficients_and_writes_the_model(lab, capsys):
    code, out, _ = run(capsys, "models", "band_gap", "--catalogue", lab)
    assert code == 0 and "clilab-2027" in out
    code, out, _ = run(
        capsys,
        "table",
        "band_gap",
        "-t",
        "4.2,77,150",
        "--model",
        "band_gap=clilab-2027",
        "--catalogue",
        lab,
    )
    assert code == 0 and "1.169" in out
    code, out, _ = run(
        capsys, "provenance", "band_gap", "--model", "band_gap=clilab-2027", "--catalogue", lab
    )
    assert code == 0
    assert "catalogue: cli-lab (a fictional lab (tests))" in out
    assert "fitted: gap_at_zero, alpha free, to 17 points" in out
    code, out, _ = run(capsys, "describe", "band_gap", "clilab-2027", "--catalogue", lab)
    assert code == 0
    assert "fitted: gap_at_zero, alpha free" in out
    assert f"file: {lab}/models/band_gap/clilab-2027.toml" in out.replace("\n", "")
    code, _, _ = run(capsys, "catalogue", "check", lab)
    assert code == 0


@pytest.mark.parametrize(
    ("extra", "fragment"),
    [
        (["--into", "LAB"], "option --id must be the new model's id"),
        (["--into", "LAB", "--id", "x-2027"], "option --author must be who measured"),
        (
            ["--into", "LAB", "--id", "x-2027", *SOURCE, "--convention", "statistics=boltzmann"],
            "option --convention must be NAME=VALUE: where it comes from",
        ),
        (["--free", "beta"], "unknown name 'beta'"),
        (["--input", "Nd"], "option --input must be NAME=VALUE"),
        (["--bound", "alpha=1"], "option --bound must be NAME=LOW:HIGH"),
    ],
)
def test_bad_fit_options_are_one_line_errors(lab, capsys, extra, fragment):
    extra = [str(lab) if a == "LAB" else a for a in extra]
    code, _, err = run(capsys, "fit", "band_gap", "passler-2002", GAP, *extra)
    one_line_error(code, err, fragment)


def test_existing_files_need_force(lab, capsys, tmp_path):
    code, _, err = run(
        capsys,
        "fit",
        "band_gap",
        "passler-2002",
        GAP,
        "--free",
        "alpha",
        "--report",
        tmp_path / "gap.png",
    )
    one_line_error(code, err, "option --report must be a new file (--force replaces it)")
    code, _, err = run(
        capsys,
        "fit",
        "band_gap",
        "passler-2002",
        GAP,
        "--free",
        "alpha",
        "--into",
        lab,
        "--id",
        "clilab-2027",
        *SOURCE,
    )
    one_line_error(code, err, "a model id new to the catalogue")
    code, _, err = run(
        capsys, "catalogue", "create", lab, "--name", "cli-lab", "--description", "x"
    )
    one_line_error(code, err, "exists already")


def test_release_options_are_checked(lab, capsys):
    code, _, err = run(capsys, "release", "create", "cli-lab-1", "--base", "2026.1", "--notes", "x")
    one_line_error(
        code, err, "option --catalogue must be the overlay catalogue that holds the release"
    )
    code, _, err = run(
        capsys,
        "release",
        "create",
        "2027.1",
        "--base",
        "2026.1",
        "--notes",
        "x",
        "--catalogue",
        lab,
    )
    one_line_error(code, err, "an own release id is lower-case words and numbers")
    code, _, err = run(
        capsys,
        "release",
        "create",
        "cli-lab-1",
        "--base",
        "2025.9",
        "--notes",
        "x",
        "--catalogue",
        lab,
    )
    one_line_error(code, err, "unknown release '2025.9'")
    code, _, err = run(
        capsys, "table", "band_gap", "-t", "300", "--release", "nowhere-1", "--catalogue", lab
    )
    one_line_error(code, err, "unknown release 'nowhere-1'")


@pytest.mark.slow
def test_release_create_freeze_and_use(lab, capsys, tmp_path):
    seals = tmp_path / "team-seals.txt"
    code, out, err = run(
        capsys,
        "release",
        "create",
        "cli-lab-1",
        "--base",
        "2026.1",
        "--model",
        "band_gap=clilab-2027",
        "--notes",
        "tests",
        "--catalogue",
        lab,
        "--seals",
        seals,
    )
    assert code == 0, err
    code, out, err = run(
        capsys, "release", "freeze", "cli-lab-1", "--catalogue", lab, "--seals", seals
    )
    assert code == 0, err
    assert "cli-lab-1  cli-lab" in out and "cli-lab-1  cli-lab" in seals.read_text()
    code, out, _ = run(
        capsys,
        "table",
        "band_gap",
        "-t",
        "77",
        "--release",
        "cli-lab-1",
        "--catalogue",
        lab,
        "--seals",
        seals,
    )
    assert code == 0 and "release cli-lab-1 (final)" in out
    code, out, _ = run(
        capsys,
        "provenance",
        "band_gap",
        "--release",
        "cli-lab-1",
        "--catalogue",
        lab,
        "--seals",
        seals,
    )
    assert "release cli-lab-1 (final, catalogue cli-lab, on 2026.1" in out
    assert f"file: {lab}/archive/cli-lab-1/models/band_gap/clilab-2027.toml" in out
    code, out, _ = run(capsys, "releases", "--catalogue", lab, "--seals", seals)
    assert "cli-lab-1 (final" in out
    code, _, err = run(
        capsys, "release", "freeze", "cli-lab-1", "--catalogue", lab, "--seals", seals
    )
    one_line_error(code, err, "is final already")
    code, _, err = run(
        capsys, "table", "band_gap", "-t", "77", "--release", "cli-lab-1", "--catalogue", lab
    )  # the default seals file: no line for the release
    one_line_error(code, err, "records no seal for release cli-lab-1")
