"""Linear recurrences at C speed: ``z[k+1] = Φ z[k] + g[k]`` by eigen-coordinates.

Every linear one-step method is such a recurrence. In the eigen-coordinates of Φ
each component is a first-order filter ``y[k+1] = λ y[k] + h[k]``, which
:func:`scipy.signal.lfilter` runs without a Python loop over the steps.
"""

from __future__ import annotations

import numpy as np
from scipy.signal import lfilter

#: Above this condition number of the eigenvector matrix (near-defective Φ) the
#: recurrence is run step by step instead, to keep round-off at machine level.
MAX_CONDITION = 1e8


def run_recurrence(Phi: np.ndarray, g: np.ndarray, z0: np.ndarray) -> np.ndarray:
    """All states of ``z[k+1] = Phi z[k] + g[k]`` from ``z0``.

    Parameters
    ----------
    Phi : ndarray, shape (s, s)
        One-step transition (amplification) matrix.
    g : ndarray, shape (N - 1, s)
        Load term of each step.
    z0 : ndarray, shape (s,)
        Initial state.

    Returns
    -------
    ndarray, shape (N, s)
        z[0] … z[N − 1].
    """
    lam, V = np.linalg.eig(Phi)
    if np.linalg.cond(V) < MAX_CONDITION:
        Vinv = np.linalg.inv(V)
        y0 = Vinv @ z0
        h = g @ Vinv.T
        y = np.empty((g.shape[0] + 1, z0.size), dtype=complex)
        y[0] = y0
        for j in range(z0.size):  # one C-speed filter per eigen-coordinate
            y[1:, j], _ = lfilter([1.0], [1.0, -lam[j]], h[:, j], zi=[lam[j] * y0[j]])
        return (y @ V.T).real
    z = np.empty((g.shape[0] + 1, z0.size))
    z[0] = z0
    for k in range(g.shape[0]):
        z[k + 1] = Phi @ z[k] + g[k]
    return z
