"""Command line: ``elucidate check``, ``formulas``, ``isomers``, ``solve``, and the working loop
around it: ``history``, ``diff``, ``report``, ``next``, ``import`` and ``new``.

Thin layer over the pure core: it parses arguments, reads case files, calls the engine and prints.
Exit codes: 0 success, 1 invalid input (a case file or value; the message says where), 2 usage,
3 ``solve`` found no candidate, 4 refused as too large (above the size limit).
"""

from __future__ import annotations

import argparse
import json
import os
import re
import sys
from collections.abc import Iterator, Sequence
from contextlib import nullcontext
from dataclasses import replace
from pathlib import Path
from typing import TYPE_CHECKING, TextIO

from . import __version__
from .case import (
    MAX_MZ,
    Case,
    FormulaSpec,
    base_peak_problem,
    intensity_problem,
    load_case,
    mz_problem,
    parse_case,
)
from .defaults import EXACT_MASS_KINDS, FORMULAS_PER_ION, ISOMERS_LIMIT, RATIO_LEVELS, SOLVER_LIMIT, WORKERS
from .elements import default_elements
from .errors import ElucidateError, TooLarge
from .formula import parse_formula
from .formula_search import FormulaQuery, ObservedCluster, check_formula, default_rules, derive_formulas, formula_query
from .formula_search.search import check_space
from .generator.kernel import ENGINES, worth_starting
from .interrupts import InterruptWatch
from .progress import TerminalProgress
from .reports.documents import REPORT_FORMATS
from .reports.formula_report import RULE_LABELS, formulas_json, formulas_text
from .reports.layout import text_table
from .runs import text_sha256
from .yamlnodes import MAX_YAML_BYTES, parse_range_text, read_text_file, read_yaml_file

if TYPE_CHECKING:
    from tqdm import tqdm

    from .cluster import DaskRunner
    from .runs import RunRecord
    from .spectra import ImportedSpectrum

__all__ = ["EXIT_NOTHING_SURVIVES", "EXIT_TOO_LARGE", "build_parser", "main"]

#: exit code of ``solve`` when no candidate survives (the report still says why)
EXIT_NOTHING_SURVIVES = 3
#: exit code when the question is refused as too large (isomers over --limit; solve when every
#: formula was above the limit)
EXIT_TOO_LARGE = 4
#: environment variables naming the runs folder and the cache file (the options override them)
RUNS_ENV = "ELUCIDATE_RUNS"
CACHE_ENV = "ELUCIDATE_CACHE"

