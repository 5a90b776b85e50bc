"""The PDF report: contents, special characters, fonts, atomic writing, rendering.

Checked with pypdf (text and font resources) and, where installed, pdftoppm.
"""

from __future__ import annotations

import json
import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest
from pypdf import PdfReader

from tests.case_factory import write_case
from thist import cautions, load_case, run_case
from thist.cli import main
from thist.report import figures, write_report
from thist.report.styles import fmt
from thist.verification import Outcome, Problem, run_problems

TITLE = 'Tower <A> & "Ünïcødé" Ω – test'


def _norm(text: str) -> str:
    return " ".join(text.split())


@pytest.fixture(scope="module")
def run_report(tmp_path_factory):
    """`thist run` on a five-story case whose title has <, & and non-ASCII characters."""
    folder = tmp_path_factory.mktemp("report")
    case_path = write_case(folder, title=TITLE, methods=("newmark-average", "exact"), duration=6.0)
    out = folder / "out"
    assert main(["run", str(case_path), "-o", str(out)]) == 0
    reader = PdfReader(out / "report.pdf")
    pages = [p.extract_text() for p in reader.pages]
    data = json.loads((out / "results.json").read_text())
    return {"out": out, "reader": reader, "pages": pages, "data": data, "case": case_path}


def test_report_written_beside_results(run_report):
    assert (run_report["out"] / "report.pdf").is_file()
    assert (run_report["out"] / "results.json").is_file()


def test_title_with_special_characters_survives_on_every_page(run_report):
    """Escaped, not interpreted: <A>, & and non-ASCII text read back unchanged."""
    pages = run_report["pages"]
    assert TITLE in _norm(pages[0])
    n = len(pages)
    for i, text in enumerate(pages, start=1):
        assert f"page {i} of {n}" in text
        assert 'Tower <A> & "Ünïcødé"' in text  # the running head on every page


def test_cautions_status_and_sections_in_order(run_report):
    text = _norm(" ".join(run_report["pages"]))
    for caution in cautions.FULL:
        assert _norm(caution) in text
    assert cautions.STATUS in text
    heads = ["2. Scope and assumptions", "3. Model", "4. Modes", "5. Record",
             "6. Analysis settings and checks", "7. Results", "8. Figures", "10. Cautions",
             "11. Appendix"]  # fmt: skip
    positions = [text.index(h) for h in heads]
    assert positions == sorted(positions)
    assert "9. Comparison" not in text  # run, not compare


def test_method_names_and_peak_values_as_in_results_json(run_report):
    """Peaks of results.json, in display units, appear formatted as in the tables."""
    text = _norm(" ".join(run_report["pages"]))
    case = load_case(run_report["case"])
    du = case.display
    for m in run_report["data"]["methods"]:
        assert m["label"] in text
        pk = m["peaks"]
        roof = du.show(pk["displacement"]["values"][-1], "length")
        shear = du.show(pk["base_shear"]["values"], "force")
        drift = max(pk["drift_ratio"]["values"], key=abs)
        acc = du.show(pk["absolute_acceleration"]["values"][-1], "acceleration")
        for value in (roof, shear, drift, acc):
            assert fmt(value) in text, (m["label"], value)
        assert f"{m['energy']['balance_error']:.2e}" in text


def test_drift_column_reads_no_limit_given_without_a_user_limit(run_report):
    text = _norm(" ".join(run_report["pages"]))
    assert "no limit given" in text
    assert "within the limit" not in text


def test_appendix_echoes_case_and_versions_and_verification(run_report):
    text = _norm(" ".join(run_report["pages"]))
    assert "drift_ratio_limit" not in text  # this case has none: echo is verbatim
    assert 'methods = ["newmark-average", "exact"]' in text
    for name in ("python", "numpy", "scipy", "thist"):
        assert name in text
    assert "Verification summary" in text and "benchmark problems pass" in text


