"""Two-level minimization of small nodes before mapping.

A node read from a file keeps the cover it was written with, which may be a
list of minterms.  Before the mapper builds its subject graph, each node of
3 to :data:`MAX_INPUTS` inputs is given the smallest of: its own cover, an
irredundant cover of its table (:func:`mapper.logic.function.isop`), and the
cover the espresso heuristic finds (R. Brayton, G. Hachtel, C. McMullen,
A. Sangiovanni-Vincentelli, "Logic Minimization Algorithms for VLSI
Synthesis", Kluwer 1984; the implementation is pyeda's), each for the
function and for its complement.  Smallest means fewest literals, then
fewest cubes: the AND/OR tree built from a cover has one 2-input node per
literal beyond the first of each cube, and per cube beyond the first.

Examples
--------
>>> from mapper.logic.function import Function
>>> f = Function.from_cover(3, ["110", "111", "011"], 1)   # ab + bc written as minterms
>>> cubes, phase = min_cover(f)       # b' + a'c' covers the complement: 3 literals
>>> sorted(cubes), phase
(['-0-', '0-0'], 0)
"""
from __future__ import annotations

from functools import lru_cache

from .function import Function, isop

__all__ = ["min_cover", "MAX_INPUTS"]

#: widest node minimized (espresso's time grows quickly with the inputs)
MAX_INPUTS = 10


def _size(cubes) -> tuple:
    return (sum(len(c) - c.count("-") for c in cubes), len(cubes))


def min_cover(func: Function) -> tuple:
    """The smallest cover found for ``func``: ``(cubes, phase)``, where
    phase 0 means the cubes cover the complement (as in BLIF).

    Nodes outside 3..:data:`MAX_INPUTS` inputs keep :meth:`Function.cover`.
    """
    given = func.cover()
    n = func.n
    if n < 3 or n > MAX_INPUTS or func.constant_value() is not None:
        return given
    best = _best(n, func.table())
    return best if _size(best[0]) < _size(given[0]) else given


@lru_cache(maxsize=4096)
def _best(n: int, table: int) -> tuple:
    full = (1 << (1 << n)) - 1
    cands = []
    for phase, t in ((1, table), (0, ~table & full)):
        cands.append((tuple(isop(t, t, n)[0]), phase))
        cands.append((_espresso(n, t), phase))
    return min(cands, key=lambda c: _size(c[0]))


def _espresso(n: int, table: int) -> tuple:
    """Cubes of espresso's cover of ``table`` (input j is bit j of the index)."""
    from pyeda.boolalg.expr import AndOp, Complement, OrOp, Variable
    from pyeda.inter import espresso_tts, exprvars, truthtable

    xs = exprvars("x", n)
    tt = truthtable(xs, "".join("1" if (table >> m) & 1 else "0" for m in range(1 << n)))
    expr, = espresso_tts(tt)
    index = {str(x): j for j, x in enumerate(xs)}
    terms = expr.xs if isinstance(expr, OrOp) else (expr,)
    cubes = []
    for term in terms:
        lits = term.xs if isinstance(term, AndOp) else (term,)
        cube = ["-"] * n
        for lit in lits:
            if isinstance(lit, Complement):
                cube[index[str(~lit)]] = "0"
            elif isinstance(lit, Variable):
                cube[index[str(lit)]] = "1"
            else:  # a constant: espresso found no cube or the whole space
                return tuple(isop(table, table, n)[0])
        cubes.append("".join(cube))
    return tuple(cubes)
