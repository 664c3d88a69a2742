"""The builds a careful builder makes without a mapper: the fair baselines of the part search.

Two ways of building a design by hand, each returned as a :class:`Mapping`
that the part search packs and weighs like any of its own (so its answer is
never worse than either):

* :func:`hand_mapping` -- the careful conversion to one gate type, NAND2 or
  NOR2 (common practice of digital-design courses): every gate in its
  textbook form (AND as NAND and inverter, OR as NAND of the inputs'
  complements, XOR as the four-NAND form, any other function as NAND-NAND
  two-level logic of its smallest cover), with double inversions cancelled
  (an inverter of an inverter is a wire; a complement is built only when a
  reader needs it) and identical gates shared.  A design's full adder drawn
  as exclusive-ORs, ANDs and an OR comes out as the 9-NAND full adder, and a
  half adder as the 5-NAND one: the gates that the textbook forms share are
  exactly the ones those circuits share.  NOR2 forms are the same with the
  roles of AND and OR exchanged (De Morgan).  Complements at the inputs of
  an exclusive-OR are either built or pushed to its output, whichever needs
  fewer gates over the whole design.
* :func:`plugin_mapping` -- each gate of the design into the cell that
  carries it; a gate no cell carries (an XNOR on a target without one) gets
  the cheapest small network of the target's cells for its function (up to
  four inputs), else its smallest two-level cover in AND, OR and inverter
  cells.

Storage elements are left to the caller, as in every mapping.
"""
from __future__ import annotations

from ..netlist import Logic, Netlist, describe_function
from .gates import CellUse, Mapping, cell_depth
from .library import GND as LGND
from .library import VCC as LVCC
from .library import CellLibrary

__all__ = ["hand_mapping", "plugin_mapping"]


class _Gates:
    """2-input gates of one type (``nand`` or ``nor``), hashed by inputs,
    with inverters of inverters cancelled and a journal to undo trials."""

    def __init__(self, cell: str, kind: str, taken: set):
        self.cell, self.kind, self.taken = cell, kind, taken
        self.cells: list = []
        self.by_args: dict = {}
        self.inverse: dict = {}  # net -> net it is the inverter of (both ways)
        self.journal: list = []
        self.count = 0

    def fresh(self, pref=None) -> str:
        if pref is not None and pref not in self.taken:
            self.taken.add(pref)
            return pref
        while True:
            self.count += 1
            name = f"_h{self.count}"
            if name not in self.taken:
                self.taken.add(name)
                return name

    def gate(self, a: str, b: str, pref=None) -> str:
        # a NAND with a rail is a rail or an inverter (NOR likewise, rails swapped)
        absorb, neutral = ("GND", "VCC") if self.kind == "nand" else ("VCC", "GND")
        if absorb in (a, b):
            return neutral
        if a == neutral:
            a = b
        if b == neutral:
            b = a
        if a == neutral:   # both neutral
            return absorb
        if a == b:
            return self.inv(a, pref)
        key = (min(a, b), max(a, b))
        out = self.by_args.get(key)
        if out is None:
            out = self.fresh(pref)
            self._add(key, out)
        return out

    def inv(self, a: str, pref=None) -> str:
        if a in ("VCC", "GND"):
            return "GND" if a == "VCC" else "VCC"
        got = self.inverse.get(a)
        if got is not None:
            return got
        out = self.fresh(pref)
        self._add((a, a), out)
        self.inverse[out] = a
        self.inverse[a] = out
        return out

    def _add(self, key, out):
        self.by_args[key] = out
        self.cells.append(CellUse(self.cell, key, out))
        self.journal.append((key, out))

    def mark(self) -> int:
        return len(self.journal)

    def undo(self, mark: int) -> None:
        while len(self.journal) > mark:
            key, out = self.journal.pop()
            self.cells.pop()
            del self.by_args[key]
            self.taken.discard(out)
            if key[0] == key[1]:
                self.inverse.pop(out, None)
                self.inverse.pop(key[0], None)

    def tree(self, nets: list) -> str:
        """The k-input gate (NAND_k or NOR_k) of ``nets`` from 2-input ones:
        the textbook tree, halves joined through an inverter."""
        if len(nets) == 1:
            return self.inv(nets[0])
        if len(nets) == 2:
            return self.gate(nets[0], nets[1])
        h = len(nets) // 2
        return self.gate(self._inner(nets[:h]), self._inner(nets[h:]))

    def _inner(self, nets: list) -> str:
        return nets[0] if len(nets) == 1 else self.inv(self.tree(nets))


