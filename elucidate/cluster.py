"""Scale-out on a Dask distributed cluster (the optional ``cluster`` extra:
``pip install 'elucidate[cluster]'``).

:class:`DaskRunner` is a :class:`~elucidate.parallel.Runner`: the solver sends it the same jobs
it sends a local pool (generation subtrees, scoring batches), in the same order, and reads the
results back in that order, so the output equals a single-process run. At most ``in_flight``
jobs are out at once and each result is released on the cluster as soon as it is read, so
memory stays bounded however large the space. When a worker is lost, Dask's scheduler reruns
the jobs it held on the workers left; only those jobs are redone.

Every worker must have this same version of elucidate (and its tables) installed: jobs name
the package's functions, they do not carry code.
"""

from __future__ import annotations

from collections import deque
from collections.abc import Callable, Iterable, Iterator
from itertools import islice
from typing import TYPE_CHECKING, Any, TypeVar

from .errors import ElucidateError

if TYPE_CHECKING:
    from distributed import Client

__all__ = ["DaskRunner", "connect"]

J = TypeVar("J")
R = TypeVar("R")

#: jobs out on the cluster per worker thread, so no worker waits between jobs
PER_THREAD = 3


def _distributed() -> Any:
    try:
        import distributed
    except ImportError as exc:
        raise ElucidateError(
            "a Dask scheduler needs the cluster extra: pip install 'elucidate[cluster]'", key="--scheduler"
        ) from exc
    return distributed


def connect(address: str, *, timeout: float = 20.0) -> Client:
    """A client of the Dask scheduler at ``address`` (``tcp://host:8786``), or a clear error."""
    distributed = _distributed()
    try:
        client: Client = distributed.Client(address, timeout=timeout)
    except (OSError, TimeoutError, ValueError) as exc:
        raise ElucidateError(
            f"cannot reach the Dask scheduler at {address!r} ({exc}); start one with `dask scheduler` and "
            "workers with `dask worker ADDRESS --nthreads 1`, then pass the scheduler's address",
            key="--scheduler",
        ) from exc
    return client


class DaskRunner:
    """Jobs on a Dask cluster: an existing one by ``address``, or the given ``client``'s."""

    def __init__(self, address: str | None = None, *, client: Client | None = None, in_flight: int | None = None):
        if (address is None) == (client is None):
            raise ValueError("give exactly one of address and client")
        self._own = client is None
        self.client: Client = client if client is not None else connect(str(address))
        threads = sum(self.client.nthreads().values())
        if threads < 1:
            self.close()
            where = f"at {address!r}" if address else "of the given client"
            raise ElucidateError(f"the Dask scheduler {where} has no workers", key="--scheduler")
        self.workers = threads
        self.in_flight = in_flight or PER_THREAD * threads

    def map(self, fn: Callable[[J], R], jobs: Iterable[J]) -> Iterator[R]:
        """``fn`` over ``jobs`` on the cluster, results in job order, at most ``in_flight`` out.
        The first jobs are sent at once, before any result is read (the solver sends its next
        scoring batch while it reads the last)."""
        left = iter(jobs)
        pending: deque[Any] = deque(self.client.submit(fn, job, pure=False) for job in islice(left, self.in_flight))
        return self._results(fn, left, pending)

    def _results(self, fn: Callable[[J], R], left: Iterator[J], pending: deque[Any]) -> Iterator[R]:
        while pending:
            done = pending.popleft()
            for job in islice(left, 1):
                pending.append(self.client.submit(fn, job, pure=False))
            yield done.result()

    def close(self) -> None:
        if self._own:
            self.client.close()

    def __enter__(self) -> DaskRunner:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()
