"""Regression and identity tests of the recombination family: the code against itself.

Nothing here validates a model (that is test_recombination.py, each check naming its
source). These pin down identities that follow from how the quantities are composed,
the plain-array door, tables against single calls, and every figure quoted in the
recombination model files' notes, recomputed so the text cannot drift from the code.
"""

import json
import re
from pathlib import Path

import numpy as np
import pytest
from helpers import quiet

import matprops
from matprops.catalogue.store import datasets_root

K_B = 8.617333262e-5  # eV/K


@pytest.mark.model("intrinsic_lifetime/richter-2012")
def test_kernel_door_equals_the_public_method(si):
    kernel = si.kernel("intrinsic_lifetime")
    n0 = np.array([1e15, 1e16, 1e17])
    p0 = 9.67e9**2 / n0
    dn = np.array([1e13, 1e15, 1e16])
    plain = kernel(
        temperature=np.full(3, 300.0),
        equilibrium_electron_density=n0,
        equilibrium_hole_density=p0,
        excess_density=dn,
    )
    public = si.intrinsic_lifetime(300, n0=n0, p0=p0, excess=dn).m_as("s")
    np.testing.assert_allclose(plain, public, rtol=1e-15)
    assert isinstance(plain, np.ndarray)


@pytest.mark.model(
    "band_gap/passler-2002",
    "densities_of_states/couderc-2014",
    "gap_narrowing/schenk-1998",
    "intrinsic_density/couderc-2014",
    "intrinsic_lifetime/richter-2012",
    "ionisation/altermatt-2006",
    "srh_lifetime/shockley-1952",
    "thermal_velocity/green-1990",
)
def test_lifetimes_compose(si):
    result = si.effective_lifetime(
        300, Na=[1e15, 1e16], excess=1e14, defects={"Fe_i": 1e11, "FeB": 1e11}
    )
    intrinsic = 1 / (1 / result.auger_lifetime + 1 / result.radiative_lifetime)
    np.testing.assert_allclose(intrinsic.m_as("s"), result.intrinsic_lifetime.m_as("s"), rtol=1e-13)
    effective = 1 / (1 / result.intrinsic_lifetime + 1 / result.srh_lifetime)
    np.testing.assert_allclose(effective.m_as("s"), result.effective_lifetime.m_as("s"), rtol=1e-13)
    single = [
        si.srh_lifetime(d, 300, Na=[1e15, 1e16], excess=1e14, density=1e11) for d in ("Fe_i", "FeB")
    ]
    np.testing.assert_allclose(
        (1 / (1 / single[0] + 1 / single[1])).m_as("s"), result.srh_lifetime.m_as("s"), rtol=1e-13
    )
    np.testing.assert_allclose(
        si.intrinsic_lifetime(300, Na=[1e15, 1e16], excess=1e14).m_as("s"),
        result.intrinsic_lifetime.m_as("s"),
        rtol=1e-13,
    )
    names = [record["defect"] for record in result.provenance["defects"]]
    assert names == ["iron-interstitial", "iron-boron-pair"]
    assert result.provenance["defects"][0]["thermal_velocity_model"] == "green-1990"
    assert "Istratov" in result.provenance["defects"][0]["citation"]


