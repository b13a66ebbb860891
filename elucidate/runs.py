"""Run records: one JSON file per ``solve``, the audit trail of a case.

A record holds what a reviewer needs to see later what was concluded from which data: the case
file's text and SHA-256, the tool version, the SHA-256 of every knowledge table, the options, a
UTC timestamp and the result (formulas, counts per constraint, the ranked shortlist with its
components and reasons, and the fate of the previous run's shortlist). Records are written
atomically (a temporary file in the same folder, then a rename), so an interrupted run leaves
no partial record; the case file itself is never touched.

Revisions of one unknown keep its ``id`` and add evidence: every record of the id is one run of
the unknown, and the distinct case texts among them are its revisions, numbered in order.
"""

from __future__ import annotations

import contextlib
import hashlib
import json
import os
import re
import tempfile
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

from . import __version__
from .errors import ElucidateError
from .tables import tables_dir

__all__ = [
    "RUNS_FOLDER",
    "RUN_SCHEMA",
    "RunRecord",
    "case_runs",
    "make_record",
    "read_record",
    "revisions",
    "runs_folder",
    "table_hashes",
    "text_sha256",
    "write_record",
]

#: the record format's version; a reader refuses records of a newer one
RUN_SCHEMA = 1
#: the records' folder, beside the case file unless the command line names another
RUNS_FOLDER = "runs"
_KIND = "elucidate run record"
_SAFE = re.compile(r"[^A-Za-z0-9._-]+")


def text_sha256(text: str) -> str:
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def table_hashes(folder: Path | None = None) -> dict[str, str]:
    """SHA-256 of every knowledge table (``*.yaml`` in the tables folder), by file name."""
    where = folder or tables_dir()
    return {p.name: hashlib.sha256(p.read_bytes()).hexdigest() for p in sorted(where.glob("*.yaml"))}


def runs_folder(case_path: str | Path, override: str | Path | None = None) -> Path:
    """Where the records of a case go: ``override``, or ``runs/`` beside the case file."""
    if override is not None:
        return Path(override)
    return Path(case_path).resolve().parent / RUNS_FOLDER


def make_record(
    *,
    case_path: str,
    case_text: str,
    case_id: str,
    title: str,
    version: str,
    options: Mapping[str, Any],
    result: Mapping[str, Any],
    followed: Sequence[Mapping[str, Any]] = (),
    previous: str | None = None,
    tables: Mapping[str, str] | None = None,
    created: datetime | None = None,
) -> dict[str, Any]:
    """The record of one run. ``result``: the solution as JSON (``solve_json``); ``followed``:
    the fate (rank, or the constraint that eliminates it) of each candidate of the previous
    run's shortlist; ``previous``: that run's file name."""
    when = (created or datetime.now(UTC)).astimezone(UTC)
    return {
        "schema": RUN_SCHEMA,
        "kind": _KIND,
        "tool": {"name": "elucidate", "version": version},
        "created_utc": when.strftime("%Y-%m-%dT%H:%M:%S.%fZ"),
        "case": {
            "path": case_path,
            "id": case_id,
            "title": title,
            "sha256": text_sha256(case_text),
            "text": case_text,
        },
        "tables": dict(tables if tables is not None else table_hashes()),
        "options": dict(options),
        "previous": previous,
        "followed": [dict(f) for f in followed],
        "result": dict(result),
    }


def write_record(record: Mapping[str, Any], folder: Path) -> Path:
    """Write ``record`` into ``folder`` (created if needed) atomically; its path. The name is
    the case id and the UTC time, so a listing sorts by time."""
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise ElucidateError(f"cannot create the runs folder: {exc.strerror}", file=str(folder)) from exc
    stamp = re.sub(r"[-:.]", "", record["created_utc"])
    stem = f"{_SAFE.sub('_', record['case']['id'])}--{stamp}"
    data = json.dumps(record, indent=1, ensure_ascii=False) + "\n"
    tmp: str | None = None
    try:
        handle, tmp = tempfile.mkstemp(prefix=".", suffix=".tmp", dir=folder)
        with os.fdopen(handle, "w", encoding="utf-8") as out:
            out.write(data)
            out.flush()
            os.fsync(out.fileno())
        n = 1
        while True:
            target = folder / (stem + (f"-{n}" if n > 1 else "") + ".json")
            try:
                os.link(tmp, target)  # fails if the name is taken: never overwrite a record
                break
            except FileExistsError:
                n += 1
            except OSError:  # a file system without hard links: rename, after checking the name
                if target.exists():
                    n += 1
                    continue
                os.replace(tmp, target)
                break
        return target
    except OSError as exc:
        raise ElucidateError(f"cannot write the run record: {exc.strerror}", file=str(folder)) from exc
    finally:
        if tmp is not None:
            with contextlib.suppress(OSError):
                os.unlink(tmp)


