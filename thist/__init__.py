"""thist: time-history analysis of lumped-mass structures on a shaking base."""

from thist.errors import InputError, StabilityError

__version__ = "0.1.0"

__all__ = ["InputError", "StabilityError", "__version__"]
