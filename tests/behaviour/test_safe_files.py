"""Files stay safe: interrupted writes leave nothing behind,
``--force`` replaces regular files only, every data file is read through the catalogue
(checksum, schema, confinement to the datasets folder, size before reading), stored
tables hold numbers only, and a deeply nested TOML file is a one-line error.

Before: Ctrl-C while the command wrote netCDF could deadlock it and SIGTERM left a
hidden temporary of up to ~1 GB; ``-o PATH --force`` replaced device files and pipes;
``matprops demo --scenario ../..`` read any TOML file on disk, unchecked; a table name
could point outside the datasets folder; tables could hold NaN; a large file was read
whole before it was refused; nested TOML gave a RecursionError traceback.
"""

import os
import signal
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pytest

import matprops
from matprops.catalogue.store import Catalogue
from matprops.cli import main


def _temporaries(folder: Path) -> list[str]:
    return sorted(p.name for p in folder.iterdir() if ".tmp-" in p.name)


def _wait_for_temporary(process, folder: Path, limit: float = 120.0) -> bool:
    end = time.monotonic() + limit
    while time.monotonic() < end and process.poll() is None:
        if _temporaries(folder):
            return True
        time.sleep(0.02)
    return False


# ------------------------------------------------------------------ signals


@pytest.mark.slow
@pytest.mark.parametrize("number", [signal.SIGINT, signal.SIGTERM], ids=["SIGINT", "SIGTERM"])
def test_a_signal_while_the_command_writes_netcdf_leaves_nothing(tmp_path, number):
    # a lazy table written chunk by chunk: seconds of writing, the temporary on disk
    target = tmp_path / "big.nc"
    command = [
        sys.executable, "-m", "matprops.cli", "table", "band_gap", "intrinsic_density",
        "-t", "200:500:0.00005", "--chunks", "100000", "-o", str(target),
    ]  # fmt: skip
    process = subprocess.Popen(command, stderr=subprocess.PIPE, stdout=subprocess.PIPE)
    try:
        assert _wait_for_temporary(process, tmp_path), process.communicate()[1][-2000:]
        time.sleep(0.2)
        sent = time.monotonic()
        process.send_signal(number)
        _, err = process.communicate(timeout=20)  # promptly, not a deadlock
        took = time.monotonic() - sent
    finally:
        if process.poll() is None:
            process.kill()
    assert process.returncode == {signal.SIGINT: 130, signal.SIGTERM: 143}[number], err
    assert took < 10
    assert list(tmp_path.iterdir()) == []  # neither the file nor its temporary
    assert b"not written (its temporary removed)" in err


WRITER = textwrap.dedent("""
    import sys, time
    from pathlib import Path
    from matprops.catalogue.files import interruptible
    from matprops.outputs.export import atomic_write

    folder = Path(sys.argv[1])

    def slow(tmp):  # half a file, then a long pause: the signal comes in between
        with open(tmp, "w") as handle:
            handle.write("x" * 100_000)
            handle.flush()
            time.sleep(60)

    def quick(tmp):
        tmp.write_text("done")

    with interruptible("writer"):
        atomic_write([(folder / "table.csv", quick), (folder / "table.provenance.json", slow)])
""")


@pytest.mark.parametrize("number", [signal.SIGINT, signal.SIGTERM], ids=["SIGINT", "SIGTERM"])
def test_a_signal_during_a_set_of_files_removes_the_whole_set(tmp_path, number):
    # the CSV and its provenance companion are one set: the first is written, the
    # second is half-way; both temporaries go, and no CSV without its companion stays
    process = subprocess.Popen(
        [sys.executable, "-c", WRITER, str(tmp_path)], stderr=subprocess.PIPE
    )
    try:
        end = time.monotonic() + 60
        while len(_temporaries(tmp_path)) < 2 and time.monotonic() < end:
            time.sleep(0.02)
        time.sleep(0.2)
        process.send_signal(number)
        _, err = process.communicate(timeout=20)
    finally:
        if process.poll() is None:
            process.kill()
    assert process.returncode == {signal.SIGINT: 130, signal.SIGTERM: 143}[number], err
    assert list(tmp_path.iterdir()) == []


