"""And-inverter graphs: the working form of the prover and the mapper.

Nodes live in flat integer arrays.  A *literal* is ``2 * var + c``: ``c = 1``
complements.  Variable 0 is the constant false (literal 0 is false, 1 is
true).  Inputs (primary inputs and the outputs of storage elements, which act
as pseudo-inputs) and AND nodes share one numbering; an AND node is always
created after both fan-ins, so increasing variable order is a topological
order and no algorithm here needs recursion.

Structural hashing (a published method: Kuehlmann et al., IEEE TCAD 2002)
merges identical AND nodes, and trivial ANDs fold on creation.

Examples
--------
>>> g = AIG()
>>> a, b = g.add_input("a"), g.add_input("b")
>>> x = g.add_xor(a, b)
>>> g.add_output("x", x)
>>> g.num_ands
3
>>> vals = g.simulate({"a": 0b1100, "b": 0b1010}, 0b1111)
>>> g.lit_value(vals, x, 0b1111)
6
"""
from __future__ import annotations

from dataclasses import dataclass

__all__ = ["AIG", "AigLatch", "from_netlist", "lit_not", "lit_var", "lit_is_compl"]


def lit_not(lit: int) -> int:
    return lit ^ 1


def lit_var(lit: int) -> int:
    return lit >> 1


def lit_is_compl(lit: int) -> bool:
    return bool(lit & 1)


@dataclass
class AigLatch:
    """A storage element: ``var`` is its output (a pseudo-input); ``next`` the
    data literal; ``control`` the clock/enable literal (``None`` if none)."""

    name: str
    var: int
    next: int = 0
    kind: str = "re"
    control: int | None = None
    init: int = 3


class AIG:
    """An and-inverter graph with structural hashing (see module docstring)."""

    def __init__(self):
        self.f0: list[int] = [-1]  # fan-in literals; -1 for constants and inputs
        self.f1: list[int] = [-1]
        self.names: dict[int, str] = {}  # var -> name for inputs
        self.inputs: list[int] = []  # primary input vars, in order
        self.latches: list[AigLatch] = []
        self.outputs: list[tuple[str, int]] = []
        self._by_fanins: dict[tuple[int, int], int] = {}

    # -- construction -----------------------------------------------------
    @property
    def num_vars(self) -> int:
        return len(self.f0)

    @property
    def num_ands(self) -> int:
        return len(self.f0) - 1 - len(self.inputs) - len(self.latches)

    def is_and(self, var: int) -> bool:
        return self.f0[var] >= 0

    def _new_input(self, name: str) -> int:
        var = len(self.f0)
        self.f0.append(-1)
        self.f1.append(-1)
        self.names[var] = name
        return var

    def add_input(self, name: str) -> int:
        """A primary input; returns its positive literal."""
        var = self._new_input(name)
        self.inputs.append(var)
        return 2 * var

    def add_latch(self, name: str, kind: str = "re", init: int = 3) -> AigLatch:
        """A storage element's output as a pseudo-input; set ``.next``/``.control`` later."""
        var = self._new_input(name)
        latch = AigLatch(name, var, 0, kind, None, init)
        self.latches.append(latch)
        return latch

    def add_output(self, name: str, lit: int) -> None:
        self.outputs.append((name, lit))

    def find_and(self, a: int, b: int) -> int | None:
        """The literal :meth:`add_and` would return when it would create no node (a constant, an
        operand, or an AND node that exists); ``None`` when it would create one."""
        if a > b:
            a, b = b, a
        if a == 0:
            return 0
        if a == 1:
            return b
        if a == b:
            return a
        if a == b ^ 1:
            return 0
        return self._by_fanins.get((a, b))

    def add_and(self, a: int, b: int) -> int:
        lit = self.find_and(a, b)
        if lit is None:
            if a > b:
                a, b = b, a
            key = (a, b)
            var = len(self.f0)
            self.f0.append(a)
            self.f1.append(b)
            lit = 2 * var
            self._by_fanins[key] = lit
        return lit

    def has_and(self, a: int, b: int) -> bool:
        """Whether an AND node of exactly these two fan-in literals exists."""
        return ((a, b) if a < b else (b, a)) in self._by_fanins

    def add_or(self, a: int, b: int) -> int:
        return self.add_and(a ^ 1, b ^ 1) ^ 1

    def add_xor(self, a: int, b: int) -> int:
        return self.add_or(self.add_and(a, b ^ 1), self.add_and(a ^ 1, b))

    def add_xor_shared(self, a: int, b: int) -> int:
        """XOR built around ``AND(a, b)``: ``a & ~(a & b) | b & ~(a & b)``.

        The same function as :meth:`add_xor`, in the shape of the four-NAND
        exclusive-OR (common practice): its first node is the AND a carry
        or a comparator usually needs too, so a mapper can share it.
        """
        ab = self.add_and(a, b)
        return self.add_or(self.add_and(a, ab ^ 1), self.add_and(b, ab ^ 1))

    def add_mux(self, s: int, t: int, e: int) -> int:
        """``s ? t : e``."""
        return self.add_or(self.add_and(s, t), self.add_and(s ^ 1, e))

    def add_and_many(self, lits) -> int:
        """Balanced AND of many literals (1 for none)."""
        lits = list(lits)
        if not lits:
            return 1
        while len(lits) > 1:
            nxt = [self.add_and(lits[i], lits[i + 1]) for i in range(0, len(lits) - 1, 2)]
            if len(lits) % 2:
                nxt.append(lits[-1])
            lits = nxt
        return lits[0]

    def add_or_many(self, lits) -> int:
        return self.add_and_many([x ^ 1 for x in lits]) ^ 1

    def add_cover(self, cubes, phase: int, leaves) -> int:
        """Literal of a sum of products over ``leaves`` (cube char j is leaf j)."""
        terms = []
        for cube in cubes:
            lits = []
            for j, ch in enumerate(cube):
                if ch == "1":
                    lits.append(leaves[j])
                elif ch == "0":
                    lits.append(leaves[j] ^ 1)
            terms.append(self.add_and_many(lits))
        lit = self.add_or_many(terms)
        return lit if phase else lit ^ 1

    # -- evaluation -------------------------------------------------------
    def simulate(self, words: dict, mask: int, latch_words: dict | None = None) -> list:
        """Bit-parallel values of every variable.

        ``words`` maps input names to integers (bit k = value in pattern k);
        missing inputs read 0.  ``latch_words`` does the same for storage
        outputs.  Returns a list indexed by variable.
        """
        vals = [0] * len(self.f0)
        for v in self.inputs:
            vals[v] = words.get(self.names[v], 0) & mask
        if latch_words:
            for latch in self.latches:
                vals[latch.var] = latch_words.get(latch.name, 0) & mask
        f0, f1 = self.f0, self.f1
        for v in range(1, len(f0)):
            a = f0[v]
            if a < 0:
                continue
            b = f1[v]
            x = vals[a >> 1]
            if a & 1:
                x = ~x & mask
            y = vals[b >> 1]
            if b & 1:
                y = ~y & mask
            vals[v] = x & y
        return vals

    @staticmethod
    def lit_value(vals: list, lit: int, mask: int) -> int:
        x = vals[lit >> 1]
        return (~x & mask) if lit & 1 else x

    def levels(self) -> list:
        """Logic level of every variable (inputs 0)."""
        lev = [0] * len(self.f0)
        f0, f1 = self.f0, self.f1
        for v in range(1, len(f0)):
            if f0[v] >= 0:
                lev[v] = 1 + max(lev[f0[v] >> 1], lev[f1[v] >> 1])
        return lev

    def fanout_counts(self) -> list:
        """Number of AND fan-outs plus output/latch references per variable."""
        cnt = [0] * len(self.f0)
        for v in range(1, len(self.f0)):
            if self.f0[v] >= 0:
                cnt[self.f0[v] >> 1] += 1
                cnt[self.f1[v] >> 1] += 1
        for _, lit in self.outputs:
            cnt[lit >> 1] += 1
        for latch in self.latches:
            cnt[latch.next >> 1] += 1
            if latch.control is not None:
                cnt[latch.control >> 1] += 1
        return cnt

    def cone(self, roots) -> list:
        """Variables of AND nodes in the transitive fan-in of the literals
        ``roots``, in increasing (topological) order."""
        seen = set()
        stack = [r >> 1 for r in roots]
        while stack:
            v = stack.pop()
            if v in seen or self.f0[v] < 0:
                continue
            seen.add(v)
            stack.append(self.f0[v] >> 1)
            stack.append(self.f1[v] >> 1)
        return sorted(seen)


