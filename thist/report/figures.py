"""Figures of the report: matplotlib (Agg) PNGs at print resolution, as reportlab images.

Each function takes data that ``response``, ``energy`` or ``compare`` produced and
the display units; none computes physics.
"""

from __future__ import annotations

import io

import matplotlib

matplotlib.use("Agg")

import matplotlib.pyplot as plt  # noqa: E402
import matplotlib.ticker  # noqa: E402
import numpy as np  # noqa: E402
from reportlab.lib.units import mm  # noqa: E402
from reportlab.platypus import Image  # noqa: E402

from thist.analysis import CaseResult, MethodRun  # noqa: E402
from thist.compare import reference_run, roof_difference  # noqa: E402
from thist.fileio import write_with  # noqa: E402
from thist.intensity import IntensityMeasures  # noqa: E402
from thist.scaling import ScalingResult  # noqa: E402
from thist.spectrum import Spectrum  # noqa: E402
from thist.units import DisplayUnits  # noqa: E402

#: Print resolution of embedded figures, dots per inch.
DPI = 300

#: Width of a full-width figure on the page, in points.
FULL_WIDTH = 170 * mm

_STYLE = {
    "font.family": "DejaVu Sans",
    "font.size": 7.5,
    "axes.titlesize": 8,
    "axes.labelsize": 7.5,
    "axes.linewidth": 0.6,
    "lines.linewidth": 0.8,
    "xtick.labelsize": 7,
    "ytick.labelsize": 7,
    "legend.fontsize": 6.5,
    "legend.frameon": False,
    "axes.grid": True,
    "grid.linewidth": 0.3,
    "grid.color": "#c8ced6",
    "axes.prop_cycle": matplotlib.cycler(
        color=["#2f4b6e", "#b5562b", "#4f8a4a", "#7a4e8c", "#a08a2a", "#3d8a94", "#555555"]
    ),
}


def _image(fig, width: float = FULL_WIDTH) -> Image:
    buf = io.BytesIO()
    fig.savefig(
        buf,
        format="png",
        dpi=DPI,
        bbox_inches="tight",
        facecolor="white",
        pil_kwargs={"compress_level": 1},
    )
    w_in, h_in = fig.get_size_inches()
    plt.close(fig)
    buf.seek(0)
    return Image(buf, width=width, height=width * h_in / w_in)


def _figure(height_in: float, ncols: int = 1, nrows: int = 1):
    with plt.rc_context(_STYLE):
        fig, axes = plt.subplots(nrows, ncols, figsize=(6.7, height_in), squeeze=False)
    for ax in axes.flat:
        _style_axes(ax)
    return fig, axes


def _style_axes(ax) -> None:
    with plt.rc_context(_STYLE):
        ax.tick_params(labelsize=_STYLE["xtick.labelsize"])
        ax.grid(True, linewidth=0.3, color="#c8ced6")
        for side in ("top", "right"):
            ax.spines[side].set_visible(False)


def _labels(ax, x: str, y: str, title: str = "") -> None:
    ax.set_xlabel(x, fontsize=_STYLE["axes.labelsize"])
    ax.set_ylabel(y, fontsize=_STYLE["axes.labelsize"])
    if title:
        ax.set_title(title, fontsize=_STYLE["axes.titlesize"], loc="left")


def record_figure(t: np.ndarray, ag: np.ndarray, du: DisplayUnits) -> Image:
    """Ground acceleration history in the display unit."""
    fig, axes = _figure(1.9)
    ax = axes[0, 0]
    ax.plot(t, du.show(ag, "acceleration"), color="#2f4b6e", linewidth=0.5)
    _labels(ax, "time [s]", f"ground acceleration [{du.label('acceleration')}]")
    return _image(fig)


def _ran(runs) -> list[MethodRun]:
    return [r for r in runs if r.response is not None]


def roof_and_base_shear_figure(result: CaseResult) -> Image:
    """Roof displacement and base shear histories of every method that ran."""
    du = result.case.display
    fig, axes = _figure(3.6, nrows=2)
    for run in _ran(result.runs):
        resp = run.response
        axes[0, 0].plot(resp.t, du.show(resp.displacement[:, -1], "length"), label=run.label)
        axes[1, 0].plot(resp.t, du.show(resp.base_shear, "force"), label=run.label)
    roof = result.case.structure.labels[-1]
    _labels(axes[0, 0], "time [s]", f"displacement [{du.label('length')}]", f"Roof ({roof})")
    _labels(axes[1, 0], "time [s]", f"base shear [{du.label('force')}]", "Base shear")
    _legend_outside(axes[0, 0])
    fig.tight_layout()
    return _image(fig)


