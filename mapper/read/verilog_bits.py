"""The flattened bit store the Verilog reader builds, and its Netlist.

Every bit of every net of every module instance is a *slot* (an integer);
slots 0 and 1 are the constants.  A slot has at most one driver:

* ``("a", s)``  -- joined to slot ``s`` (an assignment, a port connection);
* ``("i",)``    -- an input of the top module;
* ``("c", v)``  -- a constant (the two constant slots only);
* ``("l", fanins, Function)`` -- a small logic node made here;
* ``("s", d, kind, control, init)`` -- a latch or flip-flop.

:meth:`BitStore.finish` joins the slots tied by ``"a"`` drivers into nets,
names each net (a top port first, then the user's net highest in the
hierarchy, then a made-up ``<target>$<k>``), drops logic nobody reads and
returns the :class:`~mapper.netlist.Netlist`.  Nothing here recurses over
the depth of the logic: deep designs are read with loops and explicit stacks.
"""
from __future__ import annotations

from collections.abc import Callable
from typing import TYPE_CHECKING, Any

from ..logic.function import MAX_TABLE_INPUTS, Function, var_mask
from ..netlist import Netlist

if TYPE_CHECKING:
    from .verilog_source import Report, Where

__all__ = [
    "HOLD",
    "T_AND2",
    "T_INV",
    "T_NAND2",
    "T_NOR2",
    "T_OR2",
    "T_XNOR2",
    "T_XOR2",
    "BitStore",
    "Fail",
    "Template",
    "gate_table",
    "shape",
    "simplify",
]

#: a slot's driver: one of the tuples of the module's docstring, told apart by its first item
#: (the items' types differ by kind, and a type checker cannot narrow a tuple by a tag item)
Driver = tuple[Any, ...]

#: a bit not assigned on this path of a level-sensitive block (it keeps its value)
HOLD = -1


class Fail(Exception):
    """An error was recorded; abandon the current statement or item."""


def _table(k: int, fn) -> int:
    """Truth table over ``k`` inputs of ``fn(bits_tuple) -> 0/1``."""
    t = 0
    for m in range(1 << k):
        if fn(tuple((m >> j) & 1 for j in range(k))):
            t |= 1 << m
    return t


_FUNCS: dict = {}


def _func(k: int, table: int) -> Function:
    f = _FUNCS.get((k, table))
    if f is None:
        f = _FUNCS[(k, table)] = Function.from_table(k, table)
    return f


T_INV = 0b01
T_AND2 = 0b1000
T_OR2 = 0b1110
T_XOR2 = 0b0110
T_XNOR2 = 0b1001
T_NAND2 = 0b0111
T_NOR2 = 0b0001
T_MUX = _table(3, lambda b: b[1] if b[0] else b[2])          # (c, t, e)
T_XOR3 = _table(3, lambda b: b[0] ^ b[1] ^ b[2])
T_MAJ = _table(3, lambda b: (b[0] + b[1] + b[2]) >= 2)
T_BORROW = _table(3, lambda b: ((1 - b[0]) + b[1] + b[2]) >= 2)  # borrow out of a - b - bin


_GATE_TABLES: dict = {}


def gate_table(kind: str, n: int) -> int:
    """Truth table of an ``n``-input gate primitive (``and``, ``nand``, ``or``, ...)."""
    t = _GATE_TABLES.get((kind, n))
    if t is None:
        t = _GATE_TABLES[(kind, n)] = _make_gate_table(kind, n)
    return t


def _make_gate_table(kind: str, n: int) -> int:
    full = (1 << (1 << n)) - 1
    if kind in ("and", "nand"):
        t = 1 << ((1 << n) - 1)
    elif kind in ("or", "nor"):
        t = full ^ 1
    else:  # xor, xnor
        t = _table(n, lambda b: sum(b) & 1)
    if kind in ("nand", "nor", "xnor"):
        t ^= full
    return t