def test_the_checksum_tool_and_the_reference_tool_write_through_removable_temporaries(
    datasets_copy, monkeypatch
):
    # they write with the same registered temporaries (removed on SIGINT or SIGTERM by
    # the tools' own handlers); what they leave on success is the file alone
    from matprops.catalogue import files, store

    root, catalogue = datasets_copy
    seen = []
    original = files.temporary_for

    def spy(path):
        tmp = original(path)
        seen.append(tmp)
        return tmp

    monkeypatch.setattr(store, "temporary_for", spy)
    catalogue.write_checksums()
    assert seen and seen[0].parent == root and not seen[0].exists()
    assert not files._PENDING  # forgotten once moved into place
    assert _temporaries(root) == []


def test_a_keyboard_interrupt_in_a_library_write_leaves_no_temporary(tmp_path, si):
    from matprops.outputs.export import write

    data = si.table(["band_gap"], T=[300.0, 310.0])

    def interrupted(*args, **kwargs):
        raise KeyboardInterrupt

    import matprops.outputs.export as export

    original = export.to_csv
    export.to_csv = interrupted
    try:
        with pytest.raises(KeyboardInterrupt):
            write(data, tmp_path / "t.csv")
    finally:
        export.to_csv = original
    assert list(tmp_path.iterdir()) == []


# ------------------------------------------------------------------ --force


def _special_targets(tmp_path):
    fifo = tmp_path / "pipe"
    os.mkfifo(fifo)
    folder = tmp_path / "folder"
    folder.mkdir()
    links = {}
    for name, target in {
        "link-to-null": "/dev/null",
        "link-to-pipe": fifo,
        "link-to-folder": folder,
        "link-to-nothing": tmp_path / "missing",
    }.items():
        link = tmp_path / f"{name}.csv"
        link.symlink_to(target)
        links[name] = link
    return {"pipe": fifo, "folder": folder, **links}


@pytest.mark.parametrize(
    "which", ["pipe", "folder", "link-to-null", "link-to-pipe", "link-to-folder", "link-to-nothing"]
)
def test_force_replaces_regular_files_only(tmp_path, which, capsys):
    targets = _special_targets(tmp_path)
    target = targets[which]
    before = os.lstat(target)
    code = main(["table", "band_gap", "-t", "300", "-o", str(target), "--force", "--format", "csv"])
    err = capsys.readouterr().err
    assert code == 2 and len(err.splitlines()) == 1, err
    assert "option -o/--output" in err
    after = os.lstat(target)
    assert (after.st_ino, after.st_mode) == (before.st_ino, before.st_mode)  # untouched
    assert _temporaries(tmp_path) == []


def test_force_replaces_a_regular_file_and_a_link_to_one(tmp_path):
    plain = tmp_path / "t.csv"
    plain.write_text("old")
    kept = tmp_path / "kept.csv"
    kept.write_text("the link's target")
    link = tmp_path / "link.csv"
    link.symlink_to(kept)
    for target in (plain, link):
        assert main(["table", "band_gap", "-t", "300", "-o", str(target), "--force"]) == 0
        assert "band_gap" in target.read_text()
    assert not link.is_symlink()  # the link itself was replaced ...
    assert kept.read_text() == "the link's target"  # ... its target left as it was


def test_python_export_refuses_a_device_even_with_overwrite(tmp_path, si):
    from matprops.outputs.export import write

    link = tmp_path / "null.csv"
    link.symlink_to("/dev/null")
    with pytest.raises(matprops.InputError, match="character device"):
        write(si.table(["band_gap"], T=300.0), link, overwrite=True)


# ------------------------------------------------------------------ reading data files


def test_a_scenario_path_cannot_leave_the_scenarios_folder(capsys):
    for name in ("../..", "../releases/2026.1", "/etc/passwd", "two-site-modules/../x"):
        assert main(["demo", "--scenario", name]) == 2
        err = capsys.readouterr().err
        assert err.startswith("matprops: error: option --scenario must be one of")
        assert len(err.splitlines()) == 1


def test_a_scenario_goes_through_checksum_and_schema(datasets_copy, monkeypatch, capsys):
    from matprops.catalogue.store import default_catalogue

    root, catalogue = datasets_copy
    path = root / "scenarios" / "two-site-modules.toml"
    path.write_text(path.read_text() + "\n# edited\n")
    monkeypatch.setenv("MATPROPS_DATASETS", str(root))
    default_catalogue.cache_clear()
    try:
        assert main(["demo"]) == 2
        err = capsys.readouterr().err
        assert "two-site-modules.toml: sha256" in err and len(err.splitlines()) == 1
        path.write_text(path.read_text().replace("invented = true", "invented = 'yes'"))
        catalogue.write_checksums()
        default_catalogue.cache_clear()
        assert main(["demo"]) == 2
        err = capsys.readouterr().err
        assert "two-site-modules.toml" in err and "invented" in err
    finally:
        default_catalogue.cache_clear()


