"""The eleven sections of the report, each a list of reportlab flowables.

Order: 1 title block, 2 scope and assumptions, 3 model, 4 modes, 5 record,
6 analysis settings and checks, 7 results, 8 figures, 9 comparison (``thist
compare`` only), 10 cautions, 11 appendix. Every value shown comes from the
CaseResult, the Comparison or the verification outcomes; nothing is recomputed
except the conversion to display units.
"""

from __future__ import annotations

import datetime as _dt
import math
import platform
from pathlib import Path

import matplotlib
import numpy as np
import pint
import reportlab
import scipy
from reportlab.lib.units import mm
from reportlab.platypus import (
    CondPageBreak,
    Flowable,
    KeepTogether,
    PageBreak,
    Paragraph,
    Preformatted,
    Spacer,
    Table,
    TableStyle,
)

from thist import __version__, cautions
from thist.analysis import CaseResult, MethodRun
from thist.compare import COMPARED, Comparison
from thist.report import figures
from thist.report.styles import ACCENT, FONT, INK, RULE, SHADE, WARN, esc, fmt, pct
from thist.units import STANDARD_GRAVITY
from thist.verification import Outcome

WIDTH = 170 * mm


class Ctx:
    """What every section needs: the result, the styles and the display units."""

    def __init__(self, result: CaseResult, st: dict, comparison: Comparison | None):
        self.result = result
        self.case = result.case
        self.du = result.case.display
        self.st = st
        self.comparison = comparison

    def p(self, text: str, style: str = "body") -> Paragraph:
        """A paragraph of program text (already escaped where it holds user text)."""
        return Paragraph(text, self.st[style])

    def u(self, kind: str) -> str:
        """Display unit label of ``kind``, escaped."""
        return esc(self.du.label(kind))


def table(ctx: Ctx, header: list[str], rows: list[list[str]], widths: list[float] | None = None,
          align_right_from: int = 1, shade_rows: list[int] | None = None) -> Table:  # fmt: skip
    """A table whose header row repeats on every page it breaks onto.

    ``header`` and ``rows`` hold escaped text (reportlab paragraph markup).
    """
    data = [[Paragraph(h, ctx.st["head"]) for h in header]]
    data += [[Paragraph(c, ctx.st["cell"]) for c in r] for r in rows]
    if widths is None:
        widths = [WIDTH / len(header)] * len(header)
    t = Table(data, colWidths=widths, repeatRows=1, hAlign="LEFT")
    style = [
        ("FONT", (0, 0), (-1, -1), FONT, 7.5),
        ("TEXTCOLOR", (0, 0), (-1, -1), INK),
        ("LINEABOVE", (0, 0), (-1, 0), 0.8, ACCENT),
        ("LINEBELOW", (0, 0), (-1, 0), 0.5, ACCENT),
        ("LINEBELOW", (0, -1), (-1, -1), 0.8, ACCENT),
        ("VALIGN", (0, 0), (-1, -1), "TOP"),
        ("TOPPADDING", (0, 0), (-1, -1), 1.5),
        ("BOTTOMPADDING", (0, 0), (-1, -1), 1.5),
        ("LEFTPADDING", (0, 0), (-1, -1), 3),
        ("RIGHTPADDING", (0, 0), (-1, -1), 3),
    ]
    for i in range(2, len(data), 2):
        style.append(("BACKGROUND", (0, i), (-1, i), SHADE))
    t.setStyle(TableStyle(style))
    return t


def key_values(ctx: Ctx, pairs: list[tuple[str, str]], key_width: float = 42 * mm) -> Table:
    """Two-column table of (escaped) key and value."""
    data = [[Paragraph(k, ctx.st["head"]), Paragraph(v, ctx.st["cell"])] for k, v in pairs]
    t = Table(data, colWidths=[key_width, WIDTH - key_width], hAlign="LEFT")
    t.setStyle(
        TableStyle(
            [
                ("FONT", (0, 0), (-1, -1), FONT, 7.5),
                ("VALIGN", (0, 0), (-1, -1), "TOP"),
                ("LINEBELOW", (0, 0), (-1, -1), 0.25, RULE),
                ("TOPPADDING", (0, 0), (-1, -1), 1.5),
                ("BOTTOMPADDING", (0, 0), (-1, -1), 1.5),
                ("LEFTPADDING", (0, 0), (-1, -1), 2),
            ]
        )
    )
    return t


