"""Static hazards of two-level covers, found algebraically and removed with consensus terms.

A cover (a list of cubes over ``n`` ordered inputs, strings of ``"01-"`` as in
:mod:`mapper.logic.function`) built as AND gates into an OR gate has a
*static-1 logic hazard* for a change of input ``x`` between two input states
``A`` and ``B`` (differing in ``x`` only, both in the ON-set) exactly when no
single cube contains both states: while ``x`` changes, the cube holding the
output at 1 in ``A`` can let go before the one holding it in ``B`` takes
over, and the output drops for a moment.  Such pairs of states lie in the
*consensus* of two cubes that disagree in ``x`` alone; adding the consensus
term covers them with one cube and removes the hazard (D. A. Huffman, "The
design and use of hazard-free switching networks", JACM 4(1), 1957).

A cover given by its OFF-set (BLIF phase 0) is built as an AND-OR-INVERT;
its static-1 hazards are static-0 hazards of the node.  Two-level covers
without a cube holding both ``x`` and ``x'`` have no static-0 hazards (for
phase 1) and no dynamic hazards for single-input changes, so these are the
only hazards the algebra reports.

The reference method is E. B. Eichelberger's three-valued simulation
("Hazard detection in combinational and sequential switching circuits",
IBM J. Res. Dev. 9(2), 1965): for a change ``A -> B`` set the changing
inputs to the unknown value ``X`` and evaluate; when ``f(A) = f(B)`` but the
result is ``X``, the change can glitch.  :func:`ternary_hazard` implements it
for covers; the tests hold the consensus method to it.

:func:`add_consensus` rewrites a design so every two-level cover in it is
free of these hazards: each cover that needs it gets its consensus terms and
is rebuilt as trees of 2-input AND nodes (one per product term) under a tree
of 2-input OR nodes, and the names of all those nets are returned so the
mapper keeps them as signals of their own (``flow.fit(..., keep=...)``) --
otherwise it would find the added terms redundant and drop them.

Examples
--------
The textbook hazard ``f = a·b' + b·c`` (inputs a, b, c = characters 0, 1, 2):

>>> hz = cover_hazards(["10-", "-11"], 3)
>>> [(h.variable, h.consensus) for h in hz]
[(1, '1-1')]
>>> hazard_free_cover(["10-", "-11"], 3)
(['10-', '-11', '1-1'], ['1-1'])
>>> ternary_hazard(["10-", "-11"], 1, (1, 0, 1), (1, 1, 1))
True
>>> ternary_hazard(["10-", "-11", "1-1"], 1, (1, 0, 1), (1, 1, 1))
False
"""
from __future__ import annotations

import logging
from dataclasses import dataclass

from ..netlist import Logic, Netlist, Storage
from .function import MAX_TABLE_INPUTS, Function, isop, table_of_cover, var_mask

__all__ = [
    "CoverHazard",
    "consensus",
    "cover_hazards",
    "hazard_free_cover",
    "ternary_value",
    "ternary_hazard",
    "hazard_transitions",
    "design_hazards",
    "add_consensus",
    "collapse_hazardous_cones",
    "control_cones",
    "cone_support",
    "MAX_CONSENSUS_CUBES",
    "COLLAPSE_INPUTS",
]

log = logging.getLogger(__name__)

#: a cover is not grown past this many cubes by :func:`hazard_free_cover`
MAX_CONSENSUS_CUBES = 256
#: ``--hazard-free`` collapses glitching cones of at most this many inputs into two-level covers
COLLAPSE_INPUTS = 8


@dataclass(frozen=True)
class CoverHazard:
    """One static hazard of a two-level cover.

    ``variable`` is the index of the input whose change glitches;
    ``terms`` the two cubes racing (the one holding ``variable`` = 1 first);
    ``consensus`` their consensus term, which removes the hazard when added;
    ``region`` cubes (independent of ``variable``) of the input states where
    the change glitches -- the part of ``consensus`` no single cube of the
    cover holds.  ``exact`` is False when the cover is too wide for tables
    and ``region`` is just ``[consensus]``.
    """

    variable: int
    terms: tuple
    consensus: str
    region: tuple
    exact: bool = True


