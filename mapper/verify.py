"""Proof that two netlists do the same logic, or an input that tells them apart.

How :func:`check_equivalence` decides
-------------------------------------
1. **Ports.**  Inputs, outputs and storage elements are matched by name.  A
   port or storage element present in only one design, or matched storage
   elements of different kinds, make the answer "not equivalent" (method
   ``"ports"`` or ``"storage"``) with a note naming them; no proof is tried
   for such a pair, and there is no counterexample.
2. **A shared-input miter.**  Both designs go into one AIG
   (:mod:`mapper.logic.aig`) whose inputs are the shared primary inputs and
   the shared storage outputs (free variables).  Compared pairs: every
   primary output, and for every storage element its next-state (data)
   function and its control (clock/enable) function.  Where ``a.exdc`` (the
   external don't cares of BLIF ``.exdc``: a netlist whose outputs are named
   like the design's outputs) is 1, an output difference does not count.
3. **Random simulation** of the miter with thousands of patterns at once;
   a difference found here is returned at once (method ``"simulation"``).
4. **SAT sweeping** (Kuehlmann, Paruthi, Krohm and Ganai, "Robust Boolean
   reasoning for equivalence checking and functional property verification",
   IEEE TCAD 21(12), 2002; Mishchenko, Chatterjee, Jiang and Brayton,
   "FRAIGs: a unifying representation for logic synthesis and verification",
   ICCAD 2006 / ERL technical report 2005): nodes whose simulation
   signatures agree, possibly up to complement, are candidate equivalences.
   The miter is rebuilt node by node in topological order; each node with a
   candidate is proved equal to it and, when proved, merged into it, so
   later proofs only see the logic between merged points.  A proof is first
   tried over a small cut shared by both nodes (exhaustive simulation of the
   cut; equivalence over cuts as in Kuehlmann and Krohm, DAC 1997), then by
   a SAT call with a conflict budget.  A disproof yields a pattern that is
   simulated (with its distance-1 neighbours, in batches) to split the
   candidate classes.  Caller's ``hints`` (net of A -> net of B believed
   equal) are tried first.
5. **Output proofs** on the swept graph: each compared pair is proved equal
   or a counterexample is read off the SAT model (method ``"sat-sweeping"``;
   ``"sat"`` when sweeping is switched off).  The CNF is our own
   Tseitin encoding over the AIG (:mod:`mapper.logic.cnf`).

Every counterexample is replayed on both netlists with
:func:`mapper.simulate.simulate`; one that does not reproduce is our bug and
raises :class:`~mapper.errors.InternalError`.

Storage elements
----------------
Storage outputs are free variables, so "equivalent" here means the next-state
and control functions agree in *every* state, which implies the designs
behave alike cycle by cycle from any common starting state.  A difference may
lie in a state the designs never reach (a note says so).  Initial values:
don't care (2) and unknown (3) match anything; different known values
(0 against 1) make the answer "not equivalent" with a note (method
``"initial-values"`` when the logic is otherwise equal).

Feedback loops
--------------
A design's loops of logic are read as storage of kind ``as`` at their cut
nets (:mod:`mapper.logic.feedback`): the cut net is a state variable and the
logic driving it its excitation, compared like any next-state function.
When the two designs cut their loops at different nets, one is cut again
at the other's nets where those break all its loops
(:func:`mapper.logic.feedback.align_cuts`; a note says which).  A feedback
loop in one design may be a latch in the other (``ah``/``al``): the latch's
next state (its data while open, its own value while closed) is compared
with the loop's excitation.  When both designs have loops and are found
equal, the flow tables of their loops are compared as well: the same stable
states, and the same state after each single input change
(:func:`mapper.logic.flowtable.compare_flow`; method ``"flow-table"`` if
not).  A note states the assumption all this rests on: Huffman's
fundamental mode -- inputs change one at a time, once every loop has
settled.

Storage built of gates or relays
--------------------------------
A build on a target without storage parts, exported and read back, holds
its bits in feedback loops, cut where the reader cut them (several latches
and the logic between them in one region).  When the other design declares
storage of other names, the loops are read again
(:func:`mapper.logic.gateflops.edge_form`): cut one per latch, each latch
by its flow table, a relay build's clock sequencer in its settled states,
and two latches on opposite levels of one clock, the second fed from the
first, as one edge-triggered flip-flop (master and slave).  The elements
are then paired with the other design's: by name; through a net that reads
one (a bit held as its complement); else by trying one-to-one pairings, up
to complement, each proved by the miter itself -- if paired elements that
agree give agreeing next states and outputs, they agree ever after
(register correspondence by induction, van Eijk, IEEE TCAD 19(7), 2000).
Notes say how the pairing was found.  Loops that cannot be read so, or
storage that cannot be paired, give "not proved" (``decided`` False), never
"equal" and never "different".
"""
from __future__ import annotations

import heapq
import itertools
import logging
import random
import re
import time
from dataclasses import dataclass, field

from pysat.solvers import Solver

from .errors import InternalError, NetfitError
from .logic.aig import AIG, from_netlist
from .logic.cnf import AigCnf
from .logic.feedback import align_cuts, has_feedback
from .logic.flowtable import compare_flow
from .logic.function import var_mask
from .logic.gateflops import edge_form, encode, pair_through_nets
from .netlist import Netlist
from .simulate import simulate