def status_box(ctx: Ctx) -> Table:
    """The boxed status line "Preliminary estimate - not for construction"."""
    status = Table(
        [[Paragraph(esc(cautions.STATUS), ctx.st["status"])]], colWidths=[WIDTH], hAlign="LEFT"
    )
    status.setStyle(
        TableStyle(
            [
                ("FONT", (0, 0), (-1, -1), FONT, 10),
                ("BOX", (0, 0), (-1, -1), 1.0, WARN),
                ("TOPPADDING", (0, 0), (-1, -1), 4),
                ("BOTTOMPADDING", (0, 0), (-1, -1), 4),
            ]
        )
    )
    return status


def heading(ctx: Ctx, number: int, text: str) -> list[Flowable]:
    return [CondPageBreak(40 * mm), ctx.p(f"{number}. {esc(text)}", "h1")]


def _ran(result: CaseResult) -> list[MethodRun]:
    return [r for r in result.runs if r.response is not None]


# 1 ---------------------------------------------------------------------------------------


def title_block(ctx: Ctx, created: _dt.datetime) -> list[Flowable]:
    case, du = ctx.case, ctx.du
    units = ", ".join(
        f"{k.replace('_', ' ')} {esc(du.label(k))}"
        for k in ("length", "small_length", "force", "mass", "acceleration", "moment")
    )
    status = status_box(ctx)
    rec = case.record
    kinds = "comparison of integrators" if ctx.comparison else "time-history analysis"
    out = [
        ctx.p(esc(case.title), "title"),
        ctx.p(f"Report of a {kinds} made with thist {esc(__version__)}.", "body"),
        Spacer(1, 4),
        status,
        Spacer(1, 6),
        key_values(
            ctx,
            [
                ("Case file", esc(Path(case.path).name)),
                ("Case SHA-256", esc(case.sha256)),
                ("Record file", esc(Path(rec.source).name)),
                ("Record SHA-256", esc(rec.sha256)),
                ("Date (UTC)", esc(created.strftime("%Y-%m-%d %H:%M"))),
                ("thist version", esc(__version__)),
                ("Display units", units + "; stored results are SI"),
            ],
        ),
    ]
    if case.notes.strip():
        out += [Spacer(1, 4), ctx.p("Notes from the case file", "h2")]
        out += [ctx.p(esc(line)) for line in case.notes.strip().splitlines() if line.strip()]
    return out


# 2 ---------------------------------------------------------------------------------------


def scope(ctx: Ctx) -> list[Flowable]:
    s, r = ctx.case.structure, ctx.result
    form = (
        f"a shear chain of {s.n} stories: masses lumped at the floors, joined by story springs"
        if s.form == "chain"
        else f"a general model of {s.n} degrees of freedom given by its mass and stiffness matrices"
    )
    items = [
        f"Model: {form}, on a fixed base.",
        "Excitation: one horizontal component of ground acceleration, applied at the base "
        "(relative formulation, influence vector r).",
        "Springs: linear elastic (initial stiffness throughout the run).",
        f"Damping: {esc(r.damping.description)}"
        + ("" if r.damping.classical else " (non-classical)")
        + ".",
        "Methods: " + ", ".join(esc(run.label) for run in r.runs) + ".",
    ]
    return heading(ctx, 2, "Scope and assumptions") + scope_items(ctx, items)


def scope_items(ctx: Ctx, items: list[str]) -> list[Flowable]:
    """The scope as bullet points, then what the analysis does not include."""
    out = [ctx.p("• " + i) for i in items]
    out.append(ctx.p("Not included in this analysis:", "h2"))
    out += [ctx.p("• " + esc(x)) for x in cautions.NOT_INCLUDED]
    return out


# 3 ---------------------------------------------------------------------------------------