def _edit_model(root, quantity, model_id, old, new):
    path = root / "models" / quantity / f"{model_id}.toml"
    text = path.read_text()
    assert old in text
    path.write_text(text.replace(old, new, 1))


@pytest.mark.parametrize(
    "name", ["../releases/2026.1.reference.json", "/etc/hostname", "sub/green-2008.nc", ".."]
)
def test_a_table_name_cannot_leave_the_tables_folder(datasets_copy, name):
    root, _ = datasets_copy
    _edit_model(root, "absorption", "green-2008", 'table = "green-2008.nc"', f'table = "{name}"')
    Catalogue(root).write_checksums()
    si = matprops.Silicon(catalogue=Catalogue(root), models={"absorption": "green-2008"})
    with pytest.raises(matprops.DatasetError, match="named by its file name in the tables folder"):
        si.absorption(800.0, 300.0)


def test_a_symbolic_link_out_of_the_datasets_folder_is_refused(datasets_copy, tmp_path):
    root, _ = datasets_copy
    outside = tmp_path / "outside.nc"
    (root / "tables" / "green-2008.nc").rename(outside)
    (root / "tables" / "green-2008.nc").symlink_to(outside)
    with pytest.raises(matprops.DatasetError, match="lies outside the datasets folder"):
        Catalogue(root).table("green-2008.nc")


def test_nan_in_a_stored_table_is_refused(datasets_copy):
    import netCDF4

    root, _ = datasets_copy
    with netCDF4.Dataset(root / "tables" / "green-2008.nc", "a") as handle:
        handle["absorption_coefficient"][3] = float("nan")
    Catalogue(root).write_checksums()
    catalogue = Catalogue(root)
    with pytest.raises(matprops.DatasetError, match="'absorption_coefficient' holds NaN"):
        matprops.Silicon(catalogue=catalogue).absorption(800.0, 300.0)
    with pytest.raises(matprops.DatasetError, match="'absorption_coefficient' holds NaN"):
        catalogue.table("green-2008.nc")
    problems, _ = __import__("matprops.catalogue.checks", fromlist=["check"]).check(catalogue)
    assert any("holds NaN" in p for p in problems)


def test_a_file_too_large_is_refused_before_it_is_read(datasets_copy):
    # a sparse 4 GiB file (no disk used) listed with some checksum: reading it whole
    # first would take seconds and 4 GiB of memory before the checksum refused it
    root, catalogue = datasets_copy
    path = root / "tables" / "huge.nc"
    with open(path, "wb") as handle:
        handle.truncate(4 << 30)
    with open(root / "checksums.sha256", "a") as handle:
        handle.write(f"{'0' * 64}  tables/huge.nc\n")
    catalogue = Catalogue(root)
    started = time.monotonic()
    with pytest.raises(matprops.DatasetError, match=r"huge\.nc: is 4294967296 bytes, above"):
        catalogue.table("huge.nc")
    assert time.monotonic() - started < 1.0  # (stat, not read)


def test_a_checksum_list_too_large_is_refused(datasets_copy):
    root, _ = datasets_copy
    with open(root / "checksums.sha256", "ab") as handle:
        handle.truncate(64 << 20)
    with pytest.raises(matprops.DatasetError, match="checksums.sha256: is .* bytes, above"):
        Catalogue(root).checksums()


@pytest.mark.parametrize("depth", [40, 1_000, 100_000])
def test_deeply_nested_toml_is_a_one_line_error(datasets_copy, depth, capsys, monkeypatch):
    from matprops.catalogue.store import default_catalogue

    root, _ = datasets_copy
    path = root / "models" / "band_gap" / "passler-2002.toml"
    path.write_text(path.read_text() + "\nnested = " + "[" * depth + "]" * depth + "\n")
    Catalogue(root).write_checksums()
    with pytest.raises(matprops.DatasetError, match="nests tables or arrays") as info:
        Catalogue(root).model("band_gap", "passler-2002")
    assert len(str(info.value).splitlines()) == 1
    assert info.value.__cause__ is None or not isinstance(info.value.__cause__, RecursionError)
    monkeypatch.setenv("MATPROPS_DATASETS", str(root))
    default_catalogue.cache_clear()
    try:
        assert main(["table", "band_gap", "-t", "300"]) == 2
    finally:
        default_catalogue.cache_clear()
    err = capsys.readouterr().err
    assert "nests tables or arrays" in err and len(err.splitlines()) == 1
