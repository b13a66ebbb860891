"""EI fragmentation: the ions a candidate's molecular ion is expected to give, against the peaks.

Rules (``constraints/fragments.yaml``): simple cleavages (alpha to N, O, S and C=O, benzylic,
allylic, at branch points, C-X), McLafferty rearrangements, retro-Diels-Alder, common neutral
losses and fixed ions, each with a weight for how abundant its ion usually is. A rule's ion may
go on to lose a neutral (ArCO+ -> Ar+ + CO). Predicted ions at one m/z keep the largest weight.

Besides the named rules, every peak is looked for among the pieces of the candidate's own graph
that breaking one or two bonds gives (with hydrogen transfers), and among the usual neutral
losses from M (``constraints/neutral_losses.yaml``) that the graph can give.

Assessment. Peaks of the molecular-ion cluster (M and above) are left out. Of the remaining
observed intensity (m/z >= ``lowest_mz``), a peak a named rule predicts is explained in full; one
only a generic cleavage explains earns ``generic_credit``, a usual loss ``loss_credit``; an
isotope partner (13C, 37Cl, 81Br) earns what its parent earned. Against the candidate: each strong
predicted ion (weight >= ``strong_weight``) inside the observed m/z range but absent costs
``missing_penalty`` x its weight. Unexplained: ``unexplained_scale`` x the share of intensity not
explained — mild, because no rule table is complete. Every observed peak gets its explanation.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from functools import cache, lru_cache
from pathlib import Path
from typing import TYPE_CHECKING, Literal

from .._mol import bonds_of
from ..case import Case
from ..elements import ElementTable, default_elements
from ..errors import ElucidateError
from ..formula import Formula
from ..generator.implication import PatternNeeds, features_of, pattern_needs
from ..smarts import compiled_smarts
from ..tables import table_path, validated
from ..yamlnodes import as_bool, as_choice, as_int, as_list, as_number, as_range, as_str, mapping, read_yaml_file
from .base import Assessment, Partial, Reading, Subject

if TYPE_CHECKING:
    from .._rdkit import Mol

__all__ = [
    "FragmentRule",
    "FragmentTable",
    "Fragments",
    "NeutralLoss",
    "NeutralLossTable",
    "Piece",
    "default_fragments",
    "default_neutral_losses",
    "graph_pieces",
    "load_fragments",
    "load_neutral_losses",
    "predict_ions",
]

KINDS = ("cleave", "rearrange", "retro_diels_alder", "loss", "ion")


@dataclass(frozen=True)
class FragmentRule:
    name: str
    kind: str
    smarts: str
    weight: float
    what: str
    neutral: int | None = None
    mz: int | None = None
    then_loss: int | None = None
    lost_size: float = 0.1

    @property
    def pattern(self) -> Mol:
        return compiled_smarts(self.smarts)

    @property
    def mapped(self) -> dict[int, int]:
        """Map number -> query atom index (cached: iterating RDKit atoms is slow)."""
        return _mapped(self.smarts)

    @property
    def needs(self) -> PatternNeeds:
        """What any molecule the pattern matches has (cached)."""
        return _needs(self.smarts)


@cache
def _mapped(smarts: str) -> dict[int, int]:
    return {a.GetAtomMapNum(): a.GetIdx() for a in compiled_smarts(smarts).GetAtoms() if a.GetAtomMapNum()}


@cache
def _needs(smarts: str) -> PatternNeeds:
    return pattern_needs(compiled_smarts(smarts))


@dataclass(frozen=True, eq=False)
class FragmentTable:
    rules: tuple[FragmentRule, ...]
    strong_weight: float
    missing_penalty: float
    lowest_mz: int = 26  # peaks below this m/z are not scored (too unspecific)
    generic_credit: float = 0.5  # share of a peak's intensity credited to a generic cleavage
    loss_credit: float = 0.75  # ... to a usual neutral loss the candidate's graph can give
    max_h_transfer: int = 2  # hydrogens a generic piece may gain or lose
    unexplained_scale: float = 2.0  # nats when no fragment intensity at all is explained
    source: str = ""

    def validate(self) -> None:
        for i, rule in enumerate(self.rules):
            where = f"rules[{i}]"
            try:
                pattern = rule.pattern
            except ElucidateError as exc:
                raise ElucidateError(exc.message, key=f"{where}.smarts") from exc
            maps = {a.GetAtomMapNum() for a in pattern.GetAtoms()} - {0}
            need = {"cleave": {1, 2}, "rearrange": {1, 2}, "retro_diels_alder": {1, 2, 3, 4, 5, 6}}.get(
                rule.kind, set()
            )
            if not need <= maps:
                raise ElucidateError(f"a {rule.kind} rule needs mapped atoms {sorted(need)}", key=f"{where}.smarts")
            if rule.kind == "loss" and rule.neutral is None:
                raise ElucidateError("a loss rule needs `neutral`", key=where)
            if rule.kind == "ion" and rule.mz is None:
                raise ElucidateError("an ion rule needs `mz`", key=where)


def load_fragments(path: str | Path | None = None) -> FragmentTable:
    file = Path(path) if path is not None else table_path("fragments.yaml")
    document = read_yaml_file(file, table=True)
    keys = [
        "source",
        "strong_weight",
        "missing_penalty",
        "lowest_mz",
        "generic_credit",
        "loss_credit",
        "max_h_transfer",
        "unexplained_scale",
        "rules",
    ]
    root = mapping(document, keys, required=keys[1:])
    rules = []
    for item in as_list(root["rules"], what="a list of rules"):
        r = mapping(
            item,
            ["name", "kind", "smarts", "weight", "what", "neutral", "mz", "then_loss", "lost_size"],
            required=["name", "kind", "smarts", "weight", "what"],
        )
        rules.append(
            FragmentRule(
                name=as_str(r["name"]),
                kind=as_choice(r["kind"], KINDS, what="a rule kind:"),
                smarts=as_str(r["smarts"], what="a SMARTS pattern"),
                weight=as_number(r["weight"], minimum=0, maximum=1, what="a weight 0-1"),
                what=as_str(r["what"]),
                neutral=as_int(r["neutral"], minimum=1, what="a neutral mass") if "neutral" in r else None,
                mz=as_int(r["mz"], minimum=1, what="an m/z") if "mz" in r else None,
                then_loss=as_int(r["then_loss"], minimum=1, what="a neutral mass") if "then_loss" in r else None,
                lost_size=as_number(r["lost_size"], minimum=0, maximum=0.5, what="0-0.5") if "lost_size" in r else 0.1,
            )
        )
    table = FragmentTable(
        tuple(rules),
        as_number(root["strong_weight"], minimum=0, maximum=1, what="a weight 0-1"),
        as_number(root["missing_penalty"], minimum=0, what="a penalty of 0 or more"),
        as_int(root["lowest_mz"], minimum=1, what="a whole m/z"),
        as_number(root["generic_credit"], minimum=0, maximum=1, what="a credit 0-1"),
        as_number(root["loss_credit"], minimum=0, maximum=1, what="a credit 0-1"),
        as_int(root["max_h_transfer"], minimum=0, maximum=3, what="0-3 hydrogens"),
        as_number(root["unexplained_scale"], minimum=0, what="nats of 0 or more"),
        as_str(root["source"]) if "source" in root else "",
    )
    return validated(table, document)


@lru_cache(maxsize=1)
def default_fragments() -> FragmentTable:
    return load_fragments()


# ------------------------------------------------------------------ prediction


def _atom_masses(mol: Mol, table: ElementTable) -> list[int]:
    h = table["H"].nominal_mass
    out = []
    for i in range(mol.GetNumAtoms()):  # indexing is much faster than iterating GetAtoms()
        a = mol.GetAtomWithIdx(i)
        out.append(table[a.GetSymbol()].nominal_mass + h * a.GetTotalNumHs())
    return out


def _adjacency(mol: Mol) -> list[int]:
    """Each atom's neighbours as a bit mask."""
    adjacency = [0] * mol.GetNumAtoms()
    for bond in bonds_of(mol):
        a, b = bond.GetBeginAtomIdx(), bond.GetEndAtomIdx()
        adjacency[a] |= 1 << b
        adjacency[b] |= 1 << a
    return adjacency


