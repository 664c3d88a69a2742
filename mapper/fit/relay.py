"""Relay builds: contact networks, poles packed onto relays, storage, support parts.

What a relay build means -- the rail, inputs as switches, coils, changeover
poles, the shape of every network and the seal-in storage -- is set out in
:mod:`mapper.relay_logic`, which also turns the contacts back into logic for
the proof.

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

Timing, supply current, the feedback-loop check and the cautions are
analyses of the finished build (:mod:`mapper.analyze`).
"""
from __future__ import annotations

import logging
import random
from collections import Counter
from dataclasses import dataclass

from ..build import SUPPLY_NETS, Build, ContactInstance, PartInstance
from ..catalog.model import Target
from ..errors import InternalError, UsageError
from ..logic.aig import AIG, from_netlist
from ..logic.function import Function, var_mask
from ..logic.hazard import cone_support
from ..netlist import Logic, Netlist
from ..relay_logic import RelaySequencer, RelayStorage, sequencer_for, storage_nets
from ..simulate import simulate
from .contacts import OPEN, RAIL, synthesize
from .support import add_support
from .windows import Window, cone, dfs_order, gate_windows, lit_table, window_tables, windows

__all__ = ["fit_relays", "relay_carriers", "redrive", "sweep_constants", "WINDOW_LEAVES"]

log = logging.getLogger(__name__)

#: most leaves (inputs and storage outputs) one window's truth tables range over
WINDOW_LEAVES = 16
#: leaves per window of the windowed plans (each tried; the one with fewest relays kept)
SPLIT_LEAVES = (10, 4)
#: windows of one result and at most this many leaves are built in both polarities, the cheaper kept
FLIP_LEAVES = 6

# ---------------------------------------------------------------------------
# target
def relay_carriers(target) -> list:
    """The relay parts of ``target`` that carry changeover poles, most poles first."""
    ids = []
    for parts in target.carriers.values():
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

    def copy(self) -> _Names:
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
# plans: networks for a choice of windows
@dataclass
class _Context:
    g: AIG
    want: list
    inverted: set
    inv_names: dict
    latch_vars: set
    design_name: dict
    state_net: dict
    net_of_var: dict
    P: int
    effort: int


@dataclass
class _Plan:
    poles: list
    latches: list
    sequencers: list
    output_nets: dict
    reamp: list
    windows: list
    single: bool
    stats: list
    names: object
    relays: int


