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

import math

import numpy as np

from ._spec import derivatives_of, kernel
from ._xp import asfloat, cbrt, errstate, namespace, zeros_like
from .constants import BOLTZMANN_EV


def _total(xp, donor_density, acceptor_density):
    return asfloat(xp, donor_density) + asfloat(xp, acceptor_density)


def _by_total(xp, value, derivative):
    """Halves of a narrowing of N = Nd + Na and its derivative, for both edges."""
    half, slope = 0.5 * value, 0.5 * derivative
    return (half, half), {"donor_density": (slope, slope), "acceptor_density": (slope, slope)}


@kernel(
    inputs={"donor_density": "cm^-3", "acceptor_density": "cm^-3"},
    output=("eV", "eV"),
    coefficients={"energy": "eV", "reference_density": "cm^-3", "constant": "1"},
    array_api=True,
)
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
    xp = namespace(donor_density, acceptor_density)
    with errstate(xp, divide="ignore"):
        x = xp.log(_total(xp, donor_density, acceptor_density) / reference_density)
    root = xp.sqrt(x * x + constant)
    with errstate(xp, invalid="ignore"):  # x = -inf gives C / inf = 0, as it should
        narrowing = energy * xp.where(x > 0, x + root, constant / (root - x))
    half = 0.5 * narrowing
    return half, half


@derivatives_of(slotboom)
def slotboom_derivatives(donor_density, acceptor_density, *, energy, reference_density, constant):
    """``d dEg/dN = E (1 + x / sqrt(x^2 + C)) / N = dEg / (N sqrt(x^2 + C))``
    (infinite at N = 0), the same for Nd and Na, halved for each edge."""
    xp = namespace(donor_density, acceptor_density)
    total = _total(xp, donor_density, acceptor_density)
    with errstate(xp, divide="ignore", invalid="ignore"):
        x = xp.log(total / reference_density)
        root = xp.sqrt(x * x + constant)
        narrowing = energy * xp.where(x > 0, x + root, constant / (root - x))
        slope = xp.where(total > 0, narrowing / (root * total), zeros_like(xp, total) + math.inf)
    return _by_total(xp, narrowing, slope)


@kernel(
    inputs={"donor_density": "cm^-3", "acceptor_density": "cm^-3"},
    output=("eV", "eV"),
    coefficients={"energy": "eV", "onset_density": "cm^-3"},
    array_api=True,
)
def logarithmic(donor_density, acceptor_density, *, energy, onset_density):
    """A narrowing logarithmic in the dopant density above an onset, in equal halves.

    ``dEg = E ln(N / N0)`` for ``N > N0`` and 0 below, ``N = Nd + Na``
    (del Alamo, Swirhun and Swanson's fit for heavily doped n-type silicon).

    Parameters
    ----------
    donor_density, acceptor_density : array_like, cm^-3
    energy : eV;  onset_density : cm^-3
    """
    xp = namespace(donor_density, acceptor_density)
    total = _total(xp, donor_density, acceptor_density)
    with errstate(xp, divide="ignore"):
        narrowing = energy * xp.log(xp.maximum(total, onset_density) / onset_density)
    half = 0.5 * narrowing
    return half, half


@derivatives_of(logarithmic)
def logarithmic_derivatives(donor_density, acceptor_density, *, energy, onset_density):
    """``d dEg/dN = E / N`` above the onset and 0 below (one-sided at the onset)."""
    xp = namespace(donor_density, acceptor_density)
    total = _total(xp, donor_density, acceptor_density)
    with errstate(xp, divide="ignore"):
        narrowing = energy * xp.log(xp.maximum(total, onset_density) / onset_density)
        slope = xp.where(total > onset_density, energy / total, zeros_like(xp, total))
    return _by_total(xp, narrowing, slope)


