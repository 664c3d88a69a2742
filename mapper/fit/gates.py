"""Cut-based mapping of a design onto the logic cells of a gate target.

The published methods this follows:

* subject graph: an AIG with structural hashing and complemented edges
  (:mod:`mapper.logic.aig`);
* k-feasible priority cuts with truth tables (Mishchenko, Cho, Chatterjee,
  Brayton, ICCAD 2007) -- :mod:`mapper.fit.cuts`;
* Boolean matching of each cut's function, in both output phases, against
  the target's match table (:mod:`mapper.fit.library`: exact NAND2 / NOR2
  chains -- proved minima, or best known where a 4-input class is not yet
  proved -- or supergates of the target's cells);
* cover selection: a delay-oriented pass, then area-flow passes and exact
  local area recovery with reference counting (Mishchenko, Chatterjee,
  Brayton, "Improvements to technology mapping for LUT-based FPGAs", IEEE
  TCAD 26(2), 2007), where every node is matched in both phases and the
  phase each signal is built in is chosen by the cover itself (an inverter
  is one more candidate for a phase), not one gate at a time;
* structural choices (Chatterjee, Mishchenko, Brayton, Wang, Kam, "Reducing
  structural bias in technology mapping", ICCAD 2005) --
  :mod:`mapper.fit.choices`: other shapes of exclusive-ORs and full adders
  whose cuts join the original node's, and whole full adders switched to a
  shared shape together during exact area recovery.

The result is a list of cell uses over named nets (:class:`CellUse`);
:mod:`mapper.fit.pack` places them in slots of parts.
"""
from __future__ import annotations

import logging
from dataclasses import dataclass, field

from ..logic.aig import AIG, from_netlist
from ..logic.minimize import min_cover
from .choices import structural_choices
from .cuts import enumerate_cuts
from .library import GND, VCC, CellLibrary, Impl

__all__ = ["CellUse", "Mapping", "Subject", "cell_depth", "map_logic", "subject_graph"]

log = logging.getLogger(__name__)

INF = float("inf")
#: AND nodes (with choices) above which a design maps in its quick mode
BIG = 5000


@dataclass
class CellUse:
    """One cell in the mapped logic: ``cell`` with ``args`` nets on its
    inputs (in the cell's input order) driving net ``out``."""

    cell: str
    args: tuple
    out: str
    origin: str | None = None
    group: str | None = None


@dataclass
class Mapping:
    """Mapped combinational logic plus what the packer needs to know."""

    cells: list
    #: design output -> net (a cell output, an input, ``VCC`` or ``GND``)
    outputs: dict
    #: storage net -> (d net, control net or None) in the mapped logic
    storage_nets: dict = field(default_factory=dict)
    area: float = 0.0
    depth: int = 0


class _Choice:
    __slots__ = ("impl", "leaves", "inv", "af", "arr")

    def __init__(self, impl, leaves, inv, af, arr):
        self.impl = impl
        self.leaves = leaves
        self.inv = inv  # True: built as an inverter of the other phase
        self.af = af
        self.arr = arr


@dataclass
class Subject:
    """The subject graph of a design, built once and mapped many times."""

    aig: AIG
    litmap: dict
    boundary: frozenset
    roots: list
    choices: dict = field(default_factory=dict)
    order: list | None = None
    groups: list = field(default_factory=list)
    trees: bool = False


def subject_graph(design, keep=(), choices: bool = True, trees: bool = False) -> Subject:
    """The AIG of ``design``'s logic.

    Every node of a few inputs is built from its smallest two-level cover
    (:mod:`mapper.logic.minimize`) unless ``keep`` names nets to keep (their
    hazard-free covers stay as written); structural choices are added unless
    ``keep`` is given or ``trees`` asks for tree-shaped matches only (see
    :func:`map_logic`)."""
    # kept nets come from hazard-free covers: those nodes keep their own cover
    aig, litmap = from_netlist(design, cover=None if keep else min_cover)
    boundary = frozenset(litmap[n] >> 1 for n in keep if n in litmap and litmap[n] > 1)
    roots = [lit for _, lit in aig.outputs]
    for latch in aig.latches:
        roots.append(latch.next)
        if latch.control is not None:
            roots.append(latch.control)
    if choices and not boundary and not trees:
        alts, order, groups, inner = structural_choices(aig)
        return Subject(aig, litmap, inner, roots, alts, order, groups)
    return Subject(aig, litmap, boundary, roots, trees=trees)