class _Work:
    """The networks of one plan while they are made: poles by net names, and the nets of results."""

    def __init__(self, ctx: _Context, names: _Names):
        self.ctx = ctx
        self.names = names
        self.net_of_var = dict(ctx.net_of_var)
        self.poles: list = []          # (com, coil, no, nc) by net names
        self.wanted_net: dict = {}     # (kind, name) -> net name, "VCC" or None (open)
        self.reamp: list = []
        self.stats: list = []
        #: AIG variables whose net carries the complement (storage held inverted, and window results
        #: built in the cheaper polarity)
        self.inverted: set = set(ctx.inverted)

    def window(self, w_index: int, win: Window, single: bool, bound) -> bool:
        """Synthesize one window and name its nets; ``False`` when it cannot beat ``bound``."""
        ctx, g = self.ctx, self.ctx.g
        leaves, n = win.leaves, len(win.leaves)
        full, val = window_tables(g, leaves, win.nodes, self.inverted)
        if single:
            tlist = [(f"{kind}:{name}", lit_table(val, lit, full), None) for kind, name, lit in ctx.want]
        else:
            tlist = [(f"var:{v}", val[v], None) for v in win.targets]
        extra = self._extra_poles(win, single)
        roots_for_order = [lit >> 1 for _, _, lit in ctx.want] if single else win.targets
        order = dfs_order(g, leaves, roots_for_order)
        limit = (bound, 1 << 30, 1 << 30) if bound is not None else None
        res = synthesize(n, tlist, {v: val[v] for v in win.nodes}, ctx.P, extra=extra, order=order,
                         effort=ctx.effort, bound=limit)
        if not single and len(win.targets) == 1 and n <= FLIP_LEAVES:
            # the other polarity of a small window's one result may take fewer contacts (an OR2 is one
            # changeover from the rail; its complement, the NOR the graph holds, two): its users read
            # the net as the complement then
            v = win.targets[0]
            flip = synthesize(n, [(f"var:{v}", val[v] ^ full, None)], {x: val[x] for x in win.nodes}, ctx.P,
                              extra=extra, order=order, effort=ctx.effort, bound=limit)
            wanted = {lit & 1 for _, _, lit in ctx.want if lit >> 1 == v}
            tie = wanted == {1}   # outputs and storage read only the complement: it saves a break contact
            if flip is not None and (res is None or len(flip.poles) < len(res.poles)
                                     or (tie and len(flip.poles) == len(res.poles))):
                res = flip
                self.inverted ^= {v}
        if res is None:
            return False
        self.stats.append(res)
        log.debug("window %d: %d leaves, cost %s, %d evaluations, %.2f s",
                  w_index, n, res.cost, res.evaluations, res.seconds)
        self._name_nets(res, leaves, single)
        return True

    def _extra_poles(self, win: Window, single: bool) -> dict:
        """Poles storage needs beyond the window's networks, for the relay count (see :mod:`mapper.relay_logic`):
        each slave's hold contact, each data net's load contact, the sequencers' contacts on their control
        nets, and (once, in one window over everything) the masters' and the sequencers' own relays."""
        ctx, g = self.ctx, self.ctx.g
        extra: dict = {}
        leaf_index = {v: j for j, v in enumerate(win.leaves)}
        targets = set(win.targets)

        def add(key, k):
            extra[key] = extra.get(key, 0) + k

        def on_lit(lit, k, name):
            v = lit >> 1
            if v == 0:
                return  # a constant: no coil
            if single:
                add(("target", name), k)
            elif v in leaf_index:
                add(("leaf", leaf_index[v]), k)
            elif v in targets:
                add(("target", f"var:{v}"), k)

        for v in ctx.latch_vars:
            if v in leaf_index:
                add(("leaf", leaf_index[v]), 1)   # the slave's hold contact
        seen = set()
        for latch in g.latches:
            edge = latch.kind in ("re", "fe")
            on_lit(latch.next ^ (1 if latch.var in self.inverted else 0), 1, f"d:{latch.name}")
            key = (latch.control, latch.kind)
            if key not in seen:
                seen.add(key)
                on_lit(latch.control, 3 if edge else 2, f"control:{latch.name}")  # the sequencer's CK poles
                if single:
                    for rel, k in ((("x", 1), ("y", 1), ("z", 1), ("w", 1)) if edge else
                                   (("x", 1), ("y", 2), ("w", 1))):
                        add(("relay", f"seq:{key}:{rel}"), k)
            if single and edge:
                add(("relay", f"master:{latch.name}"), 2)
        return extra

    def _name_nets(self, res, leaves: list, single: bool) -> None:
        """Net names for a window's nodes (design names where known), its poles, and its results."""
        ctx, n = self.ctx, len(leaves)
        cs = res.synth
        local: dict = {RAIL: "VCC"}
        for j, v in enumerate(leaves):
            local[cs.leaf(j)] = self.net_of_var[v]
        preferred: dict = {}
        if single:
            for kind, name, _ in ctx.want:
                r = res.roots[f"{kind}:{name}"]
                if kind == "output" and r > n and r not in local and name not in local.values():
                    local[r] = name  # the output's own net carries its name
        for key, r in res.roots.items():
            if key.startswith("var:") and r > n:
                v = int(key[4:])
                lit = 2 * v + (1 if v in self.inverted else 0)   # the polarity the net carries
                if lit in ctx.design_name:
                    preferred.setdefault(r, ctx.design_name[lit])
        for key, r in cs.cand_net.items():
            if r > n and 2 * key in ctx.design_name:
                preferred.setdefault(r, ctx.design_name[2 * key])
        for com, _, _, _ in res.poles:
            if com not in local:
                local[com] = self.names.fresh(preferred.get(com))
        for com, var, no, nc in res.poles:
            self.poles.append((local[com], local[var], None if no is None else local[no],
                               None if nc is None else local[nc]))
        for key, r in res.roots.items():
            net = None if r == OPEN else local[r]
            if single:
                kind, name = key.split(":", 1)
                self.wanted_net[(kind, name)] = net
            else:
                if net is None or net == "VCC":
                    raise InternalError(f"window result {key} is a constant")
                self.net_of_var[int(key[4:])] = net
        self.reamp += [local[cs.cand_net[k]] for k in res.permitted
                       if k in cs.cand_net and cs.cand_net[k] in local]

    def polarities(self) -> None:
        """Window results in the polarity asked: a complemented one is a break contact on its net's relay."""
        comp: dict = {}
        for kind, name, lit in self.ctx.want:
            v = lit >> 1
            if v == 0:
                self.wanted_net[(kind, name)] = "VCC" if lit & 1 else None
                continue
            net = self.net_of_var[v]
            if (lit & 1) ^ (v in self.inverted):
                if net not in comp:
                    comp[net] = self.names.fresh(f"{net}_n")
                    self.poles.append((comp[net], net, None, "VCC"))
                net = comp[net]
            self.wanted_net[(kind, name)] = net

    def output_nets(self) -> dict:
        ctx = self.ctx
        out: dict = {}
        for name, lit in ctx.g.outputs:
            if lit in ctx.inv_names:
                q = ctx.inv_names[lit]
                if q not in out.values():
                    self.poles.append((q, ctx.state_net[q], None, "VCC"))
                out[name] = q
            else:
                net = self.wanted_net[("output", name)]
                out[name] = "GND" if net is None else net
        return out

    def storage(self) -> tuple[list, list]:
        """Sequencers and storage elements with all their poles (see :mod:`mapper.relay_logic`)."""
        ctx, names, poles = self.ctx, self.names, self.poles
        seqs: dict = {}
        out = []
        for latch in ctx.g.latches:
            d_net = self.wanted_net[("d", latch.name)]
            c_net = self.wanted_net[("control", latch.name)]
            if c_net is None or c_net == "VCC":
                raise UsageError(f"storage element {latch.name} has a constant clock or enable")
            key = (c_net, latch.kind)
            seq = seqs.get(key)
            if seq is None:
                seq = seqs[key] = _sequencer(c_net, latch.kind, names)
                poles.extend(seq.poles())
            edge = latch.kind in ("re", "fe")
            paths = tuple(names.fresh(f"{latch.name}_{tag}")
                          for tag in (("load", "hold", "slave_load", "slave_hold") if edge else ("load", "hold")))
            inv = latch.var in ctx.inverted
            lt = RelayStorage(latch.name, latch.kind, d_net, c_net, 1 if inv else 0, ctx.state_net[latch.name], paths,
                              names.fresh(f"{latch.name}_master") if edge else None, inv, latch.init)
            poles.extend(lt.poles(seq))
            out.append(lt)
        return list(seqs.values()), out


