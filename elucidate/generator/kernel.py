"""The compiled core: labelling skeletons and writing each structure's SMILES, many skeletons
to a call (:func:`label_and_write_many`; :func:`label_and_write` takes one).

:func:`label_and_write` does, in machine code (numba), what :func:`.labelling.structures_on_skeleton`
and :meth:`.writer.Template.write` do in Python for the plain case (no required-group
conditions, no declared NMR counts, no higher valence state, an automorphism group small enough
to list): element labels in lexicographic order, each kept only when it is the smallest of its
orbit; bond orders in the Python search's order, each kept only when smallest under the
labelling's stabilizer; hydrogens from the free valence; the SMILES written by the skeleton's
template; and the flag of :meth:`~.writer.Template.may_be_aromatic`. The structures, their order
and their strings are exactly those of the Python path, which stays as the reference
(tests/test_kernel.py compares the two on every skeleton of several formulas).

numba is a dependency installed from its wheels (no compiler). When it cannot be imported, the
generator runs the Python path alone (engine ``auto``) or says why (engine ``compiled``). The
compiled code is cached on disk (numba's ``cache=True``), so only a machine's first run pays for
compiling it; each process still pays about a second to import numba and read that cache, which
is why ``auto`` waits for :data:`PYTHON_FIRST` structures.
"""

from __future__ import annotations

import importlib.util
from collections.abc import Sequence
from dataclasses import dataclass
from functools import cache
from typing import Literal, TypeAlias

import numpy as np

from ..errors import ElucidateError
from .counts import CARBON_KINDS, CountTest
from .labelling import Structure
from .writer import atom_token

__all__ = [
    "AVAILABLE",
    "CLOSED_IN_KERNEL",
    "CONDITIONED_FIRST",
    "ENGINES",
    "PYTHON_FIRST",
    "Batch",
    "Clauses",
    "Conditions",
    "Engine",
    "KernelLabels",
    "Labelled",
    "check_engine",
    "count_spec",
    "kernel_labels",
    "label_and_write",
    "label_and_write_many",
    "labelled_in_python",
    "template_program",
    "usable",
    "wanted",
    "worth_starting",
]

#: whether numba can be imported (it is imported on first use)
AVAILABLE = importlib.util.find_spec("numba") is not None

#: who labels the skeletons: ``auto`` the compiled core once a process has labelled
#: :data:`PYTHON_FIRST` structures in Python, ``compiled`` always (where it applies), ``python``
#: never; the output is the same
Engine: TypeAlias = Literal["auto", "compiled", "python"]
ENGINES: tuple[Engine, ...] = ("auto", "compiled", "python")

#: structures a process labels in Python before ``auto`` starts the compiled core: starting it
#: (importing numba and reading the compiled code from its cache) costs about a second, what
#: Python takes for some 20,000 structures, so a small space never pays it and a large one pays
#: at most about as much again as it would have cost in Python
PYTHON_FIRST = 20_000
#: structures a space must be estimated to hold for a caller that knows its size (``isomers``,
#: ``solve``) to start the compiled core at once: :data:`PYTHON_FIRST` for plain labelling, this
#: many when required groups or declared NMR counts condition it, where Python spends several
#: times as much per structure (carvone with its carbon types, one worker: generation 2.5-2.7 s
#: against 4.4-4.7 s, start-up included, for 5,700 structures estimated)
CONDITIONED_FIRST = 4_000


class _Usage:
    """Structures this process has labelled in Python (for ``auto``)."""

    python = 0


def check_engine(engine: str) -> Engine:
    """``engine`` if it is one of :data:`ENGINES`, else an error listing them."""
    for choice in ENGINES:
        if engine == choice:
            return choice
    raise ElucidateError(f"unknown generator engine {engine!r}; expected one of: {', '.join(ENGINES)}")


def labelled_in_python(count: int) -> None:
    """Record ``count`` more structures labelled in Python by this process."""
    _Usage.python += count


def wanted(engine: Engine) -> bool:
    """Whether the compiled core labels what it can, for this ``engine`` now. ``compiled``
    without a working numba is an error naming the reason; ``auto`` then stays in Python."""
    if engine == "python" or (engine == "auto" and _Usage.python < PYTHON_FIRST):
        return False
    why = _unavailable()
    if why is None:
        return True
    if engine == "compiled":
        raise ElucidateError(f"the compiled generator engine is not available: {why}; use engine auto or python")
    return False


def worth_starting(structures: float, *, conditioned: bool) -> bool:
    """Whether a space estimated at ``structures`` is large enough for the compiled core's
    start-up to pay (``conditioned``: required-group conditions or declared counts apply), and
    the core can run here."""
    return structures >= (CONDITIONED_FIRST if conditioned else PYTHON_FIRST) and usable()


