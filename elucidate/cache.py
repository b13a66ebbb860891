"""The candidate cache: generated structure sets kept in one SQLite file between runs.

A rerun that only adds soft evidence (IR bands, a UV maximum, shifts) needs the same structures
as before, so they are read back instead of generated again. An entry is keyed by the formula,
every hard constraint that shaped generation (the :class:`~elucidate.generator.Selection` and the
generator options), the elucidate version, a fingerprint of the generator's source and the
SHA-256 of every knowledge table: change any of these and the entry is simply not found.

With the structures, an entry may keep what generation perceived on each of them for the IR
pass (:class:`~elucidate.evidence.base.Perception`: groups, conditional bands, ring shape, and
with a 13C list the carbons by kind and DEPT type), in a table of its own keyed also by what
perceived it (:attr:`~elucidate.evidence.infrared.Perceiver.fingerprint`), so that a rerun scores
as the first run did without reading every molecule again. A file without that table gets it
with the first perceptions stored (older versions leave it alone). A rerun that adds a 13C list
takes the perceptions a run without one kept (they lack only the carbons, which order the
scoring and never settle a candidate).

Several processes may share the file: SQLite's own locking serialises writers, and each entry is
written in one transaction, so an interrupted run leaves the file as it was. A file that is not
an elucidate cache, or is damaged, is set aside (renamed) and a new one is started, with a
warning; a cache written by a newer elucidate is left alone and not used this run.
"""

from __future__ import annotations

import hashlib
import json
import sqlite3
import zlib
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path
from typing import TYPE_CHECKING, Any

from . import __version__
from .runs import table_hashes

if TYPE_CHECKING:
    from .evidence.base import Perception

__all__ = ["CACHE_SCHEMA", "CachedSet", "CandidateCache", "default_cache_path", "generator_fingerprint"]

#: the cache file's layout version (SQLite ``user_version``)
CACHE_SCHEMA = 1
#: SQLite ``application_id`` of an elucidate cache ("ELUC")
_APPLICATION_ID = 0x454C5543
_TIMEOUT = 60.0  # seconds to wait for another process's write


def default_cache_path() -> Path:
    """``candidates.sqlite`` in the user's cache folder (platformdirs)."""
    from platformdirs import user_cache_dir

    return Path(user_cache_dir("elucidate")) / "candidates.sqlite"


def generator_fingerprint() -> str:
    """SHA-256 of the generator's source files: a changed generator never reads old entries."""
    folder = Path(__file__).resolve().parent / "generator"
    digest = hashlib.sha256(__version__.encode())
    for path in sorted(folder.glob("*.py")):
        digest.update(path.name.encode())
        digest.update(path.read_bytes())
    return digest.hexdigest()


@dataclass(frozen=True)
class CachedSet:
    """One formula's generated candidates (canonical SMILES, in generation order) and the counts
    the hard constraints removed while generating."""

    smiles: tuple[str, ...]
    removed: Mapping[str, int]

    @property
    def tested(self) -> int:
        """Structures built: kept plus removed."""
        return len(self.smiles) + sum(self.removed.values())


def _warn_stderr(message: str) -> None:
    import sys

    sys.stderr.write(f"warning: {message}\n")


