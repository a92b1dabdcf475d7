"""The simulation-code door: bound kernels, blocks, checks, derivatives,
the array API, start-up.

Derivatives are checked against central finite differences of the kernels themselves
(common practice: the analytic partial must predict the same change). Everything
else here compares the kernels with the public API or with numpy on the same numbers:
regression checks, labelled so.
"""

import subprocess
import sys
import warnings

import numpy as np
import pytest

import matprops
from matprops.catalogue.store import default_catalogue
from matprops.kernels._blocks import BLOCK

CATALOG = default_catalogue()

# internal-unit values of every kernel input, inside the models' ranges
POINTS = {
    "temperature": (250.0, 450.0),
    "donor_density": (1e15, 1e19),
    "acceptor_density": (1e14, 1e18),
    "electron_density": (1e10, 1e19),
    "hole_density": (1e3, 1e18),
    "equilibrium_electron_density": (1e14, 1e19),
    "equilibrium_hole_density": (1e2, 1e18),
    "excess_density": (1e12, 1e17),
    "wavelength": (1400.0, 2000.0),
    "dopant_density": (1e14, 1e19),
}


def _grid(inputs, size=400, seed=0):
    """Random points for each input, log-uniform for densities."""
    rng = np.random.default_rng(seed)
    found = {}
    for name in inputs:
        low, high = POINTS[name]
        if high / low > 10:
            found[name] = 10 ** rng.uniform(np.log10(low), np.log10(high), size)
        else:
            found[name] = rng.uniform(low, high, size)
    return found


def _smooth_models():
    """Every model (and composition) with derivatives: (label, bound callable, inputs)."""
    cases = []
    for quantity in (
        "band_gap",
        "densities_of_states",
        "intrinsic_density",
        "gap_narrowing",
        "radiative_coefficient",
        "intrinsic_lifetime",
    ):
        for model_id in CATALOG.model_ids(quantity):
            si = matprops.silicon(models={quantity: model_id})
            cases.append((f"{quantity}/{model_id}", si.kernel(quantity)))
    for narrowing in CATALOG.model_ids("gap_narrowing"):
        si = matprops.silicon(models={"gap_narrowing": narrowing})
        cases.append(
            (
                f"effective_intrinsic_density with {narrowing}",
                si.kernel("effective_intrinsic_density"),
            )
        )
    for model_id in CATALOG.model_ids("mobility"):
        si = matprops.silicon(models={"mobility": model_id})
        model = si.model("mobility")
        carriers = [
            c
            for c in ("electron", "hole")
            if model.variant_axis != "carrier" or c in model.variants
        ]
        for carrier in carriers:
            cases.append((f"mobility/{model_id}/{carrier}", si.kernel("mobility", carrier=carrier)))
    return cases


SMOOTH = _smooth_models()


# ----------------------------------------------------------------- self-description


def test_kernels_describe_themselves(si):
    kernel = si.kernel("band_gap")
    for text in (kernel.__doc__, repr(kernel)):
        assert "passler-2002" in text and "temperature" in text and "eV" in text
        assert "Pässler" in text and "10.1103/PhysRevB.66.085201" in text
    assert "[K]" in repr(kernel) and "temperature : K; valid" in kernel.__doc__
    assert kernel.provenance["model"] == "passler-2002"
    assert kernel.provenance["release"] == si.release.id
    assert kernel.inputs == {"temperature": "K"} and kernel.output_units == "eV"
    assert "float64" in kernel.__doc__ and "blocks" in kernel.__doc__


def test_units_that_differ_from_the_api_are_said_loudly(si):
    lattice = si.kernel("lattice_constant")
    assert lattice.output_units == "cm" and lattice.api_units == "nm"
    assert "NOTE" in lattice.__doc__ and "NOTE" in repr(lattice)
    # regression check: the same number, 1e7 apart
    assert lattice(300.0) * 1e7 == pytest.approx(si.lattice_constant(300.0).m_as("nm"), rel=1e-15)
    assert si.lattice_constant(300.0).units == matprops.ureg.nanometer
    # every other single-model kernel returns the units of its public method
    for name in ("band_gap", "intrinsic_density", "absorption", "radiative_coefficient"):
        assert si.kernel(name).api_units == si.kernel(name).output_units
        assert "NOTE" not in si.kernel(name).__doc__


