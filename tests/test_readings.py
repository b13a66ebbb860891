"""Plausibility rules read off the bond orders (elucidate/generator/readings.py) against RDKit's
SMARTS matching and named tests, the reference library (RDKit's SMARTS semantics: Daylight
SMARTS theory manual, as RDKit implements it).

On every structure of several formulas that cannot be aromatic, each read rule's clauses hold
exactly when RDKit's test of the rule matches the molecule RDKit reads from the structure's
SMILES; and generating with the stable profile gives what generating everything and filtering
with RDKit gives, with either engine.
"""

from __future__ import annotations

from collections import Counter

import pytest
from rdkit import Chem

from elucidate import parse_formula
from elucidate.generator import GeneratorOptions, isomer_smiles, kernel
from elucidate.generator.plans import default_valence_states
from elucidate.generator.plausibility import Rule, default_profiles
from elucidate.generator.readings import READERS, Readings, broken, clause_holds, view_of
from elucidate.generator.selection import Selection
from elucidate.generator.skeletons import automorphisms, grow
from elucidate.generator.tasks import generation_tasks, selection_plans, task_structures
from elucidate.generator.writer import Template

RULES = default_profiles()["stable"]
TABLE = Chem.GetPeriodicTable()
#: formulas whose structures hit every read rule: enols, ynols, gem-diols and peroxides (O),
#: small rings with triple bonds and allenes, bridged rings (Bredt), fused three-rings, azirines,
#: oxirenes and thiirenes, diazenes (N2)
CORPUS = ["C6H8", "C6H8O", "C5H6O2", "C4H5N", "C3H3NO", "C4H4N2", "C4H4S", "C7H10", "C2H2N2O2"]


def _readings(plan) -> Readings:
    atoms: Counter[int] = Counter()
    for (symbol, _), k in zip(plan.labels, plan.counts, strict=True):
        atoms[TABLE.GetAtomicNumber(symbol)] += k
    valence = {TABLE.GetAtomicNumber(symbol): v for symbol, v in plan.labels}
    readings = Readings.of(RULES, atoms, valence)
    assert readings is not None
    return readings


def _usual(plan) -> bool:
    states = default_valence_states()
    return plan.n > 1 and not any(label in states for label in plan.labels)


def test_every_rule_of_the_stable_profile_has_a_reader() -> None:
    keys = {r.smarts if r.smarts is not None else r.test for r in RULES}
    assert keys <= set(READERS)


def test_each_read_rule_holds_exactly_where_rdkit_matches_it() -> None:
    matchers = [r.matcher() for r in RULES]
    hits: Counter[str] = Counter()
    wrong: list[tuple[str, str, bool]] = []
    checked = 0
    for formula in CORPUS:
        plans, _ = selection_plans(parse_formula(formula), GeneratorOptions())
        for task in generation_tasks(plans):
            if not _usual(task.plan):
                continue
            readings = _readings(task.plan)
            number = {symbol: TABLE.GetAtomicNumber(symbol) for symbol, _ in task.plan.labels}
            clauses: dict[tuple[tuple[int, int], ...], tuple] = {}
            for s in task_structures(task):
                edges = tuple((a, b) for a, b, _ in s.bonds)
                template = Template(len(s.elements), edges)
                if template.may_be_aromatic(s.elements, s.bonds, s.hydrogens, s.valences):
                    continue
                if edges not in clauses:
                    clauses[edges] = readings.clauses(
                        view_of(template.n, edges, template.cycle_edge_indices),
                        extra=task.plan.bond_sum - len(edges),
                    )
                numbers = [number[e] for e in s.elements]
                orders = [o for _, _, o in s.bonds]
                mol = Chem.MolFromSmiles(template.write(s.elements, s.bonds, s.hydrogens))
                checked += 1
                for k, (rule, matches) in enumerate(zip(RULES, matchers, strict=True)):
                    expected = matches(mol)
                    read = any(clause_holds(c, numbers, orders) for i, c in clauses[edges] if i == k)
                    hits[rule.name] += expected
                    if read != expected:
                        wrong.append((rule.name, Chem.MolToSmiles(mol), expected))
    assert wrong == []
    assert checked > 5000
    # every rule that can match a structure with no aromatic ring was met in the corpus
    aromatic_only = {"hetero_three_ring_on_arene", "chorded_aromatic_ring"}
    assert {r.name for r in RULES if hits[r.name] == 0} == aromatic_only


