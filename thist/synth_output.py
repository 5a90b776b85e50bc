"""``thist synth``: a synthetic record file from options that carry their units.

Turns the text options of the command (``"30 s"``, ``"2.5 Hz"``, ``"0.3 g"``,
``"60 %"``) into SI values, runs :func:`thist.synthetic.synthesize` and writes the
record with :func:`thist.synthetic.write_record`, whose header says that the record
is synthetic and lists the seed and every parameter.

Synthetic motions are for demonstrations and trial runs; they are not a substitute
for recorded motions selected for the site.
"""

from __future__ import annotations

import math
from pathlib import Path

from thist import cautions
from thist.errors import InputError
from thist.intensity import intensity_measures
from thist.synthetic import (
    Envelope,
    SaragoniHartEnvelope,
    SyntheticRecord,
    TrapezoidEnvelope,
    synthesize,
    write_record,
)
from thist.units import DisplayUnits, parse_quantity

__all__ = [
    "ENVELOPES",
    "SYNTHETIC_CAUTION",
    "circular_frequency",
    "make_synthetic",
    "summary_lines",
    "write_synthetic",
]

#: Said by the help, the terminal output and the record header alike.
SYNTHETIC_CAUTION = cautions.SYNTHETIC

#: Envelope names of the command.
ENVELOPES = ("saragoni-hart", "trapezoid", "none")

#: Library parameter -> command option, for error messages.
_OPTION = {
    "duration": "--duration",
    "dt": "--dt",
    "seed": "--seed",
    "omega_g": "--site-frequency",
    "zeta_g": "--site-damping",
    "omega_f": "--corner-frequency",
    "zeta_f": "--corner-damping",
    "target_pga": "--pga",
    "target_arias": "--arias",
    "envelope.b": "--shape-exponent",
    "envelope.t_peak": "--peak-time",
    "envelope.rise": "--rise",
    "envelope.strong": "--strong",
    "envelope.decay": "--decay",
}


def circular_frequency(text: str, field: str) -> float:
    """Circular frequency ω = 2πf, rad/s, from ``"2.5 Hz"``, ``"15.7 rad/s"`` or ``"150 rpm"``.

    :func:`thist.units.parse_quantity` reads any frequency, angular ones included,
    as cycles per second.

    Parameters
    ----------
    text : str
        The option's value.
    field : str
        The option's name, for error messages.

    Returns
    -------
    float
        ω, rad/s, > 0.
    """
    value = parse_quantity(text, "frequency", field)
    if not value > 0.0:
        raise InputError(f'must be positive, got "{text}"', field)
    return 2.0 * math.pi * value


def _ratio(text: str, field: str) -> float:
    z = parse_quantity(text, "dimensionless", field)
    if not 0.0 < z < 1.0:
        raise InputError(f'must be a damping ratio with 0 < zeta < 1, got "{text}"', field)
    return z


def _positive(text: str, dimension: str, field: str) -> float:
    x = parse_quantity(text, dimension, field)
    if not x > 0.0:
        raise InputError(f'must be positive, got "{text}"', field)
    return x


def _envelope(
    kind: str,
    shape_exponent: str | None,
    peak_time: str | None,
    rise: str | None,
    strong: str | None,
    decay: str | None,
) -> Envelope:
    """The time envelope from the options; options of another envelope are refused."""
    sh = {"--shape-exponent": shape_exponent, "--peak-time": peak_time}
    tz = {"--rise": rise, "--strong": strong, "--decay": decay}
    if kind not in ENVELOPES:
        raise InputError(f"must be one of {', '.join(ENVELOPES)}, got {kind!r}", "--envelope")
    wrong = [k for k, v in ({**sh, **tz} if kind == "none" else tz if kind != "trapezoid"
             else sh).items() if v is not None]  # fmt: skip
    if wrong:
        raise InputError(f"does not apply to the {kind} envelope", wrong[0])
    if kind == "saragoni-hart":
        if peak_time is None:
            raise InputError("is required for the saragoni-hart envelope", "--peak-time")
        b = 2.0 if shape_exponent is None else parse_quantity(shape_exponent, "dimensionless")
        if not b > 0.0:
            raise InputError(f"must be positive, got {shape_exponent!r}", "--shape-exponent")
        return SaragoniHartEnvelope(b, _positive(peak_time, "time", "--peak-time"))
    if kind == "trapezoid":
        missing = [k for k, v in tz.items() if v is None]
        if missing:
            raise InputError("is required for the trapezoid envelope", missing[0])
        vals = [parse_quantity(v, "time", k) for k, v in tz.items()]
        for (k, v), x in zip(tz.items(), vals, strict=True):
            if x < 0.0:
                raise InputError(f'must be >= 0, got "{v}"', k)
        return TrapezoidEnvelope(*vals)
    return None


