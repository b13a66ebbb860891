"""UV-Vis: predicted lambda max per candidate from the published empirical rules.

Chromophores perceived on the candidate (non-aromatic double bonds joined by single bonds form
a conjugated system):
* a system with a C=O conjugated to C=C: Woodward's rules for alpha,beta-unsaturated carbonyls
  (parent by the carbonyl type and ring size, increments by position alpha, beta, gamma, delta+,
  further conjugated C=C, homoannular diene component, exocyclic C=C, solvent correction);
* a system of two to four C=C: the Woodward-Fieser diene rules (acyclic, heteroannular,
  homoannular base); five or more: the Fieser-Kuhn rule;
* an aromatic carbonyl ArCOG: Scott's rules (base by G, ring substituents ortho/meta/para);
* otherwise a simple benzenoid chromophore from a small table;
* none of these: no maximum above ``no_maximum_below_nm`` (210 nm).
The longest predicted wavelength is the candidate's lambda max. Increments: ``constraints/uv.yaml``.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from functools import lru_cache
from pathlib import Path
from typing import TYPE_CHECKING, Literal, TypeAlias

from .._mol import bonds_of
from ..case import Case
from ..errors import ElucidateError
from ..smarts import compiled_smarts
from ..tables import table_path, validated
from ..yamlnodes import Located, as_list, as_number, as_str, mapping, read_yaml_file
from .base import Assessment, Reading, Subject

if TYPE_CHECKING:
    from .._rdkit import Atom, Bond, Mol

__all__ = ["UVPrediction", "UVTable", "UvVis", "default_uv", "load_uv", "predict_lambda_max"]

_POSITIONS = ("alpha", "beta", "gamma", "delta")
#: a number as the table gives it: whole numbers stay whole, so steps print "+30", not "+30.0"
Number: TypeAlias = int | float


@dataclass(frozen=True)
class DieneRules:
    base: Mapping[str, Number]  # acyclic, heteroannular, homoannular
    extra_double_bond: Number
    alkyl: Number
    exocyclic: Number
    substituents: Mapping[str, Number]


@dataclass(frozen=True)
class PolyeneRules:
    constant: Number
    per_alkyl: Number
    n_linear: Number
    n_square: Number
    per_endocyclic_ring: Number
    per_exocyclic_ring: Number


@dataclass(frozen=True)
class EnoneRules:
    base: Mapping[str, Number]  # ketone, ketone_5_ring, aldehyde, acid_or_ester
    extra_double_bond: Number
    aryl_extension: Number  # an aryl ring on the far end of the chain, extending the conjugation
    homoannular_diene: Number
    exocyclic: Number
    alkyl: Mapping[str, Number]  # position -> increment
    substituents: Mapping[str, Mapping[str, Number]]  # substituent -> position -> increment
    solvent: Mapping[str, Number]


@dataclass(frozen=True)
class ArylCarbonylRules:
    base: Mapping[str, Number]  # alkyl, H, OR
    ring: Mapping[str, tuple[Number, Number, Number]]  # substituent -> (ortho, meta, para)


@dataclass(frozen=True)
class BenzenoidEntry:
    smarts: str
    lambda_max: Number  # the secondary (B) band, or the one band tabulated
    what: str
    strong_band: Number | None = None  # the primary (K / E2) band, when tabulated


@dataclass(frozen=True)
class UVScoring:
    """How a predicted maximum is scored against the observed one (in tolerances)."""

    unseen_width: Number  # predicted but none observed: Gaussian width beyond the tolerance
    unseen_cutoff: Number  # ... and beyond this many tolerances above the floor:
    unseen_score: Number
    unexplained_near: Number  # observed but no chromophore: within this many tolerances above the floor
    unexplained_near_score: Number
    unexplained_score: Number
    extra_maximum: Number  # nats (unexplained) per further observed maximum no prediction explains


@dataclass(frozen=True, eq=False)
class UVTable:
    """The contents of ``uv.yaml``."""

    tolerance: float
    benzenoid_tolerance: float
    no_maximum_below_nm: Number
    diene: DieneRules
    polyene: PolyeneRules
    enone: EnoneRules
    aryl_carbonyl: ArylCarbonylRules
    benzenoid: tuple[BenzenoidEntry, ...]
    scoring: UVScoring
    source: str = ""

    def validate(self) -> None:
        for i, entry in enumerate(self.benzenoid):
            try:
                compiled_smarts(entry.smarts)
            except ElucidateError as exc:
                raise ElucidateError(exc.message, key=f"benzenoid[{i}].smarts") from exc
        for key in ("acyclic", "heteroannular", "homoannular"):
            if key not in self.diene.base:
                raise ElucidateError(f"missing base value {key!r}", key="diene.base")
        for key in ("ketone", "ketone_5_ring", "aldehyde", "acid_or_ester"):
            if key not in self.enone.base:
                raise ElucidateError(f"missing base value {key!r}", key="enone.base")
        for key in ("alkyl", "H", "OR"):
            if key not in self.aryl_carbonyl.base:
                raise ElucidateError(f"missing base value {key!r}", key="aryl_carbonyl.base")
        for name, positions in [("alkyl", self.enone.alkyl), *self.enone.substituents.items()]:
            unknown = set(positions) - set(_POSITIONS)
            if unknown:
                raise ElucidateError(
                    f"unknown position {sorted(unknown)[0]!r}; positions: {', '.join(_POSITIONS)}", key=f"enone.{name}"
                )


def _number(loc: Located, *, minimum: float | None = None, what: str = "a number") -> Number:
    as_number(loc, minimum=minimum, what=what)  # checks it
    value: Number = loc.value
    return value


def _numbers(loc: Located, *, what: str = "a mapping of names to numbers") -> dict[str, Number]:
    if not isinstance(loc.value, dict):
        raise loc.error(f"expected {what}")
    return {str(k): _number(v) for k, v in loc.value.items()}


def _fields(loc: Located, names: Sequence[str]) -> dict[str, Located]:
    return mapping(loc, list(names), required=list(names))


def load_uv(path: str | Path | None = None) -> UVTable:
    file = Path(path) if path is not None else table_path("uv.yaml")
    document = read_yaml_file(file, table=True)
    keys = [
        "source",
        "tolerance_nm",
        "benzenoid_tolerance_nm",
        "no_maximum_below_nm",
        "diene",
        "polyene",
        "enone",
        "aryl_carbonyl",
        "benzenoid",
        "scoring",
    ]
    root = mapping(document, keys, required=keys[1:])
    nm = "a positive number of nm"
    d = _fields(root["diene"], ["base", "extra_double_bond", "alkyl", "exocyclic", "substituents"])
    diene = DieneRules(
        _numbers(d["base"]),
        _number(d["extra_double_bond"]),
        _number(d["alkyl"]),
        _number(d["exocyclic"]),
        _numbers(d["substituents"]),
    )
    p = _fields(
        root["polyene"], ["constant", "per_alkyl", "n_linear", "n_square", "per_endocyclic_ring", "per_exocyclic_ring"]
    )
    polyene = PolyeneRules(
        *(
            _number(p[k])
            for k in ("constant", "per_alkyl", "n_linear", "n_square", "per_endocyclic_ring", "per_exocyclic_ring")
        )
    )
    e = _fields(
        root["enone"],
        [
            "base",
            "extra_double_bond",
            "aryl_extension",
            "homoannular_diene",
            "exocyclic",
            "alkyl",
            "substituents",
            "solvent",
        ],
    )
    sub = e["substituents"]
    if not isinstance(sub.value, dict):
        raise sub.error("expected a mapping of substituents to position increments")
    enone = EnoneRules(
        _numbers(e["base"]),
        _number(e["extra_double_bond"]),
        _number(e["aryl_extension"]),
        _number(e["homoannular_diene"]),
        _number(e["exocyclic"]),
        _numbers(e["alkyl"]),
        {str(k): _numbers(v) for k, v in sub.value.items()},
        _numbers(e["solvent"]),
    )
    a = _fields(root["aryl_carbonyl"], ["base", "ring"])
    ring_loc = a["ring"]
    if not isinstance(ring_loc.value, dict):
        raise ring_loc.error("expected a mapping of substituents to [ortho, meta, para] increments")
    ring: dict[str, tuple[Number, Number, Number]] = {}
    for k, v in ring_loc.value.items():
        items = as_list(v, what="a list [ortho, meta, para]")
        if len(items) != 3:
            raise v.error("expected three increments [ortho, meta, para]")
        ring[str(k)] = (_number(items[0]), _number(items[1]), _number(items[2]))
    aryl = ArylCarbonylRules(_numbers(a["base"]), ring)
    benzenoid = []
    for item in as_list(root["benzenoid"], what="a list of {smarts, lambda_max, strong_band, what}"):
        entry = mapping(
            item, ["smarts", "lambda_max", "strong_band", "what"], required=["smarts", "lambda_max", "what"]
        )
        benzenoid.append(
            BenzenoidEntry(
                as_str(entry["smarts"], what="a SMARTS pattern"),
                _number(entry["lambda_max"], minimum=190, what="a wavelength 190-800 nm"),
                as_str(entry["what"]),
                _number(entry["strong_band"], minimum=190, what="a wavelength 190-800 nm")
                if "strong_band" in entry
                else None,
            )
        )
    score_keys = [
        "unseen_width",
        "unseen_cutoff",
        "unseen_score",
        "unexplained_near",
        "unexplained_near_score",
        "unexplained_score",
        "extra_maximum",
    ]
    sc = mapping(root["scoring"], ["source", *score_keys], required=score_keys)
    scoring = UVScoring(*(_number(sc[k], minimum=0, what="a number of 0 or more") for k in score_keys))
    table = UVTable(
        tolerance=as_number(root["tolerance_nm"], minimum=0, exclusive_minimum=True, what=nm),
        benzenoid_tolerance=as_number(root["benzenoid_tolerance_nm"], minimum=0, exclusive_minimum=True, what=nm),
        no_maximum_below_nm=_number(root["no_maximum_below_nm"], minimum=0, what=nm),
        diene=diene,
        polyene=polyene,
        enone=enone,
        aryl_carbonyl=aryl,
        benzenoid=tuple(benzenoid),
        scoring=scoring,
        source=as_str(root["source"]) if "source" in root else "",
    )
    return validated(table, document)


@lru_cache(maxsize=1)
def default_uv() -> UVTable:
    return load_uv()


@dataclass(frozen=True)
class UVPrediction:
    lambda_max: float | None  # nm; None = no maximum above the table's floor (210 nm)
    rule: str
    steps: tuple[str, ...] = field(default=())
    #: further bands the rule predicts (a benzenoid's primary band beside its B band), nm
    also: tuple[float, ...] = field(default=())


# ------------------------------------------------------------------ perception helpers


def _substituent(atom: Atom, via: Atom) -> str | None:
    """Classify a substituent atom (bonded to a chromophore atom ``via``) for the increments."""
    z = atom.GetAtomicNum()
    if z == 6:
        return "alkyl"
    if z == 8:
        if atom.GetTotalNumHs():
            return "OH"
        others = [n for n in atom.GetNeighbors() if n.GetIdx() != via.GetIdx()]
        if any(_is_acyl(n) for n in others):
            return "OC(=O)R"
        return "OR"
    if z == 16:
        return "SR"
    if z == 17:
        return "Cl"
    if z == 35:
        return "Br"
    if z == 7:
        return "NR2"
    return None


def _is_acyl(atom: Atom) -> bool:
    return atom.GetAtomicNum() == 6 and any(
        b.GetBondTypeAsDouble() == 2 and b.GetOtherAtom(atom).GetAtomicNum() == 8 for b in atom.GetBonds()
    )


def _exocyclic(mol: Mol, bonds: Sequence[Bond]) -> tuple[int, set[int]]:
    """(count of exocyclic C=C, rings they are exocyclic to): a C=C is exocyclic to a ring that
    holds one of its atoms but not the bond."""
    rings = mol.GetRingInfo()
    count, which = 0, set()
    for bond in bonds:
        a, b = bond.GetBeginAtomIdx(), bond.GetEndAtomIdx()
        for i, ring in enumerate(rings.AtomRings()):
            if (a in ring) != (b in ring):
                count += 1
                which.add(i)
    return count, which


def _endocyclic_rings(mol: Mol, bonds: Sequence[Bond]) -> set[int]:
    rings = mol.GetRingInfo().BondRings()
    return {i for i, ring in enumerate(rings) for bond in bonds if bond.GetIdx() in ring}


def _homoannular(mol: Mol, bonds: Sequence[Bond]) -> bool:
    """Two of the C=C lie in one ring (a cisoid diene in that ring)."""
    return any(sum(1 for b in bonds if b.GetIdx() in ring) >= 2 for ring in mol.GetRingInfo().BondRings())


_DOUBLE = "[C]=[C,O]"  # non-aromatic C=C and C=O (aliphatic atoms only)


def _double_bonds(mol: Mol) -> list[Bond]:
    seen: set[int] = set()
    out = []
    for a, b in mol.GetSubstructMatches(compiled_smarts(_DOUBLE)):
        bond = mol.GetBondBetweenAtoms(a, b)
        if bond.GetIdx() not in seen:
            seen.add(bond.GetIdx())
            out.append(bond)
    return sorted(out, key=lambda bond: bond.GetIdx())


def _systems(mol: Mol) -> list[list[Bond]]:
    """Conjugated systems: C=C and C=O bonds joined through single bonds."""
    bonds = _double_bonds(mol)
    if len(bonds) < 2:
        return []
    atom_of: dict[int, list[int]] = {}
    for i, bond in enumerate(bonds):
        atom_of.setdefault(bond.GetBeginAtomIdx(), []).append(i)
        atom_of.setdefault(bond.GetEndAtomIdx(), []).append(i)
    parent = list(range(len(bonds)))

    def find(i: int) -> int:
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    for bond in bonds_of(mol):
        if bond.GetBondType().name != "SINGLE":
            continue
        for i in atom_of.get(bond.GetBeginAtomIdx(), []):
            for j in atom_of.get(bond.GetEndAtomIdx(), []):
                parent[find(i)] = find(j)
    groups: dict[int, list[Bond]] = {}
    for i, bond in enumerate(bonds):
        groups.setdefault(find(i), []).append(bond)
    return [g for g in groups.values() if len(g) >= 2]


# ------------------------------------------------------------------ the rules


def _enone(mol: Mol, system: list[Bond], table: UVTable, solvent: str) -> UVPrediction | None:
    rules = table.enone
    carbonyls = [b for b in system if 8 in (b.GetBeginAtom().GetAtomicNum(), b.GetEndAtom().GetAtomicNum())]
    if not carbonyls:
        return None
    co = carbonyls[0]
    c1 = co.GetBeginAtom() if co.GetBeginAtom().GetAtomicNum() == 6 else co.GetEndAtom()
    o = co.GetOtherAtom(c1)
    alkenes = [b for b in system if b not in carbonyls]
    # walk the chain from the carbonyl carbon: alpha=beta, then gamma=delta, ...
    chain: list[Atom] = [c1]
    used: list[Bond] = []
    current = c1
    while True:
        step = None
        for nb in current.GetNeighbors():
            bond = mol.GetBondBetweenAtoms(current.GetIdx(), nb.GetIdx())
            if bond.GetBondType().name != "SINGLE":
                continue
            for db in alkenes:
                if db in used:
                    continue
                if nb.GetIdx() in (db.GetBeginAtomIdx(), db.GetEndAtomIdx()):
                    step = (nb, db.GetOtherAtom(nb), db)
                    break
            if step:
                break
        if step is None:
            break
        near, far, db = step
        chain += [near, far]
        used.append(db)
        current = far
    if not used:
        return None
    in_chain = {a.GetIdx() for a in chain} | {o.GetIdx()}
    others = [n for n in c1.GetNeighbors() if n.GetIdx() not in in_chain]
    ring5 = any(
        len(r) == 5 and c1.GetIdx() in r and chain[1].GetIdx() in r and chain[2].GetIdx() in r
        for r in mol.GetRingInfo().AtomRings()
    )
    if c1.GetTotalNumHs():
        kind = "aldehyde"
    elif any(n.GetAtomicNum() in (7, 8) for n in others):
        kind = "acid_or_ester"
    else:
        kind = "ketone_5_ring" if ring5 else "ketone"
    value = float(rules.base[kind])
    steps = [f"{kind.replace('_', ' ')} parent {value:g}"]
    extra = len(used) - 1
    if extra:
        value += extra * rules.extra_double_bond
        steps.append(f"{extra} extending C=C +{extra * rules.extra_double_bond}")
    if _homoannular(mol, used):
        value += rules.homoannular_diene
        steps.append(f"homoannular diene +{rules.homoannular_diene}")
    exo, _ = _exocyclic(mol, used)
    if exo:
        value += exo * rules.exocyclic
        steps.append(f"{exo} exocyclic C=C +{exo * rules.exocyclic}")
    last = len(chain) - 2
    for k, atom in enumerate(chain[1:]):
        position = _POSITIONS[min(k, 3)]
        for nb in atom.GetNeighbors():
            if nb.GetIdx() in in_chain:
                continue
            if k == last and k >= 1 and nb.GetIsAromatic():  # Ar-C=C-C=O: the ring extends it
                value += rules.aryl_extension
                steps.append(f"{position} aryl extending the conjugation +{rules.aryl_extension}")
                continue
            kind_s = _substituent(nb, atom)
            if kind_s == "alkyl":
                inc = rules.alkyl[position]
            elif kind_s is not None:
                inc = rules.substituents.get(kind_s, {}).get(position, 0)
            else:
                inc = 0
            if inc:
                value += inc
                steps.append(f"{position} {kind_s} +{inc}")
    correction = rules.solvent.get(solvent, 0)
    if correction:
        value -= correction
        steps.append(f"solvent {solvent} {-correction:+g}")
    return UVPrediction(value, "Woodward (α,β-unsaturated carbonyl)", tuple(steps))


def _diene(mol: Mol, system: list[Bond], table: UVTable) -> UVPrediction | None:
    if any(8 in (b.GetBeginAtom().GetAtomicNum(), b.GetEndAtom().GetAtomicNum()) for b in system):
        return None
    n = len(system)
    atoms = {i for b in system for i in (b.GetBeginAtomIdx(), b.GetEndAtomIdx())}
    alkyl, others = 0, []
    for idx in sorted(atoms):
        atom = mol.GetAtomWithIdx(idx)
        for nb in atom.GetNeighbors():
            if nb.GetIdx() in atoms:
                continue
            kind = _substituent(nb, atom)
            if kind == "alkyl":
                alkyl += 1
            elif kind is not None:
                others.append(kind)
    exo, exo_rings = _exocyclic(mol, system)
    if n > 4:
        polyene = table.polyene
        endo = _endocyclic_rings(mol, system)
        value = (
            polyene.constant
            + polyene.per_alkyl * alkyl
            + n * (polyene.n_linear + polyene.n_square * n)
            + polyene.per_endocyclic_ring * len(endo)
            + polyene.per_exocyclic_ring * len(exo_rings)
        )
        step = f"Fieser-Kuhn: n={n}, M={alkyl}, endocyclic rings {len(endo)}, exocyclic rings {len(exo_rings)}"
        return UVPrediction(round(value, 1), "Fieser-Kuhn (polyene)", (step,))
    diene = table.diene
    if _homoannular(mol, system):
        base = "homoannular"
    elif _endocyclic_rings(mol, system) or exo:
        base = "heteroannular"
    else:
        base = "acyclic"
    value = float(diene.base[base])
    steps: list[str] = [f"{base} diene base {value:g}"]
    if n > 2:
        value += (n - 2) * diene.extra_double_bond
        steps.append(f"{n - 2} extending C=C +{(n - 2) * diene.extra_double_bond}")
    if alkyl:
        value += alkyl * diene.alkyl
        steps.append(f"{alkyl} alkyl/ring residues +{alkyl * diene.alkyl}")
    if exo:
        value += exo * diene.exocyclic
        steps.append(f"{exo} exocyclic C=C +{exo * diene.exocyclic}")
    for kind in others:
        inc = diene.substituents.get(kind, 0)
        if inc:
            value += inc
            steps.append(f"{kind} +{inc}")
    return UVPrediction(value, "Woodward-Fieser (diene)", tuple(steps))


_ARYL_CO = "[c;r6]-[CX3](=[OX1])"


def _scott(mol: Mol, table: UVTable) -> list[UVPrediction]:
    rules = table.aryl_carbonyl
    out = []
    rings = [r for r in mol.GetRingInfo().AtomRings() if len(r) == 6]
    for ring_atom, carbon, _ in mol.GetSubstructMatches(compiled_smarts(_ARYL_CO)):
        c = mol.GetAtomWithIdx(carbon)
        g = [
            n
            for n in c.GetNeighbors()
            if n.GetIdx() != ring_atom and mol.GetBondBetweenAtoms(carbon, n.GetIdx()).GetBondType().name == "SINGLE"
        ]
        if c.GetTotalNumHs():
            kind = "H"
        elif any(n.GetAtomicNum() in (7, 8) for n in g):
            kind = "OR"
        else:
            kind = "alkyl"
        value = float(rules.base[kind])
        steps = [f"ArCO{'-' + kind if kind != 'OR' else 'OR/OH'} base {value:g}"]
        ring = next(
            (r for r in rings if ring_atom in r and all(mol.GetAtomWithIdx(i).GetIsAromatic() for i in r)), None
        )
        if ring is not None:
            k = ring.index(ring_atom)
            for step in range(1, 6):
                pos = min(step, 6 - step)  # 1 ortho, 2 meta, 3 para
                atom = mol.GetAtomWithIdx(ring[(k + step) % 6])
                for nb in atom.GetNeighbors():
                    if nb.GetIdx() in ring:
                        continue
                    kind_r = _ring_substituent(nb, atom)
                    if kind_r is None:
                        continue
                    inc = rules.ring[kind_r][pos - 1]
                    if inc:
                        value += inc
                        steps.append(f"{('ortho', 'meta', 'para')[pos - 1]} {kind_r} +{inc}")
        out.append(UVPrediction(value, "Scott (aromatic carbonyl)", tuple(steps)))
    return out


def _ring_substituent(atom: Atom, via: Atom) -> str | None:
    z = atom.GetAtomicNum()
    if z == 6:
        return None if _is_acyl(atom) else "alkyl"
    if z == 8:
        return "OR"
    if z == 17:
        return "Cl"
    if z == 35:
        return "Br"
    if z == 7:
        others = [n for n in atom.GetNeighbors() if n.GetIdx() != via.GetIdx()]
        if any(_is_acyl(n) for n in others):
            return "NHC(=O)R"
        h = atom.GetTotalNumHs()
        return "NH2" if h == 2 else "NHR" if h == 1 else "NR2"
    return None


def predict_lambda_max(mol: Mol, *, table: UVTable | None = None, solvent: str = "ethanol") -> UVPrediction:
    """The predicted lambda max of ``mol`` (aromaticity perceived) with the rule and steps used."""
    t = table or default_uv()
    predictions: list[UVPrediction] = []
    for system in _systems(mol):
        p = _enone(mol, system, t, solvent) or _diene(mol, system, t)
        if p is not None:
            predictions.append(p)
    predictions += _scott(mol, t)
    if not predictions:
        for entry in t.benzenoid:
            if mol.HasSubstructMatch(compiled_smarts(entry.smarts)):
                strong = entry.strong_band
                also = (float(strong),) if strong is not None and strong >= t.no_maximum_below_nm else ()
                predictions.append(UVPrediction(float(entry.lambda_max), f"benzenoid table ({entry.what})", (), also))
                break
    if not predictions:
        floor = t.no_maximum_below_nm
        return UVPrediction(None, f"no conjugated chromophore: no maximum above {floor} nm")
    return max(predictions, key=lambda p: (p.lambda_max or 0.0, p.rule))


class UvVis:
    """The predicted lambda max of the candidate against the observed one."""

    name = "uv_vis"
    weight_key = "uv_vis"
    label = "UV"
    stage: Literal["formula", "structure"] = "structure"
    reading_key: str | None = None
    scoring_pass: int = 4
    cost: float = 180  # µs per candidate, bench/bench_scoring_cost.py

    def __init__(self, table: UVTable | None = None) -> None:
        self.table = table or default_uv()

    def applies(self, case: Case) -> bool:
        return case.uv_vis is not None

    def hard_constraints(self, case: Case) -> Mapping[str, tuple[str, ...]]:
        return {}

    def assess(self, subject: Subject, case: Case) -> Assessment:
        assert case.uv_vis is not None
        t = self.table
        sc = t.scoring
        p = predict_lambda_max(subject.mol, table=t, solvent=case.uv_vis.solvent)
        observed = case.uv_vis.lambda_max
        floor = float(t.no_maximum_below_nm)
        tol = t.tolerance if not p.rule.startswith("benzenoid") else t.benzenoid_tolerance
        predicted = p.lambda_max
        against = unexplained = 0.0
        if observed is None and predicted is None:
            text = f"UV: no maximum above {floor:g} nm, as observed"
        elif observed is None:
            assert predicted is not None
            # a maximum the rules predict was not seen: against the candidate
            gap = predicted - floor
            if gap < sc.unseen_cutoff * tol:
                against = 0.5 * max(0.0, gap - tol) ** 2 / (sc.unseen_width * tol) ** 2
            else:
                against = -math.log(sc.unseen_score)
            text = f"UV: predicts {predicted:g} nm ({p.rule}) but no maximum above {floor:g} nm was seen"
        elif predicted is None:
            gap = observed[0] - floor
            cost = -math.log(sc.unexplained_score if gap > sc.unexplained_near * tol else sc.unexplained_near_score)
            if _may_absorb(subject.mol):  # a π system the rules do not cover: unexplained only
                unexplained = cost
                text = f"UV: observed {_range(observed)} nm; no rule covers this candidate's chromophore"
            else:
                against = cost
                text = f"UV: no chromophore to absorb above {floor:g} nm, observed {_range(observed)} nm"
        else:
            # the rule's band is matched with the nearest observed maximum; a further band the
            # rule predicts (a benzenoid's primary K/E2 band beside its B band) explains an observed
            # maximum within the tolerance; every other maximum is data the rules do not cover (an
            # n-π* band, a second chromophore)
            bands = [observed, *case.uv_vis.others]
            every = [predicted, *p.also]
            gaps = [min(_gap(band, x) for x in every) for band in bands]
            d = min(gaps)
            against = 0.0 if d <= tol else 0.5 * ((d - tol) / tol) ** 2
            matched = bands[gaps.index(d)]
            rest = [b for i, b in enumerate(bands) if i != gaps.index(d)]
            explained = [b for b in rest if min(_gap(b, x) for x in every) <= tol]
            unexplained = float(sc.extra_maximum) * (len(rest) - len(explained))
            shown = " and ".join(f"{x:g}" for x in every)
            text = f"UV: predicted {shown} nm ({p.rule}), observed {_range(matched)} nm"
            if explained:
                text += " and " + " and ".join(_range(b) for b in explained) + " nm"
        detail = {
            "predicted": predicted,
            "also_predicted": list(p.also),
            "rule": p.rule,
            "steps": list(p.steps),
            "observed": observed,
            "others": [list(b) for b in case.uv_vis.others],
        }
        return Assessment(self.name, against, unexplained, (text,), detail)

    def detail_lines(self, assessment: Assessment) -> list[str]:
        d = assessment.detail
        floor = self.table.no_maximum_below_nm
        pred = f"no maximum above {floor:g} nm" if d["predicted"] is None else f"{d['predicted']:g} nm"
        obs = "none" if d["observed"] is None else "-".join(f"{x:g}" for x in sorted(set(d["observed"])))
        steps = "; ".join(d["steps"])
        return [f"    UV  predicted {pred} ({d['rule']}{': ' + steps if steps else ''}), observed {obs}"]

    def read(self, case: Case) -> Reading | None:
        return None


def _may_absorb(mol: Mol) -> bool:
    """Whether the candidate has a π system that could absorb above 210 nm outside the rules: an
    aromatic ring, a multiple bond to a heteroatom (C=O n→π*, C=S, N=O, N=N) or two conjugated
    multiple bonds. An isolated C=C or C≡C (below 200 nm) and a saturated molecule cannot."""
    multiple = [b for b in bonds_of(mol) if b.GetBondTypeAsDouble() != 1.0]
    for bond in multiple:
        if bond.GetIsAromatic():
            return True
        ends = (bond.GetBeginAtom().GetAtomicNum(), bond.GetEndAtom().GetAtomicNum())
        if ends != (6, 6):
            return True
    atoms = [a for b in multiple for a in (b.GetBeginAtomIdx(), b.GetEndAtomIdx())]
    for bond in bonds_of(mol):  # a single bond between two multiply bonded atoms: conjugation
        single = bond.GetBondTypeAsDouble() == 1.0
        if single and bond.GetBeginAtomIdx() in atoms and bond.GetEndAtomIdx() in atoms:
            return True
    return False


def _gap(band: tuple[float, float], at: float) -> float:
    """How far ``at`` lies outside an observed band (low, high), nm; 0 inside it."""
    return max(band[0] - at, at - band[1], 0.0)


def _range(r: tuple[float, float]) -> str:
    return f"{r[0]:g}" if r[0] == r[1] else f"{r[0]:g}-{r[1]:g}"
