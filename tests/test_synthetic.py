"""Tests of thist.synthetic."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.signal import welch

from thist.errors import InputError
from thist.intensity import arias_intensity
from thist.synthetic import (
    SaragoniHartEnvelope,
    TrapezoidEnvelope,
    envelope_values,
    kanai_tajimi_psd,
    synthesize,
    write_record,
)

KT = {"omega_g": 15.6, "zeta_g": 0.6}


def _aliased_one_sided_hz(f, dt, **kw):
    """One-sided density per Hz of the sampled process: G(f) = 4 pi sum_k S(2 pi (f + k/dt)).

    The two-sided S over omega integrates to the variance over -inf..inf, so the
    one-sided density per Hz is 2 * 2 pi * S; sampling folds all images onto the
    Nyquist band (k from -K..K; the tail beyond K = 20000 is below 1e-6 relative).
    """
    fs = 1.0 / dt
    k = np.arange(-20000, 20001)[:, None]
    return 4 * np.pi * kanai_tajimi_psd(2 * np.pi * (f[None, :] + k * fs), s0=1.0, **kw).sum(0)


@pytest.mark.parametrize("cp", [None, {"omega_f": 1.6, "zeta_f": 0.6}])
def test_psd_of_long_stationary_record_matches_kanai_tajimi_density(cp):
    """Welch PSD of a long stationary record equals the (aliased) Kanai-Tajimi density.

    Source: Kanai (1957), Tajimi (1960) density S0 (w_g^4 + 4 z^2 w_g^2 w^2) /
    ((w_g^2 - w^2)^2 + 4 z^2 w_g^2 w^2), times the Clough-Penzien factor when used.
    Estimator: Welch, Hann window, 1024-sample segments without overlap, K = 1024
    independent segments; each bin is G chi^2_{2K} / 2K (Bendat & Piersol, Random
    Data, 2010, ch. 8), Hann-windowed neighbours correlated with rho_1 = 4/9,
    rho_2 = 1/36, so the mean of M bins of a band has relative standard deviation
    sqrt((1 + 2 (4/9 + 1/36)) / (K M)).  Tolerance 5 sigma per band, plus 1 % for the
    window's smoothing bias of a smooth density.
    """
    dt, nseg, k_seg = 0.01, 1024, 1024
    kw = {} if cp is None else cp
    rec = synthesize(nseg * k_seg * dt, dt, 123, s0=1.0, baseline_order=None, **KT, **kw)
    f, g = welch(
        rec.ag[: nseg * k_seg], fs=1 / dt, window="hann", nperseg=nseg, noverlap=0, detrend=False
    )
    theory = _aliased_one_sided_hz(f, dt, **KT, **kw)
    for lo, hi in [(0.5, 1.5), (1.5, 4.0), (4.0, 10.0), (10.0, 25.0), (25.0, 45.0)]:
        sel = (f >= lo) & (f < hi)
        ratio = np.mean(g[sel] / theory[sel])
        sigma = np.sqrt((1 + 2 * (4 / 9 + 1 / 36)) / (k_seg * sel.sum()))
        assert abs(ratio - 1) < 5 * sigma + 0.01, (lo, hi, ratio, sigma)


def test_same_seed_gives_bit_identical_record_and_different_seed_differs():
    """Reproducibility from numpy.random.default_rng(seed): same seed, same bits."""
    env = SaragoniHartEnvelope(b=2.0, t_peak=4.0)
    a = synthesize(20.0, 0.01, 42, envelope=env, target_pga=3.0, **KT)
    b = synthesize(20.0, 0.01, 42, envelope=env, target_pga=3.0, **KT)
    c = synthesize(20.0, 0.01, 43, envelope=env, target_pga=3.0, **KT)
    assert a.ag.tobytes() == b.ag.tobytes()
    assert not np.array_equal(a.ag, c.ag)


def test_same_seed_gives_the_same_record_whatever_eigenvector_signs_lapack_returns(monkeypatch):
    """Eigenvectors are defined up to sign and LAPACK builds differ in the sign they
    return (seen here between two OpenBLAS kernels on one machine). With every
    eigenvector flipped, the record is the same to round-off (1e-12 of the PGA):
    the generator fixes the signs itself, so a seed means one record everywhere."""
    import thist.synthetic as synthetic

    env = SaragoniHartEnvelope(b=2.0, t_peak=4.0)
    params = dict(envelope=env, target_pga=3.0, omega_f=1.6, zeta_f=0.6, **KT)
    ref = synthesize(20.0, 0.01, 42, **params)
    eigh = np.linalg.eigh

    def flipped(a):
        vals, vecs = eigh(a)
        return vals, -vecs

    monkeypatch.setattr(synthetic.np.linalg, "eigh", flipped)
    again = synthesize(20.0, 0.01, 42, **params)
    assert np.max(np.abs(again.ag - ref.ag)) < 1e-12 * np.max(np.abs(ref.ag))


def test_scaling_to_target_pga_and_arias_is_exact():
    """Scaling is the last step, so the targets hold to round-off (1e-12)."""
    env = TrapezoidEnvelope(rise=2.0, strong=6.0, decay=4.0)
    a = synthesize(15.0, 0.01, 1, envelope=env, target_pga=2.5, **KT)
    assert np.max(np.abs(a.ag)) == pytest.approx(2.5, rel=1e-12)
    b = synthesize(15.0, 0.01, 1, envelope=env, target_arias=0.8, **KT)
    assert arias_intensity(b.ag, 0.01)[0] == pytest.approx(0.8, rel=1e-12)
    assert b.baseline is not None and b.baseline.name == "baseline"


def test_envelopes_have_their_defining_shape():
    """Saragoni-Hart gamma envelope peaks at 1 at t_peak; trapezoid ramps 0-1-1-0."""
    sh = SaragoniHartEnvelope(b=2.0, t_peak=4.0)
    t = np.linspace(0, 20, 20001)
    v = envelope_values(sh, t)
    assert v[0] == 0.0 and t[np.argmax(v)] == pytest.approx(4.0, abs=1e-3)
    assert v.max() == pytest.approx(1.0, rel=1e-9)
    tr = envelope_values(TrapezoidEnvelope(1.0, 2.0, 1.0), np.array([0, 0.5, 1, 2.5, 3.5, 5]))
    np.testing.assert_allclose(tr, [0, 0.5, 1, 1, 0.5, 0])


def test_written_record_says_synthetic_and_round_trips(tmp_path):
    """The record file says SYNTHETIC, the seed and not-a-substitute, then two columns."""
    rec = synthesize(5.0, 0.02, 7, envelope=SaragoniHartEnvelope(2.0, 1.5), target_pga=1.0, **KT)
    path = write_record(tmp_path / "synthetic.txt", rec)
    text = path.read_text()
    header = [ln for ln in text.splitlines() if ln.startswith("#")]
    assert "SYNTHETIC" in header[0]
    assert any("seed 7" in ln for ln in header)
    assert any("NOT a substitute for recorded" in ln for ln in header)
    assert "time_s accel_m_s2" in text.splitlines()[len(header)]
    data = np.loadtxt(path, comments="#", skiprows=len(header) + 1)
    np.testing.assert_array_equal(data[:, 1], rec.ag)
    np.testing.assert_allclose(data[:, 0], np.arange(rec.ag.size) * 0.02, rtol=1e-9)
    assert [p.name for p in tmp_path.iterdir()] == ["synthetic.txt"]


def test_invalid_parameters_raise_input_error_with_field():
    """Bad parameters are refused with their field names."""
    with pytest.raises(InputError) as err:
        synthesize(10.0, 0.01, 1, omega_g=15.0, zeta_g=1.5)
    assert err.value.field == "zeta_g"
    with pytest.raises(InputError) as err:
        synthesize(10.0, 0.01, -1, **KT)
    assert err.value.field == "seed"
    with pytest.raises(InputError) as err:
        synthesize(10.0, 0.01, 1, omega_f=1.0, **KT)
    assert err.value.field == "omega_f"
