"""Whether one SMARTS pattern implies another: every molecule matching the first matches the
second. Used to refuse a case that requires one and forbids the other before anything is
generated (nothing could survive).

The test is sound and deliberately incomplete: it answers True only when it can prove the
implication by mapping the second pattern onto the first, atom by atom and bond by bond, where
each atom of the second is a plain conjunction of primitives (``C``, ``[#6]``, ``[CH2]``,
``[OX1]``...) that the mapped atom of the first requires too, and each bond's allowed orders
include all the first's bond allows. A pattern it cannot read that way (alternatives, negations,
recursive SMARTS, ring primitives) is never called implied; a missed contradiction only costs
a run that ends empty, a false one would refuse a good case.
"""

from __future__ import annotations

import re
from collections import Counter
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from .._mol import atoms_of, bonds_of

if TYPE_CHECKING:
    from .._rdkit import Mol

__all__ = [
    "Features",
    "PatternNeeds",
    "excluded_by",
    "features_of",
    "first_implied",
    "pattern_implies",
    "pattern_needs",
]

_ALL_ORDERS = frozenset({"1", "2", "3", "ar"})
_BOND_ORDERS = {
    "-": frozenset({"1"}),
    "=": frozenset({"2"}),
    "#": frozenset({"3"}),
    ":": frozenset({"ar"}),
    "": frozenset({"1", "ar"}),  # SMARTS: an unwritten bond is single or aromatic
    "~": _ALL_ORDERS,
}
# element primitives (Daylight SMARTS): upper case aliphatic, lower case aromatic
_ELEMENT = re.compile(r"^(Cl|Br|[BCNOSPFI]|[cnosp]|se|as)$")
_NUMBER = {"B": 5, "C": 6, "N": 7, "O": 8, "F": 9, "P": 15, "S": 16, "Cl": 17, "Br": 35, "I": 53, "Se": 34, "As": 33}


def _split(text: str, sep: str) -> list[str] | None:
    """``text`` split on ``sep`` outside parentheses (recursive SMARTS), None if unbalanced."""
    parts, depth, start = [], 0, 0
    for i, ch in enumerate(text):
        if ch == "(":
            depth += 1
        elif ch == ")":
            depth -= 1
            if depth < 0:
                return None
        elif ch == sep and depth == 0:
            parts.append(text[start:i])
            start = i + 1
    if depth:
        return None
    parts.append(text[start:])
    return parts


def _primitive(p: str) -> set[str] | None:
    """The normalized facts one primitive states (an element is its atomic number plus
    aliphatic A or aromatic a), or None when it is not a plain positive primitive."""
    if not p or p.startswith(("!", "$")):
        return None
    if _ELEMENT.match(p):
        aromatic = p[0].islower()
        return {f"#{_NUMBER[p[0].upper() + p[1:]]}", "a" if aromatic else "A"}
    m = re.fullmatch(r"#(\d+)", p)
    if m:
        return {f"#{int(m.group(1))}"}
    m = re.fullmatch(r"([HDX])(\d*)", p)
    if m:
        return {f"{m.group(1)}{m.group(2) or '1'}"}
    if p in ("A", "a"):
        return {p}
    if p == "*":
        return set()
    return {p}  # another primitive (v2, +0...): implied only by the same text


def _atom_facts(smarts: str, *, required_only: bool) -> set[str] | None:
    """What an atom SMARTS requires of every atom it matches: the primitives of its top-level
    conjunction. With ``required_only`` (the implying pattern) parts that are alternatives are
    skipped (they require nothing certain); without it (the implied pattern) any part that is not
    a plain conjunction makes the atom unreadable (None)."""
    body = smarts[1:-1] if smarts.startswith("[") and smarts.endswith("]") else smarts
    if not body:
        return None
    facts: set[str] = set()
    parts = _split(body, ";")
    if parts is None:
        return None
    for part in parts:
        if len(_split(part, ",") or ["", ""]) > 1:  # alternatives (or unbalanced): nothing certain
            if required_only:
                continue
            return None
        conj = _split(part, "&")
        if conj is None:
            return None
        for piece in conj:
            if "(" in piece or "!" in piece:  # recursive SMARTS or a negation: nothing certain
                if required_only:
                    continue
                return None
            for p in re.findall(r"Cl|Br|se|as|#\d+|[A-Z][a-z]?\d*|[a-z]\d*|\*|[^A-Za-z#*]+\d*", piece) or [piece]:
                got = _primitive(p)
                if got is None:
                    if required_only:
                        continue
                    return None
                facts |= got
    return facts


def _bond_text(bond: Any) -> str:
    """A query bond's SMARTS (typed Any: RDKit's stubs mistype ``Bond.GetSmarts``)."""
    return str(bond.GetSmarts())


