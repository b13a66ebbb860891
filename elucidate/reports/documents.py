"""Reports of one run record for people and for other programs: a self-contained HTML page
(inline SVG, no network resource, no script), Markdown for a lab notebook, and the shortlist as
CSV and SDF (RDKit's writer).

Everything comes from the run record (:mod:`elucidate.runs`), so a report can be made again
from the audit trail at any time: the case text as run, the formulas, the counts per constraint,
the shortlist with components and reasons. Two things are computed afresh from the record, with
the tables of this version: the simulated isotope cluster of each formula
(:func:`~elucidate.formula_search.isotopes.isotope_pattern`) and the predicted fragment ions of
the leading candidates (:func:`~elucidate.evidence.fragments.predict_ions`).
"""

from __future__ import annotations

import csv
import html
import io
from collections.abc import Mapping, Sequence
from typing import Any

from ..advice_next import rank_measurements
from ..case import Case, parse_case
from ..errors import ElucidateError
from ..runs import RunRecord
from .layout import CAUTION

__all__ = ["REPORT_FORMATS", "report_csv", "report_html", "report_markdown", "report_sdf", "run_case"]

#: output formats by name, and the file suffixes that select them
REPORT_FORMATS = {"html": (".html", ".htm"), "markdown": (".md",), "csv": (".csv",), "sdf": (".sdf",)}
#: candidates drawn in the structure grid, and given a mass-spectrum comparison
GRID = 12
SPECTRA = 3
#: measurements suggested in the report
NEXT_SHOWN = 3

_STYLE = """
body{font-family:sans-serif;margin:1.5em;color:#222;max-width:72em}
h1{font-size:1.4em}h2{font-size:1.15em;border-bottom:1px solid #bbb;margin-top:1.6em}
table{border-collapse:collapse;margin:.5em 0}td,th{border:1px solid #ccc;padding:.2em .5em;font-size:.9em}
th{background:#eee}td.n{text-align:right}.caution{background:#fff3cd;border:1px solid #e0c36b;padding:.6em}
.grid{display:flex;flex-wrap:wrap;gap:.6em}.cell{border:1px solid #ccc;padding:.3em;width:250px;font-size:.8em}
.cell code{word-break:break-all}pre{background:#f6f6f6;padding:.6em;overflow:auto;font-size:.85em}
"""


def run_case(record: RunRecord) -> Case | None:
    """The case as run, read with this version's loader (None if it no longer reads)."""
    try:
        return parse_case(record.case_text, file=str(record.data["case"].get("path", "case")))
    except ElucidateError:
        return None


def _esc(value: object) -> str:
    return html.escape(str(value), quote=True)


def _table(head: Sequence[str], rows: Sequence[Sequence[object]], numeric: Sequence[bool] = ()) -> str:
    out = ["<table><tr>" + "".join(f"<th>{_esc(h)}</th>" for h in head) + "</tr>"]
    for row in rows:
        cells = []
        for i, cell in enumerate(row):
            cls = ' class="n"' if i < len(numeric) and numeric[i] else ""
            cells.append(f"<td{cls}>{_esc(cell)}</td>")
        out.append("<tr>" + "".join(cells) + "</tr>")
    out.append("</table>")
    return "\n".join(out)


