"""Shared helpers: run the CLI in-process and locate project files."""

from __future__ import annotations

import io
import json
from pathlib import Path
from typing import Any

import pytest

from elucidate.cli import main

ROOT = Path(__file__).resolve().parent.parent
CASES = ROOT / "cases"


class CliResult:
    def __init__(self, code: int, out: str, err: str) -> None:
        self.code = code
        self.out = out
        self.err = err

    def json(self) -> Any:
        return json.loads(self.out)


def run_cli(*argv: str) -> CliResult:
    out, err = io.StringIO(), io.StringIO()
    code = main(list(argv), stdout=out, stderr=err)
    return CliResult(code, out.getvalue(), err.getvalue())


@pytest.fixture
def cli():
    return run_cli
