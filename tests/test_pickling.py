"""Errors, warnings, Silicon objects and bound kernels cross process boundaries
(process pools, dask workers) by pickle."""

import io
import pickle
from pathlib import Path

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
    (errors.UnknownModelError("passler-2003", ["passler-2002"], "for band_gap"),
     ("name", "known")),
    (errors.UnknownQuantityError("bandgap", ["band_gap"]), ("name", "known")),
    (errors.UnknownReleaseError("2025.9", ["2026.1"]), ("name", "known")),
    (errors.DatasetError(Path("models/a/b.toml"), "missing field 'id'"), ("path", "problem")),
    (errors.ChecksumError("tables/x.nc", "sha256 differs"), ("path", "problem")),
    (errors.ReleaseFrozenError("release 2026.1 is final"), ()),
    (errors.ValidityError("temperature 700 K is outside 0-600 K"), ()),
    (errors.ValidityWarning("temperature 700 K is outside 0-600 K"), ()),
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


@pytest.mark.parametrize("instance, fields", EXAMPLES,
                         ids=[type(i).__name__ for i, _ in EXAMPLES])
def test_error_round_trips_through_pickle(instance, fields):
    copy = round_trip(instance)
    assert type(copy) is type(instance)
    assert str(copy) == str(instance) and copy.args == instance.args
    for name in fields:
        assert getattr(copy, name) == getattr(instance, name)


def test_unpicklable_received_value_becomes_its_repr():
    error = errors.InputError("temperature", "a number", (x for x in ()))
    copy = round_trip(error)
    assert str(copy) == str(error) and copy.received.startswith("<generator")


def test_error_raised_in_a_spawned_worker_reaches_the_parent(spawn_pool):
    # before: the parent could not unpickle the error and waited forever
    pending = spawn_pool.apply_async(to_magnitude, (-5.0, "temperature"))
    with pytest.raises(matprops.InputError, match=r"'temperature' must be > 0 K") as info:
        pending.get(timeout=60)
    assert info.value.argument == "temperature"
