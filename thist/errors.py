"""The two public exceptions of thist.

Both carry a one-line message of the form ``FILE: FIELD: problem`` (or
``FIELD: problem`` when no file is involved) that the command line prints
after ``error:`` with exit status 2.
"""

from __future__ import annotations


class InputError(ValueError):
    """Bad input: a case file, a record file or an argument of the API.

    Parameters
    ----------
    problem : str
        What is wrong, in plain words.
    field : str, optional
        Dotted path of the offending field, e.g. ``"stories[2].stiffness"``.
    file : str, optional
        Name of the file the field comes from.
    """

    def __init__(self, problem: str, field: str | None = None, file: str | None = None):
        self.problem = problem
        self.field = field
        self.file = file
        parts = [p for p in (file, field) if p]
        super().__init__(": ".join([*parts, problem]))

    def located(self, file: str | None = None, prefix: str | None = None) -> InputError:
        """Return a copy with a file name and/or a field prefix added."""
        field = self.field
        if prefix:
            field = f"{prefix}.{field}" if field else prefix
        return InputError(self.problem, field, file or self.file)


class StabilityError(RuntimeError):
    """A time step above a method's stability limit, or a run that diverged."""
