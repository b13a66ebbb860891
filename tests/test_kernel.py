"""The compiled core (elucidate/generator/kernel.py, _compiled.py) against the Python path it
replaces, and against published counts (OEIS; the sequence number beside each check).

The Python path (labelling.structures_on_skeleton, writer.Template) is the reference: on every
skeleton of several formulas the compiled core must give the same structures, in the same order,
with the same SMILES strings and aromatic flags.
"""

from __future__ import annotations

import random

import numpy as np
import pytest

from elucidate import parse_formula
from elucidate.errors import ElucidateError
from elucidate.formula import Formula
from elucidate.generator import GeneratorOptions, isomer_smiles, kernel
from elucidate.generator.counts import CountTest, mol_counts
from elucidate.generator.labelling import SkeletonTest, structures_on_skeleton
from elucidate.generator.selection import Selection
from elucidate.generator.skeletons import automorphisms, grow
from elucidate.generator.tasks import _kernel_fits, generation_tasks, selection_plans
from elucidate.generator.writer import Template

pytestmark = pytest.mark.skipif(not kernel.AVAILABLE, reason="numba is not installed")

A000602 = [1, 1, 1, 2, 3, 5, 9, 18, 35, 75]  # alkanes CnH2n+2, n = 1..10
A002986 = [1, 3, 4, 12, 27, 84, 247]  # acyclic hydrocarbons, any unsaturation, n = 1..7
A134818 = [1, 3, 9, 37, 146, 772]  # all hydrocarbons summed over H, graph counting, n = 1..6


def _skeleton_cases(text: str, options: GeneratorOptions):
    """The skeletons of the formula's plans the compiled core takes (no higher valence state)."""
    plans, _ = selection_plans(parse_formula(text), options)
    for task in generation_tasks(plans):
        plan = task.plan
        if not _kernel_fits(task, None):
            continue
        for size, edges in grow(task.part, plan.n, plan.bounds, plan.rings_max, cycles=plan.cycles):
            yield plan, size, edges


@pytest.mark.parametrize(
    ("formula", "options"),
    [
        ("C7H8O", GeneratorOptions()),
        ("C6H6", GeneratorOptions()),
        ("C5H5N", GeneratorOptions()),
        ("C4H4N2", GeneratorOptions()),
        ("C6H12", GeneratorOptions(max_bond_order=1)),
        ("C5H6O", GeneratorOptions(max_bond_order=2)),
        ("C3H4ClF", GeneratorOptions()),
        ("C6H6O", GeneratorOptions(max_rings=1)),
        ("C5H5N", GeneratorOptions(lowest_valence=True)),
    ],
)
def test_the_compiled_core_labels_every_skeleton_as_the_python_path(formula: str, options: GeneratorOptions) -> None:
    skeletons = structures = 0
    for plan, size, edges in _skeleton_cases(formula, options):
        group = automorphisms(size, edges)
        assert group is not None
        reference = list(structures_on_skeleton(size, edges, plan.labels, plan.counts, plan.bond_sum, plan.max_extra))
        template = Template(size, edges)
        found = kernel.label_and_write(
            size,
            edges,
            group,
            kernel.kernel_labels(plan.labels),
            plan.counts,
            plan.bond_sum - len(edges),
            plan.max_extra,
            check_aromatic=True,
        )
        assert len(found) == len(reference)
        for k, s in enumerate(reference):
            assert found.structure(k, plan.labels, edges) == s
            assert found.smiles(k) == template.write(s.elements, s.bonds, s.hydrogens)
            assert bool(found.aromatic[k]) == template.may_be_aromatic(s.elements, s.bonds, s.hydrogens, s.valences)
        skeletons += 1
        structures += len(reference)
    assert skeletons > 0 and structures > 0


def test_no_aromatic_flag_is_raised_when_none_is_asked() -> None:
    (plan, size, edges) = next(
        (p, n, e) for p, n, e in _skeleton_cases("C6H6", GeneratorOptions()) if len(e) == 6 and n == 6
    )
    group = automorphisms(size, edges)
    assert group is not None
    args = (size, edges, group, kernel.kernel_labels(plan.labels), plan.counts, plan.bond_sum - 6, plan.max_extra)
    assert kernel.label_and_write(*args, check_aromatic=True).aromatic.any()  # benzene's ring
    assert not kernel.label_and_write(*args, check_aromatic=False).aromatic.any()


