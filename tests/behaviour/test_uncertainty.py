"""uncertainty=True: coefficient derivatives, linear against Monte Carlo, the answer's
status, bound kernels, the data's checks.

Machinery checks. Where a test needs an uncertainty that no source states, it makes one
up here, *test-only*: 1 % of each coefficient, never data.
"""

import numpy as np
import pytest

import matprops
from matprops.errors import DatasetError
from matprops.kernels._coefficients import Dual, NotDifferentiable, split
from matprops.material.propagation import (
    Direction,
    dual_values,
    models_of,
    substitute,
    values_for,
)
from matprops.material.uncertainty import Uncertain, draws

TYPICAL = {
    "temperature": 310.0,
    "donor_density": 2e16,
    "acceptor_density": 1e15,
    "electron_density": 2e16,
    "hole_density": 1e5,
    "wavelength": 1550.0,
    "dopant_density": 1e17,
    "field": 1e4,
    "resistivity": 2.0,
    "excess_density": 1e15,
    "equilibrium_electron_density": 2e16,
    "equilibrium_hole_density": 1e4,
    "low_field_mobility": 1000.0,
    "saturation_velocity": 1e7,
}

# inputs where a quantity's typical point differs: impact ionisation at 1e4 V/cm is
# exp(-100)-small and so nonlinear in its coefficients that 1 % draws are lognormal
TYPICAL_FOR = {"impact_ionisation": {"field": 3e5}}


def _typical(model, name):
    return TYPICAL_FOR.get(model.quantity, {}).get(name, TYPICAL[name])


# coefficients the forward differentiation cannot follow (used as Python floats, in
# numpy's out=/where= or a table built from them): their uncertainty, if a source ever
# states one, is propagated by Monte Carlo
NOT_FOLLOWED = {
    "absorption/rajkanan-1979",
    "free_carrier_absorption/nedeljkovic-2011",
    "free_carrier_absorption/soref-1987",
    "intrinsic_lifetime/dziewior-1977",
    "intrinsic_lifetime/richter-2012-huldt-1979",  # composed with the B(T) table below
    "lattice_constant/okada-1984",
    "mobility/klaassen-1992",
    "radiative_coefficient/trupke-2003-nguyen-2014",
    "thermal_velocity/green-1990",
}
# ... and on arrays, models whose kernels multiply into their own arrays in place
IN_PLACE = {
    "intrinsic_lifetime/kerr-2002",
    "intrinsic_lifetime/richter-2012",
    "ionisation/altermatt-2006",
}


@pytest.fixture(scope="module")
def si():
    return matprops.silicon()


def _smooth_models(si):
    """Every closed-form model (and coefficient set) of the catalogue, bound."""
    catalogue = si.catalogue
    for quantity in catalogue.quantities():
        for model_id in catalogue.model_ids(quantity):
            model = catalogue.model(quantity, model_id)
            if model.kind == "table":
                continue
            if model.requires:
                model = model.compose(**{r: si.model(r) for r in model.requires})
            for bound in model.variants.values() if model.variants else [model]:
                if all(name in TYPICAL for name in bound.inputs):
                    yield bound


def _test_directions(model, share=0.01):
    """Test-only: every nonzero coefficient (element) with a 1 % standard uncertainty."""
    found = []
    for m in models_of(model, {}).values():
        if m.variants and m.variant is None:
            continue
        for c in m.coefficients.values():
            value = np.asarray(c.kernel_value, float)
            for index in [None] if value.ndim == 0 else range(value.size):
                x = float(value) if index is None else float(value[index])
                if x != 0:
                    found.append(
                        Direction(
                            m.quantity, m.id, m.variant, c.name, index, share * abs(x), "standard"
                        )
                    )
    return found


def test_coefficient_partials_match_central_differences(si):
    # one coefficient at a time: the forward-mode partial against a central difference
    checked = 0
    for model in _smooth_models(si):
        inputs = {name: _typical(model, name) for name in model.inputs}
        models = models_of(model, {})
        label = f"{model.quantity}/{model.id}"
        for d in _test_directions(model, share=1e-6):
            try:
                value, tangent = split(
                    substitute(model, dual_values([d], models)).function(**inputs), 1
                )
            except NotDifferentiable:
                assert label in NOT_FOLLOWED, f"{d.label}: not differentiable"
                continue
            h = d.sigma
            up = substitute(model, values_for([d], [h], models)).function(**inputs)
            down = substitute(model, values_for([d], [-h], models)).function(**inputs)
            pairs = zip(
                *(x if isinstance(x, tuple) else (x,) for x in (up, down, tangent, value)),
                strict=True,
            )
            for a, b, t, v in pairs:
                difference = (np.asarray(a, float) - np.asarray(b, float)) / (2 * h)
                analytic = np.asarray(t)[..., 0]
                scale = np.abs(np.asarray(v)) / abs(h) * 1e-9  # rounding of the difference
                assert np.all(np.abs(analytic - difference) <= 1e-5 * np.abs(difference) + scale), (
                    d.label
                )
                checked += 1
    assert checked > 150


