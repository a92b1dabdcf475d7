"""Errors instead of tracebacks.

Each input below gave a raw traceback from deep inside numpy or tomllib; now each works
or is a documented matprops error (one line on the command line, exit status 2).
Provenance is printed for every quantity and every model of the catalogue, as text and
as JSON, from Python and from the command line (it crashed with KeyError 'journal' for
a book source). Solver failures name their first failing points and those points'
inputs. (Deeply nested TOML and integers beyond a float: tests/behaviour/
test_safe_files.py and tests/properties/test_input_kinds.py.)
"""

import contextlib
import io
import json

import numpy as np
import pytest

import matprops
from matprops.cli import main
from matprops.material.derived import DERIVED
from matprops.material.tables import QUANTITIES

SI = matprops.silicon()

# ------------------------------------------------------------------ array densities in SRH


def test_an_array_of_defect_densities_broadcasts_in_srh():
    densities = np.array([1e11, 1e12])
    tau = SI.srh_lifetime("Fe_i", 300.0, Na=1e16, excess=1e14, density=densities)
    assert tau.shape == (2,)
    # tau_n0 = 1/(sigma_n v_n N_t) dominates at low injection in p-type silicon (Shockley
    # and Read 1952): ten times the density, a tenth of the lifetime (common practice)
    assert tau[0].m_as("s") == pytest.approx(10 * tau[1].m_as("s"), rel=1e-9)
    grid = SI.srh_lifetime("Fe_i", [300.0, 350.0], Na=1e16, excess=1e14, density=densities[:, None])
    assert grid.shape == (2, 2)
    lifetimes = SI.effective_lifetime(300.0, Na=1e16, excess=1e14, defect="Fe_i", density=densities)
    assert lifetimes.effective_lifetime.shape == lifetimes.intrinsic_lifetime.shape == (2,)
    voltage = SI.implied_voltage(
        300.0, matprops.Q_(40, "mA/cm^2"), matprops.Q_(180, "um"), Na=1e15,
        defect="Fe_i", density=densities,
    )  # fmt: skip
    assert voltage.implied_voltage.shape == (2,)
    assert voltage.implied_voltage[0] > voltage.implied_voltage[1]  # fewer defects, more volts


def test_a_table_along_the_defect_density_axis():
    data = SI.table(
        ["srh_lifetime", "effective_lifetime"],
        defect="iron-interstitial", T=300.0, Na=1e16, excess=1e14, defect_density=[1e11, 1e12],
    )  # fmt: skip
    assert data.srh_lifetime.dims == ("defect_density",)
    assert data.srh_lifetime.values[0] == pytest.approx(10 * data.srh_lifetime.values[1], rel=1e-9)


def test_a_density_whose_shape_does_not_broadcast_is_an_input_error():
    with pytest.raises(matprops.InputError, match=r"argument 'density' must be .* \(3,\)"):
        SI.srh_lifetime("Fe_i", [300.0, 310.0, 320.0], Na=1e16, density=[1e11, 1e12])


# ------------------------------------------------------------------ empty arrays


@pytest.mark.parametrize("model_id", matprops.models("absorption"))
def test_an_empty_temperature_array_gives_an_empty_absorption(model_id):
    si = matprops.silicon(models={"absorption": model_id})
    assert si.absorption(800.0, np.array([])).shape == (0,)
    assert si.absorption([], 300.0).shape == (0,)
    assert si.absorption(np.full((3, 1), 800.0), np.array([])).shape == (3, 0)
    assert si.kernel("absorption")(800.0, np.array([])).shape == (0,)


@pytest.mark.parametrize("model_id", matprops.models("refractive_index"))
def test_an_empty_temperature_array_gives_an_empty_refractive_index(model_id):
    si = matprops.silicon(models={"refractive_index": model_id})
    assert si.refractive_index(800.0, []).shape == (0,)


@pytest.mark.filterwarnings("ignore::matprops.errors.ValidityWarning")  # (shapes only)
@pytest.mark.parametrize("name", sorted(QUANTITIES))
def test_every_tabulated_method_takes_an_empty_array_for_each_input(name):
    from matprops.material.tables import AXES, available

    if name not in available(SI):
        pytest.skip(f"{name} is not served by release {SI.release.id}")
    entry = QUANTITIES[name]
    values = {
        "temperature": 296.0, "acceptor_density": 1e16, "donor_density": 0.0,
        "excess_density": 1e14, "electron_density": 1e16, "hole_density": 1e4,
        "field": 1e3, "resistivity": 1.0, "defect_density": 1e11, "generation": 1e17,
        "thickness": matprops.Q_(0.018, "cm"), "dopant_density": 1e17,
        "carrier": "electron", "plane": "100",
        "defect": "iron-interstitial", "dopant": "boron",
        "wavelength": 1550.0 if name == "free_carrier_absorption" else 800.0,
    }  # fmt: skip
    base = {a: values[a] for a in entry.takes}
    for axis in entry.takes:
        if AXES[axis].category:
            continue
        empty = np.array([])
        if axis == "thickness":  # a length needs its unit, even an empty one
            empty = matprops.Q_(empty, "cm")
        result = entry.call(SI, {**base, axis: empty})
        parts = result if isinstance(result, tuple) else (result,)
        if entry.fields:
            parts = tuple(getattr(result, f) for f in entry.fields)
        assert all(np.shape(p) == (0,) for p in parts), (axis, [np.shape(p) for p in parts])


