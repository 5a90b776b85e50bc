"""``thist spectrum``: the response spectra of a record or of a case's analysed record.

Reads the record (a bare record file, or a case file whose processed and scaled
record is taken, as the analysis would sample it), computes the linear elastic
spectra with :func:`thist.spectrum.response_spectrum` and writes three files into
one folder, each atomically (:mod:`thist.fileio`):

``spectrum.csv``
    One row per period: ``period [s]`` then, for every damping ratio, SD [m],
    PSV [m/s], PSA [m/s^2], SV [m/s] and SA_abs [m/s^2].
``spectrum.json``
    The same values (SI) with the source, the damping ratios and the method.
``spectrum.png``
    PSA against period on a logarithmic period axis, in the display unit.

Period grids are given as text: a comma list of periods (``"0.1,0.2,0.5,1"``, in s
unless an item carries its own unit, e.g. ``"200 ms"``) or a log-spaced range
``START:STOP:COUNT`` (``"0.02:10:200"``: 200 periods from 0.02 s to 10 s).
"""

from __future__ import annotations

import csv
import dataclasses
import io
import json
import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from thist import __version__, cautions
from thist.errors import InputError
from thist.fileio import write_text
from thist.motion import GroundMotion
from thist.record import Record, read_record
from thist.spectrum import Spectrum, default_periods, response_spectrum
from thist.units import DisplayUnits, parse_quantity, parse_unit

__all__ = [
    "SPECTRUM_COLUMNS",
    "SpectrumSource",
    "load_source",
    "parse_damping",
    "parse_periods",
    "spectrum_csv",
    "spectrum_dict",
    "summary_lines",
    "write_spectrum_files",
    "compute",
]

#: Spectral quantities in file order: (attribute of Spectrum, column name, SI unit).
SPECTRUM_COLUMNS: tuple[tuple[str, str, str], ...] = (
    ("sd", "SD", "m"),
    ("psv", "PSV", "m/s"),
    ("psa", "PSA", "m/s^2"),
    ("sv", "SV", "m/s"),
    ("sa_abs", "SA_abs", "m/s^2"),
)

_HAS_LETTER = re.compile(r"[A-Za-z]")


@dataclass(frozen=True)
class SpectrumSource:
    """The record whose spectrum is computed, and where it came from.

    Attributes
    ----------
    kind : str
        ``"case"`` (the analysed record of a case) or ``"record"`` (a record file).
    path : str
        The file named on the command line.
    record : Record
        Ground acceleration in m/s^2 (for a case: after processing and scaling).
    display : DisplayUnits
        Units for the plot and the terminal.
    motion : GroundMotion or None
        For a case: the processing log and the scaling, for the JSON file.
    """

    kind: str
    path: str
    record: Record
    display: DisplayUnits
    motion: GroundMotion | None = None


def _time(text: str, field: str) -> float:
    """A time in s: bare numbers are seconds, otherwise the unit is parsed."""
    text = text.strip()
    if _HAS_LETTER.search(text):
        return parse_quantity(text, "time", field)
    try:
        return float(text)
    except ValueError:
        raise InputError(f"expected a time, got {text!r}", field) from None


def parse_periods(text: str | None, field: str = "--periods") -> np.ndarray:
    """Read a period grid.

    Parameters
    ----------
    text : str or None
        ``"0.1,0.2,0.5"`` (a comma list of periods, s unless an item has a unit) or
        ``"START:STOP:COUNT"`` (COUNT log-spaced periods from START to STOP, s
        unless given with a unit).  None gives :func:`thist.spectrum.default_periods`
        (200 periods from 0.02 s to 10 s).
    field : str, optional
        Name of the option, for error messages.

    Returns
    -------
    numpy.ndarray
        Periods, s, increasing and distinct.

    Raises
    ------
    InputError
        Unreadable items, a period <= 0, a range with START >= STOP or COUNT < 2.
    """
    if text is None:
        return default_periods()
    if ":" in text:
        parts = text.split(":")
        if len(parts) != 3:
            raise InputError(f"a range is START:STOP:COUNT, e.g. 0.02:10:200, got {text!r}", field)
        lo, hi = _time(parts[0], field), _time(parts[1], field)
        try:
            count = int(parts[2])
        except ValueError:
            raise InputError(f"COUNT must be a whole number, got {parts[2]!r}", field) from None
        if not (0.0 < lo < hi and np.isfinite(hi)):
            raise InputError(f"need 0 < START < STOP, got {text!r}", field)
        if count < 2:
            raise InputError(f"COUNT must be at least 2, got {count}", field)
        return np.geomspace(lo, hi, count)
    items = [x for x in text.split(",") if x.strip()]
    if not items:
        raise InputError("expected periods, e.g. 0.1,0.5,1 or 0.02:10:200", field)
    t = np.array([_time(x, field) for x in items])
    if not np.all(np.isfinite(t) & (t > 0.0)):
        raise InputError(f"every period must be > 0 s, got {text!r}", field)
    return np.unique(t)