def _linear_and_monte_carlo(si, model, found, samples=800):
    from matprops.material.propagation import covariance

    inputs = {
        name: np.array([_typical(model, name), 1.3 * _typical(model, name)])
        for name in model.inputs
    }
    models = models_of(model, {})
    cov = covariance(found, models)
    value, tangent = split(
        substitute(model, dual_values(found, models)).function(**inputs), len(found)
    )
    values = value if isinstance(value, tuple) else (value,)
    tangents = tangent if isinstance(tangent, tuple) else (tangent,)
    linear = [np.sqrt(np.einsum("...i,ij,...j->...", t, cov, t)) for t in tangents]
    rows = draws(found, cov, samples, seed=1)
    sampled = []
    for row in rows:
        out = substitute(model, values_for(found, row, models)).function(**inputs)
        sampled.append(out if isinstance(out, tuple) else (out,))
    spread = [np.std([s[j] for s in sampled], axis=0, ddof=1) for j in range(len(values))]
    return linear, spread


def test_linear_and_monte_carlo_agree_on_every_smooth_model(si):
    # test-only 1 % uncertainties on every coefficient a model's kernel follows: the
    # linear figure and 800 seeded Monte Carlo draws agree within 10 %
    compared = 0
    for model in _smooth_models(si):
        label = f"{model.quantity}/{model.id}"
        if label in NOT_FOLLOWED:
            continue
        found = _test_directions(model)
        if not found:
            continue
        try:
            linear, spread = _linear_and_monte_carlo(si, model, found)
        except NotDifferentiable:
            assert label in IN_PLACE, label
            continue
        for a, b in zip(linear, spread, strict=True):
            assert np.allclose(a, b, rtol=0.10, atol=1e-300), f"{model.quantity}/{model.id}"
        compared += 1
    assert compared >= 25


def test_linear_and_monte_carlo_agree_where_sources_state_uncertainties():
    # the data's own stated uncertainties, through the public methods
    si = matprops.silicon(models={"mobility": "arora-1982"})
    for call in (
        lambda **o: si.mobility("electron", [300, 400], Nd=[1e15, 1e17], **o),
        lambda **o: si.mobility("hole", 320, Na=1e16, **o),
        lambda **o: si.permittivity(**o),
        lambda **o: si.molar_mass(**o),
    ):
        linear = call(uncertainty=True, spread=False)
        assert linear.method == "linear"
        sampled = call(uncertainty=True, spread=False, uncertainty_method="monte-carlo")
        assert sampled.method == "monte-carlo" and sampled.samples == 1000
        ratio = sampled.uncertainty.magnitude / linear.uncertainty.magnitude
        assert np.all(np.abs(ratio - 1) < 0.10)


def test_not_stated_is_nan_and_says_so(si):
    answer = si.band_gap([250, 300], uncertainty=True)
    assert isinstance(answer, Uncertain)
    assert np.all(np.isnan(answer.uncertainty.magnitude))
    assert answer.status == "not known" and answer.method == "none"
    assert "band_gap/passler-2002 (not known)" in answer.unstated
    assert "NaN, not zero" in " ".join(answer.notes)
    # the value is the method's own
    assert np.array_equal(answer.value.magnitude, si.band_gap([250, 300]).magnitude)
    # a source read and silent: "not stated"
    srh = si.kernel("srh_lifetime")
    assert srh.model.uncertainty.statement == "not stated"