# ------------------------------------------------------------------ provenance

# every quantity a material answers provenance for: its models' and the derived ones
QUANTITY_NAMES = sorted(set(SI.catalogue.quantities()) | set(DERIVED) | set(QUANTITIES))
MODELS = [(q, m) for q in SI.catalogue.quantities() for m in SI.catalogue.model_ids(q)]


def _run(argv):
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(argv)
    return code, out.getvalue(), err.getvalue()


def _provenance_names():
    found = []
    for name in QUANTITY_NAMES:
        try:
            SI.provenance(name)
        except matprops.UnknownQuantityError:
            continue  # (a tabulated name served through another quantity's model)
        found.append(name)
    return found


@pytest.mark.parametrize("name", _provenance_names())
def test_provenance_of_every_quantity_from_python_and_the_command_line(name):
    record = SI.provenance(name)
    assert json.loads(json.dumps(record))["quantity"] == name
    code, out, err = _run(["provenance", name])
    assert code == 0 and not err, err
    assert out.startswith(f"{name}:") and f"release {SI.release.id}" in out
    code, out, err = _run(["provenance", name, "--json"])
    assert code == 0 and json.loads(out)["quantity"] == name


@pytest.mark.parametrize("quantity, model_id", MODELS, ids=[f"{q}/{m}" for q, m in MODELS])
def test_provenance_of_every_model_from_python_and_the_command_line(quantity, model_id):
    model = SI.catalogue.model(quantity, model_id)
    record = model.provenance()
    assert json.loads(json.dumps(record))["model"] == model_id
    si = matprops.silicon(models={quantity: model_id})
    assert si.provenance(quantity)["model"] == model_id
    for extra in ([], ["--json"]):
        code, out, err = _run(["provenance", quantity, "--model", f"{quantity}={model_id}", *extra])
        assert code == 0 and not err, err
        if extra:
            assert json.loads(out)["model"] == model_id
        else:
            assert f"model {model_id}" in out
            assert "source: " in out
    code, out, err = _run(["describe", quantity, model_id])
    assert code == 0 and f"{quantity} / {model_id}" in out


def test_a_book_source_and_an_additional_standard_print_on_one_line_each():
    code, out, _ = _run(["provenance", "standard_resistivity"])
    assert code == 0
    assert "National Bureau of Standards" in out and "also: ASTM International" in out


# ------------------------------------------------------------------ solver failures


def test_a_resistivity_inversion_failure_names_its_points_and_inputs(monkeypatch):
    from matprops.kernels import resistivity as kernels

    original = kernels.solve_decreasing_from

    def failing(*args, **kwargs):
        solution, converged, reach = original(*args, **kwargs)
        converged = converged.copy()
        converged[1::2] = False
        return solution, converged, reach

    monkeypatch.setattr(kernels, "solve_decreasing_from", failing)
    rho = np.array([0.5, 1.0, 2.0, 5.0])
    with pytest.raises(matprops.SolverError) as info:
        SI.doping_from_resistivity(rho, [290.0, 300.0, 310.0, 320.0], dopant="boron")
    message = str(info.value)
    assert "2 point(s) did not converge" in message
    assert "#1 (1 ohm*cm at 300 K, boron)" in message and "#3 (5 ohm*cm at 320 K, boron)" in message
    code, _, err = _run(["table", "doping_from_resistivity", "--rho", "0.5,1,2", "-t", "300",
                         "--dopant", "boron"])  # fmt: skip
    assert code == 2 and len(err.splitlines()) == 1 and "did not converge: #1" in err


def test_a_steady_state_failure_names_its_points_and_inputs(monkeypatch):
    from matprops.kernels import implied_voltage as kernels

    original = kernels.steady_state_excess
    monkeypatch.setattr(
        kernels,
        "steady_state_excess",
        lambda rate, generation, guess: original(rate, generation, guess, max_iterations=1),
    )
    with pytest.raises(matprops.SolverError) as info:
        SI.implied_voltage(300.0, [1e16, 1e17], matprops.Q_(0.018, "cm"), Na=1e15)
    message = str(info.value)
    assert message.startswith("implied_voltage: the steady state was not found at 2 point(s)")
    assert "T=300 K, G=1e+16 cm^-2 s^-1, thickness=0.018 cm" in message
    assert "n0=" in message and "p0=" in message and len(message.splitlines()) == 1
