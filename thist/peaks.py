"""Peaks-only runs: running signed maxima with their times, no stored histories.

A study needs the peaks of each run, not its histories. The functions here run
the same integrators as the full-history paths over short chunks of samples held
in reused buffers, derive each chunk's response quantities with
:func:`thist.response.compute_response`, and keep, per quantity and level, the
signed value of largest magnitude with its time (the earliest on ties, as
:func:`thist.response.peak` does). Memory is that of the model and one chunk,
whatever the number of steps:

* linear, classically damped (path ``"modal"``): the modal recurrences of
  :class:`thist.methods.modal_path.ModalStepper` (compiled kernel or filters),
  whose state is carried from chunk to chunk, so the samples are those of the
  full run;
* inelastic, compiled (path ``"compiled"``): the kernels of
  :mod:`thist.methods.inelastic_kernel`, which carry their whole state in small
  arrays between chunks.

Where neither applies (non-classical damping on the linear direct path, or the
pure-numpy inelastic fallback without numba) the full histories are computed and
reduced (paths ``"direct"`` and ``"pure"``): same peaks, memory that grows with
the record.

Results are a preliminary estimate, not a substitute for the analysis the
governing code requires; defer to local codes and the licensed engineer of record.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from thist.damping import Damping
from thist.methods.base import Method
from thist.methods.inelastic import (
    ConvergenceStats,
    SolverOptions,
    StoryDemands,
    integrate_inelastic,
    level_forces,
    prepare_run,
    story_drift,
    use_compiled,
)
from thist.methods.modal_path import ModalStepper
from thist.modal import Modes
from thist.response import QUANTITIES, Peak, Response, compute_response
from thist.springs import SpringParameters
from thist.structure import Structure

#: Default working memory of one chunk, bytes (sets the chunk length).
CHUNK_BYTES = 256 * 1024
#: Arrays of shape (L, n) alive at once while a chunk's response is derived.
_ROWS_PER_STEP = 24


def chunk_steps(n: int, chunk_bytes: int = CHUNK_BYTES) -> int:
    """Samples per chunk for an n-DOF model so that a chunk's arrays fit ``chunk_bytes``.

    Parameters
    ----------
    n : int
        Degrees of freedom.
    chunk_bytes : int
        Working memory of one chunk, bytes.

    Returns
    -------
    int
        Between 16 and 8192.
    """
    return int(min(8192, max(16, chunk_bytes // (8 * n * _ROWS_PER_STEP))))


class PeakTracker:
    """Running signed peaks with times of the response quantities, chunk by chunk."""

    def __init__(self) -> None:
        self._values: dict[str, np.ndarray] = {}
        self._times: dict[str, np.ndarray] = {}

    def update(self, name: str, x: np.ndarray, t: np.ndarray) -> None:
        """Fold a chunk of one quantity into its running peak.

        Parameters
        ----------
        name : str
            Quantity name.
        x : ndarray, shape (L, n) or (L,)
            Its values at the chunk's samples, SI.
        t : ndarray, shape (L,)
            The samples' times, s.
        """
        i = np.argmax(np.abs(x), axis=0)
        vals = np.take_along_axis(x, np.expand_dims(i, 0), axis=0)[0] if x.ndim > 1 else x[i]
        times = t[i]
        if name not in self._values:
            self._values[name] = np.array(vals, dtype=float)
            self._times[name] = np.array(times, dtype=float)
            return
        grew = np.abs(vals) > np.abs(self._values[name])  # strict: the earliest peak stays
        self._values[name] = np.where(grew, vals, self._values[name])
        self._times[name] = np.where(grew, times, self._times[name])

    def update_response(self, response: Response) -> None:
        """Fold every available quantity of a chunk's :class:`Response`."""
        for name in QUANTITIES:
            x = response.history(name)
            if x is not None:
                self.update(name, x, response.t)

    def peaks(self) -> dict[str, Peak]:
        """The peaks so far, keyed as :meth:`thist.response.Response.peaks`."""
        return {
            name: Peak(np.asarray(self._values[name]), np.asarray(self._times[name]))
            for name in QUANTITIES
            if name in self._values
        }


