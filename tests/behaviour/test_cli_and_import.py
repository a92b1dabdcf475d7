"""The command line (every bad-input case gets one line on stderr, exit status 2 and
no file), the invented demo scenario, and the import cost."""

import io
import json
import subprocess
import sys

import numpy as np
import pandas as pd
import pytest
import xarray as xr

from matprops.cli.main import _Progress, main, parse_grid


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_help(capsys):
    with pytest.raises(SystemExit) as info:
        main(["--help"])
    assert info.value.code == 0
    assert "table" in capsys.readouterr().out


def test_table_with_celsius_and_a_space_before_a_negative_value(capsys):
    code, out, err = run(
        capsys, "table", "band_gap", "intrinsic_density", "--temperature", "-40,25,85degC"
    )
    assert code == 0, err
    assert "298.15" in out and "[°C]" in out and "couderc-2014" in out
    assert "-40" in out.splitlines()[4]  # echoed in the unit asked
    code, out, _ = run(capsys, "table", "band_gap", "-t", "-40.5degC")
    assert code == 0 and "232.65" in out


@pytest.mark.parametrize(
    "text, kelvin",
    [
        ("250:400:50 K", [250, 300, 350, 400]),
        ("300", [300]),
        ("1e3", [1000]),
        ("3e2 K", [300]),
        ("3E2K", [300]),
        ("2.5e2,3e2", [250, 300]),
        ("-40,25degC", [233.15, 298.15]),
    ],
)
def test_grid_values(text, kelvin):
    values = parse_grid(text)
    magnitude = values.m_as("K") if hasattr(values, "m_as") else values
    np.testing.assert_allclose(magnitude, kelvin)


def test_log_ranges_for_doping():
    np.testing.assert_allclose(
        parse_grid("1e14:1e18:*10", "--acceptor-density", "cm^-3"),
        [1e14, 1e15, 1e16, 1e17, 1e18],
        rtol=1e-12,
    )
    np.testing.assert_allclose(
        parse_grid("1e15:1e16:2/decade", "--Na", "cm^-3"), [1e15, 10**15.5, 1e16], rtol=1e-12
    )
    assert parse_grid("1e21 m^-3", "--Na", "cm^-3").m_as("cm^-3") == pytest.approx(1e15)


def one_line_error(code, err, fragment):
    assert code == 2
    lines = err.strip().splitlines()
    assert len(lines) == 1, err
    assert lines[0].startswith("matprops: error: ")
    assert "Traceback" not in err
    assert fragment in lines[0], lines[0]


@pytest.mark.parametrize(
    "argv, fragment",
    [
        (["table", "-t", "250:400"], "option --temperature must be numbers separated by commas"),
        (["table", "-t", "400:250:10"], "stop is not below its start"),
        (["table", "-t", "250:400:-5"], "step > 0"),
        (["table", "-t", "1:1e12:1e-3"], "at most 1e+08 values"),
        (["table", "-t", "abc"], "option --temperature"),
        (["table", "-t", ""], "option --temperature"),
        (["table", "-t", "nan"], "finite numbers"),
        (["table", "-t", "300,inf K"], "finite numbers"),
        (["table", "-t", "-inf"], "finite numbers"),
        (["table", "-t", "300 m"], "option --temperature expects a quantity in K"),
        (["table", "-t", "300 glorbs"], "option --temperature expects"),
        (["table", "-t", "-400degC"], "option --temperature must be > 0 K"),
        (["table", "absorption", "-t", "300", "-w", "300 K"], "option --wavelength expects"),
        (["table", "-t", "300", "--Na", "-1e15"], "option --acceptor-density must be >= 0"),
        (["table", "-t", "300", "--carrier", "positron"], "option --carrier must be one of"),
        (["table", "bandgap", "-t", "300"], "Did you mean 'band_gap'"),
        (["table", "absorption", "-t", "300"], "option --wavelength must be given for absorption"),
        (["table", "-t", "300", "--model", "band_gap=passler-2003"], "Did you mean 'passler-2002'"),
        (["table", "-t", "300", "--model", "band_gap"], "QUANTITY=MODEL_ID"),
        (["table", "-t", "300", "--release", "2030.1"], "known: 2026.1"),
        (["table", "-t", "300", "--format", "netcdf"], "option -o/--output must be a file name"),
        (
            ["compare", "band_gap", "-t", "300", "--models", "passler-2002,nobody-1900"],
            "unknown model 'nobody-1900'",
        ),
        (["compare", "density", "-t", "300"], "with models to compare"),
        (["plot", "band_gap", "-t", "250:300:10"], "option -o/--output must be a file name"),
        (["describe", "band_gap", "passler-1900"], "unknown model 'passler-1900'"),
        (["provenance", "bandgap"], "unknown quantity 'bandgap'"),
        (["release-diff", "2026.1", "2031.1"], "unknown release '2031.1'"),
        (["demo", "--scenario", "nowhere"], "option --scenario must be one of two-site-modules"),
        (["table", "-t", "300", "--bogus"], "unrecognized arguments: --bogus"),
        (["frobnicate"], "invalid choice: 'frobnicate'"),
    ],
)
def test_bad_input_is_one_line_with_exit_2(capsys, tmp_path, monkeypatch, argv, fragment):
    monkeypatch.chdir(tmp_path)
    try:
        code = main(argv)
    except SystemExit as exc:  # argparse's own errors
        code = exc.code
    _, err = capsys.readouterr()
    one_line_error(code, err.replace("\n", " ").strip() if "usage" in err else err, fragment)
    assert list(tmp_path.iterdir()) == []


