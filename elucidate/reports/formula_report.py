"""Plain-text and JSON renderings of the formula stage (pure functions returning strings / objects)."""

from __future__ import annotations

from ..formula import hill_order
from ..formula_search import RULES, Candidate, FormulaResult
from .layout import CAUTION, text_table

__all__ = ["RULE_LABELS", "formulas_json", "formulas_text"]

RULE_LABELS = {
    "dbe_negative": "DBE < 0",
    "nitrogen_rule": "nitrogen rule",
    "senior": "Senior's rules",
    "dbe_range": "DBE outside range",
    "element_ratios": "element ratios (Kind & Fiehn)",
    "exact_mass": "exact mass",
}


def _dbe(c: Candidate) -> str:
    return str(int(c.dbe)) if c.dbe.denominator == 1 else f"{float(c.dbe):.1f}"


def formulas_text(result: FormulaResult, *, title: str | None = None, explain: bool = False) -> str:
    q = result.query
    lines: list[str] = []
    if title:
        lines.append(title)
    cluster = q.cluster
    head = f"M+ = {q.nominal_mass} (nominal m/z)"
    if q.exact_mass is not None:
        kind = "m/z of M+." if q.exact_mass_of == "ion" else "neutral mass"
        head += f"; exact {kind} {q.exact_mass:.5f} ± {q.mass_tolerance_ppm:g} ppm"
    lines.append(head)
    if cluster is not None:
        lines.append(f"isotope cluster: {cluster.describe()}; M+ is {cluster.m_intensity:g} % of base peak")
    for note in result.notes:
        lines.append(f"  {note}")
    if result.rule13 is not None:
        lines.append(result.rule13.describe())
    limits = ", ".join(
        f"{s} {q.elements[s][0]}-{q.elements[s][1]}"
        if q.elements[s][0] != q.elements[s][1]
        else f"{s} {q.elements[s][0]}"
        for s in hill_order(list(q.elements))
    )
    mode = "" if q.element_ratios == "off" else (" (enforced)" if q.enforce_ratios else " (demote only)")
    lines.append(f"element limits: {limits}; DBE {q.dbe[0]}-{q.dbe[1]}; element ratios: {q.element_ratios}{mode}")
    rejected = ", ".join(f"{RULE_LABELS[r]} {n}" for r, n in result.rejected_counts.items() if n)
    lines.append(
        f"compositions at nominal mass {q.nominal_mass}: {result.total}; kept {result.kept_count}"
        + (f"; rejected: {rejected}" if rejected else "")
    )
    lines.append("")
    if not result.kept:
        lines.append(
            "No formula survives the filters."
            + ("" if explain else " Run with --explain to see why each was rejected.")
        )
    else:
        offsets = sorted({k for c in result.kept if c.fit for k, *_ in c.fit.compared})[:6]
        header = ["rank", "formula", "DBE", "nominal", "monoisotopic", "m/z M+."]
        if q.exact_mass is not None:
            header.append("ppm")
        header.append("fit")
        header += [f"M+{k} obs/pred" for k in offsets]
        demoted = any(c.demoted_by for c in result.kept)
        if demoted:
            header.append("note")
        rows = [header]
        for i, c in enumerate(result.kept, 1):
            row = [str(i), str(c.formula), _dbe(c), str(c.nominal_mass), f"{c.monoisotopic_mass:.6f}", f"{c.mz:.6f}"]
            if q.exact_mass is not None:
                row.append(f"{c.ppm_error:+.1f}" if c.ppm_error is not None else "")
            row.append("-" if c.score is None else (f"{c.score:.3f}" if c.score >= 0.0005 else "<0.001"))
            compared = {k: (o, p) for k, o, p, _ in c.fit.compared} if c.fit else {}
            for k in offsets:
                row.append(f"{compared[k][0]:.1f}/{compared[k][1]:.1f}" if k in compared else "")
            if demoted:
                row.append(f"demoted: {c.demoted_by}" if c.demoted_by else "")
            rows.append(row)
        right = [True, False, True, True, True, True] + [True] * (len(header) - 6 - demoted) + [False] * demoted
        lines += text_table(rows, right)
        if len(result.kept) < result.kept_count:
            lines.append(f"(showing {len(result.kept)} of {result.kept_count}; --top 0 shows all)")
        if cluster is not None:
            lines.append(
                "fit = exp(-chi2/2) over the isotope peaks compared (1 = perfect); an unlisted peak predicted above"
            )
            lines.append(
                "twice the peak list's smallest intensity counts as observed 0. Fits within 0.01 rank as equal;"
            )
            lines.append("ties go to fewer atoms beyond C, H, N, O, then fewer heteroatoms, then more carbons.")
    if explain:
        lines.append("")
        lines.append("rejected compositions (rule: reason):")
        if not result.rejected:
            lines.append("  none")
        for rule in RULES:
            group = [c for c in result.rejected if c.rejected_by == rule]
            if group:
                total = result.rejected_counts.get(rule, len(group))
                more = f", the first {len(group):,} shown" if total > len(group) else ""
                lines.append(f"  {RULE_LABELS[rule]} ({total:,}{more}):")
                for c in group:
                    lines.append(f"    {c.formula}: {c.reason}")
    lines.append("")
    lines.append(CAUTION)
    return "\n".join(lines) + "\n"


def formulas_json(result: FormulaResult, *, explain: bool = False) -> list[dict[str, object]]:
    out: list[dict[str, object]] = []
    for i, c in enumerate(result.kept, 1):
        d = {"rank": i, "status": "kept", **c.as_dict()}
        out.append(d)
    if explain:
        for c in result.rejected:
            out.append({"rank": None, "status": "rejected", **c.as_dict()})
    return out
