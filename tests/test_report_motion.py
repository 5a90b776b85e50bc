"""The analysed ground motion in results.json and in the record section of the report."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from pypdf import PdfReader

import thist
from thist.report import write_report
from thist.report.styles import fmt
from thist.results import result_dict
from thist.units import STANDARD_GRAVITY

from .conftest import CASE_TEXT

BASIS = "invented for the report test & not a code value <demo>"


def _norm(text: str) -> str:
    return " ".join(text.split())


@pytest.fixture(scope="module")
def scaled(tmp_path_factory):
    """A case with three processing steps and a range scaling whose lower bound binds
    (factor_min = 50 is far above the best factor of the 0.2 g test record to a 0.9 g
    target), run and reported (the verification appendix is left empty for speed)."""
    from .conftest import write_record

    folder = tmp_path_factory.mktemp("motion")
    write_record(folder / "record.txt")
    text = CASE_TEXT.replace(
        'acceleration_column = "accel"\n',
        'acceleration_column = "accel"\n'
        "processing = [\n"
        '  {step = "taper", start = "0.5 s", end = "0.5 s"},\n'
        '  {step = "filter", kind = "highpass", low = "0.2 Hz", order = 2},\n'
        '  {step = "baseline", order = 1},\n'
        "]\n"
        "[record.scaling]\n"
        f"basis = {json.dumps(BASIS)}\n"
        'target_shape = {s_short = "0.9 g", s_one = "0.5 g", t_long = "6 s"}\n'
        "range_t1 = [0.2, 2.0]\n"
        "factor_min = 50\n",
    )
    (folder / "case.toml").write_text(text)
    result = thist.run_case(thist.load_case(folder / "case.toml"))
    pdf = write_report(folder / "report.pdf", result, verification=())
    text = _norm(" ".join(p.extract_text() for p in PdfReader(pdf).pages))
    return result, text


def test_results_json_lists_processing_in_order_and_the_scaling(scaled):
    """JSON-ready (strict JSON, no NaN); steps in the case's order; the scaling carries the
    user's basis, the bound that binds and the factor equal to it; the 5 % spectrum has
    PSA = (2 pi / T)^2 SD by definition (Chopra, Dynamics of Structures, sec. 6.6)."""
    result, _ = scaled
    data = json.loads(json.dumps(result_dict(result), allow_nan=False))
    m = data["motion"]
    assert [s["step"] for s in m["processing"]] == ["taper", "filter", "baseline"]
    assert m["processing"][1]["params"]["f_low"] == 0.2
    sc = m["scaling"]
    assert sc["basis"] == BASIS and BASIS in sc["target"]["description"]
    assert sc["bound_hit"] == "lower" and sc["factor"] == 50.0
    assert sc["unbounded_factor"] < 50.0 and "lower bound" in sc["warning"]
    t1 = float(result.modes.periods[0])
    assert sc["period_range"] == pytest.approx([0.2 * t1, 2.0 * t1], rel=1e-12)
    assert sc["target"]["s_short"] == pytest.approx(0.9 * STANDARD_GRAVITY, rel=1e-15)
    sp = m["spectrum"]
    t = np.array(sp["periods"])
    np.testing.assert_allclose(sp["psa"], (2 * np.pi / t) ** 2 * np.array(sp["sd"]), rtol=1e-12)
    assert sp["damping"] == 0.05
    im = m["intensity"]
    assert im["d5_95"] == pytest.approx(im["t95"] - im["t5"], rel=1e-12)


def test_report_shows_factor_basis_range_and_the_bound_warning(scaled):
    """The numbers are formatted with the report's fmt() as in its tables; the user's
    basis (with <, & escaped, not interpreted) is printed beside the target."""
    result, text = scaled
    sc = result.motion.scaling
    assert f"Scale factor [-] {fmt(sc.factor)}" in text
    assert f"Best factor without bounds [-] {fmt(sc.unbounded_factor)}" in text
    assert f"Basis stated by the user {BASIS}" in text
    lo, hi = sc.period_range
    assert f"Period range [s] {fmt(lo)} – {fmt(hi)}" in text
    assert "Warning: the lower bound on the scale factor binds" in text
    assert "Scaling to the user's target spectrum" in text


def test_report_lists_processing_in_order_and_the_intensity_measures(scaled):
    """Steps appear numbered in the case's order; Arias intensity, D5-95, D5-75, CAV,
    bracketed duration and T_m appear formatted as in the table (display velocity m/s)."""
    result, text = scaled
    i_taper, i_filter, i_base = (text.index(s) for s in ("1 taper", "2 filter", "3 baseline"))
    assert i_taper < i_filter < i_base
    im = result.motion.intensity
    row = " ".join(fmt(x) for x in (im.arias, im.d5_95, im.d5_75, im.cav, im.bracketed_duration))
    assert row + " " + fmt(im.mean_period) in text
    assert not math.isnan(im.mean_period)
    assert "Response spectrum of the analysed record (5 % damping)" in text


def test_scaled_demo_case_states_an_invented_target_basis():
    """The demo target is presented as invented for the demo, never as a code value."""
    from pathlib import Path

    path = Path(__file__).resolve().parent.parent / "inputs" / "clinic-scaled.toml"
    case = thist.load_case(path)
    sc = case.motion.scaling
    assert sc is not None and sc.target.kind == "two-parameter"
    assert "invented for the thist demo" in sc.target.basis
    assert "not a building-code" in sc.target.basis
    assert [s["step"] for s in case.motion.processing] == ["taper", "filter", "baseline"]
