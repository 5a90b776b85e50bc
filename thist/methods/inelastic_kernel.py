"""Compiled per-step kernels of the inelastic shear-chain integrators (numba).

The kernels reproduce, operation for operation, the algorithm of
:mod:`thist.methods.inelastic` (its pure-numpy path is the reference and the
fallback): the story laws of :mod:`thist.springs` (bilinear return mapping,
Clough–Johnston rules), the tridiagonal effective tangent, its banded Cholesky
solve written out as LAPACK's ``dpbtf2``/``dpbtrs`` do it for one
super-diagonal (so the solves agree with ``scipy.linalg.lapack.dpbsv`` to the
last bit in practice), Newton–Raphson with the same two convergence tests, step
halving in the same depth-first order, the same energy ledger and the same
growth checks every 256 steps. Results agree with the pure path to round-off
(floating-point sums may be taken in another order); ``tests/test_kernels.py``
compares the two.

A kernel advances a run by a chunk of samples and writes them into output
buffers, so the same kernel serves full histories (one chunk) and peaks-only
runs (small reused buffers, see :mod:`thist.peaks`). All the state a run
carries from chunk to chunk lives in plain float64 arrays:

``springs`` (13, n)
    committed spring state, rows :data:`SPRING_ROWS`;
``state`` (5, n)
    u, v, a, level restoring force f_s and damping force f_d of the last sample;
``counters`` (:data:`COUNTER_NAMES`,)
    iterations, largest iterations in a step, substeps, deepest halving,
    subdivided steps, input and damping energy, and the running growth-check
    maximum and finiteness flag.

numba is a dependency of thist, but the kernels are not required: :data:`AVAILABLE`
is False when numba does not import or when the environment variable
``THIST_NO_NUMBA`` is set to anything but ``""``/``"0"``; the callers then use the
pure path. Compilation is cached on disk
(``cache=True``), so only the first run on a machine pays for it.
"""

from __future__ import annotations

import math
import os

import numpy as np

try:  # numba is a dependency; the fallback serves machines where it cannot import
    if os.environ.get("THIST_NO_NUMBA", "") not in ("", "0"):
        raise ImportError("disabled by THIST_NO_NUMBA")
    from numba import njit

    AVAILABLE = True
except ImportError:  # pragma: no cover - exercised with THIST_NO_NUMBA=1
    AVAILABLE = False

    def njit(*args, **kwargs):  # type: ignore[no-redef]
        """Stand-in decorator: the kernels stay importable (and slow) without numba."""
        if args and callable(args[0]):
            return args[0]
        return lambda fn: fn


#: Rows of the committed spring-state array.
SPRING_ROWS = (
    "drift",
    "force",
    "tangent",
    "yield_sign",
    "excursions",
    "plastic_deformation",
    "work",
    "peak_drift",
    "plastic",
    "back",
    "origin",
    "peak_pos",
    "peak_neg",
)
(
    _DRIFT,
    _FORCE,
    _TANGENT,
    _YSIGN,
    _EXCUR,
    _PLDEF,
    _WORK,
    _PEAKD,
    _PLASTIC,
    _BACK,
    _ORIGIN,
    _PPOS,
    _PNEG,
) = range(len(SPRING_ROWS))
#: Trial rows (pending state): drift, force, tangent, plastic, back, sign, origin, peaks.
_T_DRIFT, _T_FORCE, _T_TANGENT, _T_PLASTIC, _T_BACK, _T_SIGN, _T_ORIGIN, _T_PPOS, _T_PNEG = range(9)
N_TRIAL_ROWS = 9

#: Entries of the counters array.
COUNTER_NAMES = (
    "iterations",
    "max_iterations",
    "substeps",
    "deepest",
    "subdivided",
    "e_input",
    "e_damping",
    "block_max",
    "block_finite",
)
_C_IT, _C_MAXIT, _C_SUB, _C_DEEP, _C_SUBDIV, _C_EIN, _C_ED, _C_BMAX, _C_BFIN = range(9)

#: Kernel status codes.
OK, NOT_CONVERGED, NOT_POSITIVE, GROWTH = 0, 1, 2, 3
#: Growth check interval, steps (as the pure path).
CHECK_EVERY = 256

