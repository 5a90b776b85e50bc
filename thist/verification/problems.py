"""The benchmark problems: closed forms, textbook results and published method properties.

Every problem measures one dimensionless error of this build against a reference
that comes from outside the project and compares it with a tolerance whose reason
is stated. To add one, write a ``_measure_*`` function returning the error and
append a :class:`Problem` to :data:`PROBLEMS` (see DEVELOPERS.md).
"""

from __future__ import annotations

import math
import time
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from scipy.integrate import solve_ivp

from thist.analysis import time_history
from thist.damping import rayleigh
from thist.methods import get_method
from thist.modal import modal
from thist.structure import shear_chain


@dataclass(frozen=True)
class Problem:
    """One benchmark problem.

    Attributes
    ----------
    key : str
        Short identifier (also the test id).
    title : str
        What is checked, in a few words.
    source : str
        Published source of the reference (author, title, year, equation).
    reference : str
        The reference solution, as a formula or a value.
    error_measure : str
        How the error is measured, e.g. "max |u − u_ref| / max |u_ref|".
    tolerance : float
        Largest acceptable error (same measure).
    tolerance_basis : str
        Why that tolerance is right.
    measure : callable
        ``measure() -> float``: runs the problem and returns the error.
    """

    key: str
    title: str
    source: str
    reference: str
    error_measure: str
    tolerance: float
    tolerance_basis: str
    measure: Callable[[], float]


@dataclass(frozen=True)
class Outcome:
    """Result of running one problem.

    ``error`` is nan and ``message`` says why when the problem raised.
    ``elapsed`` is the run time, s.
    """

    problem: Problem
    error: float
    passed: bool
    elapsed: float
    message: str = ""


def run_problems(problems: tuple[Problem, ...] | None = None) -> tuple[Outcome, ...]:
    """Run benchmark problems (all of :data:`PROBLEMS` by default).

    Parameters
    ----------
    problems : tuple of Problem, optional

    Returns
    -------
    tuple of Outcome
        In the order given; a problem that raises fails with the message.
    """
    out = []
    for p in PROBLEMS if problems is None else problems:
        start = time.perf_counter()
        try:
            err = float(p.measure())
            msg = ""
        except Exception as exc:  # a failing problem must not hide the others
            err, msg = math.nan, f"{type(exc).__name__}: {exc}"
        passed = bool(math.isfinite(err) and err <= p.tolerance)
        out.append(Outcome(p, err, passed, time.perf_counter() - start, msg))
    return tuple(out)


# --- closed-form SDOF responses ------------------------------------------------------


def _free_vibration(t, wn, zeta, u0, v0):
    """Chopra, Dynamics of Structures, eq. 2.2.4 (underdamped free vibration)."""
    wd = wn * math.sqrt(1.0 - zeta**2)
    return np.exp(-zeta * wn * t) * (
        u0 * np.cos(wd * t) + (v0 + zeta * wn * u0) / wd * np.sin(wd * t)
    )


def _free_vibration_velocity(t, wn, zeta, u0, v0):
    wd = wn * math.sqrt(1.0 - zeta**2)
    a, b = u0, (v0 + zeta * wn * u0) / wd
    e = np.exp(-zeta * wn * t)
    c, s = np.cos(wd * t), np.sin(wd * t)
    return e * ((-zeta * wn * a + wd * b) * c + (-zeta * wn * b - wd * a) * s)


def _half_sine_pulse_response(t, wn, zeta, td, p0_over_m):
    """SDOF from rest under p(t)/m = p0/m · sin(πt/td) for t ≤ td, then free vibration.

    Forced phase: Chopra eqs. 3.2.1-3.2.4 (harmonic force, damped, from rest);
    free phase: eq. 2.2.4 from the state at t = td.
    """
    w = math.pi / td
    wd = wn * math.sqrt(1.0 - zeta**2)
    r = w / wn
    k = wn**2  # per unit mass
    ust = p0_over_m / k
    den = (1 - r**2) ** 2 + (2 * zeta * r) ** 2
    C = ust * (1 - r**2) / den
    D = ust * (-2 * zeta * r) / den
    A = -D
    B = (zeta * wn * A - C * w) / wd  # from u'(0) = 0

    def forced(tt):
        e = np.exp(-zeta * wn * tt)
        u = (
            e * (A * np.cos(wd * tt) + B * np.sin(wd * tt))
            + C * np.sin(w * tt)
            + D * np.cos(w * tt)
        )
        v = (
            e
            * (
                (-zeta * wn * A + wd * B) * np.cos(wd * tt)
                + (-zeta * wn * B - wd * A) * np.sin(wd * tt)
            )
            + C * w * np.cos(w * tt)
            - D * w * np.sin(w * tt)
        )
        return u, v

    u_td, v_td = forced(td)
    u_f, _ = forced(np.minimum(t, td))
    u_free = _free_vibration(np.maximum(t - td, 0.0), wn, zeta, float(u_td), float(v_td))
    return np.where(t <= td, u_f, u_free)