class BitStore:
    """Slots, their drivers and the logic made for them.

    ``report`` records diagnostics: ``report.error(at, msg)``,
    ``report.fail(at, msg)`` (records, then raises :class:`Fail`) and
    ``report.line(at)`` (the line of a position, for messages).  Positions
    (``at``) are whatever ``report`` understands; they are resolved only
    when a message or the netlist needs them.
    """

    def __init__(self, report: Report):
        self.report = report
        # per slot: its name, whether netfit made it up, its position, its driver and where
        # the driver was given (positions as ``report`` understands them)
        self.name: list[str] = ["$const0", "$const1"]
        self.gen: list[bool] = [True, True]
        self.at: list[Any] = [None, None]
        self.drv: list[Driver | None] = [("c", 0), ("c", 1)]
        self.drv_at: list[Any] = [None, None]
        self.user_names: dict[str, int] = {}
        self.unconnected: dict[int, tuple[Any, str, str]] = {}  # slot -> (instance position, port, instance path)
        #: slots of ``wor`` nets: each further driver is ORed in (relay contacts in parallel)
        self.wired: set[int] = set()
        self.top_inputs: list[int] = []
        self.top_outputs: list[int] = []
        self.clock_slots: list[int] = []

    # -- slots ------------------------------------------------------------
    def new_slot(self, name, at, gen):
        s = len(self.name)
        self.name.append(name)
        self.gen.append(gen)
        self.at.append(at)
        self.drv.append(None)
        self.drv_at.append(None)
        if not gen:
            prev = self.user_names.get(name)
            if prev is not None:
                self.report.error(at, f"the name '{name}' is given to two different nets "
                                      f"(first at line {self.report.line(self.at[prev])})")
            else:
                self.user_names[name] = s
        return s

    def drive(self, slot, driver, at):
        """Give ``slot`` its one driver; a second one is an error."""
        old = self.drv[slot]
        if old is not None and slot in self.wired and old[0] != "i":
            # a wired OR: both drivers move to bits of their own, the net becomes their OR
            hint = self.name[slot]
            a, b = self.new_slot(hint, at, True), self.new_slot(hint, at, True)
            self.drv[a], self.drv_at[a] = old, self.drv_at[slot]
            self.drv[b], self.drv_at[b] = driver, at
            driver = ("l", (a, b), _func(2, T_OR2))
        elif old is not None:
            name = self.name[slot]
            if old[0] == "i":
                self.report.fail(at, f"'{name}' is an input of the top module and cannot be driven inside it")
            first = self.drv_at[slot]
            where = f" (first driven at line {self.report.line(first)})" if first is not None else ""
            self.report.fail(at, f"net '{name}' has two drivers{where}")
        self.drv[slot] = driver
        self.drv_at[slot] = at

    # -- instances lowered once, copied for the others ------------------------------
    def record(self, prefix, r0, declared, connected, r1_start, clocks_from, ports):
        """A :class:`Template` of an instance whose whole subtree is lowered: its
        own nets are the slots ``r0`` (a range) with drivers ``declared`` when
        made and ``connected`` once its parent connected them; everything its
        subtree made is from ``r1_start`` on.  ``None`` when a slot there is
        not named under ``prefix`` or a driver reaches outside (then it is not
        copied)."""
        s0, e0 = r0
        s1, e1 = r1_start, len(self.name)
        n0, n = e0 - s0, len(prefix)

        def local(x):
            if x < 2:
                return -1 - x
            if s0 <= x < e0:
                return x - s0
            if s1 <= x < e1:
                return n0 + x - s1
            raise LookupError

        tpl = Template()
        try:
            for x in list(range(s0, e0)) + list(range(s1, e1)):
                name = self.name[x]
                if not name.startswith(prefix):
                    return None
                d = self.drv[x]
                if s0 <= x < e0:
                    i = x - s0
                    made = d is not connected[i]
                    d = d if made else declared[i]
                    tpl.names.append((name[n:], False, self.at[x], d is not None and made))
                else:
                    tpl.names.append((name[n:], self.gen[x], self.at[x], False))
                tpl.drivers.append(None if d is None else _relocate(d, local))
                tpl.drv_at.append(self.drv_at[x])
            for x, (at, port, path) in self.unconnected.items():
                if s0 <= x < e0 or s1 <= x < e1:
                    tpl.unconnected.append((local(x), at, port, path[n:]))
            tpl.clocks = [local(c) for c in self.clock_slots[clocks_from:]]
        except LookupError:
            return None
        tpl.n0 = n0
        tpl.ports = ports
        return tpl

    def make_nets(self, tpl, prefix):
        """The slots of a copy's own nets, with the drivers they get when made;
        returns the first one."""
        b0 = len(self.name)
        new_slot = self.new_slot
        for (name, gen, at, made), d, dat in zip(tpl.names[:tpl.n0], tpl.drivers, tpl.drv_at):
            s = new_slot(prefix + name, at, gen)
            if d is not None and not made:  # a supply net: tied to its constant
                self.drv[s], self.drv_at[s] = ("a", -1 - d[1]), dat
        return b0

    def copy(self, tpl, prefix, b0):
        """Everything a copy's subtree makes, its own nets at ``b0`` on."""
        n0 = tpl.n0
        b1 = len(self.name)
        new_slot = self.new_slot
        for name, gen, at, _ in tpl.names[n0:]:
            new_slot(prefix + name, at, gen)

        def place(x):
            return -1 - x if x < 0 else b0 + x if x < n0 else b1 + x - n0

        drv, drv_at = self.drv, self.drv_at
        for x, (d, dat) in enumerate(zip(tpl.drivers, tpl.drv_at)):
            if d is None or (x < n0 and not tpl.names[x][3]):
                continue
            s = place(x)
            nd = _relocate(d, place)
            if drv[s] is not None:
                self.drive(s, nd, dat)  # reports the second driver
            drv[s], drv_at[s] = nd, dat
        for x, at, port, path in tpl.unconnected:
            self.unconnected[place(x)] = (at, port, prefix + path)
        for c in tpl.clocks:
            c = place(c)
            if c not in self.clock_slots:
                self.clock_slots.append(c)

    # -- logic nodes ------------------------------------------------------
    def node(self, k, table, ops, at, hint):
        """A bit carrying ``table`` over the bits ``ops``; constants and
        repeated inputs are folded, so the result may be an existing bit."""
        fast = True
        seen = set()
        for b in ops:
            if b < 2 or b in seen:
                fast = False
                break
            seen.add(b)
        if not fast:
            k, table, ops = simplify(k, table, ops)
            if k == 0:
                return table & 1
            if k == 1 and table == 0b10:
                return ops[0]
        s = self.new_slot(hint, at, True)
        self.drv[s] = ("l", tuple(ops), _func(k, table))
        self.drv_at[s] = at
        return s

    def buffer(self, b, at, hint):
        """A real buffer node (a ``buf`` primitive is a gate of its own)."""
        if b < 2:
            return b
        s = self.new_slot(hint, at, True)
        self.drv[s] = ("l", (b,), _func(1, 0b10))
        self.drv_at[s] = at
        return s

    def inv(self, b, at, hint):
        return self.node(1, T_INV, [b], at, hint)

    def tree(self, bits, t2, at, hint, t_last=None):
        """Balanced tree of two-input nodes ``t2`` over ``bits`` (at least
        one); the root uses ``t_last`` (for an inverting reduction) -- a
        single bit gets ``t_last`` as an inverter when given."""
        if len(bits) == 1:
            return bits[0] if t_last is None else self.inv(bits[0], at, hint)
        level = list(bits)
        while len(level) > 2:
            nxt = [self.node(2, t2, [level[i], level[i + 1]], at, hint) for i in range(0, len(level) - 1, 2)]
            if len(level) % 2:
                nxt.append(level[-1])
            level = nxt
        return self.node(2, t_last if t_last is not None else t2, level, at, hint)

    def gate(self, kind, ins, at, hint):
        """One bit for an n-input gate primitive; wider than a table: a tree."""
        if len(ins) <= MAX_TABLE_INPUTS:
            return self.node(len(ins), gate_table(kind, len(ins)), ins, at, hint)
        base = {"and": "and", "nand": "and", "or": "or", "nor": "or", "xor": "xor", "xnor": "xor"}[kind]
        t2 = {"and": T_AND2, "or": T_OR2, "xor": T_XOR2}[base]
        last = {"nand": T_NAND2, "nor": T_NOR2, "xnor": T_XNOR2}.get(kind)
        return self.tree(ins, t2, at, hint, last)

    def mux(self, c, t, e, at, hint):
        if c < 2:
            return t if c else e
        if t == e:
            return t
        return self.node(3, T_MUX, [c, t, e], at, hint)

    def add(self, a, b, at, hint, carry=0):
        out = []
        for x, y in zip(a, b):
            out.append(self.node(3, T_XOR3, [x, y, carry], at, hint))
            if len(out) < len(a):
                carry = self.node(3, T_MAJ, [x, y, carry], at, hint)
        return out

    def subtract(self, a, b, at, hint):
        out = []
        br = 0
        for x, y in zip(a, b):
            out.append(self.node(3, T_XOR3, [x, y, br], at, hint))
            if len(out) < len(a):
                br = self.node(3, T_BORROW, [x, y, br], at, hint)
        return out

    def borrow(self, a, b, at, hint):
        """1 where ``a < b`` (unsigned, same widths)."""
        br = 0
        for x, y in zip(a, b):
            br = self.node(3, T_BORROW, [x, y, br], at, hint)
        return br

    # -- level-sensitive blocks -----------------------------------------------
    def constant_cone(self, b, limit=MAX_TABLE_INPUTS):
        """``b`` itself, or 0/1 when the logic made for it here is constant over
        its leaves (nets with a name, inputs, storage); at most ``limit`` leaves."""
        inner, leaves, seen = [], [], {b}
        stack = [b]
        while stack:
            s = stack.pop()
            d = self.drv[s]
            if s >= 2 and self.gen[s] and d is not None and d[0] == "l":
                inner.append(s)
                for f in d[1]:
                    if f not in seen:
                        seen.add(f)
                        stack.append(f)
            else:
                leaves.append(s)
                if len(leaves) > limit:
                    return b
        # a node made here is always numbered after its fan-ins: slot order is topological
        order = sorted(inner)
        k = len(leaves)
        full = (1 << (1 << k)) - 1
        val = {s: (full if s == 1 else 0) if s < 2 else var_mask(k, j) for j, s in enumerate(leaves)}
        for s in order:
            d = self.drv[s]
            val[s] = d[2].eval_words([val[f] for f in d[1]], full)
        if val[b] == 0:
            return 0
        if val[b] == full:
            return 1
        return b

    def fold_tree(self, v, leaf, at, hint):
        """Fold a tree ``(c, t, e)`` of a level-sensitive block bottom-up:
        ``leaf(x)`` gives the bit of a leaf and ``None`` for one to skip; a
        node with one side skipped is its other side, else a multiplexer.
        Iterative: chains of ``else if`` make deep trees."""
        vals: list = []
        stack = [(v, False)]
        while stack:
            x, done = stack.pop()
            if not isinstance(x, tuple):
                vals.append(leaf(x))
            elif not done:
                stack.append((x, True))
                stack.append((x[2], False))
                stack.append((x[1], False))
            else:
                e = vals.pop()
                t = vals.pop()
                vals.append(e if t is None else t if e is None else self.mux(x[0], t, e, at, hint))
        return vals[0]

    def enable(self, v, at, hint):
        """Bit that is 1 where the tree ``v`` assigns (reaches a non-HOLD leaf)."""
        return self.fold_tree(v, lambda x: 0 if x == HOLD else 1, at, hint) if isinstance(v, tuple) \
            else (0 if v == HOLD else 1)

    def latch_data(self, v, at, hint):
        """The value a latch with tree ``v`` takes while open (HOLD leaves skipped)."""
        if not isinstance(v, tuple):
            return v
        return self.fold_tree(v, lambda x: None if x == HOLD else x, at, hint)

    # -- the netlist ---------------------------------------------------------------
    def finish(self, design_name: str, where: Callable[[Any], Where]) -> Netlist | None:
        """The Netlist of everything driven; ``where(at)`` gives ``(file, line, col)``.
        Returns ``None`` when an error was found on the way."""
        nslots = len(self.name)
        root_of = self._classes()
        drv = self.drv
        real: dict[int, int] = {}  # net (its root slot) -> the slot that drives it
        for s in range(nslots):
            d = drv[s]
            if d is not None and d[0] != "a":
                real[root_of[s]] = s
        refs, dead = self._sweep(root_of, real)
        reported = set()
        errors = False
        for s, (at, port, path) in self.unconnected.items():
            r = root_of[s]
            if r not in real and refs[r] > 0 and (path, port) not in reported:
                reported.add((path, port))
                errors = True
                self.report.error(at, f"input '{port}' of instance '{path}' is not connected, but the "
                                      "instance reads it; connect it (an open input floats) or tie it "
                                      "to 1'b0 or 1'b1")
        if errors:
            return None
        best, net_name = self._names(root_of)
        nl = Netlist(design_name)
        for s in self.top_inputs:
            nl.add_input(self.name[s], where=where(self.at[s]))
        needed_consts: set[int] = set()
        for r in sorted(real):
            if r in dead or r < 2:
                continue
            s = real[r]
            d = drv[s]
            assert d is not None  # (``real`` holds driven slots only)
            if d[0] == "i":
                continue
            name = net_name[r]
            at = where(self.at[best[r][1]])
            if d[0] == "c":
                nl.add_constant(name, d[1], where=at)
            elif d[0] == "l":
                fr = [root_of[f] for f in d[1]]
                func = d[2]
                if any(r_ < 2 for r_ in fr) or len(set(fr)) < len(fr):
                    # a constant or a repeated net arrived through a port: fold it here
                    k, table, fr = simplify(func.n, func.table(), fr)
                    func = _func(k, table)
                nl.add_logic(name, [net_name[r_] for r_ in fr], func, where=at)
            else:
                _, dbit, kind, ctrl, init = d
                nl.add_storage(name, _fanin(dbit, root_of, net_name, needed_consts), kind,
                               _fanin(ctrl, root_of, net_name, needed_consts), init, where=at)
        for s in self.top_outputs:
            name = self.name[s]
            r = root_of[s]
            at = where(self.at[s])
            if r < 2:
                if name not in nl.nodes:
                    nl.add_constant(name, r, where=at)
            elif net_name[r] != name and r in real:
                nl.add_logic(name, [net_name[r]], _func(1, 0b10), where=at)
            nl.add_output(name, where=at)
        for r in sorted(needed_consts):
            cname = _const_net(r)
            if cname not in nl.nodes:
                nl.add_constant(cname, r)
        # origins for nets that are used but never driven (the netlist check reports them)
        for r, nm in net_name.items():
            if nm not in nl.origin:
                nl.origin[nm] = where(self.at[best[r][1]])
        nl.clocks = []
        for c in self.clock_slots:
            nm = net_name.get(root_of[c])
            if nm and nm not in nl.clocks:
                nl.clocks.append(nm)
        return nl

    def _classes(self):
        """Root slot of each slot's net (slots joined by ``"a"`` drivers)."""
        nslots = len(self.name)
        parent = list(range(nslots))

        def find(x):
            root = x
            while parent[root] != root:
                root = parent[root]
            while parent[x] != root:
                parent[x], x = root, parent[x]
            return root

        for s in range(nslots):
            d = self.drv[s]
            if d is not None and d[0] == "a":
                a, b = find(s), find(d[1])
                if a != b:
                    # keep the lower slot as root (deterministic)
                    if a < b:
                        parent[b] = a
                    else:
                        parent[a] = b
        return [find(s) for s in range(nslots)]

    def _sweep(self, root_of, real):
        """References to each net, and the nets of made logic nobody reads."""
        drv = self.drv
        refs = [0] * len(self.name)

        def fanin_slots(s):
            d = drv[s]
            if d[0] == "l":
                return d[1]
            if d[0] == "s":
                return (d[1], d[3])
            return ()

        for s in real.values():
            for f in fanin_slots(s):
                refs[root_of[f]] += 1
        for s in self.top_outputs:
            refs[root_of[s]] += 1
        named = {root_of[s] for s in range(2, len(self.name)) if not self.gen[s]}
        dead = set()
        work = [r for r in real if refs[r] == 0 and r not in named and r >= 2]
        while work:
            r = work.pop()
            if r in dead:
                continue
            dead.add(r)
            for f in fanin_slots(real[r]):
                fr = root_of[f]
                refs[fr] -= 1
                if refs[fr] == 0 and fr in real and fr not in named and fr >= 2:
                    work.append(fr)
        return refs, dead

    def _names(self, root_of):
        """Name of each net: top input > top output > the user's net highest in
        the hierarchy > a made-up ``<hint>$<k>``."""
        best: dict = {}
        rank_top_in = {s: i for i, s in enumerate(self.top_inputs)}
        rank_top_out = {s: i for i, s in enumerate(self.top_outputs)}
        for s in range(2, len(self.name)):
            r = root_of[s]
            if s in rank_top_in:
                key = (0, rank_top_in[s], 0)
            elif s in rank_top_out:
                key = (1, rank_top_out[s], 0)
            elif not self.gen[s]:
                key = (2, self.name[s].count("/"), s)
            else:
                key = (3, 0, s)
            cur = best.get(r)
            if cur is None or key < cur[0]:
                best[r] = (key, s)
        used_names = set(self.user_names)
        counters: dict = {}
        net_name = {}
        for r, (key, s) in best.items():
            if key[0] < 3:
                net_name[r] = self.name[s]
                continue
            hint = self.name[s]
            k = counters.get(hint, 0)
            while True:
                k += 1
                cand = f"{hint}${k}"
                if cand not in used_names:
                    break
            counters[hint] = k
            used_names.add(cand)
            net_name[r] = cand
        return best, net_name