def _sticks(
    series: Sequence[tuple[str, str, Mapping[float, float]]],
    *,
    title: str,
    width: int = 640,
    height: int = 220,
    x_label: str = "m/z",
) -> str:
    """A stick plot as inline SVG: each series (name, colour, position -> height 0..100) drawn
    side by side, the later series offset slightly so coincident sticks stay visible."""
    positions = [x for _, _, data in series for x in data]
    if not positions:
        return ""
    low, high = min(positions), max(positions)
    if high - low < 10:
        low, high = low - 5, high + 5
    left, right, top, bottom = 40, 10, 24, 30
    plot_w, plot_h = width - left - right, height - top - bottom

    def px(x: float) -> float:
        return left + (x - low) / (high - low) * plot_w

    parts = [
        (
            f'<svg xmlns="http://www.w3.org/2000/svg" width="{width}" height="{height}" role="img" '
            f'aria-label="{_esc(title)}"><title>{_esc(title)}</title>'
        ),
        f'<rect x="0" y="0" width="{width}" height="{height}" fill="white"/>',
        f'<line x1="{left}" y1="{top + plot_h}" x2="{left + plot_w}" y2="{top + plot_h}" stroke="#444"/>',
        f'<line x1="{left}" y1="{top}" x2="{left}" y2="{top + plot_h}" stroke="#444"/>',
        f'<text x="{left}" y="14" font-size="12">{_esc(title)}</text>',
        f'<text x="{left + plot_w}" y="{height - 4}" font-size="11" text-anchor="end">{_esc(x_label)}</text>',
        f'<text x="4" y="{top + 8}" font-size="10">100</text>',
    ]
    step = max(1, round((high - low) / 8))
    tick = int(low) - int(low) % step + step
    while tick < high:
        parts.append(
            f'<text x="{px(tick):.1f}" y="{top + plot_h + 14}" font-size="10" text-anchor="middle">{tick}</text>'
        )
        tick += step
    for k, (name, colour, data) in enumerate(series):
        offset = 2.5 * k
        for x, y in sorted(data.items()):
            y0 = top + plot_h
            y1 = y0 - max(0.0, min(100.0, y)) / 100.0 * plot_h
            parts.append(
                f'<line x1="{px(x) + offset:.1f}" y1="{y0}" x2="{px(x) + offset:.1f}" y2="{y1:.1f}" '
                f'stroke="{colour}" stroke-width="2"/>'
            )
        parts.append(
            f'<text x="{left + plot_w - 4}" y="{top + 12 + 13 * k}" font-size="11" text-anchor="end" '
            f'fill="{colour}">{_esc(name)}</text>'
        )
    parts.append("</svg>")
    return "\n".join(parts)


def _molecule_svg(smiles: str, width: int = 240, height: int = 180) -> str:
    from .._rdkit import mol_from_smiles, quiet_rdkit, rdMolDraw2D

    mol = mol_from_smiles(smiles)
    if mol is None:
        return f"<p>(cannot draw {_esc(smiles)})</p>"
    with quiet_rdkit():
        drawer = rdMolDraw2D.MolDraw2DSVG(width, height)
        rdMolDraw2D.PrepareAndDrawMolecule(drawer, mol)
        drawer.FinishDrawing()
        svg: str = drawer.GetDrawingText()
    return svg[svg.index("<svg") :]  # inline: no XML declaration


def _isotope_plot(case: Case | None, formula: str, molecular_ion: int) -> str:
    """Observed cluster (M..M+4, % of M) against the formula's simulated one."""
    from ..formula import parse_formula
    from ..formula_search.isotopes import isotope_pattern

    if case is None or case.mass_spec is None:
        return ""
    peaks = case.mass_spec.peaks
    base = peaks.get(molecular_ion)
    if not base:
        return ""
    simulated = isotope_pattern(parse_formula(formula), max_offset=4)
    observed = {
        float(molecular_ion + k): 100.0 * peaks[molecular_ion + k] / base
        for k in range(5)
        if molecular_ion + k in peaks
    }
    model = {float(molecular_ion + k): float(simulated[k]) for k in range(5) if simulated[k] >= 0.05}
    return _sticks(
        [("observed", "#1f4e9c", observed), (f"{formula} simulated", "#c2410c", model)],
        title=f"isotope cluster at M {molecular_ion}: {formula}",
        width=360,
        height=180,
    )


