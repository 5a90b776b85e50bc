"""thist: time-history analysis of lumped-mass structures on a shaking base.

Public API (SI arrays in and out; see the README):

- :func:`load_case`, :func:`run_case` — case files.
- :func:`time_history` — one linear model, one record, one method.
- :func:`modal` — periods, shapes, participation, effective mass.
- :func:`stability_limit` — a method's critical time step.
- :class:`InputError`, :class:`StabilityError` — the public exceptions.

Results are a preliminary estimate, not a substitute for the analysis the
governing code requires; defer to local codes and the licensed engineer of record.
"""

from thist.errors import InputError, StabilityError

__version__ = "0.1.0"

from thist.analysis import CaseResult, History, run_case, time_history  # noqa: E402
from thist.case import Case, load_case  # noqa: E402
from thist.checks import stability_limit  # noqa: E402
from thist.modal import Modes, modal  # noqa: E402

__all__ = [
    "Case",
    "CaseResult",
    "History",
    "InputError",
    "Modes",
    "StabilityError",
    "__version__",
    "load_case",
    "modal",
    "run_case",
    "stability_limit",
    "time_history",
]