@pytest.mark.parametrize(
    "output, extra, fragment",
    [
        ("missing/t.csv", [], "must be a file in an existing folder"),
        ("/sys/matprops-test.csv", [], "must be a file in a writable folder"),
        ("t.csv", ["--format", "json"], "option --format must be csv for a file named *.csv"),
        ("t.txt", [], "implied by the file extension"),
        ("t.csv", ["--chunks", "10"], "option --chunks must be used with a netCDF output"),
    ],
)
def test_bad_outputs_write_nothing(capsys, tmp_path, monkeypatch, output, extra, fragment):
    monkeypatch.chdir(tmp_path)
    code, _, err = run(capsys, "table", "band_gap", "-t", "300", "-o", output, *extra)
    one_line_error(code, err, fragment)
    assert list(tmp_path.iterdir()) == []


def test_existing_file_needs_force(capsys, tmp_path):
    path = tmp_path / "T.CSV"  # an upper-case extension is a CSV too
    code, out, _ = run(capsys, "table", "band_gap", "-t", "300", "-o", str(path))
    assert code == 0 and "wrote" in out
    assert pd.read_csv(path)["band_gap [eV]"].item() == pytest.approx(1.12426, abs=1e-5)
    before = path.read_text()
    code, _, err = run(capsys, "table", "band_gap", "-t", "350", "-o", str(path))
    one_line_error(code, err, "must be a new file (--force replaces it)")
    assert path.read_text() == before
    code, _, _ = run(capsys, "table", "band_gap", "-t", "350", "-o", str(path), "--force")
    assert code == 0 and path.read_text() != before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["T.CSV", "T.provenance.json"]


def test_closed_pipe_is_one_line_without_traceback():
    code = "from matprops.cli import main; raise SystemExit(main(['models']))"
    proc = subprocess.Popen(
        [sys.executable, "-c", code], stdout=subprocess.PIPE, stderr=subprocess.PIPE
    )
    proc.stdout.read(10)
    proc.stdout.close()  # the reader goes away, like `matprops models | head -c 10`
    err = proc.stderr.read().decode()
    assert proc.wait(timeout=60) == 2
    message = "matprops: error: output closed by the reading program before the end"
    assert err.strip().splitlines() == [message]


def test_validity_warning_names_the_command_option(capsys):
    code, _, err = run(capsys, "table", "absorption", "-t", "300", "-w", "200,300")
    assert code == 0
    assert "(--model absorption=franta-2017)" in err and "models={" not in err
    assert all(
        len(line) <= 100 or line.startswith("matprops: warning") for line in err.splitlines()
    )
    code, _, err = run(capsys, "table", "band_gap", "-t", "700", "--strict")
    one_line_error(code, err, "outside its validity range 0-600 K")


def test_export_netcdf_and_csv(capsys, tmp_path):
    nc = tmp_path / "t.nc"
    assert main(["table", "-t", "250:350:50 K", "-o", str(nc)]) == 0
    with xr.open_dataset(nc) as data:
        assert data.attrs["Conventions"] == "CF-1.11"
        assert data["intrinsic_density"].attrs["units"] == "cm^-3"
        assert data["band_gap"].attrs["model"] == "passler-2002"
        assert data.temperature.attrs["units_metadata"] == "temperature: on_scale"
        assert "matprops table -t '250:350:50 K' -o" in data.attrs["history"]
    assert not list(tmp_path.glob(".*tmp*"))  # atomic writes leave no temporary file


