"""The PDF report of a study (suite or IDA), in the layout of the case report.

Sections: 1 title block, 2 scope and assumptions, 3 records, 4 suite results
(per-record peaks, statistics per level and story, envelopes) or IDA results
(curves with fractiles, collapses, fragility functions), 5 jobs that failed,
6 cautions, 7 appendix (study file, execution, store). Every value comes from
the :class:`~thist.batch.run.StudyResult` (that is, from the store); nothing is
recomputed except the conversion to display units and the fitted fragility
curves drawn from their median and dispersion.
"""

from __future__ import annotations

import datetime as _dt
from pathlib import Path

import numpy as np
from reportlab.lib.units import mm
from reportlab.platypus import (
    CondPageBreak,
    Flowable,
    Image,
    PageBreak,
    Paragraph,
    Preformatted,
    Spacer,
)

from thist import __version__, cautions
from thist.batch.fragility import CAUTION as FRAGILITY_CAUTION
from thist.batch.run import StudyResult
from thist.batch.stats import IdaCurves, SuiteStatistics
from thist.batch.store import STORE_NAME
from thist.report.document import build_pdf, write_pdf
from thist.report.figures import _figure, _image, _labels, _legend_outside
from thist.report.sections import key_values, scope_items, status_box, table
from thist.report.styles import esc, fmt, styles

#: Light line colour of individual records in figures; bold colours of the statistics.
_LIGHT = "#b8c2cc"
_MEAN = "#2f4b6e"
_MEDIAN = "#b5562b"


class StudyCtx:
    """What every section needs: the result, the styles and the display units."""

    def __init__(self, result: StudyResult):
        self.result = result
        self.study = result.study
        self.du = result.study.case.display
        self.st = styles()

    def p(self, text: str, style: str = "body") -> Paragraph:
        """A paragraph of program text (already escaped where it holds user text)."""
        return Paragraph(text, self.st[style])

    def u(self, kind: str) -> str:
        """Display unit label of ``kind``, escaped."""
        return esc(self.du.label(kind))

    def level_text(self, level: float | None) -> str:
        """An intensity level in the study's unit."""
        ida = self.study.ida
        if level is None or ida is None:
            return "-"
        return f"{fmt(level / ida.unit_si)} {esc(ida.unit)}"


def _heading(ctx: StudyCtx, number: int, text: str) -> list[Flowable]:
    return [CondPageBreak(40 * mm), ctx.p(f"{number}. {esc(text)}", "h1")]


# 1 ---------------------------------------------------------------------------------------


def title_block(ctx: StudyCtx, created: _dt.datetime) -> list[Flowable]:
    s, r = ctx.study, ctx.result
    status = status_box(ctx)
    kind = "record suite" if s.kind == "suite" else "incremental dynamic analysis"
    stored = len(r.rows)
    complete = "complete" if r.complete else "INCOMPLETE: resume the study to finish it"
    pairs = [
        ("Study file", esc(Path(s.path).name)),
        ("Study hash (SHA-256)", esc(s.sha256)),
        ("Structure", esc(Path(s.case.path).name)),
        ("Kind", kind),
        ("Runs stored", f"{stored} of {r.total_jobs} jobs ({complete})"),
        ("Date (UTC)", esc(created.strftime("%Y-%m-%d %H:%M"))),
        ("thist version", esc(__version__)),
        ("Display units", "as in the structure's case file; stored results are SI"),
    ]
    out = [
        ctx.p(esc(s.title), "title"),
        ctx.p(f"Report of a {kind} made with thist {esc(__version__)}.", "body"),
        Spacer(1, 4),
        status,
        Spacer(1, 6),
        key_values(ctx, pairs),  # type: ignore[arg-type]
    ]
    if s.notes.strip():
        out += [Spacer(1, 4), ctx.p("Notes from the study file", "h2")]
        out += [ctx.p(esc(line)) for line in s.notes.strip().splitlines() if line.strip()]
    return out


# 2 ---------------------------------------------------------------------------------------


