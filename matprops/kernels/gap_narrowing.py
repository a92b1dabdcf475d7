"""Band-gap narrowing in doped silicon, in eV.

Every kernel returns the pair ``(conduction-edge shift, valence-edge shift)``,
both >= 0: the conduction-band edge moves down by the first, the valence-band
edge up by the second, and the gap narrows by their sum.

Two kinds of model live here (the model file's ``[narrowing]`` section says
which):

*apparent* narrowings were extracted from electrical measurements with
Boltzmann statistics and one particular intrinsic density; they describe
``ni_eff^2 = ni^2 exp(dEg / kT)`` and only the sum has a meaning. These kernels
split it in equal halves between the two edges (a convention; it moves the
Fermi level relative to the edges, never n0 or p0 under Boltzmann statistics).

*physical* narrowings (Schenk 1998) give each band's rigid shift as computed
from many-body theory, depend on the free-carrier densities as well as on the
dopants, and go with Fermi-Dirac statistics.
"""

import numpy as np

from ._spec import kernel
from .constants import BOLTZMANN_EV


def _total(donor_density, acceptor_density):
    return np.asarray(donor_density, dtype=float) + np.asarray(acceptor_density, dtype=float)


@kernel(inputs={"donor_density": "cm^-3", "acceptor_density": "cm^-3"},
        output=("eV", "eV"),
        coefficients={"energy": "eV", "reference_density": "cm^-3", "constant": "1"})
def slotboom(donor_density, acceptor_density, *, energy, reference_density, constant):
    """Slotboom's form of the apparent narrowing, split in equal halves.

    ``dEg = E [ ln(N/Nr) + sqrt( ln(N/Nr)^2 + C ) ]`` with ``N = Nd + Na`` the
    total dopant density. It tends to 0 as N -> 0 (evaluated without
    cancellation: for ``x = ln(N/Nr) < 0`` as ``E C / (sqrt(x^2 + C) - x)``).

    Parameters
    ----------
    donor_density, acceptor_density : array_like, cm^-3
    energy : eV;  reference_density : cm^-3;  constant : dimensionless

    References
    ----------
    J. W. Slotboom and H. C. de Graaff, Solid-State Electron. 19, 857 (1976);
    D. B. M. Klaassen, J. W. Slotboom and H. C. de Graaff, Solid-State Electron.
    35, 125 (1992).
    """
    with np.errstate(divide="ignore"):
        x = np.log(_total(donor_density, acceptor_density) / reference_density)
    root = np.sqrt(x * x + constant)
    with np.errstate(invalid="ignore"):  # x = -inf gives C / inf = 0, as it should
        narrowing = energy * np.where(x > 0, x + root, constant / (root - x))
    half = 0.5 * narrowing
    return half, half


@kernel(inputs={"donor_density": "cm^-3", "acceptor_density": "cm^-3"},
        output=("eV", "eV"),
        coefficients={"energy": "eV", "onset_density": "cm^-3"})
def logarithmic(donor_density, acceptor_density, *, energy, onset_density):
    """A narrowing logarithmic in the dopant density above an onset, in equal halves.

    ``dEg = E ln(N / N0)`` for ``N > N0`` and 0 below, ``N = Nd + Na``
    (del Alamo, Swirhun and Swanson's fit for heavily doped n-type silicon).

    Parameters
    ----------
    donor_density, acceptor_density : array_like, cm^-3
    energy : eV;  onset_density : cm^-3
    """
    total = _total(donor_density, acceptor_density)
    with np.errstate(divide="ignore"):
        narrowing = energy * np.log(np.maximum(total, onset_density) / onset_density)
    half = 0.5 * narrowing
    return half, half


@kernel(inputs={"temperature": "K", "donor_density": "cm^-3", "acceptor_density": "cm^-3",
                "electron_density": "cm^-3", "hole_density": "cm^-3"},
        output=("eV", "eV"),
        coefficients={"electron_mass": "1", "hole_mass": "1",
                      "electron_degeneracy": "1", "hole_degeneracy": "1",
                      "exciton_rydberg": "eV", "exciton_radius": "cm",
                      "b_e": "1", "b_h": "1", "c_e": "1", "c_h": "1",
                      "d_e": "1", "d_h": "1", "p_e": "1", "p_h": "1",
                      "h_e": "1", "h_h": "1", "j_e": "1", "j_h": "1",
                      "k_e": "1", "k_h": "1", "q_e": "1", "q_h": "1"})