class Template:
    """An instance's subtree as lowered once, in slot numbers of its own
    (its nets first, then what its subtree made); see :meth:`BitStore.record`."""

    __slots__ = ("clocks", "drivers", "drv_at", "n0", "names", "ports", "unconnected")

    def __init__(self):
        self.names: list = []  # (name under the instance, made here, position, body-made driver)
        self.drivers: list = []
        self.drv_at: list = []
        self.unconnected: list = []
        self.clocks: list = []
        self.n0 = 0
        self.ports: list = []  # (name, is an input, slots of its own) per port, in order


def _relocate(d, place):
    k = d[0]
    if k == "a":
        return ("a", place(d[1]))
    if k == "l":
        return ("l", tuple(place(f) for f in d[1]), d[2])
    if k == "s":
        return ("s", place(d[1]), d[2], place(d[3]), d[4])
    raise LookupError  # an input or a constant slot cannot be inside an instance


def shape(v):
    """A flat key of a tree's conditions and of where it holds (pre-order), so
    that bits of one block with the same enable share its logic."""
    out = []
    stack = [v]
    while stack:
        x = stack.pop()
        if isinstance(x, tuple):
            out.append(x[0])
            stack.append(x[2])
            stack.append(x[1])
        else:
            out.append(-2 if x == HOLD else -3)
    return tuple(out)