def scope(ctx: StudyCtx) -> list[Flowable]:
    s = ctx.study
    st = s.case.structure
    items = [
        f"Structure: {esc(s.case.title)} - {st.n} levels, first-mode period T1 = "
        f"{fmt(s.t1)} s (initial stiffness).",
        f"Records: {len(s.records)}, each run on its own as one horizontal component of "
        "ground acceleration at the base.",
        "Methods: " + ", ".join(esc(m.label) for m in s.methods) + ".",
        f"Analysis step: {fmt(s.case.analysis.dt) if s.case.analysis.dt else 'each record'}"
        f"{' s' if s.case.analysis.dt else chr(39) + 's own'}; duration: "
        + (f"{fmt(s.case.analysis.duration)} s" if s.case.analysis.duration else "each record's")
        + ".",
    ]
    if s.ida is not None:
        ida = s.ida
        items.append(
            f"Intensity measure: {esc(ida.label)}; {len(ida.levels)} levels from "
            f"{ctx.level_text(ida.levels[0])} to {ctx.level_text(ida.levels[-1])}. Each record "
            "is processed as its file states, then scaled so that its intensity measure equals "
            "the level."
        )
        stop = "a run that does not converge"
        if ida.collapse_drift_ratio is not None:
            stop += (
                f", or a peak story drift ratio above {fmt(ida.collapse_drift_ratio)} "
                f"({esc(ida.collapse_basis)})"
            )
        items.append(
            f"Stop rule: a record stops after the first level with {stop}; it counts as "
            "collapsed there and at every higher level."
        )
    return _heading(ctx, 2, "Scope and assumptions") + scope_items(ctx, items)


# 3 ---------------------------------------------------------------------------------------


def records_section(ctx: StudyCtx) -> list[Flowable]:
    s, r, du = ctx.study, ctx.result, ctx.du
    A = ctx.u("acceleration")
    first = {}
    for row in r.rows:
        if row.method_index == 0 and (s.kind == "suite" or row.level_index == 0):
            first[row.record_index] = row
    rows = []
    for i, rec in enumerate(s.records):
        raw = rec.spec.record
        row = first.get(i)
        scale = fmt(row.scale_factor) if row and row.scale_factor is not None else "-"
        pga = fmt(du.show(row.pga, "acceleration")) if row and row.pga is not None else "-"
        psa = fmt(du.show(row.psa_t1, "acceleration")) if row and row.psa_t1 else "-"
        rule = "target spectrum" if rec.spec.scaling is not None else "-"
        rows.append(
            [
                esc(rec.name),
                esc(Path(raw.source).name),
                fmt(raw.dt),
                fmt(raw.duration),
                esc(raw.sha256[:12]),
                rule,
                scale,
                pga,
                psa,
            ]
        )
    out = _heading(ctx, 3, "Records")
    out.append(
        table(
            ctx,  # type: ignore[arg-type]
            [
                "record",
                "file",
                "Δt [s]",
                "duration [s]",
                "SHA-256 (first 12)",
                "scaling rule",
                "scale factor",
                f"PGA [{A}]",
                f"PSA(T1) [{A}]",
            ],
            rows,
            [16 * mm, 30 * mm, 12 * mm, 16 * mm, 24 * mm, 20 * mm, 16 * mm, 16 * mm, 20 * mm],
        )
    )
    note = (
        "Scale factor: from the file's values to the analysed record (the record's own scale "
        "times the scaling rule's factor). PGA and PSA(T1, 5 %) of the analysed record."
    )
    if s.kind == "ida":
        note = (
            "Scale factor, PGA and PSA(T1, 5 %) at the first intensity level; at level x each "
            "record is scaled by x / (its intensity measure)."
        )
    out.append(ctx.p(note, "small"))
    headers = [h for rec in s.records for h in rec.spec.record.header[:1]]
    if headers and any("SYNTHETIC" in h for h in headers):
        out.append(
            ctx.p(
                "The record files say in their headers that they are SYNTHETIC: not recorded "
                "motions and not a substitute for motions selected and scaled for the site.",
                "warn",
            )
        )
    return out


# 4 (suite) -------------------------------------------------------------------------------