def test_terminal_output_fits_100_columns(capsys):
    code, out, _ = run(capsys, "table", "-t", "-40,25,85degC", "-w", "600,1000")
    assert code == 0
    assert max(len(line) for line in out.splitlines()) <= 100
    code, out, _ = run(capsys, "compare", "intrinsic_density", "-t", "300,350")
    assert code == 0 and max(len(line) for line in out.splitlines()) <= 100


def test_csv_and_json_on_stdout(capsys):
    code, out, _ = run(capsys, "table", "band_gap", "-t", "25,85degC", "--format", "csv")
    assert code == 0
    frame = pd.read_csv(io.StringIO(out))
    assert list(frame.columns) == [
        "temperature [degC]",
        "temperature [K]",
        "band_gap [eV]",
        "band_gap_validity",
    ]
    code, out, _ = run(capsys, "table", "band_gap", "-t", "300", "--format", "json")
    document = json.loads(out)
    assert document["data_vars"]["band_gap"]["attrs"]["provenance"]["model"] == "passler-2002"
    assert "matprops table band_gap" in document["attrs"]["history"]


def test_doping_and_carrier_axes_on_the_command_line(capsys):
    code, out, err = run(
        capsys,
        "table",
        "free_carrier_absorption",
        "-w",
        "1550",
        "--n",
        "1e14:1e16:*10",
        "--p",
        "0",
        "--format",
        "csv",
    )
    assert code == 0, err
    frame = pd.read_csv(io.StringIO(out))
    assert list(frame["electron_density [cm^-3]"]) == [1e14, 1e15, 1e16]
    code, _, err = run(capsys, "table", "band_gap", "-t", "300", "--Nd", "1e15,1e16")
    assert code == 2 and len(err.splitlines()) == 1
    assert "option --donor-density must be left out" in err and "band_gap on temperature" in err


def test_provenance_is_readable_by_default_and_json_on_request(capsys):
    code, out, _ = run(capsys, "provenance", "intrinsic_density")
    assert code == 0
    lines = out.splitlines()
    assert len(lines) < 40 and max(map(len, lines)) <= 100
    assert "couderc-2014" in lines[0] and "doi:10.1063/1.4867776" in out
    code, out, _ = run(capsys, "provenance", "intrinsic_density", "--json")
    assert json.loads(out)["model"] == "couderc-2014"


def test_describe_one_model(capsys):
    code, out, _ = run(capsys, "describe", "band_gap", "thurmond-1975")
    assert code == 0
    for part in (
        "equation:",
        "coefficients",
        "validity:",
        "source:",
        "how the numbers were obtained:",
        "sha256:",
    ):
        assert part in out
    assert "eV" in out and max(map(len, out.splitlines())) <= 100
    code, out, _ = run(capsys, "describe", "intrinsic_density")
    assert "couderc-2014" in out and "default in release 2026.1" in out


def test_release_diff_command(capsys, datasets_copy, monkeypatch):
    from matprops.catalogue.store import default_catalogue

    root, catalogue = datasets_copy
    text = (root / "releases/2026.1.toml").read_text().replace('"2026.1"', '"2030.1"')
    text = text.replace('status = "final"', 'status = "draft"')
    (root / "releases/2030.1.toml").write_text(
        text.replace('band_gap = "passler-2002"', 'band_gap = "alex-1996"')
    )
    catalogue.write_checksums()
    monkeypatch.setenv("MATPROPS_DATASETS", str(root))
    default_catalogue.cache_clear()
    try:
        code, out, _ = run(capsys, "release-diff", "2026.1", "2030.1")
    finally:
        monkeypatch.delenv("MATPROPS_DATASETS")
        default_catalogue.cache_clear()
    assert code == 0
    assert "passler-2002 -> alex-1996" in out and "models changed (" in out
    deviations = out.split("numbers that moved")[1]
    line = next(line for line in deviations.splitlines() if line.strip().startswith("band_gap:"))
    assert "%" in line and "temperature=" in line
    assert " 0 %" not in out  # only what changed is listed
    # a release against itself: one line
    code, out, _ = run(capsys, "release-diff", "2026.1", "2026.1")
    assert code == 0 and out.strip().splitlines() == [out.strip()] and "identical" in out


