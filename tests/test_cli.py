"""The thist command: outputs, one-line errors with exit status 2, nothing half-written."""

from __future__ import annotations

import json
import subprocess
import sys

import numpy as np
import pytest

from thist.cli import main

from .conftest import CASE_TEXT


def run_cli(*args, cwd=None):
    return subprocess.run(
        [sys.executable, "-m", "thist.cli", *args],
        capture_output=True,
        text=True,
        cwd=cwd,
        timeout=300,
    )


def test_run_writes_results_and_histories_and_prints_the_caution(case_dir, capsys):
    out = case_dir / "out"
    assert main(["run", str(case_dir / "case.toml"), "-o", str(out)]) == 0
    printed = capsys.readouterr().out
    assert "CAUTION: preliminary estimate" in printed
    assert "licensed engineer of record" in printed
    data = json.loads((out / "results.json").read_text())
    assert len(data["case"]["sha256"]) == 64
    assert len(data["record"]["sha256"]) == 64
    assert data["methods"][0]["status"] == "ran"
    peaks = data["methods"][0]["peaks"]
    assert set(peaks) >= {
        "displacement",
        "drift",
        "drift_ratio",
        "story_shear",
        "base_shear",
        "absolute_acceleration",
        "overturning_moment",
    }
    header = (out / "histories.csv").read_text().splitlines()[0]
    assert header.startswith('"time [s]"') and "[m]" in header and "[N]" in header
    hist = np.loadtxt(out / "histories.csv", delimiter=",", skiprows=1)
    cols = [h.strip('"') for h in header.split(",")]
    roof = hist[:, cols.index("newmark-average displacement Roof [m]")]
    assert np.max(np.abs(roof)) == pytest.approx(abs(peaks["displacement"]["values"][-1]), rel=1e-9)


def test_peak_times_and_signs_agree_with_the_histories(case_dir):
    out = case_dir / "out"
    assert main(["run", str(case_dir / "case.toml"), "-o", str(out)]) == 0
    data = json.loads((out / "results.json").read_text())
    header = [h.strip('"') for h in (out / "histories.csv").read_text().splitlines()[0].split(",")]
    hist = np.loadtxt(out / "histories.csv", delimiter=",", skiprows=1)
    p = data["methods"][0]["peaks"]["story_shear"]
    col = hist[:, header.index("newmark-average story_shear S1 [N]")]
    i = int(np.argmax(np.abs(col)))
    assert p["values"][0] == pytest.approx(col[i], rel=1e-9)
    assert p["times"][0] == pytest.approx(hist[i, 0], abs=1e-12)


def test_input_error_is_one_line_with_exit_status_2(case_dir):
    (case_dir / "case.toml").write_text(CASE_TEXT.replace('"150 MN/m"', '"150 MN"'))
    r = run_cli("run", str(case_dir / "case.toml"), "-o", str(case_dir / "out"))
    assert r.returncode == 2
    lines = r.stderr.strip().splitlines()
    assert lines == [
        'error: case.toml: structure.stories[0].stiffness: expected force/length, got "150 MN"'
    ]
    assert not (case_dir / "out").exists()


def test_debug_shows_the_traceback(case_dir):
    (case_dir / "case.toml").write_text(CASE_TEXT.replace('"150 MN/m"', '"150 MN"'))
    r = run_cli("--debug", "run", str(case_dir / "case.toml"))
    assert r.returncode == 2
    assert "Traceback" in r.stderr


def test_failed_run_keeps_the_previous_good_results(case_dir):
    out = case_dir / "out"
    assert main(["run", str(case_dir / "case.toml"), "-o", str(out)]) == 0
    before = {f.name: f.read_bytes() for f in out.iterdir()}
    (case_dir / "case.toml").write_text(
        CASE_TEXT.replace('methods = ["newmark-average"]', 'methods = ["central-difference"]')
        .replace('dt = "0.005 s"', 'dt = "0.01 s"')
        .replace('"90 t"', '"0.5 t"')
    )
    assert main(["run", str(case_dir / "case.toml"), "-o", str(out)]) == 2
    after = {f.name: f.read_bytes() for f in out.iterdir()}
    assert after == before  # nothing lost, no temporary files left


def test_check_exits_1_when_a_method_is_refused_and_0_otherwise(case_dir, capsys):
    assert main(["check", str(case_dir / "case.toml")]) == 0
    printed = capsys.readouterr().out
    assert "mode" in printed and "[pass]" in printed
    (case_dir / "case.toml").write_text(
        CASE_TEXT.replace('methods = ["newmark-average"]', 'methods = ["central-difference"]')
        .replace('dt = "0.005 s"', 'dt = "0.01 s"')
        .replace('"90 t"', '"0.5 t"')
    )
    assert main(["check", str(case_dir / "case.toml")]) == 1
    assert "[refused]" in capsys.readouterr().out


def test_method_option_overrides_the_case_methods(case_dir):
    out = case_dir / "out"
    assert (
        main(["run", str(case_dir / "case.toml"), "-o", str(out), "--method", "newmark-linear,hht"])
        == 0
    )
    data = json.loads((out / "results.json").read_text())
    assert [m["label"] for m in data["methods"]] == ["newmark-linear", "hht"]


def test_unknown_method_on_the_command_line_is_an_input_error(case_dir, capsys):
    assert main(["run", str(case_dir / "case.toml"), "--method", "euler"]) == 2
    assert "unknown method 'euler'" in capsys.readouterr().err
