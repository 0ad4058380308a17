"""Where batches run: in this process, in worker processes on this machine, or as tasks on a dask cluster.

Every executor takes batches in input order and gives their outcomes back in the same order, keeping only a
bounded number of batches in flight (so memory does not grow with the corpus, and output appears as soon as
the earliest unfinished batch is done).
"""

from __future__ import annotations

import atexit
import logging
import multiprocessing
import os
import sys
import threading
import time
from collections import deque
from collections.abc import Callable, Iterable, Iterator
from concurrent.futures import ProcessPoolExecutor
from dataclasses import replace

from gendertrace.errors import GendertraceError
from gendertrace.scale.plan import ScoringPlan, scorer_for
from gendertrace.scale.work import Batch, BatchOutcome, iter_outcomes, score_batch

DASK_HINT = "the dask executor needs dask.distributed: pip install 'gendertrace[dask]'"


def available_cores() -> int:
    """Cores this process may run on (its CPU affinity where the system tells it)."""
    try:
        return len(os.sched_getaffinity(0))
    except AttributeError:  # pragma: no cover - not on Linux
        return os.cpu_count() or 1


def _in_order(submit: Callable[[Batch], object], result: Callable[[object], BatchOutcome],
              batches: Iterable[Batch], window: int) -> Iterator[BatchOutcome]:
    """Submit up to `window` batches ahead and yield outcomes in submission order."""
    pending: deque = deque()
    it = iter(batches)
    exhausted = False
    while True:
        while not exhausted and len(pending) < window:
            batch = next(it, None)
            if batch is None:
                exhausted = True
            else:
                pending.append(submit(batch))
        if not pending:
            return
        yield result(pending.popleft())


class InlineExecutor:
    """Batches one after the other in this process (`--jobs 1`)."""

    workers = 1

    def __init__(self, plan: ScoringPlan | None = None, scorer=None) -> None:
        if (plan is None) == (scorer is None):
            raise ValueError("give a plan or a scorer")
        self.plan, self.scorer = plan, scorer

    def describe(self) -> str:
        return "this process"

    def run(self, batches: Iterable[Batch]) -> Iterator[BatchOutcome]:
        scorer = self.scorer if self.scorer is not None else scorer_for(self.plan)
        for batch in batches:
            yield from iter_outcomes(scorer, batch)  # each document as soon as it is scored


def _start_worker(plan: ScoringPlan) -> None:
    _exit_with_parent()
    _exit_without_teardown()
    scorer_for(plan)  # rules and the aligner once per worker; pipelines load on their first uncached text


def _exit_without_teardown() -> None:
    """Let this worker leave without freeing its heap object by object (pipelines, vocabularies, caches: about
    0.6 s after a long run, during which the parent waits in its shutdown).

    Safe because of what has happened by the time exit hooks run in a pool worker: multiprocessing has already
    run its own clean-up, every result has reached the parent (the pool's result queue writes synchronously),
    and every parse-cache transaction is committed (SQLite's WAL survives a process exit; the parent's own
    connection checkpoints it). Hooks registered after this one still run first (LIFO); log handlers and the
    standard streams are flushed here."""

    def leave() -> None:
        logging.shutdown()
        sys.stdout.flush()
        sys.stderr.flush()
        os._exit(0)

    atexit.register(leave)


def _exit_with_parent(interval: float = 0.5) -> None:
    """End this worker when the process that started it is gone (killed, say): pool workers otherwise wait
    for work forever, holding their pipelines in memory."""
    parent = os.getppid()

    def watch() -> None:
        while True:
            time.sleep(interval)
            if os.getppid() != parent:
                os._exit(1)  # nobody is left to read this worker's results

    threading.Thread(target=watch, name="parent-watch", daemon=True).start()


class ProcessExecutor:
    """Batches in `jobs` spawned worker processes on this machine; each builds its Scorer once."""

    def __init__(self, plan: ScoringPlan, jobs: int) -> None:
        # One core per worker: eflomal would otherwise start a thread per core in every worker.
        self.plan = plan if plan.align_threads else replace(plan, align_threads=1)
        self.workers = jobs

    def describe(self) -> str:
        return f"{self.workers} worker processes"

    def run(self, batches: Iterable[Batch]) -> Iterator[BatchOutcome]:
        # spawn, not fork: a forked copy of a process that has loaded pipelines or opened SQLite is unsafe.
        context = multiprocessing.get_context("spawn")
        pool = ProcessPoolExecutor(self.workers, mp_context=context, initializer=_start_worker,
                                   initargs=(self.plan,))
        try:
            yield from _in_order(lambda b: pool.submit(score_batch, self.plan, b), lambda f: f.result(),
                                 batches, 2 * self.workers)
        finally:
            pool.shutdown(wait=True, cancel_futures=True)


class DaskExecutor:
    """Batches as tasks on a dask.distributed cluster, reached at `address` (e.g. tcp://host:8786).

    Every worker must have gendertrace and the language pipelines installed; each worker process builds its
    Scorer on its first task, keeps it, and scores one batch at a time (start workers with one thread and
    as many processes as cores). Documents and outcomes travel pickled between the client and the
    cluster, as dask sends all task data: use it on a cluster you trust.
    """

    def __init__(self, plan: ScoringPlan, address: str, timeout: float = 30.0) -> None:
        self.plan = plan if plan.align_threads else replace(plan, align_threads=1)
        self.address, self.timeout = address, timeout
        self.workers = 0

    def describe(self) -> str:
        return f"dask cluster at {self.address} ({self.workers} worker threads)"

    def run(self, batches: Iterable[Batch]) -> Iterator[BatchOutcome]:
        try:
            from distributed import Client
        except ImportError as exc:
            raise GendertraceError(DASK_HINT) from exc
        try:
            client = Client(self.address, timeout=self.timeout, set_as_default=False)
        except OSError as exc:
            raise GendertraceError(f"cannot reach the dask scheduler at {self.address}: {exc}") from exc
        try:
            self.workers = max(1, sum(client.nthreads().values()))
            yield from _in_order(lambda b: client.submit(score_batch, self.plan, b, pure=False),
                                 lambda f: f.result(), batches, 2 * self.workers)
        finally:
            client.close()