def parse_damping(text: str | None, field: str = "--damping") -> tuple[float, ...]:
    """Read damping ratios: ``"0.02,0.05"`` or ``"2 %,5 %"`` (default 0.05).

    Returns
    -------
    tuple of float
        Distinct ratios 0 <= zeta < 1, dimensionless, in the order given.
    """
    if text is None:
        return (0.05,)
    out: list[float] = []
    for item in (x.strip() for x in text.split(",")):
        if not item:
            continue
        z = parse_quantity(item, "dimensionless", field)
        if not 0.0 <= z < 1.0:
            raise InputError(f"each damping ratio must satisfy 0 <= zeta < 1, got {item!r}", field)
        if z not in out:
            out.append(z)
    if not out:
        raise InputError("expected damping ratios, e.g. 0.02,0.05 or 5 %", field)
    return tuple(out)


def _column(text: str) -> int | str:
    text = text.strip()
    return int(text) if text.isdigit() else text


def load_source(
    path: str,
    *,
    unit: str | None = None,
    layout: str = "columns",
    dt: str | None = None,
    columns: str | None = None,
    header_lines: int = 0,
    scale: float = 1.0,
    display_unit: str | None = None,
) -> SpectrumSource:
    """Read the record of a case file (``*.toml``) or a bare record file.

    Parameters
    ----------
    path : str
        A case file (its analysed record: processed and scaled, as
        :func:`thist.analysis.prepare` makes it; its display units) or a record file.
    unit : str, optional
        Record file only, required there: acceleration unit of its values, e.g. ``"g"``.
    layout : {"columns", "values"}, optional
        Record file only: see :mod:`thist.record`.
    dt : str, optional
        Record file only, ``values`` layout: the step, e.g. ``"0.01 s"`` (bare: s).
    columns : str, optional
        Record file only, ``columns`` layout: ``"TIME,ACCEL"`` by name or position
        (1 = first); default ``"1,2"``.
    header_lines : int, optional
        Record file only: lines skipped at the top.
    scale : float, optional
        Record file only: factor applied to every value.
    display_unit : str, optional
        Acceleration unit of the plot and terminal (default: the case's, else g).

    Returns
    -------
    SpectrumSource
    """
    p = Path(path)
    record_opts = {
        "--unit": unit is not None,
        "--layout": layout != "columns",
        "--dt": dt is not None,
        "--columns": columns is not None,
        "--header-lines": header_lines != 0,
        "--scale": scale != 1.0,
    }
    if p.suffix.lower() == ".toml":
        given = [k for k, v in record_opts.items() if v]
        if given:
            raise InputError(
                "is for a record file; a case file states its own record", given[0], p.name
            )
        from thist.analysis import prepare
        from thist.case import load_case

        case = load_case(p)
        motion = prepare(case).motion
        src = SpectrumSource("case", str(p), motion.record, case.display, motion)
    else:
        if unit is None:
            raise InputError("is required for a record file (e.g. --unit g)", "--unit", p.name)
        unit_si = parse_unit(unit, "acceleration", "--unit")
        if not (np.isfinite(scale) and scale > 0.0):
            raise InputError(f"must be positive, got {scale:g}", "--scale")
        if header_lines < 0:
            raise InputError(f"must be >= 0, got {header_lines}", "--header-lines")
        step = None if dt is None else _time(dt, "--dt")
        if layout == "columns" and step is not None:
            raise InputError("a columns record takes its step from the time column", "--dt")
        cols = (columns or "1,2").split(",")
        if len(cols) != 2 or not all(c.strip() for c in cols):
            raise InputError(f"expected TIME,ACCEL, got {columns!r}", "--columns")
        record = read_record(
            p,
            layout=layout,
            unit_si=unit_si,
            unit=unit,
            scale=scale,
            dt=step,
            time_column=_column(cols[0]),
            acceleration_column=_column(cols[1]),
            header_lines=header_lines,
            field_prefix="record",
        )
        src = SpectrumSource("record", str(p), record, DisplayUnits())
    if display_unit is not None:
        size = parse_unit(display_unit, "acceleration", "--display-unit")
        src = dataclasses.replace(
            src, display=dataclasses.replace(src.display, acceleration=(display_unit, size))
        )
    return src


def _rows(spec: Spectrum) -> tuple[list[float], list[np.ndarray]]:
    """Damping ratios and the (n_damping, n_periods) arrays of each quantity."""
    damping = [float(z) for z in np.atleast_1d(spec.damping)]
    return damping, [np.atleast_2d(getattr(spec, attr)) for attr, _, _ in SPECTRUM_COLUMNS]


def _zeta(z: float) -> str:
    return f"zeta={z:g}"


