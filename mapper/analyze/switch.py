"""A switch-level model of a relay build as wired, and the checks that run on it.

This model knows nothing of how the build was made and nothing of the logic
view the prover reads (:mod:`mapper.relay_logic`): it reads the build's
parts, coils, poles and support parts as a wiring diagram.

The model
---------
* **Nets** conduct along closed contacts in both directions, and along
  diodes from anode to cathode only.  A net is *powered* when it is joined
  to the supply rail ``VCC``, or to an input that is on (an input is a
  switch that puts the rail on its net).
* **Relays** move one at a time, each on its own, in any order (relays on
  one coil net are separate relays).  A relay whose coil is powered wants
  to be operated, otherwise released; while it moves it is *in transfer*
  and every one of its contacts is open (a changeover breaks before it
  makes).  A relay in transfer always lands where it was going; if its coil
  has changed meanwhile it may then move back.
* **Strict gaps.**  Nothing here is timed: a relay that loses its feed for
  any moment (while another relay is in transfer) may start to release.
  A build that holds a bit only because a release time exceeds a transfer
  time fails these checks; that condition must be designed out.

The checks
----------
A build without feedback (no relay's coil depends on the relay itself
through contacts and diodes) settles in one state per input assignment,
whatever the order: those states are checked directly, every assignment up
to :data:`MAX_ASSIGNMENTS`.  Otherwise, for the power-up (every relay
released, every input off) and for every
single-input change from the stable states reached (all of them up to a
budget, else a stated sample), every order of relay moves is explored
(states shared between orders are visited once):

* the settled state must not depend on the order (*order-dependent*);
* no order may move forever (*oscillation*: a reachable cycle of states);
* the supply must never be joined to ``GND`` (*short*), in any state passed
  (and, as wired, no contact terminal may be on ``GND`` and no diode point
  into it: without those no state can short the supply);
* an input that is off must never be fed from elsewhere (*back-feed*);
* an output must never be left floating in a settled state (*floating*:
  neither powered nor held by a load);
* every settled state must do what the build's logic view says
  (*behaviour*): each output as the logic computes it from the inputs and
  the bits the storage relays hold, and each bit as its kind says -- after
  an active clock edge the data value before the edge, while a latch is
  open its data value, otherwise unchanged.

The exploration counts the states it visits.  Where a change's orders
exceed :data:`MAX_STATES_PER_CHANGE` states, that change is checked on a
sample instead: :data:`SAMPLED_ORDERS` random orders, and for every relay
that moves, an order that moves it as late as it can; the report counts
such changes apart (``changes_sampled``).
"""
from __future__ import annotations

import logging
import random
from dataclasses import dataclass, field

from ..build import Build
from ..errors import InternalError
from ..netlist import Netlist
from ..simulate import simulate

__all__ = ["SwitchCircuit", "SwitchReport", "check_relay_build", "MAX_STATES_PER_CHANGE", "MAX_STABLE_STATES"]

log = logging.getLogger(__name__)

#: states explored for one input change before the change is checked on sampled orders instead
MAX_STATES_PER_CHANGE = 5_000
#: stable states whose input changes are all checked (beyond: a random sample, stated)
MAX_STABLE_STATES = 200
#: total states explored over all changes (keeps big builds quick; the report states the coverage)
MAX_TOTAL_STATES = 60_000
#: random orders tried for a change too big to explore in full
SAMPLED_ORDERS = 32
#: moves after which one order is taken to be oscillating
MAX_MOVES = 20_000
#: relays (of those that moved) each given an order that moves it as late as it can, per sampled change
SAMPLED_LATE = 24
#: moves all the sampled orders of one run of checks may take (beyond: random orders only)
MAX_SAMPLED_MOVES = 150_000

RELEASED, OPERATED, TO_OPERATED, TO_RELEASED = 0, 1, 2, 3