def map_logic(design, lib: CellLibrary, k: int = 4, cuts_per_node: int = 8,
              area_passes: int = 3, seed_names: bool = True, keep=(), choices: bool = True,
              subject: Subject | None = None, trees: bool = False) -> Mapping:
    """Map the combinational logic of ``design`` onto the cells of ``lib``.

    Storage elements stay as they are: their outputs are free inputs of the
    mapped logic and their data/control nets are extra roots.  Nets named
    in ``keep`` stay signals of their own in the cover (no cut spans them),
    so logic that is functionally redundant there -- a consensus term added
    against a hazard -- survives mapping.  ``trees`` accepts only tree-shaped
    matches (see :func:`_is_tree`), so a hazard-free cover stays so.
    ``choices`` adds other shapes of
    adders and exclusive-ORs for the cover to pick from
    (:mod:`mapper.fit.choices`).  ``subject`` is the design's subject graph
    from :func:`subject_graph` when the caller maps one design many times
    (``keep`` and ``choices`` are then the subject's).
    """
    if subject is None:
        subject = subject_graph(design, keep, choices, trees)
    aig = subject.aig
    sweeps = 2
    if aig.num_ands > BIG:  # big designs: fewer cuts and passes keep the run short
        cuts_per_node = min(cuts_per_node, 4)
        area_passes = min(area_passes, 1)
        sweeps = 1
    mapper = _Mapper(aig, lib, k, cuts_per_node, subject.boundary, subject.choices, subject.order,
                     subject.groups)
    mapper.sweeps = sweeps
    mapper.trees = subject.trees
    mapper.run(subject.roots, area_passes)
    names: dict = {}
    if seed_names:
        for net, lit in subject.litmap.items():
            if lit > 1:
                names.setdefault((lit >> 1, lit & 1), net)
    return mapper.instantiate(design, subject.litmap, names)


