"""Story force–deformation laws on prescribed deformation paths.

The expected forces are derived by hand in each test from the published rules:
bilinear kinematic hardening (Simo & Hughes, *Computational Inelasticity*, 1998,
§1.4: elastic range of width 2 F_y translating with the back force, post-yield
slope α_h k) and Clough's peak-oriented law (Clough & Johnston 1966, rules as
restated in thist.springs, from memory). The parameters k = 1000 N/m,
F_y = 10 N (δ_y = 0.01 m), α_h = 0.1 make every hand value a short decimal.
"""

from __future__ import annotations

import numpy as np
import pytest

from thist.errors import InputError
from thist.springs import bilinear, clough_johnston, elastic, story_springs

K, FY, ALPHA = 1000.0, 10.0, 0.1


def drive(params, path):
    """Trial and commit along a path of drifts; return forces, tangents and the state."""
    state = params.new_state()
    forces, tangents = [], []
    for d in path:
        f, kt = state.trial(np.atleast_1d(d).astype(float))
        state.commit()
        forces.append(f.copy())
        tangents.append(kt.copy())
    return np.array(forces), np.array(tangents), state


def test_elastic_law_is_linear_and_stores_its_energy():
    """V = kδ; work ½kδ² is all recoverable (trapezoidal rule exact for a line)."""
    f, kt, state = drive(elastic([K, 2 * K]), [[0.01, -0.02], [0.03, 0.01]])
    np.testing.assert_allclose(f[-1], [30.0, 20.0], rtol=1e-15)
    np.testing.assert_allclose(kt[-1], [K, 2 * K])
    np.testing.assert_allclose(state.work, 0.5 * np.array([K, 2 * K]) * np.array([0.03, 0.01]) ** 2)
    np.testing.assert_allclose(state.hysteretic_energy, 0.0, atol=1e-15)
    assert np.all(state.excursions == 0) and np.all(np.isnan(state.ductility))


def test_bilinear_monotonic_path_follows_the_envelope():
    """Hand values: kδ up to δ_y = 0.01 m, then F_y + α_h k (δ − δ_y)."""
    path = [0.005, 0.01, 0.02, 0.03]
    f, kt, state = drive(bilinear(K, FY, post_yield_ratio=ALPHA), path)
    np.testing.assert_allclose(f[:, 0], [5.0, 10.0, 11.0, 12.0], rtol=1e-14)
    np.testing.assert_allclose(kt[:, 0], [K, K, ALPHA * K, ALPHA * K], rtol=1e-14)
    # plastic drift 0.03 - 12/1000 = 0.018 m; one excursion; μ = 3
    np.testing.assert_allclose(state.plastic_deformation, [0.018], rtol=1e-12)
    assert state.excursions[0] == 1
    np.testing.assert_allclose(state.ductility, [3.0])


def test_bilinear_cyclic_growing_amplitude_matches_hand_values():
    """Kinematic hardening, cycles ±0.02 then ±0.04 m.

    Hand derivation: at 0.02 V = 11 (back force 1); reversed yielding starts at
    V = 1 − 10 = −9, i.e. δ = 0.02 − 20/1000 = 0, and −0.02 gives −9 − 2 = −11;
    reloading yields again at V = 9 (δ = 0) and 0.04 gives 9 + 4 = 13; from there
    reversed yielding at V = 3 − 10 = −7 (δ = 0.02) and −0.04 gives −7 − 6 = −13.
    """
    path = [0.02, 0.0, -0.02, 0.0, 0.04, 0.02, -0.04]
    f, kt, state = drive(bilinear(K, FY, post_yield_ratio=ALPHA), path)
    np.testing.assert_allclose(f[:, 0], [11.0, -9.0, -11.0, 9.0, 13.0, -7.0, -13.0], atol=1e-12)
    assert state.excursions[0] == 4


def test_bilinear_small_reversals_stay_elastic():
    """Reversals smaller than 2δ_y inside the elastic range retrace slope k exactly."""
    path = [0.005, -0.003, 0.004, 0.02, 0.015, 0.02, 0.025, 0.018, 0.025]
    f, kt, state = drive(bilinear(K, FY, post_yield_ratio=ALPHA), path)
    np.testing.assert_allclose(
        f[:, 0], [5.0, -3.0, 4.0, 11.0, 6.0, 11.0, 11.5, 4.5, 11.5], atol=1e-12
    )
    np.testing.assert_allclose(kt[[1, 2, 4, 7], 0], K)
    # one excursion: 0.004 → 0.02; unload-reload to 0.02 is elastic, 0.02 → 0.025 is a new run
    assert state.excursions[0] == 2