_CLOUGH = 2
_TINY = np.finfo(float).tiny


# -- story laws ------------------------------------------------------------------------


@njit(cache=True)
def _sign(x):
    if x > 0.0:
        return 1.0
    if x < 0.0:
        return -1.0
    return 0.0 * x


@njit(cache=True)
def spring_trial(k, fy, alpha, hard, codes, springs, drift, trial):
    """Trial force and tangent at ``drift`` from the committed state (cf. SpringState.trial)."""
    n = drift.size
    for j in range(n):
        d = drift[j]
        trial[_T_DRIFT, j] = d
        kj = k[j]
        # bilinear kinematic hardening (every story, as the pure path)
        plastic = springs[_PLASTIC, j]
        back = springs[_BACK, j]
        f_trial = kj * (d - plastic)
        xi = f_trial - back
        excess = abs(xi) - fy[j]
        flows = excess > 0.0
        sign = _sign(xi) if flows else 0.0
        dlam = (excess if flows else 0.0) / (kj + hard[j])
        force = f_trial - kj * dlam * sign
        tangent = kj * hard[j] / (kj + hard[j]) if flows else kj
        trial[_T_PLASTIC, j] = plastic + dlam * sign
        trial[_T_BACK, j] = back + hard[j] * dlam * sign
        origin = springs[_ORIGIN, j]
        ppos = springs[_PPOS, j]
        pneg = springs[_PNEG, j]
        if codes[j] == _CLOUGH:
            aj = alpha[j]
            fyj = fy[j]
            dy = fyj / kj
            drift0 = springs[_DRIFT, j]
            force0 = springs[_FORCE, j]
            f_el = force0 + kj * (d - drift0)
            if f_el * force0 <= 0.0:
                origin = drift0 - force0 / kj
            positive = f_el > 0.0
            peak = ppos if positive else pneg
            side = 1.0 if positive else -1.0
            f_peak = side * (fyj + aj * kj * (side * peak - dy))
            slope = f_peak / max(side * (peak - origin), _TINY) * side
            beyond = side * (d - peak) > 0.0
            env = side * (fyj + aj * kj * (side * d - dy))
            bound = env if beyond else slope * (d - origin)
            bounded = side * (f_el - bound) >= 0.0
            force = bound if bounded else f_el
            if bounded:
                tangent = aj * kj if beyond else slope
            else:
                tangent = kj
            advance = bounded and beyond
            if advance and positive:
                ppos = d
            if advance and not positive:
                pneg = d
            sign = side if advance else 0.0
        trial[_T_FORCE, j] = force
        trial[_T_TANGENT, j] = tangent
        trial[_T_SIGN, j] = sign
        trial[_T_ORIGIN, j] = origin
        trial[_T_PPOS, j] = ppos
        trial[_T_PNEG, j] = pneg


@njit(cache=True)
def spring_commit(k, springs, trial):
    """Make the trial the committed state and accumulate along the path (cf. commit)."""
    n = k.size
    for j in range(n):
        kj = k[j]
        d0 = springs[_DRIFT, j]
        f0 = springs[_FORCE, j]
        d1 = trial[_T_DRIFT, j]
        f1 = trial[_T_FORCE, j]
        springs[_PLDEF, j] += abs((d1 - f1 / kj) - (d0 - f0 / kj))
        springs[_WORK, j] += 0.5 * (f0 + f1) * (d1 - d0)
        new_sign = trial[_T_SIGN, j]
        if new_sign != 0.0 and new_sign != springs[_YSIGN, j]:
            springs[_EXCUR, j] += 1.0
        springs[_YSIGN, j] = new_sign
        springs[_PEAKD, j] = max(springs[_PEAKD, j], abs(d1))
        springs[_DRIFT, j] = d1
        springs[_FORCE, j] = f1
        springs[_TANGENT, j] = trial[_T_TANGENT, j]
        springs[_PLASTIC, j] = trial[_T_PLASTIC, j]
        springs[_BACK, j] = trial[_T_BACK, j]
        springs[_ORIGIN, j] = trial[_T_ORIGIN, j]
        springs[_PPOS, j] = trial[_T_PPOS, j]
        springs[_PNEG, j] = trial[_T_PNEG, j]


