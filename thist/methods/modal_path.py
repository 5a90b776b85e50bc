"""The fast path for linear, classically damped models: the method applied mode by mode.

For a classically damped linear model, a linear one-step method applied to the
coupled system equals the same method applied to each mode's equation
q̈ + 2ζωq̇ + ω²q = φᵀp (mass-normalised φ), to round-off: the method's update
is linear and the modes diagonalise M, C and K at once. Each mode is a recurrence
``x[k+1] = A x[k] + B0 f[k] + B1 f[k+1]`` (:meth:`Method.step_matrices`) with a
linear read-out ``(q, q̇, q̈)[k] = D x[k] + E0 f[k] + E1 f[k+1]``
(:func:`output_map`, from the method's own :meth:`Method.modal_outputs`).
:class:`ModalStepper` runs them chunk by chunk of samples, in the compiled kernel of
:mod:`thist.methods.modal_kernel` when numba is available, else as linear filters
(:mod:`thist.methods.recurrence`), and transforms back with Φ.

Sub-stepping: a method stepping at Δt/r under a load linear between samples (a
record interpolated to the finer step) has, from sample to sample, a recurrence of
the same form (:func:`thist.methods.recurrence.fold_substeps`). Folded in, r
sub-steps per sample cost what one step costs, and the histories are those of the
step-by-step run at Δt/r, read at the samples.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from thist.errors import InputError, StabilityError
from thist.methods.base import Method, Solution, substep_count
from thist.methods.recurrence import (
    filter_bank,
    fold_substeps,
    initial_conditions,
    run_filters,
)
from thist.modal import Modes


@dataclass(frozen=True, eq=False)
class ModalRecurrence:
    """Every mode's one-sample recurrence and read-out (unit modal masses).

    Attributes
    ----------
    A : ndarray, shape (n, s, s)
    B0, B1 : ndarray, shape (n, s)
        ``x[k+1] = A x[k] + B0 f[k] + B1 f[k+1]`` from sample to sample.
    D : ndarray, shape (n, 3, s)
    E0, E1 : ndarray, shape (n, 3)
        ``(q, q̇, q̈)[k] = D x[k] + E0 f[k] + E1 f[k+1]``.
    c, k : ndarray, shape (n,)
        Damping (1/s) and stiffness (1/s²) per unit modal mass.
    step : float
        The method's own step, s (the sample step over the sub-steps).
    direct : bool
        The read-out of the first min(s, 3) outputs is the state itself (D = I
        there, no load terms): the Newmark family's (u, v, a), the exact method's
        (u, v). The engines skip that arithmetic.
    """

    A: np.ndarray
    B0: np.ndarray
    B1: np.ndarray
    D: np.ndarray
    E0: np.ndarray
    E1: np.ndarray
    c: np.ndarray
    k: np.ndarray
    step: float
    direct: bool


def output_map(
    method: Method,
    c: np.ndarray,
    k: np.ndarray,
    dt: float,
    A: np.ndarray,
    B0: np.ndarray,
    B1: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The read-out ``(q, q̇, q̈)[k] = D x[k] + E0 f[k] + E1 f[k+1]`` of each mode.

    :meth:`Method.modal_outputs` is linear in the states at samples k and k+1 and
    the loads at both; it is evaluated on unit inputs (one probe per input, all
    modes at once), and the state at k+1 is replaced by the recurrence
    ``A x[k] + B0 f[k] + B1 f[k+1]``.

    Parameters
    ----------
    method : Method
    c, k : ndarray, shape (n,)
        Damping (1/s) and stiffness (1/s²) per unit modal mass.
    dt : float
        The method's step, s.
    A, B0, B1 : ndarrays, shapes (n, s, s), (n, s), (n, s)
        The method's step matrices for these modes at ``dt``.

    Returns
    -------
    (D, E0, E1) : ndarrays, shapes (n, 3, s), (n, 3), (n, 3)
    """
    n, s = B0.shape
    probes = 2 * s + 2  # x[k] components, x[k+1] components, f[k], f[k+1]
    X = np.zeros((probes, n, s, 2))
    f = np.zeros((probes, n, 2))
    for i in range(s):
        X[i, :, i, 0] = 1.0
        X[s + i, :, i, 1] = 1.0
    f[2 * s, :, 0] = 1.0
    f[2 * s + 1, :, 1] = 1.0
    outs = method.modal_outputs(
        X.reshape(probes * n, s, 2), f.reshape(probes * n, 2), np.tile(c, probes),
        np.tile(k, probes), dt,
    )  # fmt: skip
    W = np.stack([o[:, 0] for o in outs], axis=1).reshape(probes, n, 3).transpose(1, 2, 0)
    D1 = W[:, :, s : 2 * s]
    D = W[:, :, :s] + D1 @ A
    E0 = W[:, :, 2 * s] + np.einsum("nos,ns->no", D1, B0)
    E1 = W[:, :, 2 * s + 1] + np.einsum("nos,ns->no", D1, B1)
    return D, E0, E1


