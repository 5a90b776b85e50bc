"""`thist compare`: methods side by side against the exact reference.

Method properties used: Newmark average acceleration ω̄Δt = 2·arctan(Ω/2) (Hughes,
*The Finite Element Method*, 1987, §9.3); central difference is stable only for
Ω ≤ 2 (same source).
"""

from __future__ import annotations

import json
import math

import pytest

from tests.case_factory import write_case
from thist import load_case
from thist.cli import main
from thist.compare import compare_case, comparison_dict
from thist.results import _clean


@pytest.fixture(scope="module")
def stiff_case(tmp_path_factory):
    """T_min = 0.049 s and Δt = 0.02 s: central difference (limit T_min/π) is refused."""
    folder = tmp_path_factory.mktemp("stiff")
    return load_case(write_case(folder, record_dt=0.02, stiffness_scale=4.0, duration=6.0))


@pytest.fixture(scope="module")
def comparison(stiff_case):
    return compare_case(stiff_case, ["newmark-average", "central-difference", "hht"], [0.02, 0.01])


def test_refused_method_is_a_row_with_the_reason(comparison):
    """Not silently dropped: the row says refused and quotes the stability limit."""
    cd = [r for r in comparison.rows if r.label == "central-difference"]
    assert [r.status for r in cd] == ["refused", "ran"]
    assert "stability limit" in cd[0].reason
    assert all(math.isnan(v) for v in cd[0].peaks.values())


def test_exact_reference_added_and_differences_measured_from_it(comparison):
    """For a linear model exact runs at each Δt; its own differences are zero."""
    assert comparison.reference == "exact" and comparison.reference_added
    refs = [r for r in comparison.rows if r.is_reference]
    assert [r.dt for r in refs] == [0.02, 0.01]
    for r in comparison.rows:
        if r.status == "ran" and r.is_reference:
            assert all(v == 0.0 for v in r.rel_diff.values())


def test_newmark_difference_from_exact_shrinks_with_the_step(comparison):
    """Second-order method (Newmark 1959): halving Δt from T1/15 to T1/30 divides the
    roof-displacement difference from exact by more than 2 (4 asymptotically; peaks
    are read at the samples, so the ratio is not exactly 4)."""
    nm = [r for r in comparison.rows if r.label == "newmark-average"]
    d = [abs(r.rel_diff["roof_displacement"]) for r in nm]
    assert d[0] / d[1] > 2.0


def test_spectral_columns_follow_the_published_period_relation(comparison, stiff_case):
    """Period error of average acceleration at mode 1 is Ω/(2·arctan(Ω/2)) − 1 (Hughes
    1987, §9.3); exact has none; the modes are 1 and the one reaching 90 % of the mass."""
    row = next(r for r in comparison.rows if r.label == "newmark-average")
    modes = comparison.results[0].modes
    assert [s.mode for s in row.spectral] == sorted({1, modes.modes_for_mass(0.9)})
    s1 = row.spectral[0]
    assert s1.period_error == pytest.approx(s1.omega_dt / (2 * math.atan(s1.omega_dt / 2)) - 1)
    assert s1.algorithmic_damping == pytest.approx(0.0, abs=1e-12)
    exact = next(r for r in comparison.rows if r.is_reference)
    assert all(abs(s.period_error) < 1e-12 for s in exact.spectral)


def test_drift_story_is_where_the_peak_drift_ratio_occurs(comparison):
    """The story column names the story (1-based) of the largest |drift ratio|."""
    res = comparison.results[0]
    run = next(r for r in res.runs if r.label == "newmark-average")
    dr = run.response.peaks()["drift_ratio"]
    row = next(r for r in comparison.rows if r.label == "newmark-average")
    assert row.drift_story == dr.where + 1
    assert row.peaks["drift_ratio"] == dr.values[dr.where]


def test_comparison_is_json_ready(comparison):
    """comparison_dict survives strict JSON (no NaN) with refused rows kept."""
    text = json.dumps(_clean(comparison_dict(comparison)), allow_nan=False)
    data = json.loads(text)
    assert [r["status"] for r in data["rows"]].count("refused") == 1


def test_compare_command_writes_results_with_comparison_and_a_report(tmp_path, stiff_case):
    """`thist compare case.toml --methods a,b --dt 20ms -o DIR` writes results.json with
    the comparison, and report.pdf; a refused method does not fail the command."""
    out = tmp_path / "out"
    rc = main(
        [
            "compare",
            stiff_case.path,
            "--methods",
            "newmark-average,central-difference",
            "--dt",
            "20 ms",
            "-o",
            str(out),
        ]
    )
    assert rc == 0
    data = json.loads((out / "results.json").read_text())
    rows = data["comparison"]["rows"]
    assert [r["label"] for r in rows] == ["newmark-average", "central-difference", "exact"]
    assert rows[1]["status"] == "refused"
    assert rows[0]["dt"] == pytest.approx(0.02)
    from pypdf import PdfReader

    text = " ".join(" ".join(p.extract_text().split()) for p in PdfReader(out / "report.pdf").pages)
    assert "9. Comparison of methods and time steps" in text
    assert "central-difference" in text and "refused" in text
    assert "exact (reference)" in text
    assert text.index("9. Comparison") < text.index("10. Cautions")


def test_compare_command_rejects_a_bad_step(tmp_path, stiff_case, capsys):
    """A --dt that is not a time is an input error: one line, exit status 2."""
    rc = main(["compare", stiff_case.path, "--methods", "exact", "--dt", "3 kg"])
    assert rc == 2
    assert "--dt[0]" in capsys.readouterr().err
