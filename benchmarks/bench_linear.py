"""Linear 10-story chain, Rayleigh 5 %, 10,000 steps, Newmark average acceleration.

Ratios measured in one process (never asserted in tests), best of several runs
(each run's result is kept until the next one finishes, for every contender alike):

1. thist's default path (the modal path, :func:`thist.analysis.integrate_linear`:
   with numba, recurrence, read-out and back-transform in the compiled kernel of
   :mod:`thist.methods.modal_kernel`; else the lfilter filters, timed here too)
   against a textbook per-step numpy Newmark loop (Chopra, *Dynamics of
   Structures*, Table 5.4.2 form) written here: target ≥ 50×. Both have the same
   error against the exact solution (they are the same algorithm).
2. Against ``scipy.integrate.solve_ivp`` (RK45, rtol 1e-8, max_step = Δt, default
   atol), with every error measured against the ``exact`` method run on the
   coupled system (state-transition matrix, exact for the piecewise-linear load
   that all runs use): target ≥ 1000× "at equal or better accuracy". Newmark at
   the record's Δt is *less* accurate than that RK45 run, so the comparison at
   equal accuracy is made two ways: Newmark average acceleration at Δt/r, with r
   raised until its error is no larger than RK45's (r sub-steps per sample under
   the linearly interpolated record, folded into one recurrence per sample and
   read at the samples, as RK45 is read at them: ``substeps=r``), and the
   ``exact`` method on the modal path (exact to round-off). The RK45 run is
   timed best of 3 (it takes most of a second; the others best of many).
3. For information: the sub-stepped Newmark run done step by step (histories at
   every sub-step), and the direct coupled-system path (one banded
   factorisation) that non-classically damped models take.
4. Compile time of the modal kernel, apart from the run times: a fresh process
   with an empty numba cache times its first calls (which compile and cache the
   kernel), and a second fresh process with that cache times them again.

Run: ``python -m benchmarks.bench_linear`` (``OPENBLAS_NUM_THREADS=1`` is set by
the package, see benchmarks/__init__.py).
"""

from __future__ import annotations

import numpy as np
from scipy.integrate import solve_ivp

import thist
from benchmarks.timing import best_of, print_compile_times
from thist.analysis import integrate_linear
from thist.damping import rayleigh
from thist.methods import get_method, modal_kernel
from thist.methods.modal_path import integrate_modal
from thist.structure import shear_chain

_FIRST_CALL = """
import time
t0 = time.perf_counter()
from benchmarks.bench_linear import problem
from thist.analysis import integrate_linear
from thist.methods import get_method
t1 = time.perf_counter()
s, modes, d, p, ag, dt = problem(n_steps=200)
runs = [get_method(name) for name in ("newmark-average", "exact", "central-difference")]
for m in runs:
    integrate_linear(m, s, d, modes, ag, dt)
t2 = time.perf_counter()
for m in runs:
    integrate_linear(m, s, d, modes, ag, dt)
t3 = time.perf_counter()
print(t1 - t0, t2 - t1, t3 - t2)
"""


def textbook_newmark(M, C, K, p, dt, beta=0.25, gamma=0.5):
    """Per-step numpy Newmark loop in the textbook incremental form."""
    n_steps, n = p.shape
    u = np.zeros((n_steps, n))
    v = np.zeros((n_steps, n))
    a = np.zeros((n_steps, n))
    a[0] = np.linalg.solve(M, p[0])
    a1 = M / (beta * dt * dt) + gamma / (beta * dt) * C
    a2 = M / (beta * dt) + (gamma / beta - 1) * C
    a3 = (1 / (2 * beta) - 1) * M + dt * (gamma / (2 * beta) - 1) * C
    khat_inv = np.linalg.inv(K + a1)
    for i in range(n_steps - 1):
        u[i + 1] = khat_inv @ (p[i + 1] + a1 @ u[i] + a2 @ v[i] + a3 @ a[i])
        v[i + 1] = (
            gamma / (beta * dt) * (u[i + 1] - u[i])
            + (1 - gamma / beta) * v[i]
            + dt * (1 - gamma / (2 * beta)) * a[i]
        )
        a[i + 1] = (
            (u[i + 1] - u[i]) / (beta * dt * dt) - v[i] / (beta * dt) - (1 / (2 * beta) - 1) * a[i]
        )
    return u


def problem(n=10, n_steps=10_000, dt=0.005, seed=1):
    """The benchmark model and load: (structure, modes, damping, p, ag, dt)."""
    s = shear_chain([2.0e5] * n, [3.0e8] * n, [3.5] * n)
    modes = thist.modal(s.M, s.K)
    d = rayleigh(s.M, s.K, modes, 0.05, modes.omegas[0], modes.omegas[2], "5 % at 1 and 3")
    rng = np.random.default_rng(seed)
    ag = np.convolve(rng.standard_normal(n_steps), np.ones(10) / 10, mode="same")
    return s, modes, d, -np.outer(ag, s.M @ s.r), ag, dt


