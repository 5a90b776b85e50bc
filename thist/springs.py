"""Story force–deformation laws of a shear chain, vectorised over the stories.

A chain's story springs are described by one frozen :class:`SpringParameters`
(per-story arrays, SI) and updated through one mutable :class:`SpringState`:

``state.trial(drift) -> (force, tangent)``
    Story shear (N) and tangent stiffness (N/m) at the given story drifts (m),
    computed from the committed state; the committed state is not changed. The
    result of the most recent call is kept as the pending trial.
``state.commit()``
    Accept the pending trial at the end of a converged step: it becomes the
    committed state, and the accumulated quantities (peak drift, yield
    excursions, cumulative plastic deformation, work and hysteretic energy) are
    updated along the committed path.

All stories are updated at once with array operations; a chain may mix laws
(each story has its own), and each law's rule is applied to its stories through
a mask, never a per-story Python loop. The rules are written as pure functions
(:func:`bilinear_trial`, :func:`clough_johnston_trial`) on plain arrays so that a
compiled kernel can take them over unchanged.

Laws
----
``"elastic"``
    V = k δ.
``"bilinear"``
    Initial stiffness k, yield force F_y, post-yield stiffness α_h k with
    0 ≤ α_h < 1, kinematic hardening (the elastic range keeps the width 2 F_y and
    moves with the back force). α_h = 0 is elastic–perfectly-plastic. Integrated
    by the exact return mapping of one-dimensional rate-independent plasticity
    with linear kinematic hardening, hardening modulus H = α_h k / (1 − α_h)
    (Simo & Hughes, *Computational Inelasticity*, 1998, §1.3–1.4): the force is
    exact for any deformation increment, and the tangent is the consistent one.
``"clough-johnston"``
    Clough's peak-oriented stiffness-degrading law (Clough & Johnston 1966,
    "Effect of stiffness degradation on earthquake ductility requirements",
    Proc. Japan Earthquake Engineering Symposium, Tokyo, 227–232). Rules as
    implemented (the rule set is from memory of the paper and of its common
    restatements; the treatment of reversals inside a reloading branch is the
    usual one and is stated here because the short paper does not spell it out):

    1. Envelope (skeleton): symmetric bilinear, k up to ±F_y at ±δ_y = ±F_y/k,
       then slope α_h k.
    2. Unloading from any point is linear with the initial stiffness k.
    3. Once the force has crossed zero, reloading follows the straight line from
       the zero-force point towards the point of largest previous excursion on
       the side being loaded (the peak point, on the envelope); while that side
       has not yet yielded the target is its yield point (±δ_y, ±F_y). Past the
       peak point the path follows the envelope and the peak point moves with it.
    4. A reversal on a reloading branch unloads with k; reloading before the
       force crosses zero again returns along k to the reloading line and then
       continues along it towards the same peak point (rules 2 and 3 combined:
       the force is the elastic trial bounded by the reloading line).

    If a very large excursion on one side makes the reloading line towards the
    other side flatter than α_h k (only possible for α_h > 0 after some 1/α_h
    yield drifts), the line is kept as it is; the force stays continuous.

Derived quantities (all laws, one definition)
---------------------------------------------
* Inelastic deformation δ − V/k: the drift that elastic unloading with the
  initial stiffness would leave. Its cumulative absolute change is the
  *cumulative plastic deformation* (for the bilinear law exactly Σ|Δδ_p|; for
  Clough's law it includes the inelastic part of reloading).
* Recoverable strain energy V²/(2k), J (unloading is at the initial stiffness in
  all three laws).
* Work ∫V dδ along the committed path by the trapezoidal rule per committed step
  (the rule that matches the restoring-force work of the implicit integrators);
  *hysteretic energy* = work − recoverable energy. The trapezoidal rule is exact
  where every kink of the force path falls on a committed point; otherwise its
  error at a kink is at most |Δk| h²/8 for a step h.
* A *yield excursion* is a run of consecutive committed steps that yield in one
  direction: bilinear — plastic flow; Clough — the envelope advances past the
  previous peak point. ``yield_sign`` of the last committed step is +1, −1 or 0.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from thist.errors import InputError

#: Law names accepted by :func:`story_springs`.
LAWS: tuple[str, ...] = ("elastic", "bilinear", "clough-johnston")

_ELASTIC, _BILINEAR, _CLOUGH = 0, 1, 2


@dataclass(frozen=True, eq=False)
class SpringParameters:
    """Per-story parameters of a chain's story springs, SI, bottom to top.

    Build with :func:`story_springs` (or :func:`elastic`, :func:`bilinear`,
    :func:`clough_johnston`), which validates them.

    Attributes
    ----------
    law : tuple of str
        Law of each story, one of :data:`LAWS`.
    stiffness : ndarray, shape (n,)
        Initial stiffness k, N/m.
    yield_force : ndarray, shape (n,)
        Yield force F_y, N; ``inf`` for elastic stories.
    post_yield_ratio : ndarray, shape (n,)
        α_h, post-yield stiffness over initial stiffness (0 for elastic stories).
    """

    law: tuple[str, ...]
    stiffness: np.ndarray
    yield_force: np.ndarray
    post_yield_ratio: np.ndarray

    @property
    def n(self) -> int:
        """Number of stories."""
        return self.stiffness.size

    @property
    def yield_drift(self) -> np.ndarray:
        """Yield drift δ_y = F_y / k, m (``inf`` for elastic stories)."""
        return self.yield_force / self.stiffness

    @property
    def codes(self) -> np.ndarray:
        """Integer law code of each story (0 elastic, 1 bilinear, 2 Clough–Johnston)."""
        return np.array([LAWS.index(name) for name in self.law], dtype=np.int8)

    def new_state(self) -> SpringState:
        """A virgin state: zero drift and force, nothing accumulated."""
        return SpringState(self)


def story_springs(
    law: str | Sequence[str],
    stiffness: float | Sequence[float] | np.ndarray,
    yield_force: float | Sequence[float] | np.ndarray | None = None,
    yield_drift: float | Sequence[float] | np.ndarray | None = None,
    post_yield_ratio: float | Sequence[float] | np.ndarray = 0.0,
) -> SpringParameters:
    """Validated story-spring parameters for a chain, possibly mixing laws.

    Scalars are broadcast to every story. For each yielding story give either the
    yield force or the yield drift (the other may be omitted or NaN for that
    story); values for elastic stories are ignored.

    Parameters
    ----------
    law : str or sequence of str
        ``"elastic"``, ``"bilinear"`` or ``"clough-johnston"``, per story or for all.
    stiffness : float or array_like, shape (n,)
        Initial story stiffness k, N/m; finite and > 0.
    yield_force : float or array_like, shape (n,), optional
        Yield force F_y, N; finite and > 0.
    yield_drift : float or array_like, shape (n,), optional
        Yield drift δ_y, m; finite and > 0 (F_y = k δ_y).
    post_yield_ratio : float or array_like, shape (n,)
        α_h ∈ [0, 1): post-yield stiffness / initial stiffness. Default 0
        (elastic–perfectly-plastic for ``"bilinear"``).

    Returns
    -------
    SpringParameters

    Raises
    ------
    InputError
        With the field ``"law[i]"``, ``"stiffness[i]"``, ``"yield_force[i]"``,
        ``"yield_drift[i]"`` or ``"post_yield_ratio[i]"`` of the first bad story
        (0-based, bottom story 0).
    """
    k = np.atleast_1d(np.asarray(stiffness, dtype=float)).copy()
    n = k.size
    if k.ndim != 1 or n == 0:
        raise InputError("must be one stiffness per story (a non-empty list)", "stiffness")
    laws = (law,) * n if isinstance(law, str) else tuple(law)
    if len(laws) != n:
        raise InputError(f"{len(laws)} laws given for {n} stories", "law")
    for i, name in enumerate(laws):
        if name not in LAWS:
            raise InputError(f"unknown spring law {name!r}; known: {', '.join(LAWS)}", f"law[{i}]")
    _require(k, np.isfinite(k) & (k > 0.0), "stiffness", "must be a finite number > 0 N/m")
    yielding = np.array([name != "elastic" for name in laws])

    fy_in = _per_story(yield_force, n, "yield_force")
    dy_in = _per_story(yield_drift, n, "yield_drift")
    has_f = yielding & ~np.isnan(fy_in)
    has_d = yielding & ~np.isnan(dy_in)
    _require(
        fy_in, ~(has_f & has_d), "yield_force", "give the yield force or the yield drift, not both"
    )
    _require(
        fy_in,
        ~yielding | has_f | has_d,
        "yield_force",
        "a yielding story needs a yield force or a yield drift",
    )
    _require(
        fy_in,
        ~has_f | (np.isfinite(fy_in) & (fy_in > 0.0)),
        "yield_force",
        "must be a finite number > 0 N",
    )
    _require(
        dy_in,
        ~has_d | (np.isfinite(dy_in) & (dy_in > 0.0)),
        "yield_drift",
        "must be a finite number > 0 m",
    )
    fy = np.where(has_f, fy_in, k * dy_in)

    alpha = _per_story(post_yield_ratio, n, "post_yield_ratio")
    ok = ~yielding | (np.isfinite(alpha) & (alpha >= 0.0) & (alpha < 1.0))
    _require(alpha, ok, "post_yield_ratio", "must lie in [0, 1)")

    fy = np.where(yielding, fy, np.inf)
    alpha = np.where(yielding, alpha, 0.0)
    for arr in (k, fy, alpha):
        arr.setflags(write=False)
    return SpringParameters(laws, k, fy, alpha)


def elastic(stiffness: float | Sequence[float] | np.ndarray) -> SpringParameters:
    """Linear-elastic story springs, V = k δ (k in N/m)."""
    return story_springs("elastic", stiffness)


def bilinear(
    stiffness: float | Sequence[float] | np.ndarray,
    yield_force: float | Sequence[float] | np.ndarray | None = None,
    *,
    yield_drift: float | Sequence[float] | np.ndarray | None = None,
    post_yield_ratio: float | Sequence[float] | np.ndarray = 0.0,
) -> SpringParameters:
    """Bilinear kinematic-hardening story springs (see :func:`story_springs`)."""
    return story_springs("bilinear", stiffness, yield_force, yield_drift, post_yield_ratio)


def clough_johnston(
    stiffness: float | Sequence[float] | np.ndarray,
    yield_force: float | Sequence[float] | np.ndarray | None = None,
    *,
    yield_drift: float | Sequence[float] | np.ndarray | None = None,
    post_yield_ratio: float | Sequence[float] | np.ndarray = 0.0,
) -> SpringParameters:
    """Clough's peak-oriented degrading story springs (see the module docstring)."""
    return story_springs("clough-johnston", stiffness, yield_force, yield_drift, post_yield_ratio)


