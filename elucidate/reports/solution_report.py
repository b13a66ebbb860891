"""Plain-text and JSON renderings of a :class:`~elucidate.solver.Solution`.

Columns, detail lines and readings come from the techniques themselves
(:data:`~elucidate.evidence.TECHNIQUES`): a new technique needs no change here.
"""

from __future__ import annotations

from typing import Any

from ..evidence import TECHNIQUES, Technique
from ..solver import Ranked, Solution, UntriedFormula
from ..solver.hypotheses import first_losses
from .layout import CAUTION, text_table

__all__ = ["UNTRIED_SHOWN", "solve_json", "solve_text"]

#: formulas not tried named per molecular ion in the text report (JSON names them all)
UNTRIED_SHOWN = 20


def _techniques() -> list[Technique]:
    return [cls() for cls in TECHNIQUES]


def _detail(c: Ranked, by_name: dict[str, Technique]) -> list[str]:
    head = f"#{c.rank_label}  {c.smiles}  {c.formula}  InChIKey {c.inchikey}  "
    lines = [head + f"score {c.score:.3f}  log-likelihood {c.log_likelihood:.2f}"]
    parts = [
        f"{name} {part.against:.2f}/{part.unexplained:.2f}"
        for name, part in c.components.items()
        if part.against or part.unexplained
    ]
    if parts:
        lines.append("    against/unexplained (nats, capped): " + ", ".join(parts))
    for a in c.assessments:
        lines += by_name[a.technique].detail_lines(a)
    return lines


def _losses() -> str:
    return (
        "highest peak + 0 or a usual first loss ("
        + ", ".join(map(str, first_losses()))
        + "), ranked by the upper spectrum"
    )


def solve_text(solution: Solution, *, top: int = 10, details: int = 3) -> str:
    techniques = _techniques()
    by_name = {t.name: t for t in techniques}
    case = solution.case
    lines = [f"case {case.id}: {case.title} ({case.path})", CAUTION, ""]
    if solution.considered:
        lines.append(
            "molecular ion not seen: hypotheses M = " + ", ".join(map(str, solution.hypotheses)) + f" ({_losses()})"
        )
        for h in solution.considered:
            lines.append(f"  {'tried' if h.kept else 'not tried'}: {h.describe()}" + (f" ({h.why})" if h.why else ""))
    else:
        lines.append(f"molecular ion: m/z {solution.hypotheses[0]}")
    lines.append("evidence used: " + (", ".join(solution.techniques) or "none besides the formula"))
    # what the run could not do comes first: a formula left out cannot be in the shortlist
    for note in solution.notes:
        lines.append(f"note: {note}")
    untried: dict[int, list[UntriedFormula]] = {}
    for u in solution.untried:
        untried.setdefault(u.molecular_ion, []).append(u)
    for group in untried.values():
        names = [str(u.formula) for u in group]
        why = group[0].why
        listed = ", ".join(names[:UNTRIED_SHOWN]) + (
            f" and {len(names) - UNTRIED_SHOWN} more" if len(names) > UNTRIED_SHOWN else ""
        )
        lines.append(f"note: {len(names)} formulas not tried ({why}): {listed}")
    lines.append("")
    lines.append("formulas kept")
    rows = [["formula", "M", "isotope fit", "structures", "note"]]
    for k in solution.formulas:
        fit = "-" if k.isotope_score is None else f"{k.isotope_score:.3f}"
        note = k.skipped or (f"demoted: {k.demoted_by}" if k.demoted_by else "")
        rows.append([str(k.formula), str(k.molecular_ion), fit, str(k.structures), note])
    if solution.formulas:
        lines += ["  " + r for r in text_table(rows, [False, True, True, True, False])]
    else:
        lines += ["  none"]
    for reading in solution.readings.values():
        if reading is not None:
            lines.append("")
            lines += list(reading.lines)
    lines.append("")
    lines.append(f"structures generated: {solution.generated} (plausibility profile {solution.profile!r})")
    for label, n in solution.eliminated.items():
        if n:
            lines.append(f"  removed by {label}: {n}")
    lines += _pass_lines(solution)
    lines.append("")
    if not solution.candidates:
        if solution.formulas and all(k.skipped for k in solution.formulas):
            lines.append("no structure was enumerated:")
        else:
            lines.append("no candidate survives the hard constraints:")
        lines += ["  " + text for text in solution.empty_reason]
    else:
        shown = [t for t in techniques if any(t.name in c.components for c in solution.candidates)]
        count = solution.candidate_count
        lines.append(f"shortlist ({min(top, count) if top else count} of {count})")
        rows = [["rank", "score", "formula", "SMILES", *[t.label for t in shown], "reasons"]]
        for c in solution.candidates[: top or None]:
            cells = [f"{c.components[t.name].score:.2f}" if t.name in c.components else "-" for t in shown]
            rows.append([c.rank_label, f"{c.score:.3f}", c.formula, c.smiles, *cells, "; ".join(c.reasons[:2])])
        lines += ["  " + r for r in text_table(rows, [True, True, False, False] + [True] * len(shown) + [False])]
        lines.append("")
        for c in solution.candidates[:details]:
            lines += _detail(c, by_name)
    if solution.suspects:
        lines.append("")
        lines.append("suspects")
        rows = [["given", "formula", "rank", "score", "verdict"]]
        for s in solution.suspects:
            if s.rank is not None:
                verdict = "ranked"
            elif s.eliminated_by:
                verdict = f"eliminated by {s.eliminated_by}: {s.why}"
            else:
                verdict = s.why or ""
            score = "-" if s.score is None else f"{s.score:.3f}"
            rows.append([s.given, s.formula or "-", str(s.rank) if s.rank else "-", score, verdict])
        lines += ["  " + r for r in text_table(rows, [False, False, True, True, False])]
    return "\n".join(lines) + "\n"


