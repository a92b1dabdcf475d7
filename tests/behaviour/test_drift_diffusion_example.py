"""The drift-diffusion example of docs/ (an invented device) runs and behaves like a diode."""

import importlib.util
from pathlib import Path

import numpy as np
import pytest

EXAMPLE = Path(__file__).resolve().parents[2] / "docs" / "drift_diffusion_example.py"


@pytest.fixture(scope="module")
def example():
    spec = importlib.util.spec_from_file_location("drift_diffusion_example", EXAMPLE)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


@pytest.fixture(scope="module")
def states(example):
    return example.Diode().solve(biases=(0.0, 0.3, 0.4))


def test_the_example_says_its_device_is_invented():
    text = EXAMPLE.read_text()
    assert "THE DEVICE IS INVENTED" in text.split("\n\n")[1]


def test_gummel_iteration_converges_at_every_bias(states):
    assert [s["bias"] for s in states] == [0.0, 0.3, 0.4]
    assert all(s["iterations"] < 50 for s in states)


def test_the_diode_current_is_exponential_in_the_bias(example, states):
    # common practice: a silicon diode's forward current grows as exp(qV / (eta kT))
    # with an ideality factor eta between 1 (diffusion) and 2 (recombination in the
    # junction); the current is zero without bias
    _, low, high = states
    vt = example.BOLTZMANN_EV * example.TEMPERATURE
    eta = 0.1 / (vt * np.log(high["current"] / low["current"]))
    assert 1.0 <= eta < 2.0
    assert abs(states[0]["current"]) < 1e-6 * abs(high["current"])


def test_current_is_conserved_along_the_device(states):
    # a property of the scheme (regression): total current, electron plus hole, is the
    # same through every cell under forward bias
    assert states[-1]["current_spread"] < 1e-4


def test_the_example_runs_as_a_script(example, capsys):
    example.main()
    out = capsys.readouterr().out
    assert "invented" in out and "V = 0.40 V" in out