@dataclass
class SwitchCircuit:
    """A relay build as nets, relays, diodes and loads (integer net ids).

    ``poles[r]`` lists ``(com, no, nc)`` net ids of relay ``r`` (``-1`` for
    an unused terminal); ``coil[r]`` is its coil net.  ``diodes`` are
    ``(anode, cathode)`` pairs; ``loads`` the nets held at 0 by a coil or a
    resistor when nothing powers them.
    """

    names: list
    refs: list
    coil: list
    poles: list
    diodes: list
    loads: set
    inputs: list
    outputs: dict
    vcc: int
    gnd: int

    @classmethod
    def from_build(cls, b: Build) -> SwitchCircuit:
        """Read the wiring of relay build ``b``: its relays' coils and poles, and its support parts."""
        ids: dict = {}

        def nid(net):
            if net is None:
                return -1
            return ids.setdefault(net, len(ids))

        vcc, gnd = nid("VCC"), nid("GND")
        for i in b.inputs:
            nid(i)
        refs, coil, poles = [], [], []
        by_ref: dict = {}
        for k in b.contacts:
            by_ref.setdefault(k.part_ref, []).append(k)
        for p in b.parts:
            refs.append(p.ref)
            coil.append(nid(b.coils.get(p.ref)))
            poles.append([(nid(k.com), nid(k.no), nid(k.nc)) for k in by_ref.get(p.ref, [])])
        diodes, loads = [], {c for c in coil if c >= 0}
        for s in b.support:
            if s.role in ("coil-diode", "steering"):
                diodes.append((nid(s.nets[0]), nid(s.nets[1])))
            elif s.role == "pull-down":
                loads.update(nid(n) for n in s.nets if n != "GND")
        outputs = {o: nid(b.output_nets.get(o, o)) for o in b.outputs}
        return cls(list(ids), refs, coil, poles, diodes, loads, [ids[i] for i in b.inputs], outputs, vcc, gnd)

    def adjacency(self) -> tuple[list, list]:
        """``(contacts, diodes_out)``: per net, ``(relay, other net, position that closes it)``; per anode, cathodes."""
        n = len(self.names)
        contacts: list = [[] for _ in range(n)]
        for r, ps in enumerate(self.poles):
            for com, no, nc in ps:
                for side, pos in ((no, OPERATED), (nc, RELEASED)):
                    if com >= 0 and side >= 0:
                        contacts[com].append((r, side, pos))
                        contacts[side].append((r, com, pos))
        diodes_out: list = [[] for _ in range(n)]
        for a, c in self.diodes:
            if a >= 0 and c >= 0:
                diodes_out[a].append(c)
        return contacts, diodes_out


@dataclass
class SwitchReport:
    """What the switch-level checks found (see the module docstring)."""

    stable_states: int = 0
    changes_checked: int = 0
    changes_sampled: int = 0
    changes_total: int = 0
    exhaustive: bool = True
    states_visited: int = 0
    order_dependent: list = field(default_factory=list)
    oscillations: list = field(default_factory=list)
    shorts: list = field(default_factory=list)
    back_feeds: list = field(default_factory=list)
    floating: list = field(default_factory=list)
    behaviour: list = field(default_factory=list)
    #: sampled changes that got random orders only (the late orders' move budget was spent)
    late_orders_cut: int = 0
    #: the settled states examined, ``(positions, inputs)`` (for the figures of :mod:`mapper.analyze.wired`)
    settled: list = field(default_factory=list, repr=False)

    @property
    def defects(self) -> int:
        return (len(self.order_dependent) + len(self.oscillations) + len(self.shorts) + len(self.back_feeds)
                + len(self.floating) + len(self.behaviour))

    def as_dict(self) -> dict:
        return {"stable_states": self.stable_states, "changes_checked": self.changes_checked,
                "changes_sampled": self.changes_sampled,
                "changes_total": self.changes_total, "exhaustive": self.exhaustive,
                "states_visited": self.states_visited,
                "defects": self.defects, "order_dependent": self.order_dependent[:20],
                "oscillations": self.oscillations[:20], "shorts": self.shorts[:20],
                "back_feeds": self.back_feeds[:20], "floating": self.floating[:20],
                "behaviour": self.behaviour[:20], "late_orders_cut": self.late_orders_cut}


