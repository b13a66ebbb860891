"""The compiled core's code (numba; imported only when the compiled engine runs, see
:mod:`.kernel`). Each function does what its Python reference does, with the same results in the
same order: :func:`template` as :class:`.writer.Template`, :func:`inverses` as
:func:`.labelling.inverse_permutations`, :func:`label_and_write` as
:func:`.labelling.structures_on_skeleton` followed by :meth:`.writer.Template.write` and
:meth:`.writer.Template.may_be_aromatic` (tests/test_kernel.py compares them)."""

# numba compiles these from their Python source: plain loops over arrays, no annotations
# mypy: ignore-errors

from __future__ import annotations

import numba
import numpy as np


@numba.njit(cache=True, nogil=True)
def inverses(n, heads, tails, group):
    """Each permutation of ``group`` but the identity as its vertex inverse and edge inverse
    (rows): the image of a labelling ``x`` is ``x[inverse[i]]`` at position ``i``."""
    m = heads.shape[0]
    edge_index = np.full((n, n), -1, dtype=np.int64)
    for e in range(m):
        edge_index[heads[e], tails[e]] = e
        edge_index[tails[e], heads[e]] = e
    count = 0
    for q in range(group.shape[0]):
        for v in range(n):
            if group[q, v] != v:
                count += 1
                break
    vertex_inverse = np.empty((count, n), dtype=np.int64)
    edge_inverse = np.empty((count, m), dtype=np.int64)
    row = 0
    for q in range(group.shape[0]):
        identity = True
        for v in range(n):
            if group[q, v] != v:
                identity = False
                break
        if identity:
            continue
        for v in range(n):
            vertex_inverse[row, group[q, v]] = v
        for e in range(m):
            edge_inverse[row, edge_index[group[q, heads[e]], group[q, tails[e]]]] = e
        row += 1
    return vertex_inverse, edge_inverse


@numba.njit(cache=True, nogil=True)
def _digits(d, out, k):
    """Ring label ``d`` as SMILES writes it (``%nn`` from 10), as minus the character codes,
    into ``out`` from ``k``; returns the next position."""
    if d >= 10:
        out[k] = -37  # %
        k += 1
    first = k
    while True:
        out[k] = -(48 + d % 10)
        k += 1
        d //= 10
        if d == 0:
            break
    # the digits came least significant first
    last = k - 1
    while first < last:
        t = out[first]
        out[first] = out[last]
        out[last] = t
        first += 1
        last -= 1
    return k


