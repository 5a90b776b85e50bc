"""Linear recurrences at C speed: ``z[k+1] = Φ z[k] + g[k]`` by eigen-coordinates.

Every linear one-step method is such a recurrence. In the eigen-coordinates of Φ
each component is a first-order filter ``y[k+1] = λ y[k] + h[k]``, which
:func:`scipy.signal.lfilter` runs without a Python loop over the steps.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.signal import lfilter

try:  # the C routine behind lfilter: same arithmetic, without ~20 µs of argument checks
    from scipy.signal._sigtools import _linear_filter
except ImportError:  # pragma: no cover - a scipy that moved it: the public function
    _linear_filter = None


def _filter(b: np.ndarray, a: np.ndarray, x: np.ndarray, zi: np.ndarray):
    """``lfilter(b, a, x, zi=zi)`` for 1-D float64 arrays with ``a[0] == 1``."""
    if _linear_filter is not None:
        return _linear_filter(b, a, x, -1, zi)
    return lfilter(b, a, x, zi=zi)


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
        # Real and imaginary parts as real products: numpy's mixed real-complex
        # matrix product is an order of magnitude slower.
        h = g @ Vinv.T.real + 1j * (g @ Vinv.T.imag)
        y = np.empty((g.shape[0] + 1, z0.size), dtype=complex)
        y[0] = y0
        for j in range(z0.size):  # one C-speed filter per eigen-coordinate
            y[1:, j], _ = lfilter([1.0], [1.0, -lam[j]], h[:, j], zi=[lam[j] * y0[j]])
        return y.real @ V.T.real - y.imag @ V.T.imag
    z = np.empty((g.shape[0] + 1, z0.size))
    z[0] = z0
    for k in range(g.shape[0]):
        z[k + 1] = Phi @ z[k] + g[k]
    return z


def fold_substeps(
    A: np.ndarray, B0: np.ndarray, B1: np.ndarray, r: int
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """r steps of ``x[m+1] = A x[m] + B0 f[m] + B1 f[m+1]`` as one step of the same form.

    With the load linear between two samples f_K and f_K+1 (so at sub-step m of r,
    f = (1 − m/r) f_K + (m/r) f_K+1, the load model of a record interpolated to a
    finer step), the state after r sub-steps is

        x[K+1] = Aʳ x[K] + C0 f_K + C1 f_K+1,
        C0 = Σ_m A^(r−1−m) (B0 (1 − m/r) + B1 (1 − (m+1)/r)),
        C1 = Σ_m A^(r−1−m) (B0 m/r + B1 (m+1)/r),

    exactly (to round-off) the states of the step-by-step run at Δt/r, one in r.

    Parameters
    ----------
    A : ndarray, shape (n, s, s)
    B0, B1 : ndarray, shape (n, s)
        Recurrence of each of n systems at the sub-step.
    r : int
        Sub-steps per sample, ≥ 1.

    Returns
    -------
    (Ar, C0, C1) : ndarrays, shapes (n, s, s), (n, s), (n, s)
    """
    n, s, _ = A.shape
    # Columns [Aᵐ | C0 | C1] of x[m] = Aᵐ x[0] + C0 f_K + C1 f_K+1, advanced one
    # sub-step at a time: x[m+1] = A x[m] + B0 f[m] + B1 f[m+1]. The load terms of
    # sub-step m, B0 f[m] + B1 f[m+1], are linear in m: formed for all m at once.
    w = np.arange(r)[:, None, None] / r
    step = np.empty((r, n, s, 2))
    step[..., 0] = B0 * (1.0 - w) + B1 * (1.0 - w - 1.0 / r)
    step[..., 1] = B0 * w + B1 * (w + 1.0 / r)
    X = np.zeros((n, s, s + 2))
    X[:, :, :s] = np.eye(s)
    for m in range(r):
        X = A @ X
        X[:, :, s:] += step[m]
    return X[:, :, :s].copy(), X[:, :, s].copy(), X[:, :, s + 1].copy()


def characteristic_polynomials(A: np.ndarray) -> np.ndarray:
    """Coefficients [1, d1, …, ds] of det(zI − A) for a stack of matrices (n, s, s).

    Closed forms for s ≤ 3 (trace, principal minors, determinant); ``np.poly``
    otherwise.
    """
    n, s, _ = A.shape
    tr = np.trace(A, axis1=1, axis2=2)
    if s == 1:
        return np.stack([np.ones(n), -tr], axis=1)
    det = np.linalg.det(A)
    if s == 2:
        return np.stack([np.ones(n), -tr, det], axis=1)
    if s == 3:
        minors = 0.5 * (tr**2 - np.trace(A @ A, axis1=1, axis2=2))
        return np.stack([np.ones(n), -tr, minors, -det], axis=1)
    return np.stack([np.real(np.poly(a)) for a in A])


def transfer_numerators(A: np.ndarray, B: np.ndarray, den: np.ndarray) -> np.ndarray:
    """Numerators of (zI − A)⁻¹ B, in powers of z⁻¹, from Markov parameters, for a stack.

    With h_m = A^(m−1) B (m ≥ 1) and ``den`` = [1, d1, …, ds] the characteristic
    polynomial of A, the numerator coefficients are n_j = Σ_{i=1..j} d_(j−i) h_i,
    n_0 = 0 (the strictly proper part of a state-space system; e.g. Oppenheim &
    Schafer, *Discrete-Time Signal Processing*, 3rd ed., 2010, §6.5).

    Parameters
    ----------
    A : ndarray, shape (n, s, s)
    B : ndarray, shape (n, s)
    den : ndarray, shape (n, s + 1)

    Returns
    -------
    ndarray, shape (n, s, s + 1)
        One numerator per state component.
    """
    n, s, _ = A.shape
    h = np.empty((s + 1, n, s))
    h[0] = 0.0
    h[1] = B
    for m in range(2, s + 1):
        h[m] = np.einsum("nij,nj->ni", A, h[m - 1])
    num = np.zeros((n, s, s + 1))
    for j in range(1, s + 1):
        for i in range(1, j + 1):
            num[:, :, j] += den[:, j - i, None] * h[i]
    return num


@dataclass(frozen=True, eq=False)
class FilterBank:
    """The recurrences of n independent one-load systems as real rational filters.

    ``x[k+1] = A x[k] + B0 f[k] + B1 f[k+1]`` becomes, with ``y = x − B1 f``,
    ``y[k+1] = A y[k] + B f[k]`` (``B = A B1 + B0``): every state component is
    ``Y_c(z) = (N_c(z) F(z) + Z_c(z)) / D(z)`` with ``D`` the characteristic
    polynomial of ``A`` (:func:`characteristic_polynomials`), ``N_c`` from the
    Markov parameters (:func:`transfer_numerators`) and ``Z_c`` the free response
    of the initial state. :func:`scipy.signal.lfilter` runs ``N_c / D`` with
    ``Z_c`` as its initial conditions ``zi`` (in the transposed direct form the
    zero-input response of ``zi`` is exactly ``Z_c / D``), so one call per mode and
    component does the whole work at C speed, and the final ``zi`` it returns
    continues the run exactly in the next chunk of samples.

    Attributes
    ----------
    A : ndarray, shape (n, s, s)
    B1 : ndarray, shape (n, s)
    den : ndarray, shape (n, s + 1)
        Characteristic polynomial of each ``A``, in powers of z⁻¹.
    num : ndarray, shape (n, s, s + 1)
        Numerator of each state component's transfer function from the load.
    """

    A: np.ndarray
    B1: np.ndarray
    den: np.ndarray
    num: np.ndarray

    @property
    def num_total(self) -> np.ndarray:
        """Numerators of ``x`` itself: ``N_c + B1_c D`` (the feed-through folded in)."""
        return self.num + self.B1[:, :, None] * self.den[:, None, :]

    @property
    def order(self) -> int:
        """Number of state components s."""
        return self.A.shape[1]


def filter_bank(A: np.ndarray, B0: np.ndarray, B1: np.ndarray) -> FilterBank:
    """Filters of ``x[k+1] = A x[k] + B0 f[k] + B1 f[k+1]`` for a stack of systems.

    Parameters
    ----------
    A : ndarray, shape (n, s, s)
    B0, B1 : ndarray, shape (n, s)
    """
    den = characteristic_polynomials(A)
    num = transfer_numerators(A, np.einsum("nij,nj->ni", A, B1) + B0, den)
    return FilterBank(A, B1, den, num)


def initial_conditions(bank: FilterBank, x0: np.ndarray, f0: np.ndarray) -> np.ndarray:
    """``zi`` of every mode and component that starts the filters in state ``x0``.

    Parameters
    ----------
    bank : FilterBank
    x0 : ndarray, shape (n, s)
        Initial states.
    f0 : ndarray, shape (n,)
        Load at the first sample.

    Returns
    -------
    ndarray, shape (n, s, s)
        The coefficients of ``Z_c`` (the free response numerators).
    """
    num_0 = transfer_numerators(bank.A, x0 - bank.B1 * f0[:, None], bank.den)
    return np.ascontiguousarray(num_0[:, :, 1:])


def run_filters(
    bank: FilterBank,
    f: np.ndarray,
    zi: np.ndarray,
    out: np.ndarray | None = None,
) -> np.ndarray:
    """States ``x`` of every system at the samples of ``f``; advances ``zi`` in place.

    Parameters
    ----------
    bank : FilterBank
    f : ndarray, shape (n, L)
        Load of each system at L consecutive samples.
    zi : ndarray, shape (n, s, s)
        Filter conditions at the first of these samples (from
        :func:`initial_conditions` or a previous call); overwritten with those
        after the last sample, so that the next call continues the run.
    out : ndarray, shape (n, s, L), optional
        Where to write the states.

    Returns
    -------
    ndarray, shape (n, s, L)
    """
    n, length = f.shape
    if out is None:
        out = np.empty((n, bank.order, length))
    den, num = bank.den, bank.num_total
    for i in range(n):  # one C-speed filter per mode and state component
        fi = np.ascontiguousarray(f[i])
        for c in range(bank.order):
            out[i, c], zi[i, c] = _filter(num[i, c], den[i], fi, zi[i, c])
    return out


def filter_states(
    A: np.ndarray, B0: np.ndarray, B1: np.ndarray, x0: np.ndarray, f: np.ndarray
) -> np.ndarray:
    """States of ``x[k+1] = A x[k] + B0 f[k] + B1 f[k+1]``, one scalar load per system.

    For a stack of n independent systems (one per mode), by :class:`FilterBank`.

    Parameters
    ----------
    A : ndarray, shape (n, s, s)
    B0, B1 : ndarray, shape (n, s)
    x0 : ndarray, shape (n, s)
        Initial states.
    f : ndarray, shape (n, N)
        Load of each system at every step.

    Returns
    -------
    ndarray, shape (n, s, N)
        x[0] … x[N − 1] of each system, component by component.
    """
    bank = filter_bank(A, B0, B1)
    zi = initial_conditions(bank, x0, f[:, 0])
    return run_filters(bank, f, zi)
