"""Relay builds: contact networks, poles packed onto relays, storage, support parts, cautions.

Semantics of a relay build
--------------------------
* **Rail.**  The supply rail is net ``VCC``; coils return to ``GND``.
* **Inputs.**  A primary input is a switch (or a signal from outside) that
  puts the rail on its net when it is 1 and leaves the net open when it is 0.
* **Coils.**  A relay is energized when its coil net is 1.  A variable whose
  value moves ``k`` contacts needs ``ceil(k / P)`` relays of ``P`` poles,
  their coils in parallel on the same net.
* **Contacts.**  Every pole is a changeover: common (COM), normally open
  (NO) and normally closed (NC).  COM meets NO while the coil is energized
  and NC otherwise (a make contact is a pole with NC unused, a break contact
  one with NO unused).  A make and a break contact sharing their common
  terminal are one changeover, so a decision node is one pole.
* **Nets.**  A relay-driven net is 1 when a path of closed contacts joins it
  to the rail, or to an input (or other signal) net that is 1
  (*pass-through*); otherwise its defined load -- a pull-down resistor, a
  support part -- holds it at 0.

Shape of every network this module builds (what :func:`contact_logic`
checks): each relay-driven net is the common terminal of exactly one pole
(its *driver*); the rail and input nets are never a common terminal; and
following drivers from common to NO/NC terminals never returns to a net
(the contact graph is acyclic; feedback only runs through coils, in the
storage described below).  In any state each relay-driven net then has at
most one closed contact towards its driver's selected side, so the closed
contacts form trees, each hanging from exactly one source (the rail, an
input net, or nothing), and the net's value is exactly
``coil ? value(NO) : value(NC)`` with an unused terminal reading 0.  That is
how :func:`contact_logic` turns the contacts back into logic for the proof:
one multiplexer per pole, exact, no fixed point needed.

Storage
-------
A latch is one relay holding itself through its own make contact (seal-in):
the latch net ``q`` is the common terminal of a pole on the enable's relay
whose transparent side is the data net and whose other side is a hold net
``h``; ``h`` is the common of a make contact of ``q``'s own relay, fed from
the rail.  Kind ``ah`` (transparent while the enable is 1) has the data on
NO; kind ``al`` on NC.  Edge-triggered storage is two such latches: a
master ``m`` transparent while the clock is inactive, and the slave ``q``,
transparent while the clock is active, fed from ``m`` (kind ``re``: master
``al`` and slave ``ah`` on the same clock; ``fe`` the other way round).

For the proof each latch (or master/slave pair) becomes one
:class:`~mapper.netlist.Storage` element named like the design's, of the
design's kind, with the data and control nets read off its poles after
:func:`contact_logic` has checked the exact shape above; the hold and
master nets are internal to it.  A seal-in latch powers up released (0):
the build's storage has initial value 0 where the design says 0, don't care
or unknown, and a caution says so.  A design element that must start at 1 is
built with its relay holding the complement (``q`` is then read from the
relay's break contacts), so it too powers up in the state the design asks.

Synthesis
---------
:mod:`mapper.fit.contacts` builds the networks from reduced ordered decision
diagrams over exact truth tables (Shannon 1938/1949; Lee 1959; Akers 1978),
with a leaf-order search, pass-through of existing nets, shared
sub-networks between outputs, and internal nets chosen as re-amplification
points (nets with a coil of their own).  Every design is cut into windows
at nets of many fan-outs (fan-out-free cones, merged while they fit) of at
most ten leaves, and again of at most four (close to gate by gate, with
pass-through); the nets where windows meet get coils when a later window
decides on them.  A design of at most :data:`WINDOW_LEAVES` inputs and
storage outputs is also built as one window over all its leaves, abandoned
as soon as it cannot beat the windowed plans.  The plan with the fewest
relays is kept.

Timing, supply current and the feedback-loop check live in
:mod:`mapper.analyze.relay_timing`.
"""
from __future__ import annotations

import logging
from collections import Counter
from dataclasses import dataclass

from ..build import Build, ContactInstance, PartInstance, SupportInstance
from ..errors import InternalError, UsageError
from ..logic.aig import from_netlist
from ..logic.function import Function, var_mask
from ..netlist import Input, Netlist
from .contacts import OPEN, RAIL, synthesize

__all__ = ["RelayLatch", "fit_relays", "contact_logic", "relay_carriers", "WINDOW_LEAVES",
           "MUX_FUNCTION"]

log = logging.getLogger(__name__)