@pytest.mark.parametrize("formula", ["C7H10", "C5H6O2", "C4H5N", "C3H3NO"])
@pytest.mark.parametrize("engine", ["python", "compiled"])
def test_the_stable_profile_read_in_generation_equals_filtering_with_rdkit(formula: str, engine: str) -> None:
    if engine == "compiled" and not kernel.AVAILABLE:
        pytest.skip("numba is not installed")
    matchers = [r.matcher() for r in RULES]
    f = parse_formula(formula)
    everything = list(isomer_smiles(f, GeneratorOptions()))
    kept = [s for s in everything if not any(m(Chem.MolFromSmiles(s)) for m in matchers)]
    removed: dict[str, int] = {}
    options = GeneratorOptions(selection=Selection(profile="stable"), rdkit_smiles=True, engine=engine)
    found = list(isomer_smiles(f, options, removed=removed))
    assert sorted(found) == sorted(Chem.MolToSmiles(Chem.MolFromSmiles(s)) for s in kept)
    assert sum(removed.values()) == len(everything) - len(kept) > 0


def test_the_compiled_core_breaks_the_rules_the_python_reading_breaks() -> None:
    if not kernel.AVAILABLE:
        pytest.skip("numba is not installed")
    plans, _ = selection_plans(parse_formula("C6H8O"), GeneratorOptions())
    structures = rejected = 0
    for task in generation_tasks(plans):
        plan = task.plan
        if not _usual(plan):
            continue
        readings = _readings(plan)
        labels = kernel.kernel_labels(plan.labels)
        number = [TABLE.GetAtomicNumber(symbol) for symbol, _ in plan.labels]
        for size, edges in grow(task.part, plan.n, plan.bounds, plan.rings_max, cycles=plan.cycles):
            group = automorphisms(size, edges)
            assert group is not None
            template = Template(size, edges)
            clauses = readings.clauses(
                view_of(size, edges, template.cycle_edge_indices),
                extra=plan.bond_sum - len(edges),
            )
            found = kernel.label_and_write(
                size,
                edges,
                group,
                labels,
                plan.counts,
                plan.bond_sum - len(edges),
                plan.max_extra,
                check_aromatic=True,
                clauses=clauses,
            )
            for k in range(len(found)):
                s = found.structure(k, plan.labels, edges)
                expected = -1
                if not found.aromatic[k]:
                    numbers = [number[c] for c in found.colourings[k].tolist()]
                    expected = broken(clauses, numbers, found.orders[k].tolist())
                assert found.rejected[k] == expected
                # a structure that breaks a rule is returned unwritten
                assert (found.smiles(k) == "") == (expected >= 0)
                if expected < 0:
                    assert found.smiles(k) == template.write(s.elements, s.bonds, s.hydrogens)
                structures += 1
                rejected += expected >= 0
    assert structures > 1000 and rejected > 100


def test_an_edited_rule_falls_back_to_rdkit() -> None:
    """A rule whose SMARTS has no reader is not read (RDKit keeps testing it)."""
    edited = Rule("enol", "an edited enol", smarts="[OX2H1][CX3]=[CX3;!R]")
    kept = Rule("peroxide", "as in the table", smarts="[OX2][OX2]")
    assert Readings.of([edited], {6: 2, 8: 1}, {6: 4, 8: 2}) is None
    readings = Readings.of([edited, kept], {6: 2, 8: 2}, {6: 4, 8: 2})
    assert readings is not None and readings.labels == ("implausible peroxide",)