def test_the_existing_kernel_door_keeps_working(si):
    # regression check of the behaviours callers rely on
    solve = si.kernel("equilibrium", donor="phosphorus", acceptor="boron")
    result = solve(
        np.array([300.0, 350.0]),
        donor_density=np.array([1e16, 1e17]),
        acceptor_density=np.array([0.0, 1e15]),
    )
    state = si.equilibrium([300.0, 350.0], Nd=[1e16, 1e17], Na=[0.0, 1e15])
    np.testing.assert_allclose(result["electron_density"], state.n.m_as("cm^-3"), rtol=1e-14)
    level = si.kernel("ionisation", dopant="boron")
    assert level.variant == "boron" and level.path.name == "altermatt-2006.toml"
    assert level.provenance["variant"] == "boron"
    with pytest.raises(matprops.InputError, match="dopant"):
        si.kernel("ionisation")
    with pytest.raises(matprops.InputError, match="colour"):
        si.kernel("band_gap", colour="red")
    with pytest.raises(TypeError, match="temperature"):
        si.kernel("band_gap")(300.0, temperature=300.0)
    with pytest.raises(TypeError, match="no input or option 'temp'"):
        si.kernel("band_gap")(temp=300.0)


def test_kernels_take_every_name_and_densities_by_name_only(si):
    # the argument vocabulary: T or temperature, Nd or donor_density; densities named
    gap = si.kernel("band_gap")
    assert gap(T=300.0) == gap(temperature=300.0) == gap(300.0)
    with pytest.raises(TypeError, match="given twice"):
        gap(300.0, T=300.0)
    mobility = si.kernel("mobility", carrier="electron")
    named = mobility(300.0, Nd=1e17, Na=0.0, n=1e17, p=1e3)
    assert named == mobility(
        temperature=300.0,
        donor_density=1e17,
        acceptor_density=0.0,
        electron_density=1e17,
        hole_density=1e3,
    )
    with pytest.raises(TypeError, match="keyword-only .*cannot be swapped"):
        mobility(300.0, 1e17, 0.0, 1e17, 1e3)
    assert "(temperature, *, donor_density" in mobility.__doc__


def test_check_validates_a_whole_mesh_once(si):
    kernel = si.kernel("absorption")
    assert kernel.check(np.linspace(400, 1100, 50), np.linspace(280, 350, 50)[:, None]) == []
    with pytest.warns(matprops.ValidityWarning, match="validity region"):
        messages = kernel.check(np.array([1100.0, 1170.0]), np.array([100.0, 120.0]))
    assert any("validity region" in m for m in messages)
    with pytest.raises(matprops.ValidityError, match="wavelength"):
        kernel.check(np.array([200.0, 900.0]), 300.0, strict=True)
    with pytest.raises(matprops.InputError, match="temperature"):
        kernel.check(900.0, np.array([300.0, np.nan]))
    with pytest.raises(matprops.InputError, match="donor_density"):
        si.kernel("equilibrium").check(300.0, donor_density=-1.0, acceptor_density=0.0)
    # compositions check every model they use (the dopants' ionisation too)
    with pytest.warns(matprops.ValidityWarning, match="dopant_density"):
        si.kernel("equilibrium").check(300.0, Nd=5e20, Na=0.0)
    with pytest.warns(matprops.ValidityWarning, match="temperature"):
        si.kernel("effective_intrinsic_density").check(900.0, Nd=1e16, Na=0.0, n=1e16, p=1e4)


# ----------------------------------------------------------------- blocks and dtype


def test_large_inputs_are_blocked_into_one_output(si):
    # regression check: blocked and unblocked evaluation give the same numbers
    kernel = si.kernel("gap_narrowing")
    t = np.linspace(250.0, 450.0, 300)[:, None]
    nd = np.logspace(14, 20, 500)[None, :]
    direct = si.model("gap_narrowing").function(t, nd, 0.0, nd, 1e4)
    blocked = kernel(t, Nd=nd, Na=0.0, n=nd, p=1e4)
    assert t.size * nd.size > BLOCK
    for a, b in zip(blocked, direct, strict=True):
        np.testing.assert_array_equal(a, b)
    out = (np.empty((300, 500), np.float32), np.empty((300, 500), np.float32))
    assert kernel(t, Nd=nd, Na=0.0, n=nd, p=1e4, out=out) is out
    np.testing.assert_allclose(out[0], direct[0], rtol=1e-6)
    with pytest.raises(ValueError, match="broadcast shape"):
        kernel(t, Nd=nd, Na=0.0, n=nd, p=1e4, out=(np.empty(3), np.empty(3)))