def _ms_plot(case: Case | None, smiles: str, label: str) -> str:
    """Observed EI spectrum against the candidate's predicted ions (the fragmentation table)."""
    from .._rdkit import mol_from_smiles
    from ..evidence.fragments import predict_ions

    if case is None or case.mass_spec is None or not case.mass_spec.peaks:
        return ""
    mol = mol_from_smiles(smiles)
    if mol is None:
        return ""
    predicted = predict_ions(mol)
    top = max((ion.weight for ion in predicted.values()), default=1.0) or 1.0
    observed = {float(mz): float(i) for mz, i in case.mass_spec.peaks.items()}
    model = {float(mz): 100.0 * ion.weight / top for mz, ion in predicted.items()}
    return _sticks(
        [("observed", "#1f4e9c", observed), ("predicted ions", "#c2410c", model)],
        title=f"{label}: observed EI spectrum against predicted ions",
    )


def _evidence_rows(case: Case | None) -> list[tuple[str, str]]:
    if case is None:
        return []
    rows: list[tuple[str, str]] = []
    ms = case.mass_spec
    if ms is not None:
        m = "unknown" if ms.molecular_ion is None else str(ms.molecular_ion)
        peaks = ", ".join(f"{mz}:{i:g}" for mz, i in sorted(ms.peaks.items(), reverse=True))
        rows.append(("mass spectrum", f"{ms.ionization}; molecular ion {m}; peaks (m/z:%) {peaks}"))
        if ms.exact_mass is not None:
            rows.append(("exact mass", f"{ms.exact_mass} ({ms.exact_mass_of}, {ms.mass_tolerance_ppm:g} ppm)"))
    if case.infrared is not None:
        ir = case.infrared
        bands = ", ".join(f"{b.at:g}" + (f" {b.strength}" if b.strength else "") for b in ir.bands)
        rows.append(("IR bands (cm-1)", bands or "-"))
        if ir.require or ir.forbid:
            rows.append(("IR groups", f"require {', '.join(ir.require) or '-'}; forbid {', '.join(ir.forbid) or '-'}"))
    if case.uv_vis is not None:
        uv = case.uv_vis
        lam = "none above 210 nm" if uv.lambda_max is None else "-".join(f"{v:g}" for v in sorted(set(uv.lambda_max)))
        rows.append(("UV-Vis", f"lambda max {lam} nm ({uv.solvent})"))
    if case.nmr is not None:
        rows.append(("NMR", "declared: see the case file as run, below"))
    if case.structure is not None:
        s = case.structure
        if s.require_smarts or s.forbid_smarts:
            req, forb = ", ".join(s.require_smarts) or "-", ", ".join(s.forbid_smarts) or "-"
            rows.append(("SMARTS", f"require {req}; forbid {forb}"))
        if s.suspects:
            rows.append(("suspects", ", ".join(s.suspects)))
    return rows


def _funnel(result: Mapping[str, Any]) -> list[tuple[str, int]]:
    rows = [("structures generated", int(result.get("generated", 0)))]
    rows += [(f"removed by {label}", int(n)) for label, n in result.get("eliminated", {}).items() if n]
    rows.append(("candidates ranked", int(result.get("candidate_count", 0))))
    return rows


def _provenance(record: RunRecord) -> list[tuple[str, str]]:
    d = record.data
    rows = [
        ("run record", record.name),
        ("created (UTC)", record.created),
        ("elucidate version", str(d["tool"].get("version"))),
        ("case file", str(d["case"].get("path"))),
        ("case SHA-256", record.case_sha256),
        ("options", ", ".join(f"{k}={v}" for k, v in d.get("options", {}).items())),
        ("previous run", str(d.get("previous") or "-")),
    ]
    rows += [(f"table {name}", digest) for name, digest in d.get("tables", {}).items()]
    return rows


FORMULA_HEAD = ["formula", "M", "isotope fit", "candidates", "note"]


def _formula_rows(result: Mapping[str, Any]) -> list[list[object]]:
    rows: list[list[object]] = []
    for f in result.get("formulas", []):
        fit = "-" if f.get("isotope_score") is None else f"{f['isotope_score']:.3f}"
        rows.append([f["formula"], f["molecular_ion"], fit, f.get("structures", 0), f.get("skipped") or ""])
    return rows


def _scores(candidate: Mapping[str, Any], names: Sequence[str]) -> list[str]:
    """The candidate's component score per technique, "-" where it has none."""
    comps = candidate.get("components", {})
    return [f"{comps[n]['score']:.2f}" if n in comps else "-" for n in names]


