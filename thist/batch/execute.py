"""Executors of a study: in this process, a local process pool, or a Dask cluster.

All three take the same :class:`~thist.batch.jobs.StudyContext` once (the pool
through its worker initializer, Dask by ``Client.scatter`` with broadcast) and
then receive chunks of jobs, which carry only their indices. :func:`execute`
drives any of them: it sizes chunks from a measurement of the per-task
overhead against the time of one job, keeps every worker busy, passes each
outcome through the IDA gate (:mod:`thist.batch.gate`) to the writer as soon as
its chunk returns, shows a progress bar on a terminal, and on Ctrl-C cancels
what has not started, shuts the workers down and raises :class:`Interrupted`.

The Dask path needs the optional packages ``dask`` and ``distributed``
(``pip install 'thist[cluster]'``); nothing else here does.
"""

from __future__ import annotations

import concurrent.futures as cf
import contextlib
import math
import multiprocessing
import os
import queue
import signal
import statistics
import sys
import time
from collections import deque
from collections.abc import Callable, Iterator, Sequence
from dataclasses import dataclass
from typing import Any, Protocol

from thist import __version__
from thist.batch.gate import Gate
from thist.batch.jobs import Job, JobOutcome, StudyContext, run_chunk
from thist.errors import InputError

#: Scheduling overhead allowed per chunk, as a fraction of the chunk's work.
OVERHEAD_TARGET = 0.02

#: Largest chunk, jobs (a crash or Ctrl-C loses at most the chunks in flight).
MAX_CHUNK = 32

#: Chunks per worker the chunk size must leave, for load balancing at the end.
CHUNKS_PER_WORKER = 4

#: Environment variable naming a Dask scheduler when ``--scheduler`` is not given.
SCHEDULER_ENV = "THIST_SCHEDULER"

INSTALL_HINT = "pip install 'thist[cluster]'"


class Interrupted(Exception):
    """Ctrl-C during a study: finished jobs are in the store; workers are shut down."""

    def __init__(self, done: int, total: int):
        self.done, self.total = done, total
        super().__init__(f"interrupted after {done} of {total} jobs")


class Executor(Protocol):
    """What :func:`execute` needs from an executor."""

    name: str
    slots: int
    depth: int

    def submit(self, chunk: list[Job]) -> Any: ...

    def wait_first(self, futures: list[Any]) -> list[Any]: ...

    def warm_up(self) -> None: ...

    def close(self, abort: bool = False) -> None: ...


class InProcess:
    """Runs each chunk at once in this process (``--workers 1``)."""

    name = "in-process"
    slots = 1
    depth = 1

    def __init__(self, ctx: StudyContext):
        self._ctx = ctx

    def submit(self, chunk: list[Job]) -> cf.Future:
        fut: cf.Future = cf.Future()
        fut.set_result(run_chunk(self._ctx, chunk))
        return fut

    def wait_first(self, futures: list[Any]) -> list[Any]:
        return list(futures)

    def warm_up(self) -> None:
        return None

    def close(self, abort: bool = False) -> None:
        return None


#: The study context inside a pool worker process, set once by the pool initializer.
#: The only module state of the package besides the unit registry; the parent
#: process never sets it.
_WORKER_CONTEXT: StudyContext | None = None


def _init_worker(ctx: StudyContext) -> None:
    global _WORKER_CONTEXT
    # Ctrl-C goes to the whole process group: the parent handles it and shuts the
    # pool down; workers must not die half-way through a chunk on their own.
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    _WORKER_CONTEXT = ctx


def _pool_chunk(chunk: list[Job]) -> list[JobOutcome]:
    assert _WORKER_CONTEXT is not None, "worker started without a study context"
    return run_chunk(_WORKER_CONTEXT, chunk)


def _ping(hold: float) -> int:
    time.sleep(hold)
    return os.getpid()


