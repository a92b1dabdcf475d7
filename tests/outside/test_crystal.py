"""Crystal constants against CODATA, an element-data library and handbook values."""

import numpy as np
import periodictable
import pytest
import scipy.constants

import matprops


@pytest.mark.model("lattice_constant/okada-1984")
def test_lattice_constant_against_codata(si):
    # CODATA 2018 lattice parameter of silicon, 543.1020511 pm at 22.5 degC in vacuum
    # (open dataset: scipy.constants.physical_constants)
    codata, unit, _ = scipy.constants.physical_constants["lattice parameter of silicon"]
    assert unit == "m"
    a = si.lattice_constant(matprops.Q_(22.5, "degC")).m_as("m")
    assert a == pytest.approx(codata, rel=1e-5)


@pytest.mark.model("lattice_constant/okada-1984")
def test_lattice_constant_room_temperature(si):
    # 0.5431 nm at room temperature: common practice
    assert si.lattice_constant(298.15).m_as("nm") == pytest.approx(0.5431, abs=5e-5)


@pytest.mark.model("lattice_constant/okada-1984")
def test_thermal_expansion_near_room_temperature(si):
    # linear expansion coefficient about 2.6e-6 /K at 300 K: common practice
    # (Okada & Tokumaru 1984, J. Appl. Phys. 56, 314, abstract: formula gives 2.57e-6)
    a1, a2 = si.lattice_constant(299.5), si.lattice_constant(300.5)
    alpha = ((a2 - a1) / si.lattice_constant(300) / matprops.Q_(1, "K")).m_as("1/K")
    assert alpha == pytest.approx(2.6e-6, rel=0.05)


@pytest.mark.model("thermal_expansion/okada-1984")
def test_thermal_expansion_coefficient_near_room_temperature():
    # the linear expansion coefficient of silicon, 2.6e-6 /K at room temperature:
    # common practice (the handbook figure, two significant digits)
    si = matprops.silicon(release="2026.2")
    alpha = si.thermal_expansion(matprops.Q_([20, 25, 27], "degC")).m_as("1/K")
    np.testing.assert_allclose(alpha, 2.6e-6, rtol=0.05)


@pytest.mark.model("thermal_expansion/okada-1984")
def test_thermal_expansion_rises_towards_a_plateau():
    # a crystal's expansion coefficient grows with temperature and levels off well
    # above the Debye temperature (645 K for silicon): common practice; silicon's
    # is near 4e-6 /K at 1000 K and below 5e-6 /K at 1500 K (from memory)
    si = matprops.silicon(release="2026.2")
    t = np.array([150.0, 300.0, 600.0, 1000.0, 1500.0])
    alpha = si.thermal_expansion(t).m_as("1/K")
    assert np.all(np.diff(alpha) > 0)
    steps = np.diff(alpha) / np.diff(t)
    assert steps[-1] < steps[0] / 5
    assert alpha[3] == pytest.approx(4e-6, rel=0.1)
    assert alpha[4] < 5e-6


@pytest.mark.model("lattice_constant/okada-1984", "molar_mass/prohaska-2022")
def test_density_against_the_handbook_value(si):
    # 2.329 g/cm^3 at room temperature: common practice, printed to four significant
    # figures, so the model must round to it (half a unit of the last figure)
    assert si.density(298.15).m_as("g/cm^3") == pytest.approx(2.329, abs=5e-4)


@pytest.mark.model("molar_mass/prohaska-2022")
def test_molar_mass_against_periodictable(si):
    # periodictable ships IUPAC standard atomic weights
    assert si.molar_mass().m_as("g/mol") == pytest.approx(periodictable.Si.mass, abs=1e-3)


@pytest.mark.model("lattice_constant/okada-1984")
def test_atomic_density(si):
    # 5.0e22 cm^-3 (4.99e22 = 8/a^3): common practice
    assert si.atomic_density(300).m_as("cm^-3") == pytest.approx(4.99e22, rel=2e-3)


@pytest.mark.model("lattice_constant/okada-1984")
@pytest.mark.parametrize(
    "plane, atoms, bonds",
    [
        # textbook areal densities of the unreconstructed surfaces: common practice
        ("100", 6.78e14, 1.36e15),
        ("110", 9.59e14, 9.59e14),
        ("111", 7.83e14, 7.83e14),
    ],
)
def test_surface_densities(si, plane, atoms, bonds):
    assert si.surface_atom_density(plane, 300).m_as("cm^-2") == pytest.approx(atoms, rel=3e-3)
    assert si.dangling_bond_density(plane, 300).m_as("cm^-2") == pytest.approx(bonds, rel=3e-3)


@pytest.mark.model("lattice_constant/okada-1984")
def test_plane_spelling_and_errors(si):
    assert si.surface_atom_density("(111)", 300) == si.surface_atom_density(111, 300)
    with pytest.raises(matprops.InputError, match="plane"):
        si.surface_atom_density("123", 300)


@pytest.mark.model("permittivity/dunlap-1953")
def test_permittivity(si):
    # 11.7: Dunlap & Watters 1953, Phys. Rev. 92, 1396 (abstract); common practice
    assert si.permittivity().m_as("") == pytest.approx(11.7)
    assert si.provenance("permittivity")["coefficients"]["value"]["uncertainty"] == 0.2


@pytest.mark.model("lattice_constant/okada-1984", "molar_mass/prohaska-2022")
def test_density_provenance_names_both_parts(si):
    record = si.provenance("density")
    assert set(record["components"]) == {"lattice_constant", "molar_mass"}
    assert np.isfinite(si.density([150, 300, 900]).m_as("g/cm^3")).all()
