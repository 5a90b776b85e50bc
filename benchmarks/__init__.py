"""Speed and memory measurements of thist: ratios against references run in the same process.

Run them all with ``python -m benchmarks`` or one with ``python -m benchmarks.bench_linear``.
Importing this package sets ``OPENBLAS_NUM_THREADS=1`` (unless already set) before
numpy is imported: the benchmarks' small matrix products are faster and far less
noisy on one BLAS thread, on a machine whose cores are shared. Tests and CI never
import this package, so their threading is unchanged.
"""

import os

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
