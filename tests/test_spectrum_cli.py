"""`thist spectrum`: files written, values as the library computes them, one-line errors."""

from __future__ import annotations

import csv
import json

import numpy as np
import pytest

import thist
from thist.analysis import prepare
from thist.cli import main
from thist.errors import InputError
from thist.spectrum import default_periods, response_spectrum
from thist.spectrum_output import parse_damping, parse_periods
from thist.units import STANDARD_GRAVITY

from .conftest import CASE_TEXT, write_record

PNG_MAGIC = b"\x89PNG\r\n\x1a\n"


def _read_csv(path):
    with open(path, newline="") as fh:
        rows = list(csv.reader(fh))
    return rows[0], np.array(rows[1:], dtype=float)


@pytest.fixture
def record_file(tmp_path):
    """A made-up record in g with named columns (tests/conftest.py)."""
    path = tmp_path / "rec.txt"
    return path, write_record(path)


def test_record_file_writes_csv_json_png_equal_to_the_library(record_file, tmp_path, capsys):
    """CSV (12 significant figures) and JSON (full precision) hold the library's SD, PSV,
    PSA, SV and SA_abs for each damping ratio, of the record read in g with
    g = 9.80665 m/s^2 (CGPM 1901). PSA = (2 pi / T)^2 SD and PSV = (2 pi / T) SD hold by
    definition (Chopra, Dynamics of Structures, 4th ed., sec. 6.6) to round-off."""
    path, _ = record_file
    out = tmp_path / "out"
    argv = ["spectrum", str(path), "--unit", "g", "--columns", "time,accel",
            "--damping", "0.02,5 %", "--periods", "0.05:5:40", "-o", str(out)]  # fmt: skip
    assert main(argv) == 0
    printed = capsys.readouterr().out
    assert "CAUTION: preliminary estimate" in printed
    ag = np.loadtxt(path, skiprows=2)[:, 1] * STANDARD_GRAVITY  # as written in the file
    ref = response_spectrum(ag, 0.01, np.geomspace(0.05, 5, 40), [0.02, 0.05])

    header, data = _read_csv(out / "spectrum.csv")
    assert header[0] == "period [s]"
    names = (("SD", "m"), ("PSV", "m/s"), ("PSA", "m/s^2"), ("SV", "m/s"), ("SA_abs", "m/s^2"))
    assert header[1:6] == [f"{q} zeta=0.02 [{u}]" for q, u in names]
    np.testing.assert_allclose(data[:, 0], ref.periods, rtol=1e-11)
    for i in range(2):
        for j, attr in enumerate(("sd", "psv", "psa", "sv", "sa_abs")):
            np.testing.assert_allclose(data[:, 1 + 5 * i + j], getattr(ref, attr)[i], rtol=1e-11)
    omega = 2 * np.pi / data[:, 0]
    np.testing.assert_allclose(data[:, 3], omega**2 * data[:, 1], rtol=1e-10)
    np.testing.assert_allclose(data[:, 2], omega * data[:, 1], rtol=1e-10)

    doc = json.loads((out / "spectrum.json").read_text())
    assert doc["source"]["kind"] == "record"
    assert [s["damping"] for s in doc["spectra"]] == [0.02, 0.05]
    for i, s in enumerate(doc["spectra"]):
        for attr in ("sd", "psv", "psa", "sv", "sa_abs"):
            np.testing.assert_array_equal(s[attr], getattr(ref, attr)[i])
    assert doc["pga"] == pytest.approx(np.max(np.abs(ag)), rel=1e-15)

    png = (out / "spectrum.png").read_bytes()
    assert png.startswith(PNG_MAGIC) and len(png) > 10_000
    assert not list(out.glob(".*.tmp"))  # atomic writes leave no temporary file


