"""Plain-text and JSON renderings of a :class:`~elucidate.solve.Solution`."""

from __future__ import annotations

from typing import Any

from .evidence.weights import COMPONENTS
from .report import CAUTION, _table
from .solve import PROFILE, Ranked, Solution

__all__ = ["solve_text", "solve_json"]

_SHORT = {"formula": "iso", "infrared": "IR", "uv_vis": "UV", "fragments": "EI", "c13": "13C"}


def _components(c: Ranked, shown: list[str]) -> list[str]:
    return [f"{c.components[k]:.2f}" if k in c.components else "-" for k in shown]


def _detail(c: Ranked) -> list[str]:
    lines = [f"#{c.rank}  {c.smiles}  {c.formula}  InChIKey {c.inchikey}  score {c.score:.3f}"]
    for a in c.assessments:
        d = a.detail
        if a.technique == "fragments":
            for item in d["assignments"][:8]:
                why = item["explained_by"] or "not explained"
                lines.append(f"    EI  m/z {item['mz']:>4} ({item['intensity']:g}%): {why}")
            for item in d["missing"][:4]:
                lines.append(f"    EI  m/z {item['mz']:>4} expected ({item['rule']}) but not listed")
        elif a.technique == "infrared":
            for m in d["matched"]:
                lines.append(f"    IR  {m['band']:g} cm-1: {m['group']} ({m['mode']}, {m['range'][0]:g}-{m['range'][1]:g})")
            for text in d["missing"]:
                lines.append(f"    IR  missing: {text}")
            for x in d["unexplained"]:
                lines.append(f"    IR  {x:g} cm-1 not explained by this structure's groups")
        elif a.technique == "uv_vis":
            pred = "no maximum above 210 nm" if d["predicted"] is None else f"{d['predicted']:g} nm"
            obs = "none" if d["observed"] is None else "-".join(f"{x:g}" for x in sorted(set(d["observed"])))
            steps = "; ".join(d["steps"])
            lines.append(f"    UV  predicted {pred} ({d['rule']}{': ' + steps if steps else ''}), observed {obs}")
        elif a.technique == "c13":
            mult = " ".join(f"{k} {v}" for k, v in d["predicted_multiplicity"].items())
            lines.append(f"    13C predicted {d['predicted_signals']} signals ({mult}), observed {d['observed_signals']}")
    return lines


def solve_text(solution: Solution, *, top: int = 10, details: int = 3) -> str:
    case = solution.case
    lines = [f"case {case.id}: {case.title} ({case.path})", CAUTION, ""]
    ms = case.mass_spec
    if ms is not None and ms.molecular_ion is None and case.formula.known is None:
        lines.append("molecular ion not seen: hypotheses M = " + ", ".join(map(str, solution.hypotheses))
                     + " (highest peak, + CH3 15, + OH 17, + H2O 18)")
    else:
        lines.append(f"molecular ion: m/z {solution.hypotheses[0]}")
    lines.append("evidence used: " + (", ".join(solution.techniques) or "none besides the formula"))
    lines.append("")
    lines.append("formulas kept")
    rows = [["formula", "M", "isotope fit", "structures", "note"]]
    for k in solution.formulas:
        fit = "-" if k.isotope_score is None else f"{k.isotope_score:.3f}"
        rows.append([str(k.formula), str(k.molecular_ion), fit, str(k.structures), k.skipped or ""])
    lines += ["  " + r for r in _table(rows, [False, True, True, True, False])] if solution.formulas else ["  none"]
    if solution.reading is not None:
        r = solution.reading
        lines.append("")
        lines.append("IR reading (the tool's, from the band list alone; judge before copying into require/forbid)")
        lines.append("  indicated: " + (", ".join(f"{g} [{w}]" for g, w in r.indicated) or "none"))
        lines.append("  argued against: " + (", ".join(f"{g} [{w}]" for g, w in r.against) or "none"))
    lines.append("")
    lines.append(f"structures generated: {solution.generated} (plausibility profile {PROFILE!r})")
    removed = [(label, n) for label, n in solution.eliminated.items()]
    for label, n in removed:
        lines.append(f"  removed by {label}: {n}")
    lines.append("")
    if not solution.candidates:
        lines.append("no candidate survives the hard constraints:")
        lines += ["  " + text for text in solution.empty_reason]
    else:
        shown = [k for k in COMPONENTS if any(k in c.components for c in solution.candidates)]
        lines.append(f"shortlist ({min(top, len(solution.candidates)) if top else len(solution.candidates)} of {len(solution.candidates)})")
        rows = [["rank", "score", "formula", "SMILES", *[_SHORT[k] for k in shown], "reasons"]]
        for c in solution.candidates[: top or None]:
            rows.append([str(c.rank), f"{c.score:.3f}", c.formula, c.smiles, *_components(c, shown), "; ".join(c.reasons[:2])])
        lines += ["  " + r for r in _table(rows, [True, True, False, False] + [True] * len(shown) + [False])]
        lines.append("")
        for c in solution.candidates[:details]:
            lines += _detail(c)
    if solution.suspects:
        lines.append("")
        lines.append("suspects")
        rows = [["given", "formula", "rank", "score", "verdict"]]
        for s in solution.suspects:
            verdict = "ranked" if s.rank is not None else f"eliminated by {s.eliminated_by}: {s.why}" if s.eliminated_by else (s.why or "")
            rows.append([s.given, s.formula or "-", str(s.rank) if s.rank else "-", "-" if s.score is None else f"{s.score:.3f}", verdict])
        lines += ["  " + r for r in _table(rows, [False, False, True, True, False])]
    for note in solution.notes:
        lines.append(f"note: {note}")
    return "\n".join(lines) + "\n"


def solve_json(solution: Solution, *, top: int = 0) -> dict[str, Any]:
    cands = solution.candidates[: top or None]
    return {
        "case_id": solution.case.id,
        "caution": CAUTION,
        "molecular_ion_hypotheses": list(solution.hypotheses),
        "formulas": [
            {
                "formula": str(k.formula),
                "molecular_ion": k.molecular_ion,
                "isotope_score": None if k.isotope_score is None else round(k.isotope_score, 6),
                "structures": k.structures,
                "skipped": k.skipped,
            }
            for k in solution.formulas
        ],
        "generated": solution.generated,
        "eliminated": dict(solution.eliminated),
        "profile": PROFILE,
        "evidence": list(solution.techniques),
        "ir_reading": None
        if solution.reading is None
        else {"indicated": [g for g, _ in solution.reading.indicated], "argued_against": [g for g, _ in solution.reading.against]},
        "candidates": [c.as_dict() for c in cands],
        "candidate_count": len(solution.candidates),
        "suspects": [s.as_dict() for s in solution.suspects],
        "empty_reason": list(solution.empty_reason),
        "notes": list(solution.notes),
    }