# -- chain algebra -----------------------------------------------------------------------


@njit(cache=True)
def _story_drift(u, out):
    out[0] = u[0]
    for j in range(1, u.size):
        out[j] = u[j] - u[j - 1]


@njit(cache=True)
def _level_forces(shear, out):
    n = shear.size
    for j in range(n - 1):
        out[j] = shear[j] - shear[j + 1]
    out[n - 1] = shear[n - 1]


@njit(cache=True)
def _damping_force(a0, m, damper, vel, tmp, out):
    """a0 m vel + level_forces(damper * story_drift(vel))."""
    n = vel.size
    tmp[0] = damper[0] * vel[0]
    for j in range(1, n):
        tmp[j] = damper[j] * (vel[j] - vel[j - 1])
    for j in range(n - 1):
        out[j] = a0 * m[j] * vel[j] + (tmp[j] - tmp[j + 1])
    out[n - 1] = a0 * m[n - 1] * vel[n - 1] + tmp[n - 1]


@njit(cache=True)
def _banded(diag_mass, story, ab):
    """Upper banded form (2, n) of diag(diag_mass) + chain(story) (cf. inelastic._banded)."""
    n = story.size
    for j in range(n):
        ab[1, j] = diag_mass[j] + story[j]
    for j in range(n - 1):
        ab[1, j] += story[j + 1]
    ab[0, 0] = 0.0
    for j in range(1, n):
        ab[0, j] = -story[j]


@njit(cache=True)
def _pbtrf(ab, fac):
    """Banded Cholesky of an SPD tridiagonal matrix, LAPACK dpbtf2 (upper, kd = 1)."""
    n = ab.shape[1]
    for j in range(n):
        fac[0, j] = ab[0, j]
        fac[1, j] = ab[1, j]
    for j in range(n):
        ajj = fac[1, j]
        if not ajj > 0.0:
            return j + 1
        ajj = math.sqrt(ajj)
        fac[1, j] = ajj
        if j + 1 < n:
            x = fac[0, j + 1] * (1.0 / ajj)
            fac[0, j + 1] = x
            fac[1, j + 1] = fac[1, j + 1] + x * (-x)
    return 0


@njit(cache=True)
def _pbtrs(fac, b, x):
    """Solve with the factor of :func:`_pbtrf`, LAPACK dpbtrs (two banded triangular solves)."""
    n = b.size
    for j in range(n):
        t = b[j]
        if j > 0:
            t = t - fac[0, j] * x[j - 1]
        x[j] = t / fac[1, j]
    for j in range(n - 1, -1, -1):
        if x[j] != 0.0:
            x[j] = x[j] / fac[1, j]
            if j > 0:
                x[j - 1] = x[j - 1] - x[j] * fac[0, j]


@njit(cache=True)
def _dot(a, b):
    s = 0.0
    for j in range(a.size):
        s += a[j] * b[j]
    return s


@njit(cache=True)
def _absmax(a):
    s = 0.0
    for j in range(a.size):
        s = max(s, abs(a[j]))
    return s


@njit(cache=True)
def _all_finite(a):
    for j in range(a.size):
        if not math.isfinite(a[j]):
            return False
    return True


@njit(cache=True)
def _growth_row(counters, row):
    """Fold one displacement row into the running growth-check maximum."""
    for j in range(row.size):
        x = row[j]
        if not math.isfinite(x):
            counters[_C_BFIN] = 0.0
        elif abs(x) > counters[_C_BMAX]:
            counters[_C_BMAX] = abs(x)


@njit(cache=True)
def _growth_check(counters, bound, row):
    """True when the rows since the last check are finite and within ``bound``.

    The block then restarts at ``row`` (the pure path's blocks overlap by one row).
    """
    ok = counters[_C_BFIN] == 1.0 and counters[_C_BMAX] <= bound
    if ok:
        counters[_C_BMAX] = 0.0
        counters[_C_BFIN] = 1.0
        _growth_row(counters, row)
    return ok


# -- implicit generalized-α family -------------------------------------------------------