def _sequencer(control: str, kind: str, names: _Names) -> RelaySequencer:
    """A sequencer with fresh net names for the phases of ``control`` (see :mod:`mapper.relay_logic`)."""
    tag = f"{control}_{kind}"

    def fresh(what):
        return names.fresh(f"{tag}_{what}")

    if kind in ("re", "fe"):
        return RelaySequencer(control, kind, fresh("x"), fresh("y"), fresh("lm"), fresh("hm"), (),
                              fresh("z"), fresh("ls"), fresh("hs"))
    return RelaySequencer(control, kind, fresh("x"), fresh("y"), fresh("lm"), fresh("hm"), (fresh("ys"),))


def _plan(ctx: _Context, wins: list, single: bool, names: _Names, bound) -> _Plan | None:
    """Networks, storage and output nets for one choice of windows, or ``None``
    when a ``bound`` (relays) is given and the single window cannot beat it."""
    work = _Work(ctx, names)
    for w_index, win in enumerate(wins):
        if not work.window(w_index, win, single, bound):
            return None
    if not single:
        work.polarities()
    output_nets = work.output_nets()
    sequencers, latches = work.storage()
    per_coil = Counter(coil for _, coil, _, _ in work.poles)
    relays = sum(-(-k // ctx.P) for k in per_coil.values())
    return _Plan(work.poles, latches, sequencers, output_nets, work.reamp, wins, single, work.stats, names, relays)


# ---------------------------------------------------------------------------
# the build
#: random patterns that pick the nodes that may be constant
SWEEP_PATTERNS = 1024
#: a node's cone must have at most this many inputs and storage outputs to be proved constant
SWEEP_SUPPORT = 16


def sweep_constants(design: Netlist) -> Netlist:
    """``design`` with every logic node that is constant whatever its inputs hold replaced by that constant.

    A node can be constant without looking it (``a·b`` and ``a'·c`` into an
    AND); a window of contact networks would then have nothing to build for
    it.  Random patterns over the inputs and storage outputs pick the
    candidates; a candidate is replaced only when its cone has at most
    :data:`SWEEP_SUPPORT` inputs and storage outputs and its truth table over
    all of them is constant (so every replacement is proved; the proof of
    the whole build checks it again).
    """
    nodes = design.nodes
    storage = design.storage()
    rng = random.Random(0)
    mask = (1 << SWEEP_PATTERNS) - 1
    vals = simulate(design, {i: rng.getrandbits(SWEEP_PATTERNS) for i in design.inputs}, mask,
                    {q: rng.getrandbits(SWEEP_PATTERNS) for q in storage})
    found: dict = {}
    for name, node in nodes.items():
        if not isinstance(node, Logic) or not node.fanins or vals.get(name, 1) not in (0, mask):
            continue
        cone = cone_support(design, name, SWEEP_SUPPORT)
        if cone is None:
            continue
        support, order = cone
        k = len(support)
        full = (1 << (1 << k)) - 1
        words = {x: var_mask(k, j) for j, x in enumerate(support)}
        for n in order:
            nd = nodes[n]
            words[n] = nd.func.eval_words([words[f] for f in nd.fanins], full) if nd.fanins else \
                (full if nd.func.constant_value() else 0)
        if words[name] in (0, full):
            found[name] = 1 if words[name] else 0
    if not found:
        return design
    new = design.copy()
    for name, v in found.items():
        new.nodes[name] = Logic((), Function.constant(v))
    return new


def fit_relays(design: Netlist, target: Target, effort: int = 1) -> Build:
    """Build ``design`` as relay contact networks on ``target``'s relays.

    Returns an unproven :class:`~mapper.build.Build` (``flow.fit`` proves it)
    with relays ``K1``…, their poles (``contacts``), coils, support parts
    (a diode across each coil, a pull-down on each relay-driven net that
    feeds a coil or an output), storage (``latches``), notes and
    ``fit_stats``.  Raises :class:`UsageError` for what relays cannot build
    here (storage without a clock or enable).
    """
    carriers = relay_carriers(target)
    P = target.parts[carriers[0]].relay.poles
    for net, st in design.storage().items():
        if st.kind not in ("re", "fe", "ah", "al"):
            raise UsageError(f"storage element {net} of kind '{st.kind}' has no clock or enable; "
                             "relay builds need an edge-triggered or level-sensitive element")
        if st.control is None:
            raise UsageError(f"storage element {net} has no clock or enable net")

    design = sweep_constants(design)
    g, litmap = from_netlist(design)
    names = _Names(list(design.inputs) + list(design.outputs) + list(design.storage()))
    design_name: dict = {}   # AIG literal -> the design's name of a net carrying it
    for net, lit in litmap.items():
        if lit > 1 and g.is_and(lit >> 1):
            design_name.setdefault(lit, net)
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
    latch_vars = {latch.var for latch in g.latches}

    leaves_all = list(g.inputs) + [latch.var for latch in g.latches]
    ctx = _Context(g, want, inverted, inv_names, latch_vars, design_name, state_net,
                   dict(net_of_var), P, effort)
    need_and = sorted({lit >> 1 for _, _, lit in want if (lit >> 1) and g.is_and(lit >> 1)})
    # windows cut at nets of many fan-outs: always possible, never far from the templates;
    # small windows and smaller ones (close to gate by gate, with pass-through), the better kept
    split: _Plan | None = None
    for limit in SPLIT_LEAVES:
        p = _plan(ctx, windows(g, need_and, limit), False, names.copy(),
                  split.relays if split is not None else None)
        if p is not None and (split is None or p.relays < split.relays):
            split = p
    if split is None:  # without a bound a windowed plan is always made
        raise InternalError(f"no windowed relay plan for {design.name}")
    # the design's own gates, one window each: never worse than building it gate by gate
    gates = gate_windows(g, design, litmap, need_and, WINDOW_LEAVES)
    if gates is not None:
        p = _plan(ctx, gates, False, names.copy(), split.relays)
        if p is not None and p.relays < split.relays:
            split = p
    best = split
    if len(leaves_all) <= WINDOW_LEAVES:
        # one window over every leaf: exact decision diagrams with sharing across outputs,
        # abandoned as soon as it cannot beat the windowed plan
        need = sorted({lit >> 1 for _, _, lit in want if lit > 1})
        whole = _plan(ctx, [Window(list(leaves_all), cone(g, need), [])], True, names.copy(),
                      split.relays)
        if whole is not None and whole.relays <= split.relays:
            best = whole
    b = Build(design.name, target, list(design.inputs), list(design.outputs))
    b.output_nets = best.output_nets
    b.latches = best.latches
    b.sequencers = best.sequencers
    _pack(b, target, carriers, list(best.poles))
    add_support(b, _steering(b))
    b.notes.append(
        "contact networks from reduced ordered decision diagrams built as relay contacts "
        "(Shannon, Trans. AIEE 57, 1938 and BSTJ 28, 1949; Lee, BSTJ 38, 1959; Akers, IEEE Trans. "
        "Computers C-27, 1978): one changeover per decision node, a make or break contact where one "
        "branch is open, shared sub-networks, signals passed through contacts")
    if best.reamp:
        b.notes.append(f"re-amplification points (nets with a coil of their own): {', '.join(best.reamp)}")
    if not best.single:
        b.notes.append(f"the design was cut into {len(best.windows)} windows at nets of many fan-outs")
    b.fit_stats = {
        "windows": len(best.windows),
        "evaluations": sum(r.evaluations for r in best.stats),
        "seconds": round(sum(r.seconds for r in best.stats), 3),
        "re_amplification_points": best.reamp,
    }
    return b


def _steering(b: Build) -> list:
    """``(anode, cathode), purpose`` of every steering diode the build's storage needs."""
    out = []
    for seq in b.sequencers:
        for anode, cathode in seq.diodes():
            out.append(((anode, cathode), f"steering for the sequencer of {seq.control}: {anode} holds the "
                                          f"coil on {cathode} without being fed back"))
    for lt in b.latches:
        seq = sequencer_for(b, lt)
        for anode, cathode in lt.diodes(seq):
            out.append(((anode, cathode), f"steering for {lt.net}: lets {anode} feed the coil on {cathode} "
                                          "without being fed back"))
    return out


# ---------------------------------------------------------------------------
# packing
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


# ---------------------------------------------------------------------------
# repeaters
def redrive(b: Build, nets: list) -> Build:
    """``b`` with a repeater relay on each of ``nets``: its coil on the net, a make contact from the rail
    feeding a new net that takes over every contact and coil the net fed (storage's own poles excepted).

    A long chain of contacts, or many coils on one chain, loses voltage on
    the way (see :mod:`mapper.analyze.wired`); the repeater starts the rest
    of the chain afresh from the supply.  The new net has the old one's
    value, so the build does the same logic (the caller proves it again);
    it costs a relay and a coil level.  Nets private to storage and the rails
    are left alone.
    """
    inner, _ = storage_nets(b)
    keep = {(lt_pole) for seq in b.sequencers for lt_pole in seq.poles()}
    for lt in b.latches:
        keep.update(lt.poles(sequencer_for(b, lt)))
    names = _Names(list(b.inputs) + list(b.outputs) + [n for k in b.contacts for n in (k.com, k.no, k.nc) if n]
                   + list(b.coils.values()))
    poles = [(k.com, b.coils[k.part_ref], k.no, k.nc) for k in b.contacts]
    done = []
    for net in nets:
        if net in inner or net in SUPPLY_NETS:
            continue
        fresh = names.fresh(f"{net}_rep")
        moved = []
        for com, coil, no, nc in poles:
            if (com, coil, no, nc) in keep:
                moved.append((com, coil, no, nc))
                continue
            moved.append((com, fresh if coil == net else coil, fresh if no == net else no, fresh if nc == net else nc))
        if moved == poles:
            continue
        poles = moved + [(fresh, net, "VCC", None)]
        done.append(net)
    if not done:
        return b
    out = Build(b.design, b.target, list(b.inputs), list(b.outputs))
    out.output_nets = dict(b.output_nets)
    out.latches, out.sequencers = b.latches, b.sequencers
    out.notes = list(b.notes) + [f"repeater relays drive afresh what {', '.join(done)} fed (the voltage left at "
                                 "the end of the chain was too low)"]
    out.fit_stats = dict(b.fit_stats)
    _pack(out, b.target, relay_carriers(b.target), poles)
    add_support(out, _steering(out))
    return out

