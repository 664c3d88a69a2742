"""Make a structurally different but logically equal copy of a netlist.

Used by the prover's tests and benchmarks to get an honest "restructured
equivalent" at test time (nothing is hand-written or stored):

1. **Collapse**: a logic node absorbs fan-in nodes that feed only it (and
   are not outputs) while the merged function keeps at most ``max_support``
   inputs; the merged truth table is computed by evaluating the two
   functions, so e.g. a full adder's carry ``(a&b) | (c&(a^b))`` becomes the
   majority function of ``a, b, c``.
2. **Re-express** every function in 2-input gates: parity functions as XOR
   chains in one of several forms (XNOR with inverted output, AND/OR form,
   NAND-only form), everything else from an irredundant sum of products of
   its ON-set or OFF-set (Minato-Morreale ISOP, in
   :func:`mapper.logic.function.isop`) with AND/OR trees of random shape,
   each gate written directly or in De Morgan form (an OR as a NAND of
   inverted inputs, an AND as a NOR of inverted inputs).
3. **Rename** every internal net and shuffle the node order; ports and
   storage element names stay.

The result has the same ports and storage elements and the same logic; its
AIG shares few nodes with the original's.
"""
from __future__ import annotations

import random

from mapper.logic.function import MAX_TABLE_INPUTS, Function, isop, var_mask
from mapper.netlist import Logic, Netlist

__all__ = ["restructure", "change_one_cube"]

_AND2 = Function.from_table(2, 0b1000)
_OR2 = Function.from_table(2, 0b1110)
_NAND2 = Function.from_table(2, 0b0111)
_NOR2 = Function.from_table(2, 0b0001)
_XOR2 = Function.from_table(2, 0b0110)
_XNOR2 = Function.from_table(2, 0b1001)
_INV = Function.from_table(1, 0b01)
_BUF = Function.from_table(1, 0b10)


def _compose(outer: Function, outer_fanins: tuple, j: int, inner: Function, inner_fanins: tuple):
    """Substitute ``inner`` for fan-in ``j`` of ``outer``: (table Function, fan-ins)."""
    support = [f for k, f in enumerate(outer_fanins) if k != j]
    for f in inner_fanins:
        if f not in support:
            support.append(f)
    n = len(support)
    full = (1 << (1 << n)) - 1
    word = {f: var_mask(n, k) for k, f in enumerate(support)}
    w_inner = inner.eval_words([word[f] for f in inner_fanins], full)
    args = [w_inner if k == j else word[f] for k, f in enumerate(outer_fanins)]
    return Function.from_table(n, outer.eval_words(args, full)), tuple(support)


def _collapse(net: Netlist, max_support: int, rng: random.Random, p: float) -> dict:
    """net -> (fanins, Function) after absorbing single-fan-out fan-ins."""
    fanout = {}
    for node in net.nodes.values():
        for f in node.fanins:
            fanout[f] = fanout.get(f, 0) + 1
    outputs = set(net.outputs)
    funcs = {}
    absorbed = set()
    for name in net.topological_order():
        node = net.nodes[name]
        if not isinstance(node, Logic):
            continue
        fanins, func = node.fanins, node.func
        if func.n <= MAX_TABLE_INPUTS and rng.random() < p:
            changed = True
            while changed:
                changed = False
                for j, f in enumerate(fanins):
                    if f not in funcs or fanout.get(f, 0) != 1 or f in outputs or f in absorbed:
                        continue
                    ifan, ifunc = funcs[f]
                    if not ifan or ifunc.n > MAX_TABLE_INPUTS:
                        continue
                    if len(set(fanins) | set(ifan)) - 1 > max_support:
                        continue
                    func, fanins = _compose(func, fanins, j, ifunc, ifan)
                    absorbed.add(f)
                    changed = True
                    break
        funcs[name] = (tuple(fanins), func)
    return {k: v for k, v in funcs.items() if k not in absorbed}


class _Writer:
    def __init__(self, out: Netlist, rng: random.Random, prefix: str):
        self.out = out
        self.rng = rng
        self.prefix = prefix
        self.count = 0

    def fresh(self) -> str:
        self.count += 1
        return f"{self.prefix}{self.count}"

    def gate(self, func, fanins, name=None) -> str:
        name = name or self.fresh()
        self.out.add_logic(name, fanins, func)
        return name

    def inv(self, x: str) -> str:
        return self.gate(_INV, [x])

    def and2(self, x: str, y: str, name=None) -> str:
        if self.rng.random() < 0.5:
            return self.gate(_AND2, [x, y], name)
        return self.gate(_NOR2, [self.inv(x), self.inv(y)], name)  # De Morgan

    def or2(self, x: str, y: str, name=None) -> str:
        if self.rng.random() < 0.5:
            return self.gate(_OR2, [x, y], name)
        return self.gate(_NAND2, [self.inv(x), self.inv(y)], name)  # De Morgan

    def xor2(self, x: str, y: str, name=None) -> str:
        form = self.rng.randrange(4)
        if form == 0:
            return self.gate(_XOR2, [x, y], name)
        if form == 1:
            return self.gate(_INV, [self.gate(_XNOR2, [x, y])], name)
        if form == 2:  # (x | y) & ~(x & y)
            return self.and2(self.or2(x, y), self.gate(_NAND2, [x, y]), name)
        # four NAND2 gates
        m = self.gate(_NAND2, [x, y])
        return self.gate(_NAND2, [self.gate(_NAND2, [x, m]), self.gate(_NAND2, [y, m])], name)

    def tree(self, op, items: list, name=None) -> str:
        items = list(items)
        while len(items) > 2:
            i = self.rng.randrange(len(items) - 1)
            x, y = items.pop(i), items.pop(i)
            items.insert(i, op(x, y))
        if len(items) == 2:
            return op(items[0], items[1], name)
        return self.gate(_BUF, [items[0]], name) if name else items[0]


