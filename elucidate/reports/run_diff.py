"""What changed between two runs of a case: the evidence, the formulas and counts, where each
candidate of the first shortlist went (and why), and how the leaders' components moved.

Works on two run records (:mod:`elucidate.runs`). The fate of a candidate that left the
shortlist comes from the second record's ``followed`` list, which ``solve`` fills for the
shortlist of the run before it: its exact rank, or the constraint that eliminates it.
"""

from __future__ import annotations

import json
from collections import Counter
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import yaml

from ..runs import RunRecord

__all__ = ["CandidateMove", "EvidenceChange", "LeaderChange", "RunDiff", "diff_json", "diff_records", "diff_text"]

#: leaders (the second run's top places) whose components are compared
LEADERS = 3
#: component scores closer than this count as unchanged
_SAME = 0.005


@dataclass(frozen=True)
class EvidenceChange:
    """One case-file value added, removed or changed, by dotted key path (list items singly)."""

    path: str
    kind: str  # "added", "removed" or "changed"
    before: str | None
    after: str | None


@dataclass(frozen=True)
class CandidateMove:
    """A candidate of either shortlist: its rank label in each run (None: not in that
    shortlist) and, for one that left, what became of it."""

    smiles: str
    rank_a: str | None
    rank_b: str | None
    verdict: str


@dataclass(frozen=True)
class LeaderChange:
    smiles: str
    rank_a: str | None
    rank_b: str
    score_a: float | None
    score_b: float
    components: tuple[tuple[str, float | None, float | None], ...]  # technique, score in A, in B


@dataclass(frozen=True)
class RunDiff:
    a: str
    b: str
    a_created: str
    b_created: str
    top: int
    same_text: bool
    evidence: tuple[EvidenceChange, ...]
    tables: tuple[str, ...]  # knowledge tables whose hash changed (or that appeared / went)
    versions: tuple[str, str]
    formulas: tuple[tuple[str, ...], tuple[str, ...]]
    counts: tuple[tuple[str, int, int], ...]  # label, count in A, in B
    moves: tuple[CandidateMove, ...]
    leaders: tuple[LeaderChange, ...]


def _render(value: Any) -> str:
    return json.dumps(value, ensure_ascii=False, default=str, separators=(", ", ": "))


def _flatten(value: Any, path: str, out: dict[str, Any]) -> None:
    if isinstance(value, dict) and value:
        for key, item in value.items():
            _flatten(item, f"{path}.{key}" if path else str(key), out)
    else:
        out[path] = value


def _evidence(text_a: str, text_b: str) -> list[EvidenceChange]:
    """The case values that differ; lists compare item by item (an added IR band is one line)."""
    a: dict[str, Any] = {}
    b: dict[str, Any] = {}
    _flatten(yaml.safe_load(text_a) or {}, "", a)
    _flatten(yaml.safe_load(text_b) or {}, "", b)
    changes = []
    for path in sorted(set(a) | set(b)):
        if path not in b:
            changes.append(EvidenceChange(path, "removed", _render(a[path]), None))
        elif path not in a:
            changes.append(EvidenceChange(path, "added", None, _render(b[path])))
        elif a[path] != b[path]:
            if isinstance(a[path], list) and isinstance(b[path], list):
                old = Counter(_render(v) for v in a[path])
                new = Counter(_render(v) for v in b[path])
                changes += [EvidenceChange(f"{path}[]", "removed", v, None) for v in sorted((old - new).elements())]
                changes += [EvidenceChange(f"{path}[]", "added", None, v) for v in sorted((new - old).elements())]
            else:
                changes.append(EvidenceChange(path, "changed", _render(a[path]), _render(b[path])))
    return changes


def _counts(a: Mapping[str, Any], b: Mapping[str, Any]) -> list[tuple[str, int, int]]:
    rows = [("structures generated", int(a.get("generated", 0)), int(b.get("generated", 0)))]
    ea, eb = a.get("eliminated", {}), b.get("eliminated", {})
    for label in list(dict.fromkeys([*ea, *eb])):
        rows.append((f"removed by {label}", int(ea.get(label, 0)), int(eb.get(label, 0))))
    rows.append(("candidates", int(a.get("candidate_count", 0)), int(b.get("candidate_count", 0))))
    return rows


def _fate(smiles: str, b: RunRecord, top: int, followed_a: bool) -> str:
    for f in b.data.get("followed", []):
        if f.get("smiles") == smiles or f.get("given") == smiles:
            if f.get("rank") is not None:
                return f"rank {f['rank']} now, below the top {top}"
            if f.get("eliminated_by"):
                by, why = str(f["eliminated_by"]), str(f.get("why") or "")
                return f"eliminated by {by}" + (f": {why}" if why and by not in why else "")
            return str(f.get("why") or "not ranked")
    if not followed_a:
        return "not in the second shortlist (the second run did not follow this one: diff consecutive runs for why)"
    return "not in the second shortlist"


