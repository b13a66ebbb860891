"""Where the work runs: in this process, or in a pool of local worker processes (and, with the
``cluster`` extra, on a Dask cluster: :mod:`elucidate.cluster`).

Every runner maps a picklable top-level function over jobs and returns the results in job
order, so what is computed never depends on where it ran or on how many workers there were.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Iterator
from typing import TYPE_CHECKING, Protocol, TypeVar

if TYPE_CHECKING:
    from multiprocessing.pool import Pool

__all__ = ["PoolRunner", "Runner", "SerialRunner", "local_runner"]

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
    """A pool of local worker processes, started when first used."""

    def __init__(self, workers: int) -> None:
        if workers < 1:
            raise ValueError(f"workers must be 1 or more, got {workers}")
        self.workers = workers
        self._pool: Pool | None = None

    def map(self, fn: Callable[[J], R], jobs: Iterable[J]) -> Iterator[R]:
        if self._pool is None:
            import multiprocessing

            self._pool = multiprocessing.Pool(self.workers)
        return self._pool.imap(fn, jobs, chunksize=1)

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
