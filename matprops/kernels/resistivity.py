"""Resistivity and dopant density: the physics and the standard's conversions.

Internal units: resistivity in ohm cm, conductivity in S/cm, densities in cm^-3,
mobilities in cm^2/(V s).

- :func:`conductivity`: ``sigma = q (n mu_n + p mu_p)``.
- The standard conversions between resistivity and dopant density at 23 degC
  (ASTM F723, from Thurber et al.) give boron and phosphorus different equation
  forms; each direction is its own set of equations (they are not exact inverses
  of each other): :func:`rational_resistivity` / :func:`rational_density` (boron's
  form) and :func:`log_rational_resistivity` / :func:`log_rational_density`
  (phosphorus's form). Their ``temperature`` input only carries the validity
  check: the conversions hold at 23 degC.
- :func:`solve_decreasing` (from a bracket) and :func:`solve_decreasing_from` (from a
  first guess, secant steps kept in a bracket): vectorised root finders that invert a
  resistivity that falls with the dopant density (doping from resistivity).
"""

import numpy as np

from ._spec import kernel
from ._xp import asfloat, namespace
from .band_gap import horner
from .constants import ELEMENTARY_CHARGE

__all__ = [
    "conductivity",
    "log_rational_density",
    "log_rational_resistivity",
    "rational_density",
    "rational_resistivity",
    "solve_decreasing",
    "solve_decreasing_from",
]


def conductivity(electron_density, hole_density, electron_mobility, hole_mobility):
    """``sigma = q (n mu_n + p mu_p)`` in S/cm (densities cm^-3, mobilities cm^2/(V s))."""
    return ELEMENTARY_CHARGE * (
        np.asarray(electron_density) * electron_mobility + np.asarray(hole_density) * hole_mobility
    )


# --------------------------------------------------------------------------- standard


def _rational(x, constant_term, fall_term, fall_scale, fall_exponent):
    xp = namespace(x)
    x = asfloat(xp, x)
    return (constant_term + fall_term / (1.0 + xp.exp(fall_exponent * xp.log(fall_scale * x)))) / x


def _log_rational(x, prefactor, reference, numerator, denominator):
    xp = namespace(x)
    x = asfloat(xp, x)
    y = xp.log10(x / reference)
    top = horner(y, numerator)
    bottom = 1.0 + y * horner(y, denominator)
    return prefactor / x * 10.0 ** (top / bottom)


def _broadcast(value, temperature):
    xp = namespace(value, temperature)
    shape = np.broadcast_shapes(tuple(value.shape), tuple(asfloat(xp, temperature).shape))
    return xp.broadcast_to(value, shape)


@kernel(
    inputs={"temperature": "K", "dopant_density": "cm^-3"},
    output="ohm*cm",
    coefficients={
        "constant_term": "ohm/cm^2",
        "fall_term": "ohm/cm^2",
        "fall_scale": "cm^3",
        "fall_exponent": "1",
    },
    array_api=True,
)
def rational_resistivity(
    temperature, dopant_density, *, constant_term, fall_term, fall_scale, fall_exponent
):
    """Resistivity from dopant density, boron's form of the standard conversion.

    ``rho = a / N + b / (N [1 + (s N)^c])``; the value does not depend on
    temperature (a 23 degC conversion).

    Parameters
    ----------
    temperature : K (validity only);  dopant_density : cm^-3
    constant_term (a), fall_term (b) : ohm/cm^2;  fall_scale (s) : cm^3;  fall_exponent (c)
    """
    return _broadcast(
        _rational(dopant_density, constant_term, fall_term, fall_scale, fall_exponent), temperature
    )


@kernel(
    inputs={"temperature": "K", "resistivity": "ohm*cm"},
    output="cm^-3",
    coefficients={
        "constant_term": "ohm/cm^2",
        "fall_term": "ohm/cm^2",
        "fall_scale": "1/(ohm*cm)",
        "fall_exponent": "1",
    },
    array_api=True,
)
def rational_density(
    temperature, resistivity, *, constant_term, fall_term, fall_scale, fall_exponent
):
    """Dopant density from resistivity, boron's form of the standard conversion.

    ``N = a / rho + b / (rho [1 + (s rho)^c])`` (23 degC).

    Parameters
    ----------
    temperature : K (validity only);  resistivity : ohm cm
    constant_term (a), fall_term (b) : ohm/cm^2;  fall_scale (s) : 1/(ohm cm);
    fall_exponent (c) : dimensionless
    """
    return _broadcast(
        _rational(resistivity, constant_term, fall_term, fall_scale, fall_exponent), temperature
    )


