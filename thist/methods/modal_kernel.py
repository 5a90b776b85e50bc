"""Compiled kernel of the modal path: recurrence, read-out and back-transform in one pass (numba).

A linear one-step method applied to one mode is the recurrence
``x[k+1] = A x[k] + B0 f[k] + B1 f[k+1]`` (:meth:`thist.methods.base.Method.step_matrices`),
and the mode's displacement, velocity and acceleration at sample k are a linear
read-out ``y[k] = D x[k] + E0 f[k] + E1 f[k+1]`` of the state and the loads
(:func:`thist.methods.modal_path.output_map`). :func:`modal_histories` runs both
for all modes, a block of samples at a time, and multiplies each block by the mode
shapes into the physical histories, so nothing of the size of the record is
allocated but the histories themselves:

1. modal loads of the block, ``F = P W`` (one BLAS product; for a base
   acceleration P is the record as a column and W the row −Γ, so this is cheap);
2. each mode's recurrence and read-out over the block, mode by mode, its state
   held in registers (unrolled for two and three state components);
3. ``u, v, a = Y Φᵀ`` for the block (three BLAS products).

The state is advanced in place, so a run may be split into consecutive chunks of
samples with the same results (peaks-only runs, :mod:`thist.peaks`). The results
agree with the filter form of :mod:`thist.methods.recurrence` to round-off (same
recurrence, same read-out).

:data:`AVAILABLE` is False when numba does not import or when the environment
variable ``THIST_NO_NUMBA`` is set to anything but ``""``/``"0"``; the modal path
then runs the filters of :mod:`thist.methods.recurrence` (same results to round-off).
"""

from __future__ import annotations

import numpy as np

# one switch for every compiled kernel: numba imported (or the stand-in decorator)
# and THIST_NO_NUMBA honoured where the inelastic kernels decide it
from thist.methods.inelastic_kernel import AVAILABLE, njit

__all__ = ["AVAILABLE", "BLOCK", "modal_histories"]

#: Samples per block: the block's modal loads and read-outs (about 160 kB for ten
#: modes) stay in cache between the recurrence and the back-transform.
BLOCK = 512


def modal_histories(
    A: np.ndarray,
    B0: np.ndarray,
    B1: np.ndarray,
    D: np.ndarray,
    E0: np.ndarray,
    E1: np.ndarray,
    direct: bool,
    x: np.ndarray,
    P: np.ndarray,
    W: np.ndarray,
    phi_t: np.ndarray,
    out: np.ndarray,
    start: int,
    length: int,
) -> bool:
    """Physical (u, v, a) at L samples of every mode's recurrence; advances ``x`` in place.

    Parameters
    ----------
    A : ndarray, shape (n, s, s)
        One-step amplification matrix of each mode.
    B0, B1 : ndarray, shape (n, s)
        Load vectors of each mode (start and end of the step).
    D : ndarray, shape (n, 3, s)
        Read-out of (u, v, a) from the state.
    E0, E1 : ndarray, shape (n, 3)
        Read-out of (u, v, a) from the loads at the sample and the next one.
    direct : bool
        The read-out of the first min(s, 3) outputs is the state itself (D = I
        there, no load terms); those multiply-adds are skipped.
    x : ndarray, shape (n, s)
        State of each mode at the first sample; on return, at the sample after the
        last one written (the start of a following chunk).
    P : ndarray, shape (L + 1, m) or (L, m)
        Loads at the L output samples and the next one (C-contiguous); with L
        rows, the load is held after the last.
    W : ndarray, shape (m, n)
        Map from a row of ``P`` to the modal loads per unit modal mass, m/s²
        (``F = P W``).
    phi_t : ndarray, shape (n, d)
        Transposed mass-normalised mode shapes (C-contiguous).
    out : ndarray, shape (3, N, d)
        Receives u (m), v (m/s) and a (m/s²) relative to the base in
        ``out[:, start : start + L]`` (C-contiguous).
    start : int
        First sample of ``out`` written.
    length : int
        Number of samples L written.

    Returns
    -------
    bool
        False if a state became non-finite (a diverging recurrence).
    """
    return _drive(direct, A, B0, B1, D, E0, E1, x, P, W, phi_t, out, start, length, BLOCK)