def main() -> None:
    """Print timings, errors against exact and the ratios."""
    s, modes, d, p, ag, dt = problem()
    method = get_method("newmark-average")
    exact_method = get_method("exact")
    exact = exact_method.integrate(s.M, d.C, s.K, p, dt).u
    scale = np.max(np.abs(exact))

    def default_path(m=method, substeps=1):
        return integrate_linear(m, s, d, modes, ag, dt, substeps=substeps)

    gamma = modes.shapes.T @ (s.M @ s.r)
    t_fast, (sol, path) = best_of(default_path, repeat=50)
    t_book, book = best_of(lambda: textbook_newmark(s.M, d.C, s.K, p, dt), repeat=3)
    t_direct, direct = best_of(lambda: method.integrate(s.M, d.C, s.K, p, dt), repeat=3)
    t_exact, (sol_exact, _) = best_of(lambda: default_path(exact_method), repeat=50)
    t_lfilter, sol_lfilter = best_of(
        lambda: integrate_modal(
            method, s.M, modes, d.ratios, ag[:, None], dt, compiled=False,
            to_modal=-gamma[None, :],
        ),
        repeat=20,
    )  # fmt: skip
    t = np.arange(p.shape[0]) * dt
    Minv = np.linalg.inv(s.M)
    load = -(s.M @ s.r)

    def rhs(tt, y):
        n = s.n
        return np.concatenate(
            [y[n:], Minv @ (load * np.interp(tt, t, ag) - d.C @ y[n:] - s.K @ y[:n])]
        )

    def run_ivp():
        out = solve_ivp(
            rhs, (0, t[-1]), np.zeros(2 * s.n), method="RK45", t_eval=t, rtol=1e-8, max_step=dt
        )
        return out.y[: s.n].T

    t_ivp, ivp = best_of(run_ivp, repeat=3)

    def err(x):
        return float(np.max(np.abs(x - exact)) / scale)

    e_ivp = err(ivp)
    # Newmark sub-stepped until its error is no larger than RK45's
    r, e_sub, t_sub = 1, err(sol.u), t_fast
    while e_sub > e_ivp and r < 64:
        r += 1
        t_sub, (sol_sub, _) = best_of(lambda r=r: default_path(method, r), repeat=50)
        e_sub = err(sol_sub.u)
    # the same run step by step at dt/r, every sub-step kept (load interpolated linearly)
    fine = np.interp(np.arange((ag.size - 1) * r + 1) * (dt / r), t, ag)
    t_step, (sol_step, _) = best_of(
        lambda: integrate_linear(method, s, d, modes, fine, dt / r), repeat=10
    )

    def verdict(ratio, target):
        return "met" if ratio >= target else "NOT met"

    engine = "compiled kernel" if modal_kernel.AVAILABLE else "lfilter; numba not available"
    r_ivp, r_exact, r_sub = t_ivp / t_fast, t_ivp / t_exact, t_ivp / t_sub
    print("Linear 10-story chain, Rayleigh 5 %, 10,000 steps, Newmark average acceleration")
    print("  errors: max |u - u_exact| / max |u_exact| (exact: state-transition matrix, direct)")
    print(
        f"  thist default path ({path}, {engine})  {t_fast * 1e3:7.3f} ms   error {err(sol.u):.2e}"
    )
    print(
        f"  modal path, lfilter engine  {t_lfilter * 1e3:9.3f} ms   error {err(sol_lfilter.u):.2e}"
        f"   (the fallback without numba; {t_lfilter / t_fast:.1f}x the default's time)"
    )
    print(
        f"  textbook numpy loop         {t_book * 1e3:9.2f} ms   error {err(book):.2e}"
        f"   ratio {t_book / t_fast:7.1f}x  (target >= 50x: {verdict(t_book / t_fast, 50)})"
    )
    print(
        f"  solve_ivp RK45 rtol 1e-8    {t_ivp * 1e3:9.2f} ms   error {e_ivp:.2e}"
        f"   ratio {r_ivp:7.1f}x  (Newmark at this dt is less accurate: see below)"
    )
    print("  at equal or better accuracy than that RK45 run (target >= 1000x):")
    print(
        f"    Newmark, {r} sub-steps/sample {t_sub * 1e3:7.3f} ms   error {e_sub:.2e}"
        f"   ratio vs RK45 {r_sub:7.1f}x  ({verdict(r_sub, 1000)})"
    )
    print(
        f"    exact method, modal path  {t_exact * 1e3:9.3f} ms   error {err(sol_exact.u):.2e}"
        f"   ratio vs RK45 {r_exact:7.1f}x  ({verdict(r_exact, 1000)})"
    )
    print(
        f"  for information: Newmark at dt/{r} step by step {t_step * 1e3:7.2f} ms"
        f"   error {err(sol_step.u[::r]):.2e} (every sub-step kept)"
    )
    print(
        f"  direct coupled path (banded) {t_direct * 1e3:8.2f} ms   error {err(direct.u):.2e}"
        "   (path of non-classically damped models)"
    )

    print_compile_times(_FIRST_CALL, "three methods on the modal path")


if __name__ == "__main__":
    main()