def _random_graph(rng: random.Random, n: int, extra: int) -> tuple[tuple[int, int], ...]:
    """A connected simple graph of maximum degree 4 (a random tree plus up to ``extra`` edges)."""
    degree = [0] * n
    edges: set[tuple[int, int]] = set()
    for v in range(1, n):
        u = rng.choice([w for w in range(v) if degree[w] < 4])
        edges.add((u, v))
        degree[u] += 1
        degree[v] += 1
    for _ in range(extra if n > 1 else 0):
        a, b = sorted(rng.sample(range(n), 2))
        if (a, b) not in edges and degree[a] < 4 and degree[b] < 4:
            edges.add((a, b))
            degree[a] += 1
            degree[b] += 1
    return tuple(sorted(edges))


def test_the_compiled_template_is_the_python_template_on_random_graphs() -> None:
    rng = random.Random(20261204)
    two_digit = 0
    for _ in range(400):
        n = rng.randint(1, 30)
        edges = _random_graph(rng, n, rng.randint(0, 2 * n))
        template = Template(n, edges)
        program, cycle = kernel.template_program(n, edges)
        assert program.tolist() == template.program.tolist(), (n, edges)
        assert tuple(cycle.tolist()) == template.cycle_edge_indices
        two_digit += -ord("%") in program.tolist()
    assert two_digit > 0  # ring labels from 10 on (%10, %11, ...) were exercised


@pytest.mark.parametrize("formula", ["C7H8O", "C5H5N", "C6H6", "C4H6O2", "C5H9NO", "C3H6S", "C4H11N"])
@pytest.mark.parametrize("kekule", [False, True])
def test_isomer_smiles_are_the_same_with_either_engine(formula: str, kekule: bool) -> None:
    f = parse_formula(formula)
    python = list(isomer_smiles(f, GeneratorOptions(kekule=kekule, engine="python")))
    compiled = list(isomer_smiles(f, GeneratorOptions(kekule=kekule, engine="compiled")))
    assert compiled == python
    assert len(set(compiled)) == len(compiled)


def _count(formula: Formula, options: GeneratorOptions) -> int:
    return sum(1 for _ in isomer_smiles(formula, options))


@pytest.mark.parametrize("n", range(1, 11))
def test_alkanes_A000602_compiled(n: int) -> None:
    assert _count(Formula.of({"C": n, "H": 2 * n + 2}), GeneratorOptions(engine="compiled")) == A000602[n - 1]


@pytest.mark.parametrize("n", range(1, 8))
def test_acyclic_hydrocarbons_A002986_compiled(n: int) -> None:
    options = GeneratorOptions(kekule=True, max_rings=0, engine="compiled")
    total = sum(_count(Formula.of({"C": n, "H": h}), options) for h in range(2 * n + 3))
    assert total == A002986[n - 1]


@pytest.mark.parametrize("n", range(1, 7))
def test_all_hydrocarbons_A134818_compiled(n: int) -> None:
    options = GeneratorOptions(kekule=True, engine="compiled")
    total = sum(_count(Formula.of({"C": n, "H": h}), options) for h in range(2 * n + 3))
    assert total == A134818[n - 1]


def test_an_unknown_engine_is_refused_with_the_choices() -> None:
    with pytest.raises(ElucidateError, match="auto, compiled, python"):
        GeneratorOptions(engine="fast")  # type: ignore[arg-type]