def model(ctx: Ctx) -> list[Flowable]:
    s, du = ctx.case.structure, ctx.du
    out = heading(ctx, 3, "Model")
    elev = s.elevations
    header = [
        "level",
        f"story height [{ctx.u('length')}]",
        f"elevation [{ctx.u('length')}]",
        f"mass [{ctx.u('mass')}]",
        f"weight [{ctx.u('force')}]",
        f"story stiffness [{ctx.u('stiffness')}]",
    ]
    rows = []
    masses = s.level_masses
    for i, lab in enumerate(s.labels):
        rows.append(
            [
                esc(lab),
                "-" if s.story_heights is None else fmt(du.show(s.story_heights[i], "length")),
                "-" if elev is None else fmt(du.show(elev[i], "length")),
                fmt(du.show(masses[i], "mass")),
                fmt(du.show(masses[i] * STANDARD_GRAVITY, "force")),
                "-"
                if s.story_stiffness is None
                else fmt(du.show(s.story_stiffness[i], "stiffness")),
            ]
        )
    out.append(table(ctx, header, rows))
    out.append(Spacer(1, 3))
    out.append(
        ctx.p(
            f"Levels bottom to top; story i joins level i − 1 (the base for i = 1) to level i. "
            f"Total mass {fmt(du.show(s.total_mass, 'mass'))} {ctx.u('mass')}, seismic weight "
            f"{fmt(du.show(s.weight, 'force'))} {ctx.u('force')} (g = 9.80665 m/s²).",
            "small",
        )
    )
    if s.story_stiffness is None:
        out.append(
            ctx.p(
                "General (M, K) model: story stiffness is not defined; the matrices are in "
                "the case file echoed in the appendix.",
                "small",
            )
        )
    return out


# 4 ---------------------------------------------------------------------------------------


def modes_section(ctx: Ctx) -> list[Flowable]:
    r = ctx.result
    m, d = r.modes, r.damping
    n = len(m.omegas)
    shown = min(n, 12)
    header = [
        "mode",
        "period [s]",
        "frequency [Hz]",
        "participation factor Γ [-] (shape 1 at roof)",
        "effective mass [%]",
        "cumulative [%]",
        "damping ratio [%]",
    ]
    rows = [
        [
            str(j + 1),
            fmt(m.periods[j]),
            fmt(m.frequencies[j]),
            fmt(m.participation[j] * m.shapes[-1, j]),
            pct(m.effective_mass_ratio[j]),
            pct(m.cumulative_ratio[j]),
            pct(d.ratios[j]),
        ]
        for j in range(shown)
    ]
    out = heading(ctx, 4, "Modes")
    out.append(table(ctx, header, rows))
    if shown < n:
        out.append(ctx.p(f"The first 12 of {n} modes are shown.", "small"))
    need = m.modes_for_mass(ctx.case.checks.mass_ratio)
    out.append(
        ctx.p(
            f"{need} mode(s) reach {pct(ctx.case.checks.mass_ratio, 0)} % of the total mass "
            "(the accuracy checks of section 6 cover them).",
            "small",
        )
    )
    return out


# 5 ---------------------------------------------------------------------------------------


def record_section(ctx: Ctx) -> list[Flowable]:
    rec, rs, ex, du = ctx.case.record, ctx.result.record_summary, ctx.result.excitation, ctx.du
    A, V = ctx.u("acceleration"), ctx.u("velocity")
    pairs = [
        ("Source file", esc(Path(rec.source).name)),
        ("Unit in the file", esc(rec.unit)),
        ("Scale factor", fmt(rec.scale)),
        ("Record Δt [s]", fmt(rs.dt)),
        ("Points", str(rs.npts)),
        ("Duration [s]", fmt(rs.duration)),
        (f"PGA [{A}]", f"{fmt(du.show(rs.pga, 'acceleration'))} at {rs.pga_time:.3f} s"),
        (f"PGV [{V}]", f"{fmt(du.show(rs.pgv, 'velocity'))} at {rs.pgv_time:.3f} s"),
        (
            f"PGD [{ctx.u('length')}]",
            f"{fmt(du.show(rs.pgd, 'length'))} at {rs.pgd_time:.3f} s",
        ),
        ("Analysis Δt [s]", f"{fmt(ex.dt)} ({ex.ag.size} points)"),
    ]
    if rec.header:
        pairs.append(("File header", "<br/>".join(esc(h) for h in rec.header[:8])))
    motion = ctx.result.motion
    if motion is not None:
        n_steps = len(motion.processing)
        if n_steps:
            pairs.append(("Processing", f"{n_steps} step(s), listed in order below"))
        if motion.scaling is not None:
            pairs.append(
                ("Scaling", f"factor {fmt(motion.scaling.factor)} to the user's target, below")
            )
    for note in ex.notes:
        pairs.append(("Sampling", esc(note)))
    out = heading(ctx, 5, "Record")
    out.append(key_values(ctx, pairs))
    out.append(
        ctx.p(
            "Peaks of the analysed record (after the processing and scaling below, if any); "
            "PGV and PGD by trapezoidal integration from rest.",
            "small",
        )
    )
    out.append(figures.record_figure(ex.time, ex.ag, du))
    if motion is not None:
        out += motion_block(ctx)
    return out