__all__ = [
    "EquivalenceResult",
    "ProofLimitError",
    "check_equivalence",
    "DEFAULT_SOLVER",
    "DEFAULT_CONFLICT_BUDGET",
]

log = logging.getLogger(__name__)

#: the pysat back end; chosen by measurement (bench/bench_verify.py --solvers)
DEFAULT_SOLVER = "cadical195"
#: conflicts allowed for each candidate proof while sweeping
DEFAULT_CONFLICT_BUDGET = 1000
#: random patterns simulated before any SAT call
DEFAULT_PATTERNS = 2048
#: at most this many tries to merge one node (each failed try refines the classes)
_MAX_TRIES = 4
#: leaves and inner nodes of the cut tried before a SAT call (see _Prover.cut_equal)
_CUT_LEAVES = 8
_CUT_NODES = 100
_CONE_TOP = 40
#: refuted candidates collected before their patterns are simulated
_REFINE_BATCH = 16

_LOOP_ASSUMPTION = (
    "feedback loops are compared in Huffman's model (J. Franklin Inst. 257, 1954): each loop cut at the "
    "same nets, a cut net a state variable and the logic driving it its excitation, compared in every state. "
    "Equal excitations give equal flow tables, so the designs behave alike when inputs change one at a time "
    "and only once every loop has settled (fundamental mode); how gates inside a loop race when inputs change "
    "together depends on their delays and is not part of the proof")

class ProofLimitError(NetfitError):
    """The SAT solver ran out of its budget before deciding an output."""

    exit_code = 1


@dataclass
class EquivalenceResult:
    """The answer of :func:`check_equivalence`.

    Attributes
    ----------
    equivalent : bool
    method : str
        What decided it: ``"structural"``, ``"simulation"``, ``"sat"``,
        ``"sat-sweeping"``, ``"ports"``, ``"storage"``, ``"initial-values"`` or
        ``"flow-table"``.
    counterexample : dict or None
        ``{"inputs": {name: 0/1}, "state": {storage: 0/1}, "differs":
        [{"output": name, "kind": "output" | "next-state" | "control",
        "a": 0/1, "b": 0/1}]}``; ``None`` when equivalent or when the
        difference is in the ports or initial values.
    notes : list of str
    stats : dict
        Sizes, SAT calls, merges and seconds (for reports and benchmarks).
    decided : bool
        False when not equivalent means "not proved": storage of gates or
        relays that could not be read or paired (the notes say why).
    """

    equivalent: bool
    method: str
    counterexample: dict | None = None
    notes: list = field(default_factory=list)
    stats: dict = field(default_factory=dict)
    #: False when the answer is "not proved" rather than "different" (the proof could not be set up)
    decided: bool = True

    def to_dict(self) -> dict:
        """Plain data with the stable keys ``equivalent``, ``method``,
        ``counterexample``, ``notes``, ``stats`` and ``decided``."""
        return {
            "equivalent": self.equivalent,
            "method": self.method,
            "counterexample": self.counterexample,
            "notes": list(self.notes),
            "stats": dict(self.stats),
            "decided": self.decided,
        }


@dataclass
class _Pair:
    kind: str  # "output", "next-state", "control"
    name: str  # output or storage name
    a_net: str
    b_net: str
    la: int
    lb: int
    dc: int = 0  # literal where the difference does not count (0: nowhere)
    flip: int = 0  # 1: B's net is compared inverted (a storage kind mirrored on the inverse control)
    #: a latch compared with a feedback loop: ``(data net, enable net, open level)`` of A's or B's latch,
    #: whose next state is its data while open and itself while closed (``None``: the net's own value)
    a_latch: tuple | None = None
    b_latch: tuple | None = None


# -- port matching ---------------------------------------------------------
def _only(xs, ys) -> list:
    ys = set(ys)
    return [x for x in xs if x not in ys]


def _show(names, limit=8) -> str:
    s = ", ".join(f"'{n}'" for n in names[:limit])
    return s + (f" … ({len(names)} in all)" if len(names) > limit else "")


_BUS_BIT = re.compile(r"^(.*?)[\[<](\d+)[\]>]$|^(.*?)_?(\d+)$")


def _bit_key(name: str):
    """``(base, index)`` of a bus bit written ``t[3]``, ``t<3>``, ``t3`` or ``t_3``; None otherwise."""
    m = _BUS_BIT.match(name)
    if m is None:
        return None
    base, idx = (m.group(1), m.group(2)) if m.group(2) is not None else (m.group(3), m.group(4))
    return (base, int(idx)) if base else None


