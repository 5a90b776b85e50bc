"""Response quantities derived from the integrated histories, and their peaks.

Shear chain, one horizontal direction (see the README for definitions):
drift δᵢ = uᵢ − uᵢ₋₁, drift ratio δᵢ/hᵢ, story shear Vᵢ = Σ_{j≥i} f_j with f the
lateral restoring force at each level (for a linear chain Vᵢ = kᵢδᵢ), base shear
V = rᵀf, its coefficient V/W, base overturning moment Σ f_j H_j, and absolute
floor acceleration ü + r ü_g.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from thist.structure import Structure


@dataclass(frozen=True)
class Peak:
    """Signed peak of one quantity at each level or story.

    Attributes
    ----------
    values : ndarray, shape (n,) or ()
        The value of largest magnitude, with its sign, SI.
    times : ndarray, shape (n,) or ()
        Time at which it occurs, s.
    """

    values: np.ndarray
    times: np.ndarray

    @property
    def abs_max(self) -> float:
        """Largest magnitude over levels."""
        return float(np.max(np.abs(self.values)))

    @property
    def where(self) -> int:
        """Index (0-based) of the level with the largest magnitude."""
        return int(np.argmax(np.abs(np.atleast_1d(self.values))))


def peak(x: np.ndarray, t: np.ndarray) -> Peak:
    """Signed peak and its time along axis 0."""
    i = np.argmax(np.abs(x), axis=0)
    vals = np.take_along_axis(x, np.expand_dims(i, 0), axis=0)[0] if x.ndim > 1 else x[i]
    return Peak(np.asarray(vals), np.asarray(t[i]))


#: Quantity name -> (kind for display units, SI unit label, per level/story or scalar).
QUANTITIES: dict[str, tuple[str, str, str]] = {
    "displacement": ("length", "m", "level"),
    "velocity": ("velocity", "m/s", "level"),
    "acceleration": ("acceleration", "m/s^2", "level"),
    "absolute_acceleration": ("acceleration", "m/s^2", "level"),
    "drift": ("small_length", "m", "story"),
    "drift_ratio": ("ratio", "-", "story"),
    "story_shear": ("force", "N", "story"),
    "base_shear": ("force", "N", "scalar"),
    "base_shear_coefficient": ("ratio", "-", "scalar"),
    "overturning_moment": ("moment", "N*m", "scalar"),
}


@dataclass(frozen=True)
class Response:
    """Histories of every response quantity, SI, sampled at ``t``.

    Per-level arrays have shape (N, n), scalar histories (N,). ``drift_ratio``
    and ``overturning_moment`` are None for a model without heights.
    """

    t: np.ndarray
    ag: np.ndarray
    displacement: np.ndarray
    velocity: np.ndarray
    acceleration: np.ndarray
    absolute_acceleration: np.ndarray
    restoring_force: np.ndarray
    drift: np.ndarray
    drift_ratio: np.ndarray | None
    story_shear: np.ndarray
    base_shear: np.ndarray
    base_shear_coefficient: np.ndarray
    overturning_moment: np.ndarray | None

    def history(self, name: str) -> np.ndarray | None:
        """The history called ``name`` (a key of :data:`QUANTITIES`)."""
        return getattr(self, name)

    def peaks(self) -> dict[str, Peak]:
        """Signed peaks with times for every available quantity."""
        out = {}
        for name in QUANTITIES:
            x = self.history(name)
            if x is not None:
                out[name] = peak(x, self.t)
        return out


def compute_response(
    structure: Structure,
    t: np.ndarray,
    ag: np.ndarray,
    u: np.ndarray,
    v: np.ndarray,
    a: np.ndarray,
    restoring_force: np.ndarray | None = None,
) -> Response:
    """Derive drifts, shears, base actions and absolute accelerations.

    Parameters
    ----------
    structure : Structure
    t : ndarray, shape (N,)
        Times, s.
    ag : ndarray, shape (N,)
        Ground acceleration, m/s².
    u, v, a : ndarray, shape (N, n)
        Relative displacement (m), velocity (m/s), acceleration (m/s²).
    restoring_force : ndarray, shape (N, n), optional
        Lateral restoring force at each level, N; ``u @ K`` (linear) by default.
    """
    fs = u @ structure.K if restoring_force is None else restoring_force
    drift = np.diff(u, axis=1, prepend=0.0)
    story_shear = np.cumsum(fs[:, ::-1], axis=1)[:, ::-1]
    base_shear = fs @ structure.r
    h = structure.story_heights
    drift_ratio = None if h is None else drift / h
    elev = structure.elevations
    otm = None if elev is None else fs @ elev
    return Response(
        t,
        ag,
        u,
        v,
        a,
        a + np.outer(ag, structure.r),
        fs,
        drift,
        drift_ratio,
        story_shear,
        base_shear,
        base_shear / structure.weight,
        otm,
    )