@njit(cache=True)
def _alpha_step(
    coef,
    dt,
    m,
    k,
    fy,
    alpha,
    hard,
    codes,
    a0,
    damper,
    springs,
    trial,
    u,
    v,
    a,
    fs,
    p0,
    p1,
    modified,
    ftol,
    etol,
    max_iterations,
    force_scale,
    work,
    u1,
    v1,
    a1,
):
    """One generalized-α step with Newton–Raphson (cf. inelastic.alpha_step).

    Returns (status, iterations); on OK, u1/v1/a1 and ``trial`` hold the converged
    state; on NOT_CONVERGED, ``work[0]`` holds the last residual.
    """
    n = m.size
    am, af, beta, gamma = coef[0], coef[1], coef[2], coef[3]
    c1 = 1.0 / (beta * dt * dt)
    c2 = gamma / (beta * dt)
    residual = work[0]
    delta = work[1]
    u_pred = work[2]
    v_pred = work[3]
    known = work[4]
    tmp = work[5]
    tmp2 = work[6]
    drift = work[7]
    diag_mass = work[8]
    story = work[9]
    fs1 = work[10]
    inertia = work[11]
    ab = work[12:14]
    fac = work[14:16]
    s_dt = dt * dt * (0.5 - beta)
    s_v = dt * (1.0 - gamma)
    for j in range(n):
        u_pred[j] = u[j] + dt * v[j] + s_dt * a[j]
        v_pred[j] = v[j] + s_v * a[j]
    _damping_force(a0, m, damper, v, tmp, tmp2)
    for j in range(n):
        known[j] = (1.0 - af) * p1[j] + af * p0[j] - am * m[j] * a[j] - af * (tmp2[j] + fs[j])
    dm = (1.0 - am) * c1 + (1.0 - af) * c2 * a0
    for j in range(n):
        diag_mass[j] = dm * m[j]
    if modified:
        for j in range(n):
            story[j] = (1.0 - af) * (c2 * damper[j] + springs[_TANGENT, j])
        _banded(diag_mass, story, ab)
        info = _pbtrf(ab, fac)
        if info != 0:
            return NOT_POSITIVE, info
    for j in range(n):
        u1[j] = u[j]
    e_first = 0.0
    gdt = gamma * dt
    it = 0
    for it in range(max_iterations + 1):
        _story_drift(u1, drift)
        spring_trial(k, fy, alpha, hard, codes, springs, drift, trial)
        for j in range(n):
            a1[j] = c1 * (u1[j] - u_pred[j])
            v1[j] = v_pred[j] + gdt * a1[j]
        _level_forces(trial[_T_FORCE], fs1)
        for j in range(n):
            inertia[j] = (1.0 - am) * m[j] * a1[j]
        _damping_force(a0, m, damper, v1, tmp, tmp2)
        for j in range(n):
            residual[j] = known[j] - inertia[j] - (1.0 - af) * (tmp2[j] + fs1[j])
        if not _all_finite(residual):
            return NOT_CONVERGED, it
        if not modified:
            for j in range(n):
                kt = springs[_TANGENT, j] if it == 0 else trial[_T_TANGENT, j]
                story[j] = (1.0 - af) * (c2 * damper[j] + kt)
            _banded(diag_mass, story, ab)
            info = _pbtrf(ab, fac)
            if info != 0:
                return NOT_POSITIVE, info
        _pbtrs(fac, residual, delta)
        energy = abs(_dot(residual, delta))
        if it == 0:
            e_first = energy
        f_ref = max(force_scale, _absmax(fs1), _absmax(inertia))
        f_tol = ftol * f_ref
        kmax = ab[1, 0]
        for j in range(1, n):
            kmax = max(kmax, ab[1, j])
        e_floor = f_tol * f_tol / kmax
        if _absmax(residual) <= f_tol and energy <= etol * max(e_first, e_floor):
            return OK, it
        if not _all_finite(delta):
            break
        for j in range(n):
            u1[j] = u1[j] + delta[j]
    return NOT_CONVERGED, it