def make_synthetic(
    *,
    seed: int,
    duration: str,
    dt: str,
    site_frequency: str,
    site_damping: str,
    corner_frequency: str | None = None,
    corner_damping: str | None = None,
    envelope: str = "saragoni-hart",
    shape_exponent: str | None = None,
    peak_time: str | None = None,
    rise: str | None = None,
    strong: str | None = None,
    decay: str | None = None,
    pga: str | None = None,
    arias: str | None = None,
    baseline_order: str = "1",
) -> SyntheticRecord:
    """A synthetic record from the command's text options.

    Parameters
    ----------
    seed : int
        Seed of the random generator, >= 0; the same seed and options give the
        same record bit for bit.
    duration, dt : str
        Record length and step, with a time unit (``"30 s"``, ``"10 ms"``).
    site_frequency : str
        Kanai-Tajimi ground frequency, ``"2.5 Hz"`` or ``"15.7 rad/s"``.
    site_damping : str
        Kanai-Tajimi ground damping ratio, ``"0.6"`` or ``"60 %"``.
    corner_frequency, corner_damping : str, optional
        Clough-Penzien high-pass frequency and damping ratio; both or neither.
    envelope : {"saragoni-hart", "trapezoid", "none"}, optional
        Time envelope (default Saragoni & Hart 1974).
    shape_exponent, peak_time : str, optional
        Saragoni-Hart exponent b (plain number, default 2) and peak time (required).
    rise, strong, decay : str, optional
        Trapezoid durations (all three required for the trapezoid).
    pga, arias : str, optional
        Exactly one target: PGA (acceleration, ``"0.3 g"``) or Arias intensity
        (velocity, ``"1.2 m/s"``).
    baseline_order : str, optional
        Order 0-3 of the baseline correction, or ``"none"`` (default 1).

    Returns
    -------
    SyntheticRecord

    Raises
    ------
    InputError
        Naming the command option.
    """
    if (pga is None) == (arias is None):
        raise InputError("give exactly one target: --pga or --arias", "--pga")
    if (corner_frequency is None) != (corner_damping is None):
        raise InputError("give both --corner-frequency and --corner-damping, or neither",
                         "--corner-frequency")  # fmt: skip
    if baseline_order.strip().lower() == "none":
        order: int | None = None
    elif baseline_order.strip() in ("0", "1", "2", "3"):
        order = int(baseline_order)
    else:
        raise InputError(f"must be 0, 1, 2, 3 or none, got {baseline_order!r}", "--baseline-order")
    kwargs = {
        "omega_g": circular_frequency(site_frequency, "--site-frequency"),
        "zeta_g": _ratio(site_damping, "--site-damping"),
        "envelope": _envelope(envelope, shape_exponent, peak_time, rise, strong, decay),
        "baseline_order": order,
    }
    if corner_frequency is not None and corner_damping is not None:
        kwargs["omega_f"] = circular_frequency(corner_frequency, "--corner-frequency")
        kwargs["zeta_f"] = _ratio(corner_damping, "--corner-damping")
    if pga is not None:
        kwargs["target_pga"] = _positive(pga, "acceleration", "--pga")
    if arias is not None:
        kwargs["target_arias"] = _positive(arias, "velocity", "--arias")
    try:
        return synthesize(
            _positive(duration, "time", "--duration"),
            _positive(dt, "time", "--dt"),
            seed,
            **kwargs,
        )
    except InputError as exc:
        raise InputError(exc.problem, _OPTION.get(exc.field or "", exc.field)) from None


def write_synthetic(path: str | Path, synthetic: SyntheticRecord) -> Path:
    """Write the record file (header says SYNTHETIC, lists every parameter), atomically."""
    try:
        return write_record(path, synthetic)
    except InputError as exc:
        raise InputError(exc.problem, "FILE") from None


def summary_lines(path: Path, synthetic: SyntheticRecord, du: DisplayUnits) -> list[str]:
    """Terminal lines: what was written, its intensity, and the caution."""
    im = intensity_measures(synthetic.ag, synthetic.dt)
    a = du.label("acceleration")
    return [
        f"wrote {path}: SYNTHETIC record, seed {synthetic.seed}, {synthetic.ag.size} points, "
        f"dt {synthetic.dt:g} s",
        f"PGA {du.show(im.pga, 'acceleration'):.4g} {a}, Arias intensity {im.arias:.4g} m/s, "
        f"D5-95 {im.d5_95:.3g} s, scale factor {synthetic.scale_factor:.4g}",
        SYNTHETIC_CAUTION,
    ]