def match_bus_bits(a: Netlist, b: Netlist, notes: list) -> Netlist:
    """``b`` with its ports renamed to ``a``'s where the two differ only in how bus bits are written
    (``t[3]`` in one, ``t3`` or ``t_3`` in the other) and the pairing is one to one, else ``b`` as it is.
    A note says which names were paired."""
    pairs: dict = {}
    for xa, xb in ((a.inputs, b.inputs), (a.outputs, b.outputs)):
        ma, mb = _only(xa, xb), _only(xb, xa)
        if not ma or len(ma) != len(mb):
            continue
        ka: dict = {}
        kb: dict = {}
        for names, keyed in ((ma, ka), (mb, kb)):
            for n in names:
                keyed.setdefault(_bit_key(n), []).append(n)
        if None in ka or None in kb or set(ka) != set(kb) or any(len(v) > 1 for v in (*ka.values(), *kb.values())):
            continue
        for k, (na,) in ka.items():
            pairs[kb[k][0]] = na
    taken = set(b.nodes) - set(pairs)
    if not pairs or any(n in taken for n in pairs.values()):
        return b
    shown = ", ".join(f"{y} = {x}" for x, y in list(pairs.items())[:6]) + (" …" if len(pairs) > 6 else "")
    notes.append(f"{len(pairs)} port(s) differ only in how bus bits are written; paired by name and bit "
                 f"number ({shown})")
    return b.renamed(pairs)


def _match_ports(a: Netlist, b: Netlist, notes: list) -> bool:
    ok = True
    for what, xa, xb in (("input", a.inputs, b.inputs), ("output", a.outputs, b.outputs),
                         ("storage element", list(a.storage()), list(b.storage()))):
        ma, mb = _only(xa, xb), _only(xb, xa)
        if ma:
            notes.append(f"{what}s only in A: {_show(ma)}" if len(ma) > 1 else f"{what} only in A: {_show(ma)}")
            ok = False
        if mb:
            notes.append(f"{what}s only in B: {_show(mb)}" if len(mb) > 1 else f"{what} only in B: {_show(mb)}")
            ok = False
    return ok


#: storage kinds that are one another on the inverted control (a latch open while its enable is low is
#: a latch open while the inverse is high; a falling-edge flip-flop a rising-edge one on the inverse)
_MIRROR = {"ah": "al", "al": "ah", "re": "fe", "fe": "re"}


def _match_storage(a: Netlist, b: Netlist, notes: list) -> tuple[bool, bool]:
    """(kinds and controls agree, initial values agree)."""
    kinds_ok = init_ok = True
    sb = b.storage()
    for name, x in a.storage().items():
        y = sb[name]
        if x.kind != y.kind and {x.kind, y.kind} <= {"as", "ah", "al"} and "as" in (x.kind, y.kind):
            loop, latch = ("A", "B") if x.kind == "as" else ("B", "A")
            level = "high" if "ah" in (x.kind, y.kind) else "low"
            notes.append(f"storage element '{name}' is a feedback loop in {loop} and a latch open while its enable "
                         f"is {level} in {latch}: compared by next state (the latch's is its data while open, its "
                         "own value while closed)")
        elif _MIRROR.get(x.kind) == y.kind:
            notes.append(f"storage element '{name}' is of kind '{x.kind}' in A and '{y.kind}' in B: the same "
                         "only where B's control is the inverse of A's (compared so)")
        elif x.kind != y.kind:
            notes.append(f"storage element '{name}' is of kind '{x.kind}' in A but '{y.kind}' in B")
            kinds_ok = False
        elif (x.control is None) != (y.control is None):
            which = "A" if x.control is None else "B"
            notes.append(f"storage element '{name}' has no control net in {which} only")
            kinds_ok = False
        if x.init in (0, 1) and y.init in (0, 1) and x.init != y.init:
            notes.append(f"storage element '{name}' starts at {x.init} in A but at {y.init} in B")
            init_ok = False
    return kinds_ok, init_ok


# -- storage built of gates -------------------------------------------------
_GATE_STORAGE = (
    "its feedback loops were cut again one per latch (the shortest loop first) and each read by its flow table "
    "(Huffman's model); two latches on opposite levels of one clock, the second fed from the first, are one "
    "edge-triggered flip-flop (master and slave): this assumes clean clock edges with the data settled before "
    "each edge, as any flip-flop does")


#: the most storage elements left unpaired by name that :func:`_correspond` pairs by trying, and its tries
MAX_CORRESPOND = 4
_CORRESPOND_TRIES = 400


def _correspond(y: Netlist, x: Netlist, side: str, notes: list) -> Netlist | None:
    """``x`` with the storage elements no name pairs renamed to ``y``'s, each maybe complemented, where
    such a one-to-one pairing is proved to hold in every step (else None).

    Register correspondence by induction (C. A. J. van Eijk, "Sequential equivalence checking based on
    structural similarities", IEEE TCAD 19(7), 2000), for a one-to-one pairing: if, whenever paired
    elements agree, the next states and outputs agree, then pairs that agree at the start agree ever
    after.  That step is exactly the proof with the paired elements as shared free variables, so each
    candidate pairing (same kind and control, names alike first, a complement where the starting values
    say so) is tried by the prover itself; random simulation turns down a wrong one at once.
    """
    sy, sx = y.storage(), x.storage()
    uy = [n for n in sy if n not in sx]
    ux = [n for n in sx if n not in sy]
    if not uy or len(uy) != len(ux) or len(uy) > MAX_CORRESPOND:
        return None

    def fits(ny, nx_):
        ey, ex = sy[ny], sx[nx_]
        return ey.kind == ex.kind and (ey.control is None) == (ex.control is None)

    def polarities(ny, nx_):
        iy, ix = sy[ny].init, sx[nx_].init
        return [iy ^ ix] if iy in (0, 1) and ix in (0, 1) else [0, 1]

    tries = 0
    for perm in sorted(itertools.permutations(ux), key=lambda p: sum(not q.startswith(n) for n, q in zip(uy, p))):
        if not all(fits(n, q) for n, q in zip(uy, perm)):
            continue
        for pols in itertools.product(*(polarities(n, q) for n, q in zip(uy, perm))):
            tries += 1
            if tries > _CORRESPOND_TRIES:
                return None
            mapping = {q: (n, p) for n, q, p in zip(uy, perm, pols)}
            cand = encode(x, mapping)
            res = check_equivalence(cand, y) if side == "A" else check_equivalence(y, cand)
            if res.equivalent:
                notes.append(f"storage left unpaired by name ({len(uy)}) paired by trying one-to-one pairings "
                             f"and proving each step keeps them ({tries} tried): " + ", ".join(
                                 f"'{n}' is {'the complement of ' if p else ''}'{q}'" for q, (n, p) in mapping.items()))
                return cand
    return None