def usable() -> bool:
    """Whether the compiled core can run in this process (imports numba on first call)."""
    return _unavailable() is None


@cache
def _unavailable() -> str | None:
    """Why numba cannot run the compiled core in this process, or None when it can."""
    if not AVAILABLE:
        return "numba is not installed"
    try:
        from . import _compiled  # noqa: F401 - imports numba and sets up its cache
    except ImportError as exc:
        return f"numba cannot be imported ({exc})"
    except RuntimeError as exc:  # numba finds no folder to cache the compiled code in
        return f"numba cannot set up the compiled code ({exc})"
    return None


@dataclass(frozen=True)
class KernelLabels:
    """A plan's labels as arrays: valence state, whether carbon, and each label's atom token
    per hydrogen count (the bond sum is the valence less the hydrogens), in one byte pool."""

    valence: np.ndarray  # int64 per label
    carbon: np.ndarray  # bool per label
    element: np.ndarray  # int64 per label: the atomic number of C, N and O, 0 for the others
    number: np.ndarray  # int64 per label: its atomic number
    token_start: np.ndarray  # int64 (label, hydrogens)
    token_end: np.ndarray  # int64 (label, hydrogens)
    pool: np.ndarray  # uint8


#: the elements whose pi-electron share in a ring the sharp aromaticity test knows
_SHARED_ELEMENTS = {"C": 6, "N": 7, "O": 8}


@cache
def kernel_labels(labels: tuple[tuple[str, int], ...]) -> KernelLabels:
    """:class:`KernelLabels` of a plan's (element, valence state) labels."""
    from .._rdkit import Chem

    table = Chem.GetPeriodicTable()
    top = max(v for _, v in labels)
    start = np.zeros((len(labels), top + 1), dtype=np.int64)
    end = np.zeros((len(labels), top + 1), dtype=np.int64)
    pool = bytearray()
    for k, (symbol, valence) in enumerate(labels):
        for h in range(valence + 1):
            start[k, h] = len(pool)
            pool += atom_token(symbol, h, valence - h).encode("ascii")
            end[k, h] = len(pool)
    return KernelLabels(
        np.array([v for _, v in labels], dtype=np.int64),
        np.array([s == "C" for s, _ in labels], dtype=np.bool_),
        np.array([_SHARED_ELEMENTS.get(s, 0) for s, _ in labels], dtype=np.int64),
        np.array([table.GetAtomicNumber(s) for s, _ in labels], dtype=np.int64),
        start,
        end,
        np.frombuffer(bytes(pool), dtype=np.uint8).copy(),
    )


@dataclass(frozen=True)
class Labelled:
    """What one call returns for one skeleton: per structure its label indices (one row per
    structure), bond orders (in the skeleton's edge order), hydrogens, SMILES (ASCII bytes,
    each followed by a newline: ``text[ends[k-1]:ends[k]]``; empty for a structure that
    breaks a read rule), whether it may be aromatic, and the read rule it breaks (-1: none)."""

    colourings: np.ndarray
    orders: np.ndarray
    hydrogens: np.ndarray
    text: bytes
    ends: np.ndarray
    aromatic: np.ndarray
    rejected: np.ndarray

    def __len__(self) -> int:
        return len(self.ends)

    def smiles(self, k: int) -> str:
        """The SMILES of structure ``k``, written from the skeleton."""
        begin = int(self.ends[k - 1]) if k else 0
        return self.text[begin : int(self.ends[k]) - 1].decode("ascii")

    def all_smiles(self) -> list[str]:
        """The SMILES of every structure, in order."""
        return self.text.decode("ascii").split("\n")[:-1]

    def structure(self, k: int, labels: Sequence[tuple[str, int]], edges: Sequence[tuple[int, int]]) -> Structure:
        """Structure ``k`` as the Python path builds it (``labels``: the plan's labels;
        ``edges``: the skeleton's)."""
        colouring = self.colourings[k].tolist()
        orders = self.orders[k].tolist()
        return Structure(
            tuple(labels[c][0] for c in colouring),
            tuple((a, b, o) for (a, b), o in zip(edges, orders, strict=True)),
            tuple(self.hydrogens[k].tolist()),
            tuple(labels[c][1] for c in colouring),
        )


#: plausibility rules read off the labels and bond orders (:mod:`.readings`): per clause the
#: index of the rule it breaks and its records (``0 v z``, ``1 e o``), rules in order
Clauses: TypeAlias = "tuple[tuple[int, tuple[int, ...]], ...]"