def consensus(p: str, q: str):
    """``(variable, cube)``: the consensus of two cubes opposed in exactly one input, else ``None``.

    >>> consensus("10-", "-11")
    (1, '1-1')
    >>> consensus("10-", "01-") is None
    True
    """
    var = None
    out = []
    for j, (a, b) in enumerate(zip(p, q)):
        if a != "-" and b != "-" and a != b:
            if var is not None:
                return None
            var = j
            out.append("-")
        else:
            out.append(a if a != "-" else b)
    if var is None:
        return None
    return var, "".join(out)


def _free_of(cubes, j):
    return [c for c in cubes if c[j] == "-"]


def _contains(big: str, small: str) -> bool:
    return all(b == "-" or b == s for b, s in zip(big, small))


def _cofactor(cubes, cube):
    """Cubes restricted to the subspace ``cube`` (positions fixed by ``cube`` become ``-``)."""
    out = []
    for c in cubes:
        ok = True
        r = []
        for a, b in zip(c, cube):
            if b == "-":
                r.append(a)
            elif a == "-" or a == b:
                r.append("-")
            else:
                ok = False
                break
        if ok:
            out.append("".join(r))
    return out


def _tautology(cubes, n) -> bool:
    """Whether the cubes cover the whole space; iterative Shannon splitting on the most used input."""
    stack = [list(cubes)]
    while stack:
        cs = stack.pop()
        if not cs:
            return False
        if any(set(c) == {"-"} for c in cs):
            continue
        counts = [0] * n
        for c in cs:
            for j, ch in enumerate(c):
                if ch != "-":
                    counts[j] += 1
        j = max(range(n), key=lambda k: counts[k])
        for v in "01":
            cube = "-" * j + v + "-" * (n - j - 1)
            stack.append(_cofactor(cs, cube))
    return True


def _covered(cube: str, cubes, n) -> bool:
    """Whether ``cube`` lies inside the union of ``cubes``."""
    if any(_contains(c, cube) for c in cubes):
        return True
    return _tautology(_cofactor(cubes, cube), n)


def cover_hazards(cubes, n: int) -> list:
    """Static-1 hazards of the AND-OR built from ``cubes`` (Huffman's consensus check).

    Every pair of cubes opposed in exactly one input ``x`` is checked: the
    states of their consensus that no cube free of ``x`` holds are states
    where a change of ``x`` glitches.  Returns one :class:`CoverHazard` per
    such pair (none when the cover is hazard-free).
    """
    cubes = list(dict.fromkeys(cubes))
    out = []
    exact = n <= MAX_TABLE_INPUTS
    free_tab = {}
    for i, p in enumerate(cubes):
        for q in cubes[i + 1:]:
            cq = consensus(p, q)
            if cq is None:
                continue
            j, c = cq
            free = _free_of(cubes, j)
            if exact:
                if j not in free_tab:
                    free_tab[j] = table_of_cover(n, free)
                region = table_of_cover(n, [c]) & ~free_tab[j]
                if region == 0:
                    continue
                reg, _ = isop(region, region, n)
                region_cubes = tuple(sorted(reg))
            else:
                if _covered(c, free, n):
                    continue
                region_cubes = (c,)
            first, second = (p, q) if p[j] == "1" else (q, p)
            out.append(CoverHazard(j, (first, second), c, region_cubes, exact))
    return out


def hazard_free_cover(cubes, n: int, limit: int = MAX_CONSENSUS_CUBES) -> tuple[list, list]:
    """``(cover, added)``: ``cubes`` plus the consensus terms that make it free of static-1 hazards.

    Consensus terms are added until every pair of cubes opposed in one input
    has its consensus covered by cubes free of that input (then every pair of
    adjacent ON-set states shares a cube).  Added terms later held by a
    single other cube are dropped again.  Raises ``ValueError`` when the cover
    would grow past ``limit`` cubes.
    """
    cover = list(dict.fromkeys(cubes))
    added: list = []
    changed = True
    while changed:
        changed = False
        i = 0
        while i < len(cover):
            p = cover[i]
            for q in cover[:i]:
                cq = consensus(p, q)
                if cq is None:
                    continue
                j, c = cq
                if _covered(c, _free_of(cover, j), n):
                    continue
                cover.append(c)
                added.append(c)
                changed = True
                if len(cover) > limit:
                    raise ValueError(f"more than {limit} cubes needed to make the cover hazard-free")
            i += 1
    # drop added terms that another cube of the final cover contains
    added_set = set(added)
    dropped: set = set()
    final = []
    for k, c in enumerate(cover):
        if c in added_set and any(m != k and o not in dropped and _contains(o, c) for m, o in enumerate(cover)):
            dropped.add(c)
            continue
        final.append(c)
    return final, [c for c in added if c not in dropped]