def _step_params(params: dict) -> str:
    """``key = value`` pairs of a processing step (numbers with :func:`fmt`)."""
    items = []
    for k, v in params.items():
        if isinstance(v, bool | int | str) or v is None:
            text = "-" if v is None else str(v)
        else:
            text = fmt(v)
        items.append(f"{k} = {text}")
    return ", ".join(items)


def motion_block(ctx: Ctx) -> list[Flowable]:
    """Processing, intensity measures, spectrum and scaling of the analysed record."""
    motion, du = ctx.result.motion, ctx.du
    A, V = ctx.u("acceleration"), ctx.u("velocity")
    out: list[Flowable] = [ctx.p("Processing of the record", "h2")]
    if motion.processing:
        rows = [
            [str(i), esc(st.name), esc(_step_params(st.params)), esc(st.text)]
            for i, st in enumerate(motion.processing, start=1)
        ]
        out.append(table(ctx, ["#", "step", "parameters (SI: s, Hz)", "what was done"], rows,
                         [8 * mm, 18 * mm, 52 * mm, WIDTH - 78 * mm]))  # fmt: skip
    else:
        out.append(ctx.p("None: the record is analysed as read (unit and scale factor "
                         "applied).", "small"))  # fmt: skip
    im = motion.intensity
    out.append(ctx.p("Intensity measures of the analysed record", "h2"))
    header = [
        "Arias intensity I<sub>a</sub> [m/s]",
        "D5–95 [s]",
        "D5–75 [s]",
        f"CAV [{V}]",
        f"bracketed duration [s] (|a| ≥ {fmt(du.show(im.bracket_threshold, 'acceleration'))} {A})",
        "mean period T<sub>m</sub> [s]",
    ]
    row = [
        fmt(im.arias),
        fmt(im.d5_95),
        fmt(im.d5_75),
        fmt(du.show(im.cav, "velocity")),
        fmt(im.bracketed_duration),
        fmt(im.mean_period),
    ]
    out.append(table(ctx, header, [row], align_right_from=0))
    band = "–".join(fmt(f) for f in im.mean_period_band)
    out.append(
        ctx.p(
            "I<sub>a</sub> = π/(2g)∫a<sub>g</sub>²dt (Arias 1970); significant durations "
            "between 5, 75 and 95 % of I<sub>a</sub> (Trifunac &amp; Brady 1975); CAV = "
            "∫|a<sub>g</sub>|dt; bracketed duration between the first and last excursion "
            f"beyond the threshold; T<sub>m</sub> over {band} Hz (Rathje, Abrahamson &amp; "
            f"Bray 1998). 5, 75 and 95 % reached at {fmt(im.t5)}, {fmt(im.t75)} and "
            f"{fmt(im.t95)} s.",
            "small",
        )
    )
    out.append(figures.husid_figure(im))
    sp = motion.spectrum
    out.append(
        KeepTogether(
            [
                ctx.p(
                    f"Response spectrum of the analysed record ({pct(sp.damping, 0)} % damping)",
                    "h2",
                ),
                figures.response_spectrum_figure(sp, du),
                ctx.p(
                    "Linear elastic oscillator starting at rest; exact for the record taken as "
                    "linear between samples (Nigam &amp; Jennings 1969); PSA = ω²·SD, peaks at "
                    f"the samples; {sp.periods.size} periods from {fmt(sp.periods[0])} to "
                    f"{fmt(sp.periods[-1])} s.",
                    "small",
                ),
            ]
        )
    )
    if motion.scaling is not None:
        out += scaling_block(ctx)
    return out


