"""Doped silicon: gap narrowing, dopant ionisation, equilibrium carriers, ni_eff.

Outside checks name their source; checks against numbers computed from the same
equations are labelled as cross-checks or live in test_regression.py.
"""

import warnings

import numpy as np
import pytest
from helpers import minimum_ionised_fraction
from hypothesis import given, settings
from hypothesis import strategies as st

import matprops

APPARENT = ("slotboom-1976", "klaassen-1992", "delalamo-1985")
K_B = 8.617333262e-5  # eV/K, CODATA 2018 (exact)


def with_narrowing(model_id):
    return matprops.silicon(models={"gap_narrowing": model_id})


# ----------------------------------------------------------------- narrowing


@pytest.mark.model(
    "gap_narrowing/delalamo-1985",
    "gap_narrowing/klaassen-1992",
    "gap_narrowing/schenk-1998",
    "gap_narrowing/slotboom-1976",
)
@pytest.mark.parametrize("model_id", APPARENT + ("schenk-1998",))
def test_narrowing_is_about_a_tenth_of_an_ev_at_1e20(model_id):
    # common practice: heavily doped emitters (1e20 cm^-3) narrow the gap by roughly
    # 0.1 eV (published apparent and physical models span about 80-130 meV there)
    si = with_narrowing(model_id)
    dEg = si.gap_narrowing(300, Nd=1e20, n=1e20, p=1e1).m_as("eV")
    assert 0.08 <= dEg <= 0.13


@pytest.mark.model(
    "gap_narrowing/delalamo-1985",
    "gap_narrowing/klaassen-1992",
    "gap_narrowing/schenk-1998",
    "gap_narrowing/slotboom-1976",
)
@pytest.mark.parametrize("model_id", APPARENT + ("schenk-1998",))
def test_narrowing_vanishes_in_lightly_doped_silicon(model_id):
    # common practice: below about 1e15 cm^-3 narrowing is negligible (< 2 meV, under kT/10)
    si = with_narrowing(model_id)
    with warnings.catch_warnings():  # (apparent narrowings warn there: see below)
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        dEg = si.gap_narrowing(300, Nd=1e14, n=1e14, p=1e6).m_as("eV")
    assert 0 <= dEg < 0.002


@pytest.mark.model("gap_narrowing/schenk-1998")
def test_schenk_cross_check_against_an_independent_implementation(si):
    # CROSS-CHECK, not validation: values computed in ../shared/reference/doping-models.md
    # §3.4 from the equations of a device simulator's implementation of Schenk (1998)
    # (Genius TCAD Open, Si_band_schenk.cc), majority density = N, minority = ni^2/N,
    # ni = 9.65e9, 300 K; printed to 0.1 meV.
    ni = 9.65e9
    n_type = {1e17: 12.1, 1e18: 28.8, 1e19: 54.8, 1e20: 90.8}
    p_type = {1e17: 12.3, 1e18: 31.5, 1e19: 60.9, 1e20: 105.4}
    for N, expected in n_type.items():
        value = si.gap_narrowing(300, Nd=N, n=N, p=ni**2 / N).m_as("meV")
        assert value == pytest.approx(expected, abs=0.06)
    for N, expected in p_type.items():
        value = si.gap_narrowing(300, Na=N, p=N, n=ni**2 / N).m_as("meV")
        assert value == pytest.approx(expected, abs=0.06)


@pytest.mark.model("gap_narrowing/schenk-1998")
def test_schenk_depends_on_free_carriers_and_splits_between_bands(si):
    # Schenk (1998) is a rigid shift of each band: both shifts > 0, and the
    # exchange-correlation part grows with injected carriers
    dec, dev = si.band_edge_shifts(300, Na=1e16, n=1e4, p=1e16)
    assert dec.m_as("eV") > 0 and dev.m_as("eV") > 0
    low = si.gap_narrowing(300, Na=1e16, n=1e4, p=1e16)
    high = si.gap_narrowing(300, Na=1e16, n=1e17, p=1.01e17)
    assert high > low