#: Thread-count variables of the numerical libraries, set to 1 for pool workers (one
#: process per core; threads inside each would oversubscribe the cores). A value the
#: user has set is kept.
THREAD_VARIABLES = (
    "OMP_NUM_THREADS",
    "OPENBLAS_NUM_THREADS",
    "MKL_NUM_THREADS",
    "VECLIB_MAXIMUM_THREADS",
    "NUMEXPR_NUM_THREADS",
    "NUMBA_NUM_THREADS",
)


@contextlib.contextmanager
def _single_threaded_children() -> Iterator[None]:
    """Environment for starting worker processes: one thread per numerical library."""
    added = [v for v in THREAD_VARIABLES if v not in os.environ]
    for v in added:
        os.environ[v] = "1"
    try:
        yield
    finally:
        for v in added:
            os.environ.pop(v, None)


class LocalPool:
    """A pool of ``workers`` local processes.

    Workers start fresh (forkserver where the platform has it, else spawn), so no
    state leaks from the parent; the forkserver imports thist once and forks the
    workers from it, which keeps start-up to about one import of the package.
    """

    name = "process pool"

    def __init__(self, ctx: StudyContext, workers: int):
        self.slots = workers
        self.depth = 2 * workers
        if "forkserver" in multiprocessing.get_all_start_methods():
            mp = multiprocessing.get_context("forkserver")
            mp.set_forkserver_preload(["thist.batch.jobs"])
        else:
            mp = multiprocessing.get_context("spawn")
        self._pool = cf.ProcessPoolExecutor(
            max_workers=workers, mp_context=mp, initializer=_init_worker, initargs=(ctx,)
        )

    def submit(self, chunk: list[Job]) -> cf.Future:
        return self._pool.submit(_pool_chunk, chunk)

    def wait_first(self, futures: list[Any]) -> list[Any]:
        done, _ = cf.wait(futures, return_when=cf.FIRST_COMPLETED)
        return list(done)

    def warm_up(self) -> None:
        """Wait until every worker process has started (so timing excludes start-up)."""
        seen: set[int] = set()
        deadline = time.monotonic() + 120.0
        with _single_threaded_children():
            while len(seen) < self.slots and time.monotonic() < deadline:
                futs = [self._pool.submit(_ping, 0.05) for _ in range(self.slots)]
                seen |= {f.result() for f in futs}

    def close(self, abort: bool = False) -> None:
        if abort:
            terminate = getattr(self._pool, "terminate_workers", None)  # Python >= 3.14
            if terminate is not None:
                terminate()
                return
            procs = list(getattr(self._pool, "_processes", {}).values())
            self._pool.shutdown(wait=False, cancel_futures=True)
            for p in procs:
                p.terminate()
            for p in procs:
                p.join(5)
            return
        self._pool.shutdown(wait=True)


def _remote_version() -> str:
    import thist

    return thist.__version__


class DaskCluster:
    """An existing Dask distributed cluster, reached through its scheduler address."""

    name = "Dask cluster"

    def __init__(self, ctx: StudyContext, address: str):
        try:
            import distributed
        except ImportError:
            raise InputError(
                f"running on a Dask cluster needs the optional packages: {INSTALL_HINT}",
                "--scheduler",
            ) from None
        try:
            self._client = distributed.Client(address, timeout="20s", set_as_default=False)
        except (OSError, TimeoutError, ValueError) as exc:
            raise InputError(
                f"cannot reach the Dask scheduler at {address}: {exc}", "--scheduler"
            ) from None
        try:
            nthreads = self._client.nthreads()
            if not nthreads:
                raise InputError(f"the cluster at {address} has no workers", "--scheduler")
            versions = set(self._client.run(_remote_version).values())
            if versions != {__version__}:
                raise InputError(
                    f"workers run thist {', '.join(sorted(versions))}, this is {__version__}; "
                    "install the same version on every worker",
                    "--scheduler",
                )
            self.slots = int(sum(nthreads.values()))
            self.depth = 2 * self.slots
            # The model and records go to every worker once; jobs carry only indices.
            self._ctx = self._client.scatter(ctx, broadcast=True, hash=False)
        except BaseException:
            self._client.close()
            raise
        self._futures: list[Any] = []
        self._finished: queue.Queue = queue.Queue()

    def submit(self, chunk: list[Job]) -> Any:
        fut = self._client.submit(run_chunk, self._ctx, chunk, pure=False)
        self._futures.append(fut)
        fut.add_done_callback(self._finished.put)
        return fut

    def wait_first(self, futures: list[Any]) -> list[Any]:
        wanted = set(futures)
        while True:
            done = [f for f in futures if f.done()]
            if done:
                return done
            with contextlib.suppress(queue.Empty):
                f = self._finished.get(timeout=0.5)
                if f in wanted:
                    return [f, *(g for g in futures if g is not f and g.done())]

    def warm_up(self) -> None:
        return None

    def close(self, abort: bool = False) -> None:
        if abort:
            pending = [f for f in self._futures if not f.done()]
            if pending:
                self._client.cancel(pending)
        self._client.close()