@pytest.mark.model(
    "band_gap/passler-2002",
    "densities_of_states/couderc-2014",
    "gap_narrowing/schenk-1998",
    "intrinsic_density/couderc-2014",
    "intrinsic_lifetime/richter-2012",
    "ionisation/altermatt-2006",
    "srh_lifetime/shockley-1952",
    "thermal_velocity/green-1990",
)
def test_steady_state_and_implied_voltage(si):
    result = si.implied_voltage(
        300,
        Nd=[1e15, 1e16],
        generation=[1e15, 2.5e17],
        thickness="180 um",
        defect="Fe_i",
        density=1e11,
    )
    dn = result.excess_density.m_as("cm^-3")
    generation = result.generation_rate.m_as("cm^-3/s")
    np.testing.assert_allclose(generation, np.array([1e15, 2.5e17]) / 0.018, rtol=1e-15)
    np.testing.assert_allclose(dn / result.effective_lifetime.m_as("s"), generation, rtol=1e-10)
    n0 = result.equilibrium_electron_density.m_as("cm^-3")
    p0 = result.equilibrium_hole_density.m_as("cm^-3")
    # qV = kT ln[n p / (gamma_n gamma_p ni_eff(n, p)^2)]: the plain splitting less the
    # narrowing the injected carriers add (Schenk's) and the change of the degeneracy
    # factors gamma = F_1/2(eta)/exp(eta), n = Nc F_1/2(eta)
    from matprops.kernels.fermi_dirac import fd_half_inverse

    nc, nv = (x.m_as("cm^-3") for x in si.densities_of_states(300))
    plain = K_B * 300 * np.log((n0 + dn) * (p0 + dn) / (n0 * p0))
    narrowing = (
        si.gap_narrowing(300, Nd=[1e15, 1e16], n=n0 + dn, p=p0 + dn)
        - si.gap_narrowing(300, Nd=[1e15, 1e16], n=n0, p=p0)
    ).m_as("eV")

    def log_gamma(density, states):
        return np.log(density / states) - fd_half_inverse(density / states)

    degeneracy = (
        log_gamma(n0 + dn, nc) + log_gamma(p0 + dn, nv) - log_gamma(n0, nc) - log_gamma(p0, nv)
    )
    expected = plain - narrowing - K_B * 300 * degeneracy
    np.testing.assert_allclose(result.implied_voltage.m_as("V"), expected, rtol=1e-9)
    assert np.all(narrowing > 0)
    # the same point through the lifetime methods
    again = si.effective_lifetime(300, Nd=[1e15, 1e16], excess=dn, defect="Fe_i", density=1e11)
    np.testing.assert_allclose(
        again.effective_lifetime.m_as("s"), result.effective_lifetime.m_as("s"), rtol=1e-13
    )


@pytest.mark.model(
    "band_gap/passler-2002",
    "densities_of_states/couderc-2014",
    "gap_narrowing/schenk-1998",
    "intrinsic_density/couderc-2014",
    "intrinsic_lifetime/richter-2012",
    "ionisation/altermatt-2006",
    "srh_lifetime/shockley-1952",
    "thermal_velocity/green-1990",
)
def test_current_density_is_a_photon_flux_times_q(si):
    a = si.implied_voltage(
        300, Na=1e15, generation=matprops.Q_(40, "mA/cm^2"), thickness=matprops.Q_(180, "um")
    )
    b = si.implied_voltage(300, Na=1e15, generation=0.040 / 1.602176634e-19, thickness="180 um")
    assert a.implied_voltage.m_as("V") == pytest.approx(b.implied_voltage.m_as("V"), rel=1e-12)


@pytest.mark.model("srh_lifetime/shockley-1952")
def test_inline_defect_may_name_its_thermal_velocity_model(si):
    defect = {
        "level": 0.38,
        "reference": "valence",
        "electron_cross_section": 5e-14,
        "hole_cross_section": 7e-17,
        "thermal_velocity": "green-1990",
    }
    named = si.srh_lifetime(defect, 300, Na=1e16, excess=1e13, density=1e11)
    plain = si.srh_lifetime("Fe_i", 300, Na=1e16, excess=1e13, density=1e11)
    assert named.m_as("s") == pytest.approx(plain.m_as("s"), rel=1e-14)
    with pytest.raises(matprops.UnknownModelError, match="green-1990"):
        si.srh_lifetime({**defect, "thermal_velocity": "sze-1981"}, 300, Na=1e16, density=1e11)


