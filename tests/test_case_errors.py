"""Bad input: every mistake is an InputError naming the file, the field and the problem."""

from __future__ import annotations

import re
import string

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import thist
from thist.errors import InputError, StabilityError

from .conftest import CASE_TEXT


def load(case_dir, text):
    (case_dir / "case.toml").write_text(text)
    return thist.load_case(case_dir / "case.toml")


def test_valid_case_loads_to_si(case_dir):
    case = thist.load_case(case_dir / "case.toml")
    assert case.structure.n == 3
    assert case.structure.M[0, 0] == 120_000.0
    assert case.structure.story_stiffness[1] == 120e6
    assert case.record.dt == pytest.approx(0.01)
    assert case.analysis.dt == 0.005
    assert case.structure.labels[-1] == "Roof"


@pytest.mark.parametrize(
    ("old", "new", "message"),
    [
        ('mass = "120 t"', "mass = 120", r"case.toml: structure.stories\[0\].mass: expected mass"),
        (
            'stiffness = "120 MN/m"',
            'stiffness = "120 MN"',
            r'case.toml: structure.stories\[1\].stiffness: expected force/length, got "120 MN"',
        ),
        ('mass = "120 t"', 'mass = "-120 t"', r"stories\[0\].mass: must be positive"),
        ('mass = "120 t"', 'mass = "0 t"', r"stories\[0\].mass: must be positive"),
        ('height = "4.0 m"', 'height = "0 m"', r"stories\[0\].height: must be positive"),
        (
            'stiffness = "150 MN/m"',
            'stifness = "150 MN/m"',
            r"stories\[0\]\.stifness: unknown key; did you mean 'stiffness'\?",
        ),
        ('unit = "g"', 'unit = "kg"', r"record.unit: expected acceleration"),
        (
            'methods = ["newmark-average"]',
            'methods = ["newmark-avg"]',
            r"analysis.methods\[0\]: unknown method 'newmark-avg' \(did you mean 'newmark-average'",
        ),
        (
            'methods = ["newmark-average"]',
            'methods = [{name = "hht", alpha = -0.5}]',
            r"analysis.methods\[0\]: alpha must lie in \[-1/3, 0\]",
        ),
        (
            'methods = ["newmark-average"]',
            'methods = [{name = "newmark", beta = 0.1, gamma = 0.4}]',
            r"gamma must be >= 1/2",
        ),
        ('ratio = "5 %"', 'ratio = "5 m"', r"damping.ratio: expected dimensionless"),
        ("modes = [1, 2]", "modes = [1, 7]", r"damping.modes: mode numbers must be distinct"),
        ('file = "record.txt"', 'file = "missing.txt"', r"record.file: record file not found"),
        (
            'title = "Test building"',
            'titel = "x"',
            r"case.toml: titel: unknown key; did you mean 'title'\?",
        ),
        ('title = "Test building"', 'name = "x"', r"case.toml: title: is required"),
        ('dt = "0.005 s"', 'dt = "0.02 s"', r"analysis.dt: analysis dt 0.02 s is coarser"),
    ],
)
def test_bad_fields_are_named_in_one_line(case_dir, old, new, message):
    assert old in CASE_TEXT
    text = CASE_TEXT.replace(old, new, 1)
    with pytest.raises(InputError) as err:
        case = load(case_dir, text)
        thist.run_case(case)
    assert re.search(message, str(err.value)), str(err.value)
    assert "\n" not in str(err.value)


def test_unknown_top_level_key_names_the_nearest_valid_key(case_dir):
    with pytest.raises(
        InputError, match=r"case.toml: analysys: unknown key; did you mean 'analysis'"
    ):
        load(case_dir, CASE_TEXT + '\n[analysys]\nmethods = ["exact"]\n')


def test_invalid_toml_is_an_input_error(case_dir):
    with pytest.raises(InputError, match="case.toml: not valid TOML"):
        load(case_dir, CASE_TEXT + "\n[[[broken\n")


def test_missing_case_file(tmp_path):
    with pytest.raises(InputError, match="case file not found"):
        thist.load_case(tmp_path / "nope.toml")


def matrices_case(mass_rows: str, stiffness_rows: str) -> str:
    head, _, rest = CASE_TEXT.partition("[structure]")
    _, _, tail = rest.partition("[damping]")
    return (
        head + '[structure]\nform = "matrices"\n'
        f'mass = {{unit = "t", values = {mass_rows}}}\n'
        f'stiffness = {{unit = "MN/m", values = {stiffness_rows}}}\n'
        "influence = [1, 1]\n\n[damping]" + tail.replace("modes = [1, 2]", "modes = [1, 2]")
    )


def test_general_matrices_load(case_dir):
    case = load(case_dir, matrices_case("[[100, 0], [0, 80]]", "[[300, -120], [-120, 120]]"))
    assert case.structure.form == "matrices"
    assert case.structure.K[0, 1] == -120e6


