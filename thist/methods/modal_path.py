"""The fast path for linear, classically damped models: the method applied mode by mode.

For a classically damped linear model, a linear one-step method applied to the
coupled system equals the same method applied to each mode's equation
q̈ + 2ζωq̇ + ω²q = φᵀp (mass-normalised φ), to round-off: the method's update
is linear and the modes diagonalise M, C and K at once. Each mode's recurrence
(:meth:`Method.step_matrices`) runs as linear filters (:mod:`thist.methods.recurrence`);
the histories are transformed back with Φ.
"""

from __future__ import annotations

import math

import numpy as np

from thist.errors import StabilityError
from thist.methods.base import Method, Solution
from thist.methods.recurrence import filter_bank, initial_conditions, run_filters
from thist.modal import Modes


class ModalFilters:
    """The modal recurrences of one run, advanced chunk by chunk of samples.

    Parameters
    ----------
    method : Method
    modes : Modes
        Undamped modes of (M, K), mass-normalised shapes.
    zetas : ndarray, shape (n,)
        Damping ratio of each mode.
    dt : float
        Time step, s.
    q0, qd0 : ndarray, shape (n,)
        Initial modal displacement (m·kg^½) and velocity.
    f0 : ndarray, shape (n,)
        Modal load per unit modal mass at the first sample.

    Notes
    -----
    :meth:`advance` takes the modal loads at samples k0 … k0 + L (one sample of
    overlap with the previous chunk) and returns the modal (u, v, a) at k0 …
    k0 + L − 1. The filters carry their state (``zi``) from chunk to chunk, so
    the samples come out the same whatever the chunk length.
    """

    def __init__(
        self,
        method: Method,
        modes: Modes,
        zetas: np.ndarray,
        dt: float,
        q0: np.ndarray,
        qd0: np.ndarray,
        f0: np.ndarray,
    ):
        w = np.asarray(modes.omegas, dtype=float)
        n = w.size
        self.method = method
        self.dt = dt
        self.c = 2.0 * np.asarray(zetas, dtype=float) * w
        self.k = w * w
        A, B0, B1 = method.step_matrices_many(np.ones(n), self.c, self.k, dt)
        self.bank = filter_bank(A, B0, B1)
        s = self.bank.order
        self.components = method.filtered_components(s)
        self.x0 = np.stack(
            [
                method.initial_state(1.0, self.c[j], self.k[j], dt) @ (q0[j], qd0[j], f0[j])
                for j in range(n)
            ]
        )
        self.zi = initial_conditions(self.bank, self.x0, f0)
        self._started = False

    def advance(
        self, f: np.ndarray, out: np.ndarray | None = None
    ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Modal (u, v, a), shape (n, L) each, at the samples of ``f`` but the last.

        Parameters
        ----------
        f : ndarray, shape (n, L + 1)
            Modal load per unit modal mass, m/s², at samples k0 … k0 + L; the
            first call starts at sample 0.
        out : ndarray, shape (n, s, L + 1), optional
            Work array for the states (the returned arrays may be views of it).
        """
        n, length = f.shape
        X = np.empty((n, self.bank.order, length)) if out is None else out
        if self._started:
            X[:, :, 0] = self._carry
            run_filters(self.bank, f[:, 1:], self.zi, self.components, out=X[:, :, 1:])
        else:
            run_filters(self.bank, f, self.zi, self.components, out=X)
            X[:, :, 0] = self.x0
            self._started = True
        self.method.complete_states(X, f, self.c, self.k, self.dt)
        self._carry = X[:, :, -1].copy()
        q, qd, qdd = self.method.modal_outputs(X, f, self.c, self.k, self.dt)
        # a diverging recurrence ends in inf or nan, which the sum carries
        if not (math.isfinite(float(q.sum())) and math.isfinite(float(qd.sum()))):
            raise StabilityError(
                f"{self.method.name}: the modal solution became non-finite; the run "
                "was stopped (reduce the time step)"
            )
        return q, qd, qdd


def modal_initial(
    M: np.ndarray, modes: Modes, u0: np.ndarray | None, v0: np.ndarray | None
) -> tuple[np.ndarray, np.ndarray]:
    """Modal coordinates (q0, q̇0) of the initial displacement (m) and velocity (m/s)."""
    phi = modes.shapes
    n = phi.shape[1]
    q0 = np.zeros(n) if u0 is None else phi.T @ (M @ u0)
    qd0 = np.zeros(n) if v0 is None else phi.T @ (M @ v0)
    return q0, qd0


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
        The same histories as ``method.integrate`` on the coupled system, to
        round-off; ``u``, ``v``, ``a`` are C-contiguous float64 arrays of shape
        (N, n), each written once by its back-transform product.
    """
    phi = modes.shapes
    n_steps, n = p.shape
    # Modal loads per unit modal mass, one contiguous row per mode, with one sample
    # past the end (explicit methods need the state after the last load).
    f_ext = np.empty((n, n_steps + 1))
    np.matmul(phi.T, p.T, out=f_ext[:, :n_steps])
    f_ext[:, n_steps] = f_ext[:, n_steps - 1]
    q0, qd0 = modal_initial(M, modes, u0, v0)
    filters = ModalFilters(method, modes, zetas, dt, q0, qd0, f_ext[:, 0])
    q, qd, qdd = filters.advance(f_ext)
    return Solution(q.T @ phi.T, qd.T @ phi.T, qdd.T @ phi.T)
