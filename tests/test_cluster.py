"""Scale-out on Dask (elucidate.cluster) against one process: a LocalCluster of two worker
processes must give byte-identical output, also when a worker is killed mid-run (Dask reruns the
jobs it held; self-consistency: the one-process run is the reference)."""

from __future__ import annotations

import io
import os
import signal
from collections.abc import Iterator
from pathlib import Path

import pytest

distributed = pytest.importorskip("distributed", reason="the cluster extra is part of the test extras")

from elucidate import load_case, parse_formula  # noqa: E402
from elucidate.cli import main  # noqa: E402
from elucidate.cluster import DaskRunner, connect  # noqa: E402
from elucidate.errors import ElucidateError  # noqa: E402
from elucidate.generator import GeneratorOptions, isomer_smiles  # noqa: E402
from elucidate.solver import solve  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
pytestmark = [pytest.mark.xdist_group("cluster"), pytest.mark.slow]


@pytest.fixture(scope="module")
def client() -> Iterator[distributed.Client]:
    cluster = distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None)
    with distributed.Client(cluster) as c:
        yield c
    cluster.close()


@pytest.mark.parametrize(("formula", "kekule"), [("C7H14O", False), ("C8H10", True), ("C5H11N", False)])
def test_generation_on_a_cluster_equals_one_process(client, formula: str, kekule: bool) -> None:
    options = GeneratorOptions(kekule=kekule)
    serial = list(isomer_smiles(parse_formula(formula), options))
    removed: dict[str, int] = {}
    with DaskRunner(client=client) as runner:
        assert runner.workers == 2
        assert list(isomer_smiles(parse_formula(formula), options, removed=removed, runner=runner)) == serial


def test_solve_command_on_a_cluster_prints_what_one_process_prints(client) -> None:
    case = str(ROOT / "cases" / "cr-0611-j.yaml")
    runs = []
    # --no-record: a recorded first run would make the second follow its shortlist (scored
    # first, as watched), which changes what each scoring pass settled, though not the result
    for extra in (["--workers", "1"], ["--scheduler", client.scheduler.address]):
        out, err = io.StringIO(), io.StringIO()
        assert main(["solve", case, "--json", "--no-record", *extra], stdout=out, stderr=err) == 0, err.getvalue()
        runs.append(out.getvalue())
    assert runs[0] == runs[1]


def test_a_worker_killed_mid_run_costs_a_rerun_not_the_answer(client) -> None:
    case = load_case(ROOT / "cases" / "cr-0611-j.yaml")
    reference = solve(case, workers=1, shortlist=0)
    before = client.run(os.getpid)
    killed: list[int] = []

    def kill_one(stage: str, done: int, total: int | None) -> None:
        # the first scoring batch is back and the rest are still to come: kill a worker now
        if stage == "scoring" and not killed and total is not None and done < total:
            pid = sorted(before.values())[0]
            os.kill(pid, signal.SIGKILL)
            killed.append(pid)

    with DaskRunner(client=client) as runner:
        again = solve(case, runner=runner, shortlist=0, progress=kill_one)
    assert killed, "the run ended before a worker could be killed"
    assert [c.as_dict() for c in again.candidates] == [c.as_dict() for c in reference.candidates]
    assert again.scoring_passes == reference.scoring_passes
    client.wait_for_workers(2, timeout=60)  # the nanny restarts the killed worker
    assert killed[0] not in client.run(os.getpid).values()


def test_a_map_started_before_the_last_is_read_gives_each_its_own_results(client) -> None:
    # the solver sends a scoring batch ahead: a second map while the first is unread; the first
    # jobs of each are on the cluster at once, and each iterator gives its own results in order
    with DaskRunner(client=client, in_flight=3) as runner:
        first = runner.map(abs, range(0, -12, -1))
        second = runner.map(abs, range(-100, -105, -1))
        assert list(second) == [100, 101, 102, 103, 104]
        assert list(first) == list(range(12))


def test_an_unreachable_scheduler_is_a_clear_error() -> None:
    with pytest.raises(ElucidateError) as info:
        connect("tcp://127.0.0.1:1", timeout=1)
    text = str(info.value)
    assert "tcp://127.0.0.1:1" in text and "dask scheduler" in text and "--scheduler" in text