@dataclass(frozen=True)
class RunRecord:
    """A record read back: its path and its content."""

    path: Path
    data: Mapping[str, Any]

    @property
    def case_id(self) -> str:
        return str(self.data["case"]["id"])

    @property
    def created(self) -> str:
        return str(self.data["created_utc"])

    @property
    def case_sha256(self) -> str:
        return str(self.data["case"]["sha256"])

    @property
    def case_text(self) -> str:
        return str(self.data["case"]["text"])

    @property
    def result(self) -> Mapping[str, Any]:
        result: Mapping[str, Any] = self.data["result"]
        return result

    @property
    def shortlist(self) -> list[Mapping[str, Any]]:
        return list(self.result.get("candidates", []))

    @property
    def name(self) -> str:
        return self.path.name


_REQUIRED = {"schema": int, "kind": str, "created_utc": str, "case": dict, "result": dict, "tool": dict}


def read_record(path: str | Path) -> RunRecord:
    """Read and check one run record; a record from a newer elucidate is refused by name."""
    name = str(path)
    try:
        text = Path(path).read_text(encoding="utf-8")
    except FileNotFoundError as exc:
        raise ElucidateError("run record not found", file=name) from exc
    except (OSError, UnicodeDecodeError) as exc:
        raise ElucidateError(f"cannot read the run record: {exc}", file=name) from exc
    try:
        data = json.loads(text)
    except json.JSONDecodeError as exc:
        raise ElucidateError(f"not a run record: invalid JSON ({exc.msg})", file=name, line=exc.lineno) from exc
    if not isinstance(data, dict) or data.get("kind") != _KIND:
        raise ElucidateError(f'not a run record (no "kind": "{_KIND}")', file=name)
    schema = data.get("schema")
    if isinstance(schema, int) and schema > RUN_SCHEMA:
        raise ElucidateError(
            f"the record has schema {schema}, written by a newer elucidate; this version ({__version__}) "
            f"reads schema {RUN_SCHEMA} and older: upgrade elucidate to read it",
            file=name,
            key="schema",
        )
    for key, kind in _REQUIRED.items():
        if not isinstance(data.get(key), kind):
            raise ElucidateError(f"a run record needs {key!r} ({kind.__name__})", file=name, key=key)
    case = data["case"]
    for key in ("id", "sha256", "text"):
        if not isinstance(case.get(key), str):
            raise ElucidateError(f"a run record needs case.{key} (text)", file=name, key=f"case.{key}")
    return RunRecord(Path(path), data)


def case_runs(folder: Path, case_id: str, *, problems: list[str] | None = None) -> list[RunRecord]:
    """The records of one case in ``folder``, oldest first. A file there that is not a
    readable record is named in ``problems`` (when given) and left out."""
    if not folder.is_dir():
        return []
    found = []
    for path in sorted(folder.glob("*.json")):
        try:
            record = read_record(path)
        except ElucidateError as exc:
            if problems is not None:
                problems.append(str(exc))
            continue
        if record.case_id == case_id:
            found.append(record)
    return sorted(found, key=lambda r: (r.created, len(r.name), r.name))  # x.json before x-2.json


def revisions(records: Sequence[RunRecord]) -> dict[str, int]:
    """Revision number (1, 2, ...) of each distinct case text, in order of first run."""
    numbers: dict[str, int] = {}
    for r in records:
        numbers.setdefault(r.case_sha256, len(numbers) + 1)
    return numbers