@numba.njit(cache=True, nogil=True)
def template(n, heads, tails):
    """The program and the cycle edges of :class:`.writer.Template` for this skeleton."""
    m = heads.shape[0]
    # adjacency, each row in increasing neighbour order (the edges come sorted)
    degree = np.zeros(n, dtype=np.int64)
    for e in range(m):
        degree[heads[e]] += 1
        degree[tails[e]] += 1
    start = np.zeros(n + 1, dtype=np.int64)
    for v in range(n):
        start[v + 1] = start[v] + degree[v]
    fill = start[:n].copy()
    neighbour = np.empty(2 * m, dtype=np.int64)
    via = np.empty(2 * m, dtype=np.int64)
    for e in range(m):
        a = heads[e]
        b = tails[e]
        neighbour[fill[a]] = b
        via[fill[a]] = e
        fill[a] += 1
        neighbour[fill[b]] = a
        via[fill[b]] = e
        fill[b] += 1
    for v in range(n):  # insertion sort by neighbour
        for x in range(start[v] + 1, start[v + 1]):
            w = neighbour[x]
            j = via[x]
            y = x - 1
            while y >= start[v] and neighbour[y] > w:
                neighbour[y + 1] = neighbour[y]
                via[y + 1] = via[y]
                y -= 1
            neighbour[y + 1] = w
            via[y + 1] = j
    root = 0
    for v in range(n):
        if degree[v] < degree[root]:
            root = v
    # depth-first walk: tree edges, ring closures, and the edges on a cycle (low points)
    seen = np.zeros(n, dtype=np.bool_)
    used = np.zeros(m, dtype=np.bool_)
    found = np.zeros(n, dtype=np.int64)
    low = np.zeros(n, dtype=np.int64)
    pointer = start[:n].copy()
    parent = np.full(n, -1, dtype=np.int64)
    parent_edge = np.full(n, -1, dtype=np.int64)
    cyclic = np.zeros(m, dtype=np.bool_)
    closure_count = np.zeros(n, dtype=np.int64)
    closure_edges = np.empty((n, max(m, 1)), dtype=np.int64)
    discovered = np.empty(n, dtype=np.int64)
    stack = np.empty(n, dtype=np.int64)
    depth = 0
    stack[0] = root
    seen[root] = True
    discovered[0] = root
    number = 1
    while depth >= 0:
        v = stack[depth]
        if pointer[v] < start[v + 1]:
            x = pointer[v]
            pointer[v] += 1
            w = neighbour[x]
            j = via[x]
            if used[j]:
                continue
            used[j] = True
            if seen[w]:
                closure_edges[v, closure_count[v]] = j
                closure_count[v] += 1
                closure_edges[w, closure_count[w]] = j
                closure_count[w] += 1
                cyclic[j] = True
                if found[w] < low[v]:
                    low[v] = found[w]
            else:
                seen[w] = True
                found[w] = number
                low[w] = number
                discovered[number] = w
                number += 1
                parent[w] = v
                parent_edge[w] = j
                depth += 1
                stack[depth] = w
        else:
            depth -= 1
            if depth >= 0:
                u = stack[depth]
                if low[v] <= found[u]:
                    cyclic[parent_edge[v]] = True
                if low[v] < low[u]:
                    low[u] = low[v]
    # subtree sizes; each vertex's tree children by (size, vertex)
    size = np.ones(n, dtype=np.int64)
    for k in range(n - 1, 0, -1):
        v = discovered[k]
        size[parent[v]] += size[v]
    child_count = np.zeros(n, dtype=np.int64)
    kids = np.empty((n, n), dtype=np.int64)
    for k in range(1, n):
        v = discovered[k]
        u = parent[v]
        y = child_count[u]
        while y > 0:
            other = kids[u, y - 1]
            if size[other] < size[v] or (size[other] == size[v] and other < v):
                break
            kids[u, y] = other
            y -= 1
        kids[u, y] = v
        child_count[u] += 1
    # preorder positions of the walk with sorted children
    position = np.empty(n, dtype=np.int64)
    walk_stack = np.empty(n, dtype=np.int64)
    top = 0
    walk_stack[0] = root
    k = 0
    while top >= 0:
        v = walk_stack[top]
        top -= 1
        position[v] = k
        k += 1
        for y in range(child_count[v] - 1, -1, -1):
            top += 1
            walk_stack[top] = kids[v, y]
    # each atom's ring closures by the position of their other end
    for v in range(n):
        for x in range(1, closure_count[v]):
            j = closure_edges[v, x]
            other = heads[j] if tails[j] == v else tails[j]
            key = position[other]
            y = x - 1
            while y >= 0:
                jj = closure_edges[v, y]
                o2 = heads[jj] if tails[jj] == v else tails[jj]
                if position[o2] <= key:
                    break
                closure_edges[v, y + 1] = jj
                y -= 1
            closure_edges[v, y + 1] = j
    # the program: atoms, ring labels (lowest free digit; digits freed at an atom are reused
    # only after it), branches in parentheses but the last
    program = np.empty(4 * n + 10 * m + 8, dtype=np.int64)
    length = 0
    digit_of = np.zeros(m, dtype=np.int64)  # 0: not open
    free_digit = np.zeros(2 * m + 2, dtype=np.bool_)
    highest = 0
    closed = np.empty(max(m, 1), dtype=np.int64)
    next_child = np.zeros(n, dtype=np.int64)
    depth = 0
    stack[0] = root
    entering = True
    while depth >= 0:
        v = stack[depth]
        if entering:
            program[length] = v
            length += 1
            n_closed = 0
            for x in range(closure_count[v]):
                j = closure_edges[v, x]
                if digit_of[j] > 0:
                    d = digit_of[j]
                    digit_of[j] = 0
                    length = _digits(d, program, length)
                    closed[n_closed] = d
                    n_closed += 1
                else:
                    d = 0
                    for f in range(1, highest + 1):
                        if free_digit[f]:
                            d = f
                            break
                    if d > 0:
                        free_digit[d] = False
                    else:
                        highest += 1
                        d = highest
                    digit_of[j] = d
                    program[length] = n + j
                    length += 1
                    length = _digits(d, program, length)
            for x in range(n_closed):
                free_digit[closed[x]] = True
        c = next_child[v]
        if c > 0 and c < child_count[v]:
            program[length] = -41  # ) after a branch that is not the last
            length += 1
        if c == child_count[v]:
            depth -= 1
            entering = False
            continue
        w = kids[v, c]
        next_child[v] = c + 1
        if c < child_count[v] - 1:
            program[length] = -40  # (
            length += 1
        program[length] = n + parent_edge[w]
        length += 1
        depth += 1
        stack[depth] = w
        entering = True
    count = 0
    for j in range(m):
        if cyclic[j]:
            count += 1
    cycle = np.empty(count, dtype=np.int64)
    k = 0
    for j in range(m):
        if cyclic[j]:
            cycle[k] = j
            k += 1
    return program[:length], cycle