def _reach(start: int, adj: Sequence[int]) -> int:
    """The atoms (bit mask) reachable from ``start`` over the adjacency masks ``adj``."""
    seen = frontier = 1 << start
    while frontier:
        reach = 0
        rest = frontier
        while rest:
            low = rest & -rest
            reach |= adj[low.bit_length() - 1]
            rest ^= low
        frontier = reach & ~seen
        seen |= frontier
    return seen


def _piece(adjacency: Sequence[int], start: int, cut: Sequence[tuple[int, int]]) -> int | None:
    """Atoms (bit mask) reachable from ``start`` without crossing the cut bonds; None if the cut
    does not separate the molecule."""
    adj = list(adjacency)
    for a, b in cut:
        adj[a] &= ~(1 << b)
        adj[b] &= ~(1 << a)
    seen = _reach(start, adj)
    return None if seen == (1 << len(adj)) - 1 else seen


@dataclass(frozen=True)
class PredictedIon:
    mz: int
    weight: float
    rule: str
    what: str


def predict_ions(
    mol: Mol, *, table: FragmentTable | None = None, elements: ElementTable | None = None
) -> dict[int, PredictedIon]:
    """Predicted fragment ions of ``mol`` (aromaticity perceived): m/z -> the strongest reason."""
    t = table or default_fragments()
    e = elements or default_elements()
    masses = _atom_masses(mol, e)
    total = sum(masses)
    heavy = mol.GetNumAtoms()
    adjacency = _adjacency(mol)
    features = features_of(mol)  # a rule whose pattern needs what the molecule lacks cannot match
    out: dict[int, PredictedIon] = {}

    def add(mz: int, weight: float, rule: FragmentRule, what: str) -> None:
        if mz <= 0 or mz >= total:
            return
        weight = min(weight, 1.0)
        if mz not in out or out[mz].weight < weight:
            out[mz] = PredictedIon(mz, round(weight, 4), rule.name, what)

    for rule in t.rules:
        if not features.allows(rule.needs):
            continue
        if rule.kind == "loss":
            if mol.HasSubstructMatch(rule.pattern):
                assert rule.neutral is not None
                add(total - rule.neutral, rule.weight, rule, f"M-{rule.neutral}: {rule.what}")
                if rule.then_loss:
                    add(
                        total - rule.neutral - rule.then_loss,
                        rule.weight * 0.6,
                        rule,
                        f"{rule.what}, then -{rule.then_loss}",
                    )
            continue
        if rule.kind == "ion":
            if mol.HasSubstructMatch(rule.pattern):
                assert rule.mz is not None
                add(rule.mz, rule.weight, rule, rule.what)
                if rule.then_loss:
                    add(rule.mz - rule.then_loss, rule.weight * 0.5, rule, f"{rule.what}, then -{rule.then_loss}")
            continue
        maps = rule.mapped
        done: set[tuple[tuple[int, int], ...]] = set()
        for match in mol.GetSubstructMatches(rule.pattern, uniquify=False, maxMatches=200):
            at = {k: match[i] for k, i in maps.items()}
            key = tuple(sorted(at.items()))
            if key in done:  # the same cleavage through another mapping of unmapped atoms
                continue
            done.add(key)
            cut: tuple[tuple[int, int], ...]
            if rule.kind == "retro_diels_alder":
                cut = ((at[3], at[4]), (at[5], at[6]))
            else:
                cut = ((at[1], at[2]),)
            piece = _piece(adjacency, at[1], cut)
            if piece is None:
                continue
            mz = sum(masses[i] for i in range(heavy) if piece >> i & 1)
            if rule.kind == "rearrange":
                mz += e["H"].nominal_mass
            lost = heavy - piece.bit_count()
            weight = rule.weight * (min(1.0, 0.6 + rule.lost_size * lost) if rule.kind == "cleave" else 1.0)
            add(mz, weight, rule, rule.what)
            if rule.then_loss:
                add(mz - rule.then_loss, weight * 0.6, rule, f"{rule.what}, then -{rule.then_loss}")
    return dict(sorted(out.items()))


