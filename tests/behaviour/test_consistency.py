"""Composition by fit conventions: the consistency report, its warnings, the input kinds
bound kernels state, and the files' stand-ins and release defaults."""

import warnings

import numpy as np
import pytest

import matprops


def test_the_default_release_is_consistent(si):
    report = si.consistency()
    assert len(report) == 0 and not report and list(report) == []
    applied = " ".join(entry for entries in report.applied.values() for entry in entries)
    assert "total dopant densities" in applied and "complete ionisation" in applied
    assert "green-1990" in applied  # the ionisation levels carry their own Nv
    assert any("gallium" in entry for entry in report.stand_ins)
    assert "0 mismatch" in repr(report)
    record = si.provenance("resistivity")
    assert any("complete ionisation" in entry for entry in record["conventions_applied"])
    assert "conventions_mismatched" not in record


def test_a_mixed_choice_lists_its_mismatch_with_sizes_and_warns():
    si = matprops.silicon(models={"gap_narrowing": "klaassen-1992"})
    report = si.consistency()
    assert len(report) == 1
    (mismatch,) = report.of("intrinsic_lifetime")
    assert (mismatch.model, mismatch.convention) == (
        si.models["intrinsic_lifetime"],
        "gap_narrowing",
    )
    assert set(mismatch.sizes) == {
        f"300 K, {kind}={n:g}" for kind in ("Nd", "Na") for n in (1e15, 1e17, 1e19)
    }
    assert all(abs(size) > 0.01 for size in mismatch.sizes.values())
    assert "MISMATCH" in repr(report) and "schenk-1998" in mismatch.message()
    assert si.provenance("intrinsic_lifetime")["conventions_mismatched"][0]["fitted"] == (
        "schenk-1998"
    )
    with pytest.warns(matprops.ValidityWarning, match="fitted with gap_narrowing"):
        si.intrinsic_lifetime(300, Nd=1e18, excess=1e15)
    strict = matprops.silicon(models={"gap_narrowing": "klaassen-1992"}, strict=True)
    with pytest.raises(matprops.ValidityError, match="fitted with gap_narrowing"):
        strict.intrinsic_lifetime(300, Nd=1e18, excess=1e15)
    # given n0, p0 the narrowing does not enter: no warning
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        si.intrinsic_lifetime(300, n0=1e18, p0=1e2, excess=1e15)


def test_the_final_release_composes_as_it_did():
    report = matprops.silicon("2026.1").consistency()
    assert len(report) == 0
    assert any("no fit conventions recorded" in e for e in report.applied["mobility"])
    assert report.as_dict()["release"] == "2026.1"


def test_bound_kernels_name_each_density_inputs_kind(si):
    mobility = si.kernel("mobility", carrier="electron")
    assert mobility.input_kinds == {
        "donor_density": "total",
        "acceptor_density": "total",
        "electron_density": "carriers of complete ionisation",
        "hole_density": "carriers of complete ionisation",
    }
    assert "donor_density [cm^-3, total]" in repr(mobility)
    assert "total dopant density" in mobility.__doc__
    assert "every dopant ionised" in mobility.provenance["input_kinds"]["electron_density"]
    assert si.kernel("effective_intrinsic_density").input_kinds["electron_density"] == (
        "free carriers"
    )
    lifetime = si.kernel("intrinsic_lifetime")
    assert lifetime.input_kinds["equilibrium_electron_density"] == "equilibrium free carriers"
    # release 2026.1 fed its mobility ionised densities and free carriers: its kernel says so
    old = matprops.silicon("2026.1").kernel("mobility", carrier="hole")
    assert old.input_kinds["acceptor_density"] == "ionised"
    assert old.input_kinds["hole_density"] == "free carriers"


def test_the_equilibrium_kernel_gives_the_carriers_of_complete_ionisation(si):
    free = si.kernel("equilibrium")(300.0, Nd=3e18, Na=0.0)
    complete = si.kernel("equilibrium", complete_ionisation=True)(300.0, Nd=3e18, Na=0.0)
    assert float(complete["ionised_donors"]) == pytest.approx(3e18, rel=1e-12)
    assert float(complete["electron_density"]) == pytest.approx(3e18, rel=1e-9)
    assert float(free["electron_density"]) < 0.85 * 3e18
    with pytest.raises(matprops.InputError, match="complete_ionisation"):
        si.kernel("equilibrium", complete_ionisation="yes")