def make_executor(ctx: StudyContext, workers: int | None, scheduler: str | None) -> Executor:
    """The executor for the given options.

    Parameters
    ----------
    ctx : StudyContext
    workers : int or None
        Local processes (default: the machine's cores); 1 runs in this process.
    scheduler : str or None
        Address of a Dask scheduler (``tcp://host:port``); None falls back to the
        ``THIST_SCHEDULER`` environment variable, then to the local executors.
    """
    address = scheduler or os.environ.get(SCHEDULER_ENV) or None
    if address:
        return DaskCluster(ctx, address)
    n = workers if workers is not None else (os.cpu_count() or 1)
    if n < 1:
        raise InputError(f"must be at least 1, got {n}", "--workers")
    return InProcess(ctx) if n == 1 else LocalPool(ctx, n)


@dataclass(frozen=True)
class ExecutionSummary:
    """How a study ran.

    Attributes
    ----------
    executor : str
    slots : int
        Workers (threads on a cluster) that ran jobs.
    chunk_size : int
        Jobs per chunk chosen from the measurement.
    overhead : float
        Measured overhead per chunk, s (round trip less the work).
    job_time : float
        Mean wall time of one job in a worker, s.
    ran : int
        Jobs run now.
    written : int
        Rows written to the store now.
    wall : float
        Wall time of the execution, s.
    """

    executor: str
    slots: int
    chunk_size: int
    overhead: float
    job_time: float
    ran: int
    written: int
    wall: float