class CandidateCache:
    """The cache file at ``path``; ``warn`` is told when a file is set aside or left unused."""

    def __init__(self, path: str | Path, *, warn: Callable[[str], None] = _warn_stderr) -> None:
        self.path = Path(path)
        self.warn = warn
        self._db: sqlite3.Connection | None = None
        self._usable = True
        self._context: str | None = None

    # ------------------------------------------------------------------ opening
    def _connect(self) -> sqlite3.Connection | None:
        if self._db is not None or not self._usable:
            return self._db
        try:
            self.path.parent.mkdir(parents=True, exist_ok=True)
        except OSError as exc:
            self.warn(f"cache {self.path}: cannot create its folder ({exc.strerror}); running without the cache")
            self._usable = False
            return None
        for attempt in (1, 2):
            try:
                self._db = self._open()
                return self._db
            except _Newer as exc:
                self.warn(
                    f"cache {self.path} was written by a newer elucidate (layout {exc.schema}, this version uses "
                    f"{CACHE_SCHEMA}); not used this run (give another file with --cache)"
                )
                self._usable = False
                return None
            except (sqlite3.DatabaseError, _Foreign) as exc:
                if attempt == 2:
                    self.warn(f"cache {self.path}: cannot be used ({exc}); running without the cache")
                    self._usable = False
                    return None
                aside = self._set_aside()
                self.warn(f"cache {self.path} is not a usable elucidate cache ({exc}); set aside as {aside}, rebuilt")
            except OSError as exc:
                self.warn(f"cache {self.path}: cannot be opened ({exc}); running without the cache")
                self._usable = False
                return None
        return None  # pragma: no cover - the loop returns

    def _open(self) -> sqlite3.Connection:
        db = sqlite3.connect(self.path, timeout=_TIMEOUT, isolation_level=None)
        try:
            app = db.execute("PRAGMA application_id").fetchone()[0]
            schema = db.execute("PRAGMA user_version").fetchone()[0]
            tables = [row[0] for row in db.execute("SELECT name FROM sqlite_master WHERE type = 'table'")]
            if app not in (0, _APPLICATION_ID) or (app == 0 and tables):
                raise _Foreign("another program's database")
            if schema > CACHE_SCHEMA:
                raise _Newer(schema)
            if app == 0:
                db.execute("BEGIN IMMEDIATE")
                db.execute(
                    "CREATE TABLE IF NOT EXISTS sets (key TEXT PRIMARY KEY, formula TEXT NOT NULL, "
                    "created TEXT NOT NULL, count INTEGER NOT NULL, removed TEXT NOT NULL, smiles BLOB NOT NULL)"
                )
                db.execute(f"PRAGMA application_id = {_APPLICATION_ID}")
                db.execute(f"PRAGMA user_version = {CACHE_SCHEMA}")
                db.execute("COMMIT")
            return db
        except BaseException:
            db.close()
            raise

    def _set_aside(self) -> Path:
        stamp = datetime.now(UTC).strftime("%Y%m%dT%H%M%S%fZ")
        aside = self.path.with_name(f"{self.path.name}.unusable-{stamp}")
        self.path.replace(aside)
        return aside

    def close(self) -> None:
        if self._db is not None:
            self._db.close()
            self._db = None

    def __enter__(self) -> CandidateCache:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    # ------------------------------------------------------------------ entries
    def key(self, formula: str, generation: str) -> str:
        """The entry key of a formula under ``generation`` (the repr of everything that shaped
        generation), with the version, the generator's fingerprint and the tables' hashes."""
        if self._context is None:
            context = {"version": __version__, "generator": generator_fingerprint(), "tables": table_hashes()}
            self._context = json.dumps(context, sort_keys=True)
        parts = json.dumps({"formula": formula, "generation": generation}, sort_keys=True)
        return hashlib.sha256((self._context + parts).encode()).hexdigest()

    def get(self, key: str) -> CachedSet | None:
        db = self._connect()
        if db is None:
            return None
        try:
            row = db.execute("SELECT count, removed, smiles FROM sets WHERE key = ?", (key,)).fetchone()
            if row is None:
                return None
            count, removed, blob = row
            text = zlib.decompress(blob).decode("utf-8")
            smiles = tuple(text.split("\n")) if text else ()
            if len(smiles) != count:
                raise ValueError("entry damaged: its count does not match")
            parsed: Any = json.loads(removed)
            return CachedSet(smiles, {str(k): int(v) for k, v in parsed.items()})
        except (sqlite3.DatabaseError, zlib.error, ValueError, UnicodeDecodeError) as exc:
            self.warn(f"cache {self.path}: an entry cannot be read ({exc}); generating again")
            return None

    def put(self, key: str, formula: str, smiles: Sequence[str], removed: Mapping[str, int]) -> None:
        db = self._connect()
        if db is None:
            return
        blob = zlib.compress("\n".join(smiles).encode("utf-8"), 6)
        created = datetime.now(UTC).strftime("%Y-%m-%dT%H:%M:%SZ")
        try:
            db.execute(
                "INSERT OR REPLACE INTO sets (key, formula, created, count, removed, smiles) VALUES (?, ?, ?, ?, ?, ?)",
                (key, formula, created, len(smiles), json.dumps(dict(removed), sort_keys=True), blob),
            )
        except sqlite3.DatabaseError as exc:
            self.warn(f"cache {self.path}: cannot store {formula} ({exc}); it will be generated again next time")

    def put_seen(self, key: str, perceiver: str, seen: Sequence[Perception]) -> None:
        """Keep what ``perceiver`` found on each structure of entry ``key`` (in its order)."""
        db = self._connect()
        if db is None:
            return
        distinct: dict[Perception, int] = {}
        index = [distinct.setdefault(p, len(distinct)) for p in seen]
        document = {"seen": [_perception_json(p) for p in distinct], "index": index}
        blob = zlib.compress(json.dumps(document, separators=(",", ":")).encode("utf-8"), 6)
        try:
            db.execute(
                "CREATE TABLE IF NOT EXISTS seen (key TEXT NOT NULL, perceiver TEXT NOT NULL, "
                "count INTEGER NOT NULL, blob BLOB NOT NULL, PRIMARY KEY (key, perceiver))"
            )
            db.execute(
                "INSERT OR REPLACE INTO seen (key, perceiver, count, blob) VALUES (?, ?, ?, ?)",
                (key, perceiver, len(seen), blob),
            )
        except sqlite3.DatabaseError as exc:
            self.warn(f"cache {self.path}: cannot store what generation perceived ({exc})")

    def get_seen(self, key: str, perceiver: str, count: int) -> list[Perception] | None:
        """What ``perceiver`` found on each of the ``count`` structures of entry ``key``, one
        object per distinct perception; None when it was not kept."""
        db = self._connect()
        if db is None:
            return None
        try:
            if db.execute("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = 'seen'").fetchone() is None:
                return None  # a file no run has kept perceptions in yet
            query = "SELECT count, blob FROM seen WHERE key = ? AND perceiver = ?"
            row = db.execute(query, (key, perceiver)).fetchone()
            if row is None:
                return None
            if row[0] != count:
                raise ValueError("entry damaged: its count does not match")
            document: Any = json.loads(zlib.decompress(row[1]).decode("utf-8"))
            distinct = [_perception(item) for item in document["seen"]]
            index = document["index"]
            if len(index) != count:
                raise ValueError("entry damaged: its count does not match")
            return [distinct[k] for k in index]
        except (sqlite3.DatabaseError, zlib.error, ValueError, UnicodeDecodeError, LookupError, TypeError) as exc:
            self.warn(f"cache {self.path}: what generation perceived cannot be read ({exc}); read from the molecules")
            return None


