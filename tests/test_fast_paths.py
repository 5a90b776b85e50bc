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


@pytest.mark.skipif(not modal_kernel.AVAILABLE, reason="numba not available")
@pytest.mark.parametrize("s", [2, 3, 4])
@pytest.mark.parametrize("n", [3, 4])
def test_compiled_modal_kernel_runs_any_recurrence_like_numpy(s, n):
    """The kernel (unrolled branches for 2 and 3 state components with modes in pairs,
    an odd mode paired with itself, and the general branch) against a plain numpy
    evaluation of the definitions x[k+1] = A x[k] + B0 f[k] + B1 f[k+1],
    y[k] = D x[k] + E0 f[k] + E1 f[k+1], u = y Φᵀ, for random stable systems, split
    into two chunks and with the load held after the last row: 1e-12 relative,
    round-off only over 700 steps of a contraction."""
    from thist.methods.modal_kernel import modal_histories

    rng = np.random.default_rng(5)
    length, d = 700, 5
    A = 0.2 * rng.standard_normal((n, s, s))
    B0, B1, x0 = (rng.standard_normal((n, s)) for _ in range(3))
    D = rng.standard_normal((n, 3, s))
    E0, E1 = rng.standard_normal((n, 3)), rng.standard_normal((n, 3))
    P = rng.standard_normal((length, 2))
    W = rng.standard_normal((2, n))
    phi_t = rng.standard_normal((n, d))
    F = np.vstack([P @ W, (P @ W)[-1:]])  # held after the last sample
    ref = np.empty((3, length, n))
    x = x0.copy()
    for i in range(length):
        ref[:, i] = np.einsum("jcd,jd->cj", D, x) + E0.T * F[i] + E1.T * F[i + 1]
        x = np.einsum("jcd,jd->jc", A, x) + B0 * F[i, :, None] + B1 * F[i + 1, :, None]
    ref = ref @ phi_t
    out = np.empty((3, length, d))
    state = x0.copy()
    split = 613  # a chunk boundary inside a kernel block
    args = (A, B0, B1, D, E0, E1, False, state)
    assert modal_histories(*args, P[: split + 1], W, phi_t, out, 0, split)
    assert modal_histories(*args, P[split:], W, phi_t, out, split, length - split)
    assert np.max(np.abs(out - ref)) < 1e-12 * np.max(np.abs(ref))
    assert np.max(np.abs(state - x)) < 1e-12 * np.max(np.abs(x))


@pytest.mark.parametrize("compiled", ENGINES)
@pytest.mark.parametrize("name", METHODS)
def test_substeps_equal_the_step_by_step_run_at_the_finer_step(demo, name, compiled):
    """r sub-steps per sample folded into one recurrence (x[K+1] = Aʳ x[K] + C0 f_K +
    C1 f_K+1 for a load linear between samples) against the method run step by step
    on the coupled system at Δt/r under the record interpolated linearly
    (numpy.interp), read one sample in r: the same algorithm, so agreement to 1e-10
    of the peak (round-off of r-fold products only)."""
    s, modes, damping, p = demo
    m = get_method(name)
    r, dt = 4, 0.01
    coarse = p[:600:2]  # the demo record at 0.01 s
    t = np.arange(coarse.shape[0]) * dt
    tf = np.arange((coarse.shape[0] - 1) * r + 1) * (dt / r)
    fine = np.column_stack([np.interp(tf, t, coarse[:, i]) for i in range(s.n)])
    ref = m.integrate(s.M, damping.C, s.K, fine, dt / r)
    fast = integrate_modal(m, s.M, modes, damping.ratios, coarse, dt, compiled=compiled, substeps=r)
    for a, b in ((ref.u[::r], fast.u), (ref.v[::r], fast.v), (ref.a[::r], fast.a)):
        assert np.max(np.abs(a - b)) < 1e-10 * np.max(np.abs(a))


def test_substeps_mean_the_same_on_the_direct_path(demo):
    """The direct path (models whose damping is not classical) runs the finer step
    itself and reads one sample in r. The demo model forced onto it equals the modal
    path's folded run to 1e-10 of the peak: the same algorithm, round-off only."""
    from dataclasses import replace

    from thist.analysis import integrate_linear

    s, modes, damping, p = demo
    ag = -p[:400, 0] / s.M[0, 0]
    m = get_method("newmark-average")
    modal_run, path = integrate_linear(m, s, damping, modes, ag, 0.01, substeps=3)
    assert path == "modal"
    direct_run, path = integrate_linear(
        m, s, replace(damping, classical=False), modes, ag, 0.01, substeps=3
    )
    assert path == "direct"
    for a, b in (
        (direct_run.u, modal_run.u),
        (direct_run.v, modal_run.v),
        (direct_run.a, modal_run.a),
    ):
        assert np.max(np.abs(a - b)) < 1e-10 * np.max(np.abs(a))


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


def test_time_history_checks_stability_at_the_substep_and_refuses_bad_counts():
    """Central difference on a two-story chain whose stability limit is T_min/π
    (Newmark 1959; about 0.032 s here): a 0.05 s record step alone is refused, the
    same record with two sub-steps (0.025 s) runs, and a sub-step count that is not a
    whole number >= 1 is an input error naming the field."""
    M = np.diag([2e5, 2e5])
    K = np.array([[6e8, -3e8], [-3e8, 3e8]])
    C = 0.002 * K
    ag = 0.5 * np.sin(np.linspace(0, 20, 401))
    with pytest.raises(thist.StabilityError):
        thist.time_history(M, C, K, ag, 0.05, "central-difference")
    h = thist.time_history(M, C, K, ag, 0.05, "central-difference", substeps=2)
    assert h.u.shape == (401, 2) and np.all(np.isfinite(h.u))
    for bad in (0, 1.5, True):
        with pytest.raises(thist.InputError, match="substeps"):
            thist.time_history(M, C, K, ag, 0.05, "central-difference", substeps=bad)


def test_exact_method_gives_the_same_answer_with_any_number_of_substeps(demo):
    """The state-transition recurrence is exact for a load linear between samples
    (Nigam & Jennings 1969; Van Loan 1978), and sub-steps under the linearly
    interpolated record add no information: r = 1, 3 and 7 agree to 1e-11 of the
    peak (round-off of the r-fold matrix products only)."""
    s, modes, damping, p = demo
    m = get_method("exact")
    one = integrate_modal(m, s.M, modes, damping.ratios, p[:800], 0.005)
    for r in (3, 7):
        many = integrate_modal(m, s.M, modes, damping.ratios, p[:800], 0.005, substeps=r)
        for a, b in ((one.u, many.u), (one.v, many.v), (one.a, many.a)):
            assert np.max(np.abs(a - b)) < 1e-11 * np.max(np.abs(a))
