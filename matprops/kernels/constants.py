"""Physical constants in the kernels' internal units (eV, K, cm, s, g).

Values: CODATA 2018 (E. Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021));
since the 2019 SI revision k, h, e and N_A are exact. These are constants of
nature, not material coefficients: material numbers live in ``datasets/``.
"""

BOLTZMANN_EV = 8.617333262e-5  # k_B in eV/K (exact: 1.380649e-23 J/K / e)
ELEMENTARY_CHARGE = 1.602176634e-19  # e in C (exact)
PLANCK_J = 6.62607015e-34  # h in J s (exact)
ELECTRON_MASS_KG = 9.1093837015e-31  # m_0 in kg (CODATA 2018)
BOLTZMANN_J = 1.380649e-23  # k_B in J/K (exact)
AVOGADRO = 6.02214076e23  # N_A in 1/mol (exact)

# 2 (2 pi m0 k T / h^2)^(3/2) at T = 1 K and m = m0, in cm^-3: the effective density
# of states of a band with density-of-states mass m is this times (m/m0 * T)^(3/2).
# (2 pi m0 k / h^2) is in m^-2 K^-1; ^(3/2) gives m^-3 K^-3/2; 1e-6 converts to cm^-3.
STATES_PREFACTOR = (
    2.0 * (2.0 * 3.141592653589793 * ELECTRON_MASS_KG * BOLTZMANN_J / PLANCK_J**2) ** 1.5 * 1e-6
)

SPEED_OF_LIGHT = 299792458.0  # c in m/s (exact)
# photon energy in eV times vacuum wavelength in nm: h c / e, in eV nm
PHOTON_ENERGY_NM = PLANCK_J * SPEED_OF_LIGHT / ELEMENTARY_CHARGE * 1e9
