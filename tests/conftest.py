"""Shared fixtures: a small valid case written into a temporary folder."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

CASE_TEXT = """\
title = "Test building"
notes = "three stories, made up for the tests"

[structure]
form = "chain"
stories = [
  {mass = "120 t", stiffness = "150 MN/m", height = "4.0 m"},
  {mass = "110 t", stiffness = "120 MN/m", height = "3.5 m"},
  {mass = "90 t", stiffness = "90 MN/m", height = "3.5 m", label = "Roof"},
]

[damping]
model = "rayleigh"
ratio = "5 %"
modes = [1, 2]

[record]
file = "record.txt"
unit = "g"
time_column = "time"
acceleration_column = "accel"

[analysis]
methods = ["newmark-average"]
dt = "0.005 s"
"""


def write_record(path: Path, n: int = 800, dt: float = 0.01, seed: int = 3) -> np.ndarray:
    """A short smooth random record in g, with a header row of column names."""
    rng = np.random.default_rng(seed)
    t = np.arange(n) * dt
    a = np.convolve(rng.standard_normal(n), np.ones(8) / 8, mode="same")
    a *= 0.2 * np.sin(np.pi * t / t[-1])
    lines = ["# made-up record for tests", "time accel"]
    lines += [f"{ti:.4f} {ai:.8e}" for ti, ai in zip(t, a, strict=True)]
    path.write_text("\n".join(lines) + "\n")
    return a


@pytest.fixture
def case_dir(tmp_path: Path) -> Path:
    """A folder with case.toml and record.txt that load and run."""
    (tmp_path / "case.toml").write_text(CASE_TEXT)
    write_record(tmp_path / "record.txt")
    return tmp_path