def _fanin(b, root_of, net_name, needed):
    r = root_of[b]
    if r < 2:
        needed.add(r)
        return _const_net(r)
    return net_name[r]


def _const_net(v):
    return "$const1" if v else "$const0"


def simplify(k, table, ops):
    """Fold constant and repeated inputs out of a small function and drop
    the inputs it does not depend on.  Returns ``(k, table, ops)``."""
    uniq: list[int] = []
    where: dict[int, int] = {}
    for b in ops:
        if b >= 2 and b not in where:
            where[b] = len(uniq)
            uniq.append(b)
    n = len(uniq)
    new = 0
    for m in range(1 << n):
        idx = 0
        for j, b in enumerate(ops):
            v = b if b < 2 else (m >> where[b]) & 1
            idx |= v << j
        if (table >> idx) & 1:
            new |= 1 << m
    j = 0
    while j < n:
        full = (1 << (1 << n)) - 1
        mask = var_mask(n, j)
        low = new & ~mask & full
        high = (new & mask) >> (1 << j)
        if low == high:
            # remove input j: keep the entries where it is 0, packed
            packed = 0
            out = 0
            for m in range(1 << n):
                if not (m >> j) & 1:
                    if (new >> m) & 1:
                        packed |= 1 << out
                    out += 1
            new = packed
            uniq.pop(j)
            n -= 1
        else:
            j += 1
    return n, new, uniq