@kernel(
    inputs={
        "temperature": "K",
        "donor_density": "cm^-3",
        "acceptor_density": "cm^-3",
        "electron_density": "cm^-3",
        "hole_density": "cm^-3",
    },
    output=("eV", "eV"),
    coefficients={
        "electron_mass": "1",
        "hole_mass": "1",
        "electron_degeneracy": "1",
        "hole_degeneracy": "1",
        "exciton_rydberg": "eV",
        "exciton_radius": "cm",
        "b_e": "1",
        "b_h": "1",
        "c_e": "1",
        "c_h": "1",
        "d_e": "1",
        "d_h": "1",
        "p_e": "1",
        "p_h": "1",
        "h_e": "1",
        "h_h": "1",
        "j_e": "1",
        "j_h": "1",
        "k_e": "1",
        "k_h": "1",
        "q_e": "1",
        "q_h": "1",
    },
    array_api=True,
)
def schenk(
    temperature,
    donor_density,
    acceptor_density,
    electron_density,
    hole_density,
    *,
    electron_mass,
    hole_mass,
    electron_degeneracy,
    hole_degeneracy,
    exciton_rydberg,
    exciton_radius,
    b_e,
    b_h,
    c_e,
    c_h,
    d_e,
    d_h,
    p_e,
    p_h,
    h_e,
    h_h,
    j_e,
    j_h,
    k_e,
    k_h,
    q_e,
    q_h,
):
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
    parts = _SchenkParts(
        temperature,
        donor_density,
        acceptor_density,
        electron_mass,
        hole_mass,
        electron_degeneracy,
        hole_degeneracy,
        exciton_rydberg,
        exciton_radius,
        (b_e, c_e, d_e, p_e, h_e, j_e, k_e, q_e),
        (b_h, c_h, d_h, p_h, h_h, j_h, k_h, q_h),
    )
    return parts(electron_density, hole_density)


def _fixed_dopants(
    temperature,
    donor_density,
    acceptor_density,
    *,
    electron_mass,
    hole_mass,
    electron_degeneracy,
    hole_degeneracy,
    exciton_rydberg,
    exciton_radius,
    b_e,
    b_h,
    c_e,
    c_h,
    d_e,
    d_h,
    p_e,
    p_h,
    h_e,
    h_h,
    j_e,
    j_h,
    k_e,
    k_h,
    q_e,
    q_h,
):
    """Schenk's shifts as a function of ``(n, p)`` alone, the ionic part computed once
    (for solvers that iterate on the carrier densities at fixed T, Nd, Na)."""
    return _SchenkParts(
        temperature,
        donor_density,
        acceptor_density,
        electron_mass,
        hole_mass,
        electron_degeneracy,
        hole_degeneracy,
        exciton_rydberg,
        exciton_radius,
        (b_e, c_e, d_e, p_e, h_e, j_e, k_e, q_e),
        (b_h, c_h, d_h, p_h, h_h, j_h, k_h, q_h),
    )


schenk.with_fixed_dopants = _fixed_dopants


@derivatives_of(schenk)
def schenk_derivatives(
    temperature,
    donor_density,
    acceptor_density,
    electron_density,
    hole_density,
    *,
    electron_mass,
    hole_mass,
    electron_degeneracy,
    hole_degeneracy,
    exciton_rydberg,
    exciton_radius,
    b_e,
    b_h,
    c_e,
    c_h,
    d_e,
    d_h,
    p_e,
    p_h,
    h_e,
    h_h,
    j_e,
    j_h,
    k_e,
    k_h,
    q_e,
    q_h,
):
    """Schenk's shifts and their partial derivatives with respect to T (eV/K) and Nd,
    Na, n, p (eV cm^3), analytic.

    Each part has the form ``-top / bottom``, so ``d(part) = -(d top + part x d bottom)
    / bottom``; the chain rule runs through ``ns = n + p``, ``alpha_e n + alpha_h p``,
    ``Ns = Nd + Na``, ``alpha_e Nd + alpha_h Na`` and ``t = kT / Ry``. A zero carrier
    density gives a NaN partial (the cube root's slope is infinite there).
    """
    parts = _SchenkParts(
        temperature,
        donor_density,
        acceptor_density,
        electron_mass,
        hole_mass,
        electron_degeneracy,
        hole_degeneracy,
        exciton_rydberg,
        exciton_radius,
        (b_e, c_e, d_e, p_e, h_e, j_e, k_e, q_e),
        (b_h, c_h, d_h, p_h, h_h, j_h, k_h, q_h),
        derivatives=True,
    )
    return parts.with_derivatives(electron_density, hole_density)