def read_gate_storage(a: Netlist, b: Netlist, notes: list):
    """``(a, b, names of latches read from gates, reason, read)``: where one design holds its bits in
    feedback loops of gates or relays and the other in declared storage of other names, the loops read
    as latches and flip-flops
    (:func:`mapper.logic.gateflops.edge_form`; ``read`` is True).  ``reason`` is set when they could not
    be (then the designs come back as they were and the answer is "not proved")."""
    for side, x, y in (("B", b, a), ("A", a, b)):
        if not (has_feedback(x) and not has_feedback(y) and y.storage() and set(x.storage()) != set(y.storage())):
            continue  # the same storage names: a loop is compared with its latch as it is
        ef = edge_form(x, prefer=y.storage())
        if ef.netlist is None:
            return a, b, frozenset(), (f"{side} holds its bits in feedback loops of gates and {ef.why}, so they "
                                       "could not be read as the other design's flip-flops"), False
        notes.append(f"{side} holds its bits in feedback loops (gates or relay contacts), read as "
                     f"{len(ef.flip_flops)} flip-flop(s) and {len(ef.latches)} latch(es): " + _GATE_STORAGE)
        if ef.sequencer:
            notes.append(f"{side}'s clock sequencer ({_show(ef.sequencer)}) rests in one state for each level of "
                         "its inputs and is read in those settled states; that its steps land in order is a "
                         "matter of timing, not of this proof")
        renamed, through = pair_through_nets(ef.netlist, y.storage())
        if through:
            ef.netlist = renamed
            notes.append(f"storage paired through the net {side} reads it by: " + ", ".join(
                f"'{v}' is {'the complement of ' if inv else ''}'{s_}'" for v, s_, inv in through))
        same = [n for n in y.storage() if n in ef.netlist.storage()]
        if same:
            notes.append(f"storage paired with the other design's by name: {_show(same)}")
        paired = _correspond(y, ef.netlist, side, notes)
        if paired is not None:
            ef.netlist = paired
        st_y, st_x = y.storage(), ef.netlist.storage()
        unknown = [n for n in st_y if n in st_x and st_x[n].init == 3 and st_y[n].init in (0, 1)]
        if unknown:
            notes.append(f"{side}'s storage built of gates or relays powers up unknown ({_show(unknown)}): compared "
                         "from the other design's starting values, which a power-on reset must force")
        loose = frozenset(n for n, st in st_x.items() if st.kind in ("ah", "al"))
        return (a, ef.netlist, loose, "", True) if side == "B" else (ef.netlist, b, loose, "", True)
    return a, b, frozenset(), "", False


# -- the miter ------------------------------------------------------------
def _build_miter(a: Netlist, b: Netlist, notes: list, loose=frozenset()):
    g = AIG()
    shared_in = {name: g.add_input(name) for name in a.inputs}
    shared_st = {}
    for name, st in a.storage().items():
        shared_st[name] = 2 * g.add_latch(name, st.kind, st.init).var
    _, la = from_netlist(a, g, inputs=shared_in, storage=shared_st)
    _, lb = from_netlist(b, g, inputs=shared_in, storage=shared_st)
    dc = {}
    if a.exdc is not None:
        extra = _only(a.exdc.inputs, a.inputs)
        if extra:
            notes.append(f"don't-care network reads nets that are not inputs of A ({_show(extra)}); "
                         "they are treated as free inputs")
        _, le = from_netlist(a.exdc, g, inputs=shared_in, storage=shared_st)
        unknown = _only(a.exdc.outputs, a.outputs)
        if unknown:
            notes.append(f"don't-care outputs {_show(unknown)} name no output of A; ignored")
        dc = {o: le[o] for o in a.exdc.outputs if o in la}
        notes.append("output differences where A's don't-care network (.exdc) is 1 do not count")
    if b.exdc is not None:
        notes.append("B's don't-care network (.exdc) is not used; only A's counts")
    pairs = [_Pair("output", o, o, o, la[o], lb[o], dc.get(o, 0)) for o in a.outputs]
    sb = b.storage()
    for name, x in a.storage().items():
        y = sb[name]
        if (x.kind != y.kind and "as" in (x.kind, y.kind)) or (name in loose and {x.kind, y.kind} & {"ah", "al"}):
            q = shared_st[name]
            pairs.append(_Pair("next-state", name, x.d, y.d, _next_lit(g, la, x, q), _next_lit(g, lb, y, q),
                               a_latch=_latch_of(x), b_latch=_latch_of(y)))
            continue
        pairs.append(_Pair("next-state", name, x.d, y.d, la[x.d], lb[y.d]))
        if x.kind != "as" and x.control is not None and y.control is not None:
            # a mirrored kind on the inverted control is the same storage
            flip = 1 if x.kind != y.kind else 0
            pairs.append(_Pair("control", name, x.control, y.control, la[x.control], lb[y.control] ^ flip,
                               flip=flip))
    return g, pairs, la, lb