def ternary_value(cubes, phase: int, values) -> int | None:
    """Three-valued value of a cover: 0, 1 or ``None`` (unknown) for inputs 0/1/``None``.

    >>> ternary_value(["11"], 1, (1, None)) is None
    True
    >>> ternary_value(["1-", "-1"], 1, (1, None))
    1
    """
    acc: int | None = 0
    for cube in cubes:
        v: int | None = 1
        for ch, x in zip(cube, values):
            if ch == "-":
                continue
            if x is None:
                v = None
            elif (ch == "1") != bool(x):
                v = 0
                break
        if v == 1:
            acc = 1
            break
        if v is None:
            acc = None
    if acc is None:
        return None
    return acc if phase else 1 - acc


def ternary_hazard(cubes, phase: int, a, b) -> bool:
    """Eichelberger's test: can the change ``a -> b`` glitch the two-level cover?

    True when ``f(a) = f(b)`` while the three-valued value, with every
    changing input unknown, is unknown.
    """
    fa = ternary_value(cubes, phase, a)
    fb = ternary_value(cubes, phase, b)
    if fa != fb:
        return False
    mid = tuple(x if x == y else None for x, y in zip(a, b))
    return ternary_value(cubes, phase, mid) is None


def hazard_transitions(cubes, n: int) -> set:
    """Single-input changes that glitch, from :func:`cover_hazards`: a set of ``(state, variable)``.

    ``state`` is the input state (an int, bit ``j`` = input ``j``) with the
    changing variable at 0; the change is ``state <-> state | 1 << variable``.
    """
    out = set()
    for h in cover_hazards(cubes, n):
        for cube in h.region:
            free = [j for j, ch in enumerate(cube) if ch == "-" and j != h.variable]
            base = sum(1 << j for j, ch in enumerate(cube) if ch == "1")
            for k in range(1 << len(free)):
                s = base
                for t, j in enumerate(free):
                    if (k >> t) & 1:
                        s |= 1 << j
                out.add((s, h.variable))
    return out


def _cube_dict(cube: str, names) -> dict:
    return {names[j]: int(ch) for j, ch in enumerate(cube) if ch != "-"}


def design_hazards(netlist: Netlist) -> list:
    """Static hazards of every two-level cover in a design.

    A node's cover is the one its source gave (BLIF ``.names``) or, for a
    function given as a table, an irredundant sum of products of it.
    Returns one dict per hazard: ``node``, ``kind`` (``"static-1"``, or
    ``"static-0"`` for a cover of the OFF-set), ``input`` (the fan-in net whose
    change glitches), ``when`` (list of ``{fan-in: value}`` cubes of the other
    fan-ins), ``terms`` (the two racing cubes as dicts) and ``fix`` (the
    consensus term as a dict).
    """
    out = []
    for name, node in netlist.nodes.items():
        if not isinstance(node, Logic) or node.func.n < 2:
            continue
        cubes, phase = node.func.cover()
        if len(cubes) < 2:
            continue
        names = node.fanins
        for h in cover_hazards(cubes, node.func.n):
            out.append({
                "node": name,
                "kind": "static-1" if phase else "static-0",
                "input": names[h.variable],
                "when": [_cube_dict(c, names) for c in h.region],
                "terms": [_cube_dict(t, names) for t in h.terms],
                "fix": _cube_dict(h.consensus, names),
                "exact": h.exact,
            })
    return out