@pytest.mark.model(
    "band_gap/passler-2002",
    "densities_of_states/couderc-2014",
    "gap_narrowing/schenk-1998",
    "intrinsic_density/couderc-2014",
    "intrinsic_lifetime/richter-2012",
    "ionisation/altermatt-2006",
    "srh_lifetime/shockley-1952",
    "thermal_velocity/green-1990",
)
def test_tables_equal_single_calls(si):
    data = si.table(
        ["intrinsic_lifetime", "srh_lifetime", "implied_voltage"],
        T=300,
        Na=[1e15, 1e16],
        excess=[0.0, 1e15],
        defect=["iron-interstitial", "iron-boron-pair"],
        defect_density=1e11,
        generation=[1e16, 1e17],
        thickness="180 um",
    )
    for i, na in enumerate([1e15, 1e16]):
        for j, dn in enumerate([0.0, 1e15]):
            assert data.intrinsic_lifetime.values[i, j] == pytest.approx(
                si.intrinsic_lifetime(300, Na=na, excess=dn).m_as("s"), rel=1e-13
            )
            for k, defect in enumerate(["iron-interstitial", "iron-boron-pair"]):
                assert data.srh_lifetime.values[k, i, j] == pytest.approx(
                    si.srh_lifetime(defect, 300, Na=na, excess=dn, density=1e11).m_as("s"),
                    rel=1e-13,
                )
        for k, defect in enumerate(["iron-interstitial", "iron-boron-pair"]):
            for j, g in enumerate([1e16, 1e17]):
                single = si.implied_voltage(
                    300, Na=na, generation=g, thickness="180 um", defect=defect, density=1e11
                )
                assert data.implied_voltage.values[k, i, j] == pytest.approx(
                    single.implied_voltage.m_as("V"), rel=1e-10
                )
    assert data.srh_lifetime.dims == ("defect", "acceptor_density", "excess_density")
    assert data.implied_voltage.dims == ("defect", "acceptor_density", "generation")
    record = json.loads(data.implied_voltage.attrs["provenance"])
    assert record["model"] == "derived"


@pytest.mark.model(
    "band_gap/passler-2002",
    "densities_of_states/couderc-2014",
    "gap_narrowing/schenk-1998",
    "intrinsic_density/couderc-2014",
    "intrinsic_lifetime/richter-2012",
    "ionisation/altermatt-2006",
    "srh_lifetime/shockley-1952",
    "thermal_velocity/green-1990",
)
def test_results_become_datasets(si):
    result = si.effective_lifetime(300, Na=[1e15, 1e16], excess=1e14, defect="FeB", density=1e11)
    data = result.to_dataset(dims=("acceptor_density",))
    assert data.effective_lifetime.attrs["units"] == "s"
    assert json.loads(data.attrs["provenance"])["quantity"] == "effective_lifetime"
    assert "effective_lifetime" in repr(result)


# ----------------------------------------------------- figures quoted in model files

MODELS = datasets_root() / "models"
DEFECTS = datasets_root() / "defects"


# the figures quoted in richter-2012.toml and kerr-2002.toml are of those models with the
# radiative coefficient they were written with (2026.2's defaults differ)
_RICHTER = {"intrinsic_lifetime": "richter-2012", "radiative_coefficient": "trupke-2003"}


def _richter_ambipolar():
    si = matprops.silicon(models=_RICHTER)
    out = []
    for dn in (1e15, 5e15, 1e16, 5e16):
        tau = quiet(si.auger_lifetime, 300, n0=1e10, p0=1e10, excess=dn).m_as("s")
        out.append(f"{1 / (tau * dn * dn):.3g}".replace("e-30", ""))
    return out


def _radiative_shares():
    si = matprops.silicon(models=_RICHTER)
    shares = []
    for density in (1e15, 1e16):
        for kind in ("Nd", "Na"):
            result = si.effective_lifetime(300, excess=0, **{kind: density})
            share = (result.intrinsic_lifetime / result.radiative_lifetime).m_as("")
            shares.append(f"{100 * share:.0f}")
    return shares


def _kerr_over_richter():
    richter = matprops.silicon(models=_RICHTER)
    kc = matprops.silicon(models={**_RICHTER, "intrinsic_lifetime": "kerr-2002"})
    ratios = []
    for kind in ("Nd", "Na"):
        ratio = (
            kc.intrinsic_lifetime(300, excess=1e15, **{kind: 1e15})
            / richter.intrinsic_lifetime(300, excess=1e15, **{kind: 1e15})
        ).m_as("")
        ratios.append(f"{ratio:.2f}")
    return ratios


def _paudyal(name):
    defect = matprops.silicon().defect(name)
    return (
        f"{defect.electron_cross_section(300.0):.2g}",
        f"{defect.hole_cross_section(300.0):.2g}",
    )