@pytest.mark.parametrize(
    ("smiles", "rule"),
    [
        ("OC=C", "enol"),  # vinyl alcohol (common practice)
        ("C1#CCCCC1", "triple_bond_in_small_ring"),  # cyclohexyne
        ("C1=C2CCC1C2", "bredt"),  # norborn-1-ene (Bredt's rule, S = 5)
        ("C1CC2=CCC1C2", "bredt"),
        ("C1=C2CC12", "fused_three_ring_alkene"),  # bicyclo[1.1.0]but-1(3)-ene
        ("C1=CO1", "antiaromatic_three_ring"),  # oxirene
        ("CCN=N", "monosubstituted_diazene"),
    ],
)
def test_named_examples_are_read_as_their_rule(smiles: str, rule: str) -> None:
    """Examples of each rule's reason (the plausibility table's own), read off their bonds."""
    mol = Chem.MolFromSmiles(smiles)
    n = mol.GetNumAtoms()
    edges = tuple(
        sorted(
            (min(b.GetBeginAtomIdx(), b.GetEndAtomIdx()), max(b.GetBeginAtomIdx(), b.GetEndAtomIdx()))
            for b in mol.GetBonds()
        )
    )
    orders = {
        (min(b.GetBeginAtomIdx(), b.GetEndAtomIdx()), max(b.GetBeginAtomIdx(), b.GetEndAtomIdx())): int(
            b.GetBondTypeAsDouble()
        )
        for b in mol.GetBonds()
    }
    numbers = [a.GetAtomicNum() for a in mol.GetAtoms()]
    atoms = Counter(numbers)
    readings = Readings.of(RULES, atoms, {6: 4, 7: 3, 8: 2})
    assert readings is not None
    template = Template(n, edges)
    clauses = readings.clauses(
        view_of(n, edges, template.cycle_edge_indices),
        extra=sum(orders.values()) - len(edges),
    )
    k = broken(clauses, numbers, [orders[e] for e in edges])
    assert k >= 0 and readings.labels[k] == f"implausible {rule}"


@pytest.mark.parametrize(("n", "max_rings"), [(7, 3), (8, 3), (9, 2)])
def test_a_skeletons_ring_facts_are_rdkits(n: int, max_rings: int) -> None:
    """On every skeleton of n vertices (degree at most 4) with two rings or more, the view's
    ring facts (read from its 2-core, shared by many skeletons) equal those RDKit's ring
    information gives for the all-carbon molecule read from the skeleton's canonical SMILES: the
    set of rings, each atom's smallest ring size and ring count, each bond's ring membership."""
    from elucidate.generator.skeletons import skeletons

    checked = 0
    for size, edges in skeletons(n, [4] * n, max_rings):
        if len(edges) - size < 1:
            continue
        view = view_of(size, edges, Template(size, edges).cycle_edge_indices)
        built = Chem.RWMol()
        for _ in range(size):
            built.AddAtom(Chem.Atom(6))
        for a, b in edges:
            built.AddBond(a, b, Chem.BondType.SINGLE)
        smiles = Chem.MolToSmiles(built)
        vertex = list(built.GetPropsAsDict(True, True)["_smilesAtomOutputOrder"])  # per atom read back
        mol = Chem.MolFromSmiles(smiles)
        info = mol.GetRingInfo()
        assert sorted(sorted(r) for r in view.rings) == sorted(sorted(vertex[i] for i in r) for r in info.AtomRings())
        for i in range(size):
            assert view.smallest_ring(vertex[i]) == info.MinAtomRingSize(i)
            assert view.ring_count(vertex[i]) == info.NumAtomRings(i)
        for bond in mol.GetBonds():
            e = view.edge(vertex[bond.GetBeginAtomIdx()], vertex[bond.GetEndAtomIdx()])
            assert view.in_ring(e) == bond.IsInRing()
        checked += 1
    assert checked > 100