@pytest.mark.parametrize(
    ("mass", "stiffness", "message"),
    [
        (
            "[[100, 0], [0, 80]]",
            "[[100, -120], [-120, 120]]",
            "structure.stiffness: must be positive definite",
        ),
        (
            "[[100, 0], [0, 80]]",
            "[[300, -100], [-120, 120]]",
            "structure.stiffness: must be symmetric",
        ),
        ("[[100, 0], [0, 80]]", "[[300, -120, 0], [-120, 120, 0]]", "must be a square matrix"),
        (
            "[[100, 0], [0, -80]]",
            "[[300, -120], [-120, 120]]",
            "structure.mass: must be positive definite",
        ),
    ],
)
def test_bad_matrices_are_refused(case_dir, mass, stiffness, message):
    with pytest.raises(InputError, match=re.escape(message)):
        load(case_dir, matrices_case(mass, stiffness))


def test_nan_in_the_record_is_refused(case_dir):
    lines = (case_dir / "record.txt").read_text().splitlines()
    lines[10] = "0.0800 nan"
    (case_dir / "record.txt").write_text("\n".join(lines))
    with pytest.raises(InputError, match=r"record.txt: non-finite acceleration at sample 9"):
        thist.load_case(case_dir / "case.toml")


def test_empty_record_is_refused(case_dir):
    (case_dir / "record.txt").write_text("# nothing here\ntime accel\n")
    with pytest.raises(InputError, match="record.txt: the record is empty"):
        thist.load_case(case_dir / "case.toml")


def test_single_point_record_is_refused(case_dir):
    (case_dir / "record.txt").write_text("time accel\n0 0.1\n")
    with pytest.raises(InputError, match="fewer than 2 points"):
        thist.load_case(case_dir / "case.toml")


def test_non_uniform_time_column_is_refused(case_dir):
    lines = (case_dir / "record.txt").read_text().splitlines()
    t, a = lines[20].split()
    lines[20] = f"{float(t) + 0.003:.4f} {a}"
    (case_dir / "record.txt").write_text("\n".join(lines))
    with pytest.raises(InputError, match="not uniformly spaced"):
        thist.load_case(case_dir / "case.toml")


def test_decreasing_time_column_is_refused(case_dir):
    lines = (case_dir / "record.txt").read_text().splitlines()
    lines[5], lines[6] = lines[6], lines[5]
    (case_dir / "record.txt").write_text("\n".join(lines))
    with pytest.raises(InputError, match="not increasing"):
        thist.load_case(case_dir / "case.toml")


def test_binary_record_is_refused(case_dir):
    (case_dir / "record.txt").write_bytes(b"\x00\x01\x02binary")
    with pytest.raises(InputError, match="not a text file"):
        thist.load_case(case_dir / "case.toml")


def test_values_layout_reads_several_values_per_line(case_dir):
    (case_dir / "vals.txt").write_text("header one\nheader two\n0.0 0.1 0.2\n0.1 0.0\n-0.1\n")
    text = CASE_TEXT.replace(
        'file = "record.txt"',
        'file = "vals.txt"\nlayout = "values"\nheader_lines = 2\ndt = "0.02 s"',
    )
    text = text.replace('time_column = "time"\nacceleration_column = "accel"\n', "")
    text = text.replace('dt = "0.005 s"', 'dt = "0.02 s"')
    case = load(case_dir, text)
    assert case.record.npts == 6
    assert case.record.ag[2] == pytest.approx(0.2 * 9.80665)


def test_step_above_the_stability_limit_is_refused_with_limit_mode_and_suggestion(case_dir):
    text = CASE_TEXT.replace('methods = ["newmark-average"]', 'methods = ["central-difference"]')
    text = text.replace('dt = "0.005 s"', 'dt = "0.01 s"')
    text = text.replace('mass = "90 t"', 'mass = "1 t"')  # a very stiff, light top story
    case = load(case_dir, text)
    with pytest.raises(StabilityError) as err:
        thist.run_case(case)
    msg = str(err.value)
    assert "central-difference" in msg and "stability limit" in msg
    assert "mode 3" in msg and "use dt <=" in msg


# -- property-based: mangled case files give an InputError or a result, nothing else --------

_FIELDS = [
    '"120 t"',
    '"150 MN/m"',
    '"4.0 m"',
    '"5 %"',
    '"0.005 s"',
    '"g"',
    "[1, 2]",
    '"newmark-average"',
    '"record.txt"',
    '"rayleigh"',
]
_JUNK = st.one_of(
    st.sampled_from(
        [
            '""',
            "0",
            "-1",
            '"1e400 m"',
            '"nan t"',
            "true",
            "[]",
            "{}",
            '"g"',
            '"12 kg"',
            '"0 s"',
            '"-3 MN/m"',
            '"3 furlongs"',
            "[[1]]",
            '"%"',
        ]
    ),
    st.text(alphabet=string.ascii_letters + string.digits + " ./*%-", max_size=12).map(
        lambda s: '"' + s + '"'
    ),
    st.integers(-5, 5).map(str),
    st.floats(allow_nan=False, allow_infinity=False, width=32).map(repr),
)


@settings(
    max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)
@given(data=st.data())
def test_mangled_case_files_raise_input_error_or_run(case_dir, data):
    text = CASE_TEXT
    for _ in range(data.draw(st.integers(1, 3))):
        target = data.draw(st.sampled_from(_FIELDS))
        if target in text:
            text = text.replace(target, data.draw(_JUNK), 1)
    if data.draw(st.booleans()):
        cut = data.draw(st.integers(0, len(text)))
        text = text[:cut]
    try:
        case = load(case_dir, text)
        thist.run_case(case)
    except (InputError, StabilityError):
        pass