def test_auto_starts_the_compiled_core_only_after_enough_python_work(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(kernel._Usage, "python", 0)
    assert not kernel.wanted("auto")
    assert kernel.wanted("compiled")
    assert not kernel.wanted("python")
    kernel.labelled_in_python(kernel.PYTHON_FIRST)
    assert kernel.wanted("auto")
    assert not kernel.wanted("python")


def test_without_numba_auto_stays_in_python_and_compiled_says_why(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(kernel, "_unavailable", lambda: "numba cannot be imported (test)")
    monkeypatch.setattr(kernel._Usage, "python", kernel.PYTHON_FIRST)
    assert not kernel.wanted("auto")
    with pytest.raises(ElucidateError, match="numba cannot be imported"):
        kernel.wanted("compiled")


@pytest.mark.parametrize("formula", ["C7H8O", "C8H18", "C6H6"])
def test_many_skeletons_in_one_call_are_labelled_as_one_by_one(formula: str) -> None:
    from elucidate.generator._compiled import closure
    from elucidate.generator.skeletons import automorphism_generators

    cases = list(_skeleton_cases(formula, GeneratorOptions()))
    plan = cases[0][0]
    batch = []
    for k, (_, size, edges) in enumerate(cases):
        generators, order = automorphism_generators(size, edges)
        group = automorphisms(size, edges)
        assert group is not None and len(group) == order
        # the compiled closure of nauty's generators is the whole group
        rows = np.array(generators, dtype=np.int64).reshape(len(generators), size)
        assert {tuple(p) for p in closure(size, rows).tolist()} == set(group)
        # either form may be handed over: every other skeleton gets its whole group
        batch.append((edges, group, True, (), ()) if k % 2 else (edges, generators, False, (), ()))
    labels = kernel.kernel_labels(plan.labels)
    together = kernel.label_and_write_many(
        plan.n, batch, labels, plan.counts, plan.bond_sum, plan.max_extra, check_aromatic=True
    )
    assert len(together.smiles) == len(cases)
    for (_, size, edges), strings, flags in zip(cases, together.smiles, together.aromatic, strict=True):
        group = automorphisms(size, edges)
        assert group is not None
        alone = kernel.label_and_write(
            size, edges, group, labels, plan.counts, plan.bond_sum - len(edges), plan.max_extra, check_aromatic=True
        )
        assert strings == alone.all_smiles() and flags == alone.aromatic.tolist()


def test_groups_listed_in_python_give_the_same_output(monkeypatch: pytest.MonkeyPatch) -> None:
    # every group larger than 1 listed in Python and handed over whole (the path of groups
    # above CLOSED_IN_KERNEL), against the Python labelling
    f = parse_formula("C6H6O")
    python = list(isomer_smiles(f, GeneratorOptions(engine="python")))
    monkeypatch.setattr(kernel, "CLOSED_IN_KERNEL", 1)
    assert list(isomer_smiles(f, GeneratorOptions(engine="compiled"))) == python


def test_worker_processes_run_the_compiled_core_with_the_same_output() -> None:
    f = parse_formula("C6H6O")
    python = list(isomer_smiles(f, GeneratorOptions(engine="python")))
    assert list(isomer_smiles(f, GeneratorOptions(engine="compiled", workers=2))) == python


#: required groups whose skeleton conditions the compiled core reads (groups.yaml ``skeleton``
#: and ``kekule``): element records, fixed bond orders and atoms that must carry a multiple bond
CONDITIONED = [
    ("C8H8O", ("ketone",)),
    ("C7H6O", ("aldehyde",)),
    ("C6H8O2", ("ester",)),
    ("C8H8O", ("aromatic_ring",)),
    ("C5H9NO", ("amide",)),
    ("C8H12O", ("ketone", "alkene")),
    ("C6H8O2", ("carboxylic_acid",)),
    ("C6H10O", ("alcohol",)),  # its carbon must carry no multiple bond
]


@pytest.mark.parametrize(("formula", "require"), CONDITIONED)
def test_conditions_read_off_each_skeleton_keep_the_python_paths_structures(
    formula: str, require: tuple[str, ...]
) -> None:
    # skeleton by skeleton: the compiled core with the conditions read off the bare skeleton
    # gives exactly the structures the Python path keeps with its per-labelling tests
    options = GeneratorOptions(selection=Selection(require=require))
    plans, prefilter = selection_plans(parse_formula(formula), options)
    assert prefilter  # the groups do have skeleton conditions
    read = kept = 0
    for task in generation_tasks(plans):
        plan = task.plan
        test = SkeletonTest(prefilter, plan.labels)
        if not _kernel_fits(task, test):
            continue
        labels = kernel.kernel_labels(plan.labels)
        for size, edges in grow(task.part, plan.n, plan.bounds, plan.rings_max, cycles=plan.cycles):
            python = list(
                structures_on_skeleton(size, edges, plan.labels, plan.counts, plan.bond_sum, plan.max_extra, test)
            )
            if not test.bare_ok(size, edges):
                assert python == []
                continue
            conditions = test.kernel_conditions()
            if conditions is None:
                continue
            group = automorphisms(size, edges)
            if group is None:
                continue
            found = kernel.label_and_write(
                size,
                edges,
                group,
                labels,
                plan.counts,
                plan.bond_sum - len(edges),
                plan.max_extra,
                check_aromatic=True,
                conditions=conditions,
            )
            assert [found.structure(k, plan.labels, edges) for k in range(len(found))] == python, edges
            read += 1
            kept += len(python)
    assert read > 0 and kept > 0


def _both_engines(f: Formula, selection: Selection, rdkit_smiles: bool) -> dict[str, tuple[list[str], dict[str, int]]]:
    """Per engine (python, compiled): the SMILES of ``f`` under ``selection`` and the counts of
    what each constraint removed."""
    out = {}
    for engine in ("python", "compiled"):
        removed: dict[str, int] = {}
        options = GeneratorOptions(selection=selection, rdkit_smiles=rdkit_smiles, engine=engine)
        out[engine] = (list(isomer_smiles(f, options, removed=removed)), removed)
    return out


@pytest.mark.parametrize(("formula", "require"), CONDITIONED)
@pytest.mark.parametrize("rdkit_smiles", [False, True])
def test_isomer_smiles_with_required_groups_are_the_same_with_either_engine(
    formula: str, require: tuple[str, ...], rdkit_smiles: bool
) -> None:
    # the finished-molecule tests (the stable profile) run on what the compiled core wrote:
    # the same SMILES in the same order, and the same counts of what each constraint removed
    out = _both_engines(parse_formula(formula), Selection(require=require, profile="stable"), rdkit_smiles)
    assert out["compiled"] == out["python"]
    assert out["python"][0]
    if formula == "C8H12O":  # there the tests on finished molecules do remove some (no C=C, 98)
        assert sum(out["python"][1].values()) > 0


def test_the_budget_count_is_the_same_with_either_engine() -> None:
    from elucidate.generator.tasks import StructureBudget, task_count

    options = GeneratorOptions(selection=Selection(require=("ketone",)))
    plans, prefilter = selection_plans(parse_formula("C8H12O"), options)
    counts = {}
    for engine in ("python", "compiled"):
        budget = StructureBudget(10**7)
        for task in generation_tasks(plans):
            for _ in task_count(task, prefilter, budget, engine=engine):
                pass
        counts[engine] = (budget.taken, budget.grown)
    assert counts["compiled"] == counts["python"]
    assert counts["python"][0] > 1000


#: declared NMR counts (carbon types, exchangeable H, carbon kinds), alone and with a required
#: group; the compiled core tests them exactly on each multigraph (CountTest.structure_ok)
COUNTED = [
    ("C7H8O", CountTest(types=(1, 0, 4, 2)), ()),  # the carbon types of a cresol or anisole
    ("C6H12O", CountTest(types=(2, 2, 2, 0), exchangeable=(0, 0)), ()),
    ("C6H10O", CountTest(kinds=(("carbonyl", 1, 1), ("sp2", 0, 0))), ()),
    ("C8H8O", CountTest(types=(1, 0, 5, 2)), ("ketone",)),  # acetophenone's carbon types
    ("C5H10O2", CountTest(exchangeable=(1, 1), kinds=(("heteroatom_sp3", 0, 1),)), ()),
]


@pytest.mark.parametrize(("formula", "counts", "require"), COUNTED)
def test_declared_counts_keep_the_python_paths_structures(
    formula: str, counts: CountTest, require: tuple[str, ...]
) -> None:
    f = parse_formula(formula)
    out = _both_engines(f, Selection(require=require, counts=counts, profile="stable"), True)
    assert out["compiled"] == out["python"]
    assert out["python"][0]
    # and exactly the structures that filtering the finished molecules on the counts keeps
    # (mol_counts, read from RDKit's molecules)
    everything = list(isomer_smiles(f, GeneratorOptions(selection=Selection(require=require, profile="stable"))))
    from elucidate._rdkit import Chem

    kept = {s for s in everything if counts.counts_ok(mol_counts(Chem.MolFromSmiles(s)))}
    assert set(out["compiled"][0]) == kept