def _needs_structure(cubes) -> bool:
    """Whether some pair of cubes is opposed in exactly one input (then the AND-OR structure matters)."""
    for i, p in enumerate(cubes):
        for q in cubes[i + 1:]:
            if consensus(p, q) is not None:
                return True
    return False


def _fresh(base: str, taken) -> str:
    k = 0
    while f"{base}{k}" in taken:
        k += 1
    return f"{base}{k}"


def control_cones(netlist: Netlist) -> tuple[list, set]:
    """``(control nets, logic nodes)``: the clocks and enables of a design's storage, and their logic cones.

    The cones stop at inputs and storage outputs.  These are the nets where
    a glitch stores a wrong value, so netfit builds them free of hazards by
    default (:func:`mapper.flow.fit`).
    """
    controls = list(dict.fromkeys(st.control for st in netlist.nodes.values()
                                  if isinstance(st, Storage) and st.control is not None and st.kind != "as"))
    nodes: set = set()
    stack = list(controls)
    while stack:
        n = stack.pop()
        node = netlist.nodes.get(n)
        if not isinstance(node, Logic) or n in nodes:
            continue
        nodes.add(n)
        stack.extend(node.fanins)
    return [c for c in controls if isinstance(netlist.nodes.get(c), Logic)], nodes


def add_consensus(netlist: Netlist, collapse_inputs: int = 0, collapse_cubes: int = 32, only=None) -> tuple:
    """``(netlist', kept_nets, report)``: the design with hazard-free two-level covers.

    Every logic node whose cover has two cubes opposed in one input gets the
    consensus terms :func:`hazard_free_cover` finds and is rebuilt as a tree
    of 2-input nodes: an AND tree per product term over its literals (one
    inverter node per complemented input; a single plain literal is its
    fan-in net itself) and an OR tree over the terms whose top node (NOR for
    a cover of the OFF-set) carries the node's own name.  ``kept_nets`` lists
    every node of those trees: the mapper must keep them as signals of their
    own.  Associative and De Morgan rewriting keeps a hazard-free sum of
    products hazard-free (S. H. Unger, *Asynchronous Sequential Switching
    Circuits*, Wiley 1969 -- from memory), so any tree-shaped mapping of
    these nodes is safe.  Keeping the nodes narrows the mapper's choices but
    cannot forbid every reconvergent one: a 2-input node whose leaf is
    available only in the other phase can be built as ``x' + x·y`` for
    ``x' + y``; :func:`mapper.flow.fit_hazard_free` therefore checks its
    candidates with the glitch finder.

    With ``collapse_inputs`` > 0, first every output and storage input whose
    logic cone has at most that many inputs and glitches under some delays
    (Eichelberger's three-valued test over the cone, for every single-input
    change) is collapsed into one two-level cover (an irredundant sum of
    products of its truth table), when its hazard-free cover has at most
    ``collapse_cubes`` cubes: hazards made by the design's own multi-level
    structure are removed too.

    The new netlist does the same logic as the old one (consensus terms are
    implied by the cover).  ``report`` has ``nodes`` (one dict per rewritten
    node: ``node``, ``added`` terms as dicts, ``hazards_before``),
    ``terms_added``, ``nodes_split``, ``collapsed`` (one dict per collapsed
    cone: ``node``, ``inputs``, ``cubes``, ``added`` consensus terms) and
    ``skipped`` (nodes too big to fix).

    ``only`` (a set of node names) limits the rewriting to those nodes, and
    the collapsing to those of them that are outputs or storage inputs.
    """
    collapsed = []
    if collapse_inputs > 0:
        roots = None
        if only is not None:
            roots = [x for st in netlist.nodes.values() if isinstance(st, Storage) for x in (st.d, st.control)
                     if x in only] + [o for o in netlist.outputs if o in only]
            roots = list(dict.fromkeys(roots))
        netlist, collapsed = collapse_hazardous_cones(netlist, collapse_inputs, collapse_cubes, roots)
    new = Netlist(netlist.name)
    taken = set(netlist.nodes)
    kept: list = []
    rows = []
    skipped = []
    inputs = set(netlist.inputs)
    for name in netlist.inputs:
        new.add_input(name, netlist.origin.get(name))
    for name, node in netlist.nodes.items():
        where = netlist.origin.get(name)
        if name in inputs:
            continue
        if not isinstance(node, Logic) or node.func.n < 2 or (only is not None and name not in only):
            new.nodes[name] = node
            if where is not None:
                new.origin[name] = where
            continue
        cover_cubes, phase = node.func.cover()
        cubes = list(dict.fromkeys(cover_cubes))
        if len(cubes) < 2 or not _needs_structure(cubes):
            new.nodes[name] = node
            if where is not None:
                new.origin[name] = where
            continue
        n = node.func.n
        before = len(cover_hazards(cubes, n))
        try:
            cover, added = hazard_free_cover(cubes, n)
        except ValueError as exc:
            skipped.append({"node": name, "reason": str(exc)})
            new.nodes[name] = node
            if where is not None:
                new.origin[name] = where
            continue
        def fresh(tag, name=name):
            t = _fresh(f"{name}~{tag}", taken)
            taken.add(t)
            return t

        def tree(leaves, table, top=None, top_table=None, where=where):
            """Balanced tree of 2-input nodes over ``leaves``; every node kept.  Iterative."""
            level = list(leaves)
            while len(level) > (2 if top is not None else 1):
                nxt = []
                for i in range(0, len(level) - 1, 2):
                    t = fresh("g")
                    new.add_logic(t, level[i:i + 2], Function.from_table(2, table), where)
                    kept.append(t)
                    nxt.append(t)
                if len(level) % 2:
                    nxt.append(level[-1])
                level = nxt
            if top is None:
                return level[0]
            if len(level) == 2:
                func = Function.from_table(2, top_table)
            else:  # a single term: the OR is a buffer, the NOR an inverter
                func = Function.from_table(1, 0b10 if top_table == 0b1110 else 0b01)
            new.add_logic(top, level, func, where)
            kept.append(top)
            return top

        inverted: dict = {}
        terms = []
        for cube in cover:
            lits = []
            for j, ch in enumerate(cube):
                if ch == "1":
                    lits.append(node.fanins[j])
                elif ch == "0":
                    if j not in inverted:
                        inverted[j] = fresh("n")
                        new.add_logic(inverted[j], [node.fanins[j]], Function.from_table(1, 0b01), where)
                    lits.append(inverted[j])
            if not lits:  # a cube of all don't-cares: a constant 1 term
                t = fresh("t")
                new.add_constant(t, 1)
                terms.append(t)
                continue
            terms.append(tree(lits, 0b1000))   # AND2 tree of the literals (one literal: the literal)
        # OR (NOR for a cover of the OFF-set) of the terms, under the node's own name
        tree(terms, 0b1110, name, 0b1110 if phase else 0b0001)
        rows.append({"node": name, "added": [_cube_dict(c, node.fanins) for c in added],
                     "hazards_before": before, "terms": len(cover)})
    new.outputs = list(netlist.outputs)
    new.clocks = list(netlist.clocks)
    for o in netlist.outputs:
        if o in netlist.origin and o not in new.origin:
            new.origin[o] = netlist.origin[o]
    new.warnings = list(netlist.warnings)
    new.exdc = netlist.exdc
    report = {
        "nodes": rows,
        "nodes_split": len(rows),
        "terms_added": sum(len(r["added"]) for r in rows) + sum(c["added"] for c in collapsed),
        "hazards_before": sum(r["hazards_before"] for r in rows),
        "collapsed": collapsed,
        "skipped": skipped,
    }
    return new, list(dict.fromkeys(kept)), report


