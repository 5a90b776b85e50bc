"""Linear 10-story chain, Rayleigh 5 %, 10,000 steps, Newmark average acceleration.

Ratios measured in one process (never asserted in tests):

- thist's default path (modal filters) against a textbook per-step numpy
  Newmark loop (Chopra, Dynamics of Structures, Table 5.4.2 form): target ≥ 50×;
- against scipy.integrate.solve_ivp (RK45, rtol 1e-8, max_step = Δt): target
  ≥ 1000×, at equal or better accuracy against the `exact` method.

Run: ``python -m benchmarks.bench_linear``.
"""

from __future__ import annotations

import time

import numpy as np
from scipy.integrate import solve_ivp

import thist
from thist.damping import rayleigh
from thist.methods import get_method
from thist.methods.modal_path import integrate_modal
from thist.structure import shear_chain


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


def best_of(fn, repeat=5):
    """Smallest wall time of ``repeat`` calls, s, and the last result."""
    best, out = np.inf, None
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t0)
    return best, out


def problem(n=10, n_steps=10_000, dt=0.005, seed=1):
    """The benchmark model and load."""
    s = shear_chain([2.0e5] * n, [3.0e8] * n, [3.5] * n)
    modes = thist.modal(s.M, s.K)
    d = rayleigh(s.M, s.K, modes, 0.05, modes.omegas[0], modes.omegas[2], "5 % at 1 and 3")
    rng = np.random.default_rng(seed)
    ag = np.convolve(rng.standard_normal(n_steps), np.ones(10) / 10, mode="same")
    return s, modes, d, -np.outer(ag, s.M @ s.r), ag, dt


def main() -> None:
    s, modes, d, p, ag, dt = problem()
    method = get_method("newmark-average")
    exact = get_method("exact").integrate(s.M, d.C, s.K, p, dt).u
    scale = np.max(np.abs(exact))
    t_fast, fast = best_of(lambda: integrate_modal(method, s.M, modes, d.ratios, p, dt).u)
    t_book, book = best_of(lambda: textbook_newmark(s.M, d.C, s.K, p, dt), repeat=2)
    t = np.arange(p.shape[0]) * dt
    Minv = np.linalg.inv(s.M)

    def rhs(tt, y):
        n = s.n
        return np.concatenate(
            [y[n:], Minv @ (-(s.M @ s.r) * np.interp(tt, t, ag) - d.C @ y[n:] - s.K @ y[:n])]
        )

    t_ivp, ivp = best_of(
        lambda: (
            solve_ivp(
                rhs, (0, t[-1]), np.zeros(2 * s.n), method="RK45", t_eval=t, rtol=1e-8, max_step=dt
            )
            .y[: s.n]
            .T
        ),
        repeat=1,
    )
    err = {
        name: np.max(np.abs(x - exact)) / scale
        for name, x in (("thist", fast), ("textbook", book), ("solve_ivp", ivp))
    }
    print("Linear 10-story chain, Rayleigh 5 %, 10,000 steps, Newmark average acceleration")
    print(f"  thist default path   {t_fast * 1e3:9.2f} ms   error vs exact {err['thist']:.2e}")
    print(
        f"  textbook numpy loop  {t_book * 1e3:9.2f} ms   error vs exact {err['textbook']:.2e}"
        f"   ratio {t_book / t_fast:7.1f}x  (target >= 50x)"
    )
    print(
        f"  solve_ivp RK45       {t_ivp * 1e3:9.2f} ms   error vs exact {err['solve_ivp']:.2e}"
        f"   ratio {t_ivp / t_fast:7.1f}x  (target >= 1000x)"
    )


if __name__ == "__main__":
    main()