@njit(cache=True)
def _drive(direct, A, B0, B1, D, E0, E1, x, P, W, phi_t, out, start, length, block):  # noqa: ANN001, ANN202
    """Block loop of :func:`modal_histories` (the step functions are globals, not
    arguments: numba caches only functions that take no functions)."""
    s = x.shape[1]
    n = W.shape[1]
    block = max(1, min(block, length))  # work arrays no longer than the chunk
    F = np.empty((block + 1, n))
    Y = np.empty((3, block, n))
    for i0 in range(0, length, block):
        count = min(block, length - i0)
        rows = min(count + 1, P.shape[0] - i0)
        np.dot(P[i0 : i0 + rows], W, F[:rows])
        F[rows : count + 1] = F[rows - 1]  # the load held after the last row
        if s == 2:
            _steps_2(A, B0, B1, D, E0, E1, x, F, Y, count, direct)
        elif s == 3:
            _steps_3(A, B0, B1, D, E0, E1, x, F, Y, count, direct)
        else:
            _steps_any(A, B0, B1, D, E0, E1, x, F, Y, count, direct)
        for c in range(3):
            np.dot(Y[c, :count], phi_t, out[c, start + i0 : start + i0 + count])
        if not np.all(np.isfinite(x)):
            return False
    return True


# Each mode's steps are sequential, so the recurrence is bound by the latency of its
# arithmetic, not by throughput. Two things shorten the chain: the state update sums
# the load terms first and the term in x[0] last (one fused multiply-add, not three,
# between successive states), and two modes are stepped side by side in one loop
# (an odd last mode is paired with itself: the same values written twice).


@njit(cache=True, fastmath={"contract"}, inline="always")
def _coefficients_2(A, B0, B1, D, E0, E1, j):  # noqa: ANN001, ANN202
    """Mode j's recurrence and read-out coefficients, two state components."""
    return (
        (A[j, 0, 0], A[j, 0, 1], A[j, 1, 0], A[j, 1, 1]),
        (B0[j, 0], B0[j, 1], B1[j, 0], B1[j, 1]),
        (D[j, 0, 0], D[j, 0, 1], D[j, 1, 0], D[j, 1, 1], D[j, 2, 0], D[j, 2, 1]),
        (E0[j, 0], E0[j, 1], E0[j, 2], E1[j, 0], E1[j, 1], E1[j, 2]),
    )


@njit(cache=True, fastmath={"contract"}, inline="always")
def _step_2(c, x0, x1, f0, f1, Y, b, j, direct):  # noqa: ANN001, ANN202
    """Read-out of mode j at sample b into Y, and its next state (two components)."""
    a, p, d, e = c
    if direct:
        Y[0, b, j] = x0
        Y[1, b, j] = x1
    else:
        Y[0, b, j] = (e[0] * f0 + e[3] * f1) + d[1] * x1 + d[0] * x0
        Y[1, b, j] = (e[1] * f0 + e[4] * f1) + d[3] * x1 + d[2] * x0
    Y[2, b, j] = (e[2] * f0 + e[5] * f1) + d[5] * x1 + d[4] * x0
    y0 = (p[0] * f0 + p[2] * f1) + a[1] * x1 + a[0] * x0
    y1 = (p[1] * f0 + p[3] * f1) + a[2] * x0 + a[3] * x1
    return y0, y1


@njit(cache=True, fastmath={"contract"})
def _steps_2(A, B0, B1, D, E0, E1, x, F, Y, count, direct):  # noqa: ANN001, ANN202
    """``count`` steps of every mode, two state components, modes in pairs.

    ``direct``: the read-out of u and v is the state itself (D rows 0, 1 = I, no load).
    """
    n = A.shape[0]
    for j in range(0, n, 2):
        k = min(j + 1, n - 1)
        cj = _coefficients_2(A, B0, B1, D, E0, E1, j)
        ck = _coefficients_2(A, B0, B1, D, E0, E1, k)
        x0, x1 = x[j, 0], x[j, 1]
        z0, z1 = x[k, 0], x[k, 1]
        for b in range(count):
            x0, x1 = _step_2(cj, x0, x1, F[b, j], F[b + 1, j], Y, b, j, direct)
            z0, z1 = _step_2(ck, z0, z1, F[b, k], F[b + 1, k], Y, b, k, direct)
        x[k, 0], x[k, 1] = z0, z1
        x[j, 0], x[j, 1] = x0, x1


