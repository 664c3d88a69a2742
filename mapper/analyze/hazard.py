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
is split into one node per product term and one OR (or NOR) node, and the
names of those nets are returned so the mapper keeps them as signals of
their own (``flow.fit(..., keep=...)``) -- otherwise it would find the added
terms redundant and drop them.

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

from ..logic.function import MAX_TABLE_INPUTS, Function, isop, table_of_cover
from ..netlist import Logic, Netlist

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
    "MAX_CONSENSUS_CUBES",
]

log = logging.getLogger(__name__)

#: a cover is not grown past this many cubes by :func:`hazard_free_cover`
MAX_CONSENSUS_CUBES = 256


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
    acc = 0
    for cube in cubes:
        v = 1
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


def add_consensus(netlist: Netlist) -> tuple:
    """``(netlist', kept_nets, report)``: the design with hazard-free two-level covers.

    Every logic node whose cover has two cubes opposed in one input gets the
    consensus terms :func:`hazard_free_cover` finds and is split into one
    logic node per product term (an AND of its literals; a single plain
    literal is its fan-in net itself) and one OR node (NOR for a cover of
    the OFF-set) under the node's own name.  ``kept_nets`` lists the product
    nets and the OR nets: the mapper must keep them as signals of their own.
    The new netlist does the same logic as the old one (consensus terms are
    implied by the cover).  ``report`` has ``nodes`` (one dict per rewritten
    node: ``node``, ``added`` terms as dicts, ``hazards_before``),
    ``terms_added``, ``nodes_split`` and ``skipped`` (nodes too big to fix).
    """
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
        if not isinstance(node, Logic) or node.func.n < 2:
            new.nodes[name] = node
            if where is not None:
                new.origin[name] = where
            continue
        cubes, phase = node.func.cover()
        cubes = list(dict.fromkeys(cubes))
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
        terms = []
        for cube in cover:
            lits = [(j, ch) for j, ch in enumerate(cube) if ch != "-"]
            if len(lits) == 1 and lits[0][1] == "1":
                terms.append(node.fanins[lits[0][0]])
                continue
            if not lits:  # a cube of all don't-cares: the node is constant (cover() kept it as given)
                t = _fresh(f"{name}~t", taken)
                taken.add(t)
                new.add_constant(t, 1)
                terms.append(t)
                continue
            t = _fresh(f"{name}~t", taken)
            taken.add(t)
            fan = [node.fanins[j] for j, _ in lits]
            sub = "".join(ch for _, ch in lits)
            new.add_logic(t, fan, Function.from_cover(len(fan), [sub], 1), where)
            terms.append(t)
            kept.append(t)
        # OR (or NOR) of the terms, under the node's own name
        k = len(terms)
        or_cubes = ["-" * i + "1" + "-" * (k - i - 1) for i in range(k)]
        new.add_logic(name, terms, Function.from_cover(k, or_cubes, phase), where)
        kept.append(name)
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
        "terms_added": sum(len(r["added"]) for r in rows),
        "hazards_before": sum(r["hazards_before"] for r in rows),
        "skipped": skipped,
    }
    return new, list(dict.fromkeys(kept)), report