class _Explorer:
    """Every order of relay moves from a state, with the checks made on the way."""

    def __init__(self, circ: SwitchCircuit, report: SwitchReport, budget: int, per_change: int, sampled: int):
        self.c = circ
        self.report = report
        self.contacts, self.diodes_out = circ.adjacency()
        self.input_set = set(circ.inputs)
        self.budget = budget
        self.per_change = per_change
        self.sampled = sampled
        self.moves_left = MAX_SAMPLED_MOVES
        #: relays whose coil is fed through a diode (storage and sequencer steps)
        steered = {k for a, k in circ.diodes if a != circ.gnd}   # coil diodes run from GND: not a feed
        self.diode_fed = {r for r, coil in enumerate(circ.coil) if coil in steered}

    def powered(self, pos: tuple, inputs: int) -> bytearray:
        """Which nets are powered with relays at ``pos`` and input ``i`` on where bit ``i`` of ``inputs`` is set."""
        c = self.c
        on = bytearray(len(c.names))
        stack = [c.vcc]
        for i, net in enumerate(c.inputs):
            if inputs >> i & 1:
                stack.append(net)
        contacts, diodes_out = self.contacts, self.diodes_out
        while stack:
            n = stack.pop()
            if on[n]:
                continue
            on[n] = 1
            for r, other, need in contacts[n]:
                if pos[r] == need and not on[other]:
                    stack.append(other)
            for other in diodes_out[n]:
                if not on[other]:
                    stack.append(other)
        return on

    def _check_state(self, pos, inputs, on, what) -> None:
        c, rep = self.c, self.report
        if on[c.gnd] and len(rep.shorts) < 50:
            rep.shorts.append({"when": what, "relays": self._moving(pos)})
        for i, net in enumerate(c.inputs):
            if not inputs >> i & 1 and on[net] and len(rep.back_feeds) < 50:
                rep.back_feeds.append({"input": c.names[net], "when": what})

    def _moving(self, pos) -> list:
        return [self.c.refs[r] for r, p in enumerate(pos) if p >= TO_OPERATED]

    def movable(self, pos: tuple, on: bytearray) -> list:
        """``(relay, its next position)`` for every relay that can take a step from ``pos``."""
        out = []
        coil = self.c.coil
        for r, p in enumerate(pos):
            if p == TO_OPERATED:
                out.append((r, OPERATED))
            elif p == TO_RELEASED:
                out.append((r, RELEASED))
            else:
                c = coil[r]
                want = OPERATED if c >= 0 and on[c] else RELEASED
                if p != want:
                    out.append((r, TO_OPERATED if want == OPERATED else TO_RELEASED))
        return out

    def successors(self, pos: tuple, on: bytearray) -> list:
        return [pos[:r] + (nxt,) + pos[r + 1:] for r, nxt in self.movable(pos, on)]

    def settle(self, start: tuple, inputs: int, what: str) -> list | None:
        """The settled states every order of moves from ``start`` can end in (``None``: too many states)."""
        seen: dict = {}          # state -> 1 on the DFS stack, 2 done
        finals: list = []
        stack: list = [(start, None)]
        visited = 0
        cycle_said = False
        while stack:
            pos, it = stack[-1]
            if it is None:
                if pos in seen:
                    stack.pop()
                    continue
                seen[pos] = 1
                visited += 1
                if visited > self.per_change or self.budget <= 0:
                    self.report.states_visited += visited
                    self.budget -= visited
                    return None
                on = self.powered(pos, inputs)
                self._check_state(pos, inputs, on, what)
                succ = self.successors(pos, on)
                if not succ:
                    finals.append(pos)
                it = iter(succ)
                stack[-1] = (pos, it)
            nxt = next(it, None)
            if nxt is None:
                seen[pos] = 2
                stack.pop()
                continue
            if seen.get(nxt) == 1 and not cycle_said:
                cycle_said = True
                self.report.oscillations.append({"when": what, "relays": self._moving(nxt)})
            if nxt not in seen:
                stack.append((nxt, None))
        self.report.states_visited += visited
        self.budget -= visited
        return finals

    def sample(self, start: tuple, inputs: int, what: str, rng: random.Random) -> list:
        """Settled states of sampled orders: random ones, and moving relays each as late as it can go.

        The late orders are tried for at most :data:`SAMPLED_LATE` of the
        relays that moved, those fed through diodes (storage and its
        sequencer) first; all sampled orders of a run of checks share
        :data:`MAX_SAMPLED_MOVES` moves, and once they are spent a change
        gets its random orders only (``report.late_orders_cut`` counts those).
        """
        finals: list = []
        movers: set = set()
        k = 0
        late: list = []
        while True:
            if k < self.sampled:
                slow = None
            else:
                if k == self.sampled:
                    fed = self.diode_fed
                    late = sorted(movers, key=lambda r: (r not in fed, rng.random()))[:SAMPLED_LATE]
                    if late and self.moves_left <= 0:
                        self.report.late_orders_cut += 1
                        late = []
                if k - self.sampled >= len(late):
                    break
                slow = late[k - self.sampled]
            k += 1
            pos = start
            for _ in range(MAX_MOVES):
                self.moves_left -= 1
                on = self.powered(pos, inputs)
                self._check_state(pos, inputs, on, what)
                steps = self.movable(pos, on)
                if not steps:
                    if pos not in finals:
                        finals.append(pos)
                    break
                if slow is not None:
                    steps = [st for st in steps if st[0] != slow] or steps
                r, p = steps[rng.randrange(len(steps))]
                movers.add(r)
                pos = pos[:r] + (p,) + pos[r + 1:]
            else:
                self.report.oscillations.append({"when": what, "relays": self._moving(pos)})
        return finals

    def floating_outputs(self, pos: tuple, inputs: int, what: str) -> None:
        c = self.c
        on = self.powered(pos, inputs)
        for o, net in c.outputs.items():
            if net not in (c.vcc, c.gnd) and not on[net] and net not in c.loads and net not in self.input_set:
                if len(self.report.floating) < 50:
                    self.report.floating.append({"output": o, "when": what})


