"""`thist synth`: a reproducible record file that says it is synthetic; one-line errors."""

from __future__ import annotations

import math

import numpy as np
import pytest

from thist.cli import main
from thist.units import STANDARD_GRAVITY

BASE = ["--seed", "11", "--duration", "12 s", "--dt", "0.01 s", "--site-frequency", "2.5 Hz",
        "--site-damping", "60 %", "--peak-time", "3 s"]  # fmt: skip


def _synth(path, *extra):
    return main(["synth", str(path), *BASE, *extra])


def _columns(path) -> tuple[np.ndarray, np.ndarray]:
    lines = [ln for ln in path.read_text().splitlines() if not ln.startswith("#")]
    assert lines[0] == "time_s accel_m_s2"
    arr = np.array([[float(x) for x in ln.split()] for ln in lines[1:]])
    return arr[:, 0], arr[:, 1]


def _header(path) -> dict[str, str]:
    out = {}
    for ln in path.read_text().splitlines():
        if ln.startswith("#   ") and ":" in ln:
            key, _, value = ln[4:].partition(":")
            out[key.strip()] = value.strip()
    return out


def test_same_seed_reproduces_the_file_bit_for_bit(tmp_path, capsys):
    """numpy's default_rng(seed) stream is fixed for a given seed (NumPy Generator docs),
    so the same seed and options must give identical bytes; another seed must not."""
    a, b, c = tmp_path / "a.txt", tmp_path / "b.txt", tmp_path / "c.txt"
    assert _synth(a, "--pga", "0.3 g") == 0
    assert _synth(b, "--pga", "0.3 g") == 0
    assert a.read_bytes() == b.read_bytes()
    assert main(["synth", str(c), *BASE[2:], "--seed", "12", "--pga", "0.3 g"]) == 0
    assert c.read_bytes() != a.read_bytes()


def test_header_says_synthetic_and_lists_the_parameters_in_si(tmp_path, capsys):
    """2.5 Hz is omega_g = 2 pi x 2.5 rad/s (omega = 2 pi f, by definition); 60 % is 0.6;
    a trapezoid envelope and a Clough-Penzien corner are listed as given."""
    path = tmp_path / "s.txt"
    args = ["synth", str(path), *BASE[:-2], "--envelope", "trapezoid", "--rise", "1 s",
            "--strong", "4 s", "--decay", "5 s", "--corner-frequency", "0.2 Hz",
            "--corner-damping", "0.6", "--pga", "0.25 g"]  # fmt: skip
    assert main(args) == 0
    text = path.read_text()
    assert text.startswith("# SYNTHETIC ground acceleration record")
    assert "NOT a substitute for recorded" in text
    h = _header(path)
    assert h["seed"] == "11"
    assert float(h["omega_g_rad_s"]) == pytest.approx(2 * math.pi * 2.5, rel=1e-15)
    assert float(h["omega_f_rad_s"]) == pytest.approx(2 * math.pi * 0.2, rel=1e-15)
    assert float(h["zeta_g"]) == 0.6 and float(h["zeta_f"]) == 0.6
    assert h["envelope"] == "type=trapezoid, rise_s=1.0, strong_s=4.0, decay_s=5.0"
    assert "Clough-Penzien" in h["method"]


def test_rad_per_second_and_hertz_give_the_same_record(tmp_path, capsys):
    """A frequency written in rad/s is circular, in Hz cyclic: 15.707963267948966 rad/s is
    2 pi x 2.5 Hz to the last bit, so both spellings must write the same file."""
    a, b = tmp_path / "hz.txt", tmp_path / "rad.txt"
    assert _synth(a, "--pga", "0.3 g") == 0
    args = [*BASE]
    args[args.index("2.5 Hz")] = f"{2 * math.pi * 2.5!r} rad/s"
    assert main(["synth", str(b), *args, "--pga", "0.3 g"]) == 0
    assert a.read_bytes() == b.read_bytes()


def test_targets_pga_and_arias_are_met(tmp_path, capsys):
    """PGA target: max |a| = 0.3 g (g = 9.80665 m/s^2). Arias target: pi/(2 g) * trapezoid
    integral of a^2 (Arias 1970) = 1.5 m/s. Values are written with 17 significant figures,
    so both hold to 1e-12."""
    p1, p2 = tmp_path / "pga.txt", tmp_path / "arias.txt"
    assert _synth(p1, "--pga", "0.3 g") == 0
    assert _synth(p2, "--arias", "150 cm/s") == 0
    t, a = _columns(p1)
    assert np.max(np.abs(a)) == pytest.approx(0.3 * STANDARD_GRAVITY, rel=1e-12)
    np.testing.assert_allclose(np.diff(t), 0.01, rtol=1e-9)
    assert t[-1] == pytest.approx(12.0)
    _, a2 = _columns(p2)
    arias = math.pi / (2 * STANDARD_GRAVITY) * np.trapezoid(a2**2, dx=0.01)
    assert arias == pytest.approx(1.5, rel=1e-12)


def test_terminal_and_help_say_synthetic_is_no_substitute_for_recorded_motions(tmp_path, capsys):
    assert _synth(tmp_path / "x.txt", "--pga", "0.3 g") == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "SYNTHETIC record, seed 11" in out
    assert "not a substitute for recorded motions selected for the site" in out
    with pytest.raises(SystemExit) as exc:
        main(["synth", "--help"])
    assert exc.value.code == 0
    helptext = " ".join(capsys.readouterr().out.split())
    assert "not a substitute for recorded motions selected for the site" in helptext


@pytest.mark.parametrize(
    ("change", "needle"),
    [
        ({"--duration": "12"}, '--duration: expected time, got "12" (no unit)'),
        ({"--dt": "0.01 m"}, "--dt: expected time"),
        ({"--site-damping": "1.5"}, "--site-damping: must be a damping ratio"),
        ({"--site-frequency": "150 kg"}, "--site-frequency: expected frequency"),
        ({"--seed": "-1"}, "--seed: must be a non-negative integer"),
        ({"--peak-time": "0 s"}, "--peak-time: must be positive"),
    ],
)
def test_bad_option_is_one_line_with_exit_status_2(tmp_path, capsys, change, needle):
    args = list(BASE)
    for key, value in change.items():
        args[args.index(key) + 1] = value
    path = tmp_path / "bad.txt"
    assert main(["synth", str(path), *args, "--pga", "0.3 g"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and err.startswith("error: ") and needle in err
    assert not path.exists()


@pytest.mark.parametrize(
    ("extra", "needle"),
    [
        (["--pga", "0.3 g", "--corner-frequency", "0.2 Hz"], "give both --corner-frequency"),
        (["--pga", "0.3 g", "--rise", "1 s"], "--rise: does not apply to the saragoni-hart"),
        (["--arias", "1 g"], "--arias: expected velocity"),
    ],
)
def test_inconsistent_options_are_one_line_with_exit_status_2(tmp_path, capsys, extra, needle):
    assert main(["synth", str(tmp_path / "bad.txt"), *BASE, *extra]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and needle in err


def test_missing_output_folder_is_one_line(tmp_path, capsys):
    assert main(["synth", str(tmp_path / "nope" / "x.txt"), *BASE, "--pga", "0.3 g"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "FILE: folder" in err