def test_dtype_policy_float32_in_float64_out(si):
    kernel = si.kernel("intrinsic_density")
    t32 = np.linspace(250, 400, 7, dtype=np.float32)
    assert kernel(t32).dtype == np.float64
    np.testing.assert_array_equal(kernel(t32), kernel(t32.astype(np.float64)))
    big = np.full(BLOCK + 5, 300.0, dtype=np.float32)
    assert kernel(big).dtype == np.float64
    assert kernel(big, out=np.empty(big.shape, np.float32)).dtype == np.float32


def test_public_api_agrees_with_the_kernels_above_the_block_size(si):
    # regression check: the API evaluates in blocks too, with the same numbers
    t = np.linspace(250.0, 450.0, BLOCK + 1000)
    np.testing.assert_array_equal(si.band_gap(t).m_as("eV"), si.kernel("band_gap")(t))
    a = si.kernel("lattice_constant")(t)
    np.testing.assert_array_equal(si.atomic_density(t).m_as("cm^-3"), 8.0 / (a * a * a))


# ----------------------------------------------------------------- derivatives


@pytest.mark.parametrize("label, kernel", SMOOTH, ids=[c[0] for c in SMOOTH])
def test_derivatives_match_central_differences(label, kernel):
    # common practice: a central difference with relative step 1e-6 predicts the same
    # change of the value over a step of each input (to 1e-7 of the value)
    inputs = _grid(kernel.inputs)
    value, partials = kernel.derivatives(**inputs)
    expected = kernel(**inputs)
    for got, want in zip(_parts(value), _parts(expected), strict=True):
        np.testing.assert_array_equal(got, want)  # the value is the kernel's own
    assert set(partials) == set(inputs)
    for name, x in inputs.items():
        step = 1e-6 * x
        up = kernel(**{**inputs, name: x + step})
        down = kernel(**{**inputs, name: x - step})
        for analytic, high, low, v in zip(
            _parts(partials[name]), _parts(up), _parts(down), _parts(value), strict=True
        ):
            central = (high - low) / (2.0 * step)
            scale = np.maximum(np.abs(v), 1e-6 if "eV" in str(kernel.output_units) else 0.0)
            error = np.abs(np.broadcast_to(analytic, central.shape) - central) * x / scale
            assert np.max(error) < 1e-7, (label, name, float(np.max(error)))


def _parts(value):
    return value if isinstance(value, tuple) else (value,)


def test_derivatives_of_the_lifetime_parts(si):
    kernel = si.kernel("intrinsic_lifetime")
    inputs = _grid(kernel.inputs)
    for part in ("auger", "radiative"):
        value, partials = kernel.derivatives(**inputs, part=part)
        np.testing.assert_array_equal(value, kernel(**inputs, part=part))
        x = inputs["equilibrium_electron_density"]
        up = kernel(**{**inputs, "equilibrium_electron_density": x * (1 + 1e-6)}, part=part)
        down = kernel(**{**inputs, "equilibrium_electron_density": x * (1 - 1e-6)}, part=part)
        central = (up - down) / (2e-6 * x)
        np.testing.assert_allclose(
            partials["equilibrium_electron_density"] * x,
            central * x,
            rtol=1e-6,
            atol=1e-7 * np.max(value),
        )


def test_kernels_without_derivatives_say_so(si):
    with pytest.raises(TypeError, match="no derivatives"):
        si.kernel("absorption").derivatives(800.0, 300.0)


# ----------------------------------------------------------------- array API


def _array_api_kernels():
    found = []
    for quantity in CATALOG.quantities():
        for model_id in CATALOG.model_ids(quantity):
            model = CATALOG.model(quantity, model_id)
            if model.requires or model.kind == "table" or not model.inputs:
                continue
            found += [
                (
                    f"{quantity}/{model_id}/{v}" if v else f"{quantity}/{model_id}",
                    model.select(v) if v else model,
                )
                for v in (model.variants or [None])
            ]
    return found


ARRAY_API = _array_api_kernels()


