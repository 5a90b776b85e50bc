"""Timing helper shared by the benchmark modules (not a benchmark itself)."""

from __future__ import annotations

import os
import subprocess
import sys
import tempfile
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


def fresh_process_times(code: str, cache_dir: str) -> tuple[float, ...]:
    """The numbers ``code`` prints, run in a fresh Python with its numba cache in ``cache_dir``.

    ``code`` times its own imports and calls and prints the seconds on one line.
    """
    env = {**os.environ, "NUMBA_CACHE_DIR": cache_dir}
    out = subprocess.run(
        [sys.executable, "-c", code], env=env, capture_output=True, text=True, check=True
    )
    return tuple(float(x) for x in out.stdout.split())


def print_compile_times(code: str, what: str) -> None:
    """Run ``code`` in a fresh process with an empty numba cache, then again with that
    cache, and print both: compile time apart from run time.

    ``code`` prints three times, s: its imports, its first calls and the same calls
    again; ``what`` names those calls.
    """
    with tempfile.TemporaryDirectory() as cache:
        imp_cold, first_cold, again_cold = fresh_process_times(code, cache)
        imp_warm, first_warm, again_warm = fresh_process_times(code, cache)
    print(f"  compile time (fresh process, first calls of {what}):")
    print(
        f"    empty numba cache: first calls {first_cold:6.2f} s (compiles and caches), "
        f"again {again_cold * 1e3:.1f} ms; import {imp_cold:.2f} s"
    )
    print(
        f"    cached (a second run): first calls {first_warm:6.2f} s (loads the cache), "
        f"again {again_warm * 1e3:.1f} ms; import {imp_warm:.2f} s"
    )