def _position_labels(ctx: StudyCtx, kind: str) -> list[str]:
    labels = ctx.study.case.structure.labels
    if kind == "story":
        return [f"story {i + 1} ({labels[i]})" for i in range(len(labels))]
    return list(labels)


def _stat_table(ctx: StudyCtx, s: SuiteStatistics, q: str, kind: str, unit: str, disp: str):
    st = s.stats.get(q)
    if st is None:
        return None
    rows = []
    for i, pos in enumerate(_position_labels(ctx, kind)):

        def show(x: float) -> str:
            return fmt(ctx.du.show(x, disp) if disp != "ratio" else x)

        rows.append(
            [
                esc(pos),
                show(st.mean[i]),
                show(st.median[i]),
                show(st.maximum[i]),
                fmt(st.log_std[i], 3),
            ]
        )
    return table(
        ctx,  # type: ignore[arg-type]
        ["level / story", f"mean [{unit}]", f"median [{unit}]", f"maximum [{unit}]", "log std [-]"],
        rows,
        [50 * mm, 30 * mm, 30 * mm, 30 * mm, 30 * mm],
    )


def envelope_figure(ctx: StudyCtx, s: SuiteStatistics) -> Image:
    """Peak envelopes over height: every record light, mean and median bold."""
    du, st = ctx.du, ctx.study.case.structure
    elev = st.elevations
    y = du.show(elev, "length") if elev is not None else np.arange(1, st.n + 1, dtype=float)
    ylab = f"elevation [{du.label('length')}]" if elev is not None else "level"
    fig, axes = _figure(2.8, ncols=4)
    panels = [
        ("displacement", "length", f"displacement [{du.label('length')}]", False),
        ("drift_ratio", "ratio", "drift ratio [-]", True),
        ("story_shear", "force", f"story shear [{du.label('force')}]", True),
        ("absolute_acceleration", "acceleration", f"abs. acc. [{du.label('acceleration')}]", False),
    ]
    for ax, (q, kind, xlab, story) in zip(axes[0], panels, strict=True):
        stat = s.stats.get(q)
        if stat is None:
            ax.set_visible(False)
            continue

        def show(x, kind=kind):
            return x if kind == "ratio" else du.show(x, kind)

        def draw(x, ax=ax, story=story, **kw):
            if story:
                ax.step(show(x), y, where="pre", **kw)
            else:
                ax.plot(show(x), y, **kw)

        for k, v in enumerate(stat.values):
            draw(v, color=_LIGHT, linewidth=0.6, label="each record" if k == 0 else None)
        draw(stat.mean, color=_MEAN, linewidth=1.6, label="mean")
        draw(stat.median, color=_MEDIAN, linewidth=1.6, linestyle="--", label="median")
        if q == "drift_ratio" and ctx.study.case.checks.drift_ratio_limit is not None:
            ax.axvline(ctx.study.case.checks.drift_ratio_limit, color="#8a1c1c", lw=0.7, ls=":")
        _labels(ax, xlab, ylab if q == "displacement" else "")
        ax.set_xlim(left=0)
        ax.set_ylim(bottom=0)
    _legend_outside(axes[0, 3])
    fig.tight_layout()
    return _image(fig)


