"""Study files: the helpers other study tests use, and the errors of bad study files.

A bad study file must give the same clear one-line error as a case file with the
same mistake (file, field path, problem), because records are read by the same
reader (thist.case.parse_record).
"""

from __future__ import annotations

import math
import sys
from pathlib import Path

import pytest

from thist.batch import load_study, run_study
from thist.case import load_case
from thist.cli import main
from thist.errors import InputError
from thist.synthetic import TrapezoidEnvelope, synthesize, write_record

STRUCTURE = """\
[structure]
form = "chain"
stories = [
  {mass = "120 t", stiffness = "150 MN/m", height = "4.0 m", label = "L1"},
  {mass = "110 t", stiffness = "120 MN/m", height = "3.5 m", label = "L2"},
  {mass = "90 t", stiffness = "90 MN/m", height = "3.5 m", label = "Roof"},
]

[damping]
model = "rayleigh"
ratio = "5 %"
modes = [1, 2]

[analysis]
methods = ["newmark-average"]
dt = "0.01 s"
"""

RECORD_KEYS = 'time_column = "time_s"\nacceleration_column = "accel_m_s2"\nunit = "m/s^2"\n'


def make_records(folder: Path, count: int = 3, duration: float = 4.0, dt: float = 0.01) -> list:
    """Short synthetic records (Kanai-Tajimi noise, invented site, seeds 101, 102, ...)."""
    (folder / "rec").mkdir(exist_ok=True)
    names = []
    for i in range(count):
        syn = synthesize(
            duration,
            dt,
            101 + i,
            omega_g=2 * math.pi * (2.0 + 0.5 * i),
            zeta_g=0.6,
            envelope=TrapezoidEnvelope(0.5, 2.0, 1.0),
            target_pga=2.0 + 0.5 * i,
        )
        write_record(folder / "rec" / f"r{i}.txt", syn)
        names.append(f"r{i}")
    return names


def records_toml(names: list[str], extra: str = "") -> str:
    """``[[records]]`` tables for the records written by :func:`make_records`."""
    return "".join(
        f'\n[[records]]\nname = "{n}"\nfile = "rec/{n}.txt"\n{RECORD_KEYS}{extra}' for n in names
    )


def write_suite(folder: Path, count: int = 3, extra_top: str = "") -> Path:
    """A suite study (inline structure) of ``count`` records; returns its path."""
    names = make_records(folder, count)
    text = f'title = "test suite"\nkind = "suite"\n{extra_top}\n{STRUCTURE}{records_toml(names)}'
    path = folder / "suite.toml"
    path.write_text(text)
    return path


IDA_TABLE = """
[ida]
measure = "pga"
unit = "g"
levels = {first = 0.2, last = 3.0, step = 0.2}
collapse_drift_ratio = 0.006
collapse_drift_ratio_basis = "test value"

[[damage_states]]
name = "light"
drift_ratio = 0.002
basis = "test value"
"""


def write_ida(folder: Path, count: int = 3) -> Path:
    """An IDA study (inline structure) with a collapse drift ratio that stops chains."""
    names = make_records(folder, count)
    text = f'title = "test ida"\nkind = "ida"\n{STRUCTURE}{IDA_TABLE}{records_toml(names)}'
    path = folder / "ida.toml"
    path.write_text(text)
    return path


def _case_error(folder: Path, record_table: str) -> InputError:
    case = folder / "case.toml"
    case.write_text(f'title = "c"\n{STRUCTURE}\n[record]\n{record_table}')
    with pytest.raises(InputError) as exc:
        load_case(case)
    return exc.value


def _study_error(folder: Path, record_table: str) -> InputError:
    study = folder / "study.toml"
    study.write_text(f'title = "s"\nkind = "suite"\n{STRUCTURE}\n[[records]]\n{record_table}')
    with pytest.raises(InputError) as exc:
        load_study(study)
    return exc.value


@pytest.mark.parametrize(
    "table, field",
    [
        ('file = "rec/r0.txt"\nunit = "m/s"\n', "unit"),
        ('file = "rec/missing.txt"\nunit = "g"\n', "file"),
        ('file = "rec/r0.txt"\nunit = "g"\nscale = -2\n', "scale"),
        ('file = "rec/r0.txt"\nunit = "g"\nunnit = "g"\n', "unnit"),
        ('file = "rec/r0.txt"\nunit = "g"\nlayout = "value"\n', "layout"),
    ],
)
def test_bad_record_in_a_study_gives_the_case_file_error(tmp_path, table, field):
    """Same problem text as a case file's [record]; the field is records[0].<key>."""
    make_records(tmp_path, 1)
    case_err = _case_error(tmp_path, table)
    study_err = _study_error(tmp_path, table)
    assert study_err.problem == case_err.problem
    assert case_err.field == f"record.{field}"
    assert study_err.field == f"records[0].{field}"
    assert study_err.file == "study.toml"


