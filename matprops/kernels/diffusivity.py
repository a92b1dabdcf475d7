"""The Einstein relation's Fermi-Dirac factor.

``D = mu kT/q x F_1/2(eta) / F_-1/2(eta)`` for carriers with reduced Fermi level
``eta`` (from the band edge, positive inside the band); the factor tends to 1 in
non-degenerate silicon (Boltzmann statistics) and grows with degeneracy. ``eta``
follows from the density: ``n = Nc F_1/2(eta)``.
"""

import numpy as np

__all__ = ["einstein_factor"]

_BOLTZMANN_TAIL = -40.0  # ln(n/Nc) below this: F_1/2 = exp to 1e-18, the factor is 1


def einstein_factor(log_reduced_density):
    """``F_1/2(eta) / F_-1/2(eta)`` with eta such that ``F_1/2(eta) = n / Nc``.

    Parameters
    ----------
    log_reduced_density : array_like, ``ln(n / Nc)`` (or ``ln(p / Nv)``); -inf allowed

    Returns
    -------
    dimensionless, >= 1
    """
    from .fermi_dirac import fd_half, fd_half_inverse, fd_minus_half

    log_x = np.asarray(log_reduced_density, dtype=float)
    tail = log_x < _BOLTZMANN_TAIL
    eta = fd_half_inverse(np.exp(np.where(tail, 0.0, log_x)))
    return np.where(tail, 1.0, fd_half(eta) / fd_minus_half(eta))