def scaling_block(ctx: Ctx) -> list[Flowable]:
    """The scaling to the user's target: target beside its basis, range, factor, warning."""
    sc, du = ctx.result.motion.scaling, ctx.du
    tgt, A = sc.target, ctx.u("acceleration")
    if tgt.kind == "table":
        what = (
            f"table of {tgt.periods.size} (period, PSA) points from {fmt(tgt.periods[0])} to "
            f"{fmt(tgt.periods[-1])} s, interpolated in log–log"
        )
    else:
        what = (
            f"two-parameter shape: S<sub>S</sub> = {fmt(du.show(tgt.s_short, 'acceleration'))} "
            f"{A}, S<sub>1</sub> = {fmt(du.show(tgt.s_one, 'acceleration'))} {A}, "
            f"T<sub>L</sub> = {fmt(tgt.t_long)} s"
        )
    lo, hi = sc.period_range
    n_match = sc.matching_periods.size
    matching = (
        f"PSA matched at T = {fmt(lo)} s"
        if hi == lo
        else f"least squares in ln PSA over {fmt(lo)} to {fmt(hi)} s ({n_match} periods)"
    )
    b_lo, b_hi = sc.bounds
    bounds = f"{fmt(b_lo)} to {fmt(b_hi) if math.isfinite(b_hi) else 'no upper bound'}"
    pairs = [
        ("Target spectrum", what),
        ("Basis stated by the user", esc(tgt.basis)),
        ("Matching", matching),
        ("Period range [s]", f"{fmt(lo)} – {fmt(hi)}"),
        ("Damping of the spectra", f"{pct(sc.before.damping, 0)} %"),
        ("Scale factor [-]", fmt(sc.factor)),
        ("Best factor without bounds [-]", fmt(sc.unbounded_factor)),
        ("Bounds on the factor [-]", bounds),
        ("Misfit [-]", f"{fmt(sc.misfit, 3)} (RMS of ln(PSA scaled / PSA target))"),
    ]
    out: list[Flowable] = [
        ctx.p("Scaling to the user's target spectrum", "h2"),
        key_values(ctx, pairs),
    ]
    if sc.warning:
        out.append(ctx.p(f"Warning: {esc(sc.warning)}.", "warn"))
    out.append(figures.scaling_figure(sc, du))
    out.append(
        ctx.p(
            "The target and its basis are the user's; thist holds no code values. Amplitude "
            "scaling multiplies the whole record by one factor, so every linear spectral "
            "ordinate scales by it.",
            "small",
        )
    )
    return out


# 6 ---------------------------------------------------------------------------------------


def checks_section(ctx: Ctx) -> list[Flowable]:
    out = heading(ctx, 6, "Analysis settings and checks")
    cs = ctx.case.checks
    out.append(
        ctx.p(
            f"Stability: each method's limit for the highest mode. Accuracy (common practice): "
            f"at least {fmt(cs.steps_per_period)} steps per period for every mode needed to "
            f"reach {pct(cs.mass_ratio, 0)} % of the mass, and a step no coarser than the "
            "record's. Period error and algorithmic damping from each method's amplification "
            "matrix at Ω = ωΔt with the mode's damping ratio.",
            "small",
        )
    )
    for run in ctx.result.runs:
        c, m = run.checks, run.method
        params = ", ".join(f"{k} = {fmt(v)}" for k, v in m.parameters().items()) or "none"
        limit = "unconditionally stable (linear)" if not math.isfinite(c.dt_critical) else (
            f"{fmt(c.dt_critical)} s, set by mode {c.critical_mode}; Δt/Δt_cr = {fmt(c.margin, 3)}"
        )  # fmt: skip
        block = [
            ctx.p(esc(run.label), "h2"),
            key_values(
                ctx,
                [
                    ("Parameters", esc(params)),
                    ("Source", esc(m.source)),
                    ("Δt [s]", fmt(c.dt)),
                    ("Stability limit", esc(limit)),
                    ("Status", "refused: not run" if run.response is None else "ran"),
                ],
            ),
        ]
        out.append(KeepTogether(block))
        rows = []
        for chk in c.checks:
            verdict = chk.verdict
            text = esc(chk.message)
            if verdict == "refused":
                text = f"<font color='#8a1c1c'><b>Refused.</b> {text}</font>"
            elif verdict == "advice":
                text = f"<b>Advice.</b> {text}"
            rows.append([esc(chk.name), esc(verdict), text])
        out.append(Spacer(1, 2))
        out.append(
            table(ctx, ["check", "verdict", "finding"], rows, [32 * mm, 16 * mm, WIDTH - 48 * mm])
        )
        acc = [
            [
                str(a.mode),
                fmt(a.period),
                fmt(a.steps_per_period, 3),
                pct(a.period_error, 3),
                pct(a.algorithmic_damping, 4),
                fmt(a.spectral_radius, 6),
            ]
            for a in c.accuracy
        ]
        out.append(Spacer(1, 2))
        out.append(
            table(
                ctx,
                [
                    "mode",
                    "period [s]",
                    "T/Δt [-]",
                    "period error [%]",
                    "algorithmic damping [%]",
                    "spectral radius [-]",
                ],
                acc,
            )
        )
    return out


# 7 ---------------------------------------------------------------------------------------


def drift_check_text(ratio: float, limit: float | None) -> str:
    """The drift-ratio check column: "no limit given" unless the user gave a limit."""
    if limit is None:
        return "no limit given"
    return "within the limit" if abs(ratio) <= limit else "EXCEEDS the limit"