def _latch_of(st) -> tuple | None:
    """``(data, enable, open level)`` of a level-sensitive latch, ``None`` for anything else."""
    if st.kind in ("ah", "al") and st.control is not None:
        return (st.d, st.control, 1 if st.kind == "ah" else 0)
    return None


def _next_lit(g: AIG, lits: dict, st, q: int) -> int:
    """The next-state literal of a storage element: a latch's data while open and ``q`` while closed;
    anything else's data (a feedback loop's excitation)."""
    latch = _latch_of(st)
    if latch is None:
        return lits[st.d]
    d, c, level = latch
    en = lits[c] ^ (0 if level else 1)
    return g.add_mux(en, lits[d], q)


def _free_vars(g: AIG) -> list:
    """(name, var) of every input and storage output of the miter."""
    out = [(g.names[v], v) for v in g.inputs]
    out += [(latch.name, latch.var) for latch in g.latches]
    return out


def _simulate_free(g: AIG, free: list, words: dict, mask: int) -> list:
    """Simulate the miter with ``words`` keyed by free-variable name."""
    latch_names = {latch.name for latch in g.latches}
    inputs = {n: w for n, w in words.items() if n not in latch_names}
    latches = {n: w for n, w in words.items() if n in latch_names}
    return g.simulate(inputs, mask, latches)


def _diff_word(vals, p: _Pair, mask: int) -> int:
    x = AIG.lit_value(vals, p.la, mask) ^ AIG.lit_value(vals, p.lb, mask)
    if p.dc:
        x &= ~AIG.lit_value(vals, p.dc, mask)
    return x & mask


# -- counterexamples --------------------------------------------------------
def _replay(a: Netlist, b: Netlist, pairs: list, inputs: dict, state: dict) -> list:
    """Differences the netlists themselves show for one input and state."""
    va = simulate(a, inputs, 1, state)
    vb = simulate(b, inputs, 1, state)
    vdc = simulate(a.exdc, inputs, 1, state) if a.exdc is not None else {}
    differs = []

    def value(vals, net, latch, name):
        if latch is None:
            return vals[net] & 1
        d, c, level = latch
        return vals[d] & 1 if (vals[c] & 1) == level else state.get(name, 0) & 1

    for p in pairs:
        x, y = value(va, p.a_net, p.a_latch, p.name), (value(vb, p.b_net, p.b_latch, p.name) ^ p.flip) & 1
        if x == y:
            continue
        if p.kind == "output" and p.dc and vdc.get(p.name, 0) & 1:
            continue
        differs.append({"output": p.name, "kind": p.kind, "a": x, "b": y})
    return differs


def _counterexample(a, b, pairs, assignment: dict) -> dict:
    """Build and check a counterexample from free-variable values."""
    inputs = {n: assignment.get(n, 0) & 1 for n in a.inputs}
    state = {n: assignment.get(n, 0) & 1 for n in a.storage()}
    differs = _replay(a, b, pairs, inputs, state)
    if not differs:
        raise InternalError(
            "the prover found a difference that simulation of the two netlists does not "
            f"reproduce (inputs {inputs}, state {state})")
    return {"inputs": inputs, "state": state, "differs": differs}


