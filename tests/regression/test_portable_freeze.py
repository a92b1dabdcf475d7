"""A frozen release reproduces on any CPU: its reference holds under the last-bit
differences that another libm, another SIMD path or another numpy build produce.

Regression checks (the code against its own frozen numbers). The perturbation: every
transcendental function the code calls by name (numpy's exp, log, log1p, expm1,
logaddexp, power, tanh, log10, arcsinh, cbrt, exp2, log2 and the math module's)
returns its result moved by one ulp — all upward, or in a data-dependent mix of
directions, as arbitrary as another libm's rounding. (``x ** y`` written as an
operator on arrays calls numpy's power loop directly and is not reached; every value
it feeds is.) Inputs are not perturbed: the frozen inputs are stored exactly, and a
reference grid lies on validity limits on purpose.
"""

import math

import numpy as np
import pytest

import matprops
from matprops.outputs import reference

NUMPY_FUNCTIONS = (
    "exp",
    "log",
    "log1p",
    "expm1",
    "logaddexp",
    "power",
    "tanh",
    "log10",
    "arcsinh",
    "cbrt",
    "exp2",
    "log2",
)
MATH_FUNCTIONS = ("exp", "log", "log1p", "expm1", "pow", "tanh", "log10", "sqrt")


def _nudge_array(values: np.ndarray, mode: str) -> None:
    """Move finite results other than 0 and 1 by one ulp, in place."""
    movable = np.isfinite(values) & (values != 0.0) & (values != 1.0)
    if mode == "up":
        direction = np.inf
    else:  # a direction read off the value's own bits: as arbitrary as a libm's
        direction = np.where((values.view(np.int64) >> 7) & 1, np.inf, -np.inf)
    values[...] = np.where(movable, np.nextafter(values, direction), values)


def _nudge_number(value: float, mode: str) -> float:
    if not math.isfinite(value) or value in (0.0, 1.0):
        return value
    up = mode == "up" or (int(np.float64(value).view(np.int64)) >> 7) & 1
    return math.nextafter(value, math.inf if up else -math.inf)


def _perturbed(function, mode):
    def wrapper(*args, **kwargs):
        result = function(*args, **kwargs)
        if isinstance(result, np.ndarray) and result.dtype == np.float64:
            _nudge_array(result, mode)
            return result
        if isinstance(result, (float, np.floating)):
            return type(result)(_nudge_number(float(result), mode))
        return result

    return wrapper


def _perturb_everything(monkeypatch, mode):
    for name in NUMPY_FUNCTIONS:
        monkeypatch.setattr(np, name, _perturbed(getattr(np, name), mode))
    for name in MATH_FUNCTIONS:
        monkeypatch.setattr(math, name, _perturbed(getattr(math, name), mode))


@pytest.fixture(params=["up", "mixed"])
def last_bits_differ(request, monkeypatch):
    _perturb_everything(monkeypatch, request.param)
    return request.param


@pytest.mark.parametrize("mode", ["up", "mixed"])
def test_the_perturbation_reaches_the_kernels(monkeypatch, mode):
    # the perturbation bites: a closed form and a solved quantity move in their last
    # bits, and not more
    si = matprops.silicon()
    temperatures = np.array([250.0, 300.0, 350.0])
    closed = si.intrinsic_density(temperatures).m
    solved = si.resistivity(temperatures, Na=1e16).m
    _perturb_everything(monkeypatch, mode)
    closed_now = si.intrinsic_density(temperatures).m
    solved_now = si.resistivity(temperatures, Na=1e16).m
    assert np.any(closed_now != closed) and np.any(solved_now != solved)
    assert np.allclose(closed_now, closed, rtol=1e-13, atol=0)
    assert np.allclose(solved_now, solved, rtol=1e-10, atol=0)


@pytest.mark.slow  # about 5 s or more
@pytest.mark.parametrize("release_id", matprops.releases())
def test_every_release_reproduces_when_the_last_bits_differ(release_id, last_bits_differ):
    assert reference.compare(release_id) == []


def test_an_error_beyond_the_tolerance_is_still_caught(datasets_copy):
    # the widened tolerances do not blind the check: a solver result moved by 1e-8
    # (ten times the solver tolerance) at a well-conditioned point fails
    import json

    root, catalogue = datasets_copy
    release = catalogue.newest_release_id()
    path = root / f"releases/{release}.reference.json"
    content = json.loads(path.read_text())
    values = content["cases"]["resistivity"]["values"][0]
    grid = content["cases"]["resistivity"]["grid"]
    # a point with boron only (Na = 1e16, Nd = 0): well conditioned
    shape = [len(v) for v in grid.values()]
    index = np.ravel_multi_index(
        (grid["temperature"].index(300.0), grid["Na"].index(1e16), grid["Nd"].index(0.0)),
        shape,
    )
    values[index] *= 1 + 1e-8
    path.write_text(json.dumps(content))
    catalogue.write_checksums()
    problems = reference.compare(release, catalogue)
    assert any(p.startswith("resistivity:") for p in problems)