class _SchenkParts:
    """The ionic shifts of both bands (dopants, T) and a callable for the exchange part.

    With ``derivatives=True`` it also keeps the partial derivatives of the ionic parts
    (with respect to T, Nd, Na) and :meth:`with_derivatives` gives those of the whole
    shifts (see :func:`schenk_derivatives` for the formulas).
    """

    def __init__(
        self,
        temperature,
        donor_density,
        acceptor_density,
        electron_mass,
        hole_mass,
        electron_degeneracy,
        hole_degeneracy,
        rydberg,
        radius,
        electron_set,
        hole_set,
        derivatives=False,
    ):
        xp = self.xp = namespace(temperature, donor_density, acceptor_density)
        self.rydberg, self.volume = rydberg, radius**3
        t = BOLTZMANN_EV * asfloat(xp, temperature) / rydberg
        self.t = t
        self.alpha_e = hole_mass / (electron_mass + hole_mass)
        self.alpha_h = electron_mass / (electron_mass + hole_mass)
        self.g_e, self.g_h = electron_degeneracy, hole_degeneracy
        self.electron_set, self.hole_set = electron_set, hole_set
        donors = asfloat(xp, donor_density) * self.volume
        acceptors = asfloat(xp, acceptor_density) * self.volume
        dopants = donors + acceptors
        t3 = t * t * t
        u = dopants * dopants / t3
        screening = xp.sqrt(t * dopants / (2.0 * math.pi))
        root_dopants = xp.sqrt(dopants)
        ratio = root_dopants / t
        log_screening = xp.log1p(ratio)
        ions_p = self.alpha_e * donors + self.alpha_h * acceptors
        with errstate(xp, divide="ignore"):
            log_ions_p = xp.log(ions_p)
        ions_p34 = xp.exp(0.75 * log_ions_p)
        ionic_top = dopants * (1.0 + u)
        present = dopants > 0
        zero = zeros_like(xp, dopants)
        everywhere = xp is not np or bool(np.all(present))
        scale = rydberg * self.volume
        if derivatives:  # shared by both bands (see the derivation in ionic())
            with errstate(xp, invalid="ignore", divide="ignore"):
                inverse_t = 1.0 / t
                inverse_ns = 1.0 / dopants
                fraction = ratio / (1.0 + ratio)
                half_ns = 0.5 * screening * inverse_ns
                half_t = 0.5 * screening * inverse_t
                log_plus = log_screening + fraction
                log_minus = log_screening - 2.0 * fraction
                two_over_ns = 2.0 * inverse_ns
                minus_three_over_t = -3.0 * inverse_t
                top_ns = 1.0 + 3.0 * u
                top_t = dopants * u * minus_three_over_t
                inverse_np = 1.0 / ions_p

        def ionic(parameters):
            _, _, _, _, h, j, k, q = parameters
            with errstate(xp, invalid="ignore", divide="ignore"):
                power_q = xp.exp(q * log_ions_p)
                lattice = screening * (1.0 + h * log_screening)
                impurity = j * u * ions_p34 * (1.0 + k * power_q)
                bottom = lattice + impurity
                value = -ionic_top / bottom
            value = xp.where(present, value, zero)
            if not derivatives:
                return value, None
            # I = -top / bottom: dI = -(d top + I d bottom) / bottom, through Ns, Np, t:
            # d lattice/dNs = Sc/(2 Ns) [1 + h (Lg + r/(1+r))], d lattice/dt = Sc/(2t)
            # [1 + h (Lg - 2 r/(1+r))] with r = sqrt(Ns)/t; d impurity/dNs = 2 imp/Ns,
            # /dt = -3 imp/t, /dNp = imp [3/4 + q k Np^q/(1 + k Np^q)] / Np
            with errstate(xp, invalid="ignore", divide="ignore"):
                inverse = 1.0 / bottom
                scaled = scale * inverse  # -(Ry a^3) x (-1/bottom): to eV cm^3
                kq = k * power_q
                d_ns = (
                    top_ns + value * (half_ns * (1.0 + h * log_plus) + impurity * two_over_ns)
                ) * scaled
                d_np = value * impurity * (0.75 + q * kq / (1.0 + kq)) * inverse_np * scaled
                d_t = (
                    -(
                        top_t
                        + value * (half_t * (1.0 + h * log_minus) + impurity * minus_three_over_t)
                    )
                    * inverse
                )
                partials = (d_t, d_ns + self.alpha_e * d_np, d_ns + self.alpha_h * d_np)
            if not everywhere:  # no dopants: no ionic part, no slope
                partials = tuple(xp.where(present, d, zero) for d in partials)
            return value, partials

        (self.ionic_e, self.d_ionic_e), (self.ionic_h, self.d_ionic_h) = (
            ionic(electron_set),
            ionic(hole_set),
        )
        t2 = t * t
        self.t2, self.t3 = t2, t3
        self.t52 = t2 * xp.sqrt(t)

    def __call__(self, electron_density, hole_density):
        xp = self.xp
        n = asfloat(xp, electron_density) * self.volume
        p = asfloat(xp, hole_density) * self.volume
        t, t2 = self.t, self.t2
        ns = n + p
        sqrt_ns = xp.sqrt(ns)
        with errstate(xp, divide="ignore"):
            log_np = xp.log(self.alpha_e * n + self.alpha_h * p)
        four_pi_cubed_ns2 = (4.0 * math.pi) ** 3 * ns * ns
        common_top = _ROOT_8PI * sqrt_ns * self.t52
        common_bottom = four_pi_cubed_ns2 + self.t3 + 40.0 * ns * sqrt_ns * t

        def shift(n_a, g_a, alpha_a, parameters, ionic):
            b, c, d, pa, *_ = parameters
            exchange = -(
                four_pi_cubed_ns2
                * (cbrt(xp, (48.0 / (math.pi * g_a)) * n_a) + c * xp.log1p(d * xp.exp(pa * log_np)))
                + (8.0 * math.pi * alpha_a / g_a) * n_a * t2
                + common_top
            ) / (common_bottom + b * sqrt_ns * t2)
            return -(exchange + ionic) * self.rydberg

        return (
            shift(n, self.g_e, self.alpha_e, self.electron_set, self.ionic_e),
            shift(p, self.g_h, self.alpha_h, self.hole_set, self.ionic_h),
        )

    def subset(self, index):
        """The same parts at a subset of the points (per-point arrays indexed, numpy)."""
        part = object.__new__(_SchenkParts)
        part.__dict__.update(self.__dict__)
        for name in ("t", "t2", "t3", "t52", "ionic_e", "ionic_h"):
            value = self.__dict__[name]
            if getattr(value, "ndim", 0):
                part.__dict__[name] = value[index]
        part.__dict__.pop("_stacked", None)
        return part

    def _columns(self):
        """Per-band constants as (2, 1) columns and the ionic parts stacked (2, m)."""
        stacked = self.__dict__.get("_stacked")
        if stacked is None:
            bands = (
                (self.g_e, self.alpha_e, self.electron_set),
                (self.g_h, self.alpha_h, self.hole_set),
            )

            def column(values):
                return np.array(values, dtype=float).reshape(2, 1)

            b, c, d, pa = (column([band[2][k] for band in bands]) for k in range(4))
            stacked = self.__dict__["_stacked"] = {
                "cube": column([48.0 / (math.pi * g) for g, _, _ in bands]),
                "k": column([8.0 * math.pi * alpha / g for g, alpha, _ in bands]),
                "b": b,
                "half_b": 0.5 * b,
                "c": c,
                "d": d,
                "pa": pa,
                "cpa": c * pa,
                "ionic": np.stack(np.broadcast_arrays(self.ionic_e, self.ionic_h)),
            }
        return stacked

    def carrier_slopes(self, electron_density, hole_density=None, slopes=True, factor=1.0):
        """The shifts and the logarithmic slopes of their sum with respect to n and p.

        Returns ``(shifts, n d(dEc + dEv)/dn, p d(dEc + dEv)/dp)`` in eV, numpy:
        ``shifts`` of shape ``(2, m)`` holds dEc and dEv (for the equilibrium solver,
        which carries the narrowing in its Newton step; both bands are computed as one
        stacked array). The slopes are :meth:`with_derivatives`' partials times the
        density, written so that they stay finite as a density vanishes (the cube
        root's slope does not); with ``slopes=False`` they are None. With
        ``hole_density`` None, ``electron_density`` holds both densities as a (2, m)
        array; ``factor`` multiplies them (a scale the caller divided them by).
        """
        k = self._columns()
        if hole_density is None:
            densities = electron_density * (factor * self.volume)
        else:
            densities = np.stack((electron_density, hole_density))
            densities *= factor * self.volume
        n, p = densities
        t, t2 = self.t, self.t2
        ns = n + p
        sqrt_ns = np.sqrt(ns)
        mix = self.alpha_e * n
        mix += self.alpha_h * p
        with np.errstate(divide="ignore", invalid="ignore"):
            log_mix = np.log(mix)
            f = ns * ns
            f *= _FOUR_PI_CUBED
            common_top = sqrt_ns * self.t52
            common_top *= _ROOT_8PI
            ns_t = ns * sqrt_ns
            ns_t *= t
            root_t2 = sqrt_ns * t2
            inverse = k["b"] * root_t2
            inverse += f
            inverse += self.t3
            inverse += 40.0 * ns_t
            np.divide(1.0, inverse, out=inverse)  # 1 / bottom, per band
            cube = k["cube"] * densities
            np.cbrt(cube, out=cube)
            w = k["pa"] * log_mix
            np.exp(w, out=w)
            w *= k["d"]
            bracket = _log1p(w)
            bracket *= k["c"]
            bracket += cube
            k_n = k["k"] * t2
            k_n *= densities
            top = f * bracket
            top += k_n
            top += common_top
            exchange = top * inverse  # -X, per band
            shifts = exchange - k["ionic"]
            shifts *= self.rydberg  # -(X + I) Ry
            if not slopes:
                return shifts, None, None
            # ns d(top)/d ns + X ns d(bottom)/d ns, per band, over bottom
            common = bracket * (2.0 * f)
            common += 0.5 * common_top
            bottom_slope = k["half_b"] * root_t2
            bottom_slope += 2.0 * f
            bottom_slope += 60.0 * ns_t
            bottom_slope *= exchange
            common -= bottom_slope
            common *= inverse
            mixing = w / (1.0 + w)
            mixing *= k["cpa"]
            mixing *= inverse
            own = cube * (1.0 / 3.0)
            own *= f
            own += k_n
            own *= inverse
            shared = (common[0] + common[1]) / ns
            mixed = (mixing[0] + mixing[1]) * f / mix
            rydberg = self.rydberg
            slope_n = n * (shared + self.alpha_e * mixed)
            slope_n += own[0]
            slope_n *= rydberg
            slope_p = p * (shared + self.alpha_h * mixed)
            slope_p += own[1]
            slope_p *= rydberg
        return shifts, slope_n, slope_p

    def with_derivatives(self, electron_density, hole_density):
        """The shifts (as :meth:`__call__`) and their partial derivatives with respect to
        temperature (eV/K) and the four densities (eV cm^3)."""
        xp = self.xp
        volume, rydberg = self.volume, self.rydberg
        n = asfloat(xp, electron_density) * volume
        p = asfloat(xp, hole_density) * volume
        t, t2 = self.t, self.t2
        ns = n + p
        sqrt_ns = xp.sqrt(ns)
        m = self.alpha_e * n + self.alpha_h * p
        with errstate(xp, divide="ignore"):
            log_np = xp.log(m)
        four_pi_cubed_ns2 = (4.0 * math.pi) ** 3 * ns * ns
        common_top = _ROOT_8PI * sqrt_ns * self.t52
        common_bottom = four_pi_cubed_ns2 + self.t3 + 40.0 * ns * sqrt_ns * t
        # shared pieces: d/dns and d/dt of F = (4 pi)^3 ns^2, of the common top and bottom
        with errstate(xp, divide="ignore", invalid="ignore"):
            inverse_ns = 1.0 / ns
            d_f = 2.0 * (4.0 * math.pi) ** 3 * ns
            d_top_ns = 0.5 * common_top * inverse_ns
            d_top_t = 2.5 * common_top / t
            root_t = sqrt_ns * t
            d_bottom_ns = d_f + 60.0 * root_t
            d_bottom_t = 3.0 * t2 + 40.0 * ns * sqrt_ns
            half_t2_root = 0.5 * t2 * sqrt_ns * inverse_ns  # d(sqrt(ns) t^2)/dns
            two_root_t = 2.0 * root_t  # d(sqrt(ns) t^2)/dt
            inverse_m = 1.0 / m
        scale = rydberg * volume  # d shift / d density, per -dX
        to_kelvin = -BOLTZMANN_EV  # d shift/dT per dX/dt: -Ry k/Ry

        def shift(n_a, g_a, alpha_a, parameters, ionic, d_ionic, own):
            b, c, d, pa, *_ = parameters
            with errstate(xp, divide="ignore", invalid="ignore"):
                cube = cbrt(xp, (48.0 / (math.pi * g_a)) * n_a)
                w = d * xp.exp(pa * log_np)
                log_term = c * xp.log1p(w)
                k_a = 8.0 * math.pi * alpha_a / g_a
                bracket = cube + log_term
                top = four_pi_cubed_ns2 * bracket + k_a * n_a * t2 + common_top
                bottom = common_bottom + b * sqrt_ns * t2
                exchange = -top / bottom
                value = -(exchange + ionic) * rydberg
                # exchange X = -top/bottom: dX = -(d top + X d bottom) / bottom
                inverse = 1.0 / bottom
                factor = scale * inverse
                base = d_f * bracket + d_top_ns + exchange * (d_bottom_ns + b * half_t2_root)
                mixing = four_pi_cubed_ns2 * (c * pa) * w / (1.0 + w) * inverse_m
                own_term = four_pi_cubed_ns2 * cube / (3.0 * n_a) + k_a * t2
                partial = [(base + alpha * mixing) for alpha in (self.alpha_e, self.alpha_h)]
                partial[own] = partial[own] + own_term
                partial = [d * factor for d in partial]
                d_time = (
                    2.0 * k_a * n_a * t + d_top_t + exchange * (d_bottom_t + b * two_root_t)
                ) * inverse
            d_ionic_t, d_ionic_nd, d_ionic_na = d_ionic
            return value, {
                "temperature": (d_ionic_t - d_time) * to_kelvin,
                "donor_density": d_ionic_nd,
                "acceptor_density": d_ionic_na,
                "electron_density": partial[0],
                "hole_density": partial[1],
            }

        ec, d_ec = shift(
            n, self.g_e, self.alpha_e, self.electron_set, self.ionic_e, self.d_ionic_e, 0
        )
        ev, d_ev = shift(p, self.g_h, self.alpha_h, self.hole_set, self.ionic_h, self.d_ionic_h, 1)
        shape = np.broadcast_shapes(tuple(ec.shape), tuple(ev.shape))
        return (ec, ev), {
            name: (xp.broadcast_to(d_ec[name], shape), xp.broadcast_to(d_ev[name], shape))
            for name in d_ec
        }


_ROOT_8PI = math.sqrt(8.0 * math.pi)
_FOUR_PI_CUBED = (4.0 * math.pi) ** 3


def _log1p(w):
    """``log(1 + w)`` for w >= 0 to a few ulps: ``log(u) - ((u - 1) - w) / u`` with
    ``u = 1 + w`` (numpy's log1p takes 3-4 times as long on small arguments)."""
    u = 1.0 + w
    value = np.log(u)
    correction = u - 1.0
    correction -= w
    correction /= u
    value -= correction
    return value