@dataclass(frozen=True)
class LinearPeaks:
    """Peaks of a linear run without its histories.

    Attributes
    ----------
    peaks : dict of str to Peak
        Signed peaks with times, as :meth:`thist.response.Response.peaks`.
    path : str
        ``"modal"`` (chunked filters) or ``"direct"`` (full histories reduced).
    chunk_steps : int
        Samples per chunk (0 on the direct path).
    """

    peaks: dict[str, Peak]
    path: str
    chunk_steps: int


def linear_peaks(
    method: Method,
    structure: Structure,
    damping: Damping,
    modes: Modes,
    ag: np.ndarray,
    dt: float,
    *,
    chunk_bytes: int = CHUNK_BYTES,
) -> LinearPeaks:
    """Peaks of a linear run from rest under base acceleration, without storing histories.

    Parameters
    ----------
    method : Method
        A linear method (:func:`thist.methods.get_method`); its stability is the
        caller's check (:func:`thist.checks.check_method`).
    structure : Structure
    damping : Damping
    modes : Modes
        Modes of (M, K), mass-normalised.
    ag : ndarray, shape (N,)
        Ground acceleration, m/s², sampled every ``dt``.
    dt : float
        Time step, s.
    chunk_bytes : int
        Working memory of one chunk, bytes (see :func:`chunk_steps`).

    Returns
    -------
    LinearPeaks
        The peaks of the full-history run (:func:`thist.analysis.integrate_linear`
        followed by :func:`~thist.response.compute_response`), to round-off.
    """
    ag = np.asarray(ag, dtype=float)
    n_samples = ag.size
    M, r = structure.M, structure.r
    tracker = PeakTracker()
    if not damping.classical:
        p = -np.outer(ag, M @ r)
        sol = method.integrate(M, damping.C, structure.K, p, dt)
        t = np.arange(n_samples) * dt
        tracker.update_response(compute_response(structure, t, ag, sol.u, sol.v, sol.a))
        return LinearPeaks(tracker.peaks(), "direct", 0)
    phi = modes.shapes
    n = phi.shape[1]
    to_modal = -(phi.T @ (M @ r))[None, :]  # modal load per unit modal mass is −Γ ü_g
    length = chunk_steps(n, chunk_bytes)
    zeros = np.zeros(n)
    stepper = ModalStepper(method, modes, damping.ratios, dt, zeros, zeros, ag[0] * to_modal[0])
    out = np.empty((3, length, phi.shape[0]))
    P = ag[:, None]
    for k0 in range(0, n_samples, length):
        count = min(length, n_samples - k0)
        # the chunk's samples and the next one (held after the end of the record)
        u, v, a = stepper.advance(P[k0 : k0 + count + 1], to_modal, out, count)
        t = (k0 + np.arange(count)) * dt
        tracker.update_response(compute_response(structure, t, ag[k0 : k0 + count], u, v, a))
    return LinearPeaks(tracker.peaks(), "modal", length)


@dataclass(frozen=True)
class InelasticPeaks:
    """Peaks and story demands of an inelastic run without its histories.

    Attributes
    ----------
    peaks : dict of str to Peak
        Signed peaks with times, as :meth:`thist.response.Response.peaks` of the
        full run's response (restoring force from the springs).
    story : StoryDemands
    convergence : ConvergenceStats
    path : str
        ``"compiled"`` (chunked kernels) or ``"pure"`` (full histories reduced).
    chunk_steps : int
        Samples per chunk (0 on the pure path).
    """

    peaks: dict[str, Peak]
    story: StoryDemands
    convergence: ConvergenceStats
    path: str
    chunk_steps: int


