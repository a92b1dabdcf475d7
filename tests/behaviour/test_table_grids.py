"""Tables over every axis, lazy tables, model comparison and release differences.

The external check of a table is the library's own single-point answer: every table
value must equal what the unit-aware method returns for that one point (the table
is a re-arrangement of those answers, nothing more). Those are regression checks of
the table machinery; the physics behind each method is checked against published
values in the other test files.
"""

import json
import warnings

import numpy as np
import pytest

import matprops
from matprops.material import tables
from matprops.material.tables import QUANTITIES, available


def test_table_values_equal_single_calls(si):
    temperatures = matprops.Q_([-40.0, 25.0, 85.0], "degC")
    data = si.table(
        [
            "band_gap",
            "intrinsic_density",
            "densities_of_states",
            "density",
            "absorption",
            "surface_atom_density",
        ],
        T=temperatures,
        wavelength=[400.0, 800.0, 1100.0],
        plane=["100", "111"],
    )
    kelvin = temperatures.m_as("K")
    for i, t in enumerate(kelvin):
        assert data.band_gap.values[i] == si.band_gap(t).m_as("eV")
        assert data.intrinsic_density.values[i] == si.intrinsic_density(t).m_as("cm^-3")
        nc, nv = si.densities_of_states(t)
        assert data.conduction_band_states.values[i] == nc.m_as("cm^-3")
        assert data.valence_band_states.values[i] == nv.m_as("cm^-3")
        assert data.density.values[i] == si.density(t).m_as("g/cm^3")
        for j, lam in enumerate(data.wavelength.values):
            expected = si.absorption(lam, t).m_as("1/cm")
            assert data.absorption.values[i, j] == pytest.approx(expected, rel=1e-14)
        for k, plane in enumerate(["100", "111"]):
            assert data.surface_atom_density.values[k, i] == pytest.approx(
                si.surface_atom_density(plane, t).m_as("cm^-2"), rel=1e-14
            )
    assert data.temperature.attrs["requested_units"] == "degC"
    np.testing.assert_allclose(data.temperature.values, kelvin)


def test_free_carrier_absorption_and_permittivity_are_tabulable(si):
    data = si.table(
        ["free_carrier_absorption", "permittivity", "molar_mass"],
        wavelength=[1300.0, 1550.0],
        n=[1e15, 1e16],
        p=[0.0, 1e16],
    )
    assert data.free_carrier_absorption.dims == (
        "electron_density",
        "hole_density",
        "wavelength",
    )
    for a, n in enumerate([1e15, 1e16]):
        for b, p in enumerate([0.0, 1e16]):
            for c, lam in enumerate([1300.0, 1550.0]):
                assert data.free_carrier_absorption.values[a, b, c] == pytest.approx(
                    si.free_carrier_absorption(lam, n=n, p=p).m_as("1/cm"), rel=1e-14
                )
    assert data.permittivity.dims == ()
    assert data.permittivity.item() == si.permittivity().m_as("")
    assert data.permittivity.attrs["units"] == "1"
    assert data.molar_mass.attrs["units"] == "g mol^-1"


def test_every_quantity_of_the_release_can_be_tabulated(si):
    samples = {
        "temperature": [250.0, 300.0],
        "wavelength": [1100.0, 1200.0],
        "acceptor_density": [1e15, 1e17],
        "donor_density": [0.0, 1e16],
        "excess_density": [0.0, 1e15],
        "electron_density": [1e16],
        "hole_density": [1e16],
        "carrier": ["electron", "hole"],
        "plane": ["100", "110", "111"],
        "defect": ["iron-interstitial"],
        "defect_density": [1e11],
        "generation": [1e17],
        "thickness": matprops.Q_([180.0], "um"),
        "dopant": ["boron", "phosphorus"],
        "dopant_density": [1e16, 1e18],
        "field": [0.0, 1e4],
        "resistivity": [1.0, 10.0],
    }
    served = available(si)
    # every quantity with a model in the release, and every derived one, is in the registry
    from matprops.material.derived import DERIVED

    assert set(si.models) | set(DERIVED) <= set(QUANTITIES)
    for name in served:
        grid = {axis: samples[axis] for axis in QUANTITIES[name].takes}
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", matprops.ValidityWarning)
            data = si.table([name], **grid)
        for variable, _ in QUANTITIES[name].outputs:
            assert variable in data and data[variable].attrs["units"]
            assert json.loads(data[variable].attrs["provenance"])["release"] == si.release.id