@dataclass(frozen=True)
class NeutralLoss:
    loss: int  # nominal mass lost from M
    neutral: str
    first: bool  # a usual first loss, tried for M when the molecular ion is not seen


@dataclass(frozen=True, eq=False)
class NeutralLossTable:
    losses: tuple[NeutralLoss, ...]
    source: str = ""
    #: losses from M+ that no usual fragmentation gives (inclusive ranges, u): a peak that far
    #: below a supposed M argues that M is not the molecular ion
    implausible: tuple[tuple[int, int], ...] = ()

    def validate(self) -> None:
        seen: set[int] = set()
        for i, item in enumerate(self.losses):
            if item.loss in seen:
                raise ElucidateError(f"loss {item.loss} is listed twice", key=f"losses[{i}].loss")
            seen.add(item.loss)
            if self.is_implausible(item.loss):
                raise ElucidateError(f"loss {item.loss} is also listed as implausible", key=f"losses[{i}].loss")

    def is_implausible(self, loss: int) -> bool:
        return any(low <= loss <= high for low, high in self.implausible)

    def by_mass(self) -> dict[int, NeutralLoss]:
        return {item.loss: item for item in self.losses}


def load_neutral_losses(path: str | Path | None = None) -> NeutralLossTable:
    file = Path(path) if path is not None else table_path("neutral_losses.yaml")
    document = read_yaml_file(file, table=True)
    root = mapping(document, ["source", "losses", "implausible"], required=["losses"])
    losses = []
    for item in as_list(root["losses"], what="a list of losses"):
        r = mapping(item, ["loss", "neutral", "first"], required=["loss", "neutral", "first"])
        losses.append(
            NeutralLoss(as_int(r["loss"], minimum=1, what="a nominal mass"), as_str(r["neutral"]), as_bool(r["first"]))
        )
    implausible = (
        tuple(as_range(item) for item in as_list(root["implausible"], what="a list of ranges such as 3-14"))
        if "implausible" in root
        else ()
    )
    table = NeutralLossTable(tuple(losses), as_str(root["source"]) if "source" in root else "", implausible)
    return validated(table, document)


