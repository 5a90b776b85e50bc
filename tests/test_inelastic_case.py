"""Yielding story springs from the case file, through run_case to results.json."""

from __future__ import annotations

import json

import numpy as np
import pytest

import thist
from thist.cli import main
from thist.errors import InputError

from .conftest import CASE_TEXT


def bilinear_case(fy: str = "900 kN", extra: str = "", story: int = 0) -> str:
    old = [
        '{mass = "120 t", stiffness = "150 MN/m", height = "4.0 m"}',
        '{mass = "110 t", stiffness = "120 MN/m", height = "3.5 m"}',
    ][story]
    new = old[:-1] + f', law = "bilinear", yield_force = "{fy}", post_yield_ratio = 0.05{extra}}}'
    return CASE_TEXT.replace(old, new)


def load(case_dir, text):
    (case_dir / "case.toml").write_text(text)
    return thist.load_case(case_dir / "case.toml")


def test_springs_that_never_yield_reproduce_the_linear_run(case_dir):
    """With F_y far above the elastic peak the inelastic path equals the linear one to
    round-off (the spring law is then exactly linear; issue 4's first verification)."""
    linear = thist.run_case(load(case_dir, CASE_TEXT))
    inelastic = thist.run_case(load(case_dir, bilinear_case("1e6 kN")))
    a, b = linear.runs[0], inelastic.runs[0]
    assert b.path == "inelastic" and a.path == "modal"
    scale = np.max(np.abs(a.response.displacement))
    assert np.max(np.abs(a.response.displacement - b.response.displacement)) < 1e-10 * scale
    assert np.all(b.story.yield_excursions == 0)


def test_yielding_story_reports_ductility_and_residual_drift(case_dir):
    result = thist.run_case(load(case_dir, bilinear_case("300 kN")))
    st = result.runs[0].story
    assert st.ductility[0] > 1.0
    assert np.isnan(st.ductility[1])  # elastic story
    assert st.hysteretic_energy[0] > 0
    assert result.runs[0].energy.balance_error < 1e-2


def test_results_json_carries_the_inelastic_demands(case_dir):
    load(case_dir, bilinear_case("300 kN"))
    out = case_dir / "out"
    assert main(["run", str(case_dir / "case.toml"), "-o", str(out)]) == 0
    data = json.loads((out / "results.json").read_text())
    inel = data["methods"][0]["inelastic"]
    assert inel["story"]["law"] == ["bilinear", "elastic", "elastic"]
    assert inel["story"]["ductility"][0] > 1.0
    assert inel["convergence"]["steps"] > 0


@pytest.mark.parametrize(
    ("text", "message"),
    [
        (
            bilinear_case().replace(', yield_force = "900 kN"', ""),
            r"structure.stories\[0\]: a bilinear story needs yield_force or yield_drift",
        ),
        (
            bilinear_case(extra=', yield_drift = "5 mm"'),
            r"structure.stories\[0\]: a bilinear story needs yield_force or yield_drift",
        ),
        (
            bilinear_case().replace("post_yield_ratio = 0.05", "post_yield_ratio = 1.5"),
            r"structure.stories\[0\].post_yield_ratio: must lie in",
        ),
        (
            bilinear_case().replace('law = "bilinear"', 'law = "bilinar"'),
            r"structure.stories\[0\].law: must be one of .* \(did you mean 'bilinear'\?\)",
        ),
        (
            CASE_TEXT.replace('height = "4.0 m"}', 'height = "4.0 m", yield_force = "9 kN"}'),
            r"structure.stories\[0\].yield_force: given for an elastic story",
        ),
        (
            bilinear_case().replace('methods = ["newmark-average"]', 'methods = ["exact"]'),
            r"analysis.methods\[0\]: method 'exact' is for linear models only",
        ),
        (
            bilinear_case()
            .replace('model = "rayleigh"', 'model = "modal"')
            .replace("modes = [1, 2]\n", ""),
            r"damping.model: modal damping cannot follow",
        ),
        (
            bilinear_case() + '\n[analysis.inelastic]\ndamping = "secant"\n',
            r"analysis.inelastic.damping: must be one of initial, tangent",
        ),
        (
            bilinear_case() + "\n[analysis.inelastic]\nmax_iterations = 0\n",
            r"analysis.inelastic.max_iterations: expected a whole number >= 1",
        ),
    ],
)
def test_bad_spring_input_names_the_story_and_field(case_dir, text, message):
    with pytest.raises(InputError, match=message):
        thist.run_case(load(case_dir, text))


def test_report_shows_the_inelastic_demands_and_the_caution(case_dir):
    from pypdf import PdfReader

    load(case_dir, bilinear_case("300 kN"))
    out = case_dir / "out"
    assert main(["run", str(case_dir / "case.toml"), "-o", str(out)]) == 0
    text = " ".join(p.extract_text() for p in PdfReader(out / "report.pdf").pages)
    text = " ".join(text.split())
    assert "Inelastic story demands" in text
    assert "sensitive to the story spring laws" in text
    assert "Charney 2008" in text
    data = json.loads((out / "results.json").read_text())
    from thist.report.styles import fmt

    assert fmt(data["methods"][0]["inelastic"]["story"]["ductility"][0], 3) in text