def test_dimensions_are_the_axes_given(si):
    data = si.table(["band_gap", "absorption"], T=300.0, wavelength=[500.0, 600.0])
    assert dict(data.sizes) == {"wavelength": 2}
    assert data.temperature.dims == () and float(data.temperature) == 300.0
    assert data.band_gap.dims == ()
    assert data.absorption.dims == ("wavelength",)
    data = si.table(["band_gap", "gap_narrowing"], T=[300.0, 350.0], Na=[1e15, 1e16])
    assert list(data.dims) == ["temperature", "acceptor_density"]  # the order of AXES
    assert data.band_gap.dims == ("temperature",)  # depends on temperature only
    assert data.acceptor_density.attrs["units"] == "cm^-3"


def test_axes_that_do_not_apply_are_refused_or_dropped(si):
    # named quantities: an axis none of them depends on is refused, one line naming them
    with pytest.raises(matprops.InputError, match=r"'acceptor_density'.*band_gap on temperature"):
        si.table(["band_gap"], T=[300.0, 350.0], Na=[1e15, 1e16])
    with pytest.raises(matprops.InputError, match=r"'resistivity'.*resistivity on temperature"):
        si.table(["resistivity"], T=300.0, rho=[1.0, 3.0], dopant="boron")
    # quantities chosen from the axes: the axis no chosen quantity takes is dropped
    data = si.table(T=[300.0], wavelength=[800.0], plane="100")
    assert "plane" in data.coords
    data = si.table(T=[300.0], field=[1e3])  # high-field mobility needs a carrier: none
    assert "field" not in data.coords


def test_default_selection_follows_the_axes(si):
    names = {v.attrs["quantity"] for v in si.table(T=[300.0]).data_vars.values()}
    # the rule: every quantity of the release that depends on temperature, needs no
    # other axis and wants none (read from the registry, so a new one is included)
    expected = {
        name
        for name in available(si)
        if "temperature" in QUANTITIES[name].takes
        and set(QUANTITIES[name].required) <= {"temperature"}
        and not QUANTITIES[name].wants
        and QUANTITIES[name].by_default
    }
    assert names == expected
    assert {"band_gap", "intrinsic_density", "density", "radiative_coefficient"} <= names
    assert not {"mobility", "gap_narrowing", "absorption", "molar_mass"} & names
    with_light = {
        v.attrs["quantity"] for v in si.table(T=[300.0], wavelength=[800.0]).data_vars.values()
    }
    assert {"absorption", "refractive_index"} <= with_light
    assert "free_carrier_absorption" not in with_light  # zero without carriers
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        with_carriers = si.table(wavelength=[1300.0], n=[1e17])
    assert "free_carrier_absorption" in with_carriers


@pytest.mark.parametrize(
    "kwargs, pattern",
    [
        ({"T": [300], "temperature": [300]}, r"'temperature' must be given once"),
        ({"T": [300], "Tx": [1]}, r"'Tx' must be a grid axis: one of .*acceptor_density"),
        ({"T": [300], "plane": ["101"]}, r"'plane' must be one of 100, 110, 111"),
        ({"T": [[300, 310]]}, r"'temperature' must be a scalar or a 1-D list"),
        ({"T": []}, r"'temperature' must be at least one value"),
        ({"T": [300, -5]}, r"'temperature' must be > 0 K"),
        ({"T": matprops.Q_([1], "m")}, r"'temperature' expects a quantity in K"),
        ({"temperature": ["intrinsic_density"]}, r"quantity names go in the first argument"),
    ],
)
def test_bad_grids(si, kwargs, pattern):
    with pytest.raises(matprops.Error, match=pattern):
        si.table(["band_gap"], **kwargs)


