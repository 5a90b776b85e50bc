"""Results files and the terminal summary: they format, they do not compute physics.

``results.json`` holds SI values under the documented keys (README, "Outputs");
``histories.csv`` has a time column and one column per quantity, unit in each header.
"""

from __future__ import annotations

import datetime as _dt
import io
import json
import math
import platform
from pathlib import Path
from typing import Any

import numpy as np

from thist import __version__, cautions
from thist.analysis import CaseResult, MethodRun
from thist.fileio import write_text
from thist.motion import GroundMotion
from thist.response import QUANTITIES
from thist.units import DisplayUnits


def _clean(x: Any) -> Any:
    """JSON-safe: arrays to lists, inf/nan to None."""
    if isinstance(x, dict):
        return {k: _clean(v) for k, v in x.items()}
    if isinstance(x, list | tuple):
        return [_clean(v) for v in x]
    if isinstance(x, np.ndarray):
        return _clean(x.tolist())
    if isinstance(x, np.generic):
        return _clean(x.item())
    if isinstance(x, float) and not math.isfinite(x):
        return None
    return x


def _checks_dict(run: MethodRun) -> dict:
    c = run.checks
    return {
        "dt": c.dt,
        "dt_critical": c.dt_critical,
        "critical_mode": c.critical_mode,
        "margin": c.margin,
        "suggested_dt": c.suggested_dt,
        "modes_checked": c.modes_checked,
        "refused": c.refused,
        "items": [
            {
                "name": k.name,
                "verdict": k.verdict,
                "value": k.value,
                "limit": k.limit,
                "message": k.message,
            }
            for k in c.checks
        ],
        "accuracy": [
            {
                "mode": a.mode,
                "period": a.period,
                "steps_per_period": a.steps_per_period,
                "period_error": a.period_error,
                "algorithmic_damping": a.algorithmic_damping,
                "spectral_radius": a.spectral_radius,
            }
            for a in c.accuracy
        ],
    }


def _run_dict(run: MethodRun) -> dict:
    m = run.method
    out = {
        "label": run.label,
        "name": m.name,
        "parameters": m.parameters(),
        "source": m.source,
        "order": m.order,
        "explicit": m.explicit,
        "dt": run.checks.dt,
        "status": "refused" if run.response is None else "ran",
        "path": run.path,
        "elapsed_s": run.elapsed,
        "checks": _checks_dict(run),
    }
    if run.response is not None:
        out["peaks"] = {
            name: {
                "values": p.values,
                "times": p.times,
                "unit": QUANTITIES[name][1],
                "per": QUANTITIES[name][2],
            }
            for name, p in run.response.peaks().items()
        }
    if run.energy is not None:
        out["energy"] = {**run.energy.final(), "unit": "J"}
    if run.story is not None:
        out["inelastic"] = {
            "story": {k: v for k, v in run.story.__dict__.items()},
            "convergence": dict(run.convergence.__dict__) if run.convergence else None,
            "units": "drifts and deformations m, energies J, ductility and counts plain",
        }
    return out


def motion_dict(motion: GroundMotion) -> dict:
    """The analysed ground motion as a JSON-ready dict (SI units).

    Processing steps in order with parameters and figures; the scaling (target and
    the user's basis, factor, bounds and whether one binds, period range, misfit);
    the intensity measures; the 5 %-damped spectrum (periods s, PSA m/s^2, SD m).
    """
    sc, im, sp = motion.scaling, motion.intensity, motion.spectrum
    scaling = None
    if sc is not None:
        tgt = sc.target
        scaling = {
            "target": {
                "kind": tgt.kind,
                "description": tgt.describe(),
                "periods": tgt.periods,
                "psa": tgt.psa,
                "s_short": tgt.s_short,
                "s_one": tgt.s_one,
                "t_long": tgt.t_long,
            },
            "basis": tgt.basis,
            "factor": sc.factor,
            "unbounded_factor": sc.unbounded_factor,
            "bounds": list(sc.bounds),
            "bound_hit": sc.bound_hit,
            "warning": sc.warning,
            "period_range": list(sc.period_range),
            "matching_periods": sc.matching_periods,
            "misfit": sc.misfit,
            "misfit_measure": "RMS of ln(PSA_scaled / PSA_target) over the matching periods",
            "damping": sc.before.damping,
        }
    return _clean(
        {
            "raw_record": {"npts": motion.raw.npts, "dt": motion.raw.dt},
            "record": {"npts": motion.record.npts, "dt": motion.record.dt},
            "processing": [step.to_dict() for step in motion.processing],
            "scaling": scaling,
            "intensity": im.summary(),
            "spectrum": {
                "damping": sp.damping,
                "periods": sp.periods,
                "psa": sp.psa,
                "sd": sp.sd,
                "pga": sp.pga,
            },
        }
    )