def _bond_orders(bond: Any) -> frozenset[str] | None:
    """The bond orders a query bond allows, or None for one this test cannot read."""
    return _BOND_ORDERS.get(_bond_text(bond))


def pattern_implies(p: Mol, f: Mol) -> bool:
    """True when every molecule matching the query ``p`` provably matches the query ``f``."""
    p_atoms = [_atom_facts(a.GetSmarts(), required_only=True) or set() for a in p.GetAtoms()]
    f_atoms = [_atom_facts(a.GetSmarts(), required_only=False) for a in f.GetAtoms()]
    if not f_atoms or any(facts is None for facts in f_atoms):
        return False
    p_bonds: dict[tuple[int, int], frozenset[str]] = {}
    for b in p.GetBonds():
        orders = _bond_orders(b) or _ALL_ORDERS
        i, j = b.GetBeginAtomIdx(), b.GetEndAtomIdx()
        p_bonds[(i, j)] = p_bonds[(j, i)] = orders
    f_bonds: list[tuple[int, int, frozenset[str]]] = []
    for b in f.GetBonds():
        f_orders = _bond_orders(b)
        if f_orders is None:
            return False
        f_bonds.append((b.GetBeginAtomIdx(), b.GetEndAtomIdx(), f_orders))

    def atom_ok(fi: int, pi: int) -> bool:
        need = f_atoms[fi]
        assert need is not None
        return need <= p_atoms[pi]

    image: list[int] = []

    def extend() -> bool:
        fi = len(image)
        if fi == len(f_atoms):
            return True
        for pi in range(len(p_atoms)):
            if pi in image or not atom_ok(fi, pi):
                continue
            ok = True
            for a, b, orders in f_bonds:
                if max(a, b) != fi:
                    continue
                other = image[min(a, b)]
                have = p_bonds.get((other, pi))
                if have is None or not have <= orders:
                    ok = False
                    break
            if ok:
                image.append(pi)
                if extend():
                    return True
                image.pop()
        return False

    return extend()


def first_implied(required: Sequence[Mol], forbidden: Sequence[Mol]) -> tuple[int, int] | None:
    """The first (required, forbidden) pair of indices where the required pattern provably
    implies the forbidden one (nothing could then survive), or None."""
    for i, need in enumerate(required):
        for j, ban in enumerate(forbidden):
            if pattern_implies(need, ban):
                return i, j
    return None


@dataclass(frozen=True)
class PatternNeeds:
    """What every molecule matching a pattern has, read off the query as the implication test
    reads it (sound and incomplete: a need it cannot read is left out)."""

    elements: tuple[tuple[int, int], ...] = ()  # (atomic number, at least so many atoms)
    double: bool = False  # a double bond ("=" matches no aromatic bond, so the Kekulé form has one)
    triple: bool = False
    rings: int = 0  # at least so many rings
    aromatic: bool = False  # an aromatic atom or bond


@dataclass(frozen=True)
class Features:
    """What one structure has, for :meth:`allows` (read off its Kekulé form: a molecule with an
    aromatic atom has a double bond there)."""

    elements: Mapping[int, int]  # atomic number -> atoms
    double: bool
    triple: bool
    rings: int
    aromatic: bool  # may have an aromatic atom (True when not known)

    @property
    def kind(self) -> tuple[bool, bool, int, bool]:
        """What decides :meth:`allows` besides the elements (a formula's structures share
        those): double, triple, rings, aromatic."""
        return (self.double, self.triple, self.rings, self.aromatic)

    def allows(self, needs: PatternNeeds) -> bool:
        """False when the structure lacks something every match needs: no match is possible."""
        return (
            (not needs.double or self.double)
            and (not needs.triple or self.triple)
            and self.rings >= needs.rings
            and (not needs.aromatic or self.aromatic)
            and all(self.elements.get(z, 0) >= k for z, k in needs.elements)
        )


def features_of(mol: Mol) -> Features:
    """What a molecule (aromaticity perceived) has, in the terms of :class:`PatternNeeds` (an
    aromatic bond counts as a double bond: its Kekulé form has one)."""
    from .._rdkit import Chem

    elements: dict[int, int] = {}
    aromatic = False
    for atom in atoms_of(mol):
        z = atom.GetAtomicNum()
        elements[z] = elements.get(z, 0) + 1
        aromatic = aromatic or atom.GetIsAromatic()
    kinds = {bond.GetBondType() for bond in bonds_of(mol)}
    double = Chem.BondType.DOUBLE in kinds or Chem.BondType.AROMATIC in kinds
    triple = Chem.BondType.TRIPLE in kinds
    return Features(elements, double, triple, mol.GetRingInfo().NumRings(), aromatic)


_RING_FACT = re.compile(r"^(?:([rR])(\d*)|x(\d+))$")


