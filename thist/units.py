"""The one unit registry of thist, and parsing of ``"95 t"``-style inputs to SI floats.

Every dimensional input is a string with its unit. It is parsed here, checked
against the dimension the field expects, and converted to an SI float; the
numerical core never sees pint.

Two of pint's defaults are traps for engineers and are handled per field:

* ``g`` is the gram in pint. In an acceleration field it means standard
  gravity, 9.80665 m/s² (the conventional value of the 3rd CGPM, 1901).
* ``gal`` is the US gallon in pint. In an acceleration field it means the
  galileo, 1 cm/s² (pint calls it ``Gal``).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

import pint

from thist.errors import InputError

#: Standard acceleration of gravity, m/s² (CGPM 1901; ISO 80000-3).
STANDARD_GRAVITY = 9.80665

ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)


@dataclass(frozen=True)
class Dimension:
    """A physical dimension a field expects, with a plain name for messages."""

    name: str
    pint_dim: str
    si_unit: str


DIMENSIONS: dict[str, Dimension] = {
    d.name: d
    for d in (
        Dimension("mass", "[mass]", "kg"),
        Dimension("length", "[length]", "m"),
        Dimension("time", "[time]", "s"),
        Dimension("force", "[force]", "N"),
        Dimension("force/length", "[force] / [length]", "N/m"),
        Dimension("acceleration", "[acceleration]", "m/s**2"),
        Dimension("velocity", "[velocity]", "m/s"),
        Dimension("frequency", "1 / [time]", "Hz"),
        Dimension("moment", "[force] * [length]", "N*m"),
        Dimension("force*time/length", "[force] * [time] / [length]", "N*s/m"),
        Dimension("dimensionless", "[]", ""),
    )
}

_G_TOKEN = re.compile(r"(?<![A-Za-z_0-9])g(?![A-Za-z_0-9])")
_GAL_TOKEN = re.compile(r"(?<![A-Za-z_0-9])gals?(?![A-Za-z_0-9])")


def _dimensionality(dim: Dimension):
    if dim.name == "dimensionless":
        return ureg.dimensionless.dimensionality
    return ureg.get_dimensionality(dim.pint_dim)


def _prepare(text: str, dim: Dimension) -> str:
    text = text.strip().replace("^", "**")
    if dim.name == "acceleration":
        text = _G_TOKEN.sub("g_n", text)
        text = _GAL_TOKEN.sub("Gal", text)
    return text


def parse_quantity(
    value: object,
    dimension: str,
    field: str | None = None,
    file: str | None = None,
) -> float:
    """Parse one input value with its unit and return it as an SI float.

    Parameters
    ----------
    value : str or number
        ``"95 t"``, ``"120 MN/m"``, ``"0.35 g"``… A bare number is accepted only
        for a dimensionless field, where ``"5 %"`` is accepted too.
    dimension : str
        A key of :data:`DIMENSIONS`, e.g. ``"force/length"``.
    field, file : str, optional
        Where the value comes from, for the error message.

    Returns
    -------
    float
        The value in SI units (kg, m, s, N, N/m, m/s², …).

    Raises
    ------
    InputError
        Missing unit, unknown unit, wrong dimension or a non-finite number.
    """
    dim = DIMENSIONS[dimension]
    if isinstance(value, bool):
        raise InputError(f"expected {dimension}, got {value!r}", field, file)
    if isinstance(value, int | float):
        if dim.name == "dimensionless":
            return _finite(float(value), field, file)
        raise InputError(
            f'expected {dimension} with a unit (e.g. "{value} {dim.si_unit}"), got {value!r}',
            field,
            file,
        )
    if not isinstance(value, str):
        raise InputError(
            f"expected {dimension} as a string with a unit, got {value!r}", field, file
        )
    try:
        q = ureg.Quantity(_prepare(value, dim))
    except Exception:
        raise InputError(f"cannot read {value!r} as {dimension}", field, file) from None
    if not isinstance(q, pint.Quantity):
        q = ureg.Quantity(q)
    if q.dimensionality != _dimensionality(dim):
        if q.dimensionless and dim.name != "dimensionless":
            raise InputError(f'expected {dimension}, got "{value}" (no unit)', field, file)
        raise InputError(f'expected {dimension}, got "{value}"', field, file)
    magnitude = q.to_base_units().magnitude
    if dim.name == "dimensionless":
        magnitude = q.to("dimensionless").magnitude
    elif dim.name == "frequency" and _has_angle(q):
        # pint treats the radian as a plain number, so "12.6 rad/s" would read as 12.6 Hz:
        # an angular frequency is converted to cycles per second here.
        magnitude = q.to("radian / second").magnitude / (2.0 * math.pi)
    return _finite(float(magnitude), field, file)


def _has_angle(q: pint.Quantity) -> bool:
    """True if any unit of ``q`` is an angle (radian, degree, turn, rpm, …)."""
    return any("radian" in str(ureg.get_base_units(name)[1]) for name, _ in q.unit_items())


def _finite(x: float, field: str | None, file: str | None) -> float:
    if not math.isfinite(x):
        raise InputError(f"value must be a finite number, got {x!r}", field, file)
    return x


def parse_unit(text: object, dimension: str, field: str | None = None, file: str | None = None):
    """Parse a unit name (``"kip"``, ``"g"``, ``"cm/s^2"``) and return its size in SI.

    Parameters
    ----------
    text : str
        A unit expression with no number.
    dimension : str
        A key of :data:`DIMENSIONS`.

    Returns
    -------
    float
        The SI value of one of that unit (e.g. 9.80665 for ``"g"`` as acceleration).
    """
    if not isinstance(text, str) or not text.strip():
        raise InputError(f"expected a unit of {dimension}, got {text!r}", field, file)
    return parse_quantity(f"1 {text.strip()}", dimension, field, file)


@dataclass(frozen=True)
class DisplayUnits:
    """Units in which results are shown to people. Stored values stay SI.

    Each entry is ``(label, size of one unit in SI)``.
    """

    length: tuple[str, float] = ("m", 1.0)
    small_length: tuple[str, float] = ("mm", 1e-3)
    force: tuple[str, float] = ("kN", 1e3)
    mass: tuple[str, float] = ("t", 1e3)
    acceleration: tuple[str, float] = ("g", STANDARD_GRAVITY)
    stiffness: tuple[str, float] = ("kN/m", 1e3)
    moment: tuple[str, float] = ("kN*m", 1e3)
    velocity: tuple[str, float] = ("m/s", 1.0)

    def show(self, value: float, kind: str) -> float:
        """Convert an SI value to this display unit of ``kind``."""
        return value / getattr(self, kind)[1]

    def label(self, kind: str) -> str:
        """The unit label of ``kind``."""
        return getattr(self, kind)[0]


US_CUSTOMARY = DisplayUnits(
    length=("in", 0.0254),
    small_length=("in", 0.0254),
    force=("kip", 4448.2216152605),
    mass=("kip*s^2/in", 4448.2216152605 / 0.0254),
    acceleration=("g", STANDARD_GRAVITY),
    stiffness=("kip/in", 4448.2216152605 / 0.0254),
    moment=("kip*ft", 4448.2216152605 * 0.3048),
    velocity=("in/s", 0.0254),
)