def test_typo_in_record_defaults_is_reported_there(tmp_path):
    names = make_records(tmp_path, 1)
    text = (
        f'title = "s"\nkind = "suite"\n{STRUCTURE}\n[record_defaults]\nunitt = "g"\n'
        + records_toml(names)
    )
    (tmp_path / "s.toml").write_text(text)
    with pytest.raises(InputError, match=r"s.toml: record_defaults.unitt: unknown key"):
        load_study(tmp_path / "s.toml")


@pytest.mark.parametrize(
    "change, message",
    [
        (('kind = "ida"', 'kind = "sweet"'), r"kind: must be one of suite, ida"),
        (('measure = "pga"', 'measure = "sa"'), r"ida.measure: must be one of psa, pga"),
        (
            ("levels = {first = 0.2, last = 3.0, step = 0.2}", "levels = [0.3, 0.2]"),
            r"ida.levels: must be positive and strictly increasing",
        ),
        (
            ('collapse_drift_ratio_basis = "test value"', 'collapse_drift_ratio_basis = ""'),
            r"ida.collapse_drift_ratio_basis: state the basis",
        ),
        (('unit = "g"\nlevels', 'unit = "m"\nlevels'), r"ida.unit: expected acceleration"),
        (
            ('drift_ratio = 0.002\nbasis = "test value"', "drift_ratio = 0.002"),
            r"damage_states\[0\].basis: is required",
        ),
    ],
)
def test_bad_ida_table_names_the_field(tmp_path, change, message):
    path = write_ida(tmp_path, 1)
    old, new = change
    text = path.read_text()
    assert old in text
    path.write_text(text.replace(old, new))
    with pytest.raises(InputError, match=message):
        load_study(path)


def test_ida_refuses_a_record_scaling_rule(tmp_path):
    path = write_ida(tmp_path, 1)
    text = path.read_text() + (
        '[records.scaling]\nbasis = "t"\nperiod = "0.5 s"\n'
        'target_shape = {s_short = "1 g", s_one = "0.5 g", t_long = "8 s"}\n'
    )
    path.write_text(text)
    with pytest.raises(InputError, match=r"records\[0\].scaling: an IDA scales each record"):
        load_study(path)


def test_case_file_reference_and_inline_tables_cannot_mix(tmp_path):
    path = write_suite(tmp_path, 1, extra_top='case = "other.toml"')
    with pytest.raises(InputError, match=r"suite.toml: structure: give either case = FILE"):
        load_study(path)


def test_study_referring_to_a_case_file_uses_its_structure(tmp_path):
    """The structure of the named case file, with its own record replaced by the study's."""
    names = make_records(tmp_path, 2)
    (tmp_path / "case.toml").write_text(
        f'title = "c"\n{STRUCTURE}\n[record]\nfile = "rec/r1.txt"\n{RECORD_KEYS}'
    )
    text = 'title = "s"\nkind = "suite"\ncase = "case.toml"\nduration = "5 s"\n'
    (tmp_path / "s.toml").write_text(text + records_toml(names[:1]))
    study = load_study(tmp_path / "s.toml")
    assert study.case.structure.n == 3
    assert study.case.analysis.duration == 5.0
    assert Path(study.case.motion.record.source).name == "r0.txt"


def test_command_line_error_is_one_line_with_status_2(tmp_path, capsys):
    table = 'file = "rec/r0.txt"\nunit = "m/s"\n'
    make_records(tmp_path, 1)
    problem = _case_error(tmp_path, table).problem
    _study_error(tmp_path, table)
    status = main(["study", str(tmp_path / "study.toml"), "-o", str(tmp_path / "out")])
    err = capsys.readouterr().err.strip().splitlines()
    assert status == 2
    assert err == [f"error: study.toml: records[0].unit: {problem}"]


def test_changed_study_is_refused_on_resume(tmp_path):
    path = write_suite(tmp_path, 2)
    run_study(load_study(path), tmp_path / "out", workers=1, progress=False)
    with pytest.raises(InputError, match=r"already holds a study store with 2 finished job"):
        run_study(load_study(path), tmp_path / "out", workers=1, progress=False)
    path.write_text(path.read_text().replace('dt = "0.01 s"', 'dt = "0.005 s"'))
    with pytest.raises(InputError, match=r"changed since this store was made.*resume refused"):
        run_study(load_study(path), tmp_path / "out", workers=1, resume=True, progress=False)


def test_scheduler_without_dask_says_how_to_install(tmp_path, monkeypatch):
    path = write_suite(tmp_path, 1)
    monkeypatch.setitem(sys.modules, "distributed", None)
    with pytest.raises(InputError, match=r"--scheduler: .*pip install 'thist\[cluster\]'"):
        run_study(load_study(path), tmp_path / "out", scheduler="tcp://127.0.0.1:1")
