"""Grid size: the total size of a grid (the product of its axes) is
checked before anything is allocated, with a one-line error (exit status 2 on the
command line, an InputError in Python) and an explicit way beyond it; the command
line says how large an output will be and asks (or, not run from a terminal, refuses)
before writing more than ~1 GB. Before: each axis was checked alone, and a 1e5 x 1e5
grid ended in a 74.5 GiB numpy traceback (exit 1); nothing asked before writing
gigabytes.
"""

import importlib
import io
import time

import numpy as np
import pytest

import matprops
from matprops.cli import main
from matprops.material import tables

T = np.linspace(250.0, 400.0, 100_000)
NA = np.geomspace(1e14, 1e18, 100_000)


def test_a_grid_too_large_is_refused_before_anything_is_allocated(si):
    started = time.monotonic()
    with pytest.raises(
        matprops.InputError, match=r"argument 'grid' must be at most 1e\+08"
    ) as info:
        si.table(["mobility"], T=T, Na=NA, carrier="electron")
    assert time.monotonic() - started < 2.0
    message = str(info.value)
    assert "1e+10 values (100000 temperature x 100000 acceptor_density" in message
    assert "max_values=None" in message and "80 GB" in message


def test_the_limit_counts_every_quantity_and_output(si):
    t = np.linspace(250.0, 400.0, 40)
    # 40 points: band_gap 40 values, densities_of_states 2 x 40
    si.table(["band_gap", "densities_of_states"], T=t, max_values=120)
    with pytest.raises(matprops.InputError, match="121|120 values"):
        si.table(["band_gap", "densities_of_states"], T=np.linspace(250, 400, 41), max_values=120)


def test_max_values_none_goes_beyond_and_a_lazy_table_is_not_limited(si):
    t = np.linspace(250.0, 400.0, 50)
    assert si.table(["band_gap"], T=t, max_values=None).band_gap.size == 50
    with pytest.raises(matprops.InputError):
        si.table(["band_gap"], T=t, max_values=49)
    lazy = si.table(["mobility"], T=T, Na=NA, carrier="electron", chunks=20_000)
    assert lazy.mobility.shape == (100_000, 100_000)  # (made, not computed)


@pytest.mark.parametrize("bad", [0.5, "many", True])
def test_max_values_must_be_an_integer_or_none(si, bad):
    with pytest.raises(matprops.InputError, match="max_values"):
        si.table(["band_gap"], T=[300.0, 310.0], max_values=bad)


def test_a_comparison_counts_every_model(si):
    models = matprops.models("band_gap")
    t = np.linspace(200.0, 300.0, 100)  # (inside every band-gap model's range)
    si.compare("band_gap", T=t, max_values=100 * len(models))
    with pytest.raises(matprops.InputError, match=f"{len(models)} models"):
        si.compare("band_gap", T=t, max_values=100 * len(models) - 1)


def test_the_command_line_refuses_a_large_grid_in_one_line(capsys):
    code = main(
        [
            "table",
            "mobility",
            "--carrier",
            "electron",
            "-t",
            "250:400:0.0015",
            "--Na",
            "1e14:1e18:*1.0001",
        ]
    )
    err = capsys.readouterr().err
    assert code == 2 and len(err.splitlines()) == 1
    assert err.startswith("matprops: error: the grid must hold at most 1e+08 values")
    assert "--allow-large" in err and "max_values" not in err


def test_allow_large_goes_beyond(capsys, monkeypatch):
    monkeypatch.setattr(tables, "MAX_VALUES", 100)
    assert main(["table", "band_gap", "-t", "1:200:1"]) == 2
    assert "at most 100 values" in capsys.readouterr().err
    assert main(["table", "band_gap", "-t", "250:400:1", "--allow-large", "--format", "csv"]) == 0
    assert len(capsys.readouterr().out.splitlines()) == 152


def test_a_large_output_is_refused_when_nobody_can_be_asked(tmp_path, capsys, monkeypatch):
    cli = importlib.import_module("matprops.cli.main")  # (the package's `main` is the function)

    monkeypatch.setattr(cli, "LARGE_OUTPUT", 1000)  # (1 GB scaled down)
    monkeypatch.setattr("sys.stdin", io.StringIO(""))  # not a terminal
    target = tmp_path / "t.nc"
    assert main(["table", "band_gap", "-t", "250:400:1", "-o", str(target)]) == 2
    err = capsys.readouterr().err
    assert "option --allow-large must be given to write about" in err
    assert "of netcdf to" in err and len(err.splitlines()) == 1
    assert not target.exists() and list(tmp_path.iterdir()) == []
    assert main(["table", "band_gap", "-t", "250:400:1", "--format", "csv"]) == 2  # the screen too
    capsys.readouterr()
    assert main(["table", "band_gap", "-t", "250:400:1", "-o", str(target), "--allow-large"]) == 0
    assert "note: writing about" in capsys.readouterr().err and target.exists()


class _Terminal(io.StringIO):
    def isatty(self):
        return True


@pytest.mark.parametrize("answer, code", [("y\n", 0), ("yes\n", 0), ("n\n", 2), ("\n", 2)])
def test_a_large_output_is_asked_for_on_a_terminal(tmp_path, capsys, monkeypatch, answer, code):
    cli = importlib.import_module("matprops.cli.main")  # (the package's `main` is the function)

    monkeypatch.setattr(cli, "LARGE_OUTPUT", 1000)
    monkeypatch.setattr("sys.stdin", _Terminal(answer))
    target = tmp_path / "t.csv"
    assert main(["table", "band_gap", "-t", "250:400:1", "-o", str(target)]) == code
    err = capsys.readouterr().err
    assert "this writes about" in err and "continue? [y/N]" in err
    assert target.exists() == (code == 0)


def test_the_size_estimate_is_close_to_the_file_written(tmp_path, si):
    from matprops.outputs import export

    data = si.table(["band_gap", "intrinsic_density"], T=np.linspace(250.0, 400.0, 20_000))
    for suffix, kind in ((".nc", "netcdf"), (".csv", "csv"), (".json", "json")):
        path = tmp_path / f"t{suffix}"
        export.write(data, path)
        estimate = export.estimate_size(data, kind)
        assert 0.5 < estimate / path.stat().st_size < 2.0, (kind, estimate, path.stat().st_size)