def _express(w: _Writer, name: str, fanins: tuple, func: Function) -> None:
    n = func.n
    const = func.constant_value()
    if const is not None or n == 0:
        w.out.add_constant(name, const)
        return
    if n > MAX_TABLE_INPUTS:  # wide covers are kept as they are
        w.out.add_logic(name, fanins, func)
        return
    t = func.table()
    full = (1 << (1 << n)) - 1
    parity = 0
    for j in range(n):
        parity ^= var_mask(n, j)
    if n >= 2 and t in (parity, ~parity & full):
        x = w.tree(w.xor2, list(fanins))
        if t == parity:
            w.gate(_BUF, [x], name)
        else:
            w.gate(_INV, [x], name)
        return
    use_off = w.rng.random() < 0.5
    cubes, _ = isop(~t & full, ~t & full, n) if use_off else isop(t, t, n)
    terms = []
    for cube in cubes:
        lits = []
        for j, ch in enumerate(cube):
            if ch == "1":
                lits.append(fanins[j])
            elif ch == "0":
                lits.append(w.inv(fanins[j]))
        terms.append(w.tree(w.and2, lits) if lits else None)
    if any(tm is None for tm in terms):  # a tautology cube (cannot happen for non-constants)
        raise AssertionError("unexpected constant")
    if use_off:
        w.gate(_INV, [w.tree(w.or2, terms)], name)
    else:
        w.tree(w.or2, terms, name)


def restructure(net: Netlist, seed: int = 1, max_support: int = 4, collapse: float = 0.7,
                names: dict | None = None) -> Netlist:
    """A logically equal copy of ``net`` with different structure (module docstring).

    ``collapse`` is the chance that a node tries to absorb its fan-ins.  When
    ``names`` is a dict it receives old net -> new net for every net that
    survives (absorbed nets have no counterpart).
    """
    rng = random.Random(seed)
    funcs = _collapse(net, max_support, rng, collapse)
    keep = set(net.inputs) | set(net.outputs) | set(net.storage())
    rename = {}
    counter = 0
    for name in net.nodes:
        if name in keep:
            rename[name] = name
        else:
            counter += 1
            rename[name] = f"n{counter}_"
    out = Netlist(net.name + "_re")
    for i in net.inputs:
        out.add_input(i)
    for name, st in net.storage().items():
        out.add_storage(name, rename[st.d], st.kind,
                        rename[st.control] if st.control is not None else None, st.init)
    w = _Writer(out, rng, "t")
    items = list(funcs.items())
    rng.shuffle(items)  # node order in the file does not matter
    for name, (fanins, func) in items:
        _express(w, rename[name], tuple(rename[f] for f in fanins), func)
    if names is not None:
        names.update((k, rename[k]) for k in net.nodes if k in funcs or k in keep)
    for o in net.outputs:
        out.add_output(o)
    out.clocks = list(net.clocks)
    return out


def change_one_cube(net: Netlist, seed: int = 1) -> tuple[Netlist, str]:
    """A copy with one cube of one logic node changed (one input literal
    flipped or freed); returns ``(copy, changed net)``.

    The change is picked at random among nodes in the fan-in of an output;
    it may happen to keep the logic (a redundant cube), so callers check the
    answer against simulation, not against an assumption.
    """
    rng = random.Random(seed)
    live = set()
    stack = list(net.outputs)
    while stack:
        x = stack.pop()
        if x in live:
            continue
        live.add(x)
        stack.extend(net.nodes[x].fanins)
    names = sorted(n for n, node in net.nodes.items()
                   if isinstance(node, Logic) and node.fanins and n in live)
    name = rng.choice(names)
    node = net.nodes[name]
    cubes, phase = node.func.cover()
    cubes = list(cubes)
    i = rng.randrange(len(cubes))
    cube = list(cubes[i])
    j = rng.randrange(len(cube))
    cube[j] = {"0": "1", "1": "0", "-": "1"}[cube[j]]
    cubes[i] = "".join(cube)
    out = net.copy()
    out.nodes = dict(net.nodes)
    out.nodes[name] = Logic(node.fanins, Function.from_cover(node.func.n, cubes, phase))
    return out, name