def suite_section(ctx: StudyCtx) -> list[Flowable]:
    r, du = ctx.result, ctx.du
    out = _heading(ctx, 4, "Suite results")
    L, F, A = ctx.u("length"), ctx.u("force"), ctx.u("acceleration")
    rows = []
    for row in r.rows:
        if row.status != "ok":
            rows.append(
                [esc(row.record), esc(row.method), f"<b>{esc(row.status)}</b>", "-", "-", "-", "-"]
            )
            continue
        disp, dr = row.peak_abs("displacement"), row.peak_abs("drift_ratio")
        vb, aa = row.peak_abs("base_shear"), row.peak_abs("absolute_acceleration")
        story = f" (story {int(np.argmax(dr)) + 1})" if dr is not None else ""
        rows.append(
            [
                esc(row.record),
                esc(row.method),
                "ok",
                fmt(du.show(float(disp[-1]), "length")) if disp is not None else "-",
                (fmt(float(dr.max())) + story) if dr is not None else "-",
                fmt(du.show(float(vb.max()), "force")) if vb is not None else "-",
                fmt(du.show(float(aa.max()), "acceleration")) if aa is not None else "-",
            ]
        )
    out.append(ctx.p("Peaks of each record", "h2"))
    out.append(
        table(
            ctx,  # type: ignore[arg-type]
            [
                "record",
                "method",
                "status",
                f"roof displacement [{L}]",
                "max drift ratio [-]",
                f"base shear [{F}]",
                f"max abs. acc. [{A}]",
            ],
            rows,
            [20 * mm, 30 * mm, 16 * mm, 28 * mm, 28 * mm, 24 * mm, 24 * mm],
        )
    )
    for stat in r.statistics:
        out.append(CondPageBreak(60 * mm))
        out.append(
            ctx.p(
                f"Statistics over {len(stat.records)} records, {esc(stat.method)}",
                "h2",
            )
        )
        if stat.excluded:
            out.append(
                ctx.p(
                    "Left out: "
                    + "; ".join(f"{esc(n)} ({esc(st)})" for n, st, _ in stat.excluded)
                    + ".",
                    "warn",
                )
            )
        for q, kind, unit, disp, title in (
            ("drift_ratio", "story", "-", "ratio", "Peak story drift ratio"),
            ("displacement", "level", L, "length", "Peak displacement relative to the base"),
            ("story_shear", "story", F, "force", "Peak story shear"),
            ("absolute_acceleration", "level", A, "acceleration", "Peak floor acceleration"),
        ):
            t = _stat_table(ctx, stat, q, kind, unit, disp)
            if t is not None:
                out += [ctx.p(esc(title), "small"), t, Spacer(1, 3)]
        if len(stat.records):
            out.append(envelope_figure(ctx, stat))
    out.append(
        ctx.p(
            "Log std: sample standard deviation of the natural logarithms of the peaks "
            "(n − 1 in the denominator), undefined with fewer than two records.",
            "small",
        )
    )
    return out


# 4 (IDA) ---------------------------------------------------------------------------------


def ida_figure(ctx: StudyCtx, curves: IdaCurves) -> Image:
    """Intensity against peak drift ratio: each record light, fractiles bold."""
    ida = ctx.study.ida
    assert ida is not None
    x_im = curves.levels / ida.unit_si
    fig, axes = _figure(3.2)
    ax = axes[0, 0]
    for k, name in enumerate(curves.records):
        d = curves.drift[k]
        ran = ~np.isnan(d)
        ax.plot(d[ran], x_im[ran], color=_LIGHT, lw=0.7, marker="o", ms=1.5,
                label="each record" if k == 0 else None)  # fmt: skip
        hit = np.flatnonzero(curves.collapsed[k])
        if hit.size and not np.isnan(d[hit[0]]):
            ax.plot(d[hit[0]], x_im[hit[0]], "x", color="#8a1c1c", ms=4,
                    label="collapse" if k == 0 or name == curves.records[0] else None)  # fmt: skip
    styles_ = {0.16: ("#4f8a4a", ":"), 0.5: (_MEAN, "-"), 0.84: (_MEDIAN, "--")}
    for p, vals in curves.fractiles.items():
        finite = np.isfinite(vals)
        color, ls = styles_.get(p, ("#555555", "-"))
        ax.plot(vals[finite], x_im[finite], color=color, ls=ls, lw=1.6,
                label=f"{round(100 * p)} % fractile")  # fmt: skip
    if ida.collapse_drift_ratio is not None:
        ax.axvline(ida.collapse_drift_ratio, color="#8a1c1c", lw=0.7, ls=":")
    _labels(ax, "peak story drift ratio [-]", f"{ida.label} [{ida.unit}]", esc(curves.method))
    ax.set_xlim(left=0)
    ax.set_ylim(bottom=0)
    handles, labels = ax.get_legend_handles_labels()
    seen: dict[str, object] = {}
    for h, lab in zip(handles, labels, strict=True):
        seen.setdefault(lab, h)
    ax.legend(list(seen.values()), list(seen), loc="upper left", bbox_to_anchor=(1.01, 1.0))
    fig.tight_layout()
    return _image(fig)