def diff_records(a: RunRecord, b: RunRecord, *, top: int = 10) -> RunDiff:
    """Compare run ``a`` with the later run ``b`` over the first ``top`` places."""
    ra, rb = a.result, b.result
    short_a = a.shortlist[:top]
    short_b = b.shortlist[:top]
    rank_a = {c["smiles"]: str(c.get("rank_label", c["rank"])) for c in short_a}
    rank_b = {c["smiles"]: str(c.get("rank_label", c["rank"])) for c in short_b}
    followed_a = b.data.get("previous") == a.name
    moves = []
    for c in short_a:
        smiles = c["smiles"]
        if smiles in rank_b:
            before, after = rank_a[smiles], rank_b[smiles]
            verdict = "same rank" if before == after else f"rank {before} → {after}"
            moves.append(CandidateMove(smiles, before, after, verdict))
        else:
            moves.append(CandidateMove(smiles, rank_a[smiles], None, _fate(smiles, b, top, followed_a)))
    for c in short_b:
        if c["smiles"] not in rank_a:
            moves.append(CandidateMove(c["smiles"], None, rank_b[c["smiles"]], "new in the shortlist"))
    by_a = {c["smiles"]: c for c in short_a}
    leaders = []
    for c in short_b[:LEADERS]:
        old = by_a.get(c["smiles"])
        comp_a: Mapping[str, Any] = old["components"] if old else {}
        comp_b: Mapping[str, Any] = c["components"]
        changed = []
        for name in list(dict.fromkeys([*comp_a, *comp_b])) if old else ():
            sa = comp_a[name]["score"] if name in comp_a else None
            sb = comp_b[name]["score"] if name in comp_b else None
            if sa is None or sb is None or abs(sa - sb) >= _SAME:
                changed.append((name, sa, sb))
        leaders.append(
            LeaderChange(
                c["smiles"],
                rank_a.get(c["smiles"]),
                rank_b[c["smiles"]],
                old["score"] if old else None,
                c["score"],
                tuple(changed),
            )
        )
    ta, tb = a.data.get("tables", {}), b.data.get("tables", {})
    tables = tuple(sorted(name for name in set(ta) | set(tb) if ta.get(name) != tb.get(name)))

    def kept(result: Mapping[str, Any]) -> tuple[str, ...]:
        return tuple(f["formula"] for f in result.get("formulas", []) if not f.get("skipped"))

    return RunDiff(
        a.name,
        b.name,
        a.created,
        b.created,
        top,
        a.case_sha256 == b.case_sha256,
        tuple(_evidence(a.case_text, b.case_text)),
        tables,
        (str(a.data["tool"].get("version")), str(b.data["tool"].get("version"))),
        (kept(ra), kept(rb)),
        tuple(_counts(ra, rb)),
        tuple(moves),
        tuple(leaders),
    )


def _score(value: float | None) -> str:
    return "-" if value is None else f"{value:.3f}"


def diff_text(d: RunDiff) -> str:
    lines = [f"A: {d.a} ({d.a_created})", f"B: {d.b} ({d.b_created})", ""]
    if d.versions[0] != d.versions[1]:
        lines.append(f"elucidate version: {d.versions[0]} → {d.versions[1]}")
    if d.tables:
        lines.append("knowledge tables changed: " + ", ".join(d.tables))
    lines.append("evidence")
    if d.same_text:
        lines.append("  the same case text")
    for e in d.evidence:
        if e.kind == "added":
            lines.append(f"  + {e.path}: {e.after}")
        elif e.kind == "removed":
            lines.append(f"  - {e.path}: {e.before}")
        else:
            lines.append(f"  ~ {e.path}: {e.before} → {e.after}")
    lines.append("")
    fa, fb = d.formulas
    lines.append(f"formulas enumerated: {' '.join(fa) or '-'} → {' '.join(fb) or '-'}")
    for label, x, y in d.counts:
        if x or y:
            lines.append(f"  {label}: {x:,} → {y:,}" + ("" if x != y else " (same)"))
    lines.append("")
    lines.append(f"shortlist (top {d.top})")
    for m in d.moves:
        where = f"{m.rank_a or '-':>3} → {m.rank_b or '-':<3}"
        lines.append(f"  {where}  {m.smiles}: {m.verdict}")
    if not d.moves:
        lines.append("  empty in both runs")
    if d.leaders:
        lines.append("")
        lines.append("leaders' components (score in A → in B; unchanged ones left out)")
        for c in d.leaders:
            if c.rank_a is None:
                lines.append(f"  #{c.rank_b} {c.smiles}: score {_score(c.score_b)}, not in the first shortlist")
                continue
            lines.append(f"  #{c.rank_b} {c.smiles}: score {_score(c.score_a)} → {_score(c.score_b)}")
            for name, sa, sb in c.components:
                lines.append(f"      {name}: {_score(sa)} → {_score(sb)}")
    return "\n".join(lines) + "\n"


def diff_json(d: RunDiff) -> dict[str, Any]:
    return {
        "a": d.a,
        "b": d.b,
        "a_created_utc": d.a_created,
        "b_created_utc": d.b_created,
        "top": d.top,
        "same_case_text": d.same_text,
        "versions": list(d.versions),
        "tables_changed": list(d.tables),
        "evidence": [e.__dict__ for e in d.evidence],
        "formulas": {"a": list(d.formulas[0]), "b": list(d.formulas[1])},
        "counts": [{"label": label, "a": x, "b": y} for label, x, y in d.counts],
        "moves": [m.__dict__ for m in d.moves],
        "leaders": [
            {
                "smiles": c.smiles,
                "rank_a": c.rank_a,
                "rank_b": c.rank_b,
                "score_a": c.score_a,
                "score_b": c.score_b,
                "components": [{"technique": n, "a": x, "b": y} for n, x, y in c.components],
            }
            for c in d.leaders
        ],
    }
