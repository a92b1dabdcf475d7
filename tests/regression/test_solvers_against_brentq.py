"""Regression (the code against its own equations): the vectorised solvers give what a
plain per-point ``scipy.optimize.brentq`` loop of the same equations gives.

The loops are the benchmarks' lean baselines (``benchmarks/lean.py``: the release's
models written out for one float, brentq on linear-space neutrality at fixed narrowing,
a fixed point on Schenk's narrowing; brentq in ln N for doping from resistivity). They
share the coefficients, not the code: a change of the Newton iteration, its start, its
stopping rule or its fallback that moves an answer shows here.
"""

import importlib.util
import pathlib
import warnings

import numpy as np
import pytest

import matprops

_LEAN = pathlib.Path(__file__).resolve().parents[2] / "benchmarks" / "lean.py"


@pytest.fixture(scope="module")
def lean():
    spec = importlib.util.spec_from_file_location("lean_baselines", _LEAN)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


@pytest.fixture(scope="module")
def si():
    return matprops.silicon()


def test_equilibrium_matches_a_brentq_loop(si, lean):
    rng = np.random.default_rng(21)
    size = 48
    T = rng.uniform(250.0, 450.0, size)
    Nd = 10 ** rng.uniform(13.0, 20.0, size)
    Na = 10 ** rng.uniform(13.0, 20.0, size)
    Na[::4], Nd[1::4] = 0.0, 0.0  # singly doped beside compensated and degenerate points
    n, p = lean.equilibrium_loop(si, T, Nd, Na)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        state = si.kernel("equilibrium")(T, Nd=Nd, Na=Na)
    # where Nd and Na nearly cancel, n and p are fixed by their difference only: the
    # loop's own rounding (eps (Nd + Na) / (n + p)) bounds how close the two can be
    condition = (Nd + Na) / (n + p)
    allowed = 1e-10 + 1e-14 * condition
    assert np.all(np.abs(state["electron_density"] / n - 1.0) <= allowed)
    assert np.all(np.abs(state["hole_density"] / p - 1.0) <= allowed)


@pytest.mark.parametrize("dopant", ["boron", "phosphorus"])
def test_doping_from_resistivity_matches_a_brentq_loop(si, lean, dopant):
    rho = np.array([3e-3, 0.05, 1.0, 20.0, 700.0])
    T = np.array([260.0, 300.0, 320.0, 350.0, 390.0])
    expected = lean.resistivity_loop(si, rho, T, dopant)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        found = si.doping_from_resistivity(rho, T, dopant, conversion="physics").m_as("cm^-3")
    np.testing.assert_allclose(found, expected, rtol=1e-10, atol=0)


def test_a_compensated_point_is_solved_to_its_root(si):
    # Na = Nd: neutrality balances two large densities; the solver takes eta to within
    # about 1e-12 of the root there, not only the residual below 1e-12
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        state = si.kernel("equilibrium")(250.0, Nd=1e16, Na=1e16)
    residual = float(state["residual"])
    assert abs(residual) <= 8 * np.finfo(float).eps  # at the rounding floor