def _techniques(shortlist: Sequence[Mapping[str, Any]]) -> list[str]:
    return list(dict.fromkeys(name for c in shortlist for name in c.get("components", {})))


def report_html(record: RunRecord, *, top: int = GRID) -> str:
    """The run as one self-contained HTML page."""
    result = record.result
    case = run_case(record)
    shortlist = record.shortlist
    title = f"{record.case_id}: {record.data['case'].get('title', '')}"
    out = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        f"<title>{_esc(title)}</title><style>{_STYLE}</style></head><body>",
        f"<h1>{_esc(title)}</h1>",
        f'<p class="caution">{_esc(CAUTION)}</p>',
        "<h2>Evidence</h2>",
        _table(["technique", "as given"], _evidence_rows(case)),
        "<p>Evidence used for ranking: "
        + _esc(", ".join(result.get("evidence", [])) or "none besides the formula")
        + "</p>",
    ]
    for note in result.get("notes", []):
        out.append(f"<p>Note: {_esc(note)}</p>")
    out.append("<h2>Formulas</h2>")
    out.append(_table(FORMULA_HEAD, _formula_rows(result), [False, True, True, True]))
    plots = [
        _isotope_plot(case, f["formula"], int(f["molecular_ion"]))
        for f in result.get("formulas", [])[:4]
        if not f.get("skipped")
    ]
    out.append('<div class="grid">' + "".join(p for p in plots if p) + "</div>")
    out.append("<h2>Elimination funnel</h2>")
    out.append(_table(["step", "structures"], _funnel(result), [False, True]))
    out.append(f"<h2>Shortlist ({min(top, len(shortlist))} of {result.get('candidate_count', 0):,})</h2>")
    if not shortlist:
        out.append("<p>No candidate survives: " + _esc("; ".join(result.get("empty_reason", []))) + "</p>")
    cells = []
    for c in shortlist[:top]:
        cells.append(
            f'<div class="cell">{_molecule_svg(c["smiles"])}<br><b>#{_esc(c["rank_label"])}</b> '
            f"score {c['score']:.3f} {_esc(c['formula'])}<br><code>{_esc(c['smiles'])}</code></div>"
        )
    out.append('<div class="grid">' + "".join(cells) + "</div>")
    names = _techniques(shortlist[:top])
    rows = []
    for c in shortlist[:top]:
        scores = _scores(c, names)
        rows.append(
            [c["rank_label"], c["smiles"], c["inchikey"], f"{c['score']:.3f}", *scores, "; ".join(c["reasons"])]
        )
    if rows:
        out.append("<h2>Evidence per candidate</h2>")
        numeric = [False, False, False, True] + [True] * len(names)
        out.append(_table(["rank", "SMILES", "InChIKey", "score", *names, "reasons"], rows, numeric))
    spectra = [_ms_plot(case, c["smiles"], f"#{c['rank_label']} {c['smiles']}") for c in shortlist[:SPECTRA]]
    if any(spectra):
        out.append("<h2>Mass spectrum against predicted ions</h2>")
        out += [s for s in spectra if s]
    advice = rank_measurements(shortlist[:top], case)[:NEXT_SHOWN]
    if advice:
        out.append("<h2>What to measure next</h2>")
        rows = [[m.name, f"{m.bits:.2f}", m.describe()] for m in advice]
        out.append(_table(["measurement", "expected bits", "what each outcome would leave"], rows, [False, True]))
    suspects = result.get("suspects", [])
    if suspects:
        out.append("<h2>Suspects</h2>")
        rows = []
        for s in suspects:
            verdict = "ranked" if s.get("rank") else f"eliminated by {s.get('eliminated_by')}: {s.get('why')}"
            rows.append([s["given"], s.get("formula") or "-", s.get("rank") or "-", verdict])
        out.append(_table(["given", "formula", "rank", "verdict"], rows))
    out.append("<h2>Provenance</h2>")
    out.append(_table(["item", "value"], _provenance(record)))
    out.append(f"<details><summary>case file as run</summary><pre>{_esc(record.case_text)}</pre></details>")
    out.append(f'<p class="caution">{_esc(CAUTION)}</p>')
    out.append("</body></html>")
    return "\n".join(out) + "\n"


