"""Errors, warnings, Silicon objects and bound kernels cross process boundaries
(process pools, dask workers) by pickle."""

import copy
import io
import pickle
from pathlib import Path

import numpy as np
import pytest

import matprops
from matprops import errors
from matprops.units import Q_, to_magnitude

# one example of every class that matprops.errors exports: (instance, fields to compare)
EXAMPLES = [
    (errors.Error("something went wrong"), ()),
    (errors.UnitError("temperature", "K", Q_(3.0, "m")), ("argument", "expected", "received")),
    (errors.InputError("temperature", "> 0 K", "-5 K"), ("argument", "requirement", "received")),
    (errors.UnknownNameError("x", ["a", "b"], "in a test"), ("name", "known")),
    (errors.UnknownModelError("passler-2003", ["passler-2002"], "for band_gap"), ("name", "known")),
    (errors.UnknownQuantityError("bandgap", ["band_gap"]), ("name", "known")),
    (errors.UnknownReleaseError("2025.9", ["2026.1"]), ("name", "known")),
    (errors.DatasetError(Path("models/a/b.toml"), "missing field 'id'"), ("path", "problem")),
    (errors.ChecksumError("tables/x.nc", "sha256 differs"), ("path", "problem")),
    (errors.FinalityError("releases/x.seal.json", "not the recorded seal"), ("path", "problem")),
    (
        errors.UnknownVariantError("tin", ["boron", "phosphorus"], "for ionisation"),
        ("name", "known"),
    ),
    (
        errors.UnknownDefectError("Fe_s", ["iron-interstitial"], "in the defect catalogue"),
        ("name", "known"),
    ),
    (errors.ReleaseFrozenError("release 2026.1 is final"), ()),
    (errors.SolverError("charge neutrality did not converge at 3 points"), ()),
    (errors.ValidityError("temperature 700 K is outside 0-600 K"), ()),
    (errors.ValidityWarning("temperature 700 K is outside 0-600 K"), ()),
    (errors.SkippedModelWarning("compare mobility: caughey-1967 has no hole"), ()),
]


def round_trip(value):
    """pickle.dumps and loads with the classes' own reducers only: once dask is imported
    (pint imports it when installed) tblib's reducers would hide a broken one."""
    buffer = io.BytesIO()
    pickler = pickle.Pickler(buffer)
    pickler.dispatch_table = {}
    pickler.dump(value)
    return pickle.loads(buffer.getvalue())


def test_every_exported_error_and_warning_has_an_example():
    exported = {getattr(errors, name) for name in errors.__all__}
    assert {type(instance) for instance, _ in EXAMPLES} == exported


@pytest.mark.parametrize("instance, fields", EXAMPLES, ids=[type(i).__name__ for i, _ in EXAMPLES])
def test_error_round_trips_through_pickle(instance, fields):
    clone = round_trip(instance)
    assert type(clone) is type(instance)
    assert str(clone) == str(instance) and clone.args == instance.args
    for name in fields:
        assert getattr(clone, name) == getattr(instance, name)


def test_unpicklable_received_value_becomes_its_repr():
    error = errors.InputError("temperature", "a number", (x for x in ()))
    clone = round_trip(error)
    assert str(clone) == str(error) and clone.received.startswith("<generator")


def test_error_raised_in_a_spawned_worker_reaches_the_parent(spawn_pool):
    # before: the parent could not unpickle the error and waited forever
    pending = spawn_pool.apply_async(to_magnitude, (-5.0, "temperature"))
    with pytest.raises(matprops.InputError, match=r"'temperature' must be > 0 K") as info:
        pending.get(timeout=60)
    assert info.value.argument == "temperature"


# ------------------------------------------------------------------ materials and kernels


def test_silicon_pickles_with_release_overrides_and_strict_flag():
    si = matprops.silicon(models={"band_gap": "thurmond-1975"}, strict=True)
    clone = round_trip(si)
    assert clone.models == si.models and clone.release.id == si.release.id
    assert clone.strict is True and clone.overridden == {"band_gap"}
    assert clone.catalogue is si.catalogue  # the same process: the same shared catalogue
    assert clone.band_gap(300) == si.band_gap(300)
    with pytest.raises(matprops.ValidityError):
        clone.band_gap(2000)


