"""Time-integration methods: the registry of names used in case files.

Each method fulfils the contract in :mod:`thist.methods.base`.
"""

from __future__ import annotations

import difflib

from thist.errors import InputError
from thist.methods.alpha import HHT, GeneralizedAlpha, Newmark
from thist.methods.base import Method, Solution, SpectralProperties, spectral_properties
from thist.methods.central_difference import CentralDifference
from thist.methods.exact import Exact

#: Preset name -> (class, fixed parameters). User parameters may add to these.
PRESETS: dict[str, tuple[type[Method], dict[str, float]]] = {
    "newmark-average": (Newmark, {"beta": 0.25, "gamma": 0.5}),
    "newmark-linear": (Newmark, {"beta": 1.0 / 6.0, "gamma": 0.5}),
    "newmark": (Newmark, {}),
    "central-difference": (CentralDifference, {}),
    "hht": (HHT, {}),
    "generalized-alpha": (GeneralizedAlpha, {}),
    "exact": (Exact, {}),
}

#: Parameters a user may set for each preset.
USER_PARAMETERS: dict[str, tuple[str, ...]] = {
    "newmark-average": (),
    "newmark-linear": (),
    "newmark": ("beta", "gamma"),
    "central-difference": (),
    "hht": ("alpha",),
    "generalized-alpha": ("rho_inf",),
    "exact": (),
}


def method_names() -> list[str]:
    """All method names accepted in case files and on the command line."""
    return list(PRESETS)


def get_method(name: str, **params: float) -> Method:
    """Build the method called ``name`` with user parameters.

    Parameters
    ----------
    name : str
        One of :func:`method_names`.
    **params : float
        Parameters the method admits (see ``USER_PARAMETERS``).

    Raises
    ------
    InputError
        Unknown method, a parameter it does not take, or one out of range.
    """
    if name not in PRESETS:
        near = difflib.get_close_matches(str(name), list(PRESETS), n=1)
        hint = f" (did you mean {near[0]!r}?)" if near else ""
        raise InputError(f"unknown method {name!r}{hint}; known: {', '.join(PRESETS)}", "method")
    cls, fixed = PRESETS[name]
    allowed = USER_PARAMETERS[name]
    for key in params:
        if key not in allowed:
            what = ", ".join(allowed) if allowed else "no parameters"
            raise InputError(f"method {name!r} takes {what}; got {key!r}", key)
    if name == "newmark" and not {"beta", "gamma"} <= set(params):
        raise InputError("method 'newmark' needs both beta and gamma", "method")
    kwargs = {**fixed, **{k: float(v) for k, v in params.items()}}
    method = cls(name=name, **kwargs) if "name" in cls.__dataclass_fields__ else cls(**kwargs)
    method.check_parameters()
    return method


__all__ = [
    "CentralDifference",
    "Exact",
    "GeneralizedAlpha",
    "HHT",
    "Method",
    "Newmark",
    "PRESETS",
    "Solution",
    "SpectralProperties",
    "get_method",
    "method_names",
    "spectral_properties",
]