class _HandConversion:
    """Signals as ``(net, complemented)``: a complement is built only when read."""

    def __init__(self, gates: _Gates, push_xor: bool):
        self.g = gates
        self.nand = gates.kind == "nand"
        self.push_xor = push_xor

    def pos(self, sig) -> str:
        net, neg = sig
        return self.g.inv(net) if neg else net

    def neg(self, sig) -> str:
        net, neg = sig
        return net if neg else self.g.inv(net)

    def and_(self, sigs):
        # NAND: AND = complement of NAND_k(x); NOR: AND = NOR_k(~x)
        if self.nand:
            return self.g.tree([self.pos(s) for s in sigs]), True
        return self.g.tree([self.neg(s) for s in sigs]), False

    def or_(self, sigs):
        if self.nand:
            return self.g.tree([self.neg(s) for s in sigs]), False
        return self.g.tree([self.pos(s) for s in sigs]), True

    def xor(self, a, b):
        # the four-gate form: XOR with NAND2, XNOR with NOR2 (same wiring); a
        # complemented input only complements the result (bubbles pushed through)
        (x, nx), (y, ny) = a, b
        if not self.push_xor:
            (x, nx), (y, ny) = (self.pos(a), False), (self.pos(b), False)
        m = self.g.gate(x, y)
        out = self.g.gate(self.g.gate(x, m), self.g.gate(y, m))
        return out, (not self.nand) != (nx != ny)

    def cover(self, sigs, cubes, phase):
        prods = []
        for cube in cubes:
            lits = [sigs[j] if ch == "1" else (sigs[j][0], not sigs[j][1])
                    for j, ch in enumerate(cube) if ch != "-"]
            if not lits:
                return ("VCC", False) if phase else ("GND", False)
            prods.append(lits[0] if len(lits) == 1 else self.and_(lits))
        if not prods:
            return ("GND", False) if phase else ("VCC", False)
        net, neg = prods[0] if len(prods) == 1 else self.or_(prods)
        return net, neg if phase else not neg

    def node(self, node: Logic, sigs, kind: str):
        f = node.func
        if kind == "const":
            return ("VCC" if f.constant_value() else "GND"), False
        if kind == "buf":
            return sigs[0]
        if kind == "inv":
            return sigs[0][0], not sigs[0][1]
        if kind in ("xor2", "xnor2"):
            net, neg = self.xor(sigs[0], sigs[1])
            return net, neg if kind == "xor2" else not neg
        for word, fn, negate in (("nand", self.and_, True), ("and", self.and_, False),
                                 ("nor", self.or_, True), ("or", self.or_, False)):
            if kind.startswith(word) and kind[len(word):].isdigit():
                net, neg = fn(sigs)
                return net, neg != negate
        return self._best_cover(f, sigs)

    def _best_cover(self, f, sigs):
        from ..logic.minimize import min_cover
        covers = [f.cover()]
        if f.n <= 10:
            covers.append(min_cover(f))
        trials: list = []
        for cubes, phase in dict.fromkeys(covers):
            mark = self.g.mark()
            self.cover(sigs, cubes, phase)
            trials.append((self.g.mark() - mark, len(trials), cubes, phase))
            self.g.undo(mark)
        _, _, cubes, phase = min(trials)
        return self.cover(sigs, cubes, phase)


def hand_mapping(design: Netlist, lib: CellLibrary, cell: str) -> Mapping:
    """The careful hand conversion of ``design`` to ``cell`` (a NAND2 or NOR2
    cell of ``lib``'s target); see the module docstring.  Only gates that
    some output or storage input reads are kept.  Complements at the inputs
    of an exclusive-OR are either pushed to its output or built; both ways
    are tried over the whole design and the one with fewer gates is kept
    (neither wins always: on ariths-gen's 4-bit array multiplier building
    them saves gates, on its 41-bit one pushing them does)."""
    order = design.topological_order()
    kinds = {name: describe_function(node.func) for name, node in design.nodes.items() if isinstance(node, Logic)}
    gate = {0b0111: "nand", 0b0001: "nor"}[lib.cells[cell].function.table()]
    got = [_convert(design, order, kinds, cell, gate, push) for push in (False, True)]
    cells, outputs, storage = min(got, key=lambda m: len(m[0]))
    area = lib.costs[cell] * len(cells)
    return Mapping(cells, outputs, storage, area, cell_depth(cells, design.inputs))


def _convert(design: Netlist, order: list, kinds: dict, cell: str, kind: str, push_xor: bool) -> tuple:
    """``(cells, outputs, storage nets)`` of one hand conversion to ``cell`` of gate ``kind``."""
    taken = set(design.nodes) | set(design.inputs) | {"VCC", "GND"}
    gates = _Gates(cell, kind, taken)
    conv = _HandConversion(gates, push_xor)
    sig: dict = {}
    nodes = design.nodes
    for name in order:
        node = nodes[name]
        if not isinstance(node, Logic):
            sig[name] = (name, False)
            continue
        sig[name] = conv.node(node, [sig[f] for f in node.fanins], kinds[name])
    outputs = {o: conv.pos(sig[o]) for o in design.outputs}
    storage = {net: (conv.pos(sig[s.d]), conv.pos(sig[s.control]) if s.control is not None else None)
               for net, s in design.storage().items()}
    cells = _live(gates.cells, list(outputs.values()) + [n for pair in storage.values() for n in pair if n])
    named = {name: net for name, (net, neg) in sig.items() if not neg}
    return _design_names(cells, outputs, storage, named, order, "_h")


