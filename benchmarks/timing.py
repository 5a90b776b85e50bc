"""Timing helper shared by the benchmark modules (not a benchmark itself)."""

from __future__ import annotations

import time
from collections.abc import Callable
from typing import Any


def best_of(fn: Callable[[], Any], repeat: int = 5) -> tuple[float, Any]:
    """Smallest wall time of ``repeat`` calls, s, and the last result."""
    best, out = float("inf"), None
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t0)
    return best, out
