"""Inelastic 10-story bilinear chain, 10,000 steps, Newmark average acceleration.

Ratio measured in one process (never asserted in tests): the compiled kernels of
:mod:`thist.methods.inelastic_kernel` (numba) against the per-step Python
Newton–Raphson loop with the same tolerances — the pure-numpy path of
:mod:`thist.methods.inelastic`, which is the reference algorithm the kernels
reproduce and the fallback without numba. Target ≥ 20× with identical results
(same solver statistics, histories equal to round-off).

Compile time is reported separately: a fresh process with an empty numba cache
(``NUMBA_CACHE_DIR`` pointed at a new folder) times its first call, which
compiles and caches the kernels; a second fresh process with that cache times
its first call again (loading the cached machine code). The in-process timings
are taken after that warm-up, best of several runs.

Run: ``python -m benchmarks.bench_inelastic``.
"""

from __future__ import annotations

import numpy as np

from benchmarks.timing import best_of, print_compile_times
from thist.methods.inelastic import integrate_inelastic
from thist.methods.inelastic_kernel import AVAILABLE
from thist.springs import bilinear

N_STORIES = 10
N_STEPS = 10_000
DT = 0.005

_FIRST_CALL = """
import time
t0 = time.perf_counter()
from benchmarks.bench_inelastic import problem
from thist.methods.inelastic import integrate_inelastic
t1 = time.perf_counter()
m, springs, ag, dt, kw = problem(n_steps=200)
integrate_inelastic(m, springs, ag, dt, compiled=True, **kw)
integrate_inelastic(m, springs, ag, 0.001, "central-difference", compiled=True, **kw)
t2 = time.perf_counter()
integrate_inelastic(m, springs, ag, dt, compiled=True, **kw)
integrate_inelastic(m, springs, ag, 0.001, "central-difference", compiled=True, **kw)
t3 = time.perf_counter()
print(t1 - t0, t2 - t1, t3 - t2)
"""


def problem(n: int = N_STORIES, n_steps: int = N_STEPS, seed: int = 3):
    """Masses (kg), bilinear springs, ground acceleration (m/s²), Δt (s), run options."""
    m = np.full(n, 2.0e5)
    k = np.linspace(4.0e8, 2.0e8, n)
    springs = bilinear(k, yield_drift=0.004, post_yield_ratio=0.05)
    rng = np.random.default_rng(seed)
    ag = np.convolve(rng.standard_normal(n_steps), np.ones(10) / 10, mode="same")
    ag *= 4.0 / np.max(np.abs(ag))  # about 0.4 g: every story yields
    kw = dict(rayleigh=(0.3, 0.002), damping="tangent")
    return m, springs, ag, DT, kw


def main() -> None:
    """Print compile and run times, the agreement of the two paths and the ratio."""
    if not AVAILABLE:
        print("numba is not available (or THIST_NO_NUMBA is set): nothing to compare")
        return
    m, springs, ag, dt, kw = problem()
    t_fast, fast = best_of(lambda: integrate_inelastic(m, springs, ag, dt, compiled=True, **kw), 5)
    t_pure, pure = best_of(lambda: integrate_inelastic(m, springs, ag, dt, compiled=False, **kw), 1)
    diff = max(
        float(
            np.max(np.abs(getattr(pure, x) - getattr(fast, x))) / np.max(np.abs(getattr(pure, x)))
        )
        for x in ("u", "v", "a", "shear")
    )
    c = pure.convergence
    print(
        f"Inelastic {N_STORIES}-story bilinear chain, {N_STEPS:,} steps, Newmark average "
        "acceleration, Newton-Raphson (force 1e-8, energy 1e-14)"
    )
    print(
        f"  {c.iterations} corrections, {int(pure.story.yield_excursions.sum())} yield "
        f"excursions, largest ductility {np.nanmax(pure.story.ductility):.2f}"
    )
    print(f"  compiled kernels      {t_fast * 1e3:9.2f} ms")
    print(
        f"  pure per-step loop    {t_pure * 1e3:9.2f} ms   ratio {t_pure / t_fast:7.1f}x"
        "  (target >= 20x)"
    )
    print(
        f"  same solver statistics: {pure.convergence == fast.convergence}; largest "
        f"difference of u, v, a, shear: {diff:.1e} of the peak (round-off)"
    )
    print_compile_times(_FIRST_CALL, "the implicit and explicit kernels")


if __name__ == "__main__":
    main()