def inelastic_peaks(
    structure: Structure,
    springs: SpringParameters,
    ag: np.ndarray,
    dt: float,
    method: Method | str = "newmark-average",
    *,
    rayleigh: tuple[float, float] = (0.0, 0.0),
    damping: str = "initial",
    options: SolverOptions | None = None,
    free_vibration_tail: float = 0.0,
    compiled: bool | None = None,
    chunk_bytes: int = CHUNK_BYTES,
) -> InelasticPeaks:
    """Peaks of an inelastic shear-chain run from rest, without storing histories.

    Parameters
    ----------
    structure : Structure
        The chain (level masses on the diagonal of M, heights for drift ratios).
    springs : SpringParameters
        Story spring laws, one per story.
    ag : ndarray, shape (N,)
        Ground acceleration, m/s², sampled every ``dt``.
    dt : float
        Time step, s.
    method, rayleigh, damping, options, free_vibration_tail, compiled
        As :func:`thist.methods.inelastic.integrate_inelastic`.
    chunk_bytes : int
        Working memory of one chunk, bytes (see :func:`chunk_steps`).

    Returns
    -------
    InelasticPeaks
        The peaks of :func:`~thist.methods.inelastic.integrate_inelastic`'s
        histories, to round-off.
    """
    masses = np.diag(structure.M).copy()
    args = (masses, springs, ag, dt, method, rayleigh, damping, options)
    tracker = PeakTracker()
    if not use_compiled(compiled):
        sol = integrate_inelastic(
            *args[:5],
            rayleigh=rayleigh,
            damping=damping,
            options=options,
            free_vibration_tail=free_vibration_tail,
            compiled=False,
        )
        resp = compute_response(structure, sol.t, sol.ag, sol.u, sol.v, sol.a, sol.restoring_force)
        tracker.update_response(resp)
        return InelasticPeaks(tracker.peaks(), sol.story, sol.convergence, "pure", 0)
    prep = prepare_run(*args, None, None, free_vibration_tail)
    ag_all, n_samples, n = prep.ag, prep.ag.size, masses.size
    run = prep.compiled_run()
    run.start(prep.u0, prep.v0, float(ag_all[0]))
    length = chunk_steps(n, chunk_bytes)
    u, v, a, shear, f_damp = (np.empty((length, n)) for _ in range(5))
    scalars = np.empty((length, 3))

    def fold(first: int, count: int) -> None:
        t = (first + np.arange(count)) * dt
        resp = compute_response(
            structure,
            t,
            ag_all[first : first + count],
            u[:count],
            v[:count],
            a[:count],
            level_forces(shear[:count]),
        )
        tracker.update_response(resp)

    if run.explicit:
        for i0 in range(0, n_samples, length):
            count = min(length, n_samples - i0)
            bufs = (u[:count], v[:count], a[:count], shear[:count], scalars[:count])
            run.run(ag_all[i0 : i0 + count], i0, *bufs, f_damp[:count])
            fold(i0, count)
    else:
        u[0], v[0], a[0], shear[0] = run.state[0], run.state[1], run.state[2], run.springs[1]
        fold(0, 1)
        for i0 in range(0, n_samples - 1, length):
            count = min(length, n_samples - 1 - i0)
            bufs = (u[:count], v[:count], a[:count], shear[:count], scalars[:count])
            run.run(ag_all[i0 : i0 + count + 1], i0, *bufs)
            fold(i0 + 1, count)
    last_drift = story_drift(u[count - 1])
    state = run.spring_state()
    story = StoryDemands(
        springs.law,
        springs.yield_drift,
        state.peak_drift.copy(),
        run.peaks[0].copy(),
        run.peaks[1].copy(),
        state.ductility,
        last_drift,
        state.excursions.copy(),
        state.plastic_deformation.copy(),
        state.hysteretic_energy,
    )
    return InelasticPeaks(tracker.peaks(), story, run.stats(), "compiled", length)


__all__ = [
    "CHUNK_BYTES",
    "InelasticPeaks",
    "LinearPeaks",
    "PeakTracker",
    "chunk_steps",
    "inelastic_peaks",
    "linear_peaks",
]