#: conditions a structure must meet (required groups read off the labels and bond orders,
#: :meth:`.labelling.SkeletonTest.kernel_conditions`): per condition its ways, of which one
#: must hold, each a flat run of records: ``0 v z`` vertex v is element z, ``1 e o`` edge e
#: has order o, ``2 k e1 .. ek`` one of these k edges is a double or triple bond
Conditions: TypeAlias = "tuple[tuple[tuple[int, ...], ...], ...]"


def count_spec(test: CountTest | None) -> np.ndarray:
    """The declared NMR counts as the compiled core reads them: a flag and the CH3, CH2, CH, C
    carbons; a flag and the low and high H on O and N; a flag, then the low and the high count
    of each carbon kind in the order of :data:`~.counts.CARBON_KINDS` (all flags 0: none)."""
    spec = [0] * 19
    if test is not None and test.types is not None:
        spec[0:5] = [1, *test.types]
    if test is not None and test.exchangeable is not None:
        spec[5:8] = [1, *test.exchangeable]
    if test is not None and test.kinds:
        declared = {kind: (low, high) for kind, low, high in test.kinds}
        spec[8] = 1
        for k, kind in enumerate(CARBON_KINDS):
            low, high = declared.get(kind, (0, 1 << 30))
            spec[9 + k], spec[14 + k] = low, high
    return np.array(spec, dtype=np.int64)


def _flat_conditions(per_skeleton: Sequence[Conditions]) -> tuple[np.ndarray, ...]:
    """The arrays the compiled core reads conditions from: per condition the start of its ways,
    per way the start of its records, the records, and per skeleton the start of its
    conditions."""
    cond_start = [0]
    way_start = [0]
    code: list[int] = []
    skeleton_start = [0]
    for conditions in per_skeleton:
        for ways in conditions:
            for way in ways:
                code += way
                way_start.append(len(code))
            cond_start.append(len(way_start) - 1)
        skeleton_start.append(len(cond_start) - 1)
    return tuple(np.array(a, dtype=np.int64) for a in (cond_start, way_start, code, skeleton_start))


def _flat_clauses(per_skeleton: Sequence[Clauses]) -> tuple[np.ndarray, ...]:
    """The arrays the compiled core reads clauses from: per clause the start of its records and
    the rule it breaks, the records, and per skeleton the start of its clauses."""
    start = [0]
    rule: list[int] = []
    code: list[int] = []
    skeleton_start = [0]
    for clauses in per_skeleton:
        for k, records in clauses:
            code += records
            start.append(len(code))
            rule.append(k)
        skeleton_start.append(len(rule))
    return tuple(np.array(a, dtype=np.int64) for a in (start, rule, code, skeleton_start))


def label_and_write(
    n: int,
    edges: Sequence[tuple[int, int]],
    group: Sequence[tuple[int, ...]],
    labels: KernelLabels,
    per_label: Sequence[int],
    extra_total: int,
    max_extra: int,
    *,
    check_aromatic: bool,
    sharp: bool = True,
    conditions: Conditions = (),
    counts: CountTest | None = None,
    clauses: Clauses = (),
) -> Labelled:
    """Every structure on the skeleton (``n`` vertices, ``edges`` sorted) with ``per_label``
    atoms of each label and ``extra_total`` bond orders above single (at most ``max_extra`` per
    edge), one per orbit of its automorphism ``group`` (vertex permutations, as
    :func:`~.skeletons.automorphisms` lists them), in the Python path's order, with the SMILES
    the skeleton's :class:`~.writer.Template` writes; ``check_aromatic``: flag those that may be
    aromatic (else none is flagged); ``sharp``: False flags every structure with a cycle of
    atoms that each carry a multiple bond or are not carbon, without :mod:`.aromatic`'s count
    (to measure what that count saves); ``conditions``: what each structure must meet (the
    search is pruned on them as labels and orders are placed); ``counts``: the declared NMR
    counts every structure must meet; ``clauses``: plausibility rules read off the labels and
    orders, tested on each structure that cannot be aromatic (when ``check_aromatic`` and
    ``sharp``), which is then returned unwritten with the index of the rule it breaks."""
    from . import _compiled

    cond_start, way_start, code, _ = _flat_conditions([conditions])
    f_start, f_rule, f_code, _ = _flat_clauses([clauses])

    heads = np.array([a for a, _ in edges], dtype=np.int64)
    tails = np.array([b for _, b in edges], dtype=np.int64)
    colourings, orders, hydrogens, text, ends, aromatic, rejected = _compiled.label_and_write(
        n,
        heads,
        tails,
        np.array(group, dtype=np.int64).reshape(len(group), n),
        labels.valence,
        labels.carbon,
        labels.element,
        np.array(per_label, dtype=np.int64),
        extra_total,
        max_extra,
        labels.token_start,
        labels.token_end,
        labels.pool,
        check_aromatic,
        sharp,
        labels.number,
        cond_start,
        way_start,
        code,
        0,
        len(conditions),
        count_spec(counts),
        f_start,
        f_rule,
        f_code,
        0,
        len(clauses),
    )
    return Labelled(colourings, orders, hydrogens, text.tobytes(), ends, aromatic, rejected)