def test_release_defaults_and_their_difference(si):
    assert si.release.defaults["doping_from_resistivity"] == "standard where it holds"
    assert dict(matprops.silicon("2026.1").release.defaults) == {}
    from matprops.outputs.changes import release_difference

    diff = release_difference("2026.1", "2026.2")
    assert diff["defaults"] == [
        {"option": "doping_from_resistivity", "old": None, "new": "standard where it holds"}
    ]
    assert "Mobility fed what it was fitted with" in diff["notes"]


def test_a_bad_release_default_is_refused(datasets_copy):
    root, catalogue = datasets_copy
    path = root / "releases/2026.2.toml"
    path.write_text(path.read_text().replace('"standard where it holds"', '"always"'))
    catalogue.write_checksums()
    with pytest.raises(matprops.DatasetError, match="defaults.doping_from_resistivity"):
        catalogue.release("2026.2")


@pytest.mark.parametrize(
    "old, new, message",
    [
        (
            '[stand_ins.gallium]\nvariant = "boron"',
            '[stand_ins.gallium]\nvariant = "indium"',
            r"stand_ins.gallium.variant 'indium' is not a set of this model",
        ),
        (
            '[stand_ins.gallium]\nvariant = "boron"',
            '[stand_ins.carbon]\nvariant = "boron"',
            r"stand_ins.carbon: not a dopant species",
        ),
        (
            '[stand_ins.gallium]\nvariant = "boron"',
            '[stand_ins.boron]\nvariant = "phosphorus"',
            r"stand_ins.boron: the model has a coefficient set of its own",
        ),
        (
            '[stand_ins.gallium]\nvariant = "boron"',
            '[stand_ins.gallium]\nvariant = "boron"\nmodel = "masetti-1983"',
            r"give either 'variant' or 'model'",
        ),
    ],
)
def test_stand_ins_schema(datasets_copy, old, new, message):
    root, catalogue = datasets_copy
    path = root / "models/mobility/klaassen-1992.toml"
    text = path.read_text()
    assert old in text
    path.write_text(text.replace(old, new, 1))
    catalogue.write_checksums()
    with pytest.raises(matprops.DatasetError, match=message):
        catalogue.model("mobility", "klaassen-1992")


def test_every_dopant_species_of_the_vocabulary_is_known_to_the_catalogue():
    from matprops.catalogue.conventions import SPECIES
    from matprops.vocabulary import DOPANTS

    assert set(SPECIES) == set(DOPANTS)


def test_degeneracy_factors_make_the_mass_action_law_hold(si):
    # the Fermi-Dirac law n0 p0 = gamma_n gamma_p ni_eff^2 (COMSOL Semiconductor Module
    # user guide, theory chapter: n = gamma_n Nc exp(eta_n), gamma = F_1/2(eta)/exp(eta);
    # secondary) holds to the solver's precision; ni_eff^2 alone only without degeneracy
    for kind in ("Nd", "Na"):
        state = si.equilibrium(300, **{kind: np.array([1e15, 1e18, 1e20])})
        gamma_n, gamma_p = state.degeneracy_factors
        product = (state.n * state.p).m_as("cm^-6")
        ni_eff = state.effective_intrinsic_density.m_as("cm^-3")
        np.testing.assert_allclose(product, gamma_n.m * gamma_p.m * ni_eff**2, rtol=1e-9)
        ratio = product / ni_eff**2
        assert ratio[0] == pytest.approx(1.0, abs=1e-4) and ratio[2] < 0.5
    boltzmann = si.equilibrium(300, Nd=1e20, statistics="boltzmann")
    assert [g.m for g in boltzmann.degeneracy_factors] == [1.0, 1.0]


def test_kernels_serve_stand_in_species_and_say_so(si):
    ionisation = si.kernel("ionisation", dopant="gallium")
    energy, share = ionisation(dopant_density=1e16)
    assert float(energy) == pytest.approx(0.072) and float(share) == 1.0  # sze-2007's level
    assert "gallium: model sze-2007" in ionisation.__doc__
    mobility = si.kernel("mobility", carrier="hole", acceptor="gallium")
    assert "gallium: the boron set" in mobility.__doc__
    densities = {"Nd": 0.0, "Na": 1e16, "n": 1e4, "p": 1e16}
    assert mobility(300.0, **densities) == si.kernel("mobility", carrier="hole")(300.0, **densities)