def _eval3(func: Function, vals) -> int | None:
    """Three-valued value of a node's function (``None`` = unknown) by trying the unknown inputs."""
    t = func.table()
    xs = [j for j, v in enumerate(vals) if v is None]
    base = sum(v << j for j, v in enumerate(vals) if v is not None)
    seen = set()
    for m in range(1 << len(xs)):
        i = base
        for b, j in enumerate(xs):
            if (m >> b) & 1:
                i |= 1 << j
        seen.add((t >> i) & 1)
        if len(seen) == 2:
            return None
    return seen.pop()


def cone_support(netlist: Netlist, root: str, limit: int):
    """``(support, logic nodes in topological order)`` of ``root``; ``None`` when wider than ``limit``.

    The support is the inputs and storage outputs the cone reads; a node of
    more than 16 fan-ins also gives ``None``.  Iterative.
    """
    support, nodes, seen = [], [], set()
    stack = [(root, False)]
    while stack:
        n, done = stack.pop()
        if done:
            nodes.append(n)
            continue
        if n in seen:
            continue
        seen.add(n)
        node = netlist.nodes.get(n)
        if not isinstance(node, Logic) or not node.fanins:
            if isinstance(node, Logic):   # a constant
                nodes.append(n)
                continue
            support.append(n)
            if len(support) > limit:
                return None
            continue
        if node.func.n > 16:
            return None
        stack.append((n, True))
        for f in node.fanins:
            if f not in seen:
                stack.append((f, False))
    return support, nodes