@lru_cache(maxsize=1)
def default_neutral_losses() -> NeutralLossTable:
    return load_neutral_losses()


@dataclass(frozen=True)
class Piece:
    """A connected piece of the candidate reachable by breaking one or two bonds."""

    mass: int  # nominal mass: heavy atoms with their hydrogens
    atoms: int  # bit mask of its atoms
    bonds_broken: int  # 1 or 2


def graph_pieces(mol: Mol, *, elements: ElementTable | None = None) -> dict[int, Piece]:
    """Every connected piece of ``mol`` (not the whole molecule) that breaking one or two bonds
    gives, by mass; of pieces of equal mass the one from fewer broken bonds, then the lowest
    atom mask, is kept (so the result is deterministic)."""
    masses = _atom_masses(mol, elements or default_elements())
    n = mol.GetNumAtoms()
    whole = (1 << n) - 1
    bonds = [(b.GetBeginAtomIdx(), b.GetEndAtomIdx()) for b in bonds_of(mol)]
    adjacency = _adjacency(mol)

    masks: dict[int, int] = {}  # atom mask -> bonds broken (the fewest)

    def without(pairs: tuple[tuple[int, int], ...]) -> list[int]:
        adj = adjacency[:]
        for a, b in pairs:
            adj[a] &= ~(1 << b)
            adj[b] &= ~(1 << a)
        return adj

    def keep(mask: int, broken: int) -> None:
        if mask != whole and masks.get(mask, 3) > broken:
            masks[mask] = broken

    # one bond: a bridge splits the molecule into its two sides; a ring bond splits nothing
    side: dict[int, int] = {}  # bridge (index) -> the side holding its first atom
    for i, (a, b) in enumerate(bonds):
        mask = _reach(a, without(((a, b),)))
        if not mask >> b & 1:
            side[i] = mask
            keep(mask, 1)
            keep(whole ^ mask, 1)
    # two bonds: of two bridges, the piece holding an atom is where both its sides meet; a bridge
    # and a ring bond give the bridge's sides again (a ring bond stays on its ring); two ring
    # bonds are cut and searched
    for i, first in enumerate(bonds):
        for j in range(i + 1, len(bonds)):
            second = bonds[j]
            if i in side and j in side:
                for atom in (*first, *second):
                    one = side[i] if side[i] >> atom & 1 else whole ^ side[i]
                    two = side[j] if side[j] >> atom & 1 else whole ^ side[j]
                    keep(one & two, 2)
            elif i not in side and j not in side:
                adj = without((first, second))
                covered = 0  # atoms of the pieces already found for this cut
                for start in (*first, *second):
                    if not covered >> start & 1:
                        mask = _reach(start, adj)
                        covered |= mask
                        keep(mask, 2)
    out: dict[int, Piece] = {}
    for mask in sorted(masks):
        mass = sum(masses[i] for i in range(n) if mask >> i & 1)
        piece = Piece(mass, mask, masks[mask])
        if mass not in out or out[mass].bonds_broken > piece.bonds_broken:
            out[mass] = piece
    return out