#: most leaves (inputs and storage outputs) one window's truth tables range over
WINDOW_LEAVES = 16
#: leaves per window of the windowed plans (each tried; the one with fewest relays kept)
SPLIT_LEAVES = (10, 4)

#: ``COM = COIL ? NO : NC`` over fan-ins (coil, no, nc), input 0 least significant
MUX_FUNCTION = Function.from_table(3, sum(
    1 << m for m in range(8) if ((m >> 1) & 1 if m & 1 else (m >> 2) & 1)))


@dataclass
class RelayLatch:
    """One storage element of a relay build (see the module docstring).

    ``net`` is the design's storage net.  ``state`` is the net the relay
    holds (``net`` itself, or a net holding its complement when
    ``inverted``); ``hold`` the net between the hold contact and the
    enable pole.  Edge-triggered elements have a ``master`` latch net and its
    ``master_hold``.  ``d`` and ``control`` are the data and clock/enable
    nets as wired (``d`` is ``None`` for a constant 0 data input).
    """

    net: str
    kind: str
    d: str | None
    control: str
    init: int
    state: str
    hold: str
    master: str | None = None
    master_hold: str | None = None
    inverted: bool = False
    #: the design's initial value (0, 1, 2 don't care, 3 unknown)
    design_init: int = 3


# ---------------------------------------------------------------------------
# target
def relay_carriers(target) -> list:
    """The relay parts of ``target`` that carry changeover poles, most poles first."""
    ids = []
    for cell, parts in target.carriers.items():
        for pid in parts:
            pd = target.parts[pid]
            if pd.relay is not None and pid not in ids:
                ids.append(pid)
    if not ids:
        raise UsageError(f"target {target.name} names no relay part to carry contacts")
    return sorted(ids, key=lambda pid: (-target.parts[pid].relay.poles,
                                        target.parts[pid].price.value if target.parts[pid].price else 0.0,
                                        pid))


# ---------------------------------------------------------------------------
# naming
class _Names:
    def __init__(self, taken):
        self.taken = set(taken) | {"VCC", "GND"}
        self.counter = 0

    def copy(self) -> "_Names":
        c = _Names(())
        c.taken, c.counter = set(self.taken), self.counter
        return c

    def fresh(self, base: str | None = None) -> str:
        if base is not None and base not in self.taken:
            self.taken.add(base)
            return base
        while True:
            self.counter += 1
            name = f"x{self.counter}" if base is None else f"{base}_{self.counter}"
            if name not in self.taken:
                self.taken.add(name)
                return name


# ---------------------------------------------------------------------------
# windows
@dataclass
class _Window:
    leaves: list          # AIG vars that are the window's leaves
    nodes: list           # AIG AND vars inside, in topological order
    targets: list         # AIG vars whose nets are needed outside (or are outputs)


def _fanins(g, v):
    return (g.f0[v] >> 1, g.f1[v] >> 1)


def _windows(g, need: list, limit: int) -> list:
    """Cut the AIG into windows of at most ``limit`` leaves (see module docstring).

    ``need`` lists the AIG vars whose values are used outside the logic
    (outputs, storage data and control).  Iterative throughout.
    """
    cone = set()
    stack = list(need)
    while stack:
        v = stack.pop()
        if v in cone or not g.is_and(v):
            continue
        cone.add(v)
        stack.extend(_fanins(g, v))
    order = sorted(cone)
    sources = set(g.inputs) | {latch.var for latch in g.latches}
    fan = Counter()
    for v in order:
        for f in _fanins(g, v):
            fan[f] += 1
    roots = set(need) | {v for v in order if fan[v] > 1}
    leafset: dict = {}
    for v in order:
        def leaves_of(f):
            if f == 0:
                return set()
            if f in sources or f in roots:
                return {f}
            return leafset[f]
        ls = set()
        for f in _fanins(g, v):
            ls |= leaves_of(f)
        if len(ls) > limit:
            fs = sorted(_fanins(g, v), key=lambda f: -len(leaves_of(f)))
            for f in fs:
                if len(ls) <= limit:
                    break
                if f != 0 and f not in sources and f not in roots:
                    roots.add(f)
                    ls = set()
                    for f2 in _fanins(g, v):
                        ls |= leaves_of(f2)
        leafset[v] = ls
    root_list = [v for v in order if v in roots]
    # nodes of each root's fan-out-free cone
    windows = []
    cur_nodes: list = []
    cur_roots: list = []
    cur_leaves: set = set()
    for r in root_list:
        nodes, st = [], [r]
        seen = set()
        while st:
            v = st.pop()
            if v in seen:
                continue
            seen.add(v)
            nodes.append(v)
            for f in _fanins(g, v):
                if f != 0 and f not in sources and f not in roots:
                    st.append(f)
        merged = (cur_leaves | leafset[r]) - set(cur_roots) - {r}
        if cur_roots and len(merged) <= limit:
            cur_nodes += nodes
            cur_roots.append(r)
            cur_leaves = merged
        else:
            if cur_roots:
                windows.append((cur_nodes, cur_roots, cur_leaves))
            cur_nodes, cur_roots, cur_leaves = list(nodes), [r], set(leafset[r])
    if cur_roots:
        windows.append((cur_nodes, cur_roots, cur_leaves))
    used_later: dict = {}
    for i, (nodes, rts, lvs) in enumerate(windows):
        for x in lvs:
            used_later.setdefault(x, set()).add(i)
    out = []
    needed = set(need)
    for i, (nodes, rts, lvs) in enumerate(windows):
        tg = [r for r in rts if r in needed or any(j != i for j in used_later.get(r, ()))]
        out.append(_Window(sorted(lvs), sorted(set(nodes)), tg))
    return out