def test_bad_quantities(si):
    with pytest.raises(matprops.UnknownQuantityError, match="Did you mean 'band_gap'"):
        si.table(["bandgap"], T=300)
    with pytest.raises(matprops.InputError, match="'wavelength' must be given for absorption"):
        si.table(["absorption"], T=300)
    with pytest.raises(matprops.InputError, match="quantity names"):
        si.table([3], T=300)
    data = si.table("band_gap", T=300)  # one name, not a list of letters
    assert list(data.data_vars) == ["band_gap", "band_gap_validity"]


def test_large_grids_are_evaluated_in_blocks(si, monkeypatch):
    t = np.linspace(250.0, 400.0, 40)
    lam = np.linspace(400.0, 1100.0, 50)
    whole = si.table(["absorption", "band_gap"], T=t, wavelength=lam)
    monkeypatch.setattr(tables, "BLOCK", 128)  # force many blocks
    calls = []
    blocked = si.table(
        ["absorption", "band_gap"],
        T=t,
        wavelength=lam,
        progress=lambda done, total: calls.append((done, total)),
    )
    np.testing.assert_array_equal(blocked.absorption, whole.absorption)
    np.testing.assert_array_equal(blocked.band_gap, whole.band_gap)
    assert len(calls) > 10 and calls[-1] == (2040, 2040)
    assert [d for d, _ in calls] == sorted(d for d, _ in calls)
    # the validity check runs once, on the extremes, with the full grid's range
    with pytest.warns(matprops.ValidityWarning) as record:
        si.table(["band_gap"], T=np.linspace(300.0, 700.0, 1000))
    assert len(record) == 1 and "300-700 K" in str(record[0].message)
    with pytest.raises(matprops.ValidityError, match="300-700 K"):
        matprops.silicon(strict=True).table(["band_gap"], T=np.linspace(300.0, 700.0, 1000))


def test_lazy_table_matches_eager(si):
    pytest.importorskip("dask")
    t = np.linspace(250.0, 400.0, 30)
    lam = np.linspace(400.0, 1100.0, 20)
    eager = si.table(["absorption", "densities_of_states", "band_gap"], T=t, wavelength=lam)
    lazy = si.table(
        ["absorption", "densities_of_states", "band_gap"],
        T=t,
        wavelength=lam,
        chunks={"T": 7, "wavelength": 8},
    )
    assert lazy.absorption.chunks == ((7, 7, 7, 7, 2), (8, 8, 4))
    computed = lazy.compute(scheduler="synchronous")
    for name in eager.data_vars:
        np.testing.assert_array_equal(computed[name], eager[name])
        assert str(computed[name].attrs) == str(eager[name].attrs)  # flag_values: arrays
    # dask keys are deterministic, and differ when the chunks differ
    again = si.table(["absorption"], T=t, wavelength=lam, chunks={"T": 7, "wavelength": 8})
    assert again.absorption.data.name == lazy.absorption.data.name
    other = si.table(["absorption"], T=t, wavelength=lam, chunks=7)
    assert other.absorption.data.name != lazy.absorption.data.name
    # blocks larger than the evaluation block are evaluated in pieces, same numbers
    big = si.table(
        ["absorption"],
        T=np.linspace(250.0, 400.0, 600),
        wavelength=np.linspace(400.0, 1100.0, 500),
        chunks=600,
    )
    np.testing.assert_array_equal(
        big.absorption.compute(scheduler="synchronous"),
        si.table(
            ["absorption"],
            T=np.linspace(250.0, 400.0, 600),
            wavelength=np.linspace(400.0, 1100.0, 500),
        ).absorption,
    )
    with pytest.warns(matprops.ValidityWarning, match="200-1100 nm"):  # warned at build time
        si.table(["absorption"], T=t, wavelength=np.linspace(200.0, 1100.0, 10), chunks=5)
    with pytest.raises(matprops.InputError, match="'chunks'"):
        si.table(["absorption"], T=t, wavelength=lam, chunks=0)