def modal_recurrence(
    method: Method, modes: Modes, zetas: np.ndarray, dt: float, substeps: int = 1
) -> ModalRecurrence:
    """Each mode's recurrence and read-out from sample to sample.

    The parameters are those of :class:`ModalStepper`: the method steps at
    ``dt / substeps`` (s) and the recurrence goes from one sample to the next.
    """
    w = np.asarray(modes.omegas, dtype=float)
    c = 2.0 * np.asarray(zetas, dtype=float) * w
    k = w * w
    h = dt / substeps
    A, B0, B1 = method.step_matrices_many(np.ones(w.size), c, k, h)
    D, E0, E1 = output_map(method, c, k, h, A, B0, B1)
    if substeps > 1:
        # read-outs use the load one sub-step after the sample, (1 − 1/r) f[k] + f[k+1]/r
        E0 = E0 + E1 * (1.0 - 1.0 / substeps)
        E1 = E1 / substeps
        A, B0, B1 = fold_substeps(A, B0, B1, substeps)
    m = min(D.shape[2], 3)
    direct = bool(
        (D[:, :m, :] == np.eye(m, D.shape[2])).all() and not E0[:, :m].any() and not E1[:, :m].any()
    )
    return ModalRecurrence(A, B0, B1, D, E0, E1, c, k, h, direct)


class ModalStepper:
    """The modal recurrences of one run, advanced chunk by chunk of samples.

    Parameters
    ----------
    method : Method
    modes : Modes
        Undamped modes of (M, K), mass-normalised shapes.
    zetas : ndarray, shape (n,)
        Damping ratio of each mode.
    dt : float
        Sample step, s.
    q0, qd0 : ndarray, shape (n,)
        Initial modal displacement (m·kg^½) and velocity.
    f0 : ndarray, shape (n,)
        Modal load per unit modal mass at the first sample, m/s².
    substeps : int
        Method steps per sample.
    compiled : bool, optional
        See :func:`use_kernel`.

    Notes
    -----
    :meth:`advance` takes the loads at samples k0 … k0 + L (the first call starts
    at sample 0; each next call starts where the last one stopped) and writes the
    physical (u, v, a) at k0 … k0 + L − 1. The state is carried from chunk to chunk,
    so the samples come out the same whatever the chunk length.
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
        *,
        substeps: int = 1,
        compiled: bool | None = None,
    ):
        self.method = method
        self.rec = rec = modal_recurrence(method, modes, zetas, dt, substep_count(substeps))
        self.x = np.stack(
            [
                method.initial_state(1.0, rec.c[j], rec.k[j], rec.step) @ (q0[j], qd0[j], f0[j])
                for j in range(rec.c.size)
            ]
        )
        self.phi_t = np.ascontiguousarray(modes.shapes.T)
        self.compiled = use_kernel(compiled)
        if not self.compiled:
            self.bank = filter_bank(rec.A, rec.B0, rec.B1)
            self.zi = initial_conditions(self.bank, self.x, np.asarray(f0, dtype=float))
            self._first = True

    def advance(
        self, P: np.ndarray, W: np.ndarray, out: np.ndarray, length: int, start: int = 0
    ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Write the physical (u, v, a) at L samples into ``out``.

        Parameters
        ----------
        P : ndarray, shape (L + 1, m) or (L, m)
            Loads at samples k0 … k0 + L; with L rows the load is held after the
            last (the end of the record).
        W : ndarray, shape (m, n)
            Map from a row of ``P`` to the modal loads per unit modal mass, m/s²
            (Φ for nodal loads in N; the row −Γ for a base acceleration column).
        out : ndarray, shape (3, N, d)
            Receives u (m), v (m/s), a (m/s²) relative to the base in
            ``out[:, start : start + L]`` (C-contiguous).
        length : int
            Number of samples L.
        start : int
            First sample of ``out`` written.

        Returns
        -------
        (u, v, a) : ndarrays, shape (L, d)
            Views of ``out``.

        Raises
        ------
        StabilityError
            A modal history became non-finite.
        """
        rec = self.rec
        P = np.ascontiguousarray(P, dtype=float)
        W = np.ascontiguousarray(W, dtype=float)
        if self.compiled:
            from thist.methods.modal_kernel import modal_histories

            finite = modal_histories(
                rec.A, rec.B0, rec.B1, rec.D, rec.E0, rec.E1, rec.direct, self.x, P, W,
                self.phi_t, out, start, length,
            )  # fmt: skip
        else:
            F = np.empty((W.shape[1], length + 1))
            np.matmul(W.T, P[: length + 1].T, out=F[:, : min(length + 1, P.shape[0])])
            F[:, P.shape[0] :] = F[:, P.shape[0] - 1 : P.shape[0]]  # held after the last
            X = run_filters(self.bank, F[:, :length], self.zi)
            if self._first:
                X[:, :, 0] = self.x
                self._first = False
            finite = math.isfinite(float(X.sum()))
            f0, f1 = F[:, :length], F[:, 1:]
            for c in range(3):
                # the read-out of every mode at every sample of the chunk, (n, L)
                if rec.direct and c < X.shape[1]:
                    y = X[:, c]
                else:
                    y = rec.E0[:, c, None] * f0 + rec.E1[:, c, None] * f1
                    for d in range(X.shape[1]):
                        y += rec.D[:, c, d, None] * X[:, d]
                np.matmul(y.T, self.phi_t, out=out[c, start : start + length])
        if not finite:
            raise StabilityError(
                f"{self.method.name}: the modal solution became non-finite; the run "
                "was stopped (reduce the time step)"
            )
        return (
            out[0, start : start + length],
            out[1, start : start + length],
            out[2, start : start + length],
        )