@pytest.mark.model("gap_narrowing/klaassen-1992")
def test_apparent_narrowing_splits_in_halves():
    si = with_narrowing("klaassen-1992")
    dec, dev = si.band_edge_shifts(300, Nd=[1e18, 1e19])
    np.testing.assert_array_equal(dec.magnitude, dev.magnitude)


@pytest.mark.model(
    "gap_narrowing/delalamo-1985",
    "gap_narrowing/klaassen-1992",
    "gap_narrowing/slotboom-1976",
    "intrinsic_density/couderc-2014",
)
def test_apparent_narrowing_is_composed_with_its_own_intrinsic_density():
    # an apparent narrowing describes ni_eff = ni_fit exp(dEg/2kT) with the ni it was
    # fitted with (recorded in its file); matprops must use that density, and say so
    for model_id in APPARENT:
        si = with_narrowing(model_id)
        fitted = si.model("gap_narrowing").conventions["intrinsic_density"].value
        dEg = si.gap_narrowing(300, Nd=1e19).m_as("eV")
        ni_eff = si.effective_intrinsic_density(300, Nd=1e19).m_as("cm^-3")
        assert ni_eff == pytest.approx(fitted * np.exp(dEg / (2 * K_B * 300)), rel=1e-12)
        note = si.provenance("effective_intrinsic_density")["composition"]
        assert model_id in note and "fitted with" in note
        record = si.provenance("effective_intrinsic_density")
        assert set(record["components"]) == {"intrinsic_density", "gap_narrowing"}


@pytest.mark.model(
    "densities_of_states/couderc-2014",
    "gap_narrowing/slotboom-1976",
    "intrinsic_density/couderc-2014",
    "ionisation/altermatt-2006",
)
def test_apparent_narrowing_with_fermi_dirac_statistics_warns():
    si = with_narrowing("slotboom-1976")
    with pytest.warns(matprops.ValidityWarning, match="counts degeneracy twice"):
        si.equilibrium(300, Nd=1e18, statistics="fermi-dirac")
    strict = matprops.silicon(models={"gap_narrowing": "slotboom-1976"}, strict=True)
    with pytest.raises(matprops.ValidityError):
        strict.equilibrium(300, Nd=1e18, statistics="fermi-dirac")


@pytest.mark.model("gap_narrowing/delalamo-1985")
def test_narrowing_outside_validity_warns_and_strict_raises():
    si = with_narrowing("delalamo-1985")
    with pytest.warns(matprops.ValidityWarning, match=r"acceptor_density .*1e\+17"):
        si.gap_narrowing(300, Na=1e19)
    with pytest.raises(matprops.ValidityError):
        matprops.silicon(models={"gap_narrowing": "delalamo-1985"}, strict=True).gap_narrowing(
            300, Na=1e19
        )


# ----------------------------------------------------------------- ionisation


@pytest.mark.model("ionisation/sze-2007")
def test_textbook_ionisation_energies():
    # Solymar & Walsh, Electrical Properties of Materials, Table 8.1, and Ahmed,
    # Physics and Engineering of Radiation Detection, Table 5.1.4: P and B 45 meV
    si = matprops.silicon(models={"ionisation": "sze-2007"})
    assert si.ionisation_energy(1e15, "phosphorus").m_as("meV") == pytest.approx(45, abs=0.5)
    assert si.ionisation_energy(1e15, "boron").m_as("meV") == pytest.approx(45, abs=0.5)
    # Ahmed Table 5.1.4: In 157 meV; Solymar & Walsh: 160 meV (the spread of the two)
    assert 157 <= si.ionisation_energy(1e15, "In").m_as("meV") <= 160


