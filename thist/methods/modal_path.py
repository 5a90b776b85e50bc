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
from thist.methods.recurrence import filter_states
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
    # Modal loads per unit modal mass, one contiguous row per mode, with one sample
    # past the end (explicit methods need the state after the last load).
    f_ext = np.empty((n, n_steps + 1))
    np.matmul(phi.T, p.T, out=f_ext[:, :n_steps])
    f_ext[:, n_steps] = f_ext[:, n_steps - 1]
    q0 = np.zeros(n) if u0 is None else phi.T @ M @ u0
    qd0 = np.zeros(n) if v0 is None else phi.T @ M @ v0
    w = np.asarray(modes.omegas, dtype=float)
    c, k = 2.0 * np.asarray(zetas, dtype=float) * w, w * w
    A, B0, B1 = method.step_matrices_many(np.ones(n), c, k, dt)
    x0 = np.stack(
        [
            method.initial_state(1.0, c[j], k[j], dt) @ np.array([q0[j], qd0[j], f_ext[j, 0]])
            for j in range(n)
        ]
    )
    X = filter_states(A, B0, B1, x0, f_ext)
    q = np.empty((n, n_steps))
    qd = np.empty((n, n_steps))
    qdd = np.empty((n, n_steps))
    for j in range(n):
        q[j], qd[j], qdd[j] = method.modal_outputs(X[j].T, f_ext[j], 1.0, c[j], k[j], dt)
    if not (np.all(np.isfinite(q)) and np.all(np.isfinite(qd))):
        raise StabilityError(
            f"{method.name}: the modal solution became non-finite; the run "
            "was stopped (reduce the time step)"
        )
    return Solution(q.T @ phi.T, qd.T @ phi.T, qdd.T @ phi.T)