def schenk(temperature, donor_density, acceptor_density, electron_density, hole_density, *,
           electron_mass, hole_mass, electron_degeneracy, hole_degeneracy,
           exciton_rydberg, exciton_radius, b_e, b_h, c_e, c_h, d_e, d_h, p_e, p_h,
           h_e, h_h, j_e, j_h, k_e, k_h, q_e, q_h):
    """Schenk's physical narrowing: each band's exchange-correlation and ionic shift.

    Energies are in units of the excitonic Rydberg ``Ry``, densities in units of
    ``a_ex^-3`` and the temperature as ``t = kT / Ry``. With ``ns = n + p``,
    ``np = alpha_e n + alpha_h p`` (``alpha_e = m_h/(m_e + m_h)``,
    ``alpha_h = m_e/(m_e + m_h)``), ``Ns = Nd + Na`` and ``U(x) = x^2 / t^3``,
    the shift of band ``a`` (``a = e`` conduction, ``h`` valence; ``n_a`` its
    carrier density, ``g_a`` its degeneracy) is ``-(X_a + I_a) Ry`` with the
    exchange-correlation part (free carriers)

    ``X_a = -[ (4 pi)^3 ns^2 ( (48 n_a / (pi g_a))^(1/3) + c_a ln(1 + d_a np^p_a) )
    + (8 pi alpha_a / g_a) n_a t^2 + sqrt(8 pi ns) t^(5/2) ]
    / [ (4 pi)^3 ns^2 + t^3 + b_a sqrt(ns) t^2 + 40 ns^(3/2) t ]``

    and the ionic part (dopant ions), with ``Np = alpha_e Nd + alpha_h Na``

    ``I_a = -Ns (1 + U(Ns)) / [ sqrt(t Ns / (2 pi)) (1 + h_a ln(1 + sqrt(Ns) / t))
    + j_a U(Ns) Np^(3/4) (1 + k_a Np^q_a) ]``.

    In the ionic part the screening densities are the dopant densities (``Ns``,
    ``Np``); sources differ here (see the model file's notes): with the free-carrier
    sums instead, the ionic part is the same in uncompensated quasi-neutral silicon
    but diverges where ``n + p << Nd + Na`` (compensated or depleted material).

    Parameters
    ----------
    temperature : array_like, K
    donor_density, acceptor_density : array_like, cm^-3 (total dopant densities)
    electron_density, hole_density : array_like, cm^-3 (free carriers)
    electron_mass, hole_mass : m/m0 of the model;  electron_degeneracy, hole_degeneracy
    exciton_rydberg : eV;  exciton_radius : cm
    b_*, c_*, d_*, p_* : exchange-correlation parameters;  h_*, j_*, k_*, q_* : ionic
        parameters (``_e`` conduction band, ``_h`` valence band)

    Returns
    -------
    (conduction-edge shift, valence-edge shift) : eV, each >= 0

    References
    ----------
    A. Schenk, J. Appl. Phys. 84, 3684 (1998), doi:10.1063/1.368545.
    """
    parts = _SchenkParts(temperature, donor_density, acceptor_density, electron_mass,
                         hole_mass, electron_degeneracy, hole_degeneracy, exciton_rydberg,
                         exciton_radius, (b_e, c_e, d_e, p_e, h_e, j_e, k_e, q_e),
                         (b_h, c_h, d_h, p_h, h_h, j_h, k_h, q_h))
    return parts(electron_density, hole_density)