class _Mapper:
    def __init__(self, aig: AIG, lib: CellLibrary, k: int, limit: int, boundary=frozenset(),
                 choices=None, order=None, groups=()):
        self.aig = aig
        self.choices = choices or {}
        self.order = order
        self.groups = groups
        self.boundary = boundary
        self.lib = lib
        self.k = k
        self.limit = limit
        nv = aig.num_vars
        self.refs = [max(1, r) for r in aig.fanout_counts()]
        self.best: list[list[_Choice | None]] = [[None, None] for _ in range(nv)]
        inv = lib.inverter()
        self.inv_cost = inv.cost if inv is not None else INF
        self.inv_depth = inv.depth if inv is not None else 0
        for v in range(nv):
            if not aig.is_and(v):
                self.best[v][0] = _Choice(None, None, False, 0.0, 0)
                self.best[v][1] = _Choice(None, None, True, self.inv_cost, self.inv_depth)
        self.cuts: dict = {}
        self.mode = "delay"
        self.sweeps = 2
        self.trees = False
        self._lk: dict = {}
        self._memo: dict = {}

    # -- evaluation of one node --------------------------------------------
    def _phase_vectors(self, leaves):
        """Leaf phases to try: all positive, and each leaf in its cheaper phase
        (a NAND-built signal is cheapest complemented)."""
        best = self.best
        cheap = tuple(1 if best[l][1].af < best[l][0].af else 0 for l in leaves)
        if 1 in cheap:
            return ((0,) * len(leaves), cheap)
        return ((0,) * len(leaves),)

    def _lookup(self, n, tt):
        """The library's implementation of ``tt`` over ``n`` leaves (memoized).

        With :attr:`trees` set, a function whose cheapest implementation is
        not tree-shaped gets ``None``: the cut is skipped rather than built
        from a costlier tree (the fan-in cut of a node always matches), so
        hazard-free builds may use more gates than the fewest trees need.
        """
        key = (n << 17) | tt
        lk = self._lk
        if key in lk:
            return lk[key]
        impl = self.lib.lookup(n, tt)
        if impl is not None and self.trees and not _is_tree(impl, n):
            impl = None
        lk[key] = impl
        return impl

    def _eval(self, leaves, table):
        """The best match of one cut in each output phase, as
        ``(sort key, impl, leaf phases, af, arr)`` or ``None``."""
        best_ = self.best
        refs = self.refs
        lk = self._lk
        delay = self.mode == "delay"
        n = len(leaves)
        full = _FULL[n]
        c0 = c1 = None
        zero = _ZEROS[n]
        cheap = tuple([1 if best_[l][1].af < best_[l][0].af else 0 for l in leaves])
        for pv in ((zero, cheap) if cheap != zero else (zero,)):
            lf = 0.0
            la = 0
            for l, p in zip(leaves, pv):
                c = best_[l][p]
                lf += c.af / refs[l]
                if c.arr > la:
                    la = c.arr
            t0 = flip_inputs(table, n, pv) if 1 in pv else table
            key0 = (n << 17) | t0
            impl = lk[key0] if key0 in lk else self._lookup(n, t0)
            if impl is not None:
                af = impl.cost + lf
                arr = la + impl.depth
                key = (arr, af) if delay else (af, arr)
                if c0 is None or key < c0[0]:
                    c0 = (key, impl, pv, af, arr)
            t1 = t0 ^ full
            key1 = (n << 17) | t1
            impl = lk[key1] if key1 in lk else self._lookup(n, t1)
            if impl is not None:
                af = impl.cost + lf
                arr = la + impl.depth
                key = (arr, af) if delay else (af, arr)
                if c1 is None or key < c1[0]:
                    c1 = (key, impl, pv, af, arr)
        return c0, c1

    def _cut_cost(self, v, leaves, table):
        """Priority of a cut while cuts are enumerated: its best area flow
        (the evaluation is kept for :meth:`_match`)."""
        e = self._eval(leaves, table)
        self._memo[(leaves, table)] = e
        c0, c1 = e
        a = c0[3] if c0 is not None else INF
        if c1 is not None and c1[3] < a:
            a = c1[3]
        return a

    def _match(self, v):
        memo = self._memo
        cand: list = [None, None]
        for leaves, table in self.cuts[v]:
            if len(leaves) == 1 and leaves[0] == v:
                continue
            e = memo.get((leaves, table)) if memo else None
            if e is None:
                e = self._eval(leaves, table)
            for p in (0, 1):
                c = e[p]
                if c is not None and (cand[p] is None or c[0] < cand[p][0][0]):
                    cand[p] = (c, leaves)
        if memo:
            memo.clear()
        cands = [None if c is None else _Choice(c[0][1], tuple(zip(c[1], c[0][2])), False, c[0][3], c[0][4])
                 for c in cand]
        # a phase may come from the other (as matched by a cut) through an inverter
        direct = list(cands)
        for p in (0, 1):
            o = direct[1 - p]
            if o is not None and self.inv_cost < INF:
                ch = _Choice(None, None, True, o.af + self.inv_cost, o.arr + self.inv_depth)
                if self._better(ch, cands[p]):
                    cands[p] = ch
        if cands[0] is None and cands[1] is None:
            raise RuntimeError(f"no match for node {v}")
        self.best[v] = cands

    def _better(self, a, b):
        if b is None:
            return True
        if self.mode == "delay":
            return (a.arr, a.af) < (b.arr, b.af)
        return (a.af, a.arr) < (b.af, b.arr)

    def _after(self, v):
        if self.aig.is_and(v):
            self._match(v)

    # -- passes ------------------------------------------------------------
    def run(self, roots, area_passes):
        aig = self.aig
        cone = self._cone(roots)
        self.mode = "delay"
        self.cuts = {}
        enumerate_cuts(aig, self.k, self.limit, cost=self._cut_cost, after=self._after, cuts=self.cuts,
                       boundary=self.boundary, nodes=self.order, choices=self.choices)
        self.roots = roots
        self.mode = "area"
        for _ in range(area_passes):
            used = self._cover_refs(roots)
            # blend estimated and actual references (area flow of the next pass)
            for v in range(aig.num_vars):
                r = used.get(v, 0)
                self.refs[v] = max(1.0, (self.refs[v] + 2 * r) / 3.0)
            for v in cone:
                self._match(v)
        self._exact_area(roots, cone)

    def _cone(self, roots) -> list:
        """AND variables the roots may use (through fan-ins and choices), in
        the enumeration order."""
        if not self.choices:
            return self.aig.cone(roots)
        f0, f1 = self.aig.f0, self.aig.f1
        seen = set()
        stack = [r >> 1 for r in roots]
        while stack:
            v = stack.pop()
            if v in seen or f0[v] < 0:
                continue
            seen.add(v)
            stack.append(f0[v] >> 1)
            stack.append(f1[v] >> 1)
            stack.extend(lit >> 1 for lit in self.choices.get(v, ()))
        return [v for v in self.order if v in seen]

    def _cover_refs(self, roots):
        """Variables' references in the current cover (leaf uses + roots)."""
        refs: dict = {}
        need = set()
        stack = []
        for lit in roots:
            v, p = lit >> 1, lit & 1
            refs[v] = refs.get(v, 0) + 1
            if (v, p) not in need:
                need.add((v, p))
                stack.append((v, p))
        while stack:
            v, p = stack.pop()
            ch = self.best[v][p]
            if ch.inv:
                nxt = [(v, 1 - p)]
            elif ch.leaves is None:
                continue
            else:
                nxt = list(ch.leaves)
                for l, _ in ch.leaves:
                    refs[l] = refs.get(l, 0) + 1
            for q in nxt:
                if q not in need:
                    need.add(q)
                    stack.append(q)
        self.need = need
        return refs

    def _exact_area(self, roots, cone):
        """Exact local area recovery: choose each needed node-phase's match
        by the area it really adds given everything else in the cover."""
        # reference counts of node-phases in the cover
        refc: dict = {}

        def deps(vp):
            ch = self.best[vp[0]][vp[1]]
            if ch.inv:
                return self.inv_cost, ((vp[0], 1 - vp[1]),)
            if ch.leaves is None:
                return 0.0, ()
            return ch.impl.cost, ch.leaves

        def ref(vp):
            """Add a reference; returns the area newly paid (iterative)."""
            area = 0.0
            stack = [vp]
            while stack:
                x = stack.pop()
                c = refc.get(x, 0)
                refc[x] = c + 1
                if c == 0:
                    a, ds = deps(x)
                    area += a
                    stack.extend(ds)
            return area

        def deref(vp):
            area = 0.0
            stack = [vp]
            while stack:
                x = stack.pop()
                c = refc[x] - 1
                refc[x] = c
                if c == 0:
                    a, ds = deps(x)
                    area += a
                    stack.extend(ds)
            return area

        for lit in roots:
            ref((lit >> 1, lit & 1))
        for _ in range(self.sweeps if self.groups else 1):
            self._area_sweep(cone, refc, ref, deref)
            if self.groups:
                self._group_moves(refc, ref, deref)
        self._cover_refs(roots)

    def _phase_vectors_exact(self, leaves, refc):
        """Leaf phases for exact area: those of :meth:`_phase_vectors`, and
        each leaf in a phase the cover already builds (already paid for)."""
        pvs = list(self._phase_vectors(leaves))
        paid = tuple(0 if refc.get((l, 0)) else (1 if refc.get((l, 1)) else pvs[-1][i])
                     for i, l in enumerate(leaves))
        if paid not in pvs:
            pvs.append(paid)
        return pvs

    def _area_sweep(self, cone, refc, ref, deref):
        """One pass of exact local area recovery over the cover."""
        for v in cone:
            for p in (0, 1):
                vp = (v, p)
                if not refc.get(vp):
                    continue
                old = self.best[v][p]
                # free this choice's cone, try alternatives, keep the cheapest
                count = refc[vp]
                refc[vp] = 1
                base = deref(vp)
                best_ch, best_area = old, base
                for leaves, table in self.cuts[v]:
                    if leaves == (v,):
                        continue
                    n = len(leaves)
                    for pv in self._phase_vectors_exact(leaves, refc):
                        if any(self.best[l][q] is None for l, q in zip(leaves, pv)):
                            continue
                        t0 = flip_inputs(table, n, pv)
                        tt = t0 if p == 0 else t0 ^ ((1 << (1 << n)) - 1)
                        impl = self._lookup(n, tt)
                        if impl is None:
                            continue
                        ch = _Choice(impl, tuple(zip(leaves, pv)), False, 0.0, 0)
                        self.best[v][p] = ch
                        area = ref(vp)
                        deref(vp)
                        if area < best_area - 1e-9:
                            best_ch, best_area = ch, area
                if not old.inv and self.inv_cost < INF and refc.get((v, 1 - p), 0) > 0:
                    ch = _Choice(None, None, True, 0.0, 0)
                    if self.best[v][1 - p].inv is False:
                        self.best[v][p] = ch
                        area = ref(vp)
                        deref(vp)
                        if area < best_area - 1e-9:
                            best_ch, best_area = ch, area
                self.best[v][p] = best_ch
                ref(vp)
                refc[vp] = count

    def _group_moves(self, refc, ref, deref):
        """Switch whole groups of nodes (a full adder's sum and carry) to a
        shared shape together, when that lowers the exact area.

        One node at a time, a shared shape never pays: its common gates are
        charged to whichever output moves first.  Each group option names
        the nodes and the literal of the shape each becomes (a wire to it).
        """
        pos = {v: i for i, v in enumerate(self.order)}
        wire = self.lib.lookup(1, 0b10)

        def swap(members, new):
            """Replace the choices of ``members`` (node-phases) by ``new``;
            returns ``(area freed, area paid)``."""
            ext = {}
            freed = 0.0
            # later nodes first, and an inverter-built phase before the phase
            # it inverts: each deref then sees only references from outside
            best = self.best
            for vp in sorted(members, key=lambda x: (-pos[x[0]], not best[x[0]][x[1]].inv)):
                e = refc.get(vp, 0)
                ext[vp] = e
                if e:
                    refc[vp] = 1
                    freed += deref(vp)
            for vp, ch in new.items():
                self.best[vp[0]][vp[1]] = ch
            paid = 0.0
            for vp in sorted(members, key=lambda x: (pos[x[0]], best[x[0]][x[1]].inv)):
                if ext[vp]:
                    before = refc.get(vp, 0)
                    paid += ref(vp)
                    refc[vp] = before + ext[vp]
            return freed, paid

        for options in self.groups:
            members = [(v, p) for v, _ in options[0] for p in (0, 1) if refc.get((v, p))]
            if not members or any(len(o) != len(options[0]) for o in options):
                continue
            old = {vp: self.best[vp[0]][vp[1]] for vp in members}
            best_gain, best_new = 1e-9, None
            for option in options:
                lit_of = dict(option)
                if any(v not in lit_of for v, _ in members):
                    continue
                new = {}
                for v, p in members:
                    u, q = lit_of[v] >> 1, p ^ (lit_of[v] & 1)
                    alt = self.best[u][q]
                    if alt is None:
                        break
                    new[(v, p)] = _Choice(wire, ((u, q),), False, alt.af, alt.arr)
                if len(new) != len(members):
                    continue
                freed, paid = swap(members, new)
                swap(members, old)
                if freed - paid > best_gain:
                    best_gain, best_new = freed - paid, new
            if best_new is not None:
                swap(members, best_new)

    # -- instantiation -------------------------------------------------------
    def instantiate(self, design, litmap, names) -> Mapping:
        aig = self.aig
        lib = self.lib
        sym = {name: _symmetric(cd.function) for name, cd in lib.cells.items()}
        cells: list = []
        same_gate: dict = {}
        taken = set(design.inputs) | {"VCC", "GND"}
        taken.update(design.storage())
        netof: dict = {}
        counter = [0]

        def fresh(pref=None):
            if pref is not None and pref not in taken:
                taken.add(pref)
                return pref
            while True:
                counter[0] += 1
                name = f"_n{counter[0]}"
                if name not in taken and name not in design.nodes:
                    taken.add(name)
                    return name

        for v in range(aig.num_vars):
            if not aig.is_and(v) and v:
                netof[(v, 0)] = aig.names[v]

        def gate(cell, args, pref, origin):
            key = (cell, tuple(sorted(args)) if sym[cell] else tuple(args))
            out = same_gate.get(key)
            if out is None:
                out = fresh(pref)
                same_gate[key] = out
                cells.append(CellUse(cell, tuple(args), out, origin))
            return out

        def build(vp):
            # iterative post-order over the needed node-phases
            stack = [(vp, False)]
            while stack:
                (v, p), ready = stack.pop()
                if (v, p) in netof:
                    continue
                if v == 0:
                    netof[(0, p)] = "VCC" if p else "GND"
                    continue
                ch = self.best[v][p]
                deps = [(v, 1 - p)] if ch.inv else list(ch.leaves)
                if not ready:
                    stack.append(((v, p), True))
                    for d in deps:
                        if d not in netof:
                            stack.append((d, False))
                    continue
                pref = names.get((v, p))
                if ch.inv:
                    impl = self._inverter()
                    leaf_nets = [netof[(v, 1 - p)]]
                else:
                    impl = ch.impl
                    leaf_nets = [netof[lp] for lp in ch.leaves]
                netof[(v, p)] = self._emit(impl, leaf_nets, gate, pref)

        for lit in self.roots:
            build((lit >> 1, lit & 1))
        outputs = {}
        for name, lit in aig.outputs:
            outputs[name] = netof[(lit >> 1, lit & 1)] if lit > 1 else ("VCC" if lit else "GND")
        storage_nets = {}
        for latch in aig.latches:
            d = latch.next
            dn = netof[(d >> 1, d & 1)] if d > 1 else ("VCC" if d else "GND")
            cn = None
            if latch.control is not None:
                c = latch.control
                cn = netof[(c >> 1, c & 1)] if c > 1 else ("VCC" if c else "GND")
            storage_nets[latch.name] = (dn, cn)
        area = sum(lib.costs[c.cell] for c in cells)
        return Mapping(cells, outputs, storage_nets, area, cell_depth(cells, design.inputs))

    def _inverter(self) -> Impl:
        """The library's inverter; a choice of an inverted phase is made only when there is one."""
        inv = self.lib.inverter()
        if inv is None:
            raise RuntimeError("a phase was chosen through an inverter the cells cannot make")
        return inv

    @staticmethod
    def _emit(impl: Impl, leaf_nets, gate, pref):
        n = len(leaf_nets)
        sig = list(leaf_nets)
        last = n + len(impl.gates) - 1

        def net(x):
            if x == GND:
                return "GND"
            if x == VCC:
                return "VCC"
            return sig[x]

        for i, (cell, args) in enumerate(impl.gates):
            idx = n + i
            is_out = idx == impl.out
            sig.append(gate(cell, [net(a) for a in args], pref if is_out else None,
                            pref if is_out else None))
        del last
        return net(impl.out)


