"""The compiled inelastic kernels reproduce the pure-numpy algorithm they replace.

The reference is the pure-numpy path of thist.methods.inelastic (itself checked
against solve_ivp and closed forms in tests/test_inelastic.py). The two paths
run the same operations; they may differ only in the order of floating-point
sums (BLAS dot products, numpy pairwise sums), i.e. by round-off: relative
differences near 1e-16 per operation, amplified over thousands of steps of a
yielding run to some 1e-12. The tolerance 1e-9 of the peak is far below any
physical difference (a wrong yield branch or one more Newton correction changes
results at 1e-3 or more) and well above that round-off.
"""

from __future__ import annotations

import os
import subprocess
import sys

import numpy as np
import pytest

from thist.errors import InputError
from thist.methods.inelastic import (
    ConvergenceError,
    SolverOptions,
    integrate_inelastic,
    use_compiled,
)
from thist.methods.inelastic_kernel import AVAILABLE
from thist.springs import bilinear, clough_johnston, story_springs

pytestmark = pytest.mark.skipif(not AVAILABLE, reason="numba is not available")

N_STORIES = 6
MASSES = np.full(N_STORIES, 1.5e5)  # kg
STIFFNESS = np.linspace(4.0e8, 2.0e8, N_STORIES)  # N/m


def ground_motion(n: int = 1500, seed: int = 7) -> np.ndarray:
    """A smooth random acceleration strong enough to yield every story law used, m/s²."""
    rng = np.random.default_rng(seed)
    ag = np.convolve(rng.standard_normal(n), np.ones(12) / 12, mode="same")
    return 6.0 * ag / np.max(np.abs(ag))


LAWS = {
    "bilinear": bilinear(STIFFNESS, yield_drift=0.003, post_yield_ratio=0.05),
    "clough-johnston": clough_johnston(STIFFNESS, yield_drift=0.003, post_yield_ratio=0.03),
    "mixed": story_springs(
        ["bilinear", "clough-johnston", "elastic"] * 2,
        STIFFNESS,
        yield_drift=0.003,
        post_yield_ratio=0.0,
    ),
}
CASES = [
    ("newmark-average", "initial", "newton", 0.005),
    ("hht", "tangent", "modified-newton", 0.005),
    ("generalized-alpha", "tangent", "newton", 0.005),
    ("central-difference", "tangent", "newton", 0.001),
    ("central-difference", "initial", "newton", 0.001),
]


def _close(a: np.ndarray, b: np.ndarray) -> bool:
    scale = max(float(np.max(np.abs(a))), 1e-300)
    return float(np.max(np.abs(a - b))) <= 1e-9 * scale


@pytest.mark.parametrize("law", list(LAWS))
@pytest.mark.parametrize(("method", "damping", "iteration", "dt"), CASES)
def test_compiled_kernel_reproduces_the_pure_path(law, method, damping, iteration, dt):
    """Same histories, story demands, energies and solver statistics as the pure path
    (tolerance 1e-9 of each quantity's peak: round-off only, see the module docstring),
    on yielding runs of every law, implicit and explicit, both damping choices."""
    springs = LAWS[law]
    kwargs = dict(
        rayleigh=(0.25, 0.002),
        damping=damping,
        options=SolverOptions(iteration=iteration),
        free_vibration_tail=0.5,
    )
    ag = ground_motion()
    pure = integrate_inelastic(MASSES, springs, ag, dt, method, compiled=False, **kwargs)
    fast = integrate_inelastic(MASSES, springs, ag, dt, method, compiled=True, **kwargs)
    assert pure.story.yield_excursions.sum() > 0  # the case does yield
    for name in ("u", "v", "a", "shear", "drift"):
        assert _close(getattr(pure, name), getattr(fast, name)), name
    for name in ("input", "damping", "kinetic", "hysteretic"):
        assert _close(getattr(pure.energy, name), getattr(fast.energy, name)), name
    assert pure.convergence == fast.convergence
    np.testing.assert_array_equal(pure.story.yield_excursions, fast.story.yield_excursions)
    np.testing.assert_array_equal(pure.story.peak_drift_time, fast.story.peak_drift_time)
    assert _close(pure.story.peak_drift_signed, fast.story.peak_drift_signed)
    assert _close(pure.story.plastic_deformation, fast.story.plastic_deformation)
    assert _close(pure.story.hysteretic_energy, fast.story.hysteretic_energy)


def test_compiled_kernel_halves_steps_like_the_pure_path():
    """A coarse step with few allowed corrections forces halving; both paths subdivide
    the same steps the same number of times (ConvergenceStats equal) and agree to 1e-9."""
    ag = ground_motion(600)
    opts = SolverOptions(max_iterations=2, max_halvings=8)
    springs = LAWS["bilinear"]
    pure = integrate_inelastic(MASSES, springs, ag, 0.02, options=opts, compiled=False)
    fast = integrate_inelastic(MASSES, springs, ag, 0.02, options=opts, compiled=True)
    assert pure.convergence.subdivided_steps > 0
    assert pure.convergence == fast.convergence
    assert _close(pure.u, fast.u)


def test_compiled_kernel_stops_an_unconverged_run_with_the_same_error():
    """With no halving and one correction allowed, both paths raise ConvergenceError at
    the same time, story and residual (the message is built by the same function)."""
    ag = ground_motion(600)
    opts = SolverOptions(max_iterations=1, max_halvings=0)
    errors = []
    for compiled in (False, True):
        with pytest.raises(ConvergenceError) as info:
            integrate_inelastic(MASSES, LAWS["bilinear"], ag, 0.02, options=opts, compiled=compiled)
        errors.append(info.value)
    assert errors[0].time == errors[1].time
    assert errors[0].story == errors[1].story
    assert errors[0].residual == pytest.approx(errors[1].residual, rel=1e-9)


def test_pure_path_is_forced_by_the_environment(monkeypatch):
    """THIST_NO_NUMBA=1 makes the kernels unavailable (checked in a fresh process, where
    the flag is read at import); without them the default is the pure path, and asking
    for the kernels is an input error."""
    import thist.methods.inelastic_kernel as kernel

    env = {**os.environ, "THIST_NO_NUMBA": "1"}
    code = "import thist.methods.inelastic_kernel as k; print(k.AVAILABLE)"
    out = subprocess.run(
        [sys.executable, "-c", code], env=env, capture_output=True, text=True, check=True
    )
    assert out.stdout.strip() == "False"
    monkeypatch.setattr(kernel, "AVAILABLE", False)
    assert use_compiled(None) is False
    with pytest.raises(InputError):
        use_compiled(True)