@pytest.mark.model("ionisation/altermatt-2006")
def test_altermatt_level_falls_with_density_and_merges(si):
    energy, share = si.dopant_level([1e14, 1e18, 1e19, 1e20], "phosphorus")
    assert np.all(np.diff(energy.m_as("eV")) < 0) and np.all(np.diff(share.magnitude) < 0)
    # at low density the level is the isolated-donor value, about 45 meV (Solymar & Walsh
    # Table 8.1; Altermatt et al. 2006 use 45.5 meV)
    assert energy[0].m_as("meV") == pytest.approx(45, abs=1)


@pytest.mark.model("ionisation/altermatt-2006")
@pytest.mark.parametrize("species, published", [("phosphorus", 0.76), ("boron", 0.73)])
def test_minimum_ionised_fraction_at_300K(si, species, published):
    # Altermatt et al. 2006, J. Appl. Phys. 100, 113715, Fig. 5, as read in the nextnano3
    # tutorial on incomplete ionisation: the ionised fraction at 300 K dips to about 0.76
    # (Si:P) and 0.73 (Si:B) near 2-3e18 cm^-3; +-0.02 for reading a figure second-hand.
    # The release default as it is: its levels carry the densities of states and the
    # statistics the model was fitted with (its fit conventions), so the release's own
    # couderc-2014 Nv (19 % below Green's) no longer deepens the boron dip to 0.69.
    # (For P the recalled N_ref was preferred over another source's value because it
    # reproduces this figure: this check is not independent of that choice.)
    assert minimum_ionised_fraction(si, species) == pytest.approx(published, abs=0.02)


@pytest.mark.model("ionisation/altermatt-2006")
@pytest.mark.xfail(
    strict=True,
    reason="the recalled arsenic parameters of altermatt-2006 "
    "give 0.69 against the published 0.66: they are doubtful (see the file)",
)
def test_minimum_ionised_fraction_arsenic(si):
    # Altermatt et al. 2006, J. Appl. Phys. 100, 113715, Fig. 5 (via the nextnano3 tutorial)
    assert minimum_ionised_fraction(si, "arsenic") == pytest.approx(0.66, abs=0.02)


@pytest.mark.model(
    "densities_of_states/couderc-2014",
    "gap_narrowing/schenk-1998",
    "intrinsic_density/couderc-2014",
    "ionisation/altermatt-2006",
)
def test_unknown_or_wrong_kind_of_dopant_lists_the_valid_ones(si):
    with pytest.raises(matprops.InputError, match="donor species: one of phosphorus, arsenic"):
        si.equilibrium(300, Nd=1e16, donor="boron")
    with pytest.raises(matprops.InputError, match="antimony"):
        si.dopant_level(1e16, "unobtainium")
    # a species a model has no set for and no stand-in: the error lists what is served
    with pytest.raises(
        matprops.UnknownVariantError, match="known: antimony, arsenic, boron, phosphorus"
    ):
        si.doping_from_resistivity(1.0, "23 degC", "gallium", conversion="standard")


def test_gallium_indium_aluminium_antimony_are_served_and_labelled(si):
    # the release's ionisation (Altermatt et al.: P, As, B) names sze-2007's fixed levels
    # for the other species; Sze & Ng / Genius TCAD Open (secondary): Ga 72, In 160,
    # Al 67, Sb 39 meV
    for species, energy in (("gallium", 72), ("indium", 160), ("aluminium", 67), ("antimony", 39)):
        assert si.ionisation_energy(1e15, species).m_as("meV") == pytest.approx(energy)
    stand_ins = si.provenance("ionisation")["stand_ins"]
    assert stand_ins["gallium"]["model"] == "sze-2007"
    assert si.provenance("mobility")["stand_ins"]["gallium"]["variant"] == "boron"
    # a deeper level ionises less: gallium-doped silicon has fewer holes than boron-doped
    ga = si.equilibrium(300, Na=1e17, acceptor="gallium").hole_density.m
    b = si.equilibrium(300, Na=1e17).hole_density.m
    assert ga < 0.95 * b


# ----------------------------------------------------------------- equilibrium


