"""The report's inelastic part: story demands, hysteresis loops, ductility over height.

Shown after the results section when a run had yielding story springs. It formats
the story demands and histories that the inelastic integrator produced; it
computes nothing but display units.
"""

from __future__ import annotations

import numpy as np
from reportlab.platypus import Flowable

from thist import cautions
from thist.analysis import MethodRun
from thist.report.figures import _figure, _image, _labels
from thist.report.sections import WIDTH, Ctx, table
from thist.report.styles import esc, fmt
from thist.units import DisplayUnits

#: At most this many stories get a hysteresis-loop panel (the largest ductility first).
MAX_LOOPS = 4

_DAMPING_TEXT = {
    "initial": (
        "Rayleigh damping with its stiffness part on the initial stiffness. With yielding "
        "springs this can produce spurious damping forces much larger than the yield force "
        'would allow (Charney 2008, "Unintended consequences of modeling damping in '
        'structures", J. Struct. Eng. 134(4)); compare with the tangent option.'
    ),
    "tangent": (
        "Rayleigh damping with its stiffness part on the tangent stiffness of the start of "
        "each step, so damping forces follow the yielding springs (the remedy discussed by "
        "Charney 2008, J. Struct. Eng. 134(4))."
    ),
}


def inelastic_runs(runs: tuple[MethodRun, ...]) -> list[MethodRun]:
    """The runs that carry inelastic story demands."""
    return [r for r in runs if r.story is not None and r.response is not None]


def hysteresis_figure(run: MethodRun, du: DisplayUnits):
    """Story shear against drift for the stories with the largest ductility demand."""
    st, resp = run.story, run.response
    yielding = [i for i, law in enumerate(st.law) if law != "elastic"]
    order = sorted(yielding, key=lambda i: -np.nan_to_num(st.ductility[i]))[:MAX_LOOPS]
    order.sort()
    ncols = max(1, min(2, len(order)))
    nrows = max(1, (len(order) + ncols - 1) // ncols)
    fig, axes = _figure(2.3 * nrows, ncols=ncols, nrows=nrows)
    for ax, i in zip(axes.flat, order, strict=False):
        ax.plot(
            du.show(resp.drift[:, i], "small_length"),
            du.show(resp.story_shear[:, i], "force"),
            lw=0.6,
        )
        _labels(
            ax,
            f"drift [{du.label('small_length')}]",
            f"story shear [{du.label('force')}]",
            f"story {i + 1} ({st.law[i]}), μ = {fmt(st.ductility[i], 3)}",
        )
    for ax in list(axes.flat)[len(order) :]:
        ax.set_visible(False)
    fig.tight_layout()
    return _image(fig)


def demand_figure(run: MethodRun, du: DisplayUnits):
    """Ductility demand and residual drift over height."""
    st = run.story
    n = len(st.law)
    stories = np.arange(1, n + 1)
    fig, axes = _figure(2.4, ncols=2)
    mu = np.where(np.isnan(st.ductility), 0.0, st.ductility)
    axes[0, 0].barh(stories, mu, height=0.6, color="#2f4b6e")
    axes[0, 0].axvline(1.0, color="#b5562b", lw=0.8, ls="--")
    _labels(
        axes[0, 0],
        "ductility demand μ = peak drift / yield drift",
        "story",
        "ductility over height (elastic stories: 0)",
    )
    axes[0, 1].barh(
        stories, du.show(st.residual_drift, "small_length"), height=0.6, color="#4f8a4a"
    )
    _labels(
        axes[0, 1],
        f"residual drift [{du.label('small_length')}]",
        "story",
        "residual drift at the end of the run",
    )
    for ax in axes.flat:
        ax.set_yticks(stories)
    fig.tight_layout()
    return _image(fig)


def inelastic_section(ctx: Ctx) -> list[Flowable]:
    """Story demands of every inelastic run, the loops and the demands over height."""
    runs = inelastic_runs(ctx.result.runs)
    if not runs:
        return []
    du, springs = ctx.du, ctx.case.structure.springs
    settings = ctx.case.analysis.inelastic
    out: list[Flowable] = [ctx.p("Inelastic story demands", "h2")]
    out.append(ctx.p(esc(cautions.INELASTIC), "warn"))
    out.append(ctx.p(esc(_DAMPING_TEXT[settings.damping]), "small"))
    opt = settings.options
    out.append(
        ctx.p(
            esc(
                f"Implicit methods: {opt.iteration} iteration, force tolerance "
                f"{fmt(opt.force_tolerance)}, energy tolerance "
                f"{fmt(opt.energy_tolerance)}, at most "
                f"{opt.max_iterations} iterations and {opt.max_halvings} halvings of a step; "
                "an unconverged step stops the run."
            ),
            "small",
        )
    )
    SL, F = ctx.u("small_length"), ctx.u("force")
    head = ["story", "law", f"k [{ctx.u('stiffness')}]", f"F_y [{F}]", "α_h", f"δ_y [{SL}]"]
    rows = []
    for i, law in enumerate(springs.law):
        elastic = law == "elastic"
        rows.append(
            [
                str(i + 1),
                esc(law),
                fmt(du.show(springs.stiffness[i], "stiffness")),
                "-" if elastic else fmt(du.show(springs.yield_force[i], "force")),
                "-" if elastic else fmt(springs.post_yield_ratio[i], 3),
                "-"
                if elastic
                else fmt(du.show(springs.yield_force[i] / springs.stiffness[i], "small_length")),
            ]
        )
    out.append(table(ctx, head, rows))
    for run in runs:
        st, conv = run.story, run.convergence
        out.append(ctx.p(esc(f"{run.label}"), "h2"))
        head = [
            "story",
            f"peak drift [{SL}]",
            "time [s]",
            "ductility μ",
            f"residual drift [{SL}]",
            "yield excursions",
            f"plastic deformation [{SL}]",
            "hysteretic energy [kJ]",
        ]
        rows = [
            [
                str(i + 1),
                fmt(du.show(st.peak_drift_signed[i], "small_length")),
                fmt(st.peak_drift_time[i]),
                fmt(st.ductility[i], 3),
                fmt(du.show(st.residual_drift[i], "small_length")),
                str(int(st.yield_excursions[i])),
                "-"
                if st.law[i] == "elastic"
                else fmt(du.show(st.plastic_deformation[i], "small_length")),
                "-" if st.law[i] == "elastic" else fmt(st.hysteretic_energy[i] / 1e3),
            ]
            for i in range(len(st.law))
        ]
        widths = [12 * 2.835] + [(WIDTH - 12 * 2.835) / 7] * 7
        out.append(table(ctx, head, rows, widths))
        if conv is not None and run.method.explicit:
            out.append(
                ctx.p(
                    "Explicit method: restoring forces evaluated at each step, no iteration.",
                    "small",
                )
            )
        elif conv is not None:
            out.append(
                ctx.p(
                    esc(
                        f"Solver: {conv.iterations} Newton corrections over {conv.steps} "
                        f"steps (at most {conv.max_iterations_in_step} in one step); "
                        f"{conv.subdivided_steps} steps "
                        f"subdivided, deepest halving {conv.deepest_halving}."
                    ),
                    "small",
                )
            )
        if any(law != "elastic" for law in st.law):
            out.append(hysteresis_figure(run, du))
        out.append(demand_figure(run, du))
    return out