def _md_cell(value: object) -> str:
    return str(value).replace("|", "\\|").replace("\n", " ")


def _md_table(head: Sequence[str], rows: Sequence[Sequence[object]]) -> list[str]:
    lines = ["| " + " | ".join(head) + " |", "|" + "---|" * len(head)]
    lines += ["| " + " | ".join(_md_cell(c) for c in row) + " |" for row in rows]
    return lines


def report_markdown(record: RunRecord, *, top: int = GRID) -> str:
    """The run for a lab notebook: the same sections as the HTML page, without pictures."""
    result = record.result
    case = run_case(record)
    shortlist = record.shortlist
    lines = [f"# {record.case_id}: {record.data['case'].get('title', '')}", "", f"> {CAUTION}", "", "## Evidence", ""]
    lines += _md_table(["technique", "as given"], _evidence_rows(case))
    lines += ["", "## Formulas", ""]
    lines += _md_table(FORMULA_HEAD, _formula_rows(result))
    lines += ["", "## Elimination funnel", ""]
    lines += _md_table(["step", "structures"], _funnel(result))
    lines += ["", f"## Shortlist ({min(top, len(shortlist))} of {result.get('candidate_count', 0):,})", ""]
    names = _techniques(shortlist[:top])
    rows = []
    for c in shortlist[:top]:
        scores = _scores(c, names)
        rows.append([c["rank_label"], f"`{c['smiles']}`", f"{c['score']:.3f}", *scores, "; ".join(c["reasons"][:2])])
    lines += _md_table(["rank", "SMILES", "score", *names, "reasons"], rows) if rows else ["No candidate survives."]
    lines += ["", "## Provenance", ""]
    lines += _md_table(["item", "value"], _provenance(record))
    lines += ["", "## Case file as run", "", "```yaml", record.case_text.rstrip("\n"), "```", "", f"> {CAUTION}"]
    return "\n".join(lines) + "\n"


def report_csv(record: RunRecord) -> str:
    """The shortlist, one row per candidate, one column per technique's component score."""
    shortlist = record.shortlist
    names = _techniques(shortlist)
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    head = ["rank", "smiles", "inchikey", "formula", "molecular_ion", "score", "log_likelihood"]
    writer.writerow([*head, *[f"score_{n}" for n in names], "reasons"])
    for c in shortlist:
        comps = c.get("components", {})
        writer.writerow(
            [
                c["rank_label"],
                c["smiles"],
                c["inchikey"],
                c["formula"],
                c.get("molecular_ion"),
                c["score"],
                c["log_likelihood"],
                *[comps[n]["score"] if n in comps else "" for n in names],
                "; ".join(c["reasons"]),
            ]
        )
    return buffer.getvalue()


def report_sdf(record: RunRecord) -> str:
    """The shortlist as an SD file (2D coordinates), with rank, score and the case in the data."""
    from .._rdkit import Chem, mol_from_smiles, quiet_rdkit, rdDepictor

    buffer = io.StringIO()
    with quiet_rdkit():
        writer = Chem.SDWriter(buffer)
        for c in record.shortlist:
            mol = mol_from_smiles(c["smiles"])
            if mol is None:
                continue
            rdDepictor.Compute2DCoords(mol)
            mol.SetProp("_Name", f"{record.case_id} rank {c['rank_label']}")
            for key, value in (
                ("rank", c["rank_label"]),
                ("smiles", c["smiles"]),
                ("inchikey", c["inchikey"]),
                ("formula", c["formula"]),
                ("score", f"{c['score']:.6f}"),
                ("case_id", record.case_id),
                ("run_record", record.name),
            ):
                mol.SetProp(key, str(value))
            writer.write(mol)
        writer.close()
    return buffer.getvalue()
