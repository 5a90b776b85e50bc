"""Run every ``bench_*.py`` module of this package in turn (``python -m benchmarks``).

Modules are found by name, in alphabetical order; each one's ``main()`` prints its
own timings and ratios. ``python -m benchmarks linear memory`` runs only the
modules whose names contain one of the given words.
"""

from __future__ import annotations

import importlib
import platform
import sys
import time
from pathlib import Path


def discover() -> list[str]:
    """Module names ``benchmarks.bench_*`` next to this file, sorted."""
    here = Path(__file__).resolve().parent
    return [f"benchmarks.{p.stem}" for p in sorted(here.glob("bench_*.py"))]


def main(argv: list[str]) -> int:
    """Run the selected benchmark modules; return the number that failed."""
    import os

    names = [m for m in discover() if not argv or any(w in m for w in argv)]
    print(f"python {platform.python_version()} on {platform.machine()}, {os.cpu_count()} CPUs")
    print(
        "; ".join(
            f"{k}={os.environ.get(k)}"
            for k in ("OPENBLAS_NUM_THREADS", "OPENBLAS_CORETYPE", "OPENBLAS_L2_SIZE")
        )
    )
    failed = 0
    for name in names:
        print(f"\n=== {name} ===", flush=True)
        start = time.perf_counter()
        try:
            importlib.import_module(name).main()
        except Exception as exc:  # one broken benchmark must not hide the others
            failed += 1
            print(f"FAILED: {type(exc).__name__}: {exc}")
        print(f"({time.perf_counter() - start:.1f} s)", flush=True)
    return failed


if __name__ == "__main__":
    sys.exit(1 if main(sys.argv[1:]) else 0)