@numba.njit(cache=True, nogil=True)
def _share(v, heads, tails, on_cycle, alive, orders, element, used, degree):
    """:func:`.aromatic.share` (-1 for None), ``alive`` marking the edges of the cycle."""
    z = element[v]
    extra = used[v] - degree[v]
    if z == 6:
        for e in range(heads.shape[0]):
            if heads[e] != v and tails[e] != v:
                continue
            if orders[e] == 3:
                return 1 if alive[e] else -1
            if orders[e] == 2 and extra == 1:
                if alive[e]:
                    return 1
                if on_cycle[e]:
                    return -1
                u = tails[e] if heads[e] == v else heads[e]
                if element[u] == 7 or element[u] == 8:
                    return 0
                if element[u] == 6:
                    return 1
                return -1
        return -1
    if z == 7:
        if extra == 0:
            return 2
        if extra == 1 and degree[v] == 2:
            return 1
        return -1
    if z == 8:
        if extra == 0 and degree[v] == 2:
            return 2
        return -1
    return -1


@numba.njit(cache=True, nogil=True)
def ring_may_be_aromatic(n, heads, tails, on_cycle, orders, element, used, degree):
    """:func:`.aromatic.ring_may_be_aromatic` (``element``: atomic numbers of C, N, O, else 0;
    ``used``: bond orders per atom; ``degree``: neighbours per atom)."""
    m = heads.shape[0]
    candidate = np.ones(n, dtype=np.bool_)
    for v in range(n):
        if element[v] == 6 and used[v] != degree[v] + 1:
            candidate[v] = False  # saturated, or two double bonds
    for e in range(m):
        if orders[e] == 3:
            candidate[heads[e]] = True
            candidate[tails[e]] = True
    alive = np.zeros(m, dtype=np.bool_)
    core_degree = np.zeros(n, dtype=np.int64)
    for e in range(m):
        if on_cycle[e] and candidate[heads[e]] and candidate[tails[e]]:
            alive[e] = True
            core_degree[heads[e]] += 1
            core_degree[tails[e]] += 1
    changed = True
    while changed:  # strip to the 2-core
        changed = False
        for e in range(m):
            if alive[e] and (core_degree[heads[e]] == 1 or core_degree[tails[e]] == 1):
                alive[e] = False
                core_degree[heads[e]] -= 1
                core_degree[tails[e]] -= 1
                changed = True
    done = np.zeros(n, dtype=np.bool_)
    stack = np.empty(n, dtype=np.int64)
    for s in range(n):
        if core_degree[s] == 0 or done[s]:
            continue
        done[s] = True
        stack[0] = s
        top = 0
        total = 0
        while top >= 0:
            v = stack[top]
            top -= 1
            if core_degree[v] != 2:
                return True  # fused or bridged rings: RDKit decides
            x = _share(v, heads, tails, on_cycle, alive, orders, element, used, degree)
            if x < 0:
                return True
            total += x
            for e in range(m):
                if alive[e] and (heads[e] == v or tails[e] == v):
                    u = tails[e] if heads[e] == v else heads[e]
                    if not done[u]:
                        done[u] = True
                        top += 1
                        stack[top] = u
        if total % 4 == 2:
            return True
    return False


@numba.njit(cache=True, nogil=True)
def _next_record(code, k):
    """Where the record after the one at ``k`` starts (records as in :func:`_labels_possible`)."""
    return k + 3 if code[k] < 2 else k + 2 + code[k + 1]