def _per_story(value, n: int, field: str) -> np.ndarray:
    if value is None:
        return np.full(n, np.nan)
    arr = np.asarray(value, dtype=float)
    if arr.ndim == 0:
        return np.full(n, float(arr))
    if arr.shape != (n,):
        raise InputError(f"must be one value per story ({n}), got shape {arr.shape}", field)
    return arr.copy()


def _require(values: np.ndarray, ok: np.ndarray, field: str, problem: str) -> None:
    bad = np.flatnonzero(~ok)
    if bad.size:
        i = int(bad[0])
        raise InputError(f"{problem}, got {values[i]!r}", f"{field}[{i}]")


# -- the rules as pure array functions ----------------------------------------------


def bilinear_trial(
    k: np.ndarray,
    fy: np.ndarray,
    hardening: np.ndarray,
    plastic: np.ndarray,
    back: np.ndarray,
    drift: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Return mapping of bilinear kinematic hardening at trial drifts.

    Parameters
    ----------
    k, fy, hardening : ndarray
        Initial stiffness (N/m), yield force (N, ``inf`` = elastic) and hardening
        modulus H = α_h k / (1 − α_h) (N/m).
    plastic, back : ndarray
        Committed plastic drift δ_p (m) and back force q = H δ_p (N).
    drift : ndarray
        Trial drift δ, m.

    Returns
    -------
    force, tangent, plastic, back, sign : ndarray
        Story shear (N), consistent tangent (N/m), updated δ_p and q, and the
        direction of plastic flow in this increment (+1, −1 or 0).
    """
    f_trial = k * (drift - plastic)
    xi = f_trial - back
    excess = np.abs(xi) - fy
    flows = excess > 0.0
    sign = np.where(flows, np.sign(xi), 0.0)
    dlam = np.where(flows, excess, 0.0) / (k + hardening)
    force = f_trial - k * dlam * sign
    tangent = np.where(flows, k * hardening / (k + hardening), k)
    return force, tangent, plastic + dlam * sign, back + hardening * dlam * sign, sign


def clough_johnston_trial(
    k: np.ndarray,
    fy: np.ndarray,
    alpha: np.ndarray,
    drift0: np.ndarray,
    force0: np.ndarray,
    origin: np.ndarray,
    peak_pos: np.ndarray,
    peak_neg: np.ndarray,
    drift: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Clough's peak-oriented rules (module docstring) at trial drifts.

    Parameters
    ----------
    k, fy, alpha : ndarray
        Initial stiffness (N/m), yield force (N), post-yield ratio α_h.
    drift0, force0 : ndarray
        Committed drift (m) and force (N).
    origin : ndarray
        Drift at the last zero-force crossing (start of the reloading line), m.
    peak_pos, peak_neg : ndarray
        Largest positive / most negative committed drift so far, m; start at
        ±δ_y. The peak points lie on the envelope.
    drift : ndarray
        Trial drift, m.

    Returns
    -------
    force, tangent, origin, peak_pos, peak_neg, sign : ndarray
        Story shear (N), tangent (N/m), updated reloading origin and peaks, and
        +1 / −1 where the envelope advances past the previous peak, else 0.
    """
    dy = fy / k
    f_el = force0 + k * (drift - drift0)
    crossed = f_el * force0 <= 0.0
    origin = np.where(crossed, drift0 - force0 / k, origin)
    positive = f_el > 0.0
    peak = np.where(positive, peak_pos, peak_neg)
    side = np.where(positive, 1.0, -1.0)
    f_peak = side * (fy + alpha * k * (side * peak - dy))
    slope = f_peak / np.maximum(side * (peak - origin), np.finfo(float).tiny) * side
    beyond = side * (drift - peak) > 0.0
    env = side * (fy + alpha * k * (side * drift - dy))
    bound = np.where(beyond, env, slope * (drift - origin))
    bounded = side * (f_el - bound) >= 0.0
    force = np.where(bounded, bound, f_el)
    tangent = np.where(bounded, np.where(beyond, alpha * k, slope), k)
    advance = bounded & beyond
    peak_pos = np.where(advance & positive, drift, peak_pos)
    peak_neg = np.where(advance & ~positive, drift, peak_neg)
    sign = np.where(advance, side, 0.0)
    return force, tangent, origin, peak_pos, peak_neg, sign


# -- the mutable state of a chain ----------------------------------------------------


class SpringState:
    """Committed and pending state of all story springs of a chain (SI arrays).

    Attributes (committed, shape (n,))
    ----------------------------------
    drift, force, tangent : ndarray
        Story drift (m), shear (N) and tangent stiffness (N/m).
    yield_sign : ndarray of int
        Direction of yielding in the last committed step (+1, −1, 0).
    excursions : ndarray of int
        Number of yield excursions so far.
    plastic_deformation : ndarray
        Cumulative plastic (inelastic) deformation Σ|Δ(δ − V/k)|, m.
    work : ndarray
        Work done on the spring along the committed path, J.
    peak_drift : ndarray
        Largest committed |δ|, m.
    """

    def __init__(self, params: SpringParameters):
        self.params = params
        n = params.n
        k = params.stiffness
        alpha = params.post_yield_ratio
        self._k = k
        self._fy = params.yield_force
        self._alpha = alpha
        self._hardening = alpha * k / (1.0 - alpha)
        codes = params.codes
        self._clough = np.flatnonzero(codes == _CLOUGH)
        self._has_clough = self._clough.size > 0
        dy = params.yield_drift
        self.drift = np.zeros(n)
        self.force = np.zeros(n)
        self.tangent = k.astype(float).copy()
        self.yield_sign = np.zeros(n, dtype=np.int8)
        self.excursions = np.zeros(n, dtype=np.int64)
        self.plastic_deformation = np.zeros(n)
        self.work = np.zeros(n)
        self.peak_drift = np.zeros(n)
        # law-specific state (bilinear / elastic: δ_p, q; Clough: origin and peaks)
        self._plastic = np.zeros(n)
        self._back = np.zeros(n)
        c = self._clough
        self._origin = np.zeros(c.size)
        self._peak_pos = dy[c].copy()
        self._peak_neg = -dy[c].copy()
        self._pending: tuple | None = None

    def trial(self, drift: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Story shear and tangent at trial drifts, from the committed state.

        Parameters
        ----------
        drift : ndarray, shape (n,)
            Trial story drifts, m.

        Returns
        -------
        force : ndarray, shape (n,)
            Story shear, N.
        tangent : ndarray, shape (n,)
            Tangent stiffness dV/dδ, N/m.
        """
        drift = np.asarray(drift, dtype=float)
        force, tangent, plastic, back, sign = bilinear_trial(
            self._k, self._fy, self._hardening, self._plastic, self._back, drift
        )
        clough = None
        if self._has_clough:
            c = self._clough
            clough = clough_johnston_trial(
                self._k[c],
                self._fy[c],
                self._alpha[c],
                self.drift[c],
                self.force[c],
                self._origin,
                self._peak_pos,
                self._peak_neg,
                drift[c],
            )
            force[c] = clough[0]
            tangent[c] = clough[1]
            sign[c] = clough[5]
        self._pending = (drift.copy(), force, tangent, plastic, back, sign, clough)
        return force.copy(), tangent.copy()

    def commit(self) -> None:
        """Make the most recent trial the committed state and accumulate along the path."""
        if self._pending is None:
            raise RuntimeError("commit() needs a trial() first")
        drift, force, tangent, plastic, back, sign, clough = self._pending
        k = self._k
        inelastic_old = self.drift - self.force / k
        inelastic_new = drift - force / k
        self.plastic_deformation += np.abs(inelastic_new - inelastic_old)
        self.work += 0.5 * (self.force + force) * (drift - self.drift)
        new_sign = sign.astype(np.int8)
        self.excursions += (new_sign != 0) & (new_sign != self.yield_sign)
        self.yield_sign = new_sign
        self.peak_drift = np.maximum(self.peak_drift, np.abs(drift))
        self.drift, self.force, self.tangent = drift, force, tangent
        self._plastic, self._back = plastic, back
        if clough is not None:
            self._origin, self._peak_pos, self._peak_neg = clough[2], clough[3], clough[4]
        self._pending = None

    @property
    def recoverable_energy(self) -> np.ndarray:
        """Recoverable strain energy V²/(2k) of each story, J."""
        return self.force**2 / (2.0 * self._k)

    @property
    def hysteretic_energy(self) -> np.ndarray:
        """Energy dissipated by each story so far (work − recoverable), J."""
        return self.work - self.recoverable_energy

    @property
    def yield_drift(self) -> np.ndarray:
        """Yield drift of each story, m (``inf`` for elastic stories)."""
        return self.params.yield_drift

    @property
    def ductility(self) -> np.ndarray:
        """Ductility demand so far, peak |δ| / δ_y (NaN for elastic stories)."""
        dy = self.params.yield_drift
        return np.where(
            np.isfinite(dy), self.peak_drift / np.where(np.isfinite(dy), dy, 1.0), np.nan
        )


__all__ = [
    "LAWS",
    "SpringParameters",
    "SpringState",
    "bilinear",
    "bilinear_trial",
    "clough_johnston",
    "clough_johnston_trial",
    "elastic",
    "story_springs",
]