def test_elastic_perfectly_plastic_is_bilinear_with_zero_hardening():
    """α_h = 0: force capped at ±F_y; elastic unloading; zero tangent while flowing."""
    path = [0.02, 0.03, 0.015, -0.01, -0.02]
    f, kt, _ = drive(bilinear(K, FY), path)
    np.testing.assert_allclose(f[:, 0], [10.0, 10.0, -5.0, -10.0, -10.0], atol=1e-12)
    np.testing.assert_allclose(kt[[1, 4], 0], 0.0)


def test_clough_johnston_peak_oriented_path_matches_hand_values():
    """Clough & Johnston (1966) rules on a path with reversals.

    Hand derivation: envelope to (0.03, 12); unload with k to zero at
    0.03 − 0.012 = 0.018; reload towards the negative yield point (−0.01, −10)
    with slope 10/0.028: −5 at 0.004; envelope to (−0.03, −12); unload to zero at
    −0.018; reload towards the positive peak (0.03, 12), slope 12/0.048 = 250:
    6 at 0.006; a small reversal to 0.002 unloads with k (6 − 4 = 2) and
    returns with k to the line at 0.006, then 9 at 0.018, 12 at the peak and
    13 on the envelope at 0.04.
    """
    path = [0.01, 0.03, 0.018, 0.004, -0.01, -0.03, -0.018, 0.006, 0.002, 0.006, 0.018, 0.03, 0.04]
    f, kt, state = drive(clough_johnston(K, FY, post_yield_ratio=ALPHA), path)
    expect = [10.0, 12.0, 0.0, -5.0, -10.0, -12.0, 0.0, 6.0, 2.0, 6.0, 9.0, 12.0, 13.0]
    np.testing.assert_allclose(f[:, 0], expect, atol=1e-12)
    np.testing.assert_allclose(kt[[3, 7, 8, 10, 12], 0], [K / 2.8, 250.0, K, 250.0, 100.0])
    assert state.excursions[0] == 3  # +0.03, −0.03, +0.04
    np.testing.assert_allclose(state.ductility, [4.0])


def test_clough_johnston_reloading_without_previous_yield_targets_yield_point():
    """Before any yielding the law is elastic both ways (target = yield point)."""
    f, kt, state = drive(clough_johnston(K, FY), [0.008, -0.009, 0.005])
    np.testing.assert_allclose(f[:, 0], [8.0, -9.0, 5.0], atol=1e-12)
    np.testing.assert_allclose(state.hysteretic_energy, 0.0, atol=1e-14)


def test_bilinear_full_cycle_hysteretic_energy_equals_loop_area():
    """Loop area of a stabilised kinematic-hardening cycle ±D, by hand.

    Plastic flow happens at |V − q| = F_y and the back-force terms cancel over a
    closed cycle, so the area is 2 F_y Δδ_p with Δδ_p = 2(D − V_D/k) per half
    cycle: A = 4 F_y (D − V_D/k), V_D = F_y + α_h k (D − δ_y). D = 0.03 m gives
    A = 40 (0.03 − 0.012) = 0.72 J. Kinks (0.03, 0.01, −0.03, −0.01) fall on the
    0.001 m grid, so the trapezoidal work is exact: tolerance 1e-12 relative.
    """
    state = bilinear(K, FY, post_yield_ratio=ALPHA).new_state()
    up = np.linspace(0.0, 0.03, 31)
    down = np.linspace(0.03, -0.03, 61)[1:]
    for d in up:
        state.trial(np.array([d]))
        state.commit()
    e_start = state.hysteretic_energy.copy()
    for d in np.concatenate([down, -down[:-1], [0.03]]):
        state.trial(np.array([d]))
        state.commit()
    np.testing.assert_allclose(state.hysteretic_energy - e_start, [0.72], rtol=1e-12)


def test_clough_full_cycle_hysteretic_energy_equals_loop_area():
    """Clough loop between established peaks ±D: a parallelogram with vertices
    (D, V_D), (D − V_D/k, 0), (−D, −V_D), (−D + V_D/k, 0); shoelace area
    2 V_D (D − V_D/k) = 2·12·0.018 = 0.432 J. Kinks on the grid: exact (1e-12).
    """
    state = clough_johnston(K, FY, post_yield_ratio=ALPHA).new_state()
    grid = np.round(np.linspace(-0.03, 0.03, 61), 12)
    for d in np.concatenate([grid[30:], grid[::-1]]):  # 0 → D → −D: peaks established
        state.trial(np.array([d]))
        state.commit()
    e_start = state.hysteretic_energy.copy()
    for d in np.concatenate([grid[1:], grid[::-1][1:]]):  # −D → D → −D
        state.trial(np.array([d]))
        state.commit()
    np.testing.assert_allclose(state.hysteretic_energy - e_start, [0.432], rtol=1e-12)