@pytest.mark.parametrize("label, model", ARRAY_API, ids=[c[0] for c in ARRAY_API])
def test_closed_form_kernels_take_any_array_api_array(label, model):
    # regression check: array_api_strict (the standard's reference namespace) gives the
    # numpy numbers, in its own array type; numpy-only kernels refuse it clearly
    xp = pytest.importorskip("array_api_strict")
    values = {
        "electron_emission_density": (1e9, 1e11),
        "hole_emission_density": (1e9, 1e11),
        "electron_capture_time": (1e-6, 1e-5),
        "hole_capture_time": (1e-6, 1e-5),
        "field": (1e3, 1e5),
        "low_field_mobility": (400.0, 1400.0),
        "saturation_velocity": (8e6, 1.1e7),
        "resistivity": (0.5, 50.0),
    }
    rng = np.random.default_rng(1)
    plain = {}
    for name in model.inputs:
        low, high = POINTS.get(name) or values[name]
        plain[name] = rng.uniform(low, high, 9)
    if not model.array_api:
        assert "numpy" in (model.kernel.__doc__ or "")
        return
    strict = {name: xp.asarray(v) for name, v in plain.items()}
    expected = model(**plain)
    got = model(**strict)
    for a, b in zip(_parts(got), _parts(expected), strict=True):
        assert type(a).__module__.startswith("array_api_strict")
        np.testing.assert_allclose(np.from_dlpack(a), b, rtol=1e-13)
    if model.derivative is not None:
        _, partials = model.derivative(**strict)
        _, reference = model.derivative(**plain)
        for name in plain:
            for a, b in zip(_parts(partials[name]), _parts(reference[name]), strict=True):
                np.testing.assert_allclose(np.from_dlpack(a), b, rtol=1e-12)


def test_bound_kernels_take_array_api_arrays_or_refuse_them(si):
    xp = pytest.importorskip("array_api_strict")
    t = xp.asarray([280.0, 300.0, 320.0])
    gap = si.kernel("band_gap")(t)
    assert type(gap).__module__.startswith("array_api_strict")
    _, partials = si.kernel("band_gap").derivatives(t)
    assert type(partials["temperature"]).__module__.startswith("array_api_strict")
    ni_eff = si.kernel("effective_intrinsic_density")(
        t,
        donor_density=xp.asarray([1e16] * 3),
        acceptor_density=xp.asarray([0.0] * 3),
        electron_density=xp.asarray([1e16] * 3),
        hole_density=xp.asarray([1e4] * 3),
    )
    assert type(ni_eff).__module__.startswith("array_api_strict")
    with pytest.raises(TypeError, match="numpy arrays only.*interpolates"):
        si.kernel("absorption")(xp.asarray([800.0]), t)
    with pytest.raises(TypeError, match="numpy arrays only.*solver"):
        si.kernel("equilibrium")(t, Nd=xp.asarray([1e16] * 3), Na=xp.asarray([0.0] * 3))
    assert "numpy arrays only" in si.kernel("absorption").__doc__
    assert "any array-API-standard array" in si.kernel("band_gap").__doc__


# ----------------------------------------------------------------- start-up


def test_import_builds_no_registry_and_loads_nothing_heavy():
    code = (
        "import sys, matprops, matprops.units as u, pint;"
        "print(type(u.ureg.get()).__name__, [m for m in ('matplotlib', 'dask', "
        "'netCDF4', 'xarray') if m in sys.modules])"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.split()[0] == "LazyRegistry"  # pint has not parsed its definitions
    code = (
        "import sys, matprops; "
        "print([m for m in ('matplotlib', 'dask', 'netCDF4') if m in sys.modules])"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"


def test_quantities_follow_the_application_registry_set_after_import():
    # matprops never replaces pint's application registry; it uses whichever is set,
    # even after matprops was imported and used (e.g. one built from pint's disk cache)
    code = """
import pint, matprops
si = matprops.silicon()
first = si.band_gap(300.0)
mine = pint.UnitRegistry()
pint.set_application_registry(mine)
second = si.band_gap(300.0)
assert second._REGISTRY is mine, second._REGISTRY
assert first._REGISTRY is not mine
assert (second + mine.Quantity(1.0, "meV")).m_as("eV") > 1.12
assert matprops.Q_(1.0, "K")._REGISTRY is mine
print("ok")
"""
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=False)
    assert out.returncode == 0, out.stderr[-2000:]
    assert out.stdout.strip() == "ok"


def test_kernels_pickle_by_material(si):
    import pickle

    kernel = si.kernel("thermal_velocity", carrier="hole")
    clone = pickle.loads(pickle.dumps(kernel))
    assert clone.variant == "hole" and clone(300.0) == kernel(300.0)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        assert repr(clone) == repr(kernel)
