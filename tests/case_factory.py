"""Small invented cases for the report, energy and comparison tests.

The record is Kanai-Tajimi filtered white noise (Kanai 1957; Tajimi 1960) from a
fixed seed, under a trapezoidal envelope: an invented scenario, not a real event.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
from scipy import signal

CASE_TEMPLATE = """\
title = {title}
notes = "Invented five-story frame for tests."

[structure]
stories = [
{stories}
]

[damping]
model = "rayleigh"
ratio = 0.05
modes = [1, 3]

[record]
file = "record.csv"
unit = "g"

[analysis]
methods = {methods}
{dt_line}
{checks}
"""


def synthetic_record(dt: float = 0.01, duration: float = 8.0, pga_g: float = 0.3) -> np.ndarray:
    """Kanai-Tajimi filtered noise, ω_g = 15 rad/s, ζ_g = 0.6, seed 20240601, in g."""
    n = int(round(duration / dt)) + 1
    rng = np.random.default_rng(20240601)
    w = rng.standard_normal(n)
    wg, zg = 15.0, 0.6
    b, a = signal.bilinear([2 * zg * wg, wg**2], [1.0, 2 * zg * wg, wg**2], fs=1.0 / dt)
    x = signal.lfilter(b, a, w)
    t = np.arange(n) * dt
    env = np.clip(np.minimum(t / 1.0, (duration - t) / 2.0), 0.0, 1.0)
    x = x * env
    return t, pga_g * x / np.max(np.abs(x))


def write_case(
    folder: Path,
    *,
    title: str = "Five-story test frame",
    methods: tuple[str, ...] = ("newmark-average",),
    dt: str | None = None,
    drift_limit: tuple[float, str] | None = None,
    n_stories: int = 5,
    record_dt: float = 0.01,
    duration: float = 8.0,
    stiffness_scale: float = 1.0,
) -> Path:
    """Write case.toml and record.csv into ``folder``; return the case path."""
    folder.mkdir(parents=True, exist_ok=True)
    t, ag = synthetic_record(record_dt, duration)
    lines = ["time,acc"] + [f"{ti:.4f},{ai:.8e}" for ti, ai in zip(t, ag, strict=True)]
    (folder / "record.csv").write_text("\n".join(lines) + "\n", encoding="utf-8")
    stories = ",\n".join(
        f'  {{ mass = "{300 - 20 * i} t", stiffness = "{(400 - 50 * i) * stiffness_scale:g} MN/m", '
        f'height = "{4.5 if i == 0 else 3.5} m", label = "F{i + 1}" }}'
        for i in range(n_stories)
    )
    checks = ""
    if drift_limit is not None:
        checks = (
            f"[checks]\ndrift_ratio_limit = {drift_limit[0]}\n"
            f"drift_ratio_limit_basis = {_toml_string(drift_limit[1])}\n"
        )
    text = CASE_TEMPLATE.format(
        title=_toml_string(title),
        stories=stories,
        methods="[" + ", ".join(f'"{m}"' for m in methods) + "]",
        dt_line=f'dt = "{dt}"' if dt else "",
        checks=checks,
    )
    path = folder / "case.toml"
    path.write_text(text, encoding="utf-8")
    return path


def _toml_string(text: str) -> str:
    """A TOML basic string (JSON escaping is valid TOML for these characters)."""
    import json

    return json.dumps(text, ensure_ascii=False)