class _Behaviour:
    """What the build's logic view says a settled state should be (outputs, and bits after a change)."""

    def __init__(self, b: Build, circ: SwitchCircuit, ex: _Explorer, report: SwitchReport):
        self.c, self.ex = circ, ex
        self.n: Netlist | None = None
        try:
            self.n = b.to_netlist()
        except InternalError as exc:   # the wiring has no logic reading at all: that is the defect found
            report.behaviour.append({"when": "reading the build as logic", "fault": str(exc)})
        ids = {name: i for i, name in enumerate(circ.names)}
        self.bits = [(lt, ids[lt.state]) for lt in b.latches if lt.state in ids]

    def bits_of(self, on) -> dict:
        return {lt.net: (1 - on[i]) if lt.inverted else on[i] for lt, i in self.bits}

    def values(self, inputs: int, bits: dict) -> dict:
        n = self.n
        if n is None:
            return {}
        words = {name: inputs >> i & 1 for i, name in enumerate(n.inputs)}
        return simulate(n, words, 1, bits)

    def check(self, before: tuple, inputs_before: int, after: tuple, inputs_after: int, what: str,
              report: SwitchReport) -> None:
        if self.n is None:
            return
        c = self.c
        on0, on1 = self.ex.powered(before, inputs_before), self.ex.powered(after, inputs_after)
        bits0, bits1 = self.bits_of(on0), self.bits_of(on1)
        v0 = self.values(inputs_before, bits0)
        v1 = self.values(inputs_after, bits1)
        for lt, _ in self.bits:
            ctrl0, ctrl1 = v0.get(lt.control, 0) & 1, v1.get(lt.control, 0) & 1
            active = 1 if lt.kind in ("re", "ah") else 0
            if lt.kind in ("re", "fe"):
                want = v0[lt.d] & 1 if (ctrl0 != active and ctrl1 == active and lt.d not in (None, "VCC")) else None
                if lt.d == "VCC" and ctrl0 != active and ctrl1 == active:
                    want = 1
                if lt.d is None and ctrl0 != active and ctrl1 == active:
                    want = 0
                if want is not None and lt.inverted:
                    want ^= 1  # the relay's d is the complement's data; the bit is the design's
                if want is None:
                    want = bits0[lt.net]
            else:
                want = (v1[lt.d] & 1 if lt.d not in (None, "VCC") else (1 if lt.d else 0)) if ctrl1 == active \
                    else bits0[lt.net]
                if ctrl1 == active and lt.inverted:
                    want ^= 1
            if bits1[lt.net] != want and len(report.behaviour) < 50:
                report.behaviour.append({"when": what, "storage": lt.net, "holds": bits1[lt.net], "expected": want})
        for o, net in c.outputs.items():
            got = on1[net] if net >= 0 else 0
            if got != v1[o] & 1 and len(report.behaviour) < 50:
                report.behaviour.append({"when": what, "output": o, "reads": got, "expected": v1[o] & 1})