@kernel(
    inputs={"temperature": "K", "dopant_density": "cm^-3"},
    output="ohm*cm",
    coefficients={
        "prefactor": "1/C",
        "reference_density": "cm^-3",
        "numerator": "1",
        "denominator": "1",
    },
    array_api=True,
)
def log_rational_resistivity(
    temperature, dopant_density, *, prefactor, reference_density, numerator, denominator
):
    """Resistivity from dopant density, phosphorus's form of the standard conversion.

    ``rho = (A / N) 10^Z``, ``Z = (A0 + A1 y + A2 y^2 + A3 y^3) / (1 + B1 y + B2 y^2
    + B3 y^3)``, ``y = log10(N / N_ref)``; ``A = 1/q`` and ``10^Z`` is the reciprocal
    of a mobility in V s/cm^2 (23 degC).

    Parameters
    ----------
    temperature : K (validity only);  dopant_density : cm^-3
    prefactor (A) : 1/C;  reference_density : cm^-3
    numerator : A0..A3;  denominator : B1..B3 (dimensionless)
    """
    return _broadcast(
        _log_rational(dopant_density, prefactor, reference_density, numerator, denominator),
        temperature,
    )


@kernel(
    inputs={"temperature": "K", "resistivity": "ohm*cm"},
    output="cm^-3",
    coefficients={
        "prefactor": "1/C",
        "reference_resistivity": "ohm*cm",
        "numerator": "1",
        "denominator": "1",
    },
    array_api=True,
)
def log_rational_density(
    temperature, resistivity, *, prefactor, reference_resistivity, numerator, denominator
):
    """Dopant density from resistivity, phosphorus's form of the standard conversion.

    ``N = (A / rho) 10^Z`` with Z the same ratio of cubics in
    ``x = log10(rho / rho_ref)`` (23 degC).

    Parameters
    ----------
    temperature : K (validity only);  resistivity : ohm cm
    prefactor (A) : 1/C;  reference_resistivity : ohm cm
    numerator : A0..A3;  denominator : B1..B3 (dimensionless)
    """
    return _broadcast(
        _log_rational(resistivity, prefactor, reference_resistivity, numerator, denominator),
        temperature,
    )


# a few operations per point: large blocks
for _light in (
    rational_resistivity,
    rational_density,
    log_rational_resistivity,
    log_rational_density,
):
    _light.block = 1 << 17


# --------------------------------------------------------------------------- inversion


def solve_decreasing(
    function, target, low, high, *, f_low=None, f_high=None, xtol=1e-13, max_iterations=100
):
    """Solve ``function(x) = target`` where ``function`` falls strictly with x, vectorised.

    Illinois false position inside a bracket ``[low, high]`` that holds every
    root: each iteration evaluates ``function`` once, on the points not yet
    converged only (``function(x, index)`` receives the values and their indices
    into the full arrays), and stops a point when its bracket or its step is
    below ``xtol`` (absolute, in x) or the residual vanishes. Order about 1.44;
    the retained end's residual is halved when one end stays put twice, so no
    point stalls.

    Parameters
    ----------
    function : callable ``(x, index) -> values`` (arrays of the same length)
    target : 1-D array;  low, high : 1-D arrays (the bracket)
    f_low, f_high : ``function`` at ``low`` and ``high`` if already known
    xtol : absolute tolerance in x
    max_iterations : int

    Returns
    -------
    (x, converged) : the roots and a boolean array (False where the iterations ran
    out; the caller reports those points)
    """
    target = np.asarray(target, dtype=float)
    a = np.array(low, dtype=float)
    b = np.array(high, dtype=float)
    everything = np.arange(target.size)
    fa = (function(a, everything) if f_low is None else np.array(f_low, dtype=float)) - target
    fb = (function(b, everything) if f_high is None else np.array(f_high, dtype=float)) - target
    x = np.where(np.abs(fa) <= np.abs(fb), a, b)
    done = (fa == 0) | (fb == 0) | (b - a <= xtol)
    side = np.zeros(target.size, dtype=np.int8)  # which end moved last: -1 a, +1 b
    for _ in range(max_iterations):
        active = np.flatnonzero(~done)
        if active.size == 0:
            break
        aa, bb, ffa, ffb = a[active], b[active], fa[active], fb[active]
        guess = (aa * ffb - bb * ffa) / (ffb - ffa)
        inside = (guess > aa) & (guess < bb) & np.isfinite(guess)
        guess = np.where(inside, guess, 0.5 * (aa + bb))
        fx = function(guess, active) - target[active]
        step = np.abs(guess - x[active])
        x[active] = guess
        positive = fx > 0  # root lies above the guess (function falls with x)
        moved_a = positive
        # Illinois: halve the residual kept at the end that did not move twice running
        last = side[active]
        ffb = np.where(positive & (last == -1), 0.5 * ffb, ffb)
        ffa = np.where(~positive & (last == 1), 0.5 * ffa, ffa)
        a[active] = np.where(moved_a, guess, aa)
        fa[active] = np.where(moved_a, fx, ffa)
        b[active] = np.where(moved_a, bb, guess)
        fb[active] = np.where(moved_a, ffb, fx)
        side[active] = np.where(moved_a, -1, 1)
        done[active] = (fx == 0) | (b[active] - a[active] <= xtol) | (step <= xtol)
    return x, done