def test_case_file_uses_the_analysed_record_and_matches_the_scaling_target(case_dir, capsys):
    """For a case the spectrum is that of the processed and scaled record. Scaled to match
    the two-parameter target at T = 0.4 s, PSA(0.4 s, 5 %) must equal the plateau S_S of
    that shape, 0.9 g (T_S = S_1/S_S = 0.556 s > 0.4 s > T_0 = 0.2 T_S), to 1e-9: the
    spectrum is linear in the record, so the factor is an exact ratio of two PSAs."""
    text = CASE_TEXT.replace(
        'acceleration_column = "accel"\n',
        'acceleration_column = "accel"\n'
        'processing = [{step = "baseline", order = 1}]\n'
        "[record.scaling]\n"
        'basis = "invented for the test"\n'
        'target_shape = {s_short = "0.9 g", s_one = "0.5 g", t_long = "6 s"}\n'
        'period = "0.4 s"\n',
    )
    case_path = case_dir / "case.toml"
    case_path.write_text(text)
    out = case_dir / "spec"
    assert main(["spectrum", str(case_path), "--periods", "0.1,400 ms,1", "-o", str(out)]) == 0
    printed = capsys.readouterr().out
    assert "analysed record" in printed and "scaling: factor" in printed

    doc = json.loads((out / "spectrum.json").read_text())
    assert doc["source"]["kind"] == "case"
    assert doc["periods"] == [0.1, 0.4, 1.0]
    psa = doc["spectra"][0]["psa"]
    assert psa[1] == pytest.approx(0.9 * STANDARD_GRAVITY, rel=1e-9)
    motion = prepare(thist.load_case(case_path)).motion
    ref = response_spectrum(motion.record.ag, motion.record.dt, [0.1, 0.4, 1.0], 0.05)
    np.testing.assert_array_equal(psa, ref.psa)
    assert [s["step"] for s in doc["source"]["motion"]["processing"]] == ["baseline"]
    assert doc["source"]["motion"]["scaling"]["basis"] == "invented for the test"


def test_display_unit_sets_the_terminal_pga_unit(record_file, tmp_path, capsys):
    """PGA shown in cm/s^2 is 100 x the SI value (1 cm/s^2 = 0.01 m/s^2)."""
    path, _ = record_file
    args = ["spectrum", str(path), "--unit", "g", "--display-unit", "cm/s^2",
            "--periods", "0.5", "-o", str(tmp_path / "o")]  # fmt: skip
    assert main(args) == 0
    pga_cm = 100 * np.max(np.abs(np.loadtxt(path, skiprows=2)[:, 1])) * STANDARD_GRAVITY
    assert f"PGA {pga_cm:.4g} cm/s^2" in capsys.readouterr().out


def test_period_syntax_lists_and_log_ranges():
    """A comma list (bare numbers in s, or with a unit) or START:STOP:COUNT log-spaced."""
    np.testing.assert_array_equal(parse_periods("1, 0.1,200 ms"), [0.1, 0.2, 1.0])
    np.testing.assert_array_equal(parse_periods("0.02:10:200"), default_periods())
    np.testing.assert_allclose(parse_periods("20 ms:2 s:3"), [0.02, 0.2, 2.0], rtol=1e-14)
    assert parse_damping("2 %,0.05,5 %") == (0.02, 0.05)
    for bad in ("1:0.5:10", "0.1:1:1", "0.1:1", "x,y", "0,1", "2 m"):
        with pytest.raises(InputError):
            parse_periods(bad)
    for bad in ("1.2", "-0.1", "5 m"):
        with pytest.raises(InputError):
            parse_damping(bad)


@pytest.mark.parametrize(
    ("extra", "needle"),
    [
        ([], "--unit: is required for a record file"),
        (["--unit", "g", "--periods", "2:1:10"], "--periods: need 0 < START < STOP"),
        (["--unit", "g", "--damping", "1.5"], "--damping: each damping ratio"),
        (["--unit", "kg"], "--unit: expected acceleration"),
        (["--unit", "g", "--columns", "time,nothere"], "no column named 'nothere'"),
    ],
)
def test_bad_input_is_one_line_with_exit_status_2(record_file, tmp_path, capsys, extra, needle):
    path, _ = record_file
    out = tmp_path / "o"
    assert main(["spectrum", str(path), *extra, "-o", str(out)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and err.startswith("error: ") and needle in err
    assert not out.exists()


def test_record_options_are_refused_for_a_case_file(case_dir, capsys):
    assert main(["spectrum", str(case_dir / "case.toml"), "--unit", "g"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "case.toml: --unit: is for a record file" in err