@numba.njit(cache=True, nogil=True)
def _labels_possible(upto, current, number, c_begin, c_end, cond_start, way_start, code):
    """Whether every condition ``c_begin:c_end`` keeps a way whose element records on the
    vertices below ``upto`` hold for the labels ``current`` (``number``: atomic number per
    label). Records (in ``code``, way ``w`` at ``way_start[w]:way_start[w + 1]``): ``0 v z``
    vertex v is element z; ``1 e o`` edge e has order o; ``2 k e1 .. ek`` one of these edges is
    multiple."""
    for c in range(c_begin, c_end):
        found = False
        for w in range(cond_start[c], cond_start[c + 1]):
            ok = True
            k = way_start[w]
            end = way_start[w + 1]
            while k < end:
                if code[k] == 0 and code[k + 1] < upto and number[current[code[k + 1]]] != code[k + 2]:
                    ok = False
                    break
                k = _next_record(code, k)
            if ok:
                found = True
                break
        if not found:
            return False
    return True


@numba.njit(cache=True, nogil=True)
def _orders_possible(placed, orders, alive, c_begin, c_end, cond_start, way_start, code):
    """Whether every condition ``c_begin:c_end`` keeps a way, among those ``alive`` (their
    element records hold), whose order records on the edges below ``placed`` hold (records as
    in :func:`_labels_possible`; a multiple record is decided once all its edges are placed)."""
    for c in range(c_begin, c_end):
        found = False
        for w in range(cond_start[c], cond_start[c + 1]):
            if not alive[w]:
                continue
            ok = True
            k = way_start[w]
            end = way_start[w + 1]
            while k < end:
                kind = code[k]
                if kind == 1:
                    e = code[k + 1]
                    if e < placed and orders[e] != code[k + 2]:
                        ok = False
                        break
                elif kind == 2:
                    last = -1
                    multiple = False
                    for t in range(k + 2, k + 2 + code[k + 1]):
                        e = code[t]
                        if e > last:
                            last = e
                        if orders[e] > 1:
                            multiple = True
                    if last < placed and not multiple:
                        ok = False
                        break
                k = _next_record(code, k)
            if ok:
                found = True
                break
        if not found:
            return False
    return True


@numba.njit(cache=True, nogil=True)
def _fill_hydrogens(n, heads, tails, orders, valence, current, used, hydrogens):
    """Each atom's bond-order sum (``used``) and hydrogens (its valence state less that sum)."""
    for v in range(n):
        used[v] = 0
    for e in range(heads.shape[0]):
        used[heads[e]] += orders[e]
        used[tails[e]] += orders[e]
    for v in range(n):
        hydrogens[v] = valence[current[v]] - used[v]


@numba.njit(cache=True, nogil=True)
def _counts_hold(n, heads, tails, current, hydrogens, carbon, number, degree, spec):
    """Whether the structure meets the declared NMR counts ``spec`` (see
    :func:`.kernel.count_spec`): carbon types, H on O and N, carbon kinds; as
    :meth:`.counts.CountTest.structure_ok`."""
    types = np.zeros(4, dtype=np.int64)
    exchangeable = 0
    for v in range(n):
        label = current[v]
        h = hydrogens[v]
        if carbon[label]:
            if h > 3:
                return False  # a carbon with four H has no DEPT type (never in a skeleton of two atoms or more)
            types[3 - h] += 1
        elif number[label] == 7 or number[label] == 8:
            exchangeable += h
    if spec[0]:
        for t in range(4):
            if types[t] != spec[1 + t]:
                return False
    if spec[5] and not (spec[6] <= exchangeable <= spec[7]):
        return False
    if not spec[8]:
        return True
    # carbon kinds, in the order of CARBON_KINDS: carbonyl, sp2, sp, heteroatom_sp3, alkyl
    kinds = np.zeros(5, dtype=np.int64)
    carbonyl = np.zeros(n, dtype=np.bool_)
    hetero = np.zeros(n, dtype=np.bool_)
    for e in range(heads.shape[0]):
        for side in range(2):
            a = heads[e] if side == 0 else tails[e]
            b = tails[e] if side == 0 else heads[e]
            z = number[current[b]]
            if z == 8 and hydrogens[b] == 0 and degree[b] == 1:
                carbonyl[a] = True
            if z == 7 or z == 8:
                hetero[a] = True
    for v in range(n):
        if not carbon[current[v]]:
            continue
        unsaturation = 4 - degree[v] - hydrogens[v]
        if carbonyl[v]:
            kinds[0] += 1
        elif unsaturation >= 2:
            kinds[2] += 1
        elif unsaturation == 1:
            kinds[1] += 1
        elif hetero[v]:
            kinds[3] += 1
        else:
            kinds[4] += 1
    for k in range(5):  # noqa: SIM110 - numba compiles plain loops, not all() of a generator
        if not (spec[9 + k] <= kinds[k] <= spec[14 + k]):
            return False
    return True