@dataclass(frozen=True)
class Batch:
    """What :func:`label_and_write_many` returns: per skeleton, its structures' SMILES (written
    from the skeleton; empty for one that breaks a read rule), whether each may be aromatic,
    the read rule each breaks (-1: none) and each one's bond orders (one per edge, in edge
    order)."""

    smiles: list[list[str]]
    aromatic: list[list[bool]]
    rejected: list[list[int]]
    orders: list[list[list[int]]]


#: automorphism groups up to this order are closed from their generators in the compiled core;
#: larger ones are listed in Python (:func:`.skeletons.automorphisms`)
CLOSED_IN_KERNEL = 256


def label_and_write_many(
    n: int,
    skeletons: Sequence[tuple[tuple[tuple[int, int], ...], Sequence[Sequence[int]], bool, Conditions, Clauses]],
    labels: KernelLabels,
    per_label: Sequence[int],
    bond_sum: int,
    max_extra: int,
    *,
    check_aromatic: bool,
    counts: CountTest | None = None,
) -> Batch:
    """:func:`label_and_write` on several skeletons of ``n`` vertices in one call (each given as
    its edges, permutations, whether they are its whole automorphism group, else generators
    of a group of order at most :data:`CLOSED_IN_KERNEL`, its :data:`Conditions` and its
    :data:`Clauses`),
    ``bond_sum`` the plan's bond-order sum, ``counts`` the declared NMR counts; the same
    structures, in the same order."""
    from . import _compiled

    edge_starts = [0]
    group_starts = [0]
    heads: list[int] = []
    tails: list[int] = []
    rows: list[Sequence[int]] = []
    complete = []
    for edges, permutations, whole, _, _ in skeletons:
        heads += [a for a, _ in edges]
        tails += [b for _, b in edges]
        edge_starts.append(len(heads))
        rows += permutations
        group_starts.append(len(rows))
        complete.append(whole)
    cond_start, way_start, code, skeleton_start = _flat_conditions([c for _, _, _, c, _ in skeletons])
    f_start, f_rule, f_code, skeleton_clauses = _flat_clauses([c for *_, c in skeletons])
    text, aromatic, rejected, per_skeleton, all_orders = _compiled.label_and_write_many(
        n,
        np.array(edge_starts, dtype=np.int64),
        np.array(heads, dtype=np.int64),
        np.array(tails, dtype=np.int64),
        np.array(group_starts, dtype=np.int64),
        np.array(complete, dtype=np.bool_),
        np.array(rows, dtype=np.int64).reshape(len(rows), n),
        labels.valence,
        labels.carbon,
        labels.element,
        np.array(per_label, dtype=np.int64),
        bond_sum,
        max_extra,
        labels.token_start,
        labels.token_end,
        labels.pool,
        check_aromatic,
        True,
        labels.number,
        cond_start,
        way_start,
        code,
        skeleton_start,
        count_spec(counts),
        f_start,
        f_rule,
        f_code,
        skeleton_clauses,
    )
    strings = text.tobytes().decode("ascii").split("\n")
    flags = aromatic.tolist()
    broken = rejected.tolist()
    smiles_out: list[list[str]] = []
    aromatic_out: list[list[bool]] = []
    rejected_out: list[list[int]] = []
    orders_out: list[list[list[int]]] = []
    at = 0
    placed = 0  # orders read so far
    for (edges, *_), count in zip(skeletons, per_skeleton.tolist(), strict=True):
        smiles_out.append(strings[at : at + count])
        aromatic_out.append(flags[at : at + count])
        rejected_out.append(broken[at : at + count])
        size = count * len(edges)
        orders_out.append(all_orders[placed : placed + size].reshape(count, len(edges)).tolist())
        placed += size
        at += count
    return Batch(smiles_out, aromatic_out, rejected_out, orders_out)


def template_program(n: int, edges: Sequence[tuple[int, int]]) -> tuple[np.ndarray, np.ndarray]:
    """The compiled core's :class:`~.writer.Template` of a skeleton: its program (as
    :attr:`~.writer.Template.program`) and its cycle edges (as
    :attr:`~.writer.Template.cycle_edge_indices`)."""
    from . import _compiled

    heads = np.array([a for a, _ in edges], dtype=np.int64)
    tails = np.array([b for _, b in edges], dtype=np.int64)
    program, cycle = _compiled.template(n, heads, tails)
    return program, cycle