def result_dict(result: CaseResult) -> dict:
    """The whole result as a JSON-ready dict (SI units)."""
    case, s, modes, d = result.case, result.case.structure, result.modes, result.damping
    rs = result.record_summary
    return _clean(
        {
            "thist_version": __version__,
            "created_utc": _dt.datetime.now(_dt.UTC).isoformat(timespec="seconds"),
            "python": platform.python_version(),
            "units": "SI: kg, m, s, N, rad/s; ratios are plain numbers",
            "case": {
                "file": case.path,
                "name": case.name,
                "sha256": case.sha256,
                "title": case.title,
                "notes": case.notes,
                "text": case.text,
            },
            "record": {
                "file": case.record.source,
                "sha256": case.record.sha256,
                "unit": case.record.unit,
                "scale": case.record.scale,
                "start_time": case.record.start_time,
                "summary": rs.__dict__,
            },
            "excitation": {
                "dt": result.excitation.dt,
                "npts": int(result.excitation.ag.size),
                "record_dt": result.excitation.record_dt,
                "notes": list(result.excitation.notes),
            },
            "motion": None if result.motion is None else motion_dict(result.motion),
            "model": {
                "form": s.form,
                "levels": s.n,
                "labels": list(s.labels),
                "masses": s.level_masses,
                "story_stiffness": s.story_stiffness,
                "story_heights": s.story_heights,
                "elevations": s.elevations,
                "M": s.M,
                "K": s.K,
                "r": s.r,
                "total_mass": s.total_mass,
                "weight": s.weight,
            },
            "damping": {
                "model": d.model,
                "description": d.description,
                "alpha_mass": d.alpha_mass,
                "beta_stiffness": d.beta_stiffness,
                "classical": d.classical,
                "ratios": d.ratios,
            },
            "modes": [
                {
                    "mode": j + 1,
                    "period": modes.periods[j],
                    "frequency": modes.frequencies[j],
                    "omega": modes.omegas[j],
                    "participation": modes.participation[j],
                    "effective_mass": modes.effective_mass[j],
                    "effective_mass_ratio": modes.effective_mass_ratio[j],
                    "cumulative_ratio": modes.cumulative_ratio[j],
                    "damping_ratio": d.ratios[j],
                    "shape": modes.shapes[:, j],
                }
                for j in range(len(modes.omegas))
            ],
            "checks_settings": {
                "mass_ratio": case.checks.mass_ratio,
                "steps_per_period": case.checks.steps_per_period,
                "drift_ratio_limit": case.checks.drift_ratio_limit,
                "drift_ratio_limit_basis": case.checks.drift_ratio_limit_basis,
            },
            "methods": [_run_dict(r) for r in result.runs],
            "cautions": [cautions.SHORT, *cautions.FULL],
        }
    )


def histories_csv(result: CaseResult) -> str:
    """Time plus one column per quantity, level and method, SI unit in each header."""
    ran = [r for r in result.runs if r.response is not None]
    ex = result.excitation
    labels = result.case.structure.labels
    headers = ["time [s]", "ground_acceleration [m/s^2]"]
    cols = [ex.time, ex.ag]
    for run in ran:
        resp = run.response
        for name, (_, unit, per) in QUANTITIES.items():
            x = resp.history(name)
            if x is None:
                continue
            if per == "scalar":
                headers.append(f"{run.label} {name} [{unit}]")
                cols.append(x)
            else:
                where = labels if per == "level" else [f"S{i + 1}" for i in range(x.shape[1])]
                headers += [f"{run.label} {name} {w} [{unit}]" for w in where]
                cols += list(x.T)
    buf = io.StringIO()
    buf.write(",".join(f'"{h}"' for h in headers) + "\n")
    np.savetxt(buf, np.column_stack(cols), delimiter=",", fmt="%.10g")
    return buf.getvalue()


def write_results(result: CaseResult, outdir: str | Path, extra: dict | None = None) -> list[Path]:
    """Write ``results.json`` and ``histories.csv`` into ``outdir`` atomically.

    Both texts are built before either file is touched, so a failure leaves the
    previous results in place. ``extra`` adds top-level keys to results.json
    (e.g. ``{"comparison": ...}`` from ``thist compare``).
    """
    outdir = Path(outdir)
    data = result_dict(result)
    if extra:
        data.update(_clean(extra))
    payload = json.dumps(data, indent=1, allow_nan=False) + "\n"
    csv = histories_csv(result)
    files = [outdir / "results.json", outdir / "histories.csv"]
    write_text(files[0], payload)
    write_text(files[1], csv)
    return files