def _sdof(wn: float, zeta: float):
    return np.eye(1), np.array([[2 * zeta * wn]]), np.array([[wn**2]])


# --- measures ------------------------------------------------------------------------


def _measure_free_vibration_exact() -> float:
    wn, zeta, u0, v0, dt = 2 * math.pi, 0.05, 0.02, -0.1, 0.05
    n = 201
    M, C, K = _sdof(wn, zeta)
    sol = get_method("exact").integrate(M, C, K, np.zeros((n, 1)), dt, [u0], [v0])
    t = np.arange(n) * dt
    ref_u = _free_vibration(t, wn, zeta, u0, v0)
    ref_v = _free_vibration_velocity(t, wn, zeta, u0, v0)
    return max(
        np.max(np.abs(sol.u[:, 0] - ref_u)) / np.max(np.abs(ref_u)),
        np.max(np.abs(sol.v[:, 0] - ref_v)) / np.max(np.abs(ref_v)),
    )


def _pulse_error(method: str) -> float:
    wn, zeta, td, dt = 2 * math.pi, 0.05, 0.5, 0.001
    t = np.arange(int(round(3.0 / dt)) + 1) * dt
    ag = np.where(t <= td, np.sin(math.pi * t / td), 0.0)  # 1 m/s² peak
    M, C, K = _sdof(wn, zeta)
    u = time_history(M, C, K, ag, dt, method).u[:, 0]
    ref = _half_sine_pulse_response(t, wn, zeta, td, -1.0)  # p/m = −ü_g
    return float(np.max(np.abs(u - ref)) / np.max(np.abs(ref)))


def _measure_pulse_exact() -> float:
    return _pulse_error("exact")


def _measure_pulse_newmark() -> float:
    return _pulse_error("newmark-average")


_OMEGAS = (0.05, 0.5, 1.0, 1.5, 1.9)


def _measure_period_average() -> float:
    m = get_method("newmark-average")
    errs = []
    for om in (*_OMEGAS, 5.0, 20.0):
        ref = 2 * math.atan(om / 2)
        errs.append(abs(m.spectral_properties(om).numerical_omega_dt - ref) / ref)
    return max(errs)


def _measure_period_average_simulated() -> float:
    """Period of a free-vibration run (coupled integrator), from zero crossings."""
    om, n = 0.5, 4001
    wn = 1.0
    M, C, K = _sdof(wn, 0.0)
    sol = get_method("newmark-average").integrate(M, C, K, np.zeros((n, 1)), om / wn, [1.0], [0.0])
    u = sol.u[:, 0]
    i = np.flatnonzero((u[:-1] > 0) & (u[1:] <= 0))  # downward crossings
    tc = i + u[i] / (u[i] - u[i + 1])  # in steps, linear interpolation
    period_steps = (tc[-1] - tc[0]) / (len(tc) - 1)
    ref = 2 * math.pi / (2 * math.atan(om / 2))
    return abs(period_steps - ref) / ref


def _measure_period_central_difference() -> float:
    m = get_method("central-difference")
    errs = []
    for om in _OMEGAS:
        ref = 2 * math.asin(om / 2)
        errs.append(abs(m.spectral_properties(om).numerical_omega_dt - ref) / ref)
    return max(errs)


def _critical_omega(name: str, lo: float, hi: float, **params: float) -> float:
    """Ω at which the spectral radius first exceeds 1 (bisection to 1e-12)."""
    m = get_method(name, **params)

    def unstable(om: float) -> bool:
        return m.spectral_properties(om).spectral_radius > 1.0 + 1e-9

    for _ in range(60):
        mid = 0.5 * (lo + hi)
        lo, hi = (lo, mid) if unstable(mid) else (mid, hi)
    return 0.5 * (lo + hi)


