"""Run every benchmark problem of thist.verification: the module is the data, this runs it.

Each problem states its published source, its reference solution, its tolerance and
why that tolerance is right (see ``thist/verification/problems.py``); a failure
prints all four.
"""

from __future__ import annotations

import math

import pytest

from thist.verification import PROBLEMS, Problem, run_problems


@pytest.mark.parametrize("problem", PROBLEMS, ids=[p.key for p in PROBLEMS])
def test_benchmark_problem_within_its_published_tolerance(problem: Problem):
    """The measured error of this build is within the problem's stated tolerance.

    Source, tolerance and reason: the problem's own ``source``, ``tolerance`` and
    ``tolerance_basis`` fields, printed on failure.
    """
    (outcome,) = run_problems((problem,))
    assert outcome.passed, (
        f"{problem.title}: error {outcome.error:.3e} > tolerance {problem.tolerance:.1e} "
        f"({problem.error_measure}); source: {problem.source}; reference: "
        f"{problem.reference}; tolerance because {problem.tolerance_basis} {outcome.message}"
    )


def test_every_problem_states_source_reference_and_tolerance_basis():
    """A reviewer can trace every problem to a source and a reasoned tolerance."""
    keys = [p.key for p in PROBLEMS]
    assert len(keys) == len(set(keys))
    for p in PROBLEMS:
        assert p.source.strip() and p.reference.strip() and p.tolerance_basis.strip(), p.key
        assert 0 < p.tolerance < 1, p.key


def test_runner_fails_a_problem_above_tolerance_or_that_raises():
    """An error above tolerance, a non-finite error and an exception all fail."""

    def boom() -> float:
        raise RuntimeError("broken build")

    probs = (
        Problem("above", "t", "s", "r", "e", 1e-6, "b", lambda: 2e-6),
        Problem("nan", "t", "s", "r", "e", 1e-6, "b", lambda: math.nan),
        Problem("raises", "t", "s", "r", "e", 1e-6, "b", boom),
        Problem("ok", "t", "s", "r", "e", 1e-6, "b", lambda: 5e-7),
    )
    outcomes = run_problems(probs)
    assert [o.passed for o in outcomes] == [False, False, False, True]
    assert "broken build" in outcomes[2].message