@njit(cache=True)
def implicit_start(
    m, k, fy, alpha, hard, codes, a0, a1, tangent_damping, springs, trial, state, u0, v0, p0
):
    """Commit the springs at u0 and set (u, v, a, f_s, f_d) of the first sample."""
    n = m.size
    drift = np.empty(n)
    tmp = np.empty(n)
    damper = np.empty(n)
    _story_drift(u0, drift)
    spring_trial(k, fy, alpha, hard, codes, springs, drift, trial)
    spring_commit(k, springs, trial)
    for j in range(n):
        state[0, j] = u0[j]
        state[1, j] = v0[j]
        damper[j] = a1 * (springs[_TANGENT, j] if tangent_damping else k[j])
    _level_forces(springs[_FORCE], state[3])
    _damping_force(a0, m, damper, v0, tmp, state[4])
    for j in range(n):
        state[2, j] = (p0[j] - state[4, j] - state[3, j]) / m[j]


@njit(cache=True)
def implicit_chunk(
    coef,
    dt,
    m,
    k,
    fy,
    alpha,
    hard,
    codes,
    a0,
    a1,
    tangent_damping,
    modified,
    ftol,
    etol,
    max_iterations,
    max_halvings,
    force_scale,
    bound,
    springs,
    trial,
    state,
    counters,
    peaks,
    ag,
    i0,
    n_steps,
    out_u,
    out_v,
    out_a,
    out_shear,
    out_scalars,
    err,
):
    """Advance an implicit run by ``ag.size − 1`` record steps from step ``i0``.

    ``ag`` holds the ground acceleration at samples i0 … i0 + L; row j of the
    outputs receives sample i0 + 1 + j: u, v, a, story shear, and
    ``out_scalars`` (L, 3) the spring work, input and damping energy. ``peaks``
    (2, n) holds the signed peak drift and its time. ``n_steps`` is the number
    of samples of the whole run (for the final growth check).

    Returns (status, step): on NOT_CONVERGED ``err`` holds [t0, dt, depth,
    iterations, residual...]; on NOT_POSITIVE ``err[0]`` the time; on GROWTH
    [finite flag, peak, time].
    """
    n = m.size
    work = np.empty((16, n))
    u1 = np.empty(n)
    v1 = np.empty(n)
    a1v = np.empty(n)
    damper = np.empty(n)
    p0 = np.empty(n)
    p1 = np.empty(n)
    fd1 = np.empty(n)
    tmp = np.empty(n)
    du = np.empty(n)
    cap = max_halvings + 3
    st_p0 = np.empty((cap, n))
    st_p1 = np.empty((cap, n))
    st_t = np.empty(cap)
    st_dt = np.empty(cap)
    st_depth = np.empty(cap, dtype=np.int64)
    u = state[0]
    v = state[1]
    a = state[2]
    fs = state[3]
    fd = state[4]
    length = ag.size - 1
    for jj in range(length):
        i = i0 + jj
        before = counters[_C_SUB]
        for j in range(n):
            st_p0[0, j] = -(ag[jj] * m[j])
            st_p1[0, j] = -(ag[jj + 1] * m[j])
        st_t[0] = i * dt
        st_dt[0] = dt
        st_depth[0] = 0
        top = 1
        while top > 0:
            top -= 1
            t0 = st_t[top]
            h = st_dt[top]
            depth = st_depth[top]
            for j in range(n):
                p0[j] = st_p0[top, j]
                p1[j] = st_p1[top, j]
            for j in range(n):
                damper[j] = a1 * (springs[_TANGENT, j] if tangent_damping else k[j])
            status, its = _alpha_step(
                coef,
                h,
                m,
                k,
                fy,
                alpha,
                hard,
                codes,
                a0,
                damper,
                springs,
                trial,
                u,
                v,
                a,
                fs,
                p0,
                p1,
                modified,
                ftol,
                etol,
                max_iterations,
                force_scale,
                work,
                u1,
                v1,
                a1v,
            )
            if status == NOT_POSITIVE:
                err[0] = t0
                err[1] = its
                return NOT_POSITIVE, i
            if status == NOT_CONVERGED:
                counters[_C_IT] += its
                if depth >= max_halvings:
                    err[0] = t0
                    err[1] = h
                    err[2] = depth
                    err[3] = its
                    for j in range(n):
                        err[4 + j] = work[0, j]
                    return NOT_CONVERGED, i
                # second half first onto the stack, so the first half runs first
                for j in range(n):
                    pm = 0.5 * (p0[j] + p1[j])
                    st_p0[top, j] = pm
                    st_p1[top, j] = p1[j]
                    st_p0[top + 1, j] = p0[j]
                    st_p1[top + 1, j] = pm
                st_t[top] = t0 + 0.5 * h
                st_dt[top] = 0.5 * h
                st_depth[top] = depth + 1
                st_t[top + 1] = t0
                st_dt[top + 1] = 0.5 * h
                st_depth[top + 1] = depth + 1
                top += 2
                continue
            # accept: energies by the trapezoidal rule over this (sub)step
            for j in range(n):
                du[j] = u1[j] - u[j]
                tmp[j] = p0[j] + p1[j]
            counters[_C_EIN] += 0.5 * _dot(du, tmp)
            _damping_force(a0, m, damper, v1, tmp, fd1)
            for j in range(n):
                tmp[j] = fd[j] + fd1[j]
            counters[_C_ED] += 0.5 * _dot(du, tmp)
            for j in range(n):
                fd[j] = fd1[j]
            spring_commit(k, springs, trial)
            t1 = t0 + h
            for j in range(n):
                dj = springs[_DRIFT, j]
                if abs(dj) > abs(peaks[0, j]):
                    peaks[0, j] = dj
                    peaks[1, j] = t1
            for j in range(n):
                u[j] = u1[j]
                v[j] = v1[j]
                a[j] = a1v[j]
            _level_forces(springs[_FORCE], fs)
            counters[_C_IT] += its
            counters[_C_MAXIT] = max(counters[_C_MAXIT], its)
            counters[_C_SUB] += 1
            counters[_C_DEEP] = max(counters[_C_DEEP], depth)
        if counters[_C_SUB] - before > 1:
            counters[_C_SUBDIV] += 1
        for j in range(n):
            out_u[jj, j] = u[j]
            out_v[jj, j] = v[j]
            out_a[jj, j] = a[j]
            out_shear[jj, j] = springs[_FORCE, j]
        w = 0.0
        for j in range(n):
            w += springs[_WORK, j]
        out_scalars[jj, 0] = w
        out_scalars[jj, 1] = counters[_C_EIN]
        out_scalars[jj, 2] = counters[_C_ED]
        _growth_row(counters, u)
        if (i + 1) % CHECK_EVERY == 0 or i + 2 == n_steps:
            if not _growth_check(counters, bound, u):
                err[0] = counters[_C_BFIN]
                err[1] = counters[_C_BMAX]
                err[2] = (i + 1) * dt
                return GROWTH, i
    return OK, i0 + length


