"""The fast modal path equals the direct coupled-system path, method by method."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

import thist
from thist.analysis import build_damping
from thist.methods import get_method, modal_kernel
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


#: The modal path's two engines: the compiled kernel (thist.methods.modal_kernel) and
#: the lfilter recurrences (thist.methods.recurrence). The kernel needs numba.
ENGINES = [
    pytest.param(
        True,
        id="compiled",
        marks=pytest.mark.skipif(not modal_kernel.AVAILABLE, reason="numba not available"),
    ),
    pytest.param(False, id="lfilter"),
]


@pytest.mark.parametrize("compiled", ENGINES)
@pytest.mark.parametrize("name", METHODS)
def test_modal_path_equals_direct_path_on_the_demo_building(demo, name, compiled):
    """For a classically damped linear model a linear one-step method applied mode by mode
    is the same algorithm as on the coupled system (Chopra, Dynamics of Structures,
    2012, §13.1 for the modal equations; the update is linear, so it commutes with the
    modal transformation). Agreement to 1e-10 of the peak for both engines of the modal
    path: only round-off differs."""
    s, modes, damping, p = demo
    assert damping.classical
    m = get_method(name)
    direct = m.integrate(s.M, damping.C, s.K, p, 0.005)
    fast = integrate_modal(m, s.M, modes, damping.ratios, p, 0.005, compiled=compiled)
    for a, b in ((direct.u, fast.u), (direct.v, fast.v), (direct.a, fast.a)):
        assert np.max(np.abs(a - b)) < 1e-10 * np.max(np.abs(a))


@pytest.mark.skipif(not modal_kernel.AVAILABLE, reason="numba not available")
@pytest.mark.parametrize("name", METHODS)
def test_compiled_modal_kernel_equals_the_lfilter_path(demo, name):
    """The compiled kernel steps x[k+1] = A x[k] + B0 f[k] + B1 f[k+1] directly; the
    lfilter path runs the same recurrence as rational filters (Oppenheim & Schafer,
    Discrete-Time Signal Processing, 3rd ed., 2010, §6.5: a state-space system and its
    transfer function give the same output). u, v and a agree to 1e-10 of the peak:
    the two differ only in the order of the floating-point operations."""
    s, modes, damping, p = demo
    m = get_method(name)
    kernel = integrate_modal(m, s.M, modes, damping.ratios, p, 0.005, compiled=True)
    filters = integrate_modal(m, s.M, modes, damping.ratios, p, 0.005, compiled=False)
    for a, b in ((filters.u, kernel.u), (filters.v, kernel.v), (filters.a, kernel.a)):
        assert np.max(np.abs(a - b)) < 1e-10 * np.max(np.abs(a))


def test_compiled_modal_kernel_runs_any_state_size_like_numpy():
    """The kernel's general branch (state sizes other than 2 and 3) against a plain
    numpy evaluation of x[k+1] = A x[k] + B0 f[k] + B1 f[k+1] (the recurrence's
    definition) for random stable 4-component systems: 1e-12 relative, round-off
    only over 300 steps of a contraction."""
    from thist.methods.modal_kernel import modal_states

    rng = np.random.default_rng(5)
    n, s, length = 3, 4, 300
    A = 0.2 * rng.standard_normal((n, s, s))
    B0, B1, x0 = (rng.standard_normal((n, s)) for _ in range(3))
    f = rng.standard_normal((length, n))
    X = modal_states(A, B0, B1, x0, f)
    ref = np.empty((s, length, n))
    ref[:, 0] = x0.T
    for i in range(length - 1):
        x = np.einsum("jcd,dj->cj", A, ref[:, i])
        ref[:, i + 1] = x + B0.T * f[i] + B1.T * f[i + 1]
    assert np.max(np.abs(X - ref)) < 1e-12 * np.max(np.abs(ref))


@pytest.mark.parametrize("compiled", ENGINES)
@pytest.mark.parametrize("name", ["newmark-average", "central-difference", "hht", "exact"])
def test_modal_path_honours_initial_conditions(demo, name, compiled):
    """Free vibration from a displaced, moving start: the direct path and both engines
    of the modal path agree to 1e-10 of the peak (same algorithm, round-off only)."""
    s, modes, damping, p = demo
    u0 = np.linspace(0.01, 0.05, s.n)
    v0 = np.linspace(-0.1, 0.1, s.n)
    m = get_method(name)
    zero = np.zeros((2000, s.n))
    direct = m.integrate(s.M, damping.C, s.K, zero, 0.005, u0=u0, v0=v0)
    fast = integrate_modal(
        m, s.M, modes, damping.ratios, zero, 0.005, u0=u0, v0=v0, compiled=compiled
    )
    for a, b in ((direct.u, fast.u), (direct.v, fast.v), (direct.a, fast.a)):
        assert np.max(np.abs(a - b)) < 1e-10 * np.max(np.abs(a))


def test_chain_models_take_the_banded_solve_on_the_direct_path(demo):
    """The demo building is a shear chain: its effective matrix M + γΔt C + βΔt² K is
    tridiagonal, so the direct path factorises it in banded form (LAPACK pbtrf, as
    scipy.linalg.cholesky_banded), and that solve equals a dense solve
    (numpy.linalg.solve) to 1e-12 relative: both are backward stable and the matrix
    is well conditioned (mass-dominated at Δt = 5 ms)."""
    from thist.methods.alpha import _factorise, banded_form

    s, modes, damping, _ = demo
    dt = 0.005
    keff = s.M + 0.5 * dt * damping.C + 0.25 * dt * dt * s.K
    assert banded_form(keff) is not None
    b = np.linspace(-1.0, 2.0, s.n) * 1e5
    x = _factorise(keff)(b)
    ref = np.linalg.solve(keff, b)
    assert np.max(np.abs(x - ref)) < 1e-12 * np.max(np.abs(ref))


@pytest.mark.parametrize("name", ["newmark-average", "hht", "central-difference"])
def test_banded_direct_path_equals_the_dense_direct_path_for_nonclassical_damping(
    demo, name, monkeypatch
):
    """A dashpot in the first story only (non-classical damping, so the run must take
    the direct path) on the demo chain: the banded solve and the dense Cholesky solve
    give the same histories to 1e-10 of the peak (same algorithm; the solves differ
    by round-off only)."""
    import thist.methods.alpha as alpha

    s, modes, _, p = demo
    C = np.zeros((s.n, s.n))
    C[0, 0] = 0.05 * 2.0 * float(modes.omegas[0]) * float(s.M[0, 0])
    m = get_method(name)
    banded = m.integrate(s.M, C, s.K, p[:1500], 0.005)
    monkeypatch.setattr(alpha, "banded_form", lambda A: None)
    dense = m.integrate(s.M, C, s.K, p[:1500], 0.005)
    for a, b in ((dense.u, banded.u), (dense.v, banded.v), (dense.a, banded.a)):
        assert np.max(np.abs(a - b)) < 1e-10 * np.max(np.abs(a))


def test_modal_filters_call_the_same_routine_as_scipy_lfilter():
    """The filters call lfilter's C routine directly (without its argument checks); the
    output and final conditions must be those of scipy.signal.lfilter, bit for bit."""
    from scipy.signal import lfilter

    from thist.methods.recurrence import _filter

    rng = np.random.default_rng(2)
    b, a = np.array([0.0, 0.3, -0.1, 0.05]), np.array([1.0, -1.7, 0.8, -0.02])
    x, zi = rng.standard_normal(500), rng.standard_normal(3)
    y, zf = _filter(b, a, x, zi)
    y_ref, zf_ref = lfilter(b, a, x, zi=zi)
    np.testing.assert_array_equal(y, y_ref)
    np.testing.assert_array_equal(zf, zf_ref)
