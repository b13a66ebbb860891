"""Where the work runs: in this process, or in a pool of local worker processes (and, with the
``cluster`` extra, on a Dask cluster: :mod:`elucidate.cluster`).

Every runner maps a picklable top-level function over jobs and returns the results in job
order, so what is computed never depends on where it ran or on how many workers there were.
"""

from __future__ import annotations

from collections import deque
from collections.abc import Callable, Iterable, Iterator
from itertools import islice
from typing import TYPE_CHECKING, Protocol, TypeVar

if TYPE_CHECKING:
    from multiprocessing.pool import AsyncResult, Pool

__all__ = ["JOBS_AHEAD", "PoolRunner", "Runner", "SerialRunner", "local_runner"]

#: jobs per worker a local pool keeps sent and not yet read (results are read in job order: with
#: fewer, a worker stood idle while the reader waited on another's long job, docs/solver.md)
JOBS_AHEAD = 8

J = TypeVar("J")
R = TypeVar("R")


class Runner(Protocol):
    """Runs jobs; ``workers`` is how many run at once (1: in this process)."""

    workers: int

    def map(self, fn: Callable[[J], R], jobs: Iterable[J]) -> Iterator[R]:
        """``fn`` over ``jobs``, results in job order; jobs are taken as workers free up. A new
        map may be started before an earlier one's results are all read (the solver sends a
        scoring batch ahead): each returned iterator must still give its own results."""
        ...

    def close(self) -> None:
        """Release the workers (the runner cannot be used after)."""
        ...


class SerialRunner:
    """Every job in this process, one after another."""

    workers = 1

    def map(self, fn: Callable[[J], R], jobs: Iterable[J]) -> Iterator[R]:
        return (fn(job) for job in jobs)

    def close(self) -> None:
        return None

    def __enter__(self) -> SerialRunner:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()


class PoolRunner:
    """A pool of local worker processes, started when first used. Each map keeps at most
    ``in_flight`` jobs sent and not yet read (default: :data:`JOBS_AHEAD` per worker), so a map
    whose reader stops early (generation stopped at its limit) leaves only those for the
    workers to finish before the next map's jobs."""

    def __init__(self, workers: int, *, in_flight: int | None = None) -> None:
        if workers < 1:
            raise ValueError(f"workers must be 1 or more, got {workers}")
        if in_flight is not None and in_flight < 1:
            raise ValueError(f"in_flight must be 1 or more, got {in_flight}")
        self.workers = workers
        self.in_flight = in_flight if in_flight is not None else JOBS_AHEAD * workers
        self._pool: Pool | None = None

    def map(self, fn: Callable[[J], R], jobs: Iterable[J]) -> Iterator[R]:
        if self._pool is None:
            import multiprocessing

            self._pool = multiprocessing.Pool(self.workers)
        pool = self._pool
        left = iter(jobs)
        # the first jobs are sent at once, before any result is read
        pending = deque(pool.apply_async(fn, (job,)) for job in islice(left, self.in_flight))
        return self._results(pool, fn, left, pending)

    @staticmethod
    def _results(pool: Pool, fn: Callable[[J], R], left: Iterator[J], pending: deque[AsyncResult[R]]) -> Iterator[R]:
        while pending:
            done = pending.popleft()
            for job in islice(left, 1):
                pending.append(pool.apply_async(fn, (job,)))
            yield done.get()

    def close(self) -> None:
        if self._pool is not None:
            self._pool.terminate()
            self._pool.join()
            self._pool = None

    def __enter__(self) -> PoolRunner:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()


def local_runner(workers: int) -> SerialRunner | PoolRunner:
    """This process for one worker, a pool of processes for more."""
    return SerialRunner() if workers == 1 else PoolRunner(workers)