def test_demo_uses_the_invented_two_site_scenario(capsys, tmp_path):
    code, out, _ = run(capsys, "demo")
    assert code == 0
    assert "INVENTED" in out and "hot-site" in out and "cold-site" in out
    assert max(len(line) for line in out.splitlines()) <= 100
    for suffix in ("nc", "csv", "png"):
        path = tmp_path / f"demo.{suffix}"
        assert main(["demo", "-o", str(path)]) == 0
        assert path.stat().st_size > 0
    with xr.open_dataset(tmp_path / "demo.nc") as data:
        assert "INVENTED" in data.attrs["scenario_note"] and "INVENTED" in data.attrs["title"]
        assert "doi:" in data.attrs["references"]
        assert json.loads(data.band_gap.attrs["provenance"])["model"] == "passler-2002"
    provenance = json.loads((tmp_path / "demo.provenance.json").read_text())
    assert "INVENTED" in provenance["attrs"]["scenario_note"]


def test_demo_shows_its_regions_with_their_dopings(tmp_path):
    import matprops

    path = tmp_path / "demo.csv"
    assert main(["demo", "-o", str(path)]) == 0
    frame = pd.read_csv(path)
    assert set(frame["region"]) == {"wafer", "emitter"}
    emitter = frame[frame["region"] == "emitter"]
    na = matprops.silicon().doping_from_resistivity(1.2, "23 degC", "boron").m_as("cm^-3")
    # (the CSV keeps 10 significant digits)
    np.testing.assert_allclose(emitter["acceptor_density [cm^-3]"], na, rtol=1e-9)  # boron stays
    np.testing.assert_allclose(emitter["donor_density [cm^-3]"], 3e19)
    narrowing = matprops.silicon().gap_narrowing(
        emitter["temperature [K]"].to_numpy(), Na=na, Nd=3e19
    )
    np.testing.assert_allclose(emitter["gap_narrowing [eV]"], narrowing.m_as("eV"), rtol=1e-8)


def test_progress_bar_only_on_a_terminal():
    class Terminal(io.StringIO):
        def isatty(self):
            return True

    screen, pipe = Terminal(), io.StringIO()
    for stream in (screen, pipe):
        bar = _Progress(stream)
        bar(500_000, 2_000_000)
        bar(2_000_000, 2_000_000)
        bar.close()
    assert "100.0 %" in screen.getvalue() and "2e+06 points" in screen.getvalue()
    assert pipe.getvalue() == ""
    small = Terminal()
    _Progress(small)(10, 10)
    assert small.getvalue() == ""  # small grids draw nothing


def test_modeldocs_help_writes_no_file(tmp_path):
    out = subprocess.run(
        [sys.executable, "-m", "matprops.outputs.modeldocs", "--help"],
        cwd=tmp_path,
        capture_output=True,
        text=True,
        check=False,
        env={
            **__import__("os").environ,
            "PYTHONPATH": str(__import__("pathlib").Path(__file__).resolve().parents[2]),
        },
    )
    assert out.returncode == 0 and "docs/models.md" in out.stdout
    assert list(tmp_path.iterdir()) == []


def test_listing_commands(capsys):
    for argv in (
        ["models"],
        ["models", "band_gap"],
        ["releases"],
        ["cite"],
        ["provenance", "density"],
    ):
        assert main(argv) == 0
    out = capsys.readouterr().out
    assert "thurmond-1975" in out and "@article{passler-2002" in out