QUOTED = [
    (
        MODELS / "intrinsic_lifetime/richter-2012.toml",
        (
            "C_a = 3.0e-29 dn^-0.08: {}e-30 at 1e15, {}e-30 at 5e15, {}e-30 at 1e16, {}e-30 "
            "cm^6/s at 5e16 cm^-3"
        ),
        _richter_ambipolar,
    ),
    (
        MODELS / "intrinsic_lifetime/richter-2012.toml",
        (
            "Radiative recombination makes up {} % (n-type) and {} % (p-type) of the "
            "low-injection intrinsic rate at 1e15 cm^-3, and {} % and {} % at 1e16 cm^-3"
        ),
        _radiative_shares,
    ),
    (
        MODELS / "intrinsic_lifetime/kerr-2002.toml",
        "of 1e15 cm^-3 it gives {} (n-type) and {} (p-type) of richter-2012's lifetime",
        _kerr_over_richter,
    ),
    (
        DEFECTS / "iron-interstitial-paudyal-2010.toml",
        "At 300 K: sigma_n = {} cm^2 and sigma_p = {} cm^2",
        lambda: _paudyal("iron-interstitial-paudyal-2010"),
    ),
    (
        DEFECTS / "iron-boron-pair-paudyal-2010.toml",
        "At 300 K: sigma_n = {} cm^2 and sigma_p = {} cm^2",
        lambda: _paudyal("iron-boron-pair-paudyal-2010"),
    ),
    (
        DEFECTS / "iron-boron-pair.toml",
        "give {} and {} cm^2 at 300 K",
        lambda: _paudyal("iron-boron-pair-paudyal-2010"),
    ),
]


def _normalise(text):
    return re.sub(r"\s+", " ", text)


@pytest.mark.model(
    "band_gap/passler-2002",
    "densities_of_states/couderc-2014",
    "gap_narrowing/schenk-1998",
    "intrinsic_density/couderc-2014",
    "intrinsic_lifetime/kerr-2002",
    "intrinsic_lifetime/richter-2012",
    "ionisation/altermatt-2006",
    "srh_lifetime/shockley-1952",
    "thermal_velocity/green-1990",
)
@pytest.mark.parametrize(
    "path, template, compute", QUOTED, ids=[f"{Path(p).name}:{t[:30]}" for p, t, _ in QUOTED]
)
def test_quoted_figures_are_what_the_code_gives(path, template, compute):
    expected = _normalise(template.format(*compute()))
    assert expected in _normalise(Path(path).read_text()), (
        f"{Path(path).name} should say: {expected!r}"
    )


# ----------------------------------------------------------------- moved from outside/
# (these compare the code with the numbers its own files hold: regression, not validation)


def test_each_lifetime_model_keeps_the_radiative_term_it_was_fitted_with(si):
    # REGRESSION of the composition (the model files' own coefficients): the two 300 K
    # values in circulation are not interchangeable (doping-models.md section 6.1):
    # Richter's B_low = 4.73e-15, Kerr & Cuevas's constant 9.5e-15; a model without one
    # takes the release's coefficient
    expected = {
        "richter-2012": 4.73e-15,
        "kerr-2002": 9.5e-15,
        "dziewior-1977": si.radiative_coefficient(300).m_as("cm^3/s"),
    }
    for model_id, b in expected.items():
        model = matprops.silicon(models={"intrinsic_lifetime": model_id}).model(
            "intrinsic_lifetime"
        )
        tau = model(
            temperature=300.0,
            equilibrium_electron_density=1e15,
            equilibrium_hole_density=1e5,
            excess_density=1e14,
            part="radiative",
        )
        assert 1.0 / (tau * (1e15 + 1e5 + 1e14)) == pytest.approx(b, rel=1e-12)
        convention = model.conventions["radiative_coefficient"].value
        assert convention == ("composed" if model_id == "dziewior-1977" else "own")


def test_iron_entries_as_recalled(si):
    # REGRESSION (recalled values, as the catalogue stores them; from memory: Istratov et
    # al. 1999 review): Fe_i at E_v + 0.38 eV, sigma_n = 5e-14, sigma_p = 7e-17 cm^2;
    # Rein & Glunz's k = 51 against the lifetime-spectroscopy entry's ratio
    fe = si.defect("Fe_i")
    assert (fe.reference, fe.energy) == ("valence", pytest.approx(0.38))
    assert fe.electron_cross_section(300.0) == pytest.approx(5e-14)
    assert fe.hole_cross_section(300.0) == pytest.approx(7e-17)
    assert float(si.defect("iron-interstitial-rein-2005").ratio(300.0)) == pytest.approx(
        51, abs=0.5
    )