def _measure_cd_limit() -> float:
    om_cr = _critical_omega("central-difference", 1.0, 3.0)
    declared = get_method("central-difference").stability_limit(1.0)  # Δt_cr for ω = 1
    return max(abs(om_cr - 2.0) / 2.0, abs(declared - 2.0) / 2.0)


def _measure_linear_acceleration_limit() -> float:
    om_cr = _critical_omega("newmark-linear", 2.0, 5.0)
    declared = get_method("newmark-linear").stability_limit(2 * math.pi)  # T = 1 s
    return max(abs(om_cr / (2 * math.pi) - 0.551) / 0.551, abs(declared - 0.551) / 0.551)


def _measure_chain_frequencies() -> float:
    n, m, k = 5, 1.0e5, 2.0e8
    s = shear_chain([m] * n, [k] * n, [3.5] * n)
    w = modal(s.M, s.K, s.r).omegas
    j = np.arange(1, n + 1)
    ref = 2 * math.sqrt(k / m) * np.sin((2 * j - 1) * math.pi / (2 * (2 * n + 1)))
    return float(np.max(np.abs(w - ref) / ref))


def _uneven_chain():
    return shear_chain(
        [95e3, 90e3, 90e3, 85e3, 70e3], [120e6, 110e6, 100e6, 85e6, 65e6], [4.2, 3.6, 3.6, 3.6, 3.6]
    )


def _measure_effective_mass() -> float:
    s = _uneven_chain()
    md = modal(s.M, s.K, s.r)
    return abs(float(np.sum(md.effective_mass)) - s.total_mass) / s.total_mass


def _measure_rayleigh() -> float:
    s = _uneven_chain()
    md = modal(s.M, s.K, s.r)
    d = rayleigh(s.M, s.K, md, 0.05, md.omegas[0], md.omegas[2], "")
    a0, a1 = d.alpha_mass, d.beta_stiffness
    formula = a0 / (2 * md.omegas) + a1 * md.omegas / 2  # Chopra eq. 11.4.8
    return max(
        abs(d.ratios[0] - 0.05) / 0.05,
        abs(d.ratios[2] - 0.05) / 0.05,
        float(np.max(np.abs(d.ratios - formula) / formula)),
    )


def _measure_harmonic() -> float:
    wn, zeta, dt = 2 * math.pi, 0.05, 1.0 / 400
    t = np.arange(int(round(60.0 / dt)) + 1) * dt
    M, C, K = _sdof(wn, zeta)
    errs = []
    for r in (0.5, 1.0, 2.0):
        w = r * wn
        ag = np.sin(w * t)
        u = time_history(M, C, K, ag, dt, "exact").u[:, 0]
        tail = u[-int(round(4 * 2 * math.pi / w / dt)) :]
        amp = 0.5 * (tail.max() - tail.min())
        ust = 1.0 / wn**2  # static deflection of m·1 m/s² on k
        rd = 1.0 / math.sqrt((1 - r**2) ** 2 + (2 * zeta * r) ** 2)  # Chopra eq. 3.2.11
        errs.append(abs(amp / ust - rd) / rd)
    return max(errs)


def _measure_hht_radius() -> float:
    errs = []
    for a in (-0.05, -0.1, -1.0 / 3.0):
        ref = (1 + a) / (1 - a)
        errs.append(abs(get_method("hht", alpha=a).spectral_properties(1e6).spectral_radius - ref))
    return max(errs)


def _measure_genalpha_radius() -> float:
    errs = []
    for rho in (0.0, 0.5, 0.9, 1.0):
        sp = get_method("generalized-alpha", rho_inf=rho).spectral_properties(1e6)
        errs.append(abs(sp.spectral_radius - rho))
    return max(errs)


def _measure_exact_vs_solve_ivp() -> float:
    M = np.diag([2.0, 1.5, 1.0])
    K = np.array([[300.0, -120.0, 0.0], [-120.0, 200.0, -80.0], [0.0, -80.0, 80.0]])
    C = 0.02 * K + 0.1 * M
    C[0, 0] += 1.5  # non-classical
    dt = 0.05
    rng = np.random.default_rng(11)
    p = rng.normal(size=(41, 3))
    Minv = np.linalg.inv(M)
    z = np.zeros(6)
    ref = [z]
    for k in range(40):

        def rhs(t, y, k=k):
            s = t / dt
            f = (1 - s) * p[k] + s * p[k + 1]
            return np.concatenate([y[3:], Minv @ (f - C @ y[3:] - K @ y[:3])])

        z = solve_ivp(rhs, (0.0, dt), z, method="DOP853", rtol=1e-13, atol=1e-16).y[:, -1]
        ref.append(z)
    ref = np.array(ref)
    sol = get_method("exact").integrate(M, C, K, p, dt)
    return float(np.max(np.abs(sol.u - ref[:, :3])) / np.max(np.abs(ref[:, :3])))