def fragility_figure(ctx: StudyCtx, method: str) -> Image | None:
    """Fitted fragility curves against the observed fractions, per damage state."""
    ida = ctx.study.ida
    assert ida is not None
    frs = [f for m, f in ctx.result.fragility if m == method]
    if not frs:
        return None
    fig, axes = _figure(2.8)
    ax = axes[0, 0]
    x = np.asarray(ida.levels) / ida.unit_si
    grid = np.linspace(0.0, x.max() * 1.1, 200)[1:]
    colors = ["#2f4b6e", "#b5562b", "#4f8a4a", "#7a4e8c", "#a08a2a", "#3d8a94", "#555555"]
    for k, f in enumerate(frs):
        c = colors[k % len(colors)]
        ax.plot(x, f.observed, "o", color=c, ms=3, label=f"{f.name}: observed")
        if f.fit is not None:
            ax.plot(grid, f.fit.probability(grid * ida.unit_si), color=c, lw=1.2,
                    label=f"{f.name}: fit")  # fmt: skip
    _labels(ax, f"{ida.label} [{ida.unit}]", "probability of exceeding [-]", esc(method))
    ax.set_ylim(-0.02, 1.02)
    ax.set_xlim(left=0)
    _legend_outside(ax)
    fig.tight_layout()
    return _image(fig)


def ida_section(ctx: StudyCtx) -> list[Flowable]:
    s, r = ctx.study, ctx.result
    ida = s.ida
    assert ida is not None
    out = _heading(ctx, 4, "Incremental dynamic analysis")
    for curves in r.curves:
        out.append(ctx.p(f"IDA curves, {esc(curves.method)}", "h2"))
        out.append(ida_figure(ctx, curves))
        out.append(
            ctx.p(
                "Fractiles over the records at each level (linear interpolation between order "
                "statistics); a collapsed record counts as an infinite drift ratio, so a "
                "fractile line ends where it falls among collapsed records.",
                "small",
            )
        )
        rows = []
        for k, name in enumerate(curves.records):
            hit = np.flatnonzero(curves.collapsed[k])
            if hit.size:
                rows.append(
                    [
                        esc(name),
                        ctx.level_text(curves.levels[hit[0]]),
                        esc(curves.collapse_reason[k]),
                    ]  # fmt: skip
                )
            else:
                rows.append([esc(name), "none up to the last level", ""])
        out.append(ctx.p("Collapse of each record", "h2"))
        out.append(
            table(
                ctx,  # type: ignore[arg-type]
                ["record", "collapse level", "reason"],
                rows,
                [24 * mm, 34 * mm, 112 * mm],
            )
        )
        if curves.failed:
            out.append(
                ctx.p(
                    "Left out (a job failed): "
                    + "; ".join(esc(n) for n, _ in curves.failed)
                    + ". See section 5.",
                    "warn",
                )
            )
    if r.fragility:
        out.append(CondPageBreak(70 * mm))
        out.append(ctx.p("Fragility functions", "h2"))
        out.append(
            ctx.p(
                "Lognormal P(exceed | IM = x) = Φ(ln(x/θ)/β), fitted by maximum likelihood to "
                "the number of records exceeding each damage state at each level (Baker 2015, "
                "Earthquake Spectra 31(1)). A damage state is exceeded when the peak story "
                "drift ratio reaches its threshold, or the record has collapsed. Standard "
                "errors from the Fisher information at the estimate.",
                "small",
            )
        )
        rows = []
        for method, f in r.fragility:
            fit = f.fit
            rows.append(
                [
                    esc(method),
                    esc(f.name),
                    fmt(f.drift_ratio) if f.drift_ratio is not None else "collapse",
                    esc(f.basis),
                    ctx.level_text(fit.median) if fit else "-",
                    fmt(fit.dispersion, 3) if fit else "-",
                    fmt(fit.se_ln_median, 2) if fit else "-",
                    fmt(fit.se_dispersion, 2) if fit else "-",
                    esc(f.note),
                ]
            )
        out.append(
            table(
                ctx,  # type: ignore[arg-type]
                [
                    "method",
                    "damage state",
                    "drift ratio [-]",
                    "basis",
                    "median θ",
                    "dispersion β [-]",
                    "s.e. ln θ",
                    "s.e. β",
                    "note",
                ],
                rows,
                [22 * mm, 18 * mm, 14 * mm, 30 * mm, 18 * mm, 16 * mm, 12 * mm, 12 * mm, 28 * mm],
            )
        )
        for m in s.methods:
            img = fragility_figure(ctx, m.label)
            if img is not None:
                out.append(img)
        out.append(ctx.p(esc(FRAGILITY_CAUTION), "warn"))
    return out