def _ring_fact(fact: str) -> bool:
    """Whether a primitive puts its atom in a ring: R, r, RN (N > 0), rN (N > 0), xN (N > 1)."""
    m = _RING_FACT.match(fact)
    if m is None:
        return False
    if m.group(3) is not None:
        return int(m.group(3)) > 1
    return not m.group(2) or int(m.group(2)) > 0


def _in_ring(smarts: str) -> bool:
    """Whether an atom SMARTS puts its atom in a ring: a top-level conjunct that is a ring
    primitive, or whose alternatives each are one (``[CX2;r3,r4]``)."""
    facts = _atom_facts(smarts, required_only=True) or set()
    if any(_ring_fact(f) for f in facts):
        return True
    body = smarts[1:-1] if smarts.startswith("[") and smarts.endswith("]") else smarts
    for part in _split(body, ";") or []:
        alternatives = _split(part, ",") or []
        if len(alternatives) > 1 and all(_ring_fact(a) for a in alternatives):
            return True
    return False


def pattern_needs(pattern: Mol) -> PatternNeeds:
    """What any molecule matching the query ``pattern`` has: the atoms of each element its
    query atoms name (a conjunct), the double and triple bonds its bonds demand, a ring when a
    query atom or bond says so or the pattern holds a cycle, an aromatic atom when a query atom
    or bond says so."""
    elements: Counter[int] = Counter()
    aromatic = ring = False
    for atom in pattern.GetAtoms():
        smarts = atom.GetSmarts()
        facts = _atom_facts(smarts, required_only=True) or set()
        for fact in facts:
            if fact.startswith("#") and fact[1:].isdigit() and int(fact[1:]) > 1:
                elements[int(fact[1:])] += 1
        aromatic = aromatic or "a" in facts
        ring = ring or _in_ring(smarts)
    double = triple = False
    for bond in pattern.GetBonds():
        text = _bond_text(bond)
        if "," in text or "!" in text:
            continue  # alternatives or a negation: nothing certain
        pieces = set(re.split(r"[;&]", text))
        double = double or "=" in pieces
        triple = triple or "#" in pieces
        ring = ring or "@" in pieces
        aromatic = aromatic or ":" in pieces
    # a connected pattern with as many bonds as atoms holds a cycle (ring closures)
    if pattern.GetNumBonds() >= pattern.GetNumAtoms() > 0:
        ring = True
    return PatternNeeds(tuple(sorted(elements.items())), double, triple, 1 if ring else 0, aromatic)


_COUNT_FACT = re.compile(r"^([XDH])(\d+)$")


def _contradict(first: set[str], second: set[str]) -> bool:
    """Whether no atom can meet both sets of required facts (:func:`_atom_facts`): aliphatic and
    aromatic, two different counts of one kind (X, D or H), or more heavy neighbours (D) or
    hydrogens (H) than connections in all (X)."""
    both = first | second
    if "A" in both and "a" in both:
        return True
    counts: dict[str, set[int]] = {}
    for fact in both:
        found = _COUNT_FACT.match(fact)
        if found:
            counts.setdefault(found.group(1), set()).add(int(found.group(2)))
    if any(len(values) > 1 for values in counts.values()):
        return True
    (x,) = counts.get("X", {None})
    if x is None:
        return False
    return any(value > x for kind in "DH" for value in counts.get(kind, ()))


def excluded_by(having: Mol, other: Mol, atoms: Mapping[int, int]) -> bool:
    """True when no molecule with ``atoms`` (atomic number -> count) that matches the query
    ``having`` can match the query ``other`` too. Sound and incomplete, as the rest of this
    module: when every match of ``having`` takes all the molecule's atoms of an element (its
    query atoms naming that element are as many as the molecule has), each atom of that element
    in a match of ``other`` is one of them, so some query atom of ``other`` naming the element
    that no atom can match along with any of those of ``having`` (:func:`_contradict`) rules it
    out: a hydroxyl O (``[OX2H1]``) in a C10H14O whose one O is a required ketone's
    (``[OX1]``)."""

    def element_atoms(pattern: Mol) -> dict[int, list[set[str]]]:
        out: dict[int, list[set[str]]] = {}
        for atom in pattern.GetAtoms():
            facts = _atom_facts(atom.GetSmarts(), required_only=True) or set()
            for fact in facts:
                if fact.startswith("#") and fact[1:].isdigit():
                    out.setdefault(int(fact[1:]), []).append(facts)
        return out

    taken = element_atoms(having)
    wanted = element_atoms(other)
    for z, held in taken.items():
        if z <= 1 or atoms.get(z, 0) > len(held):
            continue  # some atom of the element may lie outside every match of ``having``
        for facts in wanted.get(z, ()):
            if all(_contradict(facts, theirs) for theirs in held):
                return True
    return False