# -- explicit central difference ---------------------------------------------------------


@njit(cache=True)
def central_chunk(
    dt,
    m,
    k,
    fy,
    alpha,
    hard,
    codes,
    a0,
    a1,
    tangent_damping,
    bound,
    springs,
    trial,
    state,
    counters,
    peaks,
    ag,
    i0,
    n_steps,
    out_u,
    out_v,
    out_a,
    out_shear,
    out_scalars,
    out_fdamp,
    err,
):
    """Advance an explicit central-difference run by ``ag.size`` steps from step ``i0``.

    Step i computes u[i+1] and completes sample i: row j of the outputs receives
    sample i0 + j: u, v, a (central differences), story shear and
    ``out_scalars`` (L, 1) spring work at that sample, ``out_fdamp`` the damping
    force C_i u̇[i]. ``state`` rows 0 and 1 hold u[i−1] and u[i] on entry and are
    advanced; row 3 the level restoring force at u[i].

    Returns (status, step); on GROWTH ``err`` holds [finite flag, peak, time].
    """
    n = m.size
    m_dt2 = np.empty(n)
    diag_mass = np.empty(n)
    story = np.empty(n)
    c = np.empty(n)
    c_prev = np.empty(n)
    rhs = np.empty(n)
    u_next = np.empty(n)
    vel = np.empty(n)
    drift = np.empty(n)
    tmp = np.empty(n)
    ab = np.empty((2, n))
    fac = np.empty((2, n))
    for j in range(n):
        m_dt2[j] = m[j] / (dt * dt)
        diag_mass[j] = m_dt2[j] + 0.5 * a0 * m[j] / dt
    u_prev = state[0]
    u_cur = state[1]
    fs = state[3]
    length = ag.size
    for jj in range(length):
        i = i0 + jj
        for j in range(n):
            c[j] = a1 * (springs[_TANGENT, j] if tangent_damping else k[j])
            story[j] = c[j] / (2.0 * dt)
        _banded(diag_mass, story, ab)
        _damping_force(a0, m, c, u_prev, tmp, c_prev)
        for j in range(n):
            pij = -(ag[jj] * m[j])
            rhs[j] = (
                pij
                - fs[j]
                + 2.0 * m_dt2[j] * u_cur[j]
                - (m_dt2[j] * u_prev[j] - c_prev[j] / (2.0 * dt))
            )
        info = _pbtrf(ab, fac)
        if info != 0:
            err[1] = info
            return NOT_POSITIVE, i
        _pbtrs(fac, rhs, u_next)
        for j in range(n):
            vel[j] = (u_next[j] - u_prev[j]) / (2.0 * dt)
        _damping_force(a0, m, c, vel, tmp, out_fdamp[jj])
        for j in range(n):
            out_u[jj, j] = u_cur[j]
            out_v[jj, j] = vel[j]
            out_a[jj, j] = (u_next[j] - 2.0 * u_cur[j] + u_prev[j]) / (dt * dt)
            out_shear[jj, j] = springs[_FORCE, j]
        w = 0.0
        for j in range(n):
            w += springs[_WORK, j]
        out_scalars[jj, 0] = w
        if i + 1 < n_steps:
            _story_drift(u_next, drift)
            spring_trial(k, fy, alpha, hard, codes, springs, drift, trial)
            spring_commit(k, springs, trial)
            _level_forces(springs[_FORCE], fs)
            t1 = (i + 1) * dt
            for j in range(n):
                dj = springs[_DRIFT, j]
                if abs(dj) > abs(peaks[0, j]):
                    peaks[0, j] = dj
                    peaks[1, j] = t1
        for j in range(n):
            u_prev[j] = u_cur[j]
            u_cur[j] = u_next[j]
        _growth_row(counters, u_next)
        if (i + 1) % CHECK_EVERY == 0 or i + 1 == n_steps:
            if not _growth_check(counters, bound, u_next):
                err[0] = counters[_C_BFIN]
                err[1] = counters[_C_BMAX]
                err[2] = i * dt
                return GROWTH, i
    return OK, i0 + length