def _state_text(c: SwitchCircuit, pos: tuple, inputs: int) -> dict:
    return {"inputs": {c.names[n]: inputs >> i & 1 for i, n in enumerate(c.inputs)},
            "operated": [c.refs[r] for r, p in enumerate(pos) if p == OPERATED]}


def check_relay_build(b: Build, max_stable: int = MAX_STABLE_STATES, max_states: int = MAX_TOTAL_STATES,
                      per_change: int = MAX_STATES_PER_CHANGE, sampled: int = SAMPLED_ORDERS,
                      seed: int = 0) -> SwitchReport:
    """Run the switch-level checks of the module docstring on relay build ``b``.

    ``max_stable`` settled states have their input changes checked,
    ``max_states`` states are explored in all, ``per_change`` states per
    change before it is checked on ``sampled`` random orders (and the late
    orders) instead.
    """
    circ = SwitchCircuit.from_build(b)
    report = SwitchReport()
    ex = _Explorer(circ, report, max_states, per_change, sampled)
    _static_shorts(circ, report)
    if _acyclic(circ):
        _combinational(b, circ, ex, report, random.Random(seed))
        return report
    start = tuple(RELEASED for _ in circ.refs)
    rng = random.Random(seed)
    init = 0
    finals = ex.settle(start, init, "power-up")
    if finals is None:
        finals = ex.sample(start, init, "power-up", rng)
        report.changes_sampled += 1
    if len(finals) > 1:
        report.order_dependent.append({"change": "power-up", "outcomes": [_state_text(circ, f, init)
                                                                          for f in finals[:3]]})
    beh = _Behaviour(b, circ, ex, report)
    if not finals:   # no order settles: it never stops moving
        if not report.oscillations:
            report.oscillations.append({"when": "power-up", "relays": []})
        report.exhaustive = False
        return report
    queue = [(finals[0], init)]
    known = {(finals[0], init)}
    n_in = len(circ.inputs)
    while queue:
        if report.stable_states >= max_stable:
            report.exhaustive = False
            break
        # breadth first while the budget allows; a random pick keeps a cut-off sample spread out
        pos, inputs = queue.pop(0) if report.stable_states < max_stable // 2 else queue.pop(rng.randrange(len(queue)))
        report.stable_states += 1
        report.settled.append((pos, inputs))
        ex.floating_outputs(pos, inputs, "settled")
        for i in range(n_in):
            report.changes_total += 1
            after = inputs ^ (1 << i)
            name = circ.names[circ.inputs[i]]
            what = f"{name} {'on' if after >> i & 1 else 'off'} from {_compact(circ, pos, inputs)}"
            finals = ex.settle(pos, after, what)
            if finals is None:
                finals = ex.sample(pos, after, what, rng)
                report.changes_sampled += 1
            else:
                report.changes_checked += 1
            if not finals and not report.oscillations:
                report.oscillations.append({"when": what, "relays": []})
            if len(finals) > 1:
                report.order_dependent.append({"change": what, "outcomes": [_state_text(circ, f, after)
                                                                            for f in finals[:3]]})
            for f in finals[:1]:
                beh.check(pos, inputs, f, after, what, report)
                if (f, after) not in known:
                    known.add((f, after))
                    queue.append((f, after))
        if ex.budget <= 0:
            report.exhaustive = False
            break
    if queue or report.changes_sampled:
        report.exhaustive = False
    return report


def _static_shorts(c: SwitchCircuit, report: SwitchReport) -> None:
    """Wiring that can join the supply to ``GND``: a contact terminal on ``GND``, a diode pointing into it.

    Without such wiring no state of any order can short the supply (``GND``
    is otherwise reached only through coils and resistors, which are loads).
    """
    for r, ps in enumerate(c.poles):
        for k, (com, no, nc) in enumerate(ps, 1):
            if c.gnd in (com, no, nc):
                report.shorts.append({"when": "as wired", "relays": [c.refs[r]], "pole": k,
                                      "fault": "a contact terminal on GND"})
    for a, k in c.diodes:
        if k == c.gnd and a != c.gnd:
            report.shorts.append({"when": "as wired", "relays": [], "fault": f"a diode from {c.names[a]} into GND"})