def _dfs_order(g, leaves: list, roots: list) -> list:
    """Leaf indices in the order a depth-first walk from ``roots`` meets them."""
    idx = {v: j for j, v in enumerate(leaves)}
    seen, out = set(), []
    for r in roots:
        stack = [r]
        while stack:
            v = stack.pop()
            if v in seen:
                continue
            seen.add(v)
            if v in idx:
                out.append(idx[v])
                continue
            if v and g.is_and(v):
                stack.append(g.f1[v] >> 1)
                stack.append(g.f0[v] >> 1)
    out += [j for j in range(len(leaves)) if j not in set(out)]
    return out


def _window_tables(g, leaves: list, nodes: list, inverted=frozenset()) -> tuple[int, dict]:
    """Truth tables of ``nodes`` over ``leaves``; a leaf in ``inverted`` is the
    complement of its table variable (storage whose relay holds the complement)."""
    n = len(leaves)
    full = (1 << (1 << n)) - 1
    val = {0: 0}
    for j, v in enumerate(leaves):
        val[v] = var_mask(n, j) ^ (full if v in inverted else 0)
    for v in nodes:
        a, b = g.f0[v], g.f1[v]
        x = val[a >> 1] ^ (full if a & 1 else 0)
        y = val[b >> 1] ^ (full if b & 1 else 0)
        val[v] = x & y
    return full, val


def _lit_table(val: dict, lit: int, full: int) -> int:
    return val[lit >> 1] ^ (full if lit & 1 else 0)


def _cone(g, roots) -> list:
    cone = set()
    stack = list(roots)
    while stack:
        v = stack.pop()
        if v in cone or not g.is_and(v):
            continue
        cone.add(v)
        stack.extend(_fanins(g, v))
    return sorted(cone)


# ---------------------------------------------------------------------------
# plans: networks for a choice of windows
@dataclass
class _Context:
    g: object
    want: list
    inverted: set
    inv_names: dict
    latch_vars: set
    ctrl_poles: Counter
    design_name: dict
    state_net: dict
    net_of_var: dict
    P: int
    effort: int


@dataclass
class _Plan:
    poles: list
    latches: list
    output_nets: dict
    reamp: list
    windows: list
    single: bool
    stats: list
    names: object
    relays: int


