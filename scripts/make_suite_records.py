"""Regenerate the synthetic records of the demo suite and IDA (inputs/records/suite-*.txt).

Each record is stationary Gaussian white noise through a Kanai-Tajimi filter
(Kanai 1957; Tajimi 1960) with the Clough-Penzien high-pass correction, under a
Saragoni & Hart (1974) envelope, scaled to a target PGA, from a fixed seed. The
site parameters are invented (a firm-to-soft range around 1.5-3.5 Hz); they are
not fitted to, and do not come from, any recorded earthquake. Records are kept
short (20 s at 0.01 s) so that the demo studies and the tests run quickly.

Usage: python scripts/make_suite_records.py
"""

from __future__ import annotations

import math
from pathlib import Path

from thist.synthetic import SaragoniHartEnvelope, synthesize, write_record
from thist.units import STANDARD_GRAVITY

HERE = Path(__file__).resolve().parent.parent / "inputs" / "records"

#: name -> (seed, predominant frequency Hz, ground damping, envelope peak time s, PGA in g)
SUITE: dict[str, tuple[int, float, float, float, float]] = {
    "suite-01.txt": (20270101, 1.6, 0.55, 4.0, 0.28),
    "suite-02.txt": (20270102, 2.0, 0.60, 5.0, 0.32),
    "suite-03.txt": (20270103, 2.5, 0.50, 3.5, 0.25),
    "suite-04.txt": (20270104, 3.0, 0.65, 4.5, 0.35),
    "suite-05.txt": (20270105, 1.8, 0.45, 6.0, 0.30),
    "suite-06.txt": (20270106, 3.5, 0.60, 3.0, 0.22),
    "suite-07.txt": (20270107, 2.2, 0.55, 5.5, 0.27),
}


def params(seed: int, f_hz: float, zeta: float, t_peak: float, pga_g: float) -> dict:
    """Keyword arguments of :func:`thist.synthetic.synthesize` for one suite record."""
    return dict(
        duration=20.0,
        dt=0.01,
        seed=seed,
        omega_g=2 * math.pi * f_hz,
        zeta_g=zeta,
        omega_f=2 * math.pi * 0.2,
        zeta_f=0.6,
        envelope=SaragoniHartEnvelope(b=2.0, t_peak=t_peak),
        target_pga=pga_g * STANDARD_GRAVITY,
    )


def main() -> None:
    """Write every suite record."""
    HERE.mkdir(parents=True, exist_ok=True)
    for name, row in SUITE.items():
        path = write_record(HERE / name, synthesize(**params(*row)))
        print(f"wrote {path}")


if __name__ == "__main__":
    main()