# -- SAT sweeping -----------------------------------------------------------
class _Prover:
    """The swept copy of a miter, its CNF and its solver."""

    def __init__(self, g: AIG, free: list, sig: list, mask: int,
                 solver: str, budget: int, rng: random.Random, sweep: bool):
        self.g = g
        self.free = free
        self.rng = rng
        self._classes(sig, mask)
        self.budget = budget
        self.sweep = sweep
        self.stats = {"sat_calls": 0, "merged_by_sat": 0, "merged_by_cut": 0, "merged_by_structure": 0,
                      "disproved": 0, "undecided": 0, "refinements": 0}
        if sweep:
            self.n = AIG()
            self.newlit = [-1] * g.num_vars
            self.newlit[0] = 0
            for name, v in free:
                self.newlit[v] = self.n.add_input(name)
        else:
            self.n = g
            self.newlit = [2 * v for v in range(g.num_vars)]
        self.solver = Solver(name=solver)
        self.enc = AigCnf(self.n, sink=self.solver)

    def close(self) -> None:
        self.solver.delete()

    # -- SAT ----------------------------------------------------------------
    def _solve(self, assumptions, budget):
        self.stats["sat_calls"] += 1
        if budget is None:
            return self.solver.solve(assumptions=assumptions)
        self.solver.conf_budget(budget)
        return self.solver.solve_limited(assumptions=assumptions)

    def _model_assignment(self) -> dict:
        """Free-variable values (name -> 0/1) of the last model; variables
        the solver never saw get random values."""
        model = self.solver.get_model() or []
        out = {}
        for name, v in self.free:
            sv = self.newlit[v] >> 1  # AIG var in the swept graph; SAT var sv + 1
            if sv < len(model):
                out[name] = 1 if model[sv] > 0 else 0
            else:
                out[name] = self.rng.getrandbits(1)
        return out

    def _cone_top(self, root: int) -> set:
        """The :data:`_CONE_TOP` largest variables of ``root``'s cone."""
        f0, f1 = self.n.f0, self.n.f1
        seen: set = set()
        heap = [-root]
        while heap and len(seen) < _CONE_TOP:
            v = -heapq.heappop(heap)
            if v in seen:
                continue
            seen.add(v)
            if f0[v] >= 0:
                heapq.heappush(heap, -(f0[v] >> 1))
                heapq.heappush(heap, -(f1[v] >> 1))
        return seen

    def cut_equal(self, x: int, y: int) -> bool:
        """True when swept literals ``x`` and ``y`` compute the same function
        of a small shared cut (so they are equal); False means "not shown".

        The cones of both are expanded from the top (largest variable
        first; a node whose expansion would make the cut too wide stays a
        leaf) into a cut of at most :data:`_CUT_LEAVES` nodes, then
        simulated exhaustively over the cut.  Agreement for every value of
        the cut's leaves implies agreement for every input, because any
        input assignment gives the leaves some values.  (Equivalence over
        cuts: Kuehlmann and Krohm, "Equivalence checking using cuts and
        heaps", DAC 1997.)
        """
        if self._cut_equal(x, y, ()):
            return True
        # nodes in both (bounded) cones are where the two structures meet:
        # keep them as leaves rather than expanding past them
        vx, vy = x >> 1, y >> 1
        shared = self._cone_top(vx) & self._cone_top(vy)
        shared.discard(vx)
        shared.discard(vy)
        return bool(shared) and self._cut_equal(x, y, shared)

    def _cut_equal(self, x: int, y: int, shared) -> bool:
        f0, f1 = self.n.f0, self.n.f1
        vx, vy = x >> 1, y >> 1
        frontier = {vx, vy}
        heap = [-vx, -vy] if vx != vy else [-vx]
        heapq.heapify(heap)
        inner: list = []
        while heap and len(inner) < _CUT_NODES:
            v = -heapq.heappop(heap)
            a = f0[v]
            if a < 0:
                break  # the largest open node is an input: so are all others
            if v in shared:
                continue
            a >>= 1
            b = f1[v] >> 1
            grow = (a not in frontier) + (b not in frontier and b != a)
            if len(frontier) - 1 + grow > _CUT_LEAVES:
                continue  # stays a leaf; smaller nodes may still reconverge
            frontier.discard(v)
            inner.append(v)
            for c in (a, b):
                if c not in frontier:
                    frontier.add(c)
                    heapq.heappush(heap, -c)
        if not inner:
            return False
        leaves = sorted(u for u in frontier if u not in inner)
        k = sum(1 for u in leaves if u)
        full = (1 << (1 << k)) - 1
        val = {}
        j = 0
        for u in leaves:
            if u == 0:
                val[0] = 0
            else:
                val[u] = var_mask(k, j)
                j += 1
        for v in sorted(inner):
            a, b = f0[v], f1[v]
            wa = val[a >> 1] ^ (full if a & 1 else 0)
            wb = val[b >> 1] ^ (full if b & 1 else 0)
            val[v] = wa & wb
        wx = val[vx] ^ (full if x & 1 else 0)
        wy = val[vy] ^ (full if y & 1 else 0)
        return wx == wy

    def prove_equal(self, x: int, y: int, budget):
        """``True`` if swept literals ``x`` and ``y`` are equal, a model
        assignment if not, ``None`` if the budget ran out."""
        sx, sy = self.enc.lit(x), self.enc.lit(y)
        for assumptions in ([sx, -sy], [-sx, sy]):
            r = self._solve(assumptions, budget)
            if r is None:
                return None
            if r:
                return self._model_assignment()
        self.solver.add_clause([-sx, sy])
        self.solver.add_clause([sx, -sy])
        return True

    def prove_pair(self, x: int, y: int, dc: int, budget):
        """Like :meth:`prove_equal`, but differences where ``dc`` is 1 do not count."""
        if not dc:
            return self.prove_equal(x, y, budget)
        sx, sy, sd = self.enc.lit(x), self.enc.lit(y), self.enc.lit(dc)
        for assumptions in ([sx, -sy, -sd], [-sx, sy, -sd]):
            r = self._solve(assumptions, budget)
            if r is None:
                return None
            if r:
                return self._model_assignment()
        return True

    # -- candidate classes ------------------------------------------------------
    def _classes(self, sig: list, mask: int) -> None:
        """Class ids from simulation signatures, complements folded together:
        ``phase[v]`` is the value of ``v`` in pattern 0 and the class key is
        the signature complemented when that value is 1."""
        self.phase = bytearray(s & 1 for s in sig)
        table: dict = {}
        self.cid = [table.setdefault(s ^ mask if s & 1 else s, len(table)) for s in sig]

    def refine(self, assignments: list) -> None:
        """Split the classes by ``assignments`` (free-variable values) and
        their distance-1 neighbours, all simulated in one pass."""
        names = [n for n, _ in self.free]
        words = dict.fromkeys(names, 0)
        width = 0
        for assignment in assignments:
            flips = names if len(names) <= 63 else self.rng.sample(names, 63)
            k = len(flips) + 1
            block = ((1 << k) - 1) << width
            for n in names:
                if assignment.get(n, 0):
                    words[n] |= block
            for i, n in enumerate(flips, start=1):
                words[n] ^= 1 << (width + i)
            width += k
        mask = (1 << width) - 1
        vals = _simulate_free(self.g, self.free, words, mask)
        table: dict = {}
        cid, phase = self.cid, self.phase
        for v, w in enumerate(vals):
            if phase[v]:
                w ^= mask
            cid[v] = table.setdefault((cid[v], w), len(table))
        self.stats["refinements"] += 1

    # -- the sweep ------------------------------------------------------------------
    def run_sweep(self, roots, hints: dict) -> None:
        """Rebuild the cone of ``roots`` in the swept graph, merging proved
        equivalences (see the module docstring).

        Refuted candidates are collected and simulated in batches of
        :data:`_REFINE_BATCH` (one simulation pass costs as much as the
        whole graph); a node whose candidate was refuted keeps its own node
        unless the classes were refined right then.
        """
        g, n, newlit = self.g, self.n, self.newlit
        f0, f1 = g.f0, g.f1
        cid, phase = self.cid, self.phase
        cone = g.cone(roots)
        processed = [0] + [v for _, v in self.free]
        rep_of: dict = {}
        pending: list = []

        def rebuild():
            rep_of.clear()
            for u in processed:
                rep_of.setdefault(cid[u], u)

        rebuild()
        budget = self.budget
        for v in cone:
            a, b = f0[v], f1[v]
            nl = n.add_and(newlit[a >> 1] ^ (a & 1), newlit[b >> 1] ^ (b & 1))
            result_lit = nl
            tries = 0
            tried = set()
            while tries < _MAX_TRIES:
                cand = None
                hint = hints.get(v)
                if hint is not None and hint[0] not in tried and newlit[hint[0]] >= 0:
                    r, compl = hint
                    if cid[v] == cid[r] and compl == phase[v] ^ phase[r]:
                        cand = hint
                        self.stats["hints_tried"] = self.stats.get("hints_tried", 0) + 1
                if cand is None:
                    r = rep_of.get(cid[v])
                    if r is not None and r not in tried:
                        cand = (r, phase[v] ^ phase[r])
                if cand is None:
                    break
                r, compl = cand
                tried.add(r)
                target = newlit[r] ^ compl
                if target == nl:
                    self.stats["merged_by_structure"] += 1
                    break
                tries += 1
                if self.cut_equal(nl, target):
                    self.stats["merged_by_cut"] += 1
                    result_lit = target
                    break
                res = self.prove_equal(nl, target, budget)
                if res is True:
                    self.stats["merged_by_sat"] += 1
                    result_lit = target
                    break
                if res is None:
                    self.stats["undecided"] += 1
                    break
                self.stats["disproved"] += 1
                pending.append(res)
                if len(pending) < _REFINE_BATCH:
                    break
                self.refine(pending)
                pending.clear()
                rebuild()
            newlit[v] = result_lit
            processed.append(v)
            rep_of.setdefault(cid[v], v)