def _fmt(x: float, digits: int = 4) -> str:
    if x is None or (isinstance(x, float) and not math.isfinite(x)):
        return "-"
    return f"{x:.{digits}g}"


def _table(headers: list[str], rows: list[list[str]]) -> str:
    widths = [
        max(len(h), *(len(r[i]) for r in rows)) if rows else len(h) for i, h in enumerate(headers)
    ]
    line = lambda cells: "  ".join(c.rjust(w) for c, w in zip(cells, widths, strict=True))  # noqa: E731
    return "\n".join([line(headers), line(["-" * w for w in widths]), *map(line, rows)])


def _inelastic_table(run: MethodRun, du: DisplayUnits) -> str:
    st, SL = run.story, du.label("small_length")
    rows = [
        [
            f"S{i + 1}",
            st.law[i],
            _fmt(st.ductility[i], 3),
            _fmt(du.show(st.residual_drift[i], "small_length")),
            str(int(st.yield_excursions[i])),
            "-" if st.law[i] == "elastic" else _fmt(st.hysteretic_energy[i] / 1e3),
        ]
        for i in range(len(st.law))
    ]
    head = [
        "story",
        "law",
        "ductility",
        f"residual drift [{SL}]",
        "yield excursions",
        "hysteretic energy [kJ]",
    ]
    conv = run.convergence
    tail = (
        ""
        if conv is None
        else (
            f"\n  Newton iterations {conv.iterations} in {conv.steps} steps, "
            f"{conv.subdivided_steps} steps subdivided"
        )
    )
    return _table(head, rows) + tail


def summary_text(result: CaseResult) -> str:
    """A short summary of a run in the case's display units, ending with the caution."""
    case, du = result.case, result.case.display
    s, modes, rs = case.structure, result.modes, result.record_summary
    L, SL, F, A, MO = (
        du.label(k) for k in ("length", "small_length", "force", "acceleration", "moment")
    )
    out = [
        f"thist {__version__}: {case.title}",
        f"case   {case.path} (sha256 {case.sha256[:12]})",
        f"record {Path(case.record.source).name}: {rs.npts} points, dt {rs.dt:g} s, "
        f"PGA {du.show(rs.pga, 'acceleration'):.4g} {A} at {rs.pga_time:.3f} s",
        f"model  {s.n} levels, T1 = {modes.periods[0]:.4g} s, T_min = {modes.periods[-1]:.4g}"
        f" s, damping {result.damping.description}",
    ]
    for note in result.excitation.notes:
        out.append(f"note   {note}")
    for run in result.runs:
        c = run.checks
        out.append("")
        limit = (
            "unconditionally stable"
            if not math.isfinite(c.dt_critical)
            else (f"dt_cr {c.dt_critical:.5g} s (dt/dt_cr {c.margin:.3f})")
        )
        out.append(f"{run.label}: dt {c.dt:g} s, {limit}")
        for chk in c.checks:
            if chk.verdict != "pass":
                out.append(f"  {chk.verdict}: {chk.message}")
        if run.response is None:
            continue
        pk = run.response.peaks()
        rows = []
        for i, lab in enumerate(s.labels):
            dr = pk.get("drift_ratio")
            rows.append(
                [
                    lab,
                    _fmt(du.show(pk["displacement"].values[i], "length")),
                    _fmt(du.show(pk["drift"].values[i], "small_length")),
                    "-" if dr is None else f"{dr.values[i]:.5f}",
                    _fmt(du.show(pk["story_shear"].values[i], "force")),
                    _fmt(du.show(pk["absolute_acceleration"].values[i], "acceleration")),
                ]
            )
        out.append(
            _table(
                [
                    "level",
                    f"disp [{L}]",
                    f"drift [{SL}]",
                    "drift ratio",
                    f"shear [{F}]",
                    f"abs acc [{A}]",
                ],
                rows,
            )
        )
        vb = pk["base_shear"]
        line = (
            f"  base shear {du.show(vb.values, 'force'):.4g} {F} at {vb.times:.3f} s "
            f"(V/W = {pk['base_shear_coefficient'].values:.4f})"
        )
        if "overturning_moment" in pk:
            line += (
                f", overturning moment "
                f"{du.show(pk['overturning_moment'].values, 'moment'):.4g} {MO}"
            )
        out.append(line)
        if run.energy is not None:
            out.append(
                f"  energy balance error {run.energy.balance_error:.2e} of the peak input "
                f"energy {run.energy.peak_input / 1e3:.4g} kJ"
            )
        if run.story is not None:
            out.append(_inelastic_table(run, du))
    out += [
        "",
        cautions.SHORT,
    ]
    if any(r.story is not None for r in result.runs):
        out.append(cautions.INELASTIC)
    return "\n".join(out)
