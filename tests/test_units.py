"""Unit parsing at the boundary: every input carries a unit and becomes an SI float."""

import math

import pytest

from thist.errors import InputError
from thist.units import STANDARD_GRAVITY, parse_quantity, parse_unit

# Conversion factors are exact by definition: NIST SP 811 (2008), Appendix B
# (inch = 0.0254 m, foot = 0.3048 m, pound-force = 4.4482216152605 N, tonne = 1000 kg,
# standard gravity = 9.80665 m/s^2, gal = 1 cm/s^2).
LBF = 4.4482216152605


@pytest.mark.parametrize(
    ("text", "dimension", "si"),
    [
        ("95 t", "mass", 95_000.0),
        ("120 MN/m", "force/length", 120e6),
        ("2.5 kN", "force", 2500.0),
        ("3 kip", "force", 3000 * LBF),
        ("3 kips", "force", 3000 * LBF),
        ("10 lbf", "force", 10 * LBF),
        ("12 in", "length", 12 * 0.0254),
        ("2 ft", "length", 0.6096),
        ("350 mm", "length", 0.35),
        ("981 cm/s^2", "acceleration", 9.81),
        ("1.5 m/s**2", "acceleration", 1.5),
        ("0.2533 kip*s**2/in", "mass", 0.2533 * 1000 * LBF / 0.0254),
        ("10 kip/in", "force/length", 10_000 * LBF / 0.0254),
        ("0.01 s", "time", 0.01),
    ],
)
def test_units_convert_to_si(text, dimension, si):
    """Each unit the issue names converts to SI (NIST SP 811 factors, exact to round-off)."""
    assert parse_quantity(text, dimension) == pytest.approx(si, rel=1e-12)


def test_g_in_an_acceleration_field_is_standard_gravity_not_gram():
    assert parse_quantity("0.35 g", "acceleration") == pytest.approx(0.35 * STANDARD_GRAVITY)
    assert parse_unit("g", "acceleration") == STANDARD_GRAVITY
    # Outside acceleration fields pint's gram stays the gram.
    assert parse_quantity("500 g", "mass") == pytest.approx(0.5)


def test_gal_in_an_acceleration_field_is_the_galileo_not_the_gallon():
    assert parse_quantity("250 gal", "acceleration") == pytest.approx(2.5)
    assert parse_quantity("250 Gal", "acceleration") == pytest.approx(2.5)
    assert parse_unit("gal", "acceleration") == pytest.approx(0.01)


def test_dimensionless_field_accepts_number_or_percent():
    assert parse_quantity(0.05, "dimensionless") == 0.05
    assert parse_quantity("5 %", "dimensionless") == pytest.approx(0.05)
    assert parse_quantity("5 percent", "dimensionless") == pytest.approx(0.05)


def test_wrong_dimension_names_file_field_and_expected_dimension():
    with pytest.raises(InputError) as err:
        parse_quantity("120 MN", "force/length", "stories[2].stiffness", "clinic.toml")
    assert (
        str(err.value) == 'clinic.toml: stories[2].stiffness: expected force/length, got "120 MN"'
    )


@pytest.mark.parametrize("value", ["120", 120, 120.0])
def test_missing_unit_is_an_input_error(value):
    with pytest.raises(InputError, match="expected force/length"):
        parse_quantity(value, "force/length", "stiffness", "a.toml")


@pytest.mark.parametrize("value", ["12 bananas", "kN kN kN", "", True, None, [1]])
def test_unreadable_values_are_input_errors(value):
    with pytest.raises(InputError):
        parse_quantity(value, "force", "x", "a.toml")


def test_non_finite_values_are_refused():
    with pytest.raises(InputError, match="finite"):
        parse_quantity(math.inf, "dimensionless", "ratio", "a.toml")
    with pytest.raises(InputError, match="finite"):
        parse_quantity("nan m", "length", "h", "a.toml")


@pytest.mark.parametrize(
    ("text", "hz"),
    [
        ("2 Hz", 2.0),
        ("12.566370614359172 rad/s", 2.0),
        ("120 rpm", 2.0),
        ("720 degree/s", 2.0),
        ("2 turn/s", 2.0),
        ("0.5 kHz", 500.0),
    ],
)
def test_angular_frequencies_convert_to_hertz(text, hz):
    """pint counts the radian as 1, so rad/s would read as Hz; ω = 2πf (definition)."""
    assert parse_quantity(text, "frequency") == pytest.approx(hz, rel=1e-12)