def results_section(ctx: Ctx) -> list[Flowable]:
    du, s = ctx.du, ctx.case.structure
    cs = ctx.case.checks
    out = heading(ctx, 7, "Results")
    out.append(
        ctx.p(
            "Signed peaks (largest magnitude) with the time at which they occur. "
            "Displacements are relative to the base; accelerations are absolute.",
            "small",
        )
    )
    if cs.drift_ratio_limit is None:
        out.append(
            ctx.p(
                "No drift-ratio limit is given in the case file, so drift ratios are not "
                "checked against any limit.",
                "small",
            )
        )
    else:
        out.append(
            ctx.p(
                f"Drift-ratio limit {fmt(cs.drift_ratio_limit)} as stated in the case file; "
                f"basis given: {esc(cs.drift_ratio_limit_basis)}",
                "small",
            )
        )
    ran = _ran(ctx.result)
    for run in ran:
        pk = run.response.peaks()
        lv = [
            [
                esc(lab),
                fmt(du.show(pk["displacement"].values[i], "length")),
                f"{pk['displacement'].times[i]:.3f}",
                fmt(du.show(pk["absolute_acceleration"].values[i], "acceleration")),
                f"{pk['absolute_acceleration'].times[i]:.3f}",
            ]
            for i, lab in enumerate(s.labels)
        ]
        block = [ctx.p(f"{esc(run.label)}: peaks at each level", "h2")]
        block.append(
            table(
                ctx,
                [
                    "level",
                    f"displacement [{ctx.u('length')}]",
                    "time [s]",
                    f"abs. acceleration [{ctx.u('acceleration')}]",
                    "time [s]",
                ],
                lv,
            )
        )
        out.append(KeepTogether(block))
        st_rows = []
        dr = pk.get("drift_ratio")
        for i, lab in enumerate(s.labels):
            below = "base" if i == 0 else s.labels[i - 1]
            st_rows.append(
                [
                    f"{i + 1} ({esc(below)} – {esc(lab)})",
                    fmt(du.show(pk["drift"].values[i], "small_length")),
                    f"{pk['drift'].times[i]:.3f}",
                    "-" if dr is None else fmt(dr.values[i]),
                    "-" if dr is None else f"{dr.times[i]:.3f}",
                    "-" if dr is None else drift_check_text(dr.values[i], cs.drift_ratio_limit),
                    fmt(du.show(pk["story_shear"].values[i], "force")),
                    f"{pk['story_shear'].times[i]:.3f}",
                ]
            )
        out.append(Spacer(1, 3))
        out.append(ctx.p(f"{esc(run.label)}: peaks in each story", "h2"))
        out.append(
            table(
                ctx,
                [
                    "story",
                    f"drift [{ctx.u('small_length')}]",
                    "time [s]",
                    "drift ratio [-]",
                    "time [s]",
                    "drift-ratio check",
                    f"story shear [{ctx.u('force')}]",
                    "time [s]",
                ],
                st_rows,
                [30 * mm, 20 * mm, 15 * mm, 20 * mm, 15 * mm, 26 * mm, 28 * mm, 16 * mm],
            )
        )
        vb, cb = pk["base_shear"], pk["base_shear_coefficient"]
        vb_text = fmt(du.show(vb.values, "force"))
        tot = [
            [f"base shear [{ctx.u('force')}]", vb_text, f"{float(vb.times):.3f}"],
            ["base shear coefficient V/W [-]", fmt(cb.values), f"{float(cb.times):.3f}"],
        ]
        if "overturning_moment" in pk:
            mo = pk["overturning_moment"]
            tot.append(
                [
                    f"base overturning moment [{ctx.u('moment')}]",
                    fmt(du.show(mo.values, "moment")),
                    f"{float(mo.times):.3f}",
                ]
            )
        out.append(Spacer(1, 3))
        out.append(ctx.p(f"{esc(run.label)}: totals", "h2"))
        out.append(table(ctx, ["quantity", "peak", "time [s]"], tot, [70 * mm, 40 * mm, 30 * mm]))
    if ran:
        out.append(Spacer(1, 4))
        out.append(ctx.p("Energy balance at the end of each run (relative formulation)", "h2"))
        rows = []
        for run in ran:
            f = run.energy.final()
            rows.append(
                [esc(run.label)]
                + [fmt(f[k] / 1e3) for k in ("input", "kinetic", "damping", "strain", "hysteretic")]
                + [f"{f['balance_error']:.2e}"]
            )
        out.append(
            table(
                ctx,
                [
                    "method",
                    "input [kJ]",
                    "kinetic [kJ]",
                    "damping [kJ]",
                    "strain [kJ]",
                    "hysteretic [kJ]",
                    "balance error [-] (of peak input)",
                ],
                rows,
                [34 * mm, 20 * mm, 20 * mm, 20 * mm, 20 * mm, 22 * mm, 34 * mm],
            )
        )
        out.append(
            ctx.p(
                "Balance error: the largest |input − kinetic − damping − strain − hysteretic| "
                "over the run divided by the peak input energy. Work integrals by the "
                "trapezoidal rule in the form Δuᵀ(f[n] + f[n+1])/2 (exact integral over each "
                "step for the exact method).",
                "small",
            )
        )
    refused = [r for r in ctx.result.runs if r.response is None]
    for run in refused:
        out.append(ctx.p(f"{esc(run.label)} was refused by its checks and has no results "
                         "(see section 6).", "warn"))  # fmt: skip
    return out


