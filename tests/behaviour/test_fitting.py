"""matprops.fit: weighted least-squares fits of a closed-form model to measured data.

The statistical checks are common practice for least squares with known, independent,
normal errors: the 2-sigma interval of a well-conditioned fit covers the true value in
about 95 % of repeated experiments, and the covariance (J^T W J)^-1 agrees with the
spread of refits to resampled data (e.g. Press et al., Numerical Recipes, ch. 15.6).
The data are synthetic: a shipped model's values plus seeded noise (INVENTED, for the
tests only).
"""

import json

import numpy as np
import pytest
import xarray as xr

import matprops
from matprops.catalogue.overlay import catalogue_at

SOURCE = {
    "authors": ["A. Tester"],
    "year": 2027,
    "title": "Synthetic band gap (INVENTED data)",
    "description": "INVENTED: passler-2002 plus seeded Gaussian noise",
}
TEMPERATURE = np.linspace(5.0, 300.0, 40)
SIGMA = 5e-4  # eV


@pytest.fixture(autouse=True)
def no_user_seals(tmp_path, monkeypatch):
    monkeypatch.setenv("MATPROPS_SEALS", str(tmp_path / "user-seals.txt"))


@pytest.fixture(scope="module")
def gap_model():
    return matprops.silicon("2026.1").model("band_gap")  # passler-2002


def _gap_data(model, seed, sigma=SIGMA, temperature=TEMPERATURE):
    values = model(temperature=temperature)
    if seed is not None:
        values = values + np.random.default_rng(seed).normal(0.0, sigma, temperature.shape)
    return {
        "temperature": (temperature, "K"),
        "band_gap": (values, "eV"),
        "band_gap_uncertainty": (np.full(temperature.shape, sigma), "eV"),
    }


FREE = ["gap_at_zero", "alpha", "theta"]


def _truth(model):
    return {name: model.coefficients[name].kernel_value for name in FREE}


# ------------------------------------------------------------------ the fit


def test_noise_free_data_give_the_models_own_coefficients(gap_model):
    fit = matprops.fit("band_gap", gap_model, _gap_data(gap_model, None), free=FREE)
    for name, value in _truth(gap_model).items():
        assert fit.values[name] == pytest.approx(value, rel=1e-7)
    assert fit.chi2 < 1e-10 and fit.dof == TEMPERATURE.size - 3


def test_one_noisy_data_set_is_recovered_within_its_uncertainties(gap_model):
    fit = matprops.fit("band_gap", gap_model, _gap_data(gap_model, 11), free=FREE)
    for name, value in _truth(gap_model).items():
        assert abs(fit.values[name] - value) < 3 * fit.uncertainties[name]
    assert 0.5 < fit.reduced_chi2 < 1.6
    assert np.allclose(np.diag(fit.correlation), 1.0)
    assert fit.correlation[1, 2] > 0.9  # alpha and theta trade off: a strong correlation


@pytest.mark.slow
def test_two_sigma_intervals_cover_the_truth_95_percent_of_the_time(gap_model):
    truth = _truth(gap_model)
    seeds = range(300)
    covered = dict.fromkeys(FREE, 0)
    for seed in seeds:
        fit = matprops.fit("band_gap", gap_model, _gap_data(gap_model, seed), free=FREE)
        for name in FREE:
            covered[name] += abs(fit.values[name] - truth[name]) <= 2 * fit.uncertainties[name]
    for name in FREE:
        # 95.4 % expected; three binomial standard deviations (1.2 %) either side
        assert 0.918 <= covered[name] / len(seeds) <= 0.99, (name, covered[name])


@pytest.mark.slow
def test_uncertainties_agree_with_a_monte_carlo_refit(gap_model):
    fit = matprops.fit("band_gap", gap_model, _gap_data(gap_model, 2024), free=FREE)
    fitted = fit.evaluate(temperature=TEMPERATURE)
    rng = np.random.default_rng(99)
    draws = []
    for _ in range(250):
        data = {
            "temperature": (TEMPERATURE, "K"),
            "band_gap": (fitted + rng.normal(0.0, SIGMA, TEMPERATURE.shape), "eV"),
            "band_gap_uncertainty": (np.full(TEMPERATURE.shape, SIGMA), "eV"),
        }
        refit = matprops.fit("band_gap", gap_model, data, free=FREE)
        draws.append([refit.values[name] for name in FREE])
    draws = np.array(draws)
    spread = draws.std(axis=0, ddof=1)
    stated = np.array([fit.uncertainties[name] for name in FREE])
    np.testing.assert_allclose(spread / stated, 1.0, atol=0.2)
    np.testing.assert_allclose(np.corrcoef(draws.T), fit.correlation, atol=0.1)