_DESCRIPTION = """\
Structure elucidation from routine evidence (EI mass spectrum, IR, UV-Vis, 13C counts).
Results are hypotheses: confirm against a reference standard under your lab's own procedures.
"""


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(prog="elucidate", description=_DESCRIPTION)
    parser.add_argument("--version", action="version", version=f"elucidate {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")

    check = sub.add_parser("check", help="validate case files without solving")
    check.add_argument("cases", nargs="+", metavar="CASE", help="case file(s) to validate")

    f = sub.add_parser(
        "formulas",
        help="candidate molecular formulas for a nominal molecular ion",
        description=(
            "List every elemental composition with the given nominal mass that passes the DBE, "
            "nitrogen-rule, Senior and (unless switched off) Kind & Fiehn element-ratio filters, "
            "ranked by how well its simulated isotope cluster matches the observed one."
        ),
    )
    f.add_argument("target", metavar="M|CASE", help="nominal mass of M+. or the path of a case file")
    f.add_argument(
        "--molecular-ion", type=int, metavar="M", help="test this nominal M (overrides the case's molecular_ion)"
    )
    f.add_argument(
        "--peaks",
        metavar="LIST",
        help="peak list 'mz:intensity' (%% of base peak), separated by commas or spaces, e.g. '112:100 113:6.6 114:32'",
    )
    f.add_argument(
        "--elements",
        metavar="LIMITS",
        help="element limits, e.g. 'C:0-20,H:0-40,O:0-4,Cl:0-2' (unlisted elements: none)",
    )
    f.add_argument("--dbe", metavar="RANGE", help="allowed DBE, e.g. 0-20")
    f.add_argument("--exact-mass", type=float, metavar="MZ", help="measured exact m/z (HRMS)")
    f.add_argument(
        "--exact-mass-of",
        choices=EXACT_MASS_KINDS,
        help="'ion' (default): the exact mass is the m/z of M+. and one electron mass (0.000549 u) is "
        "subtracted from the neutral monoisotopic mass before comparing; 'neutral': compared as given",
    )
    f.add_argument("--ppm", type=float, metavar="PPM", help="exact-mass tolerance in ppm (default 5)")
    f.add_argument(
        "--element-ratios",
        choices=RATIO_LEVELS,
        help=(
            "Kind & Fiehn (2007) element-ratio heuristic: "
            "common (default, 99.7%% of known formulas), extended (99.99%%) or off; it demotes unless enforced"
        ),
    )
    f.add_argument(
        "--enforce-element-ratios",
        action="store_true",
        help="let the element-ratio heuristic eliminate formulas instead of only demoting them",
    )
    f.add_argument(
        "--top", type=int, metavar="N", help="show the best N (default 20 in the table, all in --json); 0 = all"
    )
    f.add_argument(
        "--explain", action="store_true", help="also list every rejected composition with the rule that rejected it"
    )
    f.add_argument("--why", metavar="FORMULA", help="say whether FORMULA is kept and, if not, which rule rejects it")
    f.add_argument("--json", action="store_true", help="print a JSON list, best first")
    g = sub.add_parser(
        "isomers",
        help="every constitutional isomer of a formula, as canonical SMILES",
        formatter_class=argparse.RawDescriptionHelpFormatter,
        description=(
            "Stream a canonical SMILES of every constitutional isomer of FORMULA, each once, one per\n"
            "line. Constitution only: stereoisomers are not distinguished. A structure that cannot be\n"
            "aromatic is written from its skeleton (the same molecule is written the same way in every\n"
            "run); the others, and every one with --rdkit-smiles, as RDKit's canonical SMILES.\n\n"
            "Valence states on by default: C, Si 4; N 3, and 5 as nitro / N-oxide written\n"
            "charge-separated ([N+][O-]); P 3, and 5 with P=O or P=S; O 2; S 2, and 4 / 6 with S=O\n"
            "(sulfoxides, sulfones, sulfinic and sulfonic groups; no H on such S); H and halogens 1.\n"
            "--lowest-valence switches the higher states off (plain graph counting, as in the\n"
            "enumeration literature). Bond orders 1-3; hydrogens fill each atom's free valence.\n\n"
            "Counting: by default the Kekule forms of one aromatic compound count once (what a chemist\n"
            "calls one compound); --kekule counts every multigraph, as the graph-enumeration\n"
            "literature does, and writes Kekule SMILES."
        ),
    )
    g.add_argument("formula", metavar="FORMULA", nargs="?", help="molecular formula, e.g. C7H8O")
    g.add_argument("--count", action="store_true", help="print only the number of isomers")
    g.add_argument("--json", action="store_true", help="print a JSON object with the formula, count and SMILES list")
    g.add_argument("--kekule", action="store_true", help="count and write every Kekule multigraph separately")
    g.add_argument(
        "--rdkit-smiles", action="store_true", help="write every isomer as RDKit's canonical SMILES (slower)"
    )
    g.add_argument(
        "--engine",
        choices=ENGINES,
        default="auto",
        help="who labels the skeletons and writes their SMILES: the compiled core (numba), Python, or "
        "auto (the compiled core once the space is estimated large enough for its start-up, about a "
        "second, to pay); the output is the same",
    )
    g.add_argument("--no-rings", action="store_true", help="acyclic isomers only")
    g.add_argument("--max-rings", type=int, metavar="N", help="at most N rings (cyclomatic number)")
    g.add_argument(
        "--max-bond-order", type=int, choices=(1, 2, 3), default=3, help="1: single bonds only; 2: no triple bonds"
    )
    g.add_argument(
        "--require",
        action="append",
        default=[],
        metavar="GROUP",
        help="keep only isomers with this group (repeatable; see --list-groups)",
    )
    g.add_argument(
        "--forbid", action="append", default=[], metavar="GROUP", help="drop isomers with this group (repeatable)"
    )
    g.add_argument(
        "--require-smarts",
        action="append",
        default=[],
        metavar="SMARTS",
        help="keep only isomers matching this SMARTS (repeatable)",
    )
    g.add_argument(
        "--forbid-smarts",
        action="append",
        default=[],
        metavar="SMARTS",
        help="drop isomers matching this SMARTS (repeatable)",
    )
    g.add_argument(
        "--max-ring-size", type=int, metavar="N", help="no ring (smallest set of smallest rings) larger than N atoms"
    )
    g.add_argument(
        "--profile",
        metavar="NAME",
        help="drop structures a plausibility profile marks implausible (constraints/plausibility.yaml; e.g. "
        "'stable': no enols, ynols, gem-diols, peroxides, small-ring triple bonds or allenes, Bredt violations). "
        "Default: none, every isomer",
    )
    g.add_argument("--list-groups", action="store_true", help="list the group names with their definitions and exit")
    g.add_argument(
        "--lowest-valence", action="store_true", help="every element at its lowest valence only (N 3, P 3, S 2)"
    )
    g.add_argument(
        "--workers",
        type=int,
        default=WORKERS,
        metavar="N",
        help="worker processes (default 1); the output and its order do not depend on N",
    )
    g.add_argument(
        "--scheduler",
        metavar="ADDRESS",
        help="run generation on the Dask cluster whose scheduler is at ADDRESS (tcp://host:8786; needs "
        "the cluster extra); the output equals a one-process run",
    )
    g.add_argument(
        "--limit",
        type=float,
        default=ISOMERS_LIMIT,
        metavar="N",
        help=f"refuse when the estimated number of structures exceeds N (default {ISOMERS_LIMIT:,.0f})",
    )
    g.add_argument("--sort", action="store_true", help="print the SMILES sorted (the same set and order for any run)")

    v = sub.add_parser(
        "solve",
        help="rank candidate structures for a case on all its evidence",
        description=(
            "Derive the formulas, generate every constitutional isomer that passes the declared hard\n"
            "constraints (infrared.require/forbid, structure.require_smarts/forbid_smarts) and the\n"
            "'stable' plausibility profile, score each on the soft evidence (isotope fit, IR bands,\n"
            "UV lambda max, EI fragments, 13C counts; weights in constraints/scoring.yaml) and rank\n"
            "them. Soft evidence never eliminates. With molecular_ion: unknown, M is hypothesized\n"
            "from the highest peak and the usual first losses.\n"
            "The shortlist is a hypothesis: confirm it against a reference standard under your lab's\n"
            "own procedures; unknowns may be toxic or reactive."
        ),
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    v.add_argument("case", metavar="CASE", help="case file")
    v.add_argument("--top", type=int, default=10, metavar="N", help="shortlist length (default 10; 0 = all)")
    v.add_argument("--details", type=int, default=3, metavar="N", help="explain the top N in full (default 3)")
    v.add_argument("--json", action="store_true", help="print a JSON object instead of text")
    v.add_argument(
        "--formulas",
        type=int,
        default=None,
        metavar="N",
        help=f"formulas kept per molecular ion (default: the case's solve.formulas, else {FORMULAS_PER_ION})",
    )
    v.add_argument(
        "--workers",
        type=int,
        default=WORKERS,
        metavar="N",
        help=f"worker processes for generation and scoring (default {WORKERS}); the output does not depend on N",
    )
    v.add_argument(
        "--scheduler",
        metavar="ADDRESS",
        help="run generation and scoring on the Dask cluster whose scheduler is at ADDRESS (tcp://host:8786; needs "
        "the cluster extra); the output equals a one-process run",
    )
    v.add_argument(
        "--limit",
        type=float,
        default=None,
        metavar="N",
        help=(
            "skip a formula whose estimated structure space exceeds N and say so "
            f"(default: the case's solve.limit, else {SOLVER_LIMIT:,.0f})"
        ),
    )
    v.add_argument(
        "--worse-formulas",
        action="store_true",
        default=None,
        help=(
            "also enumerate formulas ranked below a formula skipped for size "
            "(default: the case's solve.worse_formulas, else they are named and left)"
        ),
    )
    v.add_argument(
        "--runs",
        metavar="DIR",
        help=f"folder for the run record (default: ${RUNS_ENV}, else runs/ beside the case file)",
    )
    v.add_argument("--no-record", action="store_true", help="write no run record")
    v.add_argument(
        "--cache",
        metavar="PATH",
        help=f"the candidate cache file (default: ${CACHE_ENV}, else candidates.sqlite in the user's cache folder)",
    )
    v.add_argument("--no-cache", action="store_true", help="neither read nor fill the candidate cache")

    h = sub.add_parser("history", help="list the recorded runs of a case (every revision of its id)")
    h.add_argument("case", metavar="CASE", help="case file (its id selects the runs)")
    h.add_argument("--runs", metavar="DIR", help=f"runs folder (default: ${RUNS_ENV}, else runs/ beside the case)")
    h.add_argument("--json", action="store_true", help="print a JSON list instead of text")

    d = sub.add_parser(
        "diff",
        help="what changed between two runs: evidence, eliminations, rank movements, components",
        description=(
            "Compare two run records (A then B), or the last two runs of a case file. Shows the evidence\n"
            "added, removed or changed, the formulas and counts per constraint, each candidate of A's\n"
            "shortlist that left B's and why (its rank, or the constraint that eliminates it), the rank\n"
            "movements and how the components of the leaders changed."
        ),
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    d.add_argument("first", metavar="A|CASE", help="a run record, or a case file for its last two runs")
    d.add_argument("second", metavar="B", nargs="?", help="the later run record")
    d.add_argument("--runs", metavar="DIR", help="runs folder when a case file is given")
    d.add_argument("--top", type=int, default=10, metavar="N", help="shortlist places compared (default 10)")
    d.add_argument("--json", action="store_true", help="print a JSON object instead of text")

    r = sub.add_parser(
        "report",
        help="a report of a run: self-contained HTML, Markdown, or the shortlist as CSV or SDF",
        description=(
            "Write a report of a run record (or of a case file's last run): HTML with the evidence,\n"
            "the formulas with observed against simulated isotope clusters, the shortlist as a\n"
            "structure grid, the evidence per candidate, observed against predicted EI ions, the\n"
            "elimination funnel, the provenance and the cautions; Markdown with the same tables; or\n"
            "the shortlist as CSV or SDF. The format follows -o's suffix unless --format is given."
        ),
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    r.add_argument("source", metavar="RUN|CASE", help="a run record, or a case file for its last run")
    r.add_argument("-o", "--output", metavar="FILE", help="write here (default: standard output)")
    r.add_argument("--format", choices=sorted(REPORT_FORMATS), help="html, markdown, csv or sdf (default: html)")
    r.add_argument("--runs", metavar="DIR", help="runs folder when a case file is given")

    n = sub.add_parser("new", help="write a commented case-file template (never overwrites a file)")
    n.add_argument("path", metavar="FILE", help="the new case file (.yaml)")
    n.add_argument("--id", dest="case_id", metavar="ID", help="the unknown's id (default: the file name)")
    n.add_argument("--title", metavar="TEXT", default="", help="a title")
    n.add_argument("--molecular-ion", type=int, metavar="M", help="pre-fill the nominal m/z of M+.")
    n.add_argument("--from", dest="spectrum", metavar="SPECTRUM", help="pre-fill peaks or bands from a spectrum file")
    n.add_argument("--kind", choices=["ir", "ms"], help="what the spectrum is, when its file does not say")

    m = sub.add_parser(
        "import",
        help="pick peaks or bands from a JCAMP-DX or two-column CSV spectrum, for pasting or a new case",
        description=(
            "Read an IR or EI mass spectrum (JCAMP-DX .jdx/.dx, or CSV x,y) and print the case-file lines:\n"
            "mass_spec peaks (m/z: % of base peak) or infrared bands (cm-1 with strength). IR in\n"
            "transmittance is turned into absorbance; bands are maxima above a prominence threshold.\n"
            "Profile mass spectra are centroided. The method is printed with the result."
        ),
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    m.add_argument("spectrum", metavar="FILE", help="the spectrum file")
    m.add_argument("--kind", choices=["ir", "ms"], help="what the spectrum is, when its file does not say")
    m.add_argument(
        "--prominence",
        type=float,
        default=0.05,
        metavar="F",
        help="peak prominence threshold, a fraction (default 0.05)",
    )
    m.add_argument(
        "--min-percent", type=float, default=0.1, metavar="P", help="MS: drop peaks below P %% of base (default 0.1)"
    )
    m.add_argument("-o", "--output", metavar="CASE", help="write a new case file with these peaks or bands")
    m.add_argument("--id", dest="case_id", metavar="ID", help="the new case's id (default: the file name)")

    x = sub.add_parser(
        "next",
        help="which cheap measurement would best split the shortlist of a case's last run",
        description=(
            "Rank the measurements a lab can make cheaply (13C count, DEPT, a band in a named IR\n"
            "region, a UV maximum, an exact mass, a D2O shake, a 1H integral pattern) by the expected\n"
            "information gain over the score-weighted shortlist of a run, and say what each outcome\n"
            "would leave. Measurements the case already holds are left out."
        ),
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    x.add_argument("source", metavar="CASE|RUN", help="a case file (its last run) or a run record")
    x.add_argument("--runs", metavar="DIR", help="runs folder when a case file is given")
    x.add_argument("--top", type=int, default=5, metavar="N", help="measurements shown (default 5)")
    x.add_argument("--json", action="store_true", help="print a JSON list instead of text")
    return parser


# ------------------------------------------------------------------ parsing helpers


def _tokens(text: str) -> list[str]:
    return [t for t in re.split(r"[\s,;]+", text.strip()) if t]


def _parse_peaks(text: str) -> dict[int, float]:
    """``--peaks``: tokens mz:intensity, checked by the case loader's own peak checks."""
    peaks: dict[int, float] = {}
    for tok in _tokens(text):
        mz_text, sep, value_text = tok.partition(":")
        try:
            if not sep:
                raise ValueError
            mz, value = int(mz_text), float(value_text)
        except ValueError as exc:
            raise ElucidateError(
                f"--peaks: cannot read {tok!r}; expected mz:intensity such as 113:6.6 "
                "(whole m/z, intensity in % of base peak, a point as the decimal mark)"
            ) from exc
        problem = mz_problem(mz) or intensity_problem(value)
        if problem is not None:
            raise ElucidateError(f"--peaks: {tok!r}: {problem}")
        if mz in peaks:
            raise ElucidateError(f"--peaks: m/z {mz} given twice")
        peaks[mz] = value
    problem = base_peak_problem(peaks.values())
    if problem is not None:
        raise ElucidateError(f"--peaks: {problem}")
    return peaks


def _parse_range(text: str, option: str) -> tuple[int, int]:
    parsed = parse_range_text(text)
    if parsed is None or parsed[0] > parsed[1]:
        raise ElucidateError(f"{option}: expected a count or range such as 0-20, got {text!r}")
    return parsed


def _parse_elements(text: str) -> dict[str, tuple[int, int]]:
    table = default_elements()
    limits: dict[str, tuple[int, int]] = {}
    for tok in _tokens(text):
        sym, sep, rng = tok.partition(":")
        if not sep:
            raise ElucidateError(f"--elements: cannot read {tok!r}; expected SYMBOL:RANGE such as C:0-20")
        if sym not in table:
            raise ElucidateError(f"--elements: unknown element {sym!r}; known elements: {', '.join(table.symbols)}")
        limits[sym] = _parse_range(rng, f"--elements {sym}")
    return {s: limits[s] for s in table.symbols if s in limits}


def _query(args: argparse.Namespace) -> tuple[FormulaQuery, Case | None]:
    """The formula question: the case's (or the defaults' for a bare mass), built by the same
    function the solver uses, then the options' overrides."""
    rules = default_rules()
    case: Case | None = None
    target = args.target.strip()
    if args.molecular_ion is not None and mz_problem(args.molecular_ion, what="--molecular-ion"):
        raise ElucidateError(str(mz_problem(args.molecular_ion, what="--molecular-ion")))
    if re.fullmatch(r"[0-9]+", target):
        # a nominal mass has a few digits; thousands of them would not even convert to int
        mass = int(target) if len(target) <= 12 else MAX_MZ + 1
        problem = mz_problem(mass, what="M")
        if problem is not None:
            shown = target if len(target) <= 12 else f"a number of {len(target):,} digits"
            raise ElucidateError(f"expected M from 1 to {MAX_MZ:,} (the range this version reads); got {shown}")
        if args.molecular_ion is not None:
            raise ElucidateError("give the mass once: either M as the first argument or --molecular-ion with a case")
        query = formula_query(mass, formula=FormulaSpec(), mass_spec=None, rules=rules)
    else:
        if not Path(target).suffix and not Path(target).exists():
            raise ElucidateError(f"{target!r} is neither a nominal mass (whole number) nor a case file")
        case = load_case(target)
        ms = case.mass_spec
        mass_opt = args.molecular_ion if args.molecular_ion is not None else (ms.molecular_ion if ms else None)
        if mass_opt is None and case.formula.known is not None:
            mass_opt = case.formula.known.nominal_mass()
        if mass_opt is None:
            raise ElucidateError(
                "the case gives no molecular ion (molecular_ion absent or unknown); "
                "test a hypothesis with --molecular-ion M",
                file=case.path,
                key="mass_spec.molecular_ion",
            )
        mass = mass_opt
        query = formula_query(mass, formula=case.formula, mass_spec=ms, rules=rules)
    if args.peaks is not None:
        peaks = _parse_peaks(args.peaks)
        cluster = ObservedCluster.from_peaks(mass, peaks, max_offset=rules.isotope_max_offset) if peaks else None
        query = replace(query, cluster=cluster)
    if args.elements is not None:
        query = replace(query, elements=_parse_elements(args.elements))
    if args.dbe is not None:
        query = replace(query, dbe=_parse_range(args.dbe, "--dbe"))
    if args.element_ratios is not None:
        query = replace(query, element_ratios=args.element_ratios)
    if args.enforce_element_ratios:
        query = replace(query, enforce_ratios=True)
    if args.exact_mass is not None:
        if abs(args.exact_mass - mass) >= 1:
            raise ElucidateError(f"--exact-mass {args.exact_mass} cannot belong to nominal M {mass}")
        query = replace(query, exact_mass=args.exact_mass)
    if args.exact_mass_of is not None:
        query = replace(query, exact_mass_of=args.exact_mass_of)
    if args.ppm is not None:
        if args.ppm <= 0:
            raise ElucidateError("--ppm must be above 0")
        query = replace(query, mass_tolerance_ppm=args.ppm)
    return query, case


def _why(text: str, query: FormulaQuery, out: TextIO, ranked: Sequence[str]) -> None:
    table = default_elements()
    formula = parse_formula(text, table)
    nominal = formula.nominal_mass(table)
    if nominal != query.nominal_mass:
        out.write(f"{formula}: nominal mass {nominal}, not {query.nominal_mass}\n")
        return
    for sym, n in formula.counts:
        low, high = query.elements.get(sym, (0, 0))
        if not low <= n <= high:
            out.write(f"{formula}: {n} {sym} is outside the element limits ({sym} {low}-{high})\n")
            return
    verdict = check_formula(formula, query, table=table)
    if verdict is not None:
        out.write(f"{formula}: rejected by {RULE_LABELS[verdict[0]]}: {verdict[1]}\n")
    else:
        rank = ranked.index(str(formula)) + 1 if str(formula) in ranked else None
        out.write(f"{formula}: kept" + (f", rank {rank} of {len(ranked)}" if rank else "") + "\n")


# ------------------------------------------------------------------ commands


def _cmd_check(args: argparse.Namespace, out: TextIO, err: TextIO) -> int:
    from .solver import preflight

    failures = too_large = 0
    seen: dict[str, list[tuple[str, str]]] = {}  # id -> (path, text hash) of the files checked
    for path in args.cases:
        try:
            text = read_text_file(path, max_bytes=MAX_YAML_BYTES)
            case = parse_case(text, file=path)
            preflight(case)  # what solve checks before any work, so check passes only what solve takes
        except TooLarge as exc:
            err.write(f"error: {exc}\n")
            too_large += 1
            continue
        except ElucidateError as exc:
            err.write(f"error: {exc}\n")
            failures += 1
            continue
        digest = text_sha256(text)
        earlier = seen.setdefault(case.id, [])
        # revisions of one unknown keep its id and add evidence: the normal case, named as such
        copy = next((p for p, d in earlier if d == digest), None)
        if copy is not None:
            note = f", the same text as {copy}"
        elif earlier:
            note = f", another revision of the unknown in {earlier[0][0]}"
        else:
            note = ""
        earlier.append((path, digest))
        out.write(f"ok: {path} ({case.id}{note})\n")
        for warning in case.warnings:
            err.write(f"warning: {warning}\n")
    if failures:
        err.write(f"{failures} of {len(args.cases)} case file(s) invalid\n")
    if too_large:
        err.write(f"{too_large} of {len(args.cases)} case file(s) refused as too large\n")
    # bad input outranks a refusal for size: fix the input first
    return 1 if failures else EXIT_TOO_LARGE if too_large else 0


def _cmd_formulas(args: argparse.Namespace, out: TextIO) -> int:
    query, case = _query(args)
    if args.top is not None and args.top < 0:
        raise ElucidateError("--top must be 0 (all) or more")
    try:
        check_space(query.nominal_mass, query.elements)
    except TooLarge as exc:
        if case is not None and not args.elements:
            raise TooLarge(
                exc.message, file=case.path, line=case.formula.elements_line, key="formula.elements"
            ) from exc
        raise TooLarge(f"--elements: {exc.message}" if args.elements else exc.message) from exc
    if args.why:
        ranked = [str(c.formula) for c in derive_formulas(query).kept]
        _why(args.why, query, out, ranked)
        return 0
    top = args.top if args.top is not None else (0 if args.json else 20)
    result = derive_formulas(query, top=top or None, keep_rejected=args.explain)
    if args.json:
        json.dump(formulas_json(result, explain=args.explain), out, indent=2)
        out.write("\n")
        return 0
    title = f"case {case.id}: {case.title} ({case.path})" if case is not None else None
    out.write(formulas_text(result, title=title, explain=args.explain))
    return 0


def _progress(err: TextIO, estimate: float) -> tqdm:
    """A progress bar on stderr for long runs; silent when stderr is not a terminal."""
    from tqdm import tqdm

    show = hasattr(err, "isatty") and err.isatty() and estimate > 50_000
    return tqdm(total=int(estimate), file=err, disable=not show, unit=" isomers", unit_scale=True, leave=False)


def _cmd_isomers(args: argparse.Namespace, out: TextIO, err: TextIO) -> int:
    from .generator import (
        GeneratorOptions,
        Selection,
        default_groups,
        default_profiles,
        estimate_space,
        isomer_smiles,
    )
    from .generator.tasks import beyond_generator

    if args.list_groups:
        groups = default_groups()
        width = max(map(len, groups.names))
        for name in groups.names:
            out.write(f"{name.ljust(width)}  {groups[name].definition}\n")
        return 0
    if args.formula is None:
        raise ElucidateError("give a formula, e.g. elucidate isomers C7H8O")
    formula = parse_formula(args.formula)
    if args.limit < 1:
        raise ElucidateError("--limit must be 1 or more")
    if formula.dbe().denominator != 1:
        raise ElucidateError(
            f"{formula} has a half-integer DBE ({float(formula.dbe()):g}): no neutral closed-shell molecule has this "
            "formula (a radical or an ion); check the H count"
        )
    groups = default_groups()
    for name in [*args.require, *args.forbid]:
        groups[name]  # unknown names raise with the list of known ones
    selection = Selection(
        require=tuple(args.require),
        forbid=tuple(args.forbid),
        require_smarts=tuple(args.require_smarts),
        forbid_smarts=tuple(args.forbid_smarts),
        max_ring_size=args.max_ring_size,
        profile=args.profile,
    )
    if args.profile is not None:
        default_profiles()[args.profile]  # unknown names raise with the list of profiles
    removed: dict[str, int] = {}
    if args.max_rings is not None and args.max_rings < 0:
        raise ElucidateError("--max-rings must be 0 or more")
    options = GeneratorOptions(
        kekule=args.kekule,
        max_rings=0 if args.no_rings else args.max_rings,
        max_bond_order=args.max_bond_order,
        lowest_valence=args.lowest_valence,
        selection=selection,
        workers=args.workers,
        rdkit_smiles=args.rdkit_smiles,
        engine=args.engine,
    )
    heavy = beyond_generator(formula)
    if heavy is not None:
        raise TooLarge(f"{formula}: {heavy}")
    space = estimate_space(formula, options)
    conditioned = selection is not None and (bool(selection.skeleton_patterns()) or selection.count_test is not None)
    if args.engine == "auto" and worth_starting(space.structures, conditioned=conditioned):
        options = replace(options, engine="compiled")  # large enough for the start-up to pay
    if space.over(args.limit):
        raise TooLarge(
            f"{formula}: about {space.structures:,.0f} structures to test and {space.nodes:,.0f} partial "
            "skeletons to grow estimated (Knuth's tree-size estimate of the space walked, before the "
            f"constraints are tested), above the limit of {args.limit:,.0f} structures (or 10 times as many "
            "partial skeletons); narrow the question (--require, --max-rings, --max-bond-order) or raise "
            "the limit with --limit N"
        )
    with InterruptWatch() as interrupts, _cluster(args.scheduler) or nullcontext() as runner:
        stream: Iterator[str] = interrupts.each(isomer_smiles(formula, options, removed=removed, runner=runner))
        if args.sort or args.json:
            stream = iter(sorted(stream))
        if args.json:
            listed = list(stream)
            data = {
                "formula": str(formula),
                "kekule": args.kekule,
                "count": len(listed),
                "removed": removed,
                "pruned_during_generation": [f"require {name}" for name in selection.pushed()],
                "smiles": listed,
            }
            json.dump(data, out, indent=1)
            out.write("\n")
            return 0
        count = 0
        with _progress(err, space.structures) as bar:
            for smiles in stream:
                count += 1
                bar.update(1)
                if not args.count:
                    out.write(smiles + "\n")
        for label, n in removed.items():
            err.write(f"removed by {label}: {n}\n")
        for name in selection.pushed():
            err.write(
                f"require {name}: also applied during generation (ring bound, skeleton conditions; not counted)\n"
            )
        if args.count:
            out.write(f"{count}\n")
        return 0


def _cmd_solve(args: argparse.Namespace, out: TextIO, err: TextIO) -> int:
    from .cache import CandidateCache, default_cache_path
    from .reports.solution_report import solve_json, solve_text
    from .runs import case_runs, make_record, write_record
    from .solver import solve

    for option in ("top", "details"):
        if getattr(args, option) < 0:
            raise ElucidateError(f"--{option} must be 0 or more")
    if args.formulas is not None and args.formulas < 1:
        raise ElucidateError("--formulas must be 1 or more")
    if args.limit is not None and args.limit < 1:
        raise ElucidateError("--limit must be 1 or more")
    if args.workers < 1:
        raise ElucidateError("--workers must be 1 or more")
    if args.no_record and args.runs:
        raise ElucidateError("--runs and --no-record contradict each other: give one")
    if args.no_cache and args.cache:
        raise ElucidateError("--cache and --no-cache contradict each other: give one")
    text = read_text_file(args.case, max_bytes=MAX_YAML_BYTES)  # the exact text solved is the text recorded
    case = parse_case(text, file=args.case)
    # the command line overrides the case's own solve section, which overrides the defaults
    formulas = args.formulas or case.solve.formulas or FORMULAS_PER_ION
    limit = int(args.limit) if args.limit is not None else (case.solve.limit or SOLVER_LIMIT)
    worse = bool(args.worse_formulas or case.solve.worse_formulas)
    folder = None if args.no_record else _runs_folder(args.case, args.runs)
    problems: list[str] = []
    earlier = case_runs(folder, case.id, problems=problems) if folder is not None else []
    for problem in problems:
        err.write(f"warning: skipped in the runs folder: {problem}\n")
    previous = earlier[-1] if earlier else None
    # the previous run's shortlist is followed: the record says where each went, and why
    watch = [c["smiles"] for c in previous.shortlist] if previous is not None else []
    cache_path = None if args.no_cache else (args.cache or os.environ.get(CACHE_ENV) or default_cache_path())

    def warn(message: str) -> None:
        err.write(f"warning: {message}\n")

    cache = None if cache_path is None else CandidateCache(cache_path, warn=warn)
    with (
        InterruptWatch() as interrupts,
        TerminalProgress(err) as progress,
        _cluster(args.scheduler) or nullcontext() as runner,
        cache or nullcontext(),
    ):
        solution = solve(
            case,
            limit=limit,
            max_formulas=formulas,
            workers=args.workers,
            worse_formulas=worse,
            shortlist=args.top,
            watch=watch,
            runner=runner,
            progress=interrupts.checking(progress),
            cache=cache,
        )
    result = solve_json(solution, top=args.top)
    if args.json:
        json.dump(result, out, indent=1)
        out.write("\n")
    else:
        out.write(solve_text(solution, top=args.top, details=args.details))
    every_skipped = bool(solution.formulas) and all(k.skipped for k in solution.formulas)
    code = 0 if solution.candidates else EXIT_TOO_LARGE if every_skipped else EXIT_NOTHING_SURVIVES
    if folder is not None:
        options = {
            "top": args.top,
            "formulas": formulas,
            "limit": limit,
            "worse_formulas": worse,
            "workers": args.workers,
            "scheduler": args.scheduler,
            "cache": None if cache_path is None else str(cache_path),
        }
        record = make_record(
            case_path=str(Path(args.case).resolve()),
            case_text=text,
            case_id=case.id,
            title=case.title,
            version=__version__,
            options=options,
            result=result,
            followed=[f.as_dict() for f in solution.followed],
            previous=previous.name if previous is not None else None,
        )
        try:
            path = write_record(record, folder)
        except ElucidateError as exc:
            err.write(f"error: {exc} (the result above is not recorded; --runs DIR or --no-record)\n")
            return 1
        err.write(f"run recorded: {path}\n")
    return code


def _case_id(path: str) -> str:
    """A case file's id, read without validating the rest (its history is wanted even while the
    file is being edited)."""
    root = read_yaml_file(path)
    node = root.value.get("id") if isinstance(root.value, dict) else None
    if node is None or not isinstance(node.value, str) or not node.value.strip():
        raise ElucidateError("a case file needs an id (text)", file=path, key="id")
    return str(node.value)


def _cmd_history(args: argparse.Namespace, out: TextIO, err: TextIO) -> int:
    from .runs import revisions

    problems: list[str] = []
    case_id, folder, records = _case_records(args.case, args.runs, 0, problems=problems)
    for problem in problems:
        err.write(f"warning: skipped: {problem}\n")
    numbers = revisions(records)
    current = text_sha256(read_text_file(args.case, max_bytes=MAX_YAML_BYTES))
    rows = []
    for r in records:
        result = r.result
        top = r.shortlist[0] if r.shortlist else None
        rows.append(
            {
                "record": r.name,
                "created_utc": r.created,
                "revision": numbers[r.case_sha256],
                "current_text": r.case_sha256 == current,
                "evidence": list(result.get("evidence", [])),
                "formulas": [f["formula"] for f in result.get("formulas", []) if not f.get("skipped")],
                "candidates": result.get("candidate_count", 0),
                "top": None if top is None else {"smiles": top["smiles"], "score": top["score"]},
                "version": r.data["tool"].get("version"),
            }
        )
    if args.json:
        json.dump({"case_id": case_id, "runs_folder": str(folder), "runs": rows}, out, indent=1)
        out.write("\n")
        return 0
    out.write(f"case {case_id}: {len(rows)} run(s) in {folder}\n")
    if not rows:
        out.write("  none yet (elucidate solve records each run)\n")
        return 0
    table = [["record", "UTC", "rev", "evidence", "formulas", "candidates", "top candidate"]]
    for row in rows:
        top = row["top"]
        rev = f"{row['revision']}{'*' if row['current_text'] else ''}"
        table.append(
            [
                row["record"],
                row["created_utc"][:19].replace("T", " "),
                rev,
                ", ".join(row["evidence"]) or "formula only",
                " ".join(row["formulas"]) or "-",
                f"{row['candidates']:,}",
                "-" if top is None else f"{top['smiles']} ({top['score']:.3f})",
            ]
        )
    out.write("\n".join("  " + line for line in text_table(table, [False, False, True, False, False, True, False])))
    out.write(
        "\n  rev: revision of the case text (a new revision each time the file changed); * = the file as it is now\n"
    )
    return 0


def _runs_folder(case_path: str, option: str | None) -> Path:
    """The runs folder of a case: --runs, else $ELUCIDATE_RUNS, else runs/ beside the case."""
    from .runs import runs_folder

    return runs_folder(case_path, option or os.environ.get(RUNS_ENV) or None)


def _case_records(
    path: str, runs: str | None, need: int, *, problems: list[str] | None = None
) -> tuple[str, Path, list[RunRecord]]:
    """The id, runs folder and recorded runs (oldest first, at least ``need``) of the case file
    at ``path``; unreadable files in the folder are named in ``problems`` when given."""
    from .runs import case_runs

    case_id = _case_id(path)
    folder = _runs_folder(path, runs)
    records = case_runs(folder, case_id, problems=problems)
    if len(records) < need:
        raise ElucidateError(
            f"case {case_id} has {len(records)} recorded run(s) in {folder}, {need} needed "
            "(elucidate solve records one)"
        )
    return case_id, folder, records


def _last_run(path: str, runs: str | None) -> RunRecord:
    """The record given, or the last recorded run of the case file given."""
    from .runs import read_record

    return read_record(path) if path.endswith(".json") else _case_records(path, runs, 1)[2][-1]


def _cmd_report(args: argparse.Namespace, out: TextIO) -> int:
    from .reports.documents import report_csv, report_html, report_markdown, report_sdf

    record = _last_run(args.source, args.runs)
    kind = args.format
    if kind is None and args.output:
        suffix = Path(args.output).suffix.lower()
        kind = next((name for name, ends in REPORT_FORMATS.items() if suffix in ends), None)
        if kind is None:
            known = ", ".join(e for ends in REPORT_FORMATS.values() for e in ends)
            raise ElucidateError(
                f"-o {args.output}: unknown report suffix {suffix or '(none)'!r}; use {known} or --format"
            )
    writers = {"html": report_html, "markdown": report_markdown, "csv": report_csv, "sdf": report_sdf}
    text = writers[kind or "html"](record)
    if not args.output:
        out.write(text)
        return 0
    target = Path(args.output)
    try:
        target.write_text(text, encoding="utf-8")
    except OSError as exc:
        raise ElucidateError(f"cannot write the report: {exc.strerror}", file=str(target)) from exc
    out.write(f"report written: {target}\n")
    return 0


def _write_new_case(path: str, text: str, out: TextIO, case_id: str) -> None:
    target = Path(path)
    try:
        with target.open("x", encoding="utf-8") as handle:  # "x": never overwrite
            handle.write(text)
    except FileExistsError as exc:
        raise ElucidateError("already exists; elucidate never overwrites a file", file=path) from exc
    except OSError as exc:
        raise ElucidateError(f"cannot write: {exc.strerror}", file=path) from exc
    out.write(f"case file written: {target} (id {case_id}); fill it in, then elucidate check {target}\n")


def _new_case_id(path: str, given: str | None) -> str:
    if Path(path).suffix.lower() not in (".yaml", ".yml"):
        raise ElucidateError(f"{path}: a case file ends in .yaml or .yml")
    return given or Path(path).stem.lower()


def _imported(path: str, kind: str | None, prominence: float = 0.05, min_percent: float = 0.1) -> ImportedSpectrum:
    from .spectra import pick, read_spectrum

    trace = read_spectrum(path, kind=kind)
    try:
        return pick(trace, source=path, prominence=prominence, min_percent=min_percent)
    except ElucidateError as exc:
        raise exc.in_file(path) from exc


def _cmd_new(args: argparse.Namespace, out: TextIO) -> int:
    from .template import case_template

    case_id = _new_case_id(args.path, args.case_id)
    if args.molecular_ion is not None and mz_problem(args.molecular_ion, what="--molecular-ion"):
        raise ElucidateError(str(mz_problem(args.molecular_ion, what="--molecular-ion")))
    spectrum = _imported(args.spectrum, args.kind) if args.spectrum else None
    text = case_template(
        case_id,
        title=args.title,
        molecular_ion=args.molecular_ion,
        peaks=spectrum.peaks if spectrum is not None else None,
        bands=spectrum.bands if spectrum is not None else (),
        source=args.spectrum,
    )
    _write_new_case(args.path, text, out, case_id)
    return 0


def _cmd_import(args: argparse.Namespace, out: TextIO) -> int:
    from .spectra import bands_text, peaks_text
    from .template import case_template

    if args.min_percent < 0 or args.min_percent >= 100:
        raise ElucidateError("--min-percent must be from 0 to below 100")
    spectrum = _imported(args.spectrum, args.kind, args.prominence, args.min_percent)
    if args.output:
        case_id = _new_case_id(args.output, args.case_id)
        text = case_template(case_id, peaks=spectrum.peaks, bands=spectrum.bands, source=args.spectrum)
        _write_new_case(args.output, text, out, case_id)
        return 0
    out.write(f"# {args.spectrum}: {spectrum.method}\n")
    if spectrum.kind == "ms":
        out.write(f"# {len(spectrum.peaks)} peaks; paste under mass_spec: and set molecular_ion\n")
        out.write(peaks_text(spectrum))
    else:
        out.write(f"# {len(spectrum.bands)} bands; paste under infrared:\n")
        out.write(bands_text(spectrum))
    return 0


def _cmd_next(args: argparse.Namespace, out: TextIO) -> int:
    from .advice_next import rank_measurements
    from .reports.documents import run_case

    if args.top < 1:
        raise ElucidateError("--top must be 1 or more")
    record = _last_run(args.source, args.runs)
    ranked = rank_measurements(record.shortlist, run_case(record))[: args.top]
    if args.json:
        data = [
            {
                "measurement": m.name,
                "bits": round(m.bits, 6),
                "outcomes": [
                    {"outcome": o, "probability": round(p, 6), "candidates": list(c)} for o, p, c in m.outcomes
                ],
            }
            for m in ranked
        ]
        json.dump({"run": record.name, "shortlist": len(record.shortlist), "measurements": data}, out, indent=1)
        out.write("\n")
        return 0
    out.write(f"what to measure next for {record.case_id} (run {record.name}, shortlist of {len(record.shortlist)}):\n")
    if not record.shortlist:
        out.write("  the run has no candidate: see why in its report (elucidate report), then revise the constraints\n")
    elif not ranked:
        out.write("  nothing cheap splits the shortlist: every measurement listed would give the same outcome\n")
    for number, m in enumerate(ranked, start=1):
        out.write(f"  {number}. {m.name}: {m.bits:.2f} bits expected; {m.describe()}\n")
    return 0


def _cmd_diff(args: argparse.Namespace, out: TextIO, err: TextIO) -> int:
    from .reports.run_diff import diff_json, diff_records, diff_text
    from .runs import read_record

    if args.top < 1:
        raise ElucidateError("--top must be 1 or more")
    if args.second is not None:
        first, second = read_record(args.first), read_record(args.second)
    else:
        if args.first.endswith(".json"):
            raise ElucidateError("give two run records (A B), or a case file for its last two runs")
        first, second = _case_records(args.first, args.runs, 2)[2][-2:]
    result = diff_records(first, second, top=args.top)
    if args.json:
        json.dump(diff_json(result), out, indent=1)
        out.write("\n")
    else:
        out.write(diff_text(result))
    return 0


def _cluster(address: str | None) -> DaskRunner | None:
    """A runner on the Dask cluster at ``address``, or None for local processes."""
    if address is None:
        return None
    from .cluster import DaskRunner

    return DaskRunner(address)


def main(argv: Sequence[str] | None = None, *, stdout: TextIO | None = None, stderr: TextIO | None = None) -> int:
    """Run the command line; returns the exit code (never raises for bad input)."""
    out = stdout or sys.stdout
    err = stderr or sys.stderr
    parser = build_parser()
    try:
        args = parser.parse_args(list(argv) if argv is not None else None)
    except SystemExit as exc:  # argparse reports usage errors itself
        return int(exc.code or 0)
    if args.command is None:
        parser.print_help(out)
        return 2
    try:
        return _dispatch(args, parser, out, err)
    except BrokenPipeError:  # e.g. `elucidate isomers C8H10 | head`
        if out is sys.stdout:
            devnull = os.open(os.devnull, os.O_WRONLY)
            os.dup2(devnull, sys.stdout.fileno())
        return 0
    except KeyboardInterrupt:
        err.write("interrupted\n")
        return 130


def _dispatch(args: argparse.Namespace, parser: argparse.ArgumentParser, out: TextIO, err: TextIO) -> int:
    try:
        if args.command == "check":
            return _cmd_check(args, out, err)
        if args.command == "formulas":
            return _cmd_formulas(args, out)
        if args.command == "isomers":
            return _cmd_isomers(args, out, err)
        if args.command == "solve":
            return _cmd_solve(args, out, err)
        if args.command == "history":
            return _cmd_history(args, out, err)
        if args.command == "diff":
            return _cmd_diff(args, out, err)
        if args.command == "report":
            return _cmd_report(args, out)
        if args.command == "new":
            return _cmd_new(args, out)
        if args.command == "import":
            return _cmd_import(args, out)
        if args.command == "next":
            return _cmd_next(args, out)
    except TooLarge as exc:
        err.write(f"error: {exc}\n")
        return EXIT_TOO_LARGE
    except ElucidateError as exc:
        err.write(f"error: {exc}\n")
        return 1
    parser.error(f"unknown command {args.command}")  # pragma: no cover
    return 2  # pragma: no cover
