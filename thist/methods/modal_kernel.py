"""Compiled kernel of the modal path: every mode's one-step recurrence in one loop (numba).

A linear one-step method applied to one mode is the recurrence
``x[k+1] = A x[k] + B0 f[k] + B1 f[k+1]`` (:meth:`thist.methods.base.Method.step_matrices`).
:func:`modal_states` runs it for all modes and all samples in compiled code and
writes every state component, so the states come out complete (nothing is left for
:meth:`~thist.methods.base.Method.complete_states` to fill). The layout is
step-major, one contiguous row of modes per sample and component, so the method's
:meth:`~thist.methods.base.Method.modal_outputs` are contiguous (N, n) views and the
back-transform is a contiguous matrix product. The results agree with the filter
form of :mod:`thist.methods.recurrence` to round-off (same recurrence).

numba is optional: :data:`AVAILABLE` is False when it does not import or when the
environment variable ``THIST_NO_NUMBA`` is set to anything but ``""``/``"0"``;
the modal path then runs the filters of :mod:`thist.methods.recurrence`.
"""

from __future__ import annotations

import numpy as np

# one switch for every compiled kernel: numba imported (or the stand-in decorator)
# and THIST_NO_NUMBA honoured where the inelastic kernels decide it
from thist.methods.inelastic_kernel import AVAILABLE, njit

__all__ = ["AVAILABLE", "modal_states"]


def modal_states(
    A: np.ndarray, B0: np.ndarray, B1: np.ndarray, x0: np.ndarray, f: np.ndarray
) -> np.ndarray:
    """States of ``x[k+1] = A x[k] + B0 f[k] + B1 f[k+1]`` of every mode at every sample.

    Parameters
    ----------
    A : ndarray, shape (n, s, s)
        One-step amplification matrix of each mode.
    B0, B1 : ndarray, shape (n, s)
        Load vectors of each mode (start and end of the step).
    x0 : ndarray, shape (n, s)
        Initial state of each mode.
    f : ndarray, shape (L, n)
        Modal load per unit modal mass at L consecutive samples, m/s²
        (C-contiguous, one row of modes per sample).

    Returns
    -------
    ndarray, shape (s, L, n)
        Component c of the state of mode j at sample i in ``[c, i, j]``.
    """
    n, s = x0.shape
    X = np.empty((s, f.shape[0], n))
    X[:, 0, :] = x0.T
    if s == 2:
        _states_2(A, B0, B1, f, X)
    elif s == 3:
        _states_3(A, B0, B1, f, X)
    else:
        _states_any(A, B0, B1, f, X)
    return X


@njit(cache=True)
def _states_2(A, B0, B1, f, X):  # noqa: ANN001, ANN202 - see modal_states
    """:func:`modal_states` for two state components, unrolled (X[:, 0] given)."""
    length, n = X.shape[1], X.shape[2]
    for i in range(length - 1):
        for j in range(n):
            f0 = f[i, j]
            f1 = f[i + 1, j]
            x0, x1 = X[0, i, j], X[1, i, j]
            X[0, i + 1, j] = B0[j, 0] * f0 + B1[j, 0] * f1 + A[j, 0, 0] * x0 + A[j, 0, 1] * x1
            X[1, i + 1, j] = B0[j, 1] * f0 + B1[j, 1] * f1 + A[j, 1, 0] * x0 + A[j, 1, 1] * x1


@njit(cache=True)
def _states_3(A, B0, B1, f, X):  # noqa: ANN001, ANN202 - see modal_states
    """:func:`modal_states` for three state components, unrolled (X[:, 0] given)."""
    length, n = X.shape[1], X.shape[2]
    for i in range(length - 1):
        for j in range(n):
            f0 = f[i, j]
            f1 = f[i + 1, j]
            x0, x1, x2 = X[0, i, j], X[1, i, j], X[2, i, j]
            X[0, i + 1, j] = (
                B0[j, 0] * f0 + B1[j, 0] * f1 + A[j, 0, 0] * x0 + A[j, 0, 1] * x1 + A[j, 0, 2] * x2
            )
            X[1, i + 1, j] = (
                B0[j, 1] * f0 + B1[j, 1] * f1 + A[j, 1, 0] * x0 + A[j, 1, 1] * x1 + A[j, 1, 2] * x2
            )
            X[2, i + 1, j] = (
                B0[j, 2] * f0 + B1[j, 2] * f1 + A[j, 2, 0] * x0 + A[j, 2, 1] * x1 + A[j, 2, 2] * x2
            )


@njit(cache=True)
def _states_any(A, B0, B1, f, X):  # noqa: ANN001, ANN202 - see modal_states
    """:func:`modal_states` for any number of state components (X[:, 0] given)."""
    s, length, n = X.shape
    for i in range(length - 1):
        for j in range(n):
            f0 = f[i, j]
            f1 = f[i + 1, j]
            for c in range(s):
                acc = B0[j, c] * f0 + B1[j, c] * f1
                for d in range(s):
                    acc += A[j, c, d] * X[d, i, j]
                X[c, i + 1, j] = acc