def chunk_size_for(overhead: float, job_time: float, remaining: int, slots: int) -> int:
    """Jobs per chunk so that overhead stays below :data:`OVERHEAD_TARGET` of the work.

    Parameters
    ----------
    overhead : float
        Scheduling overhead of one chunk, s.
    job_time : float
        Time of one job, s.
    remaining : int
        Jobs left to send.
    slots : int
        Workers.

    Returns
    -------
    int
        ``ceil(overhead / (target · job_time))``, at most :data:`MAX_CHUNK` and at
        most what leaves :data:`CHUNKS_PER_WORKER` chunks per worker; at least 1.
    """
    if job_time <= 0:
        return 1
    size = math.ceil(overhead / (OVERHEAD_TARGET * job_time))
    balance = max(1, remaining // (CHUNKS_PER_WORKER * max(1, slots)))
    return max(1, min(size, MAX_CHUNK, balance))


def _median(x: list[float]) -> float:
    return statistics.median(x) if x else 0.0


def _mean(x: list[float]) -> float:
    return statistics.fmean(x) if x else 0.0


class _Progress:
    """tqdm on a terminal (stderr is a TTY); silent otherwise."""

    def __init__(self, total: int, desc: str, enabled: bool | None):
        on = sys.stderr.isatty() if enabled is None else enabled
        self._bar = None
        if on:
            from tqdm import tqdm

            self._bar = tqdm(total=total, desc=desc, unit="run", dynamic_ncols=True)

    def update(self, n: int) -> None:
        if self._bar is not None and n:
            self._bar.update(n)

    def shrink(self, n: int) -> None:
        if self._bar is not None and n:
            self._bar.total -= n
            self._bar.refresh()

    def close(self) -> None:
        if self._bar is not None:
            self._bar.close()


def execute(
    jobs: Sequence[Job],
    executor: Executor,
    gate: Gate,
    write: Callable[[JobOutcome], None],
    *,
    progress: bool | None = None,
    desc: str = "study",
) -> ExecutionSummary:
    """Run ``jobs`` on ``executor``; write each kept outcome as its chunk returns.

    Parameters
    ----------
    jobs : sequence of Job
        In the order to send them (lowest level first).
    executor : Executor
    gate : Gate
        Decides what is written (IDA stop rules) and what is still wanted.
    write : callable
        Called with each outcome to keep, in the parent process.
    progress : bool, optional
        Force the progress bar on or off (default: on if stderr is a terminal).
    desc : str
        Label of the progress bar.

    Returns
    -------
    ExecutionSummary

    Raises
    ------
    Interrupted
        On Ctrl-C, after cancelling what had not started and shutting down.
    """
    start = time.perf_counter()
    queue = deque(j for j in jobs if gate.wanted(j))
    total = len(queue)
    bar = _Progress(total, desc, progress)
    pending: dict[Any, tuple[list[Job], float]] = {}
    ran = written = 0
    elapsed: list[float] = []
    overheads: list[float] = []
    chunk = 1
    measured = isinstance(executor, InProcess)
    # Two waves of one job per worker before the chunk size is chosen: the first
    # warms each worker up (lazy imports, caches); the second is measured.
    waves = 0
    m_over = m_job = float("nan")

    def take(n: int) -> list[Job]:
        out: list[Job] = []
        while queue and len(out) < n:
            j = queue.popleft()
            if gate.wanted(j):
                out.append(j)
            else:
                bar.shrink(1)
        return out

    try:
        executor.warm_up()
        while pending or queue:
            if not measured and not pending:
                for j in take(executor.slots):
                    pending[executor.submit([j])] = ([j], time.perf_counter())
                overheads.clear()
                elapsed.clear()
            elif measured:
                while len(pending) < executor.depth and queue:
                    c = take(chunk)
                    if not c:
                        break
                    pending[executor.submit(c)] = (c, time.perf_counter())
            if not pending:
                break
            for fut in executor.wait_first(list(pending)):
                c, sent = pending.pop(fut)
                outcomes = fut.result()
                back = time.perf_counter()
                work = sum(o.elapsed for o in outcomes)
                elapsed += [o.elapsed for o in outcomes]
                overheads.append(max(0.0, back - sent - work))
                ran += len(outcomes)
                stops = False
                for o in outcomes:
                    for w in gate.accept(o):
                        write(w)
                        written += 1
                        stops = stops or not gate.wanted(w.job)
                bar.update(len(outcomes))
                if stops:
                    before = len(queue)
                    queue = deque(j for j in queue if gate.wanted(j))
                    bar.shrink(before - len(queue))
            if not measured and not pending:
                waves += 1
                if waves < 2:
                    continue
                measured = True
                m_over = statistics.median(overheads)
                m_job = statistics.fmean(elapsed)
                chunk = chunk_size_for(m_over, m_job, len(queue), executor.slots)
    except KeyboardInterrupt:
        bar.close()
        executor.close(abort=True)
        raise Interrupted(written, total) from None
    except BaseException:
        bar.close()
        executor.close(abort=True)
        raise
    bar.close()
    executor.close()
    return ExecutionSummary(
        executor.name,
        executor.slots,
        chunk,
        m_over if overheads and m_over == m_over else _median(overheads),
        m_job if elapsed and m_job == m_job else _mean(elapsed),
        ran,
        written,
        time.perf_counter() - start,
    )