def test_lazy_table_on_a_two_worker_cluster(si):
    distributed = pytest.importorskip("distributed")
    t = np.linspace(250.0, 400.0, 64)
    lam = np.linspace(400.0, 1100.0, 32)
    eager = si.table(["absorption", "intrinsic_density"], T=t, wavelength=lam)
    lazy = si.table(["absorption", "intrinsic_density"], T=t, wavelength=lam, chunks=16)
    with (
        distributed.LocalCluster(
            n_workers=2,
            threads_per_worker=1,
            processes=True,
            host="127.0.0.1",
            dashboard_address=":0",
        ) as cluster,
        distributed.Client(cluster) as client,
    ):
        assert client.scheduler_info()["workers"]
        # Dataset.compute() runs on the client's cluster; client.compute(dataset) fails in
        # dask/distributed 2026.8 for any Dataset whose variables share a dependency
        # (here each value and its validity flags): "lost dependencies", measured with
        # plain dask arrays too
        computed = lazy.compute()
    np.testing.assert_array_equal(computed.absorption, eager.absorption)
    np.testing.assert_array_equal(computed.absorption_validity, eager.absorption_validity)
    np.testing.assert_array_equal(computed.intrinsic_density, eager.intrinsic_density)


def test_compare_puts_models_side_by_side(si):
    t = [100.0, 300.0, 500.0]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        data = si.compare("band_gap", T=t)
    ids = matprops.models("band_gap")
    assert list(data.model.values) == ids
    assert data.band_gap.dims == ("model", "temperature")
    for k, model_id in enumerate(ids):
        other = matprops.silicon(models={"band_gap": model_id})
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", matprops.ValidityWarning)
            np.testing.assert_array_equal(data.band_gap.values[k], other.band_gap(t).m_as("eV"))
        assert "doi" in data.citation.values[k]
    # the spread counts only the models inside their validity range at each point
    valid = np.where(data.band_gap_validity.values == 0, data.band_gap.values, np.nan)
    spread = np.nanmax(valid, axis=0) - np.nanmin(valid, axis=0)
    np.testing.assert_allclose(data.band_gap_spread.values, spread, rtol=1e-14)
    np.testing.assert_allclose(
        data.band_gap_relative_spread.values,
        spread / np.nanmean(np.abs(valid), axis=0),
        rtol=1e-14,
    )
    np.testing.assert_array_equal(
        data.band_gap_valid_models.values, (data.band_gap_validity.values == 0).sum(axis=0)
    )
    assert (data.band_gap_validity.values == 1).any()  # 100-500 K leaves some ranges
    assert data.band_gap_spread.attrs["units"] == "eV"
    assert set(json.loads(data.band_gap.attrs["provenance"])) == set(ids)


def test_compare_choices_and_errors(si):
    pair = si.compare("intrinsic_density", ["couderc-2014", "boltzmann"], T=[300.0])
    assert list(pair.model.values) == ["couderc-2014", "boltzmann"]
    # the release's other choices (and overrides) stay: boltzmann uses this gap model
    thurmond = matprops.silicon(models={"band_gap": "thurmond-1975"})
    other = thurmond.compare("intrinsic_density", ["boltzmann"], T=[300.0])
    assert other.intrinsic_density.item() == pytest.approx(
        matprops.silicon(models={"band_gap": "thurmond-1975", "intrinsic_density": "boltzmann"})
        .intrinsic_density(300.0)
        .m_as("cm^-3"),
        rel=1e-14,
    )
    with pytest.raises(matprops.UnknownModelError, match="Did you mean 'passler-2002'"):
        si.compare("band_gap", ["passler-2003"], T=[300.0])
    with pytest.raises(matprops.UnknownQuantityError, match="with models to compare"):
        si.compare("density", T=[300.0])
    with pytest.raises(matprops.InputError, match="distinct"):
        si.compare("band_gap", ["passler-2002", "passler-2002"], T=[300.0])


def _second_release(root, catalogue, changes):
    # a second draft 2030.2 beside the copy's draft 2030.1: both read the main tree's
    # model files, so only the changed choices differ (a final release reads its
    # archive, whose files may differ from the main tree's)
    text = (root / "releases/2030.1.toml").read_text()
    text = text.replace('release = "2030.1"', 'release = "2030.2"')
    for quantity, (old, new) in changes.items():
        text = text.replace(f'{quantity} = "{old}"', f'{quantity} = "{new}"')
    (root / "releases/2030.2.toml").write_text(text)
    catalogue.write_checksums()