def test_every_quantity_of_the_newest_release_answers(si):
    calls = {
        "band_gap": lambda o: si.band_gap(300, **o),
        "densities_of_states": lambda o: si.densities_of_states(300, **o),
        "intrinsic_density": lambda o: si.intrinsic_density(300, **o),
        "lattice_constant": lambda o: si.lattice_constant(300, **o),
        "thermal_expansion": lambda o: si.thermal_expansion(300, **o),
        "molar_mass": lambda o: si.molar_mass(**o),
        "permittivity": lambda o: si.permittivity(**o),
        "absorption": lambda o: si.absorption(800, 300, **o),
        "refractive_index": lambda o: si.refractive_index(800, 300, **o),
        "free_carrier_absorption": lambda o: si.free_carrier_absorption(1550, n=1e18, **o),
        "gap_narrowing": lambda o: si.gap_narrowing(300, Nd=1e18, n=1e18, p=1e2, **o),
        "ionisation": lambda o: si.dopant_level(1e17, "boron", **o),
        "radiative_coefficient": lambda o: si.radiative_coefficient(300, **o),
        "intrinsic_lifetime": lambda o: si.intrinsic_lifetime(300, Na=1e16, excess=1e14, **o),
        "srh_lifetime": lambda o: si.srh_lifetime("Fe_i", 300, Na=1e16, density=1e11, **o),
        "thermal_velocity": lambda o: si.thermal_velocity("electron", 300, **o),
        "mobility": lambda o: si.mobility("electron", 300, Nd=1e16, **o),
        "saturation_velocity": lambda o: si.saturation_velocity("hole", 300, **o),
        "high_field_mobility": lambda o: si.high_field_mobility("electron", 1e4, 300, **o),
        "standard_resistivity": lambda o: si.resistivity(
            296.15, Na=1e16, conversion="standard", **o
        ),
        "standard_dopant_density": lambda o: si.doping_from_resistivity(
            1, 296.15, dopant="boron", conversion="standard", **o
        ),
        "thermal_conductivity": lambda o: si.thermal_conductivity(300, **o),
        "heat_capacity": lambda o: si.heat_capacity(300, **o),
        "impact_ionisation": lambda o: si.impact_ionisation("electron", 3e5, 300, **o),
    }
    assert set(calls) == set(si.release.models)
    options = {"uncertainty": True, "samples": 20, "spread": False}
    for quantity, call in calls.items():
        answer = call(options)
        parts = answer if isinstance(answer, tuple) else (answer,)
        for part in parts:
            assert part.status in ("stated", "partial", "not stated", "not known"), quantity
            sigma = np.asarray(part.uncertainty.magnitude)
            if part.status in ("not stated", "not known"):
                assert np.all(np.isnan(sigma)), quantity
            else:
                assert np.all(sigma > 0), quantity


def test_composed_and_solved_quantities_propagate_through_their_parts():
    si = matprops.silicon(models={"mobility": "arora-1982"})
    rho = si.resistivity(300, Nd=[1e15, 1e17], uncertainty=True, samples=200, spread=False)
    assert rho.method == "monte-carlo" and rho.status == "partial"
    # rho = 1/(q n mu): the mobility's +-13 % bound (7.5 % standard) carries over
    assert np.allclose(rho.relative_uncertainty.magnitude, 0.13 / 3**0.5, rtol=0.15)
    state = si.equilibrium(300, Nd=1e17, uncertainty=True, samples=20, spread=False)
    assert state.electron_density.status == "not known"  # the solver's models state none
    assert np.isnan(state.electron_density.uncertainty.magnitude)


def test_monte_carlo_is_seeded(si):
    a = si.density(300, uncertainty=True, samples=50, seed=3, spread=False)
    b = si.density(300, uncertainty=True, samples=50, seed=3, spread=False)
    c = si.density(300, uncertainty=True, samples=50, seed=4, spread=False)
    assert a.uncertainty == b.uncertainty != c.uncertainty
    assert a.status == "partial"  # the lattice constant's source states none


def test_model_spread_is_beside_not_added(si):
    answer = si.intrinsic_density([250, 300, 450], uncertainty=True)
    assert np.all(np.isnan(answer.uncertainty.magnitude))
    spread = answer.model_spread.magnitude
    assert np.all(spread[:2] > 0)
    # only models valid at the point count: at 450 K fewer are valid than at 300 K
    assert answer.models_valid[2] < answer.models_valid[1]


def test_bound_kernels_answer(si):
    value, sigma = si.kernel("permittivity")(uncertainty=True)
    assert (value, sigma) == (11.7, 0.2)
    gap = si.kernel("band_gap")(np.linspace(250, 350, 40_000), uncertainty=True)
    assert gap.status == "not known" and np.all(np.isnan(gap.uncertainty))
    arora = matprops.silicon(models={"mobility": "arora-1982"}).kernel("mobility", carrier="hole")
    t = np.linspace(250, 500, 50_000)  # in blocks
    linear = arora(t, Nd=1e16, Na=0.0, uncertainty=True)
    assert linear.method == "linear"
    assert np.allclose(linear.uncertainty / linear.value, 0.13 / 3**0.5)
    assert np.array_equal(linear.value, arora(t, Nd=1e16, Na=0.0))
    sampled = arora(
        t[:100], Nd=1e16, Na=0.0, uncertainty=True, samples=400, uncertainty_method="monte-carlo"
    )
    assert np.allclose(sampled.uncertainty, linear.uncertainty[:100], rtol=0.10)
    with pytest.raises(matprops.InputError, match="uncertainty"):
        arora(300.0, Nd=1e16, Na=0.0, uncertainty="yes")