@pytest.mark.model(
    "densities_of_states/couderc-2014",
    "gap_narrowing/schenk-1998",
    "intrinsic_density/couderc-2014",
    "ionisation/altermatt-2006",
)
def test_boltzmann_low_doping_limits(si):
    # common practice (textbook, Boltzmann statistics, complete ionisation): n0 = Nd,
    # p0 = ni^2/Nd, and the Fermi level lies kT ln(Nd/ni) above the intrinsic level.
    # At 1e14 cm^-3 incomplete ionisation changes n0 by < 1e-4, and the narrowing (a few
    # tenths of a meV, negligible by common practice) enters through ni_eff and the edge.
    T, N = 300.0, 1e14
    state = si.equilibrium(T, Nd=N, statistics="boltzmann")
    ni = si.intrinsic_density(T).m_as("cm^-3")
    ni_eff = state.effective_intrinsic_density.m_as("cm^-3")
    assert ni_eff == pytest.approx(ni, rel=0.02)
    assert state.n.m_as("cm^-3") == pytest.approx(N, rel=1e-4)
    assert state.p.m_as("cm^-3") == pytest.approx(ni_eff**2 / N, rel=2e-4)
    shift = state.conduction_edge_shift.m_as("eV")
    assert 0 <= shift < 1e-3
    assert state.fermi_level.m_as("eV") == pytest.approx(K_B * T * np.log(N / ni) - shift, abs=1e-5)
    p_type = si.equilibrium(T, Na=N, statistics="boltzmann")
    assert p_type.p.m_as("cm^-3") == pytest.approx(N, rel=1e-4)
    assert p_type.fermi_level.m_as("eV") == pytest.approx(-K_B * T * np.log(N / ni), abs=1e-3)


@pytest.mark.model(
    "densities_of_states/couderc-2014",
    "gap_narrowing/schenk-1998",
    "intrinsic_density/couderc-2014",
    "ionisation/altermatt-2006",
)
def test_undoped_equilibrium_reproduces_the_release_intrinsic_density(si):
    # identity of the composition: the solver's gap is kT ln(NcNv/ni^2), so undoped
    # silicon gives n = p = ni_eff = ni exp(dEg/2kT), dEg being Schenk's small shift
    # from the intrinsic carriers themselves (a few ueV at 300 K)
    for T in (200.0, 300.0, 450.0):
        state = si.equilibrium(T, statistics="boltzmann")
        ni = si.intrinsic_density(T).m_as("cm^-3")
        ni_eff = state.effective_intrinsic_density.m_as("cm^-3")
        assert state.n.m_as("cm^-3") == pytest.approx(ni_eff, rel=1e-11)
        assert state.p.m_as("cm^-3") == pytest.approx(ni_eff, rel=1e-11)
        dEg = state.gap_narrowing.m_as("eV")
        assert ni_eff == pytest.approx(ni * np.exp(dEg / (2 * K_B * T)), rel=1e-12)


@pytest.mark.model(
    "densities_of_states/couderc-2014",
    "gap_narrowing/schenk-1998",
    "intrinsic_density/couderc-2014",
    "ionisation/altermatt-2006",
)
def test_compensated_and_undoped_material_are_solved(si):
    state = si.equilibrium(300, Na=1e16, Nd=1e16)
    n, p = state.n.m_as("cm^-3"), state.p.m_as("cm^-3")
    assert 0.5 < n / p < 2  # fully compensated: close to intrinsic
    assert si.equilibrium(300).n.m_as("cm^-3") == pytest.approx(
        si.intrinsic_density(300).m_as("cm^-3"), rel=0.02
    )


@pytest.mark.model(
    "densities_of_states/couderc-2014",
    "gap_narrowing/schenk-1998",
    "intrinsic_density/couderc-2014",
    "ionisation/sze-2007",
)
def test_freeze_out_at_cryogenic_temperature():
    # common practice: at 20-40 K shallow donors in lightly doped silicon are largely
    # neutral (freeze-out), at room temperature almost fully ionised
    si = matprops.silicon(models={"ionisation": "sze-2007"})
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        cold = si.equilibrium(20, Nd=1e16)
    warm = si.equilibrium(300, Nd=1e16)
    assert cold.n.m_as("cm^-3") < 1e14
    assert warm.n.m_as("cm^-3") > 0.99e16


