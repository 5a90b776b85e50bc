"""Peaks-only runs give the peaks of the full-history runs, in memory that does not grow.

Reference: the full-history paths of thist (thist.analysis.integrate_linear and
thist.methods.inelastic.integrate_inelastic, verified in their own tests against
closed forms, expm and solve_ivp) reduced by thist.response.Response.peaks. The
peaks-only path runs the same recurrences chunk by chunk, carrying the filter /
kernel state across chunk boundaries, so values agree to round-off (1e-10 of the
largest peak leaves some 10⁵ of margin over the 1e-16 relative differences of
reordered BLAS products) and the times are the same samples.
"""

from __future__ import annotations

import tracemalloc
from pathlib import Path

import numpy as np
import pytest

import thist
from thist.analysis import build_damping, integrate_linear
from thist.methods import get_method
from thist.methods.inelastic import integrate_inelastic
from thist.methods.inelastic_kernel import AVAILABLE
from thist.peaks import PeakTracker, inelastic_peaks, linear_peaks
from thist.record import sample
from thist.response import compute_response, peak
from thist.springs import bilinear, clough_johnston

DEMO = Path(__file__).resolve().parent.parent / "inputs" / "clinic-si.toml"
DT = 0.005


@pytest.fixture(scope="module")
def demo():
    case = thist.load_case(DEMO)
    s = case.structure
    modes = thist.modal(s.M, s.K)
    damping = build_damping(case.damping, s, modes)
    ex = sample(case.record, DT, 12.0)
    return s, modes, damping, ex


def assert_same_peaks(full: dict, fast: dict) -> None:
    assert set(full) == set(fast)
    for name, ref in full.items():
        got = fast[name]
        scale = max(float(np.max(np.abs(ref.values))), 1e-300)
        assert np.max(np.abs(ref.values - got.values)) <= 1e-10 * scale, name
        np.testing.assert_array_equal(ref.times, got.times, err_msg=name)


@pytest.mark.parametrize(
    "name",
    [
        "newmark-average",
        "newmark-linear",
        "central-difference",
        "hht",
        "generalized-alpha",
        "exact",
    ],
)
@pytest.mark.parametrize("chunk_bytes", [4096, 256 * 1024])
def test_linear_peaks_only_equal_the_full_history_peaks_on_the_demo_building(
    demo, name, chunk_bytes
):
    """Every method, short chunks (16 samples: hundreds of boundaries) and the default:
    peaks and times of all response quantities equal the full run's to 1e-10."""
    s, modes, damping, ex = demo
    m = get_method(name)
    sol, path = integrate_linear(m, s, damping, modes, ex.ag, ex.dt)
    full = compute_response(s, ex.time, ex.ag, sol.u, sol.v, sol.a).peaks()
    fast = linear_peaks(m, s, damping, modes, ex.ag, ex.dt, chunk_bytes=chunk_bytes)
    assert fast.path == path == "modal"
    assert_same_peaks(full, fast.peaks)


@pytest.mark.skipif(not AVAILABLE, reason="numba is not available")
@pytest.mark.parametrize(
    ("law", "method", "dt"),
    [
        ("bilinear", "newmark-average", DT),
        ("clough-johnston", "hht", DT),
        ("bilinear", "central-difference", 0.001),
    ],
)
def test_inelastic_peaks_only_equal_the_full_history_peaks(demo, law, method, dt):
    """Yielding demo chain, chunks of 16 samples: the compiled kernels continue across
    chunks exactly, so peaks, times and story demands equal the full run's to 1e-10."""
    s, _, _, ex = demo
    k = np.diag(s.K).copy()
    k[:-1] += np.diag(s.K, 1)  # story stiffness k_j = K_jj + K_j,j+1 of the chain
    make = bilinear if law == "bilinear" else clough_johnston
    springs = make(k, yield_drift=0.004, post_yield_ratio=0.05)
    ag = 3.0 * np.interp(np.arange(0, 8.0, dt), ex.time, ex.ag)
    kw = dict(rayleigh=(0.3, 0.002), damping="tangent", free_vibration_tail=0.5)
    masses = np.diag(s.M).copy()
    sol = integrate_inelastic(masses, springs, ag, dt, method, compiled=True, **kw)
    assert sol.story.yield_excursions.sum() > 0
    full = compute_response(s, sol.t, sol.ag, sol.u, sol.v, sol.a, sol.restoring_force)
    fast = inelastic_peaks(s, springs, ag, dt, method, chunk_bytes=4096, **kw)
    assert fast.path == "compiled" and fast.chunk_steps == 16
    assert_same_peaks(full.peaks(), fast.peaks)
    assert fast.convergence == sol.convergence
    np.testing.assert_array_equal(fast.story.yield_excursions, sol.story.yield_excursions)
    np.testing.assert_allclose(fast.story.residual_drift, sol.story.residual_drift, rtol=1e-10)
    np.testing.assert_allclose(fast.story.ductility, sol.story.ductility, rtol=1e-10)


def test_peak_tracker_keeps_the_earliest_of_equal_peaks_like_numpy_argmax():
    """Chunked folding reproduces thist.response.peak (numpy.argmax: first maximum)."""
    t = np.arange(12) * 0.1
    x = np.array([0.0, 1.0, -3.0, 2.0, 3.0, -3.0, 0.5, 1.0, -2.0, 3.0, 0.0, 1.0])
    tracker = PeakTracker()
    for k in range(0, 12, 5):
        tracker.update("base_shear", x[k : k + 5], t[k : k + 5])
    ref = peak(x, t)
    got = tracker.peaks()["base_shear"]
    assert got.values == ref.values == -3.0
    assert got.times == ref.times == pytest.approx(0.2)


def test_linear_peaks_only_memory_does_not_grow_with_the_record(demo):
    """tracemalloc peak of a peaks-only run of 20,000 samples is within 10 % of that of
    5,000 samples (the working set is the model plus one chunk; the full histories of
    the longer run would take 16 times the shorter run's chunk memory)."""
    s, modes, damping, ex = demo
    m = get_method("newmark-average")
    peaks = []
    for n_samples in (5000, 20000):
        ag = np.resize(ex.ag, n_samples)
        tracemalloc.start()
        linear_peaks(m, s, damping, modes, ag, DT)
        peaks.append(tracemalloc.get_traced_memory()[1])
        tracemalloc.stop()
    assert peaks[1] <= 1.1 * peaks[0]