def test_fonts_are_embedded_truetype(run_report):
    """Every font used is an embedded TrueType subset (no unembedded base-14 font)."""
    seen = 0
    for page in run_report["reader"].pages:
        fonts = page["/Resources"].get("/Font", {})
        for ref in fonts.values():
            font = ref.get_object()
            if font.get("/Subtype") == "/Type0":
                font = font["/DescendantFonts"][0].get_object()
            desc = font["/FontDescriptor"].get_object()
            assert "/FontFile2" in desc, font.get("/BaseFont")
            seen += 1
    assert seen > 0


def _render(pdf: Path, page: int, tmp: Path) -> np.ndarray:
    from matplotlib.image import imread

    stem = tmp / f"p{page}"
    subprocess.run(
        ["pdftoppm", "-r", "40", "-png", "-f", str(page), "-l", str(page), "-singlefile",
         str(pdf), str(stem)],
        check=True,
    )  # fmt: skip
    return imread(str(stem) + ".png")


@pytest.mark.skipif(shutil.which("pdftoppm") is None, reason="pdftoppm not installed")
def test_page_one_and_results_page_render_not_blank(run_report, tmp_path):
    pages = run_report["pages"]
    results_page = next(i for i, t in enumerate(pages, start=1) if "7. Results" in t)
    for page in (1, results_page):
        img = _render(run_report["out"] / "report.pdf", page, tmp_path)
        dark = np.mean(img[..., :3].mean(axis=-1) < 0.8)
        assert dark > 0.01, page  # text and rules cover more than 1 % of the page


def test_failure_while_writing_keeps_previous_report_and_leaves_no_partial(tmp_path, monkeypatch):
    """A failure during the build leaves the previous report byte for byte, no temp file."""
    case = load_case(write_case(tmp_path / "c", duration=3.0))
    result = run_case(case)
    target = tmp_path / "out" / "report.pdf"
    target.parent.mkdir()
    target.write_bytes(b"%PDF previous good report")
    outcomes = run_problems()

    def broken(*args, **kwargs):
        raise RuntimeError("disk full while drawing")

    monkeypatch.setattr(figures, "energy_figure", broken)
    with pytest.raises(RuntimeError):
        write_report(target, result, verification=outcomes)
    assert target.read_bytes() == b"%PDF previous good report"
    assert sorted(p.name for p in target.parent.iterdir()) == ["report.pdf"]


def test_user_drift_limit_and_its_basis_are_shown(tmp_path):
    """With a limit in the case file the column checks against it and the basis is quoted."""
    case = load_case(
        write_case(tmp_path / "c", duration=3.0, drift_limit=(0.0001, "basis <code> & class"))
    )
    result = run_case(case)
    fake = (Outcome(Problem("k", "t", "s", "r", "e", 1.0, "b", lambda: 0.0), 0.0, True, 0.0),)
    path = write_report(tmp_path / "r.pdf", result, verification=fake)
    text = _norm(" ".join(p.extract_text() for p in PdfReader(path).pages))
    assert "EXCEEDS the limit" in text
    assert "basis <code> & class" in text
    assert "no limit given" not in text


def test_verify_command_writes_one_page_and_fails_on_a_failing_problem(tmp_path, monkeypatch):
    """`thist verify -o DIR`: one-page summary; exit 1 when any problem fails."""
    import thist.verification.problems as problems

    ok = Problem("ok", "passes", "src", "ref", "err", 1e-6, "why", lambda: 1e-9)
    bad = Problem("bad", "fails", "src", "ref", "err", 1e-6, "why", lambda: 1.0)
    monkeypatch.setattr(problems, "PROBLEMS", (ok, bad))
    assert main(["verify", "-o", str(tmp_path)]) == 1
    reader = PdfReader(tmp_path / "verification.pdf")
    assert len(reader.pages) == 1
    text = reader.pages[0].extract_text()
    assert "FAIL" in text and "passes" in text
    monkeypatch.setattr(problems, "PROBLEMS", (ok,))
    assert main(["verify", "-o", str(tmp_path)]) == 0
