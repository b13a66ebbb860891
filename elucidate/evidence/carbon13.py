"""13C signal counts from carbon symmetry classes.

Carbons are equivalent when the molecular graph's symmetry maps one onto the other (RDKit's
canonical ranking without tie breaking, with ring membership as a label where that ranking lumps
ring and chain atoms: :func:`graph_ranks`). One refinement a chemist expects: at a C=C whose one
end carries two identical groups and whose other end carries two different ones (H counts), the
two identical groups are cis and trans to different neighbours, so they give two signals
(2-methylbut-2-ene shows two methyl signals on C2). Multiplicities (DEPT-style CH3/CH2/CH/C)
come from hydrogen counts.

Scoring: fewer observed signals than predicted can be accidental overlap (mild penalty per
missing signal); more observed signals than the structure can give is a strong penalty, never
an elimination. The penalties live in ``constraints/carbon13.yaml``.
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from typing import TYPE_CHECKING, Literal, TypeAlias

from ..case import Case
from ..errors import ElucidateError
from ..smarts import compiled_smarts
from ..tables import table_path, validated
from ..yamlnodes import as_number, as_str, mapping, read_yaml_file
from .base import Assessment, Reading, Subject

if TYPE_CHECKING:
    from .._rdkit import Atom, Mol

__all__ = [
    "Carbon13",
    "Carbon13Table",
    "carbon_classes",
    "default_carbon13",
    "graph_ranks",
    "load_carbon13",
    "symmetry_ranks",
]

_PENALTIES = ("missing_signal", "extra_signal", "missing_multiplicity", "extra_multiplicity")


@dataclass(frozen=True, eq=False)
class Carbon13Table:
    """The contents of ``carbon13.yaml``: log-score penalties per signal."""

    missing_signal: float
    extra_signal: float
    missing_multiplicity: float
    extra_multiplicity: float
    source: str = ""

    def validate(self) -> None:
        if self.extra_signal < self.missing_signal:
            raise ElucidateError(
                "an impossible extra signal must cost at least as much as a missing (overlapping) one",
                key="extra_signal",
            )


def load_carbon13(path: str | Path | None = None) -> Carbon13Table:
    file = Path(path) if path is not None else table_path("carbon13.yaml")
    document = read_yaml_file(file, table=True)
    root = mapping(document, ["source", *_PENALTIES], required=list(_PENALTIES))
    values = {k: as_number(root[k], minimum=0, what="a penalty of 0 or more") for k in _PENALTIES}
    source = as_str(root["source"]) if "source" in root else ""
    return validated(Carbon13Table(**values, source=source), document)


@lru_cache(maxsize=1)
def default_carbon13() -> Carbon13Table:
    return load_carbon13()


_KINDS = {3: "CH3", 2: "CH2", 1: "CH", 0: "C"}


def graph_ranks(mol: Mol) -> list[int]:
    """Each atom's class under the molecular graph's symmetry alone (RDKit's canonical ranking
    without tie breaking): :func:`symmetry_ranks` before any split, never finer than it.

    The ranking refines each atom's invariants by its neighbours', which cannot tell a ring atom
    from a chain atom whose neighbours look alike at every depth: the chain CH2 of
    1,2-dicyclopropylethane ranks with the ring CH2. When a molecule of two rings or more has a
    rank that holds both, the ranking is taken again with ring membership as a label (a fact of
    the graph, the same on atoms an automorphism maps onto each other, so it splits no true
    class)."""
    from .._rdkit import Chem

    ranks = list(Chem.CanonicalRankAtoms(mol, breakTies=False, includeChirality=False))
    info = mol.GetRingInfo()
    if info.NumRings() < 2 or len(set(ranks)) == len(ranks):
        return ranks
    in_ring = [info.NumAtomRings(i) > 0 for i in range(len(ranks))]
    first: dict[int, bool] = {}
    if all(first.setdefault(r, ring) == ring for r, ring in zip(ranks, in_ring, strict=True)):
        return ranks
    work = Chem.Mol(mol)
    for atom, ring in zip(work.GetAtoms(), in_ring, strict=True):
        atom.SetAtomMapNum(atom.GetAtomMapNum() * 2 + 1 + ring)
    return list(Chem.CanonicalRankAtoms(work, breakTies=False, includeChirality=False))


def _split_amide_nitrogen(mol: Mol) -> Mol:
    """The two identical groups on the N of a tertiary amide lie cis and trans to the C=O, and
    rotation about the C-N bond is slow on the NMR time scale at room temperature (common
    practice: N,N-diethyl amides show two CH2 and two CH3 signals): one is labelled."""
    from .._rdkit import Chem

    matches = mol.GetSubstructMatches(compiled_smarts("[NX3;H0;!$(N=*);!$([N+])](-[#6])(-[#6])-[CX3]=O"))
    if not matches:
        return mol
    work = Chem.RWMol(mol)
    ranks = graph_ranks(work)
    for n_idx, *_ in matches:
        atom = work.GetAtomWithIdx(n_idx)
        if atom.IsInRing():
            continue
        subs = [nb.GetIdx() for nb in atom.GetNeighbors() if not _is_carbonyl(nb)]
        if len(subs) == 2 and ranks[subs[0]] == ranks[subs[1]]:
            first = min(subs)
            work.GetAtomWithIdx(first).SetIsotope(work.GetAtomWithIdx(first).GetIsotope() + 3000)
            ranks = graph_ranks(work)
    return work


def _is_carbonyl(atom: Atom) -> bool:
    return atom.GetAtomicNum() == 6 and any(
        b.GetBondTypeAsDouble() == 2 and b.GetOtherAtom(atom).GetAtomicNum() == 8 for b in atom.GetBonds()
    )


def _split_alkene_ends(mol: Mol) -> tuple[Mol, list[int] | None]:
    """Geminal identical groups on a C=C end whose other end is unsymmetric: one is labelled,
    one at a time, the ranks taken again after each. Returns the molecule (``mol`` itself when
    nothing is split) and its ranks when they were computed (None when no C=C end has two
    substituents)."""
    from .._rdkit import Chem

    if not mol.HasSubstructMatch(
        compiled_smarts("[CX3;H0](-[#6,#7,#8,#9,#15,#16,#17,#35,#53])(-[#6,#7,#8,#9,#15,#16,#17,#35,#53])=[C]")
    ):
        return mol, None  # no C=C end with two substituents: nothing to split
    ends = _alkene_ends(mol)
    work = mol  # copied at the first split
    done: set[int] = set()
    while True:
        ranks = graph_ranks(work)
        first = _alkene_end_to_split(ends, ranks, done)
        if first is None:
            return work, ranks
        done.add(first)
        if work is mol:
            work = Chem.RWMol(mol)
        work.GetAtomWithIdx(first).SetIsotope(work.GetAtomWithIdx(first).GetIsotope() + 1000)


#: a carbon of three neighbours and no H, its two other neighbours, and the carbon it is double
#: bonded to (a double bond, not aromatic)
_ALKENE_END = "[#6;D3;H0](~*)(~*)=[#6]"

#: one end of a C=C with two substituents: the end, the other end, the two substituents (in
#: index order), the other end's other neighbours and its H
_End: TypeAlias = tuple[int, int, int, int, tuple[int, ...], int]


def _alkene_ends(mol: Mol) -> list[_End]:
    """Every C=C end with two substituents, in the order of the bond (then its begin atom
    before its end atom)."""
    found: dict[tuple[int, int], _End] = {}
    for x, s1, s2, y in mol.GetSubstructMatches(compiled_smarts(_ALKENE_END), uniquify=False):
        if s1 < s2:  # each end once
            bond = mol.GetBondBetweenAtoms(x, y)
            other = mol.GetAtomWithIdx(y)
            around = tuple(n.GetIdx() for n in other.GetNeighbors() if n.GetIdx() != x)
            key = (bond.GetIdx(), 0 if bond.GetBeginAtomIdx() == x else 1)
            found[key] = (x, y, s1, s2, around, other.GetTotalNumHs())
    return [found[k] for k in sorted(found)]


def _alkene_end_to_split(ends: Sequence[_End], ranks: Sequence[int], done: set[int]) -> int | None:
    """The first atom (in bond order) to label apart: the lower-numbered of two identical
    groups on a C=C end whose other end carries two different ones (H counted), not already
    labelled; None when there is none."""
    for _, _, s1, s2, around, hydrogens in ends:
        if ranks[s1] != ranks[s2]:
            continue
        others = [ranks[n] for n in around] + [-1] * hydrogens
        if len(others) == 2 and others[0] != others[1] and s1 not in done:
            return s1
    return None


#: an sp3 carbon (aliphatic, four connections counting H) and two of its neighbours by bonds in
#: no ring
_TWO_ACYCLIC = "[C;X4](!@*)!@*"


def _split_diastereotopic(mol: Mol, ranks: Sequence[int] | None = None) -> Mol:
    """A copy in which one of each pair of identical acyclic groups on one sp3 carbon carries an
    isotope label when the two are diastereotopic: marking one of them makes that carbon a
    stereocentre in a molecule with a second stereocentre (the isopropyl methyls beside a
    stereocentre, the gem-dimethyl bridge of camphor). Enantiotopic pairs (one stereocentre
    only) stay one class, as they are in an achiral solvent. ``ranks``: the molecule's ranks,
    when known; the molecule itself is returned when nothing is split."""
    from .._rdkit import Chem

    ranks = graph_ranks(mol) if ranks is None else ranks
    if len(set(ranks)) == len(ranks):
        return mol  # no two atoms alike: no pair of identical groups anywhere
    # every sp3 carbon with two or more acyclic neighbours (one search), and those neighbours
    # by rank: a pair is two of one rank
    pairs: dict[int, dict[int, set[int]]] = {}
    for centre, a, b in mol.GetSubstructMatches(compiled_smarts(_TWO_ACYCLIC), uniquify=False):
        if ranks[a] == ranks[b]:
            pairs.setdefault(centre, {}).setdefault(ranks[a], set()).update((a, b))
    work = mol
    for centre in sorted(pairs):
        for members in sorted(sorted(m) for m in pairs[centre].values()):
            if len(members) != 2:
                continue
            probe = Chem.RWMol(work)
            first = members[0]
            probe.GetAtomWithIdx(first).SetIsotope(probe.GetAtomWithIdx(first).GetIsotope() + 2000)
            centres = [
                s.centeredOn for s in Chem.FindPotentialStereo(probe) if s.type == Chem.StereoType.Atom_Tetrahedral
            ]
            if centre in centres and len(centres) >= 2:
                work = probe
    return work


def symmetry_ranks(mol: Mol) -> list[int]:
    """The symmetry class of every atom as the spectrum shows it: constitutional equivalence,
    with one of each pair of identical groups labelled apart where the spectrum tells them apart:
    geminal groups on an alkene end (:func:`_split_alkene_ends`), the groups on a tertiary
    amide N (:func:`_split_amide_nitrogen`) and diastereotopic groups
    (:func:`_split_diastereotopic`). The ranks are computed once when the last split changes
    nothing."""
    split, known = _split_alkene_ends(mol)
    step = _split_amide_nitrogen(split)
    ranks = known if known is not None and step is split else graph_ranks(step)
    final = _split_diastereotopic(step, ranks)
    return ranks if final is step else graph_ranks(final)


def carbon_classes(mol: Mol, ranks: Sequence[int] | None = None) -> list[tuple[int, str, int]]:
    """One entry per expected 13C signal: (first carbon index, multiplicity, carbons in it);
    ``ranks``: the molecule's :func:`symmetry_ranks`, when already known."""
    ranks = symmetry_ranks(mol) if ranks is None else ranks
    classes: dict[int, list[int]] = {}
    for i in range(mol.GetNumAtoms()):
        if mol.GetAtomWithIdx(i).GetAtomicNum() == 6:
            classes.setdefault(ranks[i], []).append(i)
    out = []
    for members in classes.values():
        h = mol.GetAtomWithIdx(members[0]).GetTotalNumHs()
        out.append((min(members), _KINDS.get(h, "CH3"), len(members)))
    return sorted(out)