def _design_names(cells: list, outputs: dict, storage: dict, net_of: dict, order: list, prefix: str) -> tuple:
    """The same cells with each net that carries a design node's value named as that node.

    A builder reads the wiring list and the schematic by the design's own
    names (``clk``, ``carry``): a net made here (``_h8``) that is exactly a
    design node takes the node's name, the first node in order when several
    share it.
    """
    rename: dict = {}
    for name in order:
        net = net_of.get(name)
        if net is not None and net != name and net.startswith(prefix) and net not in rename:
            rename[net] = name
    if not rename:
        return cells, outputs, storage

    def r(n):
        return rename.get(n, n) if n is not None else None

    cells = [CellUse(c.cell, tuple(r(a) for a in c.args), r(c.out), c.origin, c.group) for c in cells]
    outputs = {o: r(n) for o, n in outputs.items()}
    storage = {q: (r(d), r(c)) for q, (d, c) in storage.items()}
    return cells, outputs, storage


def _live(cells: list, roots: list) -> list:
    """The cells some root reads, directly or through other cells (in order)."""
    by_out = {c.out: c for c in cells}
    need = set()
    stack = [r for r in roots if r in by_out]
    while stack:
        n = stack.pop()
        if n in need:
            continue
        need.add(n)
        stack.extend(a for a in by_out[n].args if a in by_out and a not in need)
    return [c for c in cells if c.out in need]


def plugin_mapping(design: Netlist, lib: CellLibrary) -> Mapping | None:
    """Each gate of ``design`` into the cell of ``lib`` that carries it (or the
    cheapest small network of cells for its function, or its smallest
    two-level cover in AND, OR and inverter cells); ``None`` when the
    target's cells cannot build some gate that way."""
    taken = set(design.nodes) | set(design.inputs) | {"VCC", "GND"}
    cells: list = []
    same: dict = {}
    count = [0]
    net_of: dict = {}

    def fresh():
        while True:
            count[0] += 1
            name = f"_p{count[0]}"
            if name not in taken:
                taken.add(name)
                return name

    def emit(cell, ins):
        key = (cell, ins)
        out = same.get(key)
        if out is None:
            out = same[key] = fresh()
            cells.append(CellUse(cell, ins, out))
        return out

    for name in design.topological_order():
        node = design.nodes[name]
        if not isinstance(node, Logic):
            net_of[name] = name
            continue
        f = node.func
        if f.n == 0:
            net_of[name] = "VCC" if f.constant_value() else "GND"
            continue
        got = _plug(lib, f.n, f.table(), [net_of[a] for a in node.fanins], emit)
        if got is None:
            got = _two_level(lib, f, [net_of[a] for a in node.fanins], emit)
            if got is None:
                return None
        net_of[name] = got
    outputs = {o: net_of[o] for o in design.outputs}
    storage = {net: (net_of[s.d], net_of[s.control] if s.control is not None else None)
               for net, s in design.storage().items()}
    cells = _live(cells, list(outputs.values()) + [n for pair in storage.values() for n in pair if n])
    cells, outputs, storage = _design_names(cells, outputs, storage, net_of, design.topological_order(), "_p")
    area = sum(lib.costs[c.cell] for c in cells)
    return Mapping(cells, outputs, storage, area, cell_depth(cells, design.inputs))


def _plug(lib: CellLibrary, n: int, table: int, sig: list, emit):
    """The net of ``lib``'s cheapest network for ``table`` over nets ``sig``, or ``None``."""
    if n > 4:
        return None
    impl = lib.lookup(n, table)
    if impl is None:
        return None
    sig = list(sig)
    for cell, args in impl.gates:
        sig.append(emit(cell, tuple("GND" if a == LGND else "VCC" if a == LVCC else sig[a] for a in args)))
    o = impl.out
    return "GND" if o == LGND else "VCC" if o == LVCC else sig[o]


def _two_level(lib: CellLibrary, f, nets: list, emit):
    """``f`` from its smallest cover: inverters, an AND of each product and an
    OR of the products, each at most four wide (trees beyond), or ``None``."""
    from ..logic.minimize import min_cover
    cubes, phase = min_cover(f) if f.n <= 10 else f.cover()

    def wide(nets, word):  # word: table of the 4-input AND or OR, cut to k inputs
        nets = list(nets)
        while len(nets) > 1:
            k = min(4, len(nets))
            full = (1 << (1 << k)) - 1
            table = (1 << (full.bit_length() - 1)) if word == "and" else full ^ 1
            got = _plug(lib, k, table, nets[:k], emit)
            if got is None:
                return None
            nets = [got] + nets[k:]
        return nets[0]

    prods = []
    for cube in cubes:
        lits = []
        for j, ch in enumerate(cube):
            if ch == "1":
                lits.append(nets[j])
            elif ch == "0":
                lits.append(_plug(lib, 1, 0b01, [nets[j]], emit))
        if any(x is None for x in lits):
            return None
        prods.append(wide(lits, "and") if lits else "VCC")
    if any(x is None for x in prods):
        return None
    out = wide(prods, "or") if prods else "GND"
    if out is None or phase:
        return out
    return _plug(lib, 1, 0b01, [out], emit)
