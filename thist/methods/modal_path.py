"""The fast path for linear, classically damped models: the method applied mode by mode.

For a classically damped linear model, a linear one-step method applied to the
coupled system equals the same method applied to each mode's equation
q̈ + 2ζωq̇ + ω²q = φᵀp (mass-normalised φ), to round-off: the method's update
is linear and the modes diagonalise M, C and K at once. Each mode's recurrence
(:meth:`Method.step_matrices`) runs, for a full-history run, in the compiled kernel of
:mod:`thist.methods.modal_kernel` when numba is available, else (and always for
chunked runs, :class:`ModalFilters`) as linear filters (:mod:`thist.methods.recurrence`);
the histories are transformed back with Φ.
"""

from __future__ import annotations

import math

import numpy as np

from thist.errors import InputError, StabilityError
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
        self.method = method
        self.dt = dt
        self.c, self.k, A, B0, B1, self.x0 = modal_recurrences(
            method, modes, zetas, dt, q0, qd0, f0
        )
        self.bank = filter_bank(A, B0, B1)
        self.components = method.filtered_components(self.bank.order)
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
        check_finite(self.method, q, qd)
        return q, qd, qdd


def modal_recurrences(
    method: Method,
    modes: Modes,
    zetas: np.ndarray,
    dt: float,
    q0: np.ndarray,
    qd0: np.ndarray,
    f0: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Each mode's recurrence ``x[k+1] = A x[k] + B0 f[k] + B1 f[k+1]`` and start.

    Parameters are those of :class:`ModalFilters`.

    Returns
    -------
    c, k : ndarray, shape (n,)
        Damping (1/s) and stiffness (1/s²) per unit modal mass.
    A : ndarray, shape (n, s, s)
    B0, B1 : ndarray, shape (n, s)
    x0 : ndarray, shape (n, s)
        Initial state of each mode.
    """
    w = np.asarray(modes.omegas, dtype=float)
    n = w.size
    c = 2.0 * np.asarray(zetas, dtype=float) * w
    k = w * w
    A, B0, B1 = method.step_matrices_many(np.ones(n), c, k, dt)
    x0 = np.stack(
        [method.initial_state(1.0, c[j], k[j], dt) @ (q0[j], qd0[j], f0[j]) for j in range(n)]
    )
    return c, k, A, B0, B1, x0


def check_finite(method: Method, q: np.ndarray, qd: np.ndarray) -> None:
    """Raise :class:`StabilityError` if a modal history holds inf or nan."""
    # a diverging recurrence ends in inf or nan, which the sum carries
    if not (math.isfinite(float(q.sum())) and math.isfinite(float(qd.sum()))):
        raise StabilityError(
            f"{method.name}: the modal solution became non-finite; the run "
            "was stopped (reduce the time step)"
        )


def use_kernel(compiled: bool | None) -> bool:
    """Whether a full-history modal run uses :mod:`thist.methods.modal_kernel`.

    Parameters
    ----------
    compiled : bool or None
        None: the kernel when numba is available (and ``THIST_NO_NUMBA`` is not
        set); True: require it; False: the lfilter path.
    """
    from thist.methods import modal_kernel

    if compiled is None:
        return modal_kernel.AVAILABLE
    if compiled and not modal_kernel.AVAILABLE:
        raise InputError(
            "the compiled modal kernel needs numba (pip install 'thist[fast]'), and "
            "THIST_NO_NUMBA must not be set",
            "compiled",
        )
    return bool(compiled)


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
    compiled: bool | None = None,
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
    compiled : bool, optional
        Run every mode's recurrence in the compiled kernel of
        :mod:`thist.methods.modal_kernel` (same recurrence, same results to
        round-off). Default: when numba is available and ``THIST_NO_NUMBA`` is
        not set; False forces the lfilter path (:class:`ModalFilters`).

    Returns
    -------
    Solution
        The same histories as ``method.integrate`` on the coupled system, to
        round-off; ``u``, ``v``, ``a`` are C-contiguous float64 arrays of shape
        (N, n).
    """
    phi = modes.shapes
    n_steps, n = p.shape
    q0, qd0 = modal_initial(M, modes, u0, v0)
    if use_kernel(compiled):
        from thist.methods.modal_kernel import modal_states

        # modal loads, one row of modes per sample, one sample past the end
        # (explicit methods need the state after the last load)
        g = np.empty((n_steps + 1, phi.shape[1]))
        np.matmul(p, phi, out=g[:n_steps])
        g[n_steps] = g[n_steps - 1]
        c, k, A, B0, B1, x0 = modal_recurrences(method, modes, zetas, dt, q0, qd0, g[0])
        # every component is stepped: the states are complete without complete_states
        X = modal_states(A, B0, B1, x0, g)
        # the methods read (n, s, L + 1) arrays: transposed views of the same memory,
        # whose outputs transpose to contiguous (N, n) operands of the back-transform
        q, qd, qdd = method.modal_outputs(X.transpose(2, 0, 1), g.T, c, k, dt)
        check_finite(method, q, qd)
        return Solution(q.T @ phi.T, qd.T @ phi.T, qdd.T @ phi.T)
    # The lfilter path: modal loads per unit modal mass, one contiguous row per
    # mode, with one sample past the end.
    f_ext = np.empty((n, n_steps + 1))
    np.matmul(phi.T, p.T, out=f_ext[:, :n_steps])
    f_ext[:, n_steps] = f_ext[:, n_steps - 1]
    filters = ModalFilters(method, modes, zetas, dt, q0, qd0, f_ext[:, 0])
    q, qd, qdd = filters.advance(f_ext)
    return Solution(q.T @ phi.T, qd.T @ phi.T, qdd.T @ phi.T)