def test_off_grid_half_cycle_energy_error_within_kink_bound():
    """With a kink between committed points the trapezoidal error is at most
    |Δk| h²/8 (h the step, Δk = (1 − α_h) k the slope jump). The reloading half
    cycle −D → D has work A/2 = 0.36 J (point symmetry of the loop) and one
    interior kink, at re-yielding (δ = −0.01 m), which 77 equal steps miss.
    """
    state = bilinear(K, FY, post_yield_ratio=ALPHA).new_state()
    setup = np.concatenate([np.linspace(0.0, 0.03, 31), np.linspace(0.03, -0.03, 61)[1:]])
    for d in setup:
        state.trial(np.array([d]))
        state.commit()
    e_start = state.hysteretic_energy.copy()
    reload = np.linspace(-0.03, 0.03, 78)
    for d in reload[1:]:
        state.trial(np.array([d]))
        state.commit()
    err = abs(state.hysteretic_energy[0] - e_start[0] - 0.36)
    h = reload[1] - reload[0]
    assert 0.0 < err <= (1 - ALPHA) * K * h**2 / 8


def test_trial_does_not_change_committed_state():
    """trial() is side-effect free on the committed state; commit() takes the last trial."""
    state = bilinear(K, FY, post_yield_ratio=ALPHA).new_state()
    state.trial(np.array([0.05]))
    f, _ = state.trial(np.array([0.005]))
    np.testing.assert_allclose(f, [5.0])
    assert state.force[0] == 0.0 and state.work[0] == 0.0
    state.commit()
    np.testing.assert_allclose(state.force, [5.0])
    assert state.plastic_deformation[0] == 0.0


def test_mixed_chain_updates_each_story_by_its_own_law():
    """A vector of stories gives the same forces as each law driven alone."""
    laws = ["bilinear", "clough-johnston", "elastic", "clough-johnston"]
    k = np.array([1000.0, 2000.0, 1500.0, 800.0])
    fy = np.array([10.0, 15.0, np.nan, 6.0])
    params = story_springs(laws, k, fy, post_yield_ratio=[0.1, 0.05, 0.0, 0.0])
    rng = np.random.default_rng(7)
    path = np.cumsum(rng.normal(0.0, 0.006, size=(60, 4)), axis=0)
    f_all, kt_all, state = drive(params, path)
    singles = [
        bilinear(1000.0, 10.0, post_yield_ratio=0.1),
        clough_johnston(2000.0, 15.0, post_yield_ratio=0.05),
        elastic(1500.0),
        clough_johnston(800.0, 6.0),
    ]
    for i, single in enumerate(singles):
        f1, kt1, s1 = drive(single, path[:, i])
        np.testing.assert_array_equal(f_all[:, i], f1[:, 0])
        np.testing.assert_array_equal(kt_all[:, i], kt1[:, 0])
        assert state.excursions[i] == s1.excursions[0]
        assert state.hysteretic_energy[i] == s1.hysteretic_energy[0]


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"stiffness": [1000.0, -5.0], "yield_force": 10.0}, "stiffness[1]"),
        ({"stiffness": 1000.0, "yield_force": 0.0}, "yield_force[0]"),
        ({"stiffness": 1000.0}, "yield_force[0]"),
        ({"stiffness": 1000.0, "yield_force": 10.0, "yield_drift": 0.01}, "yield_force[0]"),
        ({"stiffness": 1000.0, "yield_drift": -0.01}, "yield_drift[0]"),
        (
            {"stiffness": 1000.0, "yield_force": 10.0, "post_yield_ratio": 1.0},
            "post_yield_ratio[0]",
        ),
        (
            {"stiffness": 1000.0, "yield_force": 10.0, "post_yield_ratio": -0.1},
            "post_yield_ratio[0]",
        ),
        ({"stiffness": [1.0, 2.0], "yield_force": [1.0, 2.0, 3.0]}, "yield_force"),
    ],
)
def test_bad_parameters_raise_input_error_naming_the_field(kwargs, field):
    with pytest.raises(InputError) as err:
        story_springs("bilinear", **kwargs)
    assert err.value.field == field


def test_unknown_law_is_refused():
    with pytest.raises(InputError) as err:
        story_springs(["elastic", "takeda"], [1.0, 1.0], 1.0)
    assert err.value.field == "law[1]"


def test_yield_drift_sets_the_yield_force():
    params = bilinear([1000.0, 2000.0], yield_drift=0.01)
    np.testing.assert_allclose(params.yield_force, [10.0, 20.0])
    np.testing.assert_allclose(params.yield_drift, [0.01, 0.01])