def check_equivalence(a: Netlist, b: Netlist, hints: dict | None = None,
                      conflict_budget: int = DEFAULT_CONFLICT_BUDGET, seed=0,
                      patterns: int = DEFAULT_PATTERNS, sweep: bool = True,
                      solver: str = DEFAULT_SOLVER, output_budget: int | None = None
                      ) -> EquivalenceResult:
    """Prove two netlists do the same logic, or find an input that tells them apart.

    Parameters
    ----------
    a, b : Netlist
        Checked netlists; ports and storage elements are matched by name.
    hints : dict, optional
        Net of ``a`` -> net of ``b`` the caller believes equal (for example
        from the mapper); tried first as sweeping candidates.  Wrong hints
        cost time, never correctness.
    conflict_budget : int
        Conflicts allowed for each internal candidate proof while sweeping.
    seed
        Seed of the random patterns (the answer never depends on it; the
        time and the counterexample found may).
    patterns : int
        Random patterns simulated first.
    sweep : bool
        Use SAT sweeping (default); ``False`` proves the outputs on the
        plain miter.
    solver : str
        pysat solver name.
    output_budget : int, optional
        Conflicts allowed for each output proof; ``None`` for no limit.

    Returns
    -------
    EquivalenceResult

    Raises
    ------
    ProofLimitError
        If ``output_budget`` ran out before an output was decided.
    InternalError
        If a counterexample does not reproduce in simulation (a bug).
    """
    t0 = time.perf_counter()
    notes: list = []
    stats: dict = {}
    b = match_bus_bits(a, b, notes)
    a, b, loose, why, gates_read = read_gate_storage(a, b, notes)
    if why:
        notes.append(why)
        return EquivalenceResult(False, "storage", None, notes, stats, decided=False)
    a, b, cut_notes = align_cuts(a, b)
    notes += cut_notes
    if not _match_ports(a, b, notes):
        if gates_read and set(a.inputs) == set(b.inputs) and set(a.outputs) == set(b.outputs):
            sb = b.storage()
            for name, x in a.storage().items():
                if name in sb and x.kind != sb[name].kind:
                    notes.append(f"storage element '{name}' is of kind '{x.kind}' in A but '{sb[name].kind}' in B")
            notes.append("the storage read from gates or relays could not be paired one to one with the other "
                         "design's")
            return EquivalenceResult(False, "storage", None, notes, stats, decided=False)
        return EquivalenceResult(False, "ports", None, notes, stats)
    kinds_ok, init_ok = _match_storage(a, b, notes)
    if a.storage():
        notes.append("storage outputs are free variables: next-state and control functions are "
                     "compared in every state, reachable or not")
    loops = has_feedback(a) or has_feedback(b)
    if loops:
        notes.append(_LOOP_ASSUMPTION)

    g, pairs, lit_a, lit_b = _build_miter(a, b, notes, loose)
    free = _free_vars(g)
    stats["proof_size"] = g.num_ands  # AND nodes of the graph that joins the two designs
    stats["compared"] = len(pairs)

    def finish(equal: bool, method: str, cex=None) -> EquivalenceResult:
        decided = True
        if equal and not kinds_ok:
            equal, method = False, "storage"
            decided = not gates_read
        elif equal and not init_ok:
            equal, method = False, "initial-values"
        if equal and loops and has_feedback(a) and has_feedback(b):
            same, flow_notes = compare_flow(a, b)
            notes.extend(flow_notes)
            if not same:
                equal, method = False, "flow-table"
        stats["seconds"] = round(time.perf_counter() - t0, 6)
        if cex is not None and any(d["kind"] != "output" for d in cex["differs"]):
            notes.append("the state in the counterexample may not be reachable from the initial state")
        return EquivalenceResult(equal, method, cex, notes, stats, decided)

    todo = [p for p in pairs if p.la != p.lb]
    if not todo:
        return finish(True, "structural")

    # random simulation (patterns 0 and 1 are all-zero and all-one)
    rng = random.Random(seed)
    nbits = max(2, patterns)
    mask = (1 << nbits) - 1
    words = {name: (rng.getrandbits(nbits) & ~3 & mask) | 2 for name, _ in free}
    vals = _simulate_free(g, free, words, mask)
    for p in todo:
        d = _diff_word(vals, p, mask)
        if d:
            k = (d & -d).bit_length() - 1
            assignment = {name: (w >> k) & 1 for name, w in words.items()}
            return finish(False, "simulation", _counterexample(a, b, todo, assignment))

    prover = _Prover(g, free, vals, mask, solver, conflict_budget, rng, sweep)
    del vals  # the classes keep what is needed
    try:
        log.info("proof graph of %d AND nodes, %d pairs to prove", g.num_ands, len(todo))
        if hints and not sweep:
            notes.append("hints are used only while sweeping; ignored")
        if sweep:
            hint_vars = _resolve_hints(hints, lit_a, lit_b, notes) if hints else {}
            roots = []
            for p in todo:
                roots += [p.la, p.lb] + ([p.dc] if p.dc else [])
            prover.run_sweep(roots, hint_vars)
            log.info("sweeping: %s", prover.stats)
        nl = prover.newlit
        for p in todo:
            x = nl[p.la >> 1] ^ (p.la & 1)
            y = nl[p.lb >> 1] ^ (p.lb & 1)
            dc = (nl[p.dc >> 1] ^ (p.dc & 1)) if p.dc else 0
            if x == y:
                continue
            res = prover.prove_pair(x, y, dc, output_budget)
            if res is None:
                raise ProofLimitError(
                    f"could not decide {p.kind} '{p.name}' within {output_budget} conflicts")
            if res is not True:
                stats.update(prover.stats)
                method = "sat-sweeping" if sweep else "sat"
                return finish(False, method, _counterexample(a, b, todo, res))
        stats.update(prover.stats)
        if sweep:
            stats["swept_ands"] = prover.n.num_ands
            merged = prover.stats["merged_by_sat"] + prover.stats["merged_by_cut"]
            notes.append(f"{merged} shared points of the two designs proved equal and merged")
        return finish(True, "sat-sweeping" if sweep else "sat")
    finally:
        prover.close()


def _resolve_hints(hints: dict, la: dict, lb: dict, notes: list) -> dict:
    """Map hint net names to miter variables: ``{later var: (earlier var, complemented)}``."""
    out = {}
    unknown = 0
    for na, nb in hints.items():
        if na not in la or nb not in lb:
            unknown += 1
            continue
        x, y = la[na], lb[nb]
        if x >> 1 == y >> 1:
            continue
        if y >> 1 > x >> 1:
            out[y >> 1] = (x >> 1, (x ^ y) & 1)
        else:
            out[x >> 1] = (y >> 1, (x ^ y) & 1)
    if unknown:
        notes.append(f"{unknown} hint(s) name nets that do not exist; ignored")
    return out
