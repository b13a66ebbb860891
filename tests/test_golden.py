"""The recorded outputs of formulas, isomers and solve stay byte-identical.

The reference is the program's own earlier output (``tests/golden/outputs.json``, recorded by
``tests/golden/record.py``; a change that means to alter output records it again and says so):
this is a regression check, not a check of correctness, which the other test files make against
outside sources.
"""

from __future__ import annotations

import io
import json
from pathlib import Path

import pytest

from elucidate.cli import main

GOLDEN = Path(__file__).resolve().parent / "golden" / "outputs.json"
RECORDS = json.loads(GOLDEN.read_text(encoding="utf-8"))


@pytest.mark.parametrize("record", RECORDS, ids=[" ".join(r["argv"][:2]) + f"#{i}" for i, r in enumerate(RECORDS)])
def test_output_is_byte_identical(record: dict, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.chdir(GOLDEN.parents[2])
    out, err = io.StringIO(), io.StringIO()
    # outputs only: no run record, no cache (their own tests are test_runs.py and test_cache.py)
    extra = ["--no-record", "--no-cache"] if record["argv"][0] == "solve" else []
    code = main(record["argv"] + extra, stdout=out, stderr=err)
    assert code == record["code"]
    assert err.getvalue() == record["stderr"]
    assert out.getvalue() == record["stdout"]