def _piece_formula(mol: Mol, mask: int) -> str:
    counts: dict[str, int] = {}
    for i in range(mol.GetNumAtoms()):
        if mask >> i & 1:
            atom = mol.GetAtomWithIdx(i)
            counts[atom.GetSymbol()] = counts.get(atom.GetSymbol(), 0) + 1
            counts["H"] = counts.get("H", 0) + atom.GetTotalNumHs()
    return str(Formula.of(counts))


def _halogens(mol: Mol, mask: int) -> int:
    return sum(
        1 for i in range(mol.GetNumAtoms()) if mask >> i & 1 and mol.GetAtomWithIdx(i).GetSymbol() in ("Cl", "Br")
    )


def _scored(peaks: Mapping[int, float], molecular_ion: int | None, lowest: int) -> dict[int, float]:
    """The fragment peaks scored: from ``lowest`` up, below the molecular ion's cluster."""
    return {mz: v for mz, v in peaks.items() if mz >= lowest and (molecular_ion is None or mz < molecular_ion)}


def _isotope_partner(
    mz: int, intensity: float, peaks: Mapping[int, float], found: Mapping[int, tuple[str, float, int]]
) -> tuple[str, float, int] | None:
    """The 13C partner one above an explained ion (and weaker), or the 37Cl / 81Br partner two
    or four above an explained ion that holds Cl or Br (at most about twice as strong for two
    halogens): it earns what its parent earned."""
    below = found.get(mz - 1)
    if below is not None and peaks.get(mz - 1, 0.0) > intensity:
        return (f"13C isotope peak of m/z {mz - 1}", below[1], below[2])
    for step, need in ((2, 1), (4, 2)):
        parent = found.get(mz - step)
        if parent is not None and parent[2] >= need and intensity <= 2.1 * peaks.get(mz - step, 0.0):
            return (f"37Cl/81Br isotope peak of m/z {mz - step}", parent[1], parent[2])
    return None


def _generic(
    mz: int,
    molecular_ion: int | None,
    pieces: Mapping[int, Piece],
    usual: Mapping[int, NeutralLoss],
    table: FragmentTable,
    mol: Mol,
) -> tuple[str, float, int] | None:
    """A piece of the candidate's graph that gives ``mz``: a usual neutral loss from M first,
    then any piece with the fewest hydrogens moved."""
    if molecular_ion is not None:
        loss = molecular_ion - mz
        if loss in usual:
            for dh in _h_steps(table.max_h_transfer):
                lost = pieces.get(loss + dh)  # the lost piece; the ion keeps the rest
                if lost is not None and loss + dh < molecular_ion:
                    whole = (1 << mol.GetNumAtoms()) - 1
                    kept = whole & ~lost.atoms
                    text = f"M-{loss}: loss of {usual[loss].neutral} (from the graph)"
                    return (text, table.loss_credit, _halogens(mol, kept))
    for dh in _h_steps(table.max_h_transfer):
        piece = pieces.get(mz - dh)
        if piece is not None:
            moved = "" if dh == 0 else f" {'+' if dh > 0 else '-'}{abs(dh)}H"
            text = f"{_piece_formula(mol, piece.atoms)}{moved} ({piece.bonds_broken}-bond cleavage)"
            return (text, table.generic_credit, _halogens(mol, piece.atoms))
    return None


def _h_steps(most: int) -> list[int]:
    """0, +1, -1, +2, -2, ... up to ``most`` hydrogens moved."""
    return [0, *(s for k in range(1, most + 1) for s in (k, -k))]