# 8 ---------------------------------------------------------------------------------------


def figures_section(ctx: Ctx) -> list[Flowable]:
    ran = _ran(ctx.result)
    out = heading(ctx, 8, "Figures")
    if not ran:
        return out + [ctx.p("No method ran: no figures.", "warn")]
    out.append(figures.roof_and_base_shear_figure(ctx.result))
    out.append(ctx.p("Peak envelopes over height (absolute values).", "small"))
    out.append(figures.envelopes_figure(ctx.result))
    for run in ran[:2]:
        out.append(figures.energy_figure(run))
    if len(ran) > 2:
        out.append(ctx.p("Energy histories of the first two methods are shown; the energy "
                         "table of section 7 covers every method.", "small"))  # fmt: skip
    return out


# 9 ---------------------------------------------------------------------------------------


def comparison_section(ctx: Ctx) -> list[Flowable]:
    comp = ctx.comparison
    du = ctx.du
    out = heading(ctx, 9, "Comparison of methods and time steps")
    ref = comp.reference
    intro = (
        f"Every method ran on the same model and record. Relative differences are "
        f"(|peak| − |peak of {ref}|)/|peak of {ref}| at the same Δt."
        if ref
        else "The model is not linear: there is no exact reference, and no relative "
        "differences are shown."
    )
    if comp.reference_added:
        intro += f" The {ref} method was added as the reference."
    out.append(ctx.p(esc(intro), "small"))
    L, F, A = ctx.u("length"), ctx.u("force"), ctx.u("acceleration")
    header = [
        "method",
        "Δt [s]",
        f"roof disp. [{L}]",
        "drift ratio [-] (story)",
        f"base shear [{F}]",
        f"roof abs. acc. [{A}]",
        "energy error [-]",
        "run time [s]",
    ]
    rows = []
    for r in comp.rows:
        name = esc(r.label) + (" (reference)" if r.is_reference else "")
        if r.status == "refused":
            rows.append([name, f"{r.dt:g}", "refused", esc(r.reason), "", "", "", ""])
            continue
        rows.append(
            [
                name,
                f"{r.dt:g}",
                fmt(du.show(r.peaks["roof_displacement"], "length")),
                f"{fmt(r.peaks['drift_ratio'])} ({r.drift_story or '-'})",
                fmt(du.show(r.peaks["base_shear"], "force")),
                fmt(du.show(r.peaks["roof_acceleration"], "acceleration")),
                f"{r.balance_error:.2e}",
                f"{r.elapsed:.3f}",
            ]
        )
    t = table(
        ctx, header, rows, [34 * mm, 14 * mm, 20 * mm, 25 * mm, 22 * mm, 21 * mm, 18 * mm, 16 * mm]
    )
    # A refused row: the reason spans the peak columns.
    spans = [
        ("SPAN", (3, i + 1), (7, i + 1)) for i, r in enumerate(comp.rows) if r.status == "refused"
    ]
    if spans:
        t.setStyle(TableStyle(spans + [("TEXTCOLOR", (0, 0), (-1, -1), INK)]))
    out.append(t)
    if ref:
        out.append(Spacer(1, 4))
        out.append(ctx.p(f"Relative difference of each peak from {esc(ref)} [%]", "h2"))
        rel_rows = [
            [esc(r.label), f"{r.dt:g}"] + [pct(r.rel_diff.get(k), 3) for k in COMPARED]
            for r in comp.rows
            if r.status == "ran" and not r.is_reference
        ]
        out.append(
            table(
                ctx,
                [
                    "method",
                    "Δt [s]",
                    "roof disp. [%]",
                    "drift ratio [%]",
                    "base shear [%]",
                    "roof abs. acc. [%]",
                ],
                rel_rows,
            )  # fmt: skip
        )
    out.append(Spacer(1, 4))
    out.append(
        ctx.p(
            f"Numerical period error and algorithmic damping at the chosen Δt, for mode 1 and "
            f"the highest mode needed for {pct(comp.mass_ratio, 0)} % of the mass "
            "(amplification matrix, without physical damping)",
            "h2",
        )
    )
    sp_rows = [
        [esc(r.label), f"{r.dt:g}", str(s.mode), fmt(s.period), fmt(s.omega_dt),
         pct(s.period_error, 4), pct(s.algorithmic_damping, 5)]
        for r in comp.rows
        for s in r.spectral
    ]  # fmt: skip
    out.append(
        table(
            ctx,
            [
                "method",
                "Δt [s]",
                "mode",
                "period [s]",
                "Ω = ωΔt [-]",
                "period error [%]",
                "algorithmic damping [%]",
            ],
            sp_rows,
        )  # fmt: skip
    )
    for res in comp.results:
        out.append(CondPageBreak(80 * mm))
        out.append(ctx.p(f"Figures at Δt = {fmt(res.excitation.dt)} s", "h2"))
        if not _ran(res):
            out.append(ctx.p("No method ran at this step.", "warn"))
            continue
        out += figures.comparison_figures(res)
    return out


