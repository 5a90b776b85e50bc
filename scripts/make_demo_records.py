"""Regenerate the synthetic demo record(s) in inputs/records/.

The record is stationary Gaussian white noise through a Kanai-Tajimi filter
(Kanai 1957; Tajimi 1960) with the Clough-Penzien high-pass correction, under a
Saragoni & Hart (1974) envelope, scaled to a target PGA, from a fixed seed. The
parameters describe an invented soft-soil site; they are not fitted to, and do
not come from, any recorded earthquake.

Usage: python scripts/make_demo_records.py
"""

from __future__ import annotations

import math
from pathlib import Path

from thist.synthetic import SaragoniHartEnvelope, synthesize, write_record
from thist.units import STANDARD_GRAVITY

HERE = Path(__file__).resolve().parent.parent / "inputs" / "records"

DEMO = {
    "alder-row-synthetic.txt": dict(
        duration=30.0,
        dt=0.01,
        seed=20261201,
        omega_g=2 * math.pi * 2.0,  # invented soft site, predominant frequency ~2 Hz
        zeta_g=0.6,
        omega_f=2 * math.pi * 0.2,
        zeta_f=0.6,
        envelope=SaragoniHartEnvelope(b=2.0, t_peak=6.0),
        target_pga=0.30 * STANDARD_GRAVITY,
    ),
}


def main() -> None:
    """Write every demo record."""
    HERE.mkdir(parents=True, exist_ok=True)
    for name, params in DEMO.items():
        path = write_record(HERE / name, synthesize(**params))
        print(f"wrote {path}")


if __name__ == "__main__":
    main()
