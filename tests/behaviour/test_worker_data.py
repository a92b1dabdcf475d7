"""Workers verify all data.

A pickled material (and every kernel or bound method of it) and a lazy table carry the
sha256 of every data file their numbers are read from: model files, the tables those
read, the defect catalogue. A worker whose data differ gets a material that raises a
DatasetError on its first use; the error travels back to the client like any other, in
spawn, fork and forkserver process pools and on a dask.distributed cluster, and nothing
hangs (unpickling itself never raises: a process pool would wait forever for a worker
that died unpickling its task, and a dask client hangs). Before, only model files were
compared: a worker with a changed table gave absorption 0.1 % off, one with a changed
defect file an Fe_i lifetime 2 % off, without a word; a lazy table compared nothing.

Each case works on a private copy of the datasets folder that is changed after the
parent loaded it (and its checksum list re-recorded, as a careless edit would): the
parent keeps what it read, a new worker reads the changed files.
"""

import multiprocessing
import re
import shutil
import sys

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import matprops
from matprops.catalogue import store
from matprops.catalogue.store import Catalogue

CHANGES = {
    # what is changed -> (file named in the error, the call that reads it)
    "table": "tables/green-2008.nc",
    "defect": "defects/iron-interstitial.toml",
}


def _copy(template, tmp_path, name):
    # a copy whose newest release is a draft (conftest's DRAFT): it reads the live model,
    # defect and table files, so a change to one of them is a change to its numbers
    root = tmp_path / name
    shutil.copytree(template, root)
    return root


def _change(root, what):
    """Change one data file and re-record the checksum list (with another Catalogue
    object: the parent's keeps the list it read)."""
    if what == "table":
        import netCDF4

        with netCDF4.Dataset(root / CHANGES["table"], "a") as handle:
            variable = handle["absorption_coefficient"]
            variable[:] = variable[:] * 1.001
    else:
        path = root / CHANGES["defect"]
        text = path.read_text()
        path.write_text(text.replace("value = 5e-14", "value = 5.1e-14", 1))
    Catalogue(root).write_checksums()
    store._CATALOGS.pop(root, None)  # nothing of it is shared with a forked child


@pytest.fixture
def materials(tmp_path, _datasets_with_draft_template):
    """A material per change, loaded by the parent before its data changed."""
    found = {}
    for what in CHANGES:
        root = _copy(_datasets_with_draft_template, tmp_path, what)
        si = matprops.Silicon(catalogue=Catalogue(root))
        si.absorption(800.0, 300.0)  # loads the tables
        si.srh_lifetime("Fe_i", 300.0, Na=1e16, excess=1e14, density=1e11)
        getattr(si, "_data_digests", dict)()  # (what the parent read)
        _change(root, what)
        found[what] = si
    return found


def _calls(si):
    return [
        (si.absorption, (800.0, 300.0), {}),
        (si.srh_lifetime, ("Fe_i", 300.0), {"Na": 1e16, "excess": 1e14, "density": 1e11}),
        (si.kernel("absorption"), (), {"wavelength": 800.0, "temperature": 300.0}),
        (si.band_gap, (300.0,), {}),  # every use refuses: the material read other data
    ]


@pytest.mark.slow  # a process pool per start method: ~5 s each
@pytest.mark.parametrize(
    "method",
    [
        "spawn",
        pytest.param("fork", marks=pytest.mark.skipif(sys.platform == "win32", reason="POSIX")),
        pytest.param(
            "forkserver", marks=pytest.mark.skipif(sys.platform == "win32", reason="POSIX")
        ),
    ],
)
def test_a_pool_worker_with_other_data_refuses_with_a_clear_error(materials, method):
    from spawn_helpers import plain_pickling

    pool = multiprocessing.get_context(method).Pool(2, initializer=plain_pickling)
    try:
        for what, si in materials.items():
            for function, args, kwargs in _calls(si):
                pending = pool.apply_async(function, args, kwargs)
                with pytest.raises(matprops.DatasetError) as info:
                    pending.get(timeout=60)  # an error, not a hang
                message = str(info.value)
                assert CHANGES[what] in message and "read different data" in message
    finally:
        pool.terminate()
        pool.join()


@pytest.mark.slow  # a two-worker cluster: ~13 s
def test_a_dask_cluster_with_other_data_refuses_materials_and_lazy_tables(materials):
    from distributed import Client, LocalCluster

    lazy = {
        what: si.table(
            ["absorption"], T=np.linspace(280.0, 320.0, 8), wavelength=[600.0, 800.0], chunks=4
        )
        for what, si in materials.items()
    }
    with (
        LocalCluster(
            n_workers=2,
            threads_per_worker=1,
            processes=True,
            host="127.0.0.1",
            dashboard_address=None,
        ) as cluster,
        Client(cluster) as client,
    ):
        for what, si in materials.items():
            for function, args, kwargs in _calls(si):
                future = client.submit(function, *args, pure=False, **kwargs)
                with pytest.raises(matprops.DatasetError, match=CHANGES[what]):
                    future.result(timeout=60)
            variable = next(iter(lazy[what].data_vars.values()))
            future = client.compute(variable.data)
            with pytest.raises(matprops.DatasetError, match=CHANGES[what]):
                future.result(timeout=60)


def test_a_lazy_table_carries_the_digests_of_what_it_reads(si):
    from matprops.material.tables import _BlockFunction

    lazy = si.table(
        ["srh_lifetime"],
        defect="iron-interstitial",
        T=[290.0, 300.0],
        defect_density=1e11,
        chunks=1,
    )
    graph = dict(lazy.srh_lifetime.data.__dask_graph__())
    functions = [
        getattr(task, "func", None)
        for task in graph.values()
        if isinstance(getattr(task, "func", None), _BlockFunction)
    ]
    assert functions
    digests = dict(functions[0].digests)
    assert digests == si._data_digests()
    # a final release reads its models and defects from its archive
    read = {re.sub(r"^archive/[^/]+/", "", name) for name in digests}
    for expected in (
        "defects/iron-interstitial.toml",
        "models/srh_lifetime/shockley-1952.toml",
        f"releases/{si.release.id}.toml",
    ):
        assert expected in read
    absorption = matprops.silicon()._data_digests()
    assert {"tables/green-2008.nc", "tables/franta-2017.nc"} <= set(absorption)


def test_same_data_in_a_worker_gives_the_same_numbers_and_no_error(spawn_pool, si):
    pending = spawn_pool.apply_async(
        si.srh_lifetime, ("Fe_i", 300.0), {"Na": 1e16, "excess": 1e14, "density": 1e11}
    )
    expected = si.srh_lifetime("Fe_i", 300.0, Na=1e16, excess=1e14, density=1e11)
    assert pending.get(timeout=60) == expected


@settings(deadline=None, max_examples=40)
@given(st.data())
def test_any_differing_file_is_named(data):
    # whichever file of the material differs (changed, missing on one side, extra on
    # the other), the error names it
    si = matprops.silicon()
    digests = si._data_digests()
    assert si._digest_mismatch(digests) is None
    path = data.draw(st.sampled_from(sorted(digests)))
    change = data.draw(st.sampled_from(["changed", "missing here", "missing there"]))
    expected = dict(digests)
    if change == "changed":
        expected[path] = "f" * 64
    elif change == "missing there":
        del expected[path]
    else:
        path = "defects/a-defect-only-the-sender-has.toml"
        expected[path] = "e" * 64
    error = si._digest_mismatch(expected)
    assert isinstance(error, matprops.DatasetError) and path in str(error)
    assert "read different data" in str(error)