class Fragments:
    """The EI fragment ions the candidate predicts against the peak list."""

    name = "fragments"
    weight_key = "fragments"
    label = "EI"
    stage: Literal["formula", "structure"] = "structure"
    reading_key: str | None = None
    scoring_pass: int = 6
    cost: float = 2000  # µs per candidate, bench/bench_scoring_cost.py

    def __init__(
        self,
        table: FragmentTable | None = None,
        elements: ElementTable | None = None,
        losses: NeutralLossTable | None = None,
    ) -> None:
        self.table = table or default_fragments()
        self.elements = elements or default_elements()
        self.losses = losses or default_neutral_losses()
        self._usual = self.losses.by_mass()  # built once, not per candidate

    def applies(self, case: Case) -> bool:
        return case.mass_spec is not None and len(case.mass_spec.peaks) > 1

    def hard_constraints(self, case: Case) -> Mapping[str, tuple[str, ...]]:
        return {}

    def assess(self, subject: Subject, case: Case) -> Assessment:
        return self.finish(subject, case, self.begin(subject, case))

    def begin(self, subject: Subject, case: Case, *, enough: float = math.inf) -> Partial:
        """The rule-predicted ions and the strong ones absent from the spectrum (the whole
        ``against``); the peaks the graph's pieces explain, which only lower ``unexplained``
        from its bound, are left to :meth:`finish`. ``enough`` is not used: the part is cheap
        enough whole."""
        assert case.mass_spec is not None
        t = self.table
        peaks = case.mass_spec.peaks
        m = subject.molecular_ion
        predicted = predict_ions(subject.mol, table=t, elements=self.elements)
        scored = _scored(peaks, m, t.lowest_mz)
        low = min(scored) if scored else 0
        missing = [
            ion
            for mz, ion in predicted.items()
            if ion.weight >= t.strong_weight
            and mz >= max(low, t.lowest_mz)
            and mz not in peaks
            and (m is None or mz < m)
        ]
        return Partial(t.missing_penalty * sum(ion.weight for ion in missing), 0.0, (predicted, missing))

    def finish(self, subject: Subject, case: Case, partial: Partial) -> Assessment:
        assert case.mass_spec is not None
        t = self.table
        peaks = case.mass_spec.peaks
        mol = subject.mol
        predicted, missing = partial.state
        scored = _scored(peaks, subject.molecular_ion, t.lowest_mz)
        total = sum(scored.values())
        pieces: dict[int, Piece] | None = None  # built when a peak needs them
        m = subject.molecular_ion
        usual = self._usual
        halogens = _halogens(mol, (1 << mol.GetNumAtoms()) - 1)
        found: dict[int, tuple[str, float, int]] = {}  # m/z -> (explanation, credit, halogens)
        for mz in sorted(scored):  # ascending, so an isotope partner's parent is settled first
            intensity = scored[mz]
            ion = predicted.get(mz)
            if ion is not None:
                found[mz] = (f"{ion.what} [{ion.rule}]", 1.0, halogens)
                continue
            partner = _isotope_partner(mz, intensity, peaks, found)
            if partner is not None:
                found[mz] = partner
                continue
            if pieces is None:
                pieces = graph_pieces(mol, elements=self.elements)
            generic = _generic(mz, m, pieces, usual, t, mol)
            if generic is not None:
                found[mz] = generic
        explained = sum(scored[mz] * credit for mz, (_, credit, _) in found.items())
        share = explained / total if total else 1.0
        assignments = [
            {"mz": mz, "intensity": v, "explained_by": found[mz][0] if mz in found else None}
            for mz, v in sorted(scored.items(), key=lambda kv: (-kv[1], kv[0]))
        ]
        against = partial.against
        unexplained = t.unexplained_scale * (1.0 - share)
        reasons = [
            (
                f"EI: {100 * share:.0f}% of the fragment intensity explained; "
                f"absent expected ions cost {against:.2f}, unexplained peaks {unexplained:.2f}"
            )
        ]
        top = [a for a in assignments if a["explained_by"]][:3]
        if top:
            reasons.append("EI: " + "; ".join(f"{a['mz']} {a['explained_by']}" for a in top))
        if missing:
            reasons.append("EI: expected but absent: " + ", ".join(f"{ion.mz} ({ion.rule})" for ion in missing[:4]))
        detail = {
            "explained_share": round(share, 6),
            "assignments": assignments,
            "missing": [{"mz": ion.mz, "rule": ion.rule, "weight": ion.weight} for ion in missing],
            "predicted": [{"mz": ion.mz, "weight": ion.weight, "rule": ion.rule} for ion in predicted.values()],
        }
        return Assessment(self.name, against, unexplained, tuple(reasons), detail)

    def detail_lines(self, assessment: Assessment) -> list[str]:
        d = assessment.detail
        lines = [
            (
                f"    EI  {100 * d['explained_share']:.0f}% of the fragment intensity explained; "
                f"against {assessment.against:.2f}, unexplained {assessment.unexplained:.2f} (nats, before caps)"
            )
        ]
        for item in d["assignments"][:8]:
            why = item["explained_by"] or "not explained"
            lines.append(f"    EI  m/z {item['mz']:>4} ({item['intensity']:g}%): {why}")
        for item in d["missing"][:4]:
            lines.append(f"    EI  m/z {item['mz']:>4} expected ({item['rule']}) but not listed")
        return lines

    def read(self, case: Case) -> Reading | None:
        return None