def test_silicon_and_kernels_deep_copy(si):
    twin = copy.deepcopy(si)
    assert twin is not si and twin.models == si.models
    assert twin.absorption(800, 300) == si.absorption(800, 300)
    kernel = si.kernel("intrinsic_density")  # a composed model: its parts come along
    assert copy.deepcopy(kernel)(temperature=300.0) == kernel(temperature=300.0)
    assert round_trip(kernel)(temperature=300.0) == kernel(temperature=300.0)
    assert round_trip(si.release).models == si.release.models
    boron = si.kernel("ionisation", dopant="boron")  # one coefficient set of a model
    clone = round_trip(boron)
    assert clone.variant == "boron" and copy.deepcopy(boron) is boron
    np.testing.assert_array_equal(clone(dopant_density=1e18), boron(dopant_density=1e18))


def test_pickle_keeps_the_catalogue_root(datasets_copy):
    root, catalogue = datasets_copy
    si = matprops.Silicon(catalogue=catalogue)
    clone = round_trip(si)
    assert clone.catalogue.root == root
    assert round_trip(si.kernel("band_gap")).path.is_relative_to(root)


def test_unpickling_against_different_data_is_refused(datasets_copy):
    from matprops.catalogue import store as catalogue_module

    root, catalogue = datasets_copy
    data = pickle.dumps(matprops.Silicon(catalogue=catalogue))
    path = root / "models/band_gap/passler-2002.toml"
    path.write_text(path.read_text() + "\n# changed after pickling\n")
    catalogue.write_checksums()
    catalogue_module._CATALOGS.pop(root, None)  # as in a fresh worker process
    clone = pickle.loads(data)  # never raises while unpickling: a pool would wait forever
    with pytest.raises(matprops.DatasetError, match=r"passler-2002\.toml: has sha256"):
        clone.band_gap(300)  # the first use raises, in an ordinary call
    with pytest.raises(matprops.DatasetError, match=r"passler-2002\.toml: has sha256"):
        clone.release  # noqa: B018  (an attribute, read: it raises)


def test_spawn_pool_gives_the_serial_numbers(spawn_pool, si):
    wavelength = np.linspace(400, 1100, 8)
    temperature = np.array([[280.0], [300.0], [350.0]])
    jobs = [
        (si.absorption, (wavelength, temperature), {}),
        (si.band_gap, (temperature,), {}),
        (si.densities_of_states, (temperature,), {}),
        (si.kernel("intrinsic_density"), (), {"temperature": temperature}),
        (si.kernel("refractive_index"), (), {"wavelength": wavelength, "temperature": 300.0}),
    ]
    pending = [spawn_pool.apply_async(f, args, kwargs) for f, args, kwargs in jobs]
    for (function, args, kwargs), result in zip(jobs, pending, strict=True):
        expected = function(*args, **kwargs)
        np.testing.assert_array_equal(_magnitudes(result.get(timeout=60)), _magnitudes(expected))


def _magnitudes(value):
    parts = value if isinstance(value, tuple) else (value,)
    return [np.asarray(getattr(p, "magnitude", p)) for p in parts]


def test_dask_local_cluster_gives_the_serial_numbers(si):
    import dask.array as da
    from distributed import Client, LocalCluster

    temperature = np.linspace(250.0, 450.0, 40)
    wavelength = np.linspace(400.0, 1100.0, 30)
    kernel = si.kernel("absorption")
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
        gaps = client.gather(client.map(si.band_gap, np.split(temperature, 4)))
        alpha = (
            da.from_array(wavelength[:, None], chunks=(10, 1))
            .map_blocks(
                lambda block: kernel(wavelength=block, temperature=temperature[None, :]),
                chunks=(10, temperature.size),
                dtype=float,
            )
            .compute()
        )
    np.testing.assert_array_equal(
        np.concatenate([g.m_as("eV") for g in gaps]), si.band_gap(temperature).m_as("eV")
    )
    np.testing.assert_array_equal(
        alpha, kernel(wavelength=wavelength[:, None], temperature=temperature[None, :])
    )