def collapse_hazardous_cones(netlist: Netlist, max_inputs: int = 8, max_cubes: int = 32, roots=None) -> tuple:
    """``(netlist', rows)``: outputs and storage inputs whose small cones can glitch, made two-level.

    See :func:`add_consensus` (``collapse_inputs``).  ``roots`` limits the
    nets looked at (default: every output and storage input).  Nodes left
    driving nothing are dropped.  ``rows`` has one dict per collapsed root.
    """
    if roots is None:
        roots = list(dict.fromkeys(
            list(netlist.outputs)
            + [x for st in netlist.nodes.values() if isinstance(st, Storage) for x in (st.d, st.control) if x]))
    replace: dict = {}
    rows = []
    for root in roots:
        node = netlist.nodes.get(root)
        if not isinstance(node, Logic) or not node.fanins:
            continue
        cone = cone_support(netlist, root, max_inputs)
        if cone is None:
            continue
        support, nodes = cone
        if len([n for n in nodes if netlist.nodes[n].fanins]) < 2:
            continue  # one node: its own cover is handled by the consensus step
        k = len(support)
        full = (1 << (1 << k)) - 1
        words = {x: var_mask(k, j) for j, x in enumerate(support)}
        for n in nodes:
            nd = netlist.nodes[n]
            words[n] = nd.func.eval_words([words[f] for f in nd.fanins], full)
        table = words[root]
        # Eichelberger's test over the cone for every single-input change
        hazard = False
        for s in range(1 << k):
            for j in range(k):
                if (s >> j) & 1 or ((table >> s) & 1) != ((table >> (s | 1 << j)) & 1):
                    continue
                vals: dict[str, int | None] = {x: (s >> i) & 1 for i, x in enumerate(support)}
                vals[support[j]] = None
                for n in nodes:
                    nd = netlist.nodes[n]
                    vals[n] = _eval3(nd.func, [vals[f] for f in nd.fanins])
                if vals[root] is None:
                    hazard = True
                    break
            if hazard:
                break
        if not hazard:
            continue
        cubes, _ = isop(table, table, k)
        try:
            cover, added = hazard_free_cover(cubes, k, limit=max_cubes)
        except ValueError:
            continue
        replace[root] = Logic(tuple(support), Function.from_cover(k, cover, 1))
        rows.append({"node": root, "inputs": k, "cubes": len(cover), "added": len(added)})
    if not replace:
        return netlist, rows
    new = netlist.copy()
    new.nodes = {n: replace.get(n, node) for n, node in netlist.nodes.items()}
    # drop logic that no longer reaches an output or storage element
    live = set(new.outputs)
    stack = list(new.outputs)
    for n, node in new.nodes.items():
        if isinstance(node, Storage):
            live.add(n)
            stack.append(n)
    while stack:
        n = stack.pop()
        node = new.nodes.get(n)
        if node is None:
            continue
        for f in node.fanins:
            if f not in live:
                live.add(f)
                stack.append(f)
    new.nodes = {n: node for n, node in new.nodes.items()
                 if n in live or not isinstance(node, Logic) or n in netlist.inputs}
    return new, rows