def _pass_lines(solution: Solution) -> list[str]:
    """How far each candidate was scored: the passes, in the order they ran."""
    passes = solution.scoring_passes
    if not passes or not solution.candidate_count:
        return []
    lines = [f"scoring of {solution.candidate_count:,} candidates, passes in the order chosen for least work:"]
    if solution.settled_before_passes:
        lines.append(
            f"  before the passes: settled on the formula and the groups and rings read in generation: "
            f"{solution.settled_before_passes:,}"
        )
    for number, p in enumerate(passes, start=1):
        line = f"  pass {number} ({', '.join(p.techniques)}): ran on {p.scored:,}"
        stopped = p.settled - p.complete
        if stopped or number < len(passes):
            line += f", settled (cannot reach the shortlist): {stopped:,}"
        if number == len(passes):
            line += f", scored in full: {p.complete:,}"
        lines.append(line)
    return lines


def solve_json(solution: Solution, *, top: int = 0) -> dict[str, Any]:
    cands = solution.candidates[: top or None]
    out: dict[str, Any] = {
        "case_id": solution.case.id,
        "caution": CAUTION,
        "molecular_ion_hypotheses": list(solution.hypotheses),
        "formulas": [k.as_dict() for k in solution.formulas],
        "generated": solution.generated,
        "eliminated": dict(solution.eliminated),
        "profile": solution.profile,
        "evidence": list(solution.techniques),
    }
    for key, reading in solution.readings.items():
        out[key] = None if reading is None else dict(reading.data)
    out.update(
        {
            "candidates": [c.as_dict() for c in cands],
            "candidate_count": solution.candidate_count,
            "scoring_passes": [p.as_dict() for p in solution.scoring_passes],
            "settled_before_passes": solution.settled_before_passes,
            "suspects": [s.as_dict() for s in solution.suspects],
            "empty_reason": list(solution.empty_reason),
            "notes": list(solution.notes),
            "molecular_ion_considered": [h.as_dict() for h in solution.considered],
            "formulas_not_tried": [u.as_dict() for u in solution.untried],
        }
    )
    return out