def from_netlist(netlist, aig: AIG | None = None, inputs: dict | None = None,
                 storage: dict | None = None, cover=None):
    """Build (or extend) an AIG from a :class:`~mapper.netlist.Netlist`.

    Returns ``(aig, litmap)`` where ``litmap`` maps every net to its literal.
    Primary inputs are created by name unless ``inputs`` (name -> literal)
    gives them, which lets two netlists share inputs in one AIG (a miter).
    Storage elements become latches whose ``next``/``control`` literals are
    filled in after all logic exists.  ``storage`` (name -> literal) likewise
    gives storage outputs that already exist (shared with another netlist);
    no latch is created for those.  ``cover(func) -> (cubes, phase)`` picks
    the cover each node is built from (default: :meth:`Function.cover`).
    """
    from ..netlist import Input, Logic, Storage

    if aig is None:
        aig = AIG()
    litmap: dict = {}
    for name in netlist.inputs:
        if inputs is not None and name in inputs:
            litmap[name] = inputs[name]
        else:
            litmap[name] = aig.add_input(name)
    latches = []
    for name, node in netlist.nodes.items():
        if isinstance(node, Storage):
            if storage is not None and name in storage:
                litmap[name] = storage[name]
                continue
            latch = aig.add_latch(name, node.kind, node.init)
            litmap[name] = 2 * latch.var
            latches.append((latch, node))
    for name in netlist.topological_order():
        node = netlist.nodes[name]
        if isinstance(node, Logic):
            leaves = [litmap[f] for f in node.fanins]
            const = node.func.constant_value()
            if const is not None:
                litmap[name] = int(const)
                continue
            cubes, phase = node.func.cover() if cover is None else cover(node.func)
            litmap[name] = aig.add_cover(cubes, phase, leaves)
        elif isinstance(node, Input) and name not in litmap:
            litmap[name] = aig.add_input(name)
    for latch, node in latches:
        latch.next = litmap[node.d]
        latch.control = litmap[node.control] if node.control is not None else None
    for o in netlist.outputs:
        aig.add_output(o, litmap[o])
    return aig, litmap