def test_a_variant_is_fitted_on_its_own_coefficients(tmp_path):
    model = matprops.silicon().catalogue.model("mobility", "arora-1982").select("electron")
    temperature = np.linspace(250.0, 450.0, 21)
    truth = model(temperature=temperature, donor_density=1e15, acceptor_density=0.0)
    data = {
        "temperature": matprops.Q_(temperature, "K"),
        "mobility": matprops.Q_(truth, "cm^2/(V*s)"),
        "mobility_uncertainty": matprops.Q_(0.01 * truth, "cm^2/(V*s)"),
    }
    fit = matprops.fit(
        "mobility",
        "arora-1982",
        data,
        variant="electrons",
        free=["min_mobility", "doping_exponent"],
        inputs={"Nd": 1e15, "Na": matprops.Q_(0, "cm^-3")},
    )
    assert fit.variant == "electron"
    assert fit.values["doping_exponent"] == pytest.approx(-2.33, rel=1e-7)
    with pytest.raises(matprops.InputError, match="shared coefficient such as 'alpha'"):
        matprops.fit(
            "mobility",
            "arora-1982",
            data,
            variant="electron",
            free=["alpha"],
            inputs={"Nd": 1e15, "Na": 0},
        )
    with pytest.raises(matprops.InputError, match="'variant' must be one of electron, hole"):
        matprops.fit(
            "mobility", "arora-1982", data, free=["min_mobility"], inputs={"Nd": 1e15, "Na": 0}
        )


def test_coefficients_keep_their_sign_unless_told(gap_model):
    # data rising with temperature would need a negative alpha: it stops at zero
    data = _gap_data(gap_model, None)
    data["band_gap"] = (1.17 + 1e-5 * TEMPERATURE, "eV")
    fit = matprops.fit("band_gap", gap_model, data, free=["gap_at_zero", "alpha"])
    assert fit.values["alpha"] >= 0.0 and fit.at_bound == ("alpha",)
    free = matprops.fit(
        "band_gap",
        gap_model,
        data,
        free=["gap_at_zero", "alpha"],
        bounds={"alpha": (-1e-3, 1e-3)},
    )
    assert free.values["alpha"] < 0.0 and free.at_bound == ()
    with pytest.raises(matprops.InputError, match="holding the base model's alpha"):
        matprops.fit("band_gap", gap_model, data, free=["alpha"], bounds={"alpha": (1, 2)})


# ------------------------------------------------------------------ data forms and errors


def test_csv_dataset_and_mapping_give_the_same_fit(gap_model, tmp_path):
    data = _gap_data(gap_model, 5)
    by_mapping = matprops.fit("band_gap", gap_model, data, free=FREE)
    kelvin = data["temperature"][0]
    path = tmp_path / "gap.csv"
    path.write_text(
        "# INVENTED data for a test\n"
        "temperature (degC),band_gap [meV],band_gap_uncertainty [meV],sample\n"
        + "".join(
            f"{float(t) - 273.15!r},{float(1e3 * e)!r},{1e3 * SIGMA!r},wafer-1\n"
            for t, e in zip(kelvin, data["band_gap"][0], strict=True)
        )
    )
    by_csv = matprops.fit("band_gap", gap_model, path, free=FREE)
    dataset = xr.Dataset(
        {
            "band_gap": (
                "temperature",
                data["band_gap"][0],
                {"units": "eV", "ancillary_variables": "u"},
            ),
            "u": ("temperature", np.full(kelvin.shape, SIGMA), {"units": "eV"}),
        },
        coords={"temperature": ("temperature", kelvin, {"units": "K"})},
    )
    by_dataset = matprops.fit("band_gap", gap_model, dataset, free=FREE)
    for fit in (by_csv, by_dataset):
        for name in FREE:
            assert fit.values[name] == pytest.approx(by_mapping.values[name], rel=1e-6)
    assert by_csv.measurements.content == path.read_bytes()  # kept as given


@pytest.mark.parametrize(
    ("change", "message"),
    [
        (lambda d: d.pop("band_gap_uncertainty"), "standard uncertainties as 'band_gap_uncer"),
        (lambda d: d.update(band_gap=(d["band_gap"][0], "K")), "band_gap in units of eV"),
        (lambda d: d.update(band_gap=d["band_gap"][0]), "units for band_gap"),
        (lambda d: d.pop("temperature"), "the model's input 'temperature'"),
        (lambda d: d.update(band_gap_uncertainty=(np.zeros(40), "eV")), "uncertainties"),
        (lambda d: d["band_gap"][0].__setitem__(3, np.nan), "finite numbers only"),
    ],
)
def test_bad_data_are_refused_with_a_clear_message(gap_model, change, message):
    data = {k: (np.array(v[0]), v[1]) for k, v in _gap_data(gap_model, None).items()}
    change(data)
    with pytest.raises(matprops.InputError, match=message):
        matprops.fit("band_gap", gap_model, data, free=["gap_at_zero"])


def test_what_cannot_be_fitted_is_refused(gap_model):
    data = _gap_data(gap_model, None)
    with pytest.raises(matprops.InputError, match="a closed-form model.*a table model"):
        matprops.fit("absorption", "green-2008", data)
    with pytest.raises(matprops.InputError, match="built from band_gap, densities_of_states"):
        matprops.fit("intrinsic_density", "boltzmann", data)
    with pytest.raises(matprops.UnknownNameError, match="'beta'"):
        matprops.fit("band_gap", gap_model, data, free=["beta"])
    few = _gap_data(gap_model, None, temperature=np.array([10.0, 200.0]))
    with pytest.raises(matprops.InputError, match="more points than free coefficients"):
        matprops.fit("band_gap", gap_model, few, free=FREE)