def test_contributions_name_the_largest(si):
    answer = matprops.silicon(models={"mobility": "arora-1982"}).mobility(
        "electron", 300, Nd=1e16, uncertainty=True
    )
    assert "stated output accuracy" in answer.largest_contribution
    assert answer.contributions[answer.largest_contribution] == pytest.approx(1.0)
    record = answer.as_dict()
    assert record["largest_contribution"] == answer.largest_contribution


def test_options_are_checked(si):
    with pytest.raises(matprops.InputError, match="samples"):
        si.band_gap(300, samples=10)
    with pytest.raises(matprops.InputError, match="uncertainty_method"):
        si.permittivity(uncertainty=True, uncertainty_method="guess")
    with pytest.raises(matprops.InputError, match="monte-carlo"):
        si.density(300, uncertainty=True, uncertainty_method="linear")


def test_dual_refuses_what_it_cannot_follow():
    c = Dual(2.0, np.ones(1))
    for operation in (float, np.asarray, lambda x: x == 2.0):
        with pytest.raises(NotDifferentiable):
            operation(c)
    out = np.empty(3)
    with pytest.raises(NotDifferentiable):
        np.multiply(np.ones(3), c, out=out)


def _model_file(tmp_path, section):
    from matprops.catalogue.store import Catalogue

    root = tmp_path / "datasets"
    import shutil

    shutil.copytree(matprops.silicon().catalogue.root, root)
    path = root / "models" / "permittivity" / "dunlap-1953.toml"
    text = path.read_text().split("\n[uncertainty]")[0]
    path.write_text(text + section)
    catalogue = Catalogue(root)
    catalogue.write_checksums()
    return catalogue


@pytest.mark.parametrize(
    ("section", "message"),
    [
        ('\n[uncertainty]\nstatement = "not known"\nobtained = "x"\n', "statement is 'not known'"),
        ('\n[uncertainty]\nstatement = "stated"\n', "obtained"),
        (
            '\n[uncertainty]\nstatement = "stated"\nobtained = "x"\n[[uncertainty.correlation]]\n'
            'coefficients = ["value", "nothing"]\nmatrix = [[1, 0.5], [0.5, 1]]\nobtained = "x"\n',
            "not a coefficient with an uncertainty",
        ),
        (
            '\n[uncertainty]\nstatement = "stated"\nobtained = "x"\n[[uncertainty.output]]\n'
            'relative = 0.1\nabsolute = 1\nkind = "bound"\nstatement = "x"\nobtained = "x"\n',
            "one of relative or absolute",
        ),
    ],
)
def test_uncertainty_sections_are_checked(tmp_path, section, message):
    catalogue = _model_file(tmp_path, section)
    with pytest.raises(DatasetError, match=message):
        catalogue.model("permittivity", "dunlap-1953")


def test_tables_and_files_carry_the_figures(tmp_path):
    cf_xarray = pytest.importorskip("cf_xarray")
    import json

    import xarray as xr

    from matprops import export

    assert cf_xarray
    si = matprops.silicon(models={"mobility": "arora-1982"})
    data = si.table(
        ["band_gap", "mobility"],
        T=[300, 350],
        Nd=[1e15, 1e17],
        carrier="electron",
        uncertainty=True,
    )
    linked = data.cf.get_associated_variable_names("mobility")["ancillary_variables"]
    assert linked == ["mobility_uncertainty", "mobility_model_spread", "mobility_validity"]
    assert data["mobility_uncertainty"].attrs["uncertainty_status"] == "stated"
    assert np.allclose(data["mobility_uncertainty"] / data["mobility"], 0.13 / 3**0.5)
    assert np.all(np.isnan(data["band_gap_uncertainty"]))  # not zero
    assert np.all(data["band_gap_model_spread"] > 0)
    path = tmp_path / "t.nc"
    export.write(data, path)
    with xr.open_dataset(path) as back:
        assert back.cf.get_associated_variable_names("mobility")["ancillary_variables"] == linked
    export.write(data, tmp_path / "t.csv")
    header = (tmp_path / "t.csv").read_text().splitlines()[0]
    assert "mobility_uncertainty" in header and "band_gap_model_spread" in header
    export.write(data, tmp_path / "t.json")
    assert "mobility_uncertainty" in json.loads((tmp_path / "t.json").read_text())["data_vars"]