def use_kernel(compiled: bool | None) -> bool:
    """Whether a modal run uses the compiled kernel of :mod:`thist.methods.modal_kernel`.

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
            "the compiled modal kernel needs numba (a dependency of thist that did not "
            "import here), and THIST_NO_NUMBA must not be set",
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
    *,
    substeps: int = 1,
    to_modal: np.ndarray | None = None,
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
    p : ndarray, shape (N, n), or (N, m) with ``to_modal``
        Load, N, at N samples ``dt`` apart, linear in between.
    dt : float
        Sample step, s.
    u0, v0 : ndarray, shape (n,), optional
        Initial displacement (m) and velocity (m/s); rest by default.
    compiled : bool, optional
        Run in the compiled kernel of :mod:`thist.methods.modal_kernel` (same
        recurrence, same results to round-off). Default: when numba is available
        and ``THIST_NO_NUMBA`` is not set; False forces the lfilter path.
    substeps : int
        Method steps per sample: the method steps at ``dt / substeps`` and the
        histories are read at the samples (the step-by-step run at the finer step
        under the linearly interpolated load, one sample in ``substeps``).
    to_modal : ndarray, shape (m, n), optional
        Map from a row of ``p`` to the modal loads per unit modal mass, m/s²:
        Φ (the default) for nodal loads; for a base acceleration ü_g pass
        ``p = ü_g[:, None]`` (m/s²) and the row ``−Γ`` (Γ = ΦᵀMr), which avoids
        forming the (N, n) load.

    Returns
    -------
    Solution
        The same histories as ``method.integrate`` on the coupled system, to
        round-off; ``u``, ``v``, ``a`` are C-contiguous float64 arrays of shape
        (N, n), views of one (3, N, n) block.
    """
    phi = modes.shapes
    W = phi if to_modal is None else np.atleast_2d(np.asarray(to_modal, dtype=float))
    p = np.ascontiguousarray(p, dtype=float)
    n_steps = p.shape[0]
    q0, qd0 = modal_initial(M, modes, u0, v0)
    stepper = ModalStepper(
        method, modes, zetas, dt, q0, qd0, p[0] @ W, substeps=substeps, compiled=compiled
    )
    out = np.empty((3, n_steps, phi.shape[0]))
    stepper.advance(p, W, out, n_steps)  # the load is held after the record ends
    return Solution(out[0], out[1], out[2])
