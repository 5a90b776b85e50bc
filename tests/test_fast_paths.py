"""The fast modal path equals the direct coupled-system path, method by method."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

import thist
from thist.analysis import build_damping
from thist.methods import get_method
from thist.methods.modal_path import integrate_modal
from thist.record import sample

DEMO = Path(__file__).resolve().parent.parent / "inputs" / "clinic-si.toml"
METHODS = [
    "newmark-average",
    "newmark-linear",
    "central-difference",
    "hht",
    "generalized-alpha",
    "exact",
]


@pytest.fixture(scope="module")
def demo():
    case = thist.load_case(DEMO)
    s = case.structure
    modes = thist.modal(s.M, s.K)
    damping = build_damping(case.damping, s, modes)
    ex = sample(case.record, 0.005, 12.0)
    return s, modes, damping, -np.outer(ex.ag, s.M @ s.r)


@pytest.mark.parametrize("name", METHODS)
def test_modal_path_equals_direct_path_on_the_demo_building(demo, name):
    """For a classically damped linear model a linear one-step method applied mode by mode
    is the same algorithm as on the coupled system (Chopra, Dynamics of Structures,
    2012, §13.1 for the modal equations; the update is linear, so it commutes with the
    modal transformation). Agreement to 1e-10 of the peak: only round-off differs."""
    s, modes, damping, p = demo
    assert damping.classical
    m = get_method(name)
    direct = m.integrate(s.M, damping.C, s.K, p, 0.005)
    fast = integrate_modal(m, s.M, modes, damping.ratios, p, 0.005)
    for a, b in ((direct.u, fast.u), (direct.v, fast.v), (direct.a, fast.a)):
        assert np.max(np.abs(a - b)) < 1e-10 * np.max(np.abs(a))


@pytest.mark.parametrize("name", ["newmark-average", "central-difference", "hht"])
def test_modal_path_honours_initial_conditions(demo, name):
    """Free vibration from a displaced, moving start: both paths agree to 1e-10."""
    s, modes, damping, p = demo
    u0 = np.linspace(0.01, 0.05, s.n)
    v0 = np.linspace(-0.1, 0.1, s.n)
    m = get_method(name)
    zero = np.zeros((2000, s.n))
    direct = m.integrate(s.M, damping.C, s.K, zero, 0.005, u0=u0, v0=v0)
    fast = integrate_modal(m, s.M, modes, damping.ratios, zero, 0.005, u0=u0, v0=v0)
    assert np.max(np.abs(direct.u - fast.u)) < 1e-10 * np.max(np.abs(direct.u))
