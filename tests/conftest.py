"""Shared fixtures: the project's folders, the CLI run in-process, Hypothesis profiles.

Hypothesis runs the ``quick`` profile locally and the ``thorough`` one when ``CI=true`` (as
``.ci/run`` sets it); choose one by hand with ``--hypothesis-profile NAME``.
"""

from __future__ import annotations

import io
import json
import os
from collections.abc import Callable
from pathlib import Path
from typing import Any

import pytest
from hypothesis import HealthCheck, settings

from elucidate.cli import main

settings.register_profile("quick", max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
settings.register_profile("thorough", max_examples=500, deadline=None, suppress_health_check=[HealthCheck.too_slow])
settings.load_profile("thorough" if os.environ.get("CI", "").lower() in ("1", "true", "yes") else "quick")


class CliResult:
    """Exit code, stdout and stderr of one in-process CLI run."""

    def __init__(self, code: int, out: str, err: str) -> None:
        self.code = code
        self.out = out
        self.err = err

    def json(self) -> Any:
        return json.loads(self.out)


def _run_cli(*argv: str) -> CliResult:
    out, err = io.StringIO(), io.StringIO()
    code = main(list(argv), stdout=out, stderr=err)
    return CliResult(code, out.getvalue(), err.getvalue())


@pytest.fixture(scope="session")
def cli() -> Callable[..., CliResult]:
    """``cli("solve", path, "--json")`` runs ``elucidate`` in-process and returns a CliResult."""
    return _run_cli


@pytest.fixture(autouse=True)
def _private_runs_and_cache(tmp_path_factory: pytest.TempPathFactory, monkeypatch: pytest.MonkeyPatch) -> Path:
    """Every test gets its own runs folder and candidate cache, so no test writes beside the demo
    cases or into the user's cache (tests of those places set the options themselves)."""
    place = tmp_path_factory.mktemp("loop")
    monkeypatch.setenv("ELUCIDATE_RUNS", str(place / "runs"))
    monkeypatch.setenv("ELUCIDATE_CACHE", str(place / "candidates.sqlite"))
    return place


@pytest.fixture(scope="session")
def project_root() -> Path:
    return Path(__file__).resolve().parent.parent


@pytest.fixture(scope="session")
def cases_dir(project_root: Path) -> Path:
    """The demo case files."""
    return project_root / "cases"