_FLIP: dict = {}
_FULL = [(1 << (1 << n)) - 1 for n in range(17)]
_ZEROS = [(0,) * n for n in range(17)]


def flip_inputs(table: int, n: int, phases) -> int:
    """The table with input ``j`` complemented wherever ``phases[j]`` is 1:
    the function of the leaves' complements that equals ``table`` of the leaves."""
    if not any(phases):
        return table
    key = (table, n, tuple(phases))
    r = _FLIP.get(key)
    if r is None:
        from ..logic.function import var_mask
        full = (1 << (1 << n)) - 1
        r = table
        for j, ph in enumerate(phases):
            if ph:
                m = var_mask(n, j)
                sh = 1 << j
                r = ((r & m) >> sh) | ((r & ~m & full) << sh)
        _FLIP[key] = r
    return r


def _is_tree(impl: Impl, n: int) -> bool:
    """Whether every leaf and gate of ``impl`` feeds at most one gate (a gate
    may take the same signal on several inputs: an inverter from a NAND2).

    Only such networks keep a hazard-free cover hazard-free: they are the
    cover's own AND/OR tree rewritten by De Morgan's laws and associativity,
    which preserve hazards (S. H. Unger, "Asynchronous Sequential Switching
    Circuits", 1969), while a network that uses a signal twice adds a
    reconvergent path that can glitch.
    """
    users = [0] * (n + len(impl.gates))
    for _cell, args in impl.gates:
        for a in set(args):
            if a >= 0:
                users[a] += 1
    return all(u <= 1 for u in users)


def _symmetric(func) -> bool:
    n = func.n
    if n < 2:
        return True
    t = func.table()
    from .cuts import expand_table
    for j in range(n - 1):
        perm = list(range(n))
        perm[j], perm[j + 1] = perm[j + 1], perm[j]
        if expand_table(t, tuple(perm), n) != t:
            return False
    return True


def cell_depth(cells, inputs) -> int:
    """Levels of cells on the longest path (cells in topological order)."""
    lev = {i: 0 for i in inputs}
    best = 0
    for c in cells:  # cells are emitted in topological order
        d = 1 + max((lev.get(a, 0) for a in c.args), default=0)
        lev[c.out] = d
        best = max(best, d)
    return best