@pytest.mark.model(
    "densities_of_states/couderc-2014",
    "gap_narrowing/schenk-1998",
    "intrinsic_density/couderc-2014",
    "ionisation/altermatt-2006",
)
def test_equilibrium_shapes_broadcast_and_result_exports(si):
    T = np.array([250.0, 300.0, 350.0])[:, None]
    Nd = np.array([1e15, 1e17])[None, :]
    state = si.equilibrium(T, Nd=Nd, Na=1e14)
    assert state.n.shape == (3, 2) and state.fermi_level.shape == (3, 2)
    data = state.to_dataset(dims=("temperature", "donor_density"))
    assert data["electron_density"].attrs["units"] == "cm^-3"
    assert data.attrs["statistics"] == "fermi-dirac"
    assert "gap_narrowing" in data.attrs["provenance"]
    assert "fermi_level" in repr(state)


@pytest.mark.model(
    "densities_of_states/couderc-2014",
    "gap_narrowing/schenk-1998",
    "intrinsic_density/couderc-2014",
    "ionisation/altermatt-2006",
)
def test_shapes_that_do_not_broadcast_are_named(si):
    with pytest.raises(matprops.InputError, match="Na, Nd"):
        si.equilibrium(300, Na=np.ones(3) * 1e15, Nd=np.ones(4) * 1e15)


@pytest.mark.model(
    "densities_of_states/couderc-2014",
    "gap_narrowing/schenk-1998",
    "intrinsic_density/couderc-2014",
    "ionisation/altermatt-2006",
)
def test_negative_densities_and_bad_statistics_are_refused(si):
    with pytest.raises(matprops.InputError, match="'Nd' must be >= 0 cm\\^-3"):
        si.equilibrium(300, Nd=-1e15)
    with pytest.raises(matprops.InputError, match="statistics"):
        si.equilibrium(300, Nd=1e15, statistics="maxwell")


@pytest.mark.model(
    "densities_of_states/couderc-2014",
    "gap_narrowing/schenk-1998",
    "intrinsic_density/couderc-2014",
    "ionisation/altermatt-2006",
)
def test_dopant_density_beyond_validity_warns(si):
    with pytest.warns(matprops.ValidityWarning, match="dopant_density"):
        si.equilibrium(300, Nd=5e20)


@pytest.mark.model(
    "densities_of_states/couderc-2014",
    "gap_narrowing/schenk-1998",
    "intrinsic_density/couderc-2014",
    "ionisation/altermatt-2006",
)
def test_kernel_door_gives_plain_arrays(si):
    solve = si.kernel("equilibrium", donor="phosphorus", acceptor="boron")
    result = solve(np.array([300.0, 350.0]), Nd=np.array([1e16, 1e17]), Na=np.array([0.0, 1e15]))
    state = si.equilibrium([300.0, 350.0], Nd=[1e16, 1e17], Na=[0.0, 1e15])
    np.testing.assert_allclose(result["electron_density"], state.n.m_as("cm^-3"), rtol=1e-14)
    level = si.kernel("ionisation", dopant="boron")
    energy, _ = level(dopant_density=np.array([1e15]))
    assert energy.shape == (1,)
    with pytest.raises(matprops.InputError, match="dopant"):
        si.kernel("ionisation")


# ----------------------------------------------------------------- properties

densities = st.floats(min_value=1e13, max_value=1e20)
temperatures = st.floats(min_value=200, max_value=500)