@numba.njit(cache=True, nogil=True)
def _clause_holds(code, begin, end, current, number, orders):
    """Whether every record ``code[begin:end]`` holds: ``0 v z`` vertex v is element z, ``1 e
    o`` edge e has order o."""
    for k in range(begin, end, 3):
        if code[k] == 0:
            if number[current[code[k + 1]]] != code[k + 2]:
                return False
        elif orders[code[k + 1]] != code[k + 2]:
            return False
    return True


@numba.njit(cache=True, nogil=True)
def label_and_write(
    n,
    heads,
    tails,
    group,
    valence,
    carbon,
    element,
    per_label,
    extra_total,
    max_extra,
    token_start,
    token_end,
    pool,
    check_aromatic,
    sharp,
    number,
    cond_start,
    way_start,
    code,
    c_begin,
    c_end,
    spec,
    f_start,
    f_rule,
    f_code,
    f_begin,
    f_end,
):
    """See :func:`.kernel.label_and_write`; returns the arrays of :class:`.kernel.Labelled`
    (the text as uint8). Conditions ``c_begin:c_end`` (records as in :func:`_labels_possible`)
    prune the labels as each vertex is labelled and the orders as each edge is placed; a
    structure is kept only when every condition has a way whose records all hold, and when it
    meets the declared counts ``spec`` (:func:`_counts_hold`; ``spec[0]``, ``spec[5]`` and
    ``spec[8]`` all 0: none). Clauses ``f_begin:f_end`` (records ``f_code[f_start[c]:f_start[c +
    1]]``, kinds 0 and 1 only) read plausibility rules (:mod:`.readings`): a structure that
    cannot be aromatic and meets one breaks rule ``f_rule[c]``; its text is left empty and that
    index returned for it (-1 for every other structure)."""
    m = heads.shape[0]
    n_labels = valence.shape[0]
    program, cycle = template(n, heads, tails)
    on_cycle = np.zeros(m, dtype=np.bool_)
    for k in range(cycle.shape[0]):
        on_cycle[cycle[k]] = True
    element_at = np.empty(n, dtype=np.int64)
    vertex_inverse, edge_inverse = inverses(n, heads, tails, group)
    n_perms = vertex_inverse.shape[0]
    degree = np.zeros(n, dtype=np.int64)
    for e in range(m):
        degree[heads[e]] += 1
        degree[tails[e]] += 1
    # outputs, grown as needed
    size = 64
    colourings = np.empty((size, n), dtype=np.int64)
    orders_out = np.empty((size, m), dtype=np.int64)
    hydrogens_out = np.empty((size, n), dtype=np.int64)
    aromatic = np.zeros(size, dtype=np.bool_)
    ends = np.empty(size, dtype=np.int64)
    rejected = np.empty(size, dtype=np.int64)
    text = np.empty(64 * size, dtype=np.uint8)
    count = 0
    written = 0
    impossible = False
    for c in range(c_begin, c_end):
        if cond_start[c + 1] == cond_start[c]:
            impossible = True  # a condition with no way at all: no structure meets it
    if impossible or extra_total < 0 or extra_total > max_extra * m:
        return (colourings[:0], orders_out[:0], hydrogens_out[:0], text[:0], ends[:0], aromatic[:0], rejected[:0])
    # plausibility clauses apply where the aromaticity flag is exact
    reading = check_aromatic and sharp and f_end > f_begin
    # colouring search state
    current = np.zeros(n, dtype=np.int64)
    choice = np.full(n + 1, -1, dtype=np.int64)
    remaining = per_label.copy()
    stabilizer = np.empty(max(n_perms, 1), dtype=np.int64)
    capacity = np.empty(n, dtype=np.int64)
    # bond-order search state
    free = np.empty(n, dtype=np.int64)
    orders = np.ones(m, dtype=np.int64)
    tried = np.zeros(m + 1, dtype=np.int64)
    used = np.empty(n, dtype=np.int64)
    hydrogens = np.empty(n, dtype=np.int64)
    parent = np.empty(n, dtype=np.int64)
    # conditions: the vertices after whose label they are tested, and per way whether its
    # element records hold on the current labelling
    conditional = c_end > c_begin
    counted = spec[0] != 0 or spec[5] != 0 or spec[8] != 0
    watch = np.zeros(n, dtype=np.bool_)
    alive = np.zeros(max(way_start.shape[0] - 1, 1), dtype=np.bool_)
    if conditional:
        for w in range(cond_start[c_begin], cond_start[c_end]):
            k = way_start[w]
            while k < way_start[w + 1]:
                if code[k] == 0:
                    watch[code[k + 1]] = True
                k = _next_record(code, k)
    i = 0
    while i >= 0:
        if i < n:
            # next label at vertex i (in increasing order) that is left and covers its degree
            c = choice[i]
            if c >= 0:
                remaining[c] += 1
            c += 1
            while c < n_labels and not (remaining[c] > 0 and valence[c] >= degree[i]):
                c += 1
            if c == n_labels:
                choice[i] = -1
                i -= 1
                continue
            remaining[c] -= 1
            choice[i] = c
            current[i] = c
            if (
                conditional
                and watch[i]
                and not _labels_possible(i + 1, current, number, c_begin, c_end, cond_start, way_start, code)
            ):
                continue  # the next label at vertex i
            i += 1
            continue
        # a full colouring: vertex i == n; afterwards back to the last vertex
        i = n - 1
        total = 0
        for v in range(n):
            capacity[v] = valence[current[v]] - degree[v]
            total += capacity[v]
        if total < 2 * extra_total:
            continue
        canonical = True
        n_stab = 0
        for p in range(n_perms):
            state = 0  # 0: equal so far, -1: image smaller, 1: image larger
            for v in range(n):
                x = current[vertex_inverse[p, v]]
                if x != current[v]:
                    state = -1 if x < current[v] else 1
                    break
            if state < 0:
                canonical = False
                break
            if state == 0:
                stabilizer[n_stab] = p
                n_stab += 1
        if not canonical:
            continue
        if conditional:
            # every condition has a way whose element records hold (the labels were pruned on
            # them); the order records are read on these
            for w in range(cond_start[c_begin], cond_start[c_end]):
                alive[w] = True
                k = way_start[w]
                while k < way_start[w + 1]:
                    if code[k] == 0 and number[current[code[k + 1]]] != code[k + 2]:
                        alive[w] = False
                        break
                    k = _next_record(code, k)
        # bond orders: edge j tries 1 + top, ..., 1; a structure as soon as no order is left.
        # Entering edge j sets tried[j] one above its first order; every placement, the first
        # and each lower one, is made by the step back below
        for v in range(n):
            free[v] = capacity[v]
        j = 0
        left = extra_total
        while True:
            if left == 0:
                # every edge is placed (those from j on stay single)
                keep = not conditional or _orders_possible(
                    m, orders, alive, c_begin, c_end, cond_start, way_start, code
                )
                if keep and counted:
                    _fill_hydrogens(n, heads, tails, orders, valence, current, used, hydrogens)
                    keep = _counts_hold(n, heads, tails, current, hydrogens, carbon, number, degree, spec)
                for s in range(n_stab if keep else 0):
                    p = stabilizer[s]
                    for e in range(m):
                        x = orders[edge_inverse[p, e]]
                        if x != orders[e]:
                            if x < orders[e]:
                                keep = False
                            break
                    if not keep:
                        break
                if keep:
                    if count == colourings.shape[0]:
                        grown = 2 * count
                        colourings2 = np.empty((grown, n), dtype=np.int64)
                        colourings2[:count] = colourings
                        colourings = colourings2
                        orders2 = np.empty((grown, m), dtype=np.int64)
                        orders2[:count] = orders_out
                        orders_out = orders2
                        hydrogens2 = np.empty((grown, n), dtype=np.int64)
                        hydrogens2[:count] = hydrogens_out
                        hydrogens_out = hydrogens2
                        aromatic2 = np.zeros(grown, dtype=np.bool_)
                        aromatic2[:count] = aromatic
                        aromatic = aromatic2
                        ends2 = np.empty(grown, dtype=np.int64)
                        ends2[:count] = ends
                        ends = ends2
                        rejected2 = np.empty(grown, dtype=np.int64)
                        rejected2[:count] = rejected
                        rejected = rejected2
                    if not counted:  # with declared counts they were filled for the test
                        _fill_hydrogens(n, heads, tails, orders, valence, current, used, hydrogens)
                    for v in range(n):
                        colourings[count, v] = current[v]
                        hydrogens_out[count, v] = hydrogens[v]
                    for e in range(m):
                        orders_out[count, e] = orders[e]
                    flag = False
                    if check_aromatic and cycle.shape[0] > 0:
                        for v in range(n):
                            parent[v] = v
                        for k in range(cycle.shape[0]):
                            e = cycle[k]
                            a = heads[e]
                            b = tails[e]
                            if carbon[current[a]] and used[a] == degree[a]:
                                continue
                            if carbon[current[b]] and used[b] == degree[b]:
                                continue
                            while parent[a] != a:
                                parent[a] = parent[parent[a]]
                                a = parent[a]
                            while parent[b] != b:
                                parent[b] = parent[parent[b]]
                                b = parent[b]
                            if a == b:
                                flag = True
                                break
                            parent[a] = b
                        if flag and sharp:
                            for v in range(n):
                                element_at[v] = element[current[v]]
                            flag = ring_may_be_aromatic(n, heads, tails, on_cycle, orders, element_at, used, degree)
                    aromatic[count] = flag
                    broken = -1
                    if reading and not flag:
                        for c in range(f_begin, f_end):
                            if _clause_holds(f_code, f_start[c], f_start[c + 1], current, number, orders):
                                broken = f_rule[c]
                                break
                    rejected[count] = broken
                    # the SMILES: the template's program, atoms and bonds filled in (none for a
                    # structure that breaks a read rule)
                    need = written + 8 * (n + m) + program.shape[0]
                    if need > text.shape[0]:
                        text2 = np.empty(max(2 * text.shape[0], need), dtype=np.uint8)
                        text2[:written] = text[:written]
                        text = text2
                    for k in range(program.shape[0] if broken < 0 else 0):
                        op = program[k]
                        if op < 0:
                            text[written] = -op
                            written += 1
                        elif op < n:
                            label = current[op]
                            h = hydrogens[op]
                            for t in range(token_start[label, h], token_end[label, h]):
                                text[written] = pool[t]
                                written += 1
                        else:
                            o = orders[op - n]
                            if o == 2:
                                text[written] = 61  # =
                                written += 1
                            elif o == 3:
                                text[written] = 35  # #
                                written += 1
                    text[written] = 10  # a newline after each
                    written += 1
                    ends[count] = written
                    count += 1
            elif conditional and not _orders_possible(j, orders, alive, c_begin, c_end, cond_start, way_start, code):
                pass  # some condition has no way left on the edges placed: back
            elif j < m and max_extra * (m - j) >= left:
                tried[j] = min(max_extra, free[heads[j]], free[tails[j]], left) + 1
                j += 1
            # back: the deepest edge with a lower order left to try gets it
            moved = False
            while j > 0:
                j -= 1
                a = heads[j]
                b = tails[j]
                x = orders[j] - 1
                free[a] += x
                free[b] += x
                left += x
                orders[j] = 1
                x = tried[j] - 1
                if x >= 0:
                    tried[j] = x
                    free[a] -= x
                    free[b] -= x
                    orders[j] = 1 + x
                    left -= x
                    j += 1
                    moved = True
                    break
            if not moved:
                break
    return (
        colourings[:count],
        orders_out[:count],
        hydrogens_out[:count],
        text[:written],
        ends[:count],
        aromatic[:count],
        rejected[:count],
    )


