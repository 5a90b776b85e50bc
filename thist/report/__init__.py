"""The PDF report: review-ready, restrained, with the cautions the trade expects.

:func:`write_report` writes ``report.pdf`` for ``thist run`` and ``thist compare``;
:func:`write_verification_summary` writes the one-page summary of ``thist verify``.
The report formats what ``response``, ``checks``, ``energy`` and ``compare``
produced; it never recomputes physics. Sections, in order: title block, scope and
assumptions, model, modes, record, analysis settings and checks, results, figures,
comparison (compare only), cautions, appendix (case file, software versions,
verification summary).
"""

from __future__ import annotations

import datetime as _dt
from pathlib import Path

from thist.analysis import CaseResult
from thist.compare import Comparison
from thist.report import sections as S
from thist.report.document import build_pdf, write_pdf
from thist.report.inelastic import inelastic_section
from thist.report.styles import esc, fmt, styles
from thist.verification import Outcome, run_problems


def report_story(
    result: CaseResult,
    comparison: Comparison | None = None,
    verification: tuple[Outcome, ...] | None = None,
    created: _dt.datetime | None = None,
) -> list:
    """The flowables of the report, in section order (see the module docstring)."""
    ctx = S.Ctx(result, styles(), comparison)
    created = created or _dt.datetime.now(_dt.UTC)
    outcomes = run_problems() if verification is None else verification
    story = S.title_block(ctx, created)
    story += S.scope(ctx)
    story += S.model(ctx)
    story += S.modes_section(ctx)
    story += S.record_section(ctx)
    story += S.checks_section(ctx)
    story += S.results_section(ctx)
    story += inelastic_section(ctx)
    story += S.figures_section(ctx)
    if comparison is not None:
        story += S.comparison_section(ctx)
    story += S.cautions_section(ctx)
    story += S.appendix(ctx, outcomes)
    return story


def write_report(
    path: str | Path,
    result: CaseResult,
    comparison: Comparison | None = None,
    verification: tuple[Outcome, ...] | None = None,
) -> Path:
    """Write the PDF report of a run (or a comparison) atomically.

    Parameters
    ----------
    path : str or Path
        Target file, e.g. ``reports/clinic/report.pdf``.
    result : CaseResult
        The run (for a comparison: its first time step).
    comparison : Comparison, optional
        Adds section 9.
    verification : tuple of Outcome, optional
        Benchmark outcomes for the appendix; run now when not given.

    Returns
    -------
    Path
        The file written. On any failure the previous file is left unchanged.
    """
    title = result.case.title
    return write_pdf(path, lambda: build_pdf(title, report_story(result, comparison, verification)))


def write_verification_summary(path: str | Path, outcomes: tuple[Outcome, ...]) -> Path:
    """Write the one-page verification summary PDF atomically.

    Parameters
    ----------
    path : str or Path
        Target file.
    outcomes : tuple of Outcome
        From :func:`thist.verification.run_problems`.
    """
    from thist import __version__, cautions

    st = styles()

    class _Ctx:
        def p(self, text, style="body"):
            return S.Paragraph(text, st[style])

    ctx = _Ctx()
    ctx.st = st
    title = f"thist {__version__}: verification summary"
    now = _dt.datetime.now(_dt.UTC).strftime("%Y-%m-%d %H:%M")

    def make() -> bytes:
        story = [
            ctx.p(esc(title), "title"),
            ctx.p(
                f"Benchmark problems with published references, run by this build on {now} "
                "UTC. Each error is dimensionless, measured as stated in "
                "thist/verification/problems.py, where each tolerance's reason is given.",
                "small",
            ),
            S.Spacer(1, 4),
            *S.verification_block(ctx, outcomes),
            S.Spacer(1, 6),
            ctx.p(esc(cautions.SHORT), "small"),
        ]
        return build_pdf(title, story)

    return write_pdf(path, make)


__all__ = ["fmt", "report_story", "write_report", "write_verification_summary"]