@pytest.mark.model(
    "densities_of_states/couderc-2014",
    "gap_narrowing/schenk-1998",
    "intrinsic_density/couderc-2014",
    "ionisation/altermatt-2006",
)
@settings(max_examples=40, deadline=None)
@given(temperatures, densities, densities)
def test_neutrality_holds_everywhere(T, Nd, Na):
    si = matprops.silicon()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        state = si.equilibrium(T, Nd=Nd, Na=Na)
    positive = (state.p + state.ionised_donors).m_as("cm^-3")
    negative = (state.n + state.ionised_acceptors).m_as("cm^-3")
    assert abs(positive - negative) <= 1e-10 * max(positive, negative)


@pytest.mark.model(
    "gap_narrowing/delalamo-1985",
    "gap_narrowing/klaassen-1992",
    "gap_narrowing/schenk-1998",
    "gap_narrowing/slotboom-1976",
    "intrinsic_density/couderc-2014",
)
@settings(max_examples=40, deadline=None)
@given(temperatures, st.floats(min_value=1e13, max_value=1e20))
def test_narrowing_does_not_fall_with_doping(T, N):
    # property (common practice): more dopants narrow the gap more
    for model_id in APPARENT + ("schenk-1998",):
        si = with_narrowing(model_id)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", matprops.ValidityWarning)
            low = si.gap_narrowing(T, Nd=N, n=N, p=1.0).m_as("eV")
            high = si.gap_narrowing(T, Nd=2 * N, n=2 * N, p=1.0).m_as("eV")
        assert high >= low >= 0


@settings(max_examples=40, deadline=None)
@given(st.floats(min_value=250, max_value=400), st.floats(min_value=1e10, max_value=1e13))
def test_release_ni_eff_tends_to_its_intrinsic_density_at_low_doping(T, N):
    # physics (common practice): narrowing vanishes in lightly doped silicon, so the
    # release default's ni_eff tends to the release's own ni (within 1 % below 1e13
    # cm^-3) and never falls below it
    si = matprops.silicon()
    ni = si.intrinsic_density(T).m_as("cm^-3")
    for kind in ("Nd", "Na"):
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", matprops.ValidityWarning)
            ni_eff = si.effective_intrinsic_density(T, **{kind: N}).m_as("cm^-3")
        assert ni <= ni_eff <= 1.01 * ni


@pytest.mark.parametrize("model_id", APPARENT)
def test_an_apparent_narrowing_warns_where_it_does_not_tend_to_the_release_ni(model_id):
    # an apparent narrowing composed with the intrinsic density it was fitted with tends
    # to that density (1.2-1.5 times the release's), not to the release's, as doping
    # falls: below the limit in its file (where that offset outweighs the narrowing
    # itself) every composed quantity warns, and strict raises
    si = with_narrowing(model_id)
    with pytest.warns(matprops.ValidityWarning, match="tends to that density"):
        si.effective_intrinsic_density(300, Nd=1e15)
    with pytest.warns(matprops.ValidityWarning, match="validity region"):
        si.equilibrium(300, Na=1e15)
    strict = matprops.silicon(models={"gap_narrowing": model_id}, strict=True)
    with pytest.raises(matprops.ValidityError):
        strict.effective_intrinsic_density(300, Nd=1e15)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        si.effective_intrinsic_density(300, Nd=3e18)


@pytest.mark.model(
    "densities_of_states/couderc-2014",
    "gap_narrowing/delalamo-1985",
    "gap_narrowing/klaassen-1992",
    "gap_narrowing/slotboom-1976",
    "intrinsic_density/couderc-2014",
    "ionisation/altermatt-2006",
)
@settings(max_examples=30, deadline=None)
@given(temperatures, st.floats(min_value=1e13, max_value=1e17), st.sampled_from(APPARENT))
def test_mass_action_in_the_boltzmann_limit(T, N, model_id):
    # n0 p0 = ni_eff^2 under Boltzmann statistics (any doping, incomplete ionisation or not)
    si = with_narrowing(model_id)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        state = si.equilibrium(T, Nd=N, statistics="boltzmann")
    product = (state.n * state.p).m_as("cm^-6")
    assert product == pytest.approx(state.effective_intrinsic_density.m_as("cm^-3") ** 2, rel=1e-9)