@numba.njit(cache=True, nogil=True)
def closure(n, generators):
    """The group the permutations ``generators`` (rows) generate, the identity first, each
    composed as :func:`.skeletons.automorphisms` composes them (``g[p[i]]``)."""
    capacity = 64
    group = np.empty((capacity, n), dtype=np.int64)
    for v in range(n):
        group[0, v] = v
    size = 1
    head = 0
    image = np.empty(n, dtype=np.int64)
    while head < size:
        for g in range(generators.shape[0]):
            for v in range(n):
                image[v] = generators[g, group[head, v]]
            known = False
            for k in range(size):
                same = True
                for v in range(n):
                    if group[k, v] != image[v]:
                        same = False
                        break
                if same:
                    known = True
                    break
            if known:
                continue
            if size == capacity:
                capacity *= 2
                grown = np.empty((capacity, n), dtype=np.int64)
                grown[:size] = group[:size]
                group = grown
            group[size] = image
            size += 1
        head += 1
    return group[:size]


@numba.njit(cache=True, nogil=True)
def label_and_write_many(
    n,
    edge_starts,
    heads,
    tails,
    group_starts,
    complete,
    permutations,
    valence,
    carbon,
    element,
    per_label,
    bond_sum,
    max_extra,
    token_start,
    token_end,
    pool,
    check_aromatic,
    sharp,
    number,
    cond_start,
    way_start,
    code,
    skeleton_conditions,
    spec,
    f_start,
    f_rule,
    f_code,
    skeleton_clauses,
):
    """:func:`label_and_write` on several skeletons of ``n`` vertices in one call: skeleton ``b``
    has the edges ``edge_starts[b]:edge_starts[b + 1]``, the permutation rows
    ``group_starts[b]:group_starts[b + 1]``, its whole automorphism group where ``complete[b]``,
    else generators of it (:func:`closure`), and the conditions
    ``skeleton_conditions[b]:skeleton_conditions[b + 1]`` and the plausibility clauses
    ``skeleton_clauses[b]:skeleton_clauses[b + 1]``; ``spec``: the declared counts. Returns the
    SMILES text of them all, the aromatic flags, the read rule each breaks (-1: none), how
    many structures each skeleton has, and every structure's bond orders (one per edge of its
    skeleton, in edge order), one structure after another."""
    skeletons = edge_starts.shape[0] - 1
    counts = np.zeros(skeletons, dtype=np.int64)
    texts = []
    flags = []
    broken = []
    orders = []
    total_text = 0
    total = 0
    total_orders = 0
    for b in range(skeletons):
        h = heads[edge_starts[b] : edge_starts[b + 1]].copy()
        t = tails[edge_starts[b] : edge_starts[b + 1]].copy()
        rows = permutations[group_starts[b] : group_starts[b + 1]].copy()
        group = rows if complete[b] else closure(n, rows)
        found = label_and_write(
            n,
            h,
            t,
            group,
            valence,
            carbon,
            element,
            per_label,
            bond_sum - h.shape[0],
            max_extra,
            token_start,
            token_end,
            pool,
            check_aromatic,
            sharp,
            number,
            cond_start,
            way_start,
            code,
            skeleton_conditions[b],
            skeleton_conditions[b + 1],
            spec,
            f_start,
            f_rule,
            f_code,
            skeleton_clauses[b],
            skeleton_clauses[b + 1],
        )
        text = found[3]
        aromatic = found[5]
        counts[b] = aromatic.shape[0]
        texts.append(text)
        flags.append(aromatic)
        broken.append(found[6])
        orders.append(found[1])
        total_text += text.shape[0]
        total += aromatic.shape[0]
        total_orders += found[1].shape[0] * found[1].shape[1]
    all_text = np.empty(total_text, dtype=np.uint8)
    all_flags = np.empty(total, dtype=np.bool_)
    all_broken = np.empty(total, dtype=np.int64)
    all_orders = np.empty(total_orders, dtype=np.int64)
    at = 0
    k = 0
    o = 0
    for b in range(skeletons):
        all_text[at : at + texts[b].shape[0]] = texts[b]
        at += texts[b].shape[0]
        all_flags[k : k + flags[b].shape[0]] = flags[b]
        all_broken[k : k + flags[b].shape[0]] = broken[b]
        k += flags[b].shape[0]
        size = orders[b].shape[0] * orders[b].shape[1]
        all_orders[o : o + size] = orders[b].reshape(size)
        o += size
    return all_text, all_flags, all_broken, counts, all_orders
