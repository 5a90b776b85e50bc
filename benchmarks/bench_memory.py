"""Memory of peaks-only runs, and of full histories, measured with tracemalloc.

1. A 100-story chain over 100,000 steps in peaks-only mode (:mod:`thist.peaks`):
   the peak memory the run allocates (tracemalloc, which numpy reports its array
   buffers to) against the model's own matrices, M, K and C dense, 3 × 100² × 8
   bytes = 240 kB; target: within 2×. The inputs — the matrices, the modes and
   the record itself (100,000 × 8 bytes) — exist before the run and are not
   counted. Times are of a second, untraced run (tracemalloc slows the many
   small allocations of a chunked run several-fold). The same run over 10,000
   steps shows that the figure does not depend on the number of steps. Linear
   (modal filters) and inelastic (compiled kernels, bilinear springs) runs.
2. Full histories of the same model over 10,000 steps (modal path): u, v and a
   are float64, C-contiguous arrays, the three planes of one (3, N, n) block that
   owns its data, and the run's peak memory is that block plus the kernel's
   per-block work arrays and the model-size set-up — nothing of the record's size
   is allocated besides the histories, and nothing is copied on the way.

The reference is the arithmetic of array sizes done here. Run:
``python -m benchmarks.bench_memory``.
"""

from __future__ import annotations

import time
import tracemalloc

import numpy as np

import thist
from thist.analysis import integrate_linear
from thist.damping import rayleigh
from thist.methods import get_method
from thist.methods.inelastic_kernel import AVAILABLE
from thist.peaks import inelastic_peaks, linear_peaks
from thist.springs import bilinear
from thist.structure import shear_chain

N_STORIES = 100
DT = 0.005


def model(n: int = N_STORIES):
    """Uniform 100-story chain (200 t, 300 MN/m, 3.5 m), Rayleigh 5 % at modes 1 and 3."""
    s = shear_chain([2.0e5] * n, [3.0e8] * n, [3.5] * n)
    modes = thist.modal(s.M, s.K)
    d = rayleigh(s.M, s.K, modes, 0.05, modes.omegas[0], modes.omegas[2], "5 % at 1 and 3")
    return s, modes, d


def record(n_steps: int, seed: int = 5) -> np.ndarray:
    """A smooth random ground acceleration, m/s²."""
    rng = np.random.default_rng(seed)
    ag = np.convolve(rng.standard_normal(n_steps), np.ones(10) / 10, mode="same")
    return 3.0 * ag / np.max(np.abs(ag))


def traced(fn):
    """(result, peak bytes allocated during the call, seconds)."""
    tracemalloc.start()
    t0 = time.perf_counter()
    out = fn()
    elapsed = time.perf_counter() - t0
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    return out, peak, elapsed


def main() -> None:
    """Print peak memory of peaks-only and full-history runs against the array arithmetic."""
    s, modes, d = model()
    n = s.n
    matrices = 3 * n * n * 8
    method = get_method("newmark-average")
    print(f"{n}-story chain; model matrices M, K, C dense: {matrices / 1e3:.0f} kB")
    print("peaks-only runs (tracemalloc peak of the run itself; inputs not counted):")
    linear_peaks(method, s, d, modes, record(50), DT)  # first-call allocations of numpy/scipy
    for n_steps in (10_000, 100_000):
        ag = record(n_steps)
        res, peak, _ = traced(lambda ag=ag: linear_peaks(method, s, d, modes, ag, DT))
        t0 = time.perf_counter()
        linear_peaks(method, s, d, modes, ag, DT)
        sec = time.perf_counter() - t0
        print(
            f"  linear, modal, {n_steps:>7,} steps: {peak / 1e3:7.0f} kB = "
            f"{peak / matrices:4.2f} x the matrices (target <= 2)   chunk {res.chunk_steps} "
            f"samples, {sec:.1f} s untraced"
        )
    if AVAILABLE:
        k = np.full(n, 3.0e8)
        springs = bilinear(k, yield_drift=0.004, post_yield_ratio=0.05)
        kw = dict(rayleigh=(d.alpha_mass, d.beta_stiffness), damping="tangent")
        for n_steps in (10_000, 100_000):
            ag = record(n_steps)
            inelastic_peaks(s, springs, ag[:50], DT, **kw)  # load the kernels first
            res, peak, _ = traced(
                lambda ag=ag: inelastic_peaks(s, springs, ag, DT, **kw)  # noqa: B023
            )
            t0 = time.perf_counter()
            inelastic_peaks(s, springs, ag, DT, **kw)
            sec = time.perf_counter() - t0
            print(
                f"  inelastic, compiled, {n_steps:>7,} steps: {peak / 1e3:7.0f} kB = "
                f"{peak / matrices:4.2f} x the matrices   chunk {res.chunk_steps} samples, "
                f"{sec:.1f} s untraced, {int(res.story.yield_excursions.sum())} yield excursions"
            )
    n_steps = 10_000
    ag = record(n_steps)
    (sol, path), peak, sec = traced(lambda: integrate_linear(method, s, d, modes, ag, DT))
    hist = 3 * n_steps * n * 8
    arrays = (sol.u, sol.v, sol.a)
    block = sol.u.base
    flags = (
        all(x.dtype == np.float64 and x.flags.c_contiguous and x.base is block for x in arrays)
        and block.flags.owndata
        and block.shape == (3, n_steps, n)
    )
    print(f"full histories, {path} path, {n_steps:,} steps ({sec:.2f} s):")
    print(
        f"  u, v, a float64, C-contiguous planes of one block that owns its data: {flags}; "
        f"their size {hist / 1e6:.1f} MB"
    )
    print(
        f"  run peak {peak / 1e6:.2f} MB = the histories x {peak / hist:.3f} "
        f"(the rest: {(peak - hist) / 1e3:.0f} kB of model-size set-up and per-block work)"
    )


if __name__ == "__main__":
    main()