def _plan(ctx: _Context, windows: list, single: bool, names, bound):
    """Networks, storage and output nets for one choice of windows, or ``None``
    when a ``bound`` (relays) is given and the single window cannot beat it."""
    g, want, inverted, P = ctx.g, ctx.want, ctx.inverted, ctx.P
    net_of_var = dict(ctx.net_of_var)
    poles: list = []          # (com, coil, no, nc) by net names
    wanted_net: dict = {}     # (kind, name) -> net name, "VCC" or None (open)
    reamp: list = []
    stats: list = []
    for w_index, win in enumerate(windows):
        leaves, n = win.leaves, len(win.leaves)
        full, val = _window_tables(g, leaves, win.nodes, inverted)
        if single:
            tlist = [(f"{kind}:{name}", _lit_table(val, lit, full), None) for kind, name, lit in want]
        else:
            tlist = [(f"var:{v}", val[v], None) for v in win.targets]
        extra: dict = {}
        for j, v in enumerate(leaves):
            k = (1 if v in ctx.latch_vars else 0) + (0 if single else ctx.ctrl_poles.get(2 * v, 0))
            if k:
                extra[("leaf", j)] = k   # hold contacts (and clock poles in windows)
        if single:
            for latch in g.latches:
                extra[("target", f"control:{latch.name}")] = 2 if latch.kind in ("re", "fe") else 1
                if latch.kind in ("re", "fe"):
                    extra[("relay", f"master:{latch.name}")] = 1
        roots_for_order = [lit >> 1 for _, _, lit in want] if single else win.targets
        res = synthesize(n, tlist, {v: val[v] for v in win.nodes}, P, extra=extra,
                         order=_dfs_order(g, leaves, roots_for_order), effort=ctx.effort,
                         bound=(bound, 1 << 30, 1 << 30) if bound is not None else None)
        if res is None:
            return None
        stats.append(res)
        log.debug("window %d: %d leaves, cost %s, %d evaluations, %.2f s",
                  w_index, n, res.cost, res.evaluations, res.seconds)
        cs = res.synth
        local: dict = {RAIL: "VCC"}
        for j, v in enumerate(leaves):
            local[cs.leaf(j)] = net_of_var[v]
        preferred: dict = {}
        if single:
            for kind, name, lit in want:
                r = res.roots[f"{kind}:{name}"]
                if kind == "output" and r > n and r not in local and name not in local.values():
                    local[r] = name  # the output's own net carries its name
        for key, r in res.roots.items():
            if key.startswith("var:") and r > n and int(key[4:]) in ctx.design_name:
                preferred.setdefault(r, ctx.design_name[int(key[4:])])
        for key, r in cs.cand_net.items():
            if r > n and key in ctx.design_name:
                preferred.setdefault(r, ctx.design_name[key])
        for com, _, _, _ in res.poles:
            if com not in local:
                local[com] = names.fresh(preferred.get(com))
        for com, var, no, nc in res.poles:
            poles.append((local[com], local[var], None if no is None else local[no],
                          None if nc is None else local[nc]))
        for key, r in res.roots.items():
            net = None if r == OPEN else local[r]
            if single:
                kind, name = key.split(":", 1)
                wanted_net[(kind, name)] = net
            else:
                if net is None or net == "VCC":
                    raise InternalError(f"window result {key} is a constant")
                net_of_var[int(key[4:])] = net
        reamp += [local[cs.cand_net[k]] for k in res.permitted
                  if k in cs.cand_net and cs.cand_net[k] in local]

    if not single:
        # results in the polarity asked: a complemented one is a break contact on its net's relay
        comp: dict = {}
        for kind, name, lit in want:
            v = lit >> 1
            if v == 0:
                wanted_net[(kind, name)] = "VCC" if lit & 1 else None
                continue
            net = net_of_var[v]
            if (lit & 1) ^ (v in inverted):
                if net not in comp:
                    comp[net] = names.fresh(f"{net}_n")
                    poles.append((comp[net], net, None, "VCC"))
                net = comp[net]
            wanted_net[(kind, name)] = net

    output_nets = {}
    for name, lit in g.outputs:
        if lit in ctx.inv_names:
            q = ctx.inv_names[lit]
            if q not in output_nets.values():
                poles.append((q, ctx.state_net[q], None, "VCC"))
            output_nets[name] = q
        else:
            net = wanted_net[("output", name)]
            output_nets[name] = "GND" if net is None else net

    latches = []
    for latch in g.latches:
        d_net = wanted_net[("d", latch.name)]
        c_net = wanted_net[("control", latch.name)]
        if c_net is None or c_net == "VCC":
            raise UsageError(f"storage element {latch.name} has a constant clock or enable")
        state = ctx.state_net[latch.name]
        hold = names.fresh(f"{latch.name}_hold")
        master = mhold = None
        if latch.kind in ("re", "fe"):
            master = names.fresh(f"{latch.name}_master")
            mhold = names.fresh(f"{latch.name}_master_hold")
            if latch.kind == "re":   # master transparent while the clock is 0, slave while it is 1
                poles.append((master, c_net, mhold, d_net))
                poles.append((state, c_net, master, hold))
            else:
                poles.append((master, c_net, d_net, mhold))
                poles.append((state, c_net, hold, master))
            poles.append((mhold, master, "VCC", None))
        elif latch.kind == "ah":
            poles.append((state, c_net, d_net, hold))
        else:
            poles.append((state, c_net, hold, d_net))
        poles.append((hold, state, "VCC", None))
        inv = latch.var in inverted
        latches.append(RelayLatch(latch.name, latch.kind, d_net, c_net, 1 if inv else 0, state, hold,
                                  master, mhold, inv, latch.init))
    per_coil = Counter(coil for _, coil, _, _ in poles)
    relays = sum(-(-k // P) for k in per_coil.values())
    return _Plan(poles, latches, output_nets, reamp, windows, single, stats, names, relays)


# ---------------------------------------------------------------------------
# the build
def fit_relays(design: Netlist, target, effort: int = 1) -> Build:
    """Build ``design`` as relay contact networks on ``target``'s relays.

    Returns an unproven :class:`~mapper.build.Build` (``flow.fit`` proves it)
    with relays ``K1``…, their poles (``contacts``), coils, support parts
    (a diode across each coil, a pull-down on each relay-driven net that
    feeds a coil or an output), storage (``latches``), timing and supply
    figures in ``timing``, and cautions.  Raises :class:`UsageError` for what
    relays cannot build here (storage without a clock or enable).
    """
    from ..analyze.relay_timing import feedback_loops, relay_supply, relay_timing

    carriers = relay_carriers(target)
    P = target.parts[carriers[0]].relay.poles
    for net, st in design.storage().items():
        if st.kind not in ("re", "fe", "ah", "al"):
            raise UsageError(f"storage element {net} of kind '{st.kind}' has no clock or enable; "
                             "relay builds need an edge-triggered or level-sensitive element")
        if st.control is None:
            raise UsageError(f"storage element {net} has no clock or enable net")

    g, litmap = from_netlist(design)
    names = _Names(list(design.inputs) + list(design.outputs) + list(design.storage()))
    design_name = {}
    for net, lit in litmap.items():
        if not lit & 1 and lit > 1 and g.is_and(lit >> 1):
            design_name.setdefault(lit >> 1, net)
    # storage that must start at 1 is built holding its complement (a relay powers up released)
    inverted = {latch.var for latch in g.latches if latch.init == 1}

    net_of_var: dict = {v: g.names[v] for v in g.inputs}
    state_net: dict = {}
    for latch in g.latches:
        state_net[latch.name] = names.fresh(f"{latch.name}_n") if latch.var in inverted else latch.name
        net_of_var[latch.var] = state_net[latch.name]

    # what must exist as nets: outputs, storage data and control.  An output that is the true
    # value of storage held in complement is a break contact of its relay, added below.
    inv_names = {2 * latch.var: latch.name for latch in g.latches if latch.var in inverted}
    want: list = [("output", name, lit) for name, lit in g.outputs if lit not in inv_names]
    for latch in g.latches:
        want.append(("d", latch.name, latch.next ^ (1 if latch.var in inverted else 0)))
        want.append(("control", latch.name, latch.control))
    ctrl_poles: Counter = Counter()
    for latch in g.latches:
        ctrl_poles[latch.control] += 2 if latch.kind in ("re", "fe") else 1
    latch_vars = {latch.var for latch in g.latches}

    leaves_all = list(g.inputs) + [latch.var for latch in g.latches]
    ctx = _Context(g, want, inverted, inv_names, latch_vars, ctrl_poles, design_name, state_net,
                   dict(net_of_var), P, effort)
    need_and = sorted({lit >> 1 for _, _, lit in want if (lit >> 1) and g.is_and(lit >> 1)})
    # windows cut at nets of many fan-outs: always possible, never far from the templates;
    # small windows and smaller ones (close to gate by gate, with pass-through), the better kept
    split = None
    for limit in SPLIT_LEAVES:
        p = _plan(ctx, _windows(g, need_and, limit), False, names.copy(),
                  split.relays if split is not None else None)
        if p is not None and (split is None or p.relays < split.relays):
            split = p
    best = split
    if len(leaves_all) <= WINDOW_LEAVES:
        # one window over every leaf: exact decision diagrams with sharing across outputs,
        # abandoned as soon as it cannot beat the windowed plan
        need = sorted({lit >> 1 for _, _, lit in want if lit > 1})
        whole = _plan(ctx, [_Window(list(leaves_all), _cone(g, need), [])], True, names.copy(),
                      split.relays)
        if whole is not None and whole.relays <= split.relays:
            best = whole
    poles = list(best.poles)
    latches = best.latches
    output_nets = best.output_nets
    reamp = best.reamp
    windows = best.windows
    single = best.single
    stats = best.stats

    b = Build(design.name, target, list(design.inputs), list(design.outputs))
    b.output_nets = output_nets
    b.latches = latches
    _pack(b, target, carriers, poles)
    _add_support(b, target)
    b.notes.append(
        "contact networks from reduced ordered decision diagrams built as relay contacts "
        "(Shannon, Trans. AIEE 57, 1938 and BSTJ 28, 1949; Lee, BSTJ 38, 1959; Akers, IEEE Trans. "
        "Computers C-27, 1978): one changeover per decision node, a make or break contact where one "
        "branch is open, shared sub-networks, signals passed through contacts")
    if reamp:
        b.notes.append(f"re-amplification points (nets with a coil of their own): {', '.join(reamp)}")
    if not single:
        b.notes.append(f"the design was cut into {len(windows)} windows at nets of many fan-outs")
    b.timing.update(relay_timing(b))
    b.timing.update(relay_supply(b))
    b.timing["synthesis"] = {
        "windows": len(windows),
        "evaluations": sum(r.evaluations for r in stats),
        "seconds": round(sum(r.seconds for r in stats), 3),
        "re_amplification_points": reamp,
    }
    _cautions(b, target, feedback_loops(b))
    return b


# ---------------------------------------------------------------------------
# packing and support parts
def _pack(b: Build, target, carriers: list, poles: list) -> None:
    """Relays ``K1``…: the poles of each coil net packed onto the fewest relays.

    Every relay carries poles of one coil net only.  A net with ``k`` poles
    gets ``ceil(k / P)`` relays of the largest pole count ``P``; the last one
    is the cheapest carrier with enough poles for what is left.
    """
    by_coil: dict = {}
    for com, coil, no, nc in poles:
        by_coil.setdefault(coil, []).append((com, no, nc))
    big = target.parts[carriers[0]]
    pmax = big.relay.poles

    def price(pid):
        p = target.parts[pid].price
        return p.value if p is not None else 0.0

    k_ref = 0
    for coil in by_coil:   # first use first: inputs and early levels get the low numbers
        group = by_coil[coil]
        i = 0
        while i < len(group):
            left = len(group) - i
            if left >= pmax:
                pid = carriers[0]
            else:
                fits = [c for c in carriers if target.parts[c].relay.poles >= left]
                pid = min(fits, key=lambda c: (price(c), -target.parts[c].relay.poles, c))
            k_ref += 1
            ref = f"K{k_ref}"
            b.parts.append(PartInstance(ref, pid))
            b.coils[ref] = coil
            npoles = target.parts[pid].relay.poles
            for pole in range(1, npoles + 1):
                if i >= len(group):
                    break
                com, no, nc = group[i]
                b.contacts.append(ContactInstance(ref, pole, com, no, nc))
                i += 1


def _ref_prefix(pd) -> str:
    text = f"{pd.id} {pd.description}".lower()
    if "diode" in text:
        return "D"
    if "resistor" in text or "resistance" in pd.ratings:
        return "R"
    return "C"


def relay_driven_nets(b: Build) -> list:
    """Nets that are the common terminal of a pole, in first-use order."""
    out, seen = [], set()
    for k in b.contacts:
        if k.com not in seen:
            seen.add(k.com)
            out.append(k.com)
    return out


def _add_support(b: Build, target) -> None:
    """A diode across every coil and a defined load on every relay-driven net feeding a coil or an output."""
    driven = relay_driven_nets(b)
    feeds = set(b.coils.values()) | set(b.output_nets.values()) | {o for o in b.outputs}
    loaded = [n for n in driven if n in feeds]
    counters: Counter = Counter()
    for rule in getattr(target, "support_rules", []) or []:
        pd = target.parts[rule.part]
        prefix = _ref_prefix(pd)
        if rule.per == "coil":
            for p in b.parts:
                for _ in range(rule.count):
                    counters[prefix] += 1
                    b.support.append(SupportInstance(
                        f"{prefix}{counters[prefix]}", pd.id, ("GND", b.coils[p.ref]),
                        f"across the coil of {p.ref} (anode to GND, cathode to {b.coils[p.ref]}): "
                        "clamps the turn-off spike; lengthens the release time"))
        elif rule.per == "relay-driven-net":
            for net in loaded:
                for _ in range(rule.count):
                    counters[prefix] += 1
                    b.support.append(SupportInstance(
                        f"{prefix}{counters[prefix]}", pd.id, (net, "GND"),
                        f"defined load on {net}: holds it at 0 while no contact feeds it"))


def _cautions(b: Build, target, loops: list) -> None:
    t = b.timing
    volts = t.get("coil_voltage_v")
    b.cautions.append(
        f"supply: {t['supply_current_a'] * 1000:.0f} mA at {volts:g} V with every coil energized "
        f"({len(b.parts)} relay{'s' if len(b.parts) != 1 else ''}); use a supply rated above that "
        "with margin, and fuse it")
    ratings = sorted({target.parts[p.part_id].relay.contact_rating for p in b.parts})
    b.cautions.append(
        "contacts switching mains voltage: only as local electrical codes and licensed practice allow; "
        f"these contacts are rated {', '.join(ratings) or 'as the catalog says'}")
    b.cautions.append(
        "changeover contacts break before they make: relay-driven nets float during each transfer; "
        "the pull-down resistors of this build give them a defined load")
    diodes = [s for s in b.support if s.ref.startswith("D")]
    if diodes:
        b.cautions.append(
            "the diode across each coil lengthens its release time (figures in the timing assume "
            "so); a zener in series with the diode restores most of it")
    for lt in b.latches:
        if lt.inverted:
            start = ("must start at 1: its relay holds the complement, so with every relay released "
                     "at power-up it starts at 1")
        elif lt.design_init == 0:
            start = "powers up at 0 (its relay released), as the design starts"
        else:
            start = ("powers up at 0 (its relay released); the design leaves the start open: add a "
                     "power-on reset if another start matters")
        b.cautions.append(
            f"{lt.net}: {start}; hold the clock or enable in each state at least "
            f"{t.get('per_level_s', 0) * 1000:.1f} ms so the hold contact closes")
    for net, amps in sorted(t.get("input_coil_current_a", {}).items()):
        b.cautions.append(f"input {net} carries {amps * 1000:.0f} mA of coil current when on")
    over = t.get("contact_overloads", [])
    for net, amps, limit in over:
        b.cautions.append(f"net {net} feeds {amps * 1000:.0f} mA of coils through contacts rated "
                          f"{limit:g} A: split the load or use a heavier relay")
    for loop in loops:
        if loop["unloaded"]:
            b.cautions.append(
                "warning: feedback loop through contacts without a defined load on "
                + ", ".join(loop["unloaded"]) + " (loop: " + ", ".join(loop["nets"]) + "): it may chatter")


# ---------------------------------------------------------------------------
# back to logic
def contact_logic(build: Build, netlist: Netlist) -> None:
    """Add to ``netlist`` the logic of every relay-driven net of ``build``.

    Each pole becomes ``COM = coil ? NO : NC`` (an unused terminal reads 0);
    each :class:`RelayLatch` becomes one storage element of its kind,
    named like the design's, after its poles are checked to have exactly
    the seal-in shape of the module docstring.  Raises
    :class:`~mapper.errors.InternalError` for any other shape: a net driven
    by two poles, a rail or input on a common terminal, a loop of contacts,
    or an undriven net.
    """
    drivers: dict = {}
    for k in build.contacts:
        if k.com in drivers:
            raise InternalError(f"net {k.com} is the common terminal of two poles "
                                f"({drivers[k.com].part_ref} and {k.part_ref})")
        if k.com in ("VCC", "GND") or isinstance(netlist.nodes.get(k.com), Input):
            raise InternalError(f"{k.com} is on the common terminal of {k.part_ref} pole {k.pole}")
        drivers[k.com] = k
    coil = build.coils

    def pole(net):
        k = drivers.get(net)
        if k is None:
            raise InternalError(f"storage net {net} has no driving pole")
        return k, coil[k.part_ref]

    internal = set()     # nets driven by storage poles (not translated pole by pole)
    private = set()      # nets no pole outside their storage element may touch
    storage_nodes = []
    for lt in build.latches:
        if lt.inverted and lt.net in drivers:
            # the true value of storage held in complement: a break contact of its relay from the rail
            k_t, c_t = pole(lt.net)
            if not (c_t == lt.state and k_t.no is None and k_t.nc == "VCC"):
                raise InternalError(f"{lt.net}: its true value is not a break contact of its relay")
            internal.add(lt.net)
        k_h, c_h = pole(lt.hold)
        if not (c_h == lt.state and k_h.no == "VCC" and k_h.nc is None):
            raise InternalError(f"{lt.net}: the hold contact is not a make contact of its own relay fed "
                                "from the rail")
        k_q, c_q = pole(lt.state)
        if c_q != lt.control:
            raise InternalError(f"{lt.net}: the enable pole is not on the control's relay")
        active = "ah" if lt.kind in ("ah", "re") else "al"
        src = lt.master if lt.master is not None else lt.d
        on, off = (k_q.no, k_q.nc) if active == "ah" else (k_q.nc, k_q.no)
        if on != src or off != lt.hold:
            raise InternalError(f"{lt.net}: the enable pole is not wired as a seal-in latch")
        internal |= {lt.hold, lt.state}
        private.add(lt.hold)
        d = lt.d
        if lt.master is not None:
            k_mh, c_mh = pole(lt.master_hold)
            if not (c_mh == lt.master and k_mh.no == "VCC" and k_mh.nc is None):
                raise InternalError(f"{lt.net}: the master's hold contact is wrong")
            k_m, c_m = pole(lt.master)
            if c_m != lt.control:
                raise InternalError(f"{lt.net}: the master's enable pole is not on the clock's relay")
            on, off = (k_m.nc, k_m.no) if active == "ah" else (k_m.no, k_m.nc)
            if on != lt.d or off != lt.master_hold:
                raise InternalError(f"{lt.net}: the master is not wired as a seal-in latch")
            internal |= {lt.master, lt.master_hold}
            private |= {lt.master, lt.master_hold}
        storage_nodes.append((lt, d))
    for k in build.contacts:
        for x in (k.no, k.nc):
            if x in private and x not in _allowed_refs(build, k):
                raise InternalError(f"storage-internal net {x} is used by {k.part_ref} pole {k.pole}")
    # order the remaining poles so fan-ins come first; refuse loops of contacts
    comb = {net: k for net, k in drivers.items() if net not in internal}
    order = _topological(comb, coil, internal)
    used_rails = set()
    for net in order:
        k = comb[net]
        fan = [coil[k.part_ref], k.no or "GND", k.nc or "GND"]
        used_rails.update(x for x in fan if x in ("VCC", "GND"))
        netlist.add_logic(net, fan, MUX_FUNCTION)
    for lt, d in storage_nodes:
        dn = d if d is not None else "GND"
        used_rails.add(dn) if dn in ("VCC", "GND") else None
        if lt.inverted:
            # the relay holds the complement: the design's element is its complement
            inv_d = f"{lt.net}~d"
            netlist.add_logic(inv_d, [dn], Function.from_table(1, 0b01))
            netlist.add_storage(lt.net, inv_d, lt.kind, lt.control, 1)
            netlist.add_logic(lt.state, [lt.net], Function.from_table(1, 0b01))
        else:
            netlist.add_storage(lt.net, dn, lt.kind, lt.control, lt.init)
    for o in build.outputs:
        net = build.output_nets.get(o, o)
        if net in ("VCC", "GND"):
            used_rails.add(net)
    for rail, value in (("VCC", 1), ("GND", 0)):
        if rail in used_rails and rail not in netlist.nodes:
            netlist.add_constant(rail, value)
    known = set(netlist.nodes) | {"VCC", "GND"} | internal
    for k in build.contacts:
        for x in (coil[k.part_ref], k.no, k.nc):
            if x is not None and x not in known:
                raise InternalError(f"net {x} at {k.part_ref} pole {k.pole} is driven by nothing")


def _allowed_refs(build: Build, k) -> set:
    """Storage-internal nets a pole may touch: the poles of that storage element itself."""
    allowed = set()
    for lt in build.latches:
        own = {lt.hold, lt.state, lt.master, lt.master_hold} - {None}
        if k.com in own:
            allowed |= own
    return allowed


def _topological(comb: dict, coil: dict, internal: set) -> list:
    """Common-terminal nets in an order where every pole's NO, NC and coil nets come first."""
    deps = {}
    for net, k in comb.items():
        deps[net] = [x for x in (k.no, k.nc, coil[k.part_ref]) if x in comb]
    indeg = {n: len(d) for n, d in deps.items()}
    users: dict = {}
    for n, d in deps.items():
        for x in d:
            users.setdefault(x, []).append(n)
    ready = [n for n, c in indeg.items() if c == 0]
    out = []
    while ready:
        n = ready.pop()
        out.append(n)
        for u in users.get(n, ()):
            indeg[u] -= 1
            if indeg[u] == 0:
                ready.append(u)
    if len(out) != len(comb):
        stuck = sorted(n for n, c in indeg.items() if c > 0)
        raise InternalError("contacts form a loop not broken by storage through nets "
                            + ", ".join(stuck[:8]))
    return out