def _acyclic(c: SwitchCircuit) -> bool:
    """Whether no relay's coil depends, through contacts and diodes, on the relay itself (no storage)."""
    # net -> nets it can power: a pole's side feeds its common (a pole fed at its common feeds its sides),
    # a diode's anode its cathode.  In netfit's contact networks every relay-driven net has one driving pole,
    # so power flows only that way; wired joins occur in storage, which is a loop anyway.
    feeds: dict = {}
    for ps in c.poles:
        for com, no, nc in ps:
            for side in (no, nc):
                if com >= 0 and side >= 0:
                    if com in (c.vcc, *c.inputs):
                        feeds.setdefault(com, set()).add(side)
                    else:
                        feeds.setdefault(side, set()).add(com)
    for a, k in c.diodes:
        feeds.setdefault(a, set()).add(k)
    # relay r -> relay q when a net touched by r's contacts reaches q's coil without passing a source
    sources = {c.vcc, c.gnd} | set(c.inputs)
    coil_of: dict = {}
    for q, net in enumerate(c.coil):
        coil_of.setdefault(net, []).append(q)
    graph: dict = {}
    for r, ps in enumerate(c.poles):
        start = {com if com not in sources else side for com, no, nc in ps for side in (no, nc)
                 if com >= 0 and side >= 0}
        start -= sources
        seen, todo = set(start), list(start)
        while todo:
            n = todo.pop()
            for q in coil_of.get(n, ()):
                graph.setdefault(r, set()).add(q)
            for m in feeds.get(n, ()):
                if m not in seen and m not in sources:
                    seen.add(m)
                    todo.append(m)
    state = dict.fromkeys(range(len(c.refs)), 0)   # 0 new, 1 on the stack, 2 done
    for root in range(len(c.refs)):
        if state[root]:
            continue
        stack = [(root, iter(graph.get(root, ())))]
        state[root] = 1
        while stack:
            node, it = stack[-1]
            nxt = next(it, None)
            if nxt is None:
                state[node] = 2
                stack.pop()
            elif state[nxt] == 1:
                return False
            elif state[nxt] == 0:
                state[nxt] = 1
                stack.append((nxt, iter(graph.get(nxt, ()))))
    return True


def _settled(ex: _Explorer, inputs: int) -> tuple:
    """The one settled state of a build without feedback: relays set to their coils until nothing moves."""
    pos = tuple(RELEASED for _ in ex.c.refs)
    for _ in range(len(pos) + 2):
        on = ex.powered(pos, inputs)
        nxt = tuple(OPERATED if net >= 0 and on[net] else RELEASED for net in ex.c.coil)
        if nxt == pos:
            return pos
        pos = nxt
    raise InternalError("a relay build without feedback did not settle")


#: input assignments checked one by one in a build without feedback (beyond: a random sample)
MAX_ASSIGNMENTS = 4096


def _combinational(b: Build, circ: SwitchCircuit, ex: _Explorer, report: SwitchReport, rng: random.Random) -> None:
    """A build without feedback settles in one state per input assignment, whatever the order (each relay
    ends where its coil's final value puts it, in the order of the dependencies): check each assignment's."""
    n = len(circ.inputs)
    total = 1 << n
    if total <= MAX_ASSIGNMENTS:
        picks: list | range = range(total)
    else:  # drawn as bits: range() of 2^n is too big for random.sample beyond some 60 inputs
        drawn: set = set()
        while len(drawn) < MAX_ASSIGNMENTS:
            drawn.add(rng.getrandbits(n))
        picks = sorted(drawn)
    beh = _Behaviour(b, circ, ex, report)
    report.changes_total = total if n <= 1000 else 0   # beyond, a number too long to print; the inputs say it
    for inputs in picks:
        pos = _settled(ex, inputs)
        report.stable_states += 1
        report.changes_checked += 1
        if len(report.settled) < MAX_STABLE_STATES:
            report.settled.append((pos, inputs))
        on = ex.powered(pos, inputs)
        ex._check_state(pos, inputs, on, f"inputs {inputs:0{n}b}")
        ex.floating_outputs(pos, inputs, "settled")
        beh.check(pos, inputs, pos, inputs, f"inputs {inputs:0{n}b}", report)
    report.exhaustive = total <= MAX_ASSIGNMENTS


def _compact(c: SwitchCircuit, pos: tuple, inputs: int) -> str:
    ins = "".join(str(inputs >> i & 1) for i in range(len(c.inputs)))
    ops = "".join(str(p) for p in pos)
    return f"inputs {ins}, relays {ops}"