def test_release_difference_with_a_temporary_second_release(datasets_copy):
    root, catalogue = datasets_copy
    _second_release(
        root,
        catalogue,
        {
            "band_gap": ("passler-2002", "thurmond-1975"),
            "intrinsic_density": ("couderc-2014", "boltzmann"),
        },
    )
    from matprops.outputs.changes import release_difference

    diff = release_difference("2030.1", "2030.2", catalogue)
    changed = {r["quantity"] for r in diff["models"] if r["changed"]}
    assert changed == {"band_gap", "intrinsic_density"}
    record = {r["quantity"]: r for r in diff["models"]}["band_gap"]
    assert (record["old"], record["new"]) == ("passler-2002", "thurmond-1975")
    deviations = {d["case"]: d for d in diff["deviations"]}
    assert deviations["lattice_constant"]["largest_relative"] == 0.0
    assert deviations["absorption"]["largest_relative"] == 0.0
    # the band-gap deviation, recomputed here point by point from the two models
    from matprops.outputs.reference import TEMPERATURES

    old = matprops.Silicon(release="2030.1", catalogue=catalogue)
    new = matprops.Silicon(release="2030.2", catalogue=catalogue)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        ratio = np.abs(new.band_gap(TEMPERATURES).m / old.band_gap(TEMPERATURES).m - 1)
    assert deviations["band_gap"]["largest_relative"] == pytest.approx(ratio.max(), rel=1e-12)
    assert deviations["band_gap"]["at"] == {"temperature": TEMPERATURES[int(ratio.argmax())]}
    assert deviations["intrinsic_density"]["largest_relative"] > 0.001


def _fake_narrowing(self, T, Na=0, Nd=0):
    """A stand-in doping quantity (NOT physics): 0.01 eV per decade of total doping
    above 1e17 cm^-3, to show that a registry entry alone makes a method tabulable."""
    from matprops.units import quantity, to_magnitude

    t = to_magnitude(T, "temperature")
    total = to_magnitude(Na, "acceptor_density") + to_magnitude(Nd, "donor_density")
    shift = 0.01 * np.log10(np.maximum(total, 1e17) / 1e17)
    return quantity(np.broadcast_to(shift, np.broadcast(t, shift).shape).copy(), "eV")


@pytest.fixture
def plugged(plug_quantity):
    """A doping quantity added the way the new ones are: one declaration."""
    plug_quantity(
        _fake_narrowing,
        "gap_narrowing",
        units="eV",
        long_name="band-gap narrowing (test stand-in)",
        wants=("acceptor_density", "donor_density"),
        models=("band_gap",),
    )
    return matprops.silicon()


def test_a_registry_entry_is_all_a_new_quantity_needs(plugged):
    si = plugged
    data = si.table(["gap_narrowing"], T=[300.0, 350.0], Na=np.logspace(15, 20, 6), Nd=0)
    assert data.gap_narrowing.dims == ("temperature", "acceptor_density")
    for j, na in enumerate(data.acceptor_density.values):
        assert data.gap_narrowing.values[0, j] == si.gap_narrowing(300.0, Na=na).m_as("eV")
    assert "gap_narrowing" in {
        v.attrs["quantity"] for v in si.table(T=[300.0], Nd=[1e18]).data_vars.values()
    }
    assert "gap_narrowing" not in {
        v.attrs["quantity"] for v in si.table(T=[300.0]).data_vars.values()
    }


def test_methods_returning_a_result_object(plug_quantity):
    """A method that answers with several named fields (like the equilibrium result)
    is tabulated field by field."""
    from dataclasses import dataclass

    from matprops.material.registry import Part

    @dataclass(frozen=True)
    class Pair:
        gap: object
        states: object

    def pair_probe(self, T):
        nc, _ = self.densities_of_states(T)
        return Pair(self.band_gap(T), nc)

    plug_quantity(
        pair_probe,
        units=("eV", "cm^-3"),
        parts=(Part("gap", "gap", "gap"), Part("states", "states", "states")),
        models=("band_gap", "densities_of_states"),
    )
    si = matprops.silicon()
    data = si.table(["pair_probe"], T=[250.0, 300.0])
    np.testing.assert_array_equal(data.gap, si.band_gap([250.0, 300.0]).m_as("eV"))
    assert data.states.attrs["units"] == "cm^-3"
