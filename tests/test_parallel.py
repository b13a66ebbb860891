"""The local runners (elucidate/parallel.py): results in job order, and a pool that keeps a
bounded number of jobs sent ahead (common practice for work queues: a reader that stops early
leaves little behind)."""

from __future__ import annotations

from collections.abc import Iterator

import pytest

from elucidate.parallel import JOBS_AHEAD, PoolRunner, SerialRunner, local_runner


def _square(x: int) -> int:
    return x * x


def test_a_pool_gives_results_in_job_order() -> None:
    with PoolRunner(2) as runner:
        assert list(runner.map(_square, range(40))) == [x * x for x in range(40)]


def test_a_pool_sends_only_in_flight_jobs_ahead_of_the_reader() -> None:
    taken: list[int] = []

    def jobs() -> Iterator[int]:
        for x in range(100):
            taken.append(x)
            yield x

    with PoolRunner(2, in_flight=3) as runner:
        results = runner.map(_square, jobs())
        assert taken == [0, 1, 2]  # sent before any result is read
        assert next(results) == 0
        assert len(taken) == 4  # one more sent for the one read
        # a map left unread does not hold up the next one, which gives its own results
        assert list(runner.map(_square, [7, 8])) == [49, 64]
        assert list(results) == [x * x for x in range(1, 100)]


def test_local_runner_is_serial_for_one_worker_and_a_pool_for_more() -> None:
    assert isinstance(local_runner(1), SerialRunner)
    with local_runner(3) as runner:
        assert isinstance(runner, PoolRunner) and runner.in_flight == JOBS_AHEAD * 3


@pytest.mark.parametrize(("workers", "in_flight"), [(0, None), (2, 0)])
def test_a_pool_refuses_nonsense_sizes(workers: int, in_flight: int | None) -> None:
    with pytest.raises(ValueError, match="must be 1 or more"):
        PoolRunner(workers, in_flight=in_flight)