# 10 --------------------------------------------------------------------------------------


def cautions_section(ctx: Ctx) -> list[Flowable]:
    out = heading(ctx, 10, "Cautions")
    texts = list(cautions.FULL)
    if any(r.story is not None for r in ctx.result.runs):
        texts.insert(2, cautions.INELASTIC)
    out += [ctx.p(f"{i}. {esc(text)}") for i, text in enumerate(texts, start=1)]
    return out


# 11 --------------------------------------------------------------------------------------


def verification_table(ctx: Ctx, outcomes: tuple[Outcome, ...]) -> Table:
    """Problem, source, measured error, tolerance and verdict of each benchmark."""
    rows = []
    for o in outcomes:
        verdict = "pass" if o.passed else "<font color='#8a1c1c'><b>FAIL</b></font>"
        err = "-" if not math.isfinite(o.error) else f"{o.error:.2e}"
        if o.message:
            err += f" ({esc(o.message)})"
        rows.append(
            [
                esc(o.problem.title),
                esc(o.problem.source),
                err,
                f"{o.problem.tolerance:.0e}",
                verdict,
            ]
        )
    return table(
        ctx,
        ["problem", "source", "measured error [-]", "tolerance [-]", "result"],
        rows,
        [52 * mm, 58 * mm, 26 * mm, 18 * mm, 16 * mm],
    )


def appendix(ctx: Ctx, outcomes: tuple[Outcome, ...]) -> list[Flowable]:
    out = [PageBreak(), ctx.p("11. Appendix", "h1")]
    out.append(ctx.p(f"A. Case file {esc(Path(ctx.case.path).name)}, verbatim", "h2"))
    out.append(Preformatted(ctx.case.text, ctx.st["mono"], maxLineLength=110, newLineChars=""))
    out.append(ctx.p("B. Software", "h2"))
    out.append(
        key_values(
            ctx,
            [
                ("python", esc(platform.python_version())),
                ("numpy", esc(np.__version__)),
                ("scipy", esc(scipy.__version__)),
                ("matplotlib", esc(matplotlib.__version__)),
                ("reportlab", esc(reportlab.Version)),
                ("pint", esc(pint.__version__)),
                ("thist", esc(__version__)),
            ],
        )
    )
    out.append(CondPageBreak(60 * mm))
    out.append(ctx.p("C. Verification summary", "h2"))
    out += verification_block(ctx, outcomes)
    return out


def verification_block(ctx: Ctx | None, outcomes: tuple[Outcome, ...]) -> list[Flowable]:
    """The verification summary: one line of verdict, then the table."""
    failed = sum(not o.passed for o in outcomes)
    line = (
        f"All {len(outcomes)} benchmark problems pass in this build."
        if not failed
        else f"{failed} of {len(outcomes)} benchmark problems FAIL in this build."
    )
    style = "body" if not failed else "warn"
    return [ctx.p(esc(line), style), Spacer(1, 2), verification_table(ctx, outcomes)]