def _legend_outside(ax) -> None:
    ax.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0), borderaxespad=0.0)


def envelopes_figure(result: CaseResult) -> Image:
    """Peak envelopes over height: displacement, drift ratio, story shear, floor acceleration."""
    case, du = result.case, result.case.display
    s = case.structure
    elev = s.elevations
    y = elev if elev is not None else np.arange(1, s.n + 1, dtype=float)
    ylab = f"elevation [{du.label('length')}]" if elev is not None else "level"
    y_show = du.show(y, "length") if elev is not None else y
    fig, axes = _figure(2.6, ncols=4)
    limit = case.checks.drift_ratio_limit
    for run in _ran(result.runs):
        pk = run.response.peaks()
        axes[0, 0].plot(du.show(np.abs(pk["displacement"].values), "length"), y_show, "o-", ms=2.5)
        if "drift_ratio" in pk:
            axes[0, 1].step(np.abs(pk["drift_ratio"].values), y_show, where="pre")
        axes[0, 2].step(du.show(np.abs(pk["story_shear"].values), "force"), y_show, where="pre")
        axes[0, 3].plot(
            du.show(np.abs(pk["absolute_acceleration"].values), "acceleration"),
            y_show,
            "o-",
            ms=2.5,
            label=run.label,
        )
    if limit is not None:
        axes[0, 1].axvline(limit, color="#8a1c1c", linewidth=0.7, linestyle="--")
    _labels(axes[0, 0], f"displacement [{du.label('length')}]", ylab)
    _labels(axes[0, 1], "drift ratio [-]", "")
    _labels(axes[0, 2], f"story shear [{du.label('force')}]", "")
    _labels(axes[0, 3], f"abs. acceleration [{du.label('acceleration')}]", "")
    for ax in axes[0]:
        ax.set_xlim(left=0)
        ax.set_ylim(bottom=0)
    _legend_outside(axes[0, 3])
    fig.tight_layout()
    return _image(fig)


def energy_figure(run: MethodRun) -> Image:
    """Energy histories of one run, stacked, with the input energy and the residual."""
    e = run.energy
    fig, axes = _figure(2.4)
    ax = axes[0, 0]
    kj = 1e-3
    ax.stackplot(
        e.t,
        e.damping * kj,
        e.hysteretic * kj,
        e.strain * kj,
        e.kinetic * kj,
        labels=["damping", "hysteretic", "strain", "kinetic"],
        colors=["#9fb3c8", "#d9b38c", "#a9c9a4", "#c9b3d9"],
        linewidth=0,
    )
    ax.plot(e.t, e.input * kj, color="#222222", linewidth=0.8, label="input")
    ax.plot(e.t, e.residual * kj, color="#8a1c1c", linewidth=0.6, label="balance error")
    _labels(ax, "time [s]", "energy [kJ]", f"Energy balance, {run.label}")
    _legend_outside(ax)
    fig.tight_layout()
    return _image(fig)


def comparison_figures(result: CaseResult) -> list[Image]:
    """Roof displacement overlaid with a zoom, difference from exact, peak envelopes."""
    du = result.case.display
    ran = _ran(result.runs)
    out = []
    fig, axes = _figure(3.8, nrows=2)
    ref = reference_run(result) or ran[0]
    t_peak = float(ref.response.peaks()["displacement"].times[-1])
    t1 = float(result.modes.periods[0])
    lo, hi = t_peak - 2.0 * t1, t_peak + 2.0 * t1
    for run in ran:
        r = run.response
        u = du.show(r.displacement[:, -1], "length")
        axes[0, 0].plot(r.t, u, label=run.label)
        win = (r.t >= lo) & (r.t <= hi)
        axes[1, 0].plot(r.t[win], u[win], label=run.label)
    axes[0, 0].axvspan(lo, hi, color="#eef1f4", zorder=0)
    L = du.label("length")
    _labels(axes[0, 0], "time [s]", f"roof displacement [{L}]", "Roof displacement, all methods")
    _labels(
        axes[1, 0],
        "time [s]",
        f"roof displacement [{L}]",
        f"Zoom: ±2 T1 around the peak of {ref.label} at {t_peak:.3f} s",
    )
    _legend_outside(axes[1, 0])
    fig.tight_layout()
    out.append(_image(fig))
    diffs = roof_difference(result)
    if diffs:
        fig, axes = _figure(2.2)
        t = ref.response.t
        for label, d in diffs.items():
            axes[0, 0].plot(t, du.show(d, "length"), label=label)
        _labels(
            axes[0, 0],
            "time [s]",
            f"difference [{L}]",
            f"Roof displacement minus that of {ref.label}",
        )
        _legend_outside(axes[0, 0])
        fig.tight_layout()
        out.append(_image(fig))
    out.append(envelopes_figure(result))
    return out