CHOPRA = "Chopra, Dynamics of Structures"
HUGHES = "Hughes, The Finite Element Method (1987), ch. 9"

#: All benchmark problems, in the order of the summary page.
PROBLEMS: tuple[Problem, ...] = (
    Problem(
        "free-vibration-exact",
        "Damped free vibration, exact method",
        f"{CHOPRA}, ch. 2, eq. 2.2.4",
        "u = e^(-ζωt)(u0 cos ωD t + (v0 + ζωu0)/ωD sin ωD t); Tn = 1 s, ζ = 5 %, Δt = 0.05 s",
        "max |u − u_ref| / max |u_ref| (and the same for velocity)",
        1e-10,
        "free vibration has no load to interpolate, so the state-transition recurrence is "
        "exact; only round-off of expm over 200 steps remains (~1e-13)",
        _measure_free_vibration_exact,
    ),
    Problem(
        "half-sine-pulse-exact",
        "Half-cycle sine pulse, Tn = 1 s, ζ = 5 %, exact method",
        f"{CHOPRA}, ch. 4 (pulse) with eqs. 3.2.1-3.2.4 and 2.2.4",
        "closed-form forced response for td = 0.5 s, then free vibration; Δt = 0.001 s",
        "max |u − u_ref| / max |u_ref| over 3 s",
        1e-4,
        "the only error is the linear interpolation of the sine between samples, "
        "(πΔt/td)²/8 ≈ 5e-6 of the peak load; 1e-4 allows for its accumulation",
        _measure_pulse_exact,
    ),
    Problem(
        "half-sine-pulse-newmark",
        "Half-cycle sine pulse, Tn = 1 s, ζ = 5 %, Newmark average acceleration",
        f"{CHOPRA}, ch. 4-5",
        "as above; Δt = 0.001 s (T/Δt = 1000)",
        "max |u − u_ref| / max |u_ref| over 3 s",
        1e-3,
        "second-order method at Ω = 0.0063: period error Ω²/12 ≈ 3e-6 per period and "
        "the load's sampling error, both far below 1e-3 over 3 cycles",
        _measure_pulse_newmark,
    ),
    Problem(
        "period-average-acceleration",
        "Numerical frequency of average acceleration",
        f"{HUGHES}; Newmark (1959)",
        "ω̄Δt = 2·arctan(Ω/2), Ω = 0.05 … 20",
        "max |Ω̄ − Ω̄_ref| / Ω̄_ref",
        1e-10,
        "an identity of the amplification matrix; only eigenvalue round-off remains",
        _measure_period_average,
    ),
    Problem(
        "period-average-acceleration-run",
        "Period of a free-vibration run, average acceleration",
        f"{HUGHES}",
        "T̄/Δt = 2π / (2·arctan(Ω/2)) at Ω = 0.5, from 4000 steps",
        "|T̄ − T̄_ref| / T̄_ref from zero crossings",
        1e-5,
        "crossing times by linear interpolation err by ~Ω²/8 of a step at each end; over "
        "~318 periods that is < 1e-6 of a period",
        _measure_period_average_simulated,
    ),
    Problem(
        "period-central-difference",
        "Numerical frequency of central difference",
        f"{HUGHES}",
        "ω̄Δt = 2·arcsin(Ω/2), Ω = 0.05 … 1.9",
        "max |Ω̄ − Ω̄_ref| / Ω̄_ref",
        1e-10,
        "an identity of the amplification matrix; only eigenvalue round-off remains",
        _measure_period_central_difference,
    ),
    Problem(
        "stability-central-difference",
        "Stability limit of central difference",
        f"{HUGHES}; {CHOPRA}, §5.3",
        "Ω_cr = 2, i.e. Δt_cr = T_min/π",
        "|Ω_cr − 2| / 2, from the spectral radius (bisection) and from the declared limit",
        1e-6,
        "beyond Ω = 2 the roots separate like √(Ω − 2), so the 1e-9 growth threshold "
        "locates Ω_cr to ~1e-12; 1e-6 is generous",
        _measure_cd_limit,
    ),
    Problem(
        "stability-linear-acceleration",
        "Stability limit of linear acceleration",
        f"Newmark (1959); {CHOPRA}, §5.4",
        "Δt_cr = 0.551·T_min (exactly √3/π = 0.5513…)",
        "|Δt_cr/T − 0.551| / 0.551, from the spectral radius and the declared limit",
        1e-3,
        "the published value has three figures: rounding to them alone allows up to 9e-4 "
        "(the exact value √3/π differs from 0.551 by 6e-4)",
        _measure_linear_acceleration_limit,
    ),
    Problem(
        "shear-chain-frequencies",
        "Frequencies of a uniform five-story shear chain",
        "classical closed form (e.g. Chopra, ch. 10-12, uniform shear building)",
        "ωj = 2√(k/m)·sin((2j − 1)π / (2(2n + 1))), j = 1 … 5",
        "max |ω − ω_ref| / ω_ref",
        1e-10,
        "a symmetric tridiagonal eigenproblem solved by LAPACK: round-off only",
        _measure_chain_frequencies,
    ),
    Problem(
        "effective-mass-sum",
        "Effective modal masses sum to the total mass",
        f"{CHOPRA}, §13.2",
        "Σ Γj²·φjᵀMφj = rᵀMr, uneven five-story chain",
        "|Σ M*_j − M_total| / M_total",
        1e-12,
        "an identity of mass-orthonormal modes; round-off only",
        _measure_effective_mass,
    ),
    Problem(
        "rayleigh-anchors",
        "Rayleigh damping: 5 % at modes 1 and 3",
        f"{CHOPRA}, §11.4, eqs. 11.4.8-11.4.9",
        "ζ = a0/(2ω) + a1·ω/2, equal to 5 % at both anchors",
        "max relative error of ζ at the anchors and of every mode against the formula",
        1e-10,
        "a 2×2 solve and a modal projection: round-off only",
        _measure_rayleigh,
    ),
    Problem(
        "harmonic-steady-state",
        "Steady-state amplification under harmonic ground motion",
        f"{CHOPRA}, §3.2, eq. 3.2.11",
        "Rd = 1/√((1 − r²)² + (2ζr)²), r = 0.5, 1, 2, ζ = 5 %, 60 s, Δt = T/400",
        "max |amplitude/ust − Rd| / Rd",
        1e-3,
        "exact method; errors are the load's linear interpolation (~(ωΔt)²/8 ≤ 1e-4 at "
        "r = 2) and the transient left after 60 s (e^-19)",
        _measure_harmonic,
    ),
    Problem(
        "hht-spectral-radius",
        "HHT-α spectral radius at Ω → ∞",
        "Hilber, Hughes & Taylor (1977), Earthquake Eng. Struct. Dyn. 5",
        "ρ∞ = (1 + α)/(1 − α) (from memory), α = −0.05, −0.1, −1/3",
        "max |ρ(Ω = 1e6) − ρ∞|",
        1e-3,
        "at α = −1/3 the limit is a double root, approached like Ω^(−2/3) (8e-5 at Ω = 1e6)",
        _measure_hht_radius,
    ),
    Problem(
        "generalized-alpha-spectral-radius",
        "Generalized-α spectral radius at Ω → ∞",
        "Chung & Hulbert (1993), J. Appl. Mech. 60(2)",
        "ρ(Ω → ∞) = ρ∞, ρ∞ = 0, 0.5, 0.9, 1",
        "max |ρ(Ω = 1e6) − ρ∞|",
        1e-3,
        "the triple root at infinity is approached slowly (1e-4 at Ω = 1e6 for ρ∞ = 0)",
        _measure_genalpha_radius,
    ),
    Problem(
        "exact-vs-solve-ivp",
        "Exact method vs scipy solve_ivp, 3 DOF, non-classical damping",
        "scipy.integrate.solve_ivp (DOP853, rtol 1e-13) as an independent reference",
        "piecewise-linear random load, 40 steps of 0.05 s",
        "max |u − u_ref| / max |u_ref|",
        1e-8,
        "both are accurate to ~1e-12; 1e-8 is the tolerance the issue sets",
        _measure_exact_vs_solve_ivp,
    ),
)
