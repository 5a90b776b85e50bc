"""Stop rules of an IDA, applied so that the store never depends on finishing order.

An IDA runs each record's levels from the lowest up and stops a (record, method)
chain after the first level that collapses or fails. Executors run jobs of
higher levels ahead of time, in parallel; this gate decides which outcomes are
*kept*: an outcome at level l is written only once every lower level of its
chain is written and none of them stopped the chain; outcomes above a stop are
dropped. The store therefore holds, for every chain, exactly the levels an
uninterrupted level-by-level run would have produced, whatever the number of
workers and the order in which jobs finish. A suite has no stop rules: every
outcome is written at once.
"""

from __future__ import annotations

from collections.abc import Iterable

from thist.batch.jobs import Job, JobOutcome

#: Statuses that end a chain of an IDA.
STOPPING = ("collapsed", "failed")


class Gate:
    """Which outcomes to write, and which jobs are still wanted.

    Parameters
    ----------
    stop_rules : bool
        True for an IDA (chains stop), False for a suite.
    n_levels : int
        Number of intensity levels.
    stored : iterable of (Job, status)
        Jobs already in the store (on resume), with their status.
    """

    def __init__(self, stop_rules: bool, n_levels: int, stored: Iterable[tuple[Job, str]] = ()):
        self.stop_rules = stop_rules
        self.n_levels = n_levels
        self._next: dict[tuple[int, int], int] = {}
        self._stopped: set[tuple[int, int]] = set()
        self._buffer: dict[tuple[int, int], dict[int, JobOutcome]] = {}
        if not stop_rules:
            return
        by_chain: dict[tuple[int, int], dict[int, str]] = {}
        for job, status in stored:
            by_chain.setdefault(job.chain, {})[job.level_index] = status
        for chain, levels in by_chain.items():
            li = 0
            while li in levels:
                li += 1
                if levels[li - 1] in STOPPING:
                    self._stopped.add(chain)
                    break
            self._next[chain] = li

    def wanted(self, job: Job) -> bool:
        """False for a job above the level where its chain stopped."""
        if not self.stop_rules:
            return True
        if job.chain in self._stopped:
            return job.level_index < self._next.get(job.chain, 0)
        return True

    def accept(self, outcome: JobOutcome) -> list[JobOutcome]:
        """Take a finished outcome; return the outcomes to write now, lowest level first."""
        if not self.stop_rules:
            return [outcome]
        job = outcome.job
        chain = job.chain
        if chain in self._stopped or job.level_index < self._next.get(chain, 0):
            return []
        self._buffer.setdefault(chain, {})[job.level_index] = outcome
        out: list[JobOutcome] = []
        buf = self._buffer[chain]
        li = self._next.get(chain, 0)
        while li in buf:
            o = buf.pop(li)
            out.append(o)
            li += 1
            if o.status in STOPPING:
                self._stopped.add(chain)
                buf.clear()
                break
        self._next[chain] = li
        return out

    def skipped(self, job: Job) -> bool:
        """True if the job will never be written (its chain stopped below it)."""
        return not self.wanted(job)