def _psa_axes(ax, du: DisplayUnits, title: str = "") -> None:
    """Log period axis, PSA in the display unit."""
    ax.set_xscale("log")
    ax.set_ylim(bottom=0)
    ax.grid(True, which="both", linewidth=0.3, color="#c8ced6")
    ax.xaxis.set_major_formatter(matplotlib.ticker.FormatStrFormatter("%g"))
    _labels(ax, "period T [s]", f"PSA [{du.label('acceleration')}]", title)


def _psa_legend(ax) -> None:
    ax.legend(
        loc="upper left",
        bbox_to_anchor=(1.01, 1.0),
        borderaxespad=0.0,
        fontsize=_STYLE["legend.fontsize"],
        frameon=False,
    )


def spectrum_plot(spec: Spectrum, du: DisplayUnits, title: str = ""):
    """Matplotlib figure of PSA against period, one curve per damping ratio.

    Parameters
    ----------
    spec : Spectrum
        From :func:`thist.spectrum.response_spectrum` (one or several damping ratios).
    du : DisplayUnits
        PSA is shown in ``du``'s acceleration unit.
    title : str, optional
        Axes title.
    """
    fig, axes = _figure(2.6)
    ax = axes[0, 0]
    damping = np.atleast_1d(spec.damping)
    psa = np.atleast_2d(spec.psa)
    for z, row in zip(damping, psa, strict=True):
        ax.plot(spec.periods, du.show(row, "acceleration"), label=f"{100 * z:g} % damping")
    _psa_axes(ax, du, title)
    _psa_legend(ax)
    fig.tight_layout()
    return fig


def save_spectrum_png(path, spec: Spectrum, du: DisplayUnits, title: str = ""):
    """Write :func:`spectrum_plot` as a PNG at print resolution, atomically; return the path."""
    fig = spectrum_plot(spec, du, title)
    try:
        write_with(
            path,
            lambda tmp: fig.savefig(
                tmp, format="png", dpi=DPI, bbox_inches="tight", facecolor="white"
            ),
        )
    finally:
        plt.close(fig)
    return path


def response_spectrum_figure(spec: Spectrum, du: DisplayUnits) -> Image:
    """Response spectrum of the analysed record (PSA, log period axis)."""
    return _image(spectrum_plot(spec, du))


def scaling_figure(sc: ScalingResult, du: DisplayUnits) -> Image:
    """Record spectrum before and after scaling against the target, matching range shaded."""
    fig, axes = _figure(2.6)
    ax = axes[0, 0]
    t = sc.before.periods
    lo, hi = sc.period_range
    ax.plot(t, du.show(sc.before.psa, "acceleration"), color="#9aa5b1", label="record as processed")
    ax.plot(t, du.show(sc.after.psa, "acceleration"), color="#2f4b6e", label="after scaling")
    if sc.target.kind == "table":
        keep = (t >= sc.target.periods[0]) & (t <= sc.target.periods[-1])
        tt = t[keep]
    else:
        tt = t
    ax.plot(tt, du.show(sc.target.psa_at(tt), "acceleration"), color="#b5562b",
            linestyle="--", label="target (user's)")  # fmt: skip
    if hi > lo:
        ax.axvspan(lo, hi, color="#eef1f4", zorder=0, label="matching range")
    else:
        ax.axvline(lo, color="#555555", linewidth=0.6, linestyle=":", label="matching period")
    _psa_axes(ax, du, f"Scaling: factor {sc.factor:.4g}")
    _psa_legend(ax)
    fig.tight_layout()
    return _image(fig)


def husid_figure(im: IntensityMeasures) -> Image:
    """Normalised Arias intensity (Husid curve) with the 5, 75 and 95 % times."""
    fig, axes = _figure(1.8)
    ax = axes[0, 0]
    t = np.arange(im.husid.size) * im.dt
    ax.plot(t, im.husid, color="#2f4b6e")
    for tx, lv in ((im.t5, 0.05), (im.t75, 0.75), (im.t95, 0.95)):
        ax.plot([tx, tx], [0.0, lv], color="#b5562b", linewidth=0.6, linestyle="--")
        ax.annotate(f"{100 * lv:g} %", (tx, lv), xytext=(3, -8), textcoords="offset points",
                    fontsize=6.5)  # fmt: skip
    ax.set_ylim(0.0, 1.02)
    ax.set_xlim(left=0.0)
    _labels(ax, "time [s]", "I_a(t) / I_a [-]", "Normalised Arias intensity (Husid curve)")
    fig.tight_layout()
    return _image(fig)