def solve_decreasing_from(
    function, target, guess, low, high, *, xtol=1e-13, ftol=1e-12, max_iterations=100
):
    """Solve ``function(x) = target`` (``function`` falling with x) from a first guess.

    Secant steps (the first with slope -1, as for ``ln rho`` against ``ln N`` in
    doped silicon), kept inside a bracket that closes as the signs of the residual are
    found: a step that leaves it is replaced by false position between its ends
    (Illinois: the end that stayed twice has its residual halved), or by bisection
    while one end has not been evaluated. The ends ``low`` and ``high`` themselves are
    evaluated only when a step reaches them: where the residual keeps its sign there,
    the target is out of reach. Each iteration evaluates ``function`` once, on the
    points not yet converged (``function(x, index)``); a point stops when its step or
    its bracket is below ``xtol``, or its residual is below ``ftol`` (where the
    function's own rounding, e.g. of an iterative solve inside it, leaves the residual
    a step cannot reduce).

    Parameters
    ----------
    function : callable ``(x, index) -> values``
    target, guess, low, high : 1-D arrays (``low < guess < high`` after clipping)
    xtol : absolute tolerance in x
    ftol : absolute tolerance of the residual
    max_iterations : int

    Returns
    -------
    (x, converged, reach) : the roots, a boolean array (False where the iterations ran
    out), and an int8 array: 0 where the target is within reach, -1 where it lies beyond
    ``function(low)`` (residual negative at ``low``), +1 beyond ``function(high)``.
    """
    target = np.asarray(target, dtype=float)
    low = np.array(low, dtype=float)
    high = np.array(high, dtype=float)
    x = np.clip(np.array(guess, dtype=float), low, high)
    a, b = low.copy(), high.copy()
    fa = np.full(target.size, np.nan)  # residuals at the bracket's ends, once evaluated
    fb = np.full(target.size, np.nan)
    previous_x = np.full(target.size, np.nan)
    previous_f = np.full(target.size, np.nan)
    side = np.zeros(target.size, dtype=np.int8)  # which end moved last: -1 a, +1 b
    reach = np.zeros(target.size, dtype=np.int8)
    done = np.zeros(target.size, dtype=bool)
    active = np.arange(target.size)
    for _ in range(max_iterations):
        if not active.size:
            break
        xx = x[active]
        fx = function(xx, active) - target[active]
        # the target beyond an end: the residual keeps its sign there
        at_low = (xx <= low[active]) & (fx < 0)
        at_high = (xx >= high[active]) & (fx > 0)
        reach[active[at_low]] = -1
        reach[active[at_high]] = 1
        # the bracket closes on the sign found (function falls: f > 0 below the root)
        above = fx > 0
        last = side[active]
        fa_active, fb_active = fa[active], fb[active]
        fb_active = np.where(above & (last == -1), 0.5 * fb_active, fb_active)
        fa_active = np.where(~above & (last == 1), 0.5 * fa_active, fa_active)
        a[active] = np.where(above, xx, a[active])
        fa[active] = np.where(above, fx, fa_active)
        b[active] = np.where(above, b[active], xx)
        fb[active] = np.where(above, fb_active, fx)
        side[active] = np.where(above, -1, 1)
        # the next point: secant (slope -1 at first), else false position, else bisection
        px, pf = previous_x[active], previous_f[active]
        with np.errstate(divide="ignore", invalid="ignore"):
            slope = np.where(np.isfinite(px), (fx - pf) / (xx - px), -1.0)
            proposal = xx - fx / np.where(slope < 0, slope, -1.0)
            aa, bb = a[active], b[active]
            fa_, fb_ = fa[active], fb[active]
            position = (aa * fb_ - bb * fa_) / (fb_ - fa_)
        inside = (proposal > aa) & (proposal < bb) & np.isfinite(proposal)
        both = np.isfinite(fa_) & np.isfinite(fb_)
        fallback = np.where(both & (position > aa) & (position < bb), position, 0.5 * (aa + bb))
        # an end not yet evaluated is tried itself before bisecting towards it
        fallback = np.where(~np.isfinite(fb_) & (proposal >= bb), bb, fallback)
        fallback = np.where(~np.isfinite(fa_) & (proposal <= aa), aa, fallback)
        step = np.where(inside, proposal, fallback)
        previous_x[active], previous_f[active] = xx, fx
        finished = (
            (np.abs(fx) <= ftol)
            | (np.abs(proposal - xx) <= xtol)  # (the proposal may round onto an end)
            | (np.abs(step - xx) <= xtol)
            | (bb - aa <= xtol)
            | (reach[active] != 0)
        )
        # a finished point takes the last secant correction when it is small (more
        # accurate than the point evaluated), else the point evaluated
        close = np.abs(proposal - xx) <= 1e-8
        final = np.where(close & (reach[active] == 0), proposal, xx)
        x[active] = np.where(finished, final, step)
        done[active] = finished
        active = active[~finished]
    return x, done, reach
