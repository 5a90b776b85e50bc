"""The fast path for linear, classically damped models: the method applied mode by mode.

For a classically damped linear model, a linear one-step method applied to the
coupled system equals the same method applied to each mode's equation
q̈ + 2ζωq̇ + ω²q = φᵀp (mass-normalised φ), to round-off: the method's update
is linear and the modes diagonalise M, C and K at once. Each mode's recurrence
(:meth:`Method.step_matrices`) runs as linear filters (:mod:`thist.methods.recurrence`);
the histories are transformed back with Φ.
"""

from __future__ import annotations

import numpy as np

from thist.errors import StabilityError
from thist.methods.base import Method, Solution
from thist.methods.recurrence import run_recurrence
from thist.modal import Modes


def integrate_modal(
    method: Method,
    M: np.ndarray,
    modes: Modes,
    zetas: np.ndarray,
    p: np.ndarray,
    dt: float,
    u0: np.ndarray | None = None,
    v0: np.ndarray | None = None,
) -> Solution:
    """Integrate ``M a + C v + K u = p`` mode by mode (classical damping only).

    Parameters
    ----------
    method : Method
    M : ndarray, shape (n, n)
        Mass matrix, kg.
    modes : Modes
        Undamped modes of (M, K), mass-normalised shapes.
    zetas : ndarray, shape (n,)
        Damping ratio of each mode (C must be diagonal in the modes).
    p : ndarray, shape (N, n)
        Load, N.
    dt : float
        Time step, s.
    u0, v0 : ndarray, shape (n,), optional
        Initial displacement (m) and velocity (m/s); rest by default.

    Returns
    -------
    Solution
        The same histories as ``method.integrate`` on the coupled system, to round-off.
    """
    phi = modes.shapes
    n_steps, n = p.shape
    f = p @ phi  # modal loads, N (per unit modal mass)
    f_ext = np.vstack([f, f[-1:]])  # one sample past the end, for explicit methods
    q0 = np.zeros(n) if u0 is None else phi.T @ M @ u0
    qd0 = np.zeros(n) if v0 is None else phi.T @ M @ v0
    q = np.empty((n_steps, n))
    qd = np.empty((n_steps, n))
    qdd = np.empty((n_steps, n))
    for j in range(n):
        w, z = float(modes.omegas[j]), float(zetas[j])
        c, k = 2.0 * z * w, w * w
        A, B0, B1 = method.step_matrices(1.0, c, k, dt)
        x0 = method.initial_state(1.0, c, k, dt) @ np.array([q0[j], qd0[j], f[0, j]])
        g = np.outer(f_ext[:-1, j], B0) + np.outer(f_ext[1:, j], B1)
        X = run_recurrence(A, g, x0)
        q[:, j], qd[:, j], qdd[:, j] = method.modal_outputs(X, f_ext[:, j], 1.0, c, k, dt)
    if not (np.all(np.isfinite(q)) and np.all(np.isfinite(qd))):
        raise StabilityError(
            f"{method.name}: the modal solution became non-finite; the run "
            "was stopped (reduce the time step)"
        )
    return Solution(q @ phi.T, qd @ phi.T, qdd @ phi.T)