@njit(cache=True, fastmath={"contract"}, inline="always")
def _coefficients_3(A, B0, B1, D, E0, E1, j):  # noqa: ANN001, ANN202
    """Mode j's recurrence and read-out coefficients, three state components."""
    return (
        (A[j, 0, 0], A[j, 0, 1], A[j, 0, 2], A[j, 1, 0], A[j, 1, 1], A[j, 1, 2]),
        (A[j, 2, 0], A[j, 2, 1], A[j, 2, 2]),
        (B0[j, 0], B0[j, 1], B0[j, 2], B1[j, 0], B1[j, 1], B1[j, 2]),
        (D[j, 0, 0], D[j, 0, 1], D[j, 0, 2], D[j, 1, 0], D[j, 1, 1], D[j, 1, 2]),
        (D[j, 2, 0], D[j, 2, 1], D[j, 2, 2]),
        (E0[j, 0], E0[j, 1], E0[j, 2], E1[j, 0], E1[j, 1], E1[j, 2]),
    )


@njit(cache=True, fastmath={"contract"}, inline="always")
def _step_3(c, x0, x1, x2, f0, f1, Y, b, j, direct):  # noqa: ANN001, ANN202
    """Read-out of mode j at sample b into Y, and its next state (three components)."""
    a, a2, p, d, d2, e = c
    if direct:
        Y[0, b, j] = x0
        Y[1, b, j] = x1
        Y[2, b, j] = x2
    else:
        Y[0, b, j] = (e[0] * f0 + e[3] * f1) + d[2] * x2 + d[1] * x1 + d[0] * x0
        Y[1, b, j] = (e[1] * f0 + e[4] * f1) + d[5] * x2 + d[4] * x1 + d[3] * x0
        Y[2, b, j] = (e[2] * f0 + e[5] * f1) + d2[2] * x2 + d2[1] * x1 + d2[0] * x0
    y0 = (p[0] * f0 + p[3] * f1) + a[2] * x2 + a[1] * x1 + a[0] * x0
    y1 = (p[1] * f0 + p[4] * f1) + a[5] * x2 + a[3] * x0 + a[4] * x1
    y2 = (p[2] * f0 + p[5] * f1) + a2[0] * x0 + a2[1] * x1 + a2[2] * x2
    return y0, y1, y2


@njit(cache=True, fastmath={"contract"})
def _steps_3(A, B0, B1, D, E0, E1, x, F, Y, count, direct):  # noqa: ANN001, ANN202
    """``count`` steps of every mode, three state components, modes in pairs.

    ``direct``: the read-out of (u, v, a) is the state itself (D = I, no load).
    """
    n = A.shape[0]
    for j in range(0, n, 2):
        k = min(j + 1, n - 1)
        cj = _coefficients_3(A, B0, B1, D, E0, E1, j)
        ck = _coefficients_3(A, B0, B1, D, E0, E1, k)
        x0, x1, x2 = x[j, 0], x[j, 1], x[j, 2]
        z0, z1, z2 = x[k, 0], x[k, 1], x[k, 2]
        for b in range(count):
            x0, x1, x2 = _step_3(cj, x0, x1, x2, F[b, j], F[b + 1, j], Y, b, j, direct)
            z0, z1, z2 = _step_3(ck, z0, z1, z2, F[b, k], F[b + 1, k], Y, b, k, direct)
        x[k, 0], x[k, 1], x[k, 2] = z0, z1, z2
        x[j, 0], x[j, 1], x[j, 2] = x0, x1, x2


@njit(cache=True)
def _steps_any(A, B0, B1, D, E0, E1, x, F, Y, count, direct):  # noqa: ANN001, ANN202
    """``count`` steps of every mode for any number of state components (``direct``
    unused: the read-out is always evaluated)."""
    n, s = x.shape
    xn = np.empty(s)
    for j in range(n):
        for b in range(count):
            f0 = F[b, j]
            f1 = F[b + 1, j]
            for c in range(3):
                acc = E0[j, c] * f0 + E1[j, c] * f1
                for d in range(s):
                    acc += D[j, c, d] * x[j, d]
                Y[c, b, j] = acc
            for c in range(s):
                acc = B0[j, c] * f0 + B1[j, c] * f1
                for d in range(s):
                    acc += A[j, c, d] * x[j, d]
                xn[c] = acc
            x[j, :] = xn