def _perception_json(seen: Perception) -> list[Any]:
    shape = seen.shape
    ring = None
    if shape is not None:
        ring = [list(shape.rings), shape.fused_small, [[a, b, list(c)] for a, b, c in shape.bonds], shape.cumulated]
        if shape.partial:
            ring.append(True)
    document = [sorted(seen.groups), sorted([name, k] for name, k in seen.bands), ring]
    if seen.carbons is not None:  # kept only by a perceiver that reads them (its own fingerprint)
        document.append([list(row) for row in seen.carbons])
    return document


def _perception(item: Any) -> Perception:
    from .evidence.base import Perception
    from .generator.shape import RingShape

    groups, bands, ring, *rest = item
    if len(rest) > 1:
        raise ValueError(f"a perception of {3 + len(rest)} parts (3 or 4 expected)")
    carbons = tuple((str(kind), str(name), int(n)) for kind, name, n in rest[0]) if rest else None
    shape = None
    if ring is not None:
        rings, fused, bonds, cumulated, *partial = ring
        if partial not in ([], [True]):
            raise ValueError(f"a ring shape of {4 + len(partial)} parts (4, or 5 when partial, expected)")
        shape = RingShape(
            tuple(int(r) for r in rings),
            int(fused),
            tuple((int(a), int(b), tuple(int(c) for c in rest)) for a, b, rest in bonds),
            int(cumulated),
            bool(partial),
        )
    return Perception(frozenset(str(g) for g in groups), frozenset((str(n), int(k)) for n, k in bands), shape, carbons)


class _Foreign(Exception):
    pass


class _Newer(Exception):
    def __init__(self, schema: int) -> None:
        super().__init__(f"layout {schema}")
        self.schema = schema