# ------------------------------------------------------------------ files


def test_a_written_fit_loads_with_its_uncertainties_and_correlations(gap_model, tmp_path):
    root = matprops.create_catalogue(tmp_path / "lab", name="fit-lab", description="tests")
    fit = matprops.fit("band_gap", gap_model, _gap_data(gap_model, 3), free=FREE)
    path = fit.write(root, "fitlab-2027", source=SOURCE, notes="INVENTED data (tests)")
    model = catalogue_at(None, [root], {}).model("band_gap", "fitlab-2027")
    for name in FREE:
        assert model.coefficients[name].kernel_value == pytest.approx(fit.values[name], 1e-15)
        assert model.coefficients[name].kernel_uncertainty == pytest.approx(
            fit.uncertainties[name], rel=1e-15
        )
    (block,) = model.uncertainty.correlations
    np.testing.assert_allclose(np.array(block.matrix), fit.correlation, atol=1e-15)
    record = model.provenance()
    assert record["source"]["data"] == "band_gap-fitlab-2027.csv"
    assert record["fitted"]["base_model"] == "band_gap/passler-2002"
    assert record["fitted"]["dof"] == 37 and record["validity"]["temperature"]["min"] == 5.0
    assert record["additional_sources"][0]["doi"] == "10.1103/PhysRevB.66.085201"
    with pytest.raises(matprops.InputError, match="a model id new to the catalogue"):
        fit.write(root, "fitlab-2027", source=SOURCE)
    assert path.is_file()
    # the fitted model's uncertainty, propagated by matprops, is the fit's own
    si = matprops.silicon(models={"band_gap": "fitlab-2027"}, catalogues=[root], seals={})
    propagated = si.band_gap(np.array([50.0, 300.0]), uncertainty=True)
    step = 1e-6
    rows = []
    for name in FREE:
        up = dict(fit.values)
        up[name] += step * abs(up[name])
        moved = gap_model.kernel(
            temperature=np.array([50.0, 300.0]),
            **{**{c: v.kernel_value for c, v in gap_model.coefficients.items()}, **up},
        )
        rows.append(
            (moved - fit.evaluate(temperature=np.array([50.0, 300.0])))
            / (step * abs(fit.values[name]))
        )
    jacobian = np.array(rows).T
    expected = np.sqrt(np.einsum("ij,jk,ik->i", jacobian, fit.covariance, jacobian))
    np.testing.assert_allclose(propagated.uncertainty.m_as("eV"), expected, rtol=1e-3)


def test_a_failed_write_leaves_the_catalogue_as_it_was(gap_model, tmp_path):
    root = matprops.create_catalogue(tmp_path / "lab", name="fit-lab", description="tests")
    before = (root / "checksums.sha256").read_bytes()
    model = matprops.silicon().catalogue.model("mobility", "arora-1982")
    temperature = np.linspace(250.0, 450.0, 11)
    values = model.select("hole")(temperature=temperature, donor_density=0.0, acceptor_density=1e15)
    data = {
        "temperature": (temperature, "K"),
        "mobility": (values, "cm^2/(V*s)"),
        "mobility_uncertainty": (0.01 * values, "cm^2/(V*s)"),
    }
    fit = matprops.fit(
        "mobility", model, data, variant="hole", free=["min_mobility"], inputs={"Nd": 0, "Na": 1e15}
    )
    bad = {"dopant_densities": {"value": "sometimes", "obtained": "x"}}
    with pytest.raises(matprops.DatasetError, match="dopant_densities"):
        fit.write(root, "fitlab-2027", source=SOURCE, conventions=bad)
    assert (root / "checksums.sha256").read_bytes() == before
    assert not (root / "models" / "mobility" / "fitlab-2027.toml").exists()
    assert list((root / "measurements").iterdir()) == []
    good = {"dopant_densities": {"value": "total", "obtained": "as grown (INVENTED)"}}
    path = fit.write(root, "fitlab-2027", source=SOURCE, conventions=good)
    text = path.read_text()
    assert "as grown (INVENTED)" in text and "assumed as the base model arora-1982" in text


def test_the_report_shows_data_fit_base_and_residuals(gap_model, tmp_path):
    fit = matprops.fit("band_gap", gap_model, _gap_data(gap_model, 8), free=FREE)
    paths = fit.report(tmp_path / "gap.png", note="INVENTED data")
    assert [p.suffix for p in paths] == [".png", ".csv", ".txt"]
    table = np.genfromtxt(paths[1], delimiter=",", names=True)
    assert len(table) == TEMPERATURE.size
    assert "chi2" in paths[2].read_text() and "INVENTED" in paths[2].read_text()
    with pytest.raises(matprops.InputError, match="--force, or overwrite=True"):
        fit.report(tmp_path / "gap.png")
    assert json.loads(json.dumps(fit.coefficients()))[0]["coefficient"] == "gap_at_zero"