def spectrum_csv(spec: Spectrum) -> str:
    """The spectrum as CSV text: period, then SD, PSV, PSA, SV, SA_abs per damping.

    Headers carry the SI unit, e.g. ``PSA zeta=0.05 [m/s^2]``; values have 12
    significant figures.
    """
    damping, arrays = _rows(spec)
    header = ["period [s]"] + [
        f"{name} {_zeta(z)} [{unit}]" for z in damping for _, name, unit in SPECTRUM_COLUMNS
    ]
    cols = [spec.periods] + [arr[i] for i in range(len(damping)) for arr in arrays]
    buf = io.StringIO()
    csv.writer(buf, lineterminator="\n").writerow(header)
    np.savetxt(buf, np.column_stack(cols), delimiter=",", fmt="%.12g")
    return buf.getvalue()


def spectrum_dict(spec: Spectrum, source: SpectrumSource) -> dict[str, Any]:
    """The spectrum and its source as a JSON-ready dict (SI units)."""
    rec = source.record
    damping, arrays = _rows(spec)
    out: dict[str, Any] = {
        "thist_version": __version__,
        "units": "SI: s, m, m/s, m/s^2; damping ratios are plain numbers",
        "source": {
            "kind": source.kind,
            "file": source.path,
            "record_file": rec.source,
            "record_sha256": rec.sha256,
            "record_unit": rec.unit,
            "record_scale": rec.scale,
            "dt": rec.dt,
            "npts": rec.npts,
        },
        "method": "linear elastic oscillator starting at rest, exact for the record taken as "
        "piecewise linear between samples (Nigam & Jennings 1969); peaks at the samples",
        "pga": spec.pga,
        "periods": spec.periods.tolist(),
        "spectra": [
            {
                "damping": z,
                **{
                    attr: arr[i].tolist()
                    for (attr, _, _), arr in zip(SPECTRUM_COLUMNS, arrays, strict=True)
                },
            }  # fmt: skip
            for i, z in enumerate(damping)
        ],
        "cautions": [cautions.SHORT],
    }
    if source.motion is not None:
        from thist.results import motion_dict

        out["source"]["motion"] = motion_dict(source.motion)
    return out


def write_spectrum_files(outdir: str | Path, spec: Spectrum, source: SpectrumSource) -> list[Path]:
    """Write spectrum.csv, spectrum.json and spectrum.png into ``outdir`` atomically.

    Parameters
    ----------
    outdir : str or Path
        Output folder (created if missing).
    spec : Spectrum
        From :func:`thist.spectrum.response_spectrum`.
    source : SpectrumSource
        The record and its display units.

    Returns
    -------
    list of Path
        The three files, in that order.
    """
    from thist.report.figures import save_spectrum_png

    outdir = Path(outdir)
    files = [outdir / "spectrum.csv", outdir / "spectrum.json", outdir / "spectrum.png"]
    csv_text = spectrum_csv(spec)
    json_text = json.dumps(spectrum_dict(spec, source), indent=1, allow_nan=False) + "\n"
    write_text(files[0], csv_text)
    write_text(files[1], json_text)
    title = f"Response spectrum of {Path(source.record.source or source.path).name}"
    if source.kind == "case":
        title = f"Response spectrum of the analysed record of {Path(source.path).name}"
    save_spectrum_png(files[2], spec, source.display, title)
    return files


def summary_lines(spec: Spectrum, source: SpectrumSource) -> list[str]:
    """A few lines for the terminal, in the display acceleration unit."""
    du, rec = source.display, source.record
    a_lab = du.label("acceleration")
    what = "analysed record of case" if source.kind == "case" else "record"
    lines = [
        f"thist {__version__}: response spectrum of the {what} {Path(source.path).name}",
        f"record: {rec.npts} points, dt {rec.dt:g} s, PGA {du.show(spec.pga, 'acceleration'):.4g} "
        f"{a_lab}; {spec.periods.size} periods {spec.periods[0]:.4g}-{spec.periods[-1]:.4g} s",
    ]
    if source.motion is not None:
        for step in source.motion.processing:
            lines.append(f"processing: {step.text}")
        if source.motion.scaling is not None:
            sc = source.motion.scaling
            lines.append(f"scaling: factor {sc.factor:.4g} to the {sc.target.describe()}")
    damping, arrays = _rows(spec)
    psa = arrays[2]
    for i, z in enumerate(damping):
        k = int(np.argmax(psa[i]))
        lines.append(
            f"damping {z:g}: peak PSA {du.show(psa[i, k], 'acceleration'):.4g} {a_lab} "
            f"at T = {spec.periods[k]:.4g} s"
        )
    return lines


def compute(source: SpectrumSource, periods: np.ndarray, damping: tuple[float, ...]) -> Spectrum:
    """Spectrum of the source record: one damping gives 1-D arrays, several 2-D.

    Parameters
    ----------
    source : SpectrumSource
    periods : numpy.ndarray
        Periods, s.
    damping : tuple of float
        Damping ratios.
    """
    z: float | tuple[float, ...] = damping[0] if len(damping) == 1 else damping
    return response_spectrum(source.record.ag, source.record.dt, periods, z)