def test_import_is_light():
    # xarray, netCDF4, dask, matplotlib and pint load on first use, not on import
    code = (
        "import sys, matprops; heavy = [m for m in ('xarray', 'netCDF4', 'dask', "
        "'matplotlib', 'pint', 'scipy') if m in sys.modules]; print(heavy)"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"
    # the analyst's modules too: plots, dask arrays and netCDF only when used (pint itself
    # imports the dask core package when it is installed)
    code = (
        "import sys, matprops.material.tables, matprops.outputs.export, "
        "matprops.outputs.plotting, matprops.cli; "
        "print([m for m in ('netCDF4', 'dask.array', 'distributed', 'matplotlib') "
        "if m in sys.modules])"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"


def test_optical_table(tmp_path, capsys):
    assert (
        main(
            ["table", "absorption", "refractive_index", "-t", "25,85degC", "-w", "800:1100:100 nm"]
        )
        == 0
    )
    out = capsys.readouterr().out
    assert "absorption" in out and "refractive_index" in out and "green-2008-franta-2017" in out
    path = tmp_path / "optics.nc"
    assert main(["table", "-t", "300", "-w", "1000", "-o", str(path)]) == 0
    with xr.open_dataset(path) as data:
        assert data.absorption.dims == ("temperature", "wavelength")
        assert data.absorption.values.item() == pytest.approx(64.0, rel=1e-3)


@pytest.fixture
def datasets_env(datasets_copy, monkeypatch):
    """Point the command line at a private datasets folder (and back afterwards)."""
    from matprops.catalogue.store import default_catalogue

    root, catalogue = datasets_copy
    default_catalogue.cache_clear()
    yield root, catalogue, monkeypatch
    monkeypatch.delenv("MATPROPS_DATASETS", raising=False)
    default_catalogue.cache_clear()


@pytest.mark.parametrize(
    "case, fragment",
    [
        ("missing", "datasets folder does not exist; set MATPROPS_DATASETS"),
        ("no releases", "no release files"),
        ("malformed release", "not valid TOML"),
    ],
)
def test_unusable_datasets_folder_is_one_line(capsys, tmp_path, datasets_env, case, fragment):
    root, catalogue, monkeypatch = datasets_env
    if case == "missing":
        monkeypatch.setenv("MATPROPS_DATASETS", str(tmp_path / "nowhere"))
    elif case == "no releases":
        for path in (root / "releases").glob("*.toml"):
            path.unlink()
        monkeypatch.setenv("MATPROPS_DATASETS", str(root))
    else:
        newest = catalogue.newest_release_id()
        (root / f"releases/{newest}.toml").write_text(f'release = "{newest}\n')
        catalogue.write_checksums()
        monkeypatch.setenv("MATPROPS_DATASETS", str(root))
    for argv in (["table", "-t", "300"], ["releases"]):
        code, _, err = run(capsys, *argv)
        one_line_error(code, err, fragment)


def test_demo_prints_no_warning(capsys):
    # the demo's operating points (-35 to 83 degC, invented) lie inside the ranges of the
    # newest release's default models: its first screen carries no validity warning
    import warnings as _warnings

    with _warnings.catch_warnings():
        _warnings.simplefilter("error")
        code, out, err = run(capsys, "demo")
    assert code == 0
    assert "warning" not in err.lower() and "warning" not in out.lower()


def test_intrinsic_lifetime_covers_cold_and_hot_modules():
    # 240, 300 and 360 K (a winter night to a module in summer) under the newest release:
    # no validity warning
    import warnings as _warnings

    import matprops

    si = matprops.silicon()
    with _warnings.catch_warnings():
        _warnings.simplefilter("error")
        for doping in ({"Na": 1e16}, {"Nd": 1e16}, {"Nd": 3e19, "Na": 1e16}):
            values = si.intrinsic_lifetime([240.0, 300.0, 360.0], **doping, excess=1e14).m
            assert np.all(np.isfinite(values)) and np.all(values > 0)


def test_table_with_uncertainty_shows_each_figure_and_says_what_it_holds(capsys, tmp_path):
    # arora-1982: its source states an output accuracy (propagated); passler-2002: none
    code, out, err = run(
        capsys, "table", "band_gap", "mobility", "-t", "300,350", "--Nd", "1e16",
        "--carrier", "electron", "--model", "mobility=arora-1982", "--uncertainty",
    )  # fmt: skip
    assert code == 0, err
    assert "mobility_uncertainty: stated (linear)" in out
    assert "NaN where no source states one: band_gap/passler-2002" in out
    path = tmp_path / "u.csv"
    code, _, err = run(
        capsys, "table", "mobility", "-t", "300", "--Nd", "1e16", "--carrier", "electron",
        "--model", "mobility=arora-1982", "--uncertainty", "-o", str(path),
    )  # fmt: skip
    assert code == 0, err
    table = pd.read_csv(path)
    sigma = table["mobility_uncertainty [cm^2 V^-1 s^-1]"].iloc[0]
    assert 0.0 < sigma < table["mobility [cm^2 V^-1 s^-1]"].iloc[0]
    assert "mobility_model_spread [cm^2 V^-1 s^-1]" in table


def test_uncertainty_is_refused_with_chunks(capsys, tmp_path):
    code, _, err = run(
        capsys, "table", "band_gap", "-t", "300", "--uncertainty", "--chunks", "10",
        "-o", str(tmp_path / "u.nc"),
    )  # fmt: skip
    assert code == 2 and "--uncertainty" in err and "--chunks" in err