# -- packing the spring state --------------------------------------------------------


def initial_springs(stiffness: np.ndarray, yield_drift: np.ndarray) -> np.ndarray:
    """The committed-state array (13, n) of virgin springs (cf. SpringParameters.new_state).

    Parameters
    ----------
    stiffness : ndarray, shape (n,)
        Initial story stiffness, N/m.
    yield_drift : ndarray, shape (n,)
        Yield drift, m (``inf`` for elastic stories; only Clough stories use it).
    """
    arr = np.zeros((len(SPRING_ROWS), stiffness.size))
    arr[_TANGENT] = stiffness
    arr[_PPOS] = yield_drift
    arr[_PNEG] = -yield_drift
    return arr


def unpack_springs(arr: np.ndarray, state) -> None:
    """Copy the committed quantities of ``arr`` onto a :class:`thist.springs.SpringState`.

    Sets the public attributes the story demands read (drift, force, tangent,
    yield sign, excursions, plastic deformation, work, peak drift).
    """
    state.drift = arr[_DRIFT].copy()
    state.force = arr[_FORCE].copy()
    state.tangent = arr[_TANGENT].copy()
    state.yield_sign = arr[_YSIGN].astype(np.int8)
    state.excursions = arr[_EXCUR].astype(np.int64)
    state.plastic_deformation = arr[_PLDEF].copy()
    state.work = arr[_WORK].copy()
    state.peak_drift = arr[_PEAKD].copy()
