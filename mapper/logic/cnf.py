"""Tseitin encoding of an AIG into CNF, one SAT variable per AIG node.

The Tseitin transformation (G. S. Tseitin, "On the complexity of derivation
in propositional calculus", 1968) gives every AND node ``v = a AND b`` three
clauses ``(-v | a)``, ``(-v | b)``, ``(v | -a | -b)``; shared logic is encoded
once, so the formula grows linearly with the graph (converting the
expression itself to CNF would duplicate shared sub-terms).

AIG variable ``v`` is SAT variable ``v + 1`` (SAT variables start at 1), so
a SAT model reads back directly as AIG values.  Clauses are made only for
the cones asked for, on demand, and the AIG may keep growing between calls:
the prover builds its graph and its CNF together.

Examples
--------
>>> from mapper.logic.aig import AIG
>>> g = AIG()
>>> a, b = g.add_input("a"), g.add_input("b")
>>> x = g.add_and(a, b)
>>> enc = AigCnf(g)
>>> enc.lit(x)
4
>>> sorted(map(sorted, enc.clauses))
[[-4, 2], [-4, 3], [-3, -2, 4]]
"""
from __future__ import annotations

__all__ = ["AigCnf", "tseitin", "sat_var", "aig_var"]


def sat_var(aig_var: int) -> int:
    """The SAT variable of an AIG variable."""
    return aig_var + 1


def aig_var(sat_variable: int) -> int:
    """The AIG variable of a SAT variable."""
    return abs(sat_variable) - 1


class AigCnf:
    """Clauses for the cones of an AIG, made on demand.

    Parameters
    ----------
    aig : AIG
        The graph; it may grow after this object is made.
    sink : object, optional
        Anything with ``add_clause(list_of_ints)`` (a pysat solver): clauses
        go there as they are made.  Without a sink they collect in
        :attr:`clauses`.

    Notes
    -----
    The constant (AIG variable 0) is SAT variable 1, fixed false by a unit
    clause the first time it is needed.  Inputs and storage outputs get no
    clauses (they are free).
    """

    def __init__(self, aig, sink=None):
        self.aig = aig
        self.clauses: list = []
        self._add = sink.add_clause if sink is not None else self.clauses.append
        self._done = bytearray()
        self.num_clauses = 0

    def _grow(self) -> None:
        n = self.aig.num_vars
        if len(self._done) < n:
            self._done.extend(bytes(n - len(self._done)))

    def encoded(self, var: int) -> bool:
        """True when ``var``'s defining clauses have been made."""
        return var < len(self._done) and bool(self._done[var])

    def encode(self, roots) -> None:
        """Make the clauses of every node in the cones of AIG literals ``roots``."""
        self._grow()
        done = self._done
        f0, f1 = self.aig.f0, self.aig.f1
        todo = []
        stack = [r >> 1 for r in roots]
        while stack:
            v = stack.pop()
            if done[v]:
                continue
            done[v] = 1
            if v == 0:
                self._add([-1])
                self.num_clauses += 1
                continue
            a = f0[v]
            if a < 0:  # input or storage output: free
                continue
            todo.append(v)
            stack.append(a >> 1)
            stack.append(f1[v] >> 1)
        add = self._add
        for v in todo:
            x = v + 1
            a, b = f0[v], f1[v]
            sa = -((a >> 1) + 1) if a & 1 else (a >> 1) + 1
            sb = -((b >> 1) + 1) if b & 1 else (b >> 1) + 1
            add([-x, sa])
            add([-x, sb])
            add([x, -sa, -sb])
        self.num_clauses += 3 * len(todo)

    def lit(self, aig_lit: int) -> int:
        """The SAT literal of an AIG literal, encoding its cone if needed."""
        v = aig_lit >> 1
        if not self.encoded(v):
            self.encode([aig_lit])
        return -(v + 1) if aig_lit & 1 else v + 1

    def value(self, model_set: set, aig_lit: int) -> int:
        """Value (0/1) of an AIG literal in a SAT model given as a set of
        true literals; an unassigned variable reads 0."""
        v = (aig_lit >> 1) + 1
        val = 1 if v in model_set else 0
        return val ^ (aig_lit & 1)


def tseitin(aig, roots) -> tuple[list, list]:
    """Clauses for the cones of ``roots`` and the SAT literals of the roots.

    Returns ``(clauses, root_literals)``.
    """
    enc = AigCnf(aig)
    lits = [enc.lit(r) for r in roots]
    return enc.clauses, lits