def _fixed_dopants(temperature, donor_density, acceptor_density, *, electron_mass,
                   hole_mass, electron_degeneracy, hole_degeneracy, exciton_rydberg,
                   exciton_radius, b_e, b_h, c_e, c_h, d_e, d_h, p_e, p_h, h_e, h_h, j_e, j_h,
                   k_e, k_h, q_e, q_h):
    """Schenk's shifts as a function of ``(n, p)`` alone, the ionic part computed once
    (for solvers that iterate on the carrier densities at fixed T, Nd, Na)."""
    return _SchenkParts(temperature, donor_density, acceptor_density, electron_mass,
                        hole_mass, electron_degeneracy, hole_degeneracy, exciton_rydberg,
                        exciton_radius, (b_e, c_e, d_e, p_e, h_e, j_e, k_e, q_e),
                        (b_h, c_h, d_h, p_h, h_h, j_h, k_h, q_h))


schenk.with_fixed_dopants = _fixed_dopants


class _SchenkParts:
    """The ionic shifts of both bands (dopants, T) and a callable for the exchange part."""

    def __init__(self, temperature, donor_density, acceptor_density, electron_mass,
                 hole_mass, electron_degeneracy, hole_degeneracy, rydberg, radius,
                 electron_set, hole_set):
        self.rydberg, self.volume = rydberg, radius ** 3
        t = BOLTZMANN_EV * np.asarray(temperature, dtype=float) / rydberg
        self.t = t
        self.alpha_e = hole_mass / (electron_mass + hole_mass)
        self.alpha_h = electron_mass / (electron_mass + hole_mass)
        self.g_e, self.g_h = electron_degeneracy, hole_degeneracy
        self.electron_set, self.hole_set = electron_set, hole_set
        donors = np.asarray(donor_density, dtype=float) * self.volume
        acceptors = np.asarray(acceptor_density, dtype=float) * self.volume
        dopants = donors + acceptors
        t3 = t * t * t
        u = dopants * dopants / t3
        screening = np.sqrt(t * dopants / (2.0 * np.pi))
        log_screening = np.log1p(np.sqrt(dopants) / t)
        ions_p = self.alpha_e * donors + self.alpha_h * acceptors
        with np.errstate(divide="ignore"):
            log_ions_p = np.log(ions_p)
        ions_p34 = np.exp(0.75 * log_ions_p)
        ionic_top = dopants * (1.0 + u)

        def ionic(parameters):
            _, _, _, _, h, j, k, q = parameters
            with np.errstate(invalid="ignore", divide="ignore"):
                value = -ionic_top / (screening * (1.0 + h * log_screening)
                                      + j * u * ions_p34 * (1.0 + k * np.exp(q * log_ions_p)))
            return np.where(dopants > 0, value, 0.0)

        self.ionic_e, self.ionic_h = ionic(electron_set), ionic(hole_set)
        t2 = t * t
        self.t2, self.t3 = t2, t3
        self.t52 = t2 * np.sqrt(t)

    def __call__(self, electron_density, hole_density):
        n = np.asarray(electron_density, dtype=float) * self.volume
        p = np.asarray(hole_density, dtype=float) * self.volume
        t, t2 = self.t, self.t2
        ns = n + p
        sqrt_ns = np.sqrt(ns)
        with np.errstate(divide="ignore"):
            log_np = np.log(self.alpha_e * n + self.alpha_h * p)
        four_pi_cubed_ns2 = (4.0 * np.pi) ** 3 * ns * ns
        common_top = np.sqrt(8.0 * np.pi) * sqrt_ns * self.t52
        common_bottom = four_pi_cubed_ns2 + self.t3 + 40.0 * ns * sqrt_ns * t

        def shift(n_a, g_a, alpha_a, parameters, ionic):
            b, c, d, pa, *_ = parameters
            exchange = -(four_pi_cubed_ns2 * (np.cbrt((48.0 / (np.pi * g_a)) * n_a)
                                              + c * np.log1p(d * np.exp(pa * log_np)))
                         + (8.0 * np.pi * alpha_a / g_a) * n_a * t2 + common_top) \
                / (common_bottom + b * sqrt_ns * t2)
            return -(exchange + ionic) * self.rydberg

        return (shift(n, self.g_e, self.alpha_e, self.electron_set, self.ionic_e),
                shift(p, self.g_h, self.alpha_h, self.hole_set, self.ionic_h))