# 5 ---------------------------------------------------------------------------------------


def failed_section(ctx: StudyCtx) -> list[Flowable]:
    failed = ctx.result.failed
    out = _heading(ctx, 5, "Jobs that failed")
    if not failed:
        return out + [ctx.p("None.")]
    rows = [
        [esc(r.job_id), esc(r.record), ctx.level_text(r.level), esc(r.method), esc(r.error)]
        for r in failed
    ]
    out.append(
        table(
            ctx,  # type: ignore[arg-type]
            ["job", "record", "level", "method", "error"],
            rows,
            [26 * mm, 18 * mm, 16 * mm, 24 * mm, 86 * mm],
        )
    )
    out.append(
        ctx.p("A failed job is recorded with its error; the other jobs ran regardless.", "small")
    )
    return out


# 6, 7 ------------------------------------------------------------------------------------


def cautions_section(ctx: StudyCtx) -> list[Flowable]:
    out = _heading(ctx, 6, "Cautions")
    texts = list(cautions.FULL)
    if ctx.study.kind == "ida":
        texts.insert(2, FRAGILITY_CAUTION)
    out += [ctx.p(f"{i}. {esc(t)}") for i, t in enumerate(texts, start=1)]
    return out


def appendix(ctx: StudyCtx) -> list[Flowable]:
    s, r = ctx.study, ctx.result
    out = [PageBreak(), ctx.p("7. Appendix", "h1")]
    out.append(ctx.p(f"A. Study file {esc(Path(s.path).name)}, verbatim", "h2"))
    out.append(Preformatted(s.text, ctx.st["mono"], maxLineLength=110, newLineChars=""))
    out.append(ctx.p("B. Execution and store", "h2"))
    pairs = [
        ("Store", f"{esc(STORE_NAME)} (SQLite, one row per job; results in SI)"),
        ("Jobs stored", f"{len(r.rows)} of {r.total_jobs}"),
    ]
    ex = r.execution
    if ex is not None:
        pairs += [
            ("Executor (this run)", f"{esc(ex.executor)}, {ex.slots} worker(s)"),
            ("Jobs run now", str(ex.ran)),
            ("Chunk size", f"{ex.chunk_size} job(s) per task"),
            ("Measured overhead", f"{fmt(ex.overhead * 1e3)} ms per task"),
            ("Mean job time", f"{fmt(ex.job_time * 1e3)} ms"),
        ]
    out.append(key_values(ctx, pairs))  # type: ignore[arg-type]
    return out


def study_story(result: StudyResult, created: _dt.datetime | None = None) -> list[Flowable]:
    """The flowables of the study report, in section order (see the module docstring)."""
    ctx = StudyCtx(result)
    created = created or _dt.datetime.now(_dt.UTC)
    story = title_block(ctx, created)
    story += scope(ctx)
    story += records_section(ctx)
    story += suite_section(ctx) if result.study.kind == "suite" else ida_section(ctx)
    story += failed_section(ctx)
    story += cautions_section(ctx)
    story += appendix(ctx)
    return story


def write_study_report(path: str | Path, result: StudyResult) -> Path:
    """Write the PDF report of a study atomically.

    Parameters
    ----------
    path : str or Path
        Target file, e.g. ``reports/suite-demo/report.pdf``.
    result : StudyResult
        From :func:`thist.batch.run_study` or :func:`thist.batch.summarize_study`.

    Returns
    -------
    Path
        The file written. On any failure the previous file is left unchanged.
    """
    title = result.study.title
    return write_pdf(path, lambda: build_pdf(title, study_story(result)))
