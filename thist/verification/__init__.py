"""Published benchmark problems, as data, and the code that runs them.

Each :class:`~thist.verification.problems.Problem` carries its source, its
reference solution, a tolerance and the reason for that tolerance. The tests run
every problem (``tests/test_verification_problems.py``), ``thist verify`` runs
them and writes a one-page summary, and the run report's appendix includes it.
"""

from thist.verification.problems import PROBLEMS, Outcome, Problem, run_problems

__all__ = ["PROBLEMS", "Outcome", "Problem", "run_problems"]