class Carbon13:
    """The candidate's 13C signal count (and DEPT multiplicities) against the observed one."""

    name = "c13"
    weight_key = "c13"
    label = "13C"
    stage: Literal["formula", "structure"] = "structure"
    reading_key: str | None = None
    scoring_pass: int = 2
    cost: float = 60  # µs per candidate, bench/bench_scoring_cost.py

    def __init__(self, table: Carbon13Table | None = None) -> None:
        self.table = table or default_carbon13()

    def applies(self, case: Case) -> bool:
        """Counts only: a 13C list is scored by assignment instead (:mod:`.nmr`)."""
        nmr = case.nmr
        return nmr is not None and not nmr.c13 and (nmr.c13_signals is not None or nmr.c13_multiplicity is not None)

    def hard_constraints(self, case: Case) -> Mapping[str, tuple[str, ...]]:
        return {}

    def assess(self, subject: Subject, case: Case) -> Assessment:
        assert case.nmr is not None
        classes = carbon_classes(subject.mol, subject.symmetry_ranks)
        predicted = len(classes)
        kinds = Counter(kind for _, kind, _ in classes)
        p = self.table
        against = unexplained = 0.0  # more signals than classes: impossible; fewer: overlap
        reasons = []
        observed = case.nmr.c13_signals
        if observed is not None:
            if observed < predicted:
                unexplained += p.missing_signal * (predicted - observed)
                reasons.append(f"13C: {observed} signals observed, {predicted} expected (overlap possible)")
            elif observed > predicted:
                against += p.extra_signal * (observed - predicted)
                reasons.append(f"13C: {observed} signals observed but at most {predicted} possible")
            else:
                reasons.append(f"13C: {predicted} signals expected, as observed")
        if case.nmr.c13_multiplicity is not None:
            for kind in _KINDS.values():
                obs = case.nmr.c13_multiplicity.get(kind, 0)
                pred = kinds.get(kind, 0)
                if obs < pred:
                    unexplained += p.missing_multiplicity * (pred - obs)
                elif obs > pred:
                    against += p.extra_multiplicity * (obs - pred)
            mult = " ".join(f"{k} {kinds.get(k, 0)}" for k in _KINDS.values())
            reasons.append(f"13C multiplicities expected: {mult}")
        detail = {
            "predicted_signals": predicted,
            "observed_signals": observed,
            "predicted_multiplicity": {k: kinds.get(k, 0) for k in _KINDS.values()},
        }
        return Assessment(self.name, against, unexplained, tuple(reasons), detail)

    def detail_lines(self, assessment: Assessment) -> list[str]:
        d = assessment.detail
        mult = " ".join(f"{k} {v}" for k, v in d["predicted_multiplicity"].items())
        return [f"    13C predicted {d['predicted_signals']} signals ({mult}), observed {d['observed_signals']}"]

    def read(self, case: Case) -> Reading | None:
        return None
