"""Glitch finder: event-driven timing simulation of a build with delay ranges.

The delay model
---------------
Every cell has one propagation delay, fixed for the circuit in hand but
known only to lie in a range ``[min, max]`` from the catalog: ``max`` is the
catalog's maximum figure, ``min`` its typical figure (the catalogs give no
minimum; a fraction of the maximum can be asked for instead).  Because a
cell's delay is the same for every change through it, two paths through the
same cell share that cell's delay.  Changes propagate with transport delay
(a pulse shorter than a cell's delay still passes it; real gates swallow
some of those, so the widths reported are an upper view of what gets out).

Every event carries its *path*: the set of cells it went through since the
input change.  The time between two events is then a sum of cell delays
with signs, and its exact range over the delay box is
``[sum of min over cells only on the later path - sum of max over cells only
on the earlier one, ...]``.  That is the pulse-width range reported: an AND
of a signal and its own inverted copy pulses for exactly the inverter's
delay range.

What is searched
----------------
For every input state and every single-input change (and, on request, every
change of two inputs at once) -- all of them when there are at most
``max_transitions``, else that many drawn at random, and the count is
stated:

1. a three-valued simulation with the changing inputs unknown (E. B.
   Eichelberger, IBM J. Res. Dev. 9(2), 1965) marks the nets that may move;
   a net that may glitch must come out unknown and be reached from the
   changing inputs by at least two paths of unknown nets -- other changes
   are glitch-free for any delays and are not simulated further;
2. for the nets still in question (outputs, and nets that reach a clock,
   enable, preset or clear input of a storage cell), the paths from the
   changing inputs are enumerated (at most :data:`PATHS_PER_NET` per net) and
   the circuit is simulated at delay corners that make each path as early
   (its cells at min, all others at max) and as late as possible, plus all
   at min and all at max.  A race between two paths shows at one of those
   corners whenever the delay ranges allow it in that order.

A net that ends where it started but moved is a static-1 or static-0
hazard; one that ends elsewhere but moved more than once is a dynamic
hazard.  Every hazard reported was seen at a concrete delay vector inside
the ranges, so none is invented; a hazard needing a race among three or
more paths in a particular order may be missed -- the count of changes that
the three-valued test could not rule out but no corner showed is reported
(``not_shown``; most are changes that can glitch only under delays outside
the catalog ranges).  At most :data:`PATHS_PER_CHANGE` paths per change get
corners of their own, shared out among the nets in question.

Work budget.  The search counts cell evaluations.  ``netfit timing``
allows :data:`TIMING_MAX_WORK`; the figures in every build report allow
:data:`BUILD_MAX_WORK` or :data:`BUILD_WORK_PER_CELL` per cell, whichever is
more, so their time grows in step with the rest of the build while the share
of input changes examined shrinks.  The budget is checked before every
change and every timed run and within a run (a run that would pass it is
given up), and ``glitch_search`` says what was covered: ``checked`` of
``total`` changes, ``timed_runs``, ``cell_evaluations`` of ``work_budget``,
``last_change_partial`` (how many of the last change's delay corners ran)
and all of that in words in ``sample``.  Timed runs leave out the cells
whose output the three-valued simulation found known (they cannot move),
which gives the same events for less work.

Hazards are reported per net, kind and changing inputs: ``when`` lists the
states of the other inputs where it shows (merged into cubes),
``directions`` which way the inputs went, ``width_s`` the union of the
pulse-width ranges of all races seen, ``racing_paths`` the race with the
widest pulse (hop by hop with parts and pins) and ``races`` how many
different pairs of paths raced.

A glitch on a net that reaches a clock, enable, preset or clear input of a
storage cell can store a wrong value: it is flagged as an error.

The circuit comes from :mod:`mapper.analyze.timed` and is simulated by
:mod:`mapper.analyze.glitch_engine`.  Relay builds have no cells: their
glitches are the transfers of changeover contacts
(:mod:`mapper.analyze.relay_glitch`).
"""
from __future__ import annotations

import logging
import random
from itertools import combinations

from ..build import Build
from ..logic.function import isop
from .glitch_engine import Engine, X, bits, path_mask, sec
from .results import Glitches
from .timed import TimedCircuit
from .timing import paused_gc

__all__ = [
    "find_glitches",
    "glitch_report",
    "conditions",
    "PATHS_PER_NET",
    "PATHS_PER_CHANGE",
    "MAX_TRANSITIONS",
    "BUILD_MAX_TRANSITIONS",
    "BUILD_MAX_WORK",
    "BUILD_WORK_PER_CELL",
    "TIMING_MAX_WORK",
    "CONTROL_MAX_TRANSITIONS",
    "CONTROL_MAX_WORK",
]

log = logging.getLogger(__name__)

#: paths enumerated per net in question, per input change
PATHS_PER_NET = 8
#: paths (each tried early and late) per input change, over all nets in question
PATHS_PER_CHANGE = 12
#: input changes examined by ``netfit timing`` before it samples instead
MAX_TRANSITIONS = 20000
#: cell evaluations ``netfit timing`` spends by default (some tens of seconds on a big build);
#: asking for a number of changes lifts it
TIMING_MAX_WORK = 5_000_000
#: input changes examined for the figures in every build report
BUILD_MAX_TRANSITIONS = 1024
#: cell evaluations allowed for the figures in every build report (keeps big builds quick) ...
BUILD_MAX_WORK = 80_000
#: ... or this many per cell of the build when that is more: the search's time then grows in step
#: with the build's setup (a timed run of one change on a 20k-cell build is some 100k-300k evaluations,
#: so a big build gets at least one change's uniform-delay runs; the share of changes examined shrinks)
BUILD_WORK_PER_CELL = 16
#: hazards listed at most (the count of all is given)
MAX_LISTED = 500
#: changes tried in the cones of clocks, enables, presets and clears (all of them up to this many)
CONTROL_MAX_TRANSITIONS = 20000
#: cell evaluations allowed for the search of those cones
CONTROL_MAX_WORK = 1_000_000


#: inputs grouped with ``together`` are changed in every subset up to this group size (beyond: whole group)
SUBSET_GROUP_MAX = 6


def _change_kinds(circ: TimedCircuit, multi: bool, together) -> tuple[list, list]:
    """``(fixed, clocked)``: the input changes tried from every state.

    ``fixed`` holds tuples of input indices: each input alone, each pair
    with ``multi``, and for each group of ``together`` (input names) every
    subset of two or more (the whole group only when it has more than
    :data:`SUBSET_GROUP_MAX` inputs).  ``clocked`` holds one list per clock
    group of ``(input index of the bit, data net)``: from a state, the bits
    whose data differs change together.
    """
    n = len(circ.inputs)
    fixed: list = [(i,) for i in range(n)]
    if multi:
        fixed += list(combinations(range(n), 2))
    index = {name: i for i, name in enumerate(circ.inputs)}
    for i, name in enumerate(circ.inputs):
        index.setdefault(circ.label(name), i)   # a storage bit by its own name
    seen = set(fixed)
    for grp in together or ():
        ids = sorted({index[x] for x in grp if x in index})
        subsets = ([c for k in range(2, len(ids) + 1) for c in combinations(ids, k)]
                   if len(ids) <= SUBSET_GROUP_MAX else [tuple(ids)])
        for c in subsets:
            if c not in seen:
                seen.add(c)
                fixed.append(c)
    clocked = []
    for grp in circ.clock_groups:
        bits_ = [(index[q], d) for q, d in grp if q in index]
        if len(bits_) >= 2:
            clocked.append(bits_)
    return fixed, clocked


def _transitions(n: int, kinds: int, limit: int, seed: int):
    """``(list of (state, kind index), total, exhaustive)``: every pair, or ``limit`` drawn at random."""
    total = (1 << n) * kinds
    if total <= limit:
        return [(st, k) for st in range(1 << n) for k in range(kinds)], total, True
    rng = random.Random(seed)
    seen = set()
    out: list = []
    while len(out) < limit:
        st = rng.getrandbits(n) if n else 0
        k = rng.randrange(kinds)
        if (st, k) in seen:
            continue
        seen.add((st, k))
        out.append((st, k))
    return out, total, False


def _hop_list(eng: Engine, mask: int, src: int) -> list:
    """The cells of a path (a gate mask from source net ``src``) in order, with pins."""
    hops = []
    prev = src
    for k in bits(mask):  # gate indices are topological
        g = eng.gates[k]
        pin = None
        for (p, num), n in zip(g.in_pins or [(None, None)] * len(g.ins), g.ins):
            if eng.ids[n] == prev:
                pin = (p, num)
                break
        hop = {"net_in": eng.circ.label(eng.names[prev]), "net": g.out, "delay_s": [sec(g.dmin), sec(g.dmax)]}
        if g.part is not None:
            hop.update({"part": g.part, "cell": g.cell, "section": g.slot})
            if pin:
                hop.update({"from_pin": pin[0], "from_pin_number": pin[1]})
            if g.out_pin:
                hop.update({"to_pin": g.out_pin[0], "to_pin_number": g.out_pin[1]})
        hops.append(hop)
        prev = eng.gout[k]
    return hops


def find_glitches(circ: TimedCircuit, multi: bool = False, max_transitions: int = MAX_TRANSITIONS,
                  seed: int = 0, paths_per_net: int = PATHS_PER_NET, max_work: int | None = None,
                  max_paths: int = PATHS_PER_CHANGE, together=()) -> dict:
    """Search ``circ`` for glitches (see the module docstring).

    Returns a dict with ``hazards`` (list, see :func:`glitch_report`),
    ``transitions`` (``checked``, ``total``, ``exhaustive``, ``sizes``,
    ``timed_runs``, ``not_shown``, ``stopped_early``) and ``errors`` (the
    count of hazards that reach a storage cell's clock, enable, preset or
    clear).  ``max_work`` bounds the cell evaluations; the search stops after
    the change that passes it and says how many changes it examined.
    """
    with paused_gc():
        return _find_glitches(circ, multi, max_transitions, seed, paths_per_net, max_work, max_paths, together)


def _corners(eng: Engine, cands: list, tern: list, changed: tuple, paths_per_net: int, max_paths: int) -> list:
    """Delay corners for one change: all at min, all at max, and each path made early and late."""
    changed_ids = {eng.input_ids[i] for i in changed}
    # paths of every net in question, taken in turn so each net gets its share of the corners
    per_net = [eng.paths(m, tern, changed_ids, paths_per_net) for m in cands]
    masks: dict = {}
    for rank in range(paths_per_net):
        for ps in per_net:
            if rank < len(ps) and len(masks) < max_paths:
                masks.setdefault(path_mask(ps[rank]), None)
    return [("min", 0), ("max", 0)] + [(kind, p) for p in masks for kind in ("early", "late")]


def _corner_delays(eng: Engine, kind: str, p: int) -> list:
    delay = eng.dmax[:] if kind in ("max", "early") else eng.dmin[:]
    if kind == "early":
        for k in bits(p):
            delay[k] = eng.dmin[k]
    elif kind == "late":
        for k in bits(p):
            delay[k] = eng.dmax[k]
    return delay


def _races(eng: Engine, waves, cands: list, v0: list, v1: list, found: dict) -> None:
    """Record in ``found`` the first two events of every net in question that moved when it should not."""
    for m in cands:
        ev = waves[m]
        a, b = v0[m], v1[m]
        if a == b and len(ev) >= 2:
            hk = f"static-{a}"
        elif a != b and len(ev) >= 3:
            hk = "dynamic"
        else:
            continue
        (t1, _, f1, s1), (t2, _, f2, s2) = ev[0], ev[1]
        f1, f2 = path_mask(f1), path_mask(f2)
        key = (m, hk, frozenset({(f1, s1), (f2, s2)}))
        if key not in found:
            found[key] = ((f1, s1), (f2, s2), t2 - t1)


class _Search:
    """The running state of one glitch search: counts, the budget, and the races grouped per net."""

    def __init__(self, eng: Engine, max_work: int | None):
        self.eng = eng
        self.max_work = max_work
        self.groups: dict = {}
        self.runs = 0
        self.not_shown = 0
        self.checked = 0
        self.stopped = False
        self.partial: dict | None = None

    def over_budget(self) -> bool:
        if self.max_work is not None and self.eng.work > self.max_work:
            self.stopped = True
        return self.stopped

    def change(self, state: int, changed: tuple, paths_per_net: int, max_paths: int) -> dict:
        """Simulate one input change at its delay corners; returns the races found (may stop on the budget)."""
        eng = self.eng
        self.checked += 1
        tern, cnt = eng.ternary(state, changed)
        v0 = eng.steady(state)
        cands = [m for m in eng.look if tern[m] == X and cnt.get(m, 0) >= 2]
        if not cands:
            return {}
        v1 = eng.steady_after(state, changed)
        corners = _corners(eng, cands, tern, changed, paths_per_net, max_paths)
        changes = [(eng.input_ids[i], v1[eng.input_ids[i]]) for i in changed]
        look = set(cands)
        fanout = eng.live_fanout(tern, changed)
        found: dict = {}
        done = 0
        for kind, p in corners:
            if self.over_budget():
                break
            waves = eng.simulate(v0, changes, _corner_delays(eng, kind, p), look, fanout,
                                 None if self.max_work is None else max(0, self.max_work - eng.work))
            if waves is None:
                self.stopped = True
                break
            done += 1
            self.runs += 1
            _races(eng, waves, cands, v0, v1, found)
        if done < len(corners):
            self.partial = {"delay_corners_run": done, "delay_corners": len(corners)}
        else:
            static_cands = {m for m in cands if v0[m] == v1[m]}
            shown = {k[0] for k in found}
            self.not_shown += len(static_cands - shown)
        return found

    def group(self, found: dict, state: int, changed: tuple, inputs: list) -> None:
        """Merge the races of one change into the groups (net, kind, changed inputs)."""
        n = len(inputs)
        after = state
        for i in changed:
            after ^= 1 << i
        cond_bits = [i for i in range(n) if i not in changed]
        cond = 0
        for b, i in enumerate(cond_bits):
            cond |= ((state >> i) & 1) << b
        dirs = tuple(f"{inputs[i]} {'rises' if (after >> i) & 1 else 'falls'}" for i in changed)
        for (m, hk, pair), ((f1, s1), (f2, s2), ex) in found.items():
            gkey = (m, hk, changed)
            g = self.groups.get(gkey)
            lo, hi = self.eng.width(f1, f2)
            lo = max(lo, 0.0)
            if g is None:
                g = self.groups[gkey] = {
                    "net": m, "kind": hk, "changed": changed, "conds": set(), "dirs": set(),
                    "width": (lo, hi), "example": ex, "widest": hi,
                    "paths": [(f1, s1), (f2, s2)], "cond_bits": cond_bits, "races": set(),
                }
            else:
                g["width"] = (min(g["width"][0], lo), max(g["width"][1], hi))
                if hi > g["widest"]:
                    g["widest"], g["paths"], g["example"] = hi, [(f1, s1), (f2, s2)], ex
            g["races"].add(pair)
            g["conds"].add(cond)
            g["dirs"].add(dirs)


def _hazards(eng: Engine, circ: TimedCircuit, groups: dict, exhaustive: bool) -> list:
    """One record per hazard group and output port (see :func:`glitch_report`)."""
    hazards = []
    port_of: dict = {}
    for o, net in circ.outputs.items():
        port_of.setdefault(net, []).append(o)
    for g in sorted(groups.values(), key=lambda g: (eng.names[g["net"]], g["kind"], g["changed"])):
        net = eng.names[g["net"]]
        names = [circ.label(circ.inputs[i]) for i in g["cond_bits"]]
        when = conditions(sorted(g["conds"]), names, exhaustive)
        reaches = circ.watch.get(net, [])
        paths = []
        for f, s in g["paths"]:
            lo, hi = eng.span(f)
            paths.append({"from": circ.label(eng.names[s]), "delay_s": [sec(lo), sec(hi)],
                          "hops": _hop_list(eng, f, s)})
        for port in port_of.get(net, [None]):
            hazards.append({
                "output": port if port is not None else net,
                "net": net,
                "kind": g["kind"],
                "inputs_changed": [circ.label(circ.inputs[i]) for i in g["changed"]],
                "directions": sorted(", ".join(d) for d in g["dirs"]),
                "when": when,
                "width_s": [sec(g["width"][0]), sec(g["width"][1])],
                "width_example_s": sec(g["example"]),
                "racing_paths": paths,
                "races": len(g["races"]),
                "reaches": reaches,
                "error": bool(reaches),
            })
    return hazards


def _find_glitches(circ, multi, max_transitions, seed, paths_per_net, max_work, max_paths, together=()) -> dict:
    """The work of :func:`find_glitches`."""
    eng = Engine(circ)
    n = len(circ.inputs)
    fixed, clocked = _change_kinds(circ, multi, together)
    kinds = len(fixed) + len(clocked)
    trans, total, exhaustive = _transitions(n, kinds, max_transitions, seed) if n and kinds else ([], 0, True)
    if max_work is not None and exhaustive:
        # a budget may stop the search: take the changes in random order so what is done is a fair sample
        random.Random(seed).shuffle(trans)
    search = _Search(eng, max_work)
    together_n = 0
    for state, k in trans:
        if search.over_budget():
            break
        if k < len(fixed):
            changed = fixed[k]
        else:
            vals = eng.steady(state)
            changed = tuple(qi for qi, d in clocked[k - len(fixed)]
                            if vals[eng.ids[d]] != (state >> qi) & 1)
            if len(changed) < 2:
                search.checked += 1   # one bit or none moves: the single changes cover it
                continue
            together_n += 1
        found = search.change(state, changed, paths_per_net, max_paths)
        search.group(found, state, changed, [circ.label(x) for x in circ.inputs])
    hazards = _hazards(eng, circ, search.groups, exhaustive)
    sizes = sorted({len(c) for c in fixed} | ({2} if clocked else set()))
    return {
        "hazards": hazards[:MAX_LISTED],
        "hazards_total": len(hazards),
        "errors": sum(1 for h in hazards if h["error"]),
        # a count of thousands of digits cannot be written as text (Python limits int-to-text): kept at 2^1000
        "transitions": {"checked": search.checked, "total": min(total, 1 << 1000),
                        "exhaustive": exhaustive and not search.stopped,
                        "stopped_early": search.stopped, "cell_evaluations": eng.work, "work_budget": max_work,
                        "last_change_partial": search.partial,
                        "sizes": sizes, "timed_runs": search.runs, "not_shown": search.not_shown,
                        "seed": None if exhaustive else seed,
                        "clock_groups": len(clocked), "bits_changed_together": together_n,
                        "input_groups": [list(g) for g in together or ()]},
    }


def _sample_text(tr: dict) -> str:
    """What a glitch search covered, in one sentence with its counts."""
    total = tr["total"]
    # an exact count past 10^12 reads as a power of two (a float of 2^1024 and more overflows)
    total_s = f"{total:,}" if total < 10 ** 12 else f"about 2^{total.bit_length() - 1}"
    if tr["exhaustive"]:
        text = f"all {total_s} input changes"
    else:
        how = "in random order" if tr.get("seed") is None else "drawn at random"
        text = f"{tr['checked']:,} of {total_s} input changes {how}"
        if tr["stopped_early"]:
            text += f", until the work budget of {tr['work_budget']:,} cell evaluations ran out"
    text += f"; {tr['timed_runs']:,} timed simulations"
    part = tr.get("last_change_partial")
    if part:
        text += (f"; the last change only at {part['delay_corners_run']} of its "
                 f"{part['delay_corners']} delay corners")
    return text


def conditions(conds: list, names: list, exhaustive: bool) -> list:
    """States of the other inputs, merged into cubes (dicts name -> value)."""
    k = len(names)
    if k == 0:
        return [{}]
    if k <= 12:
        tab = 0
        for c in conds:
            tab |= 1 << c
        cubes, _ = isop(tab, tab, k)
        return [{names[j]: int(ch) for j, ch in enumerate(cube) if ch != "-"} for cube in sorted(cubes)]
    return [{names[j]: (c >> j) & 1 for j in range(k)} for c in conds[:8]]


def glitch_report(build: Build, multi: bool = False, max_transitions: int = BUILD_MAX_TRANSITIONS,
                  seed: int = 0, min_fraction: float | None = None,
                  max_work: int | None = BUILD_MAX_WORK, work_per_cell: float = BUILD_WORK_PER_CELL,
                  together=()) -> Glitches:
    """The glitches of a gate build: :func:`find_glitches` on its cells.

    The work budget is ``max_work`` cell evaluations or ``work_per_cell``
    times the number of cells, whichever is more (``None``: no budget);
    ``search["sample"]`` says in words what the search covered.  The cones
    of the nets that reach a clock, enable, preset or clear are then
    searched on their own (:data:`CONTROL_MAX_TRANSITIONS` changes, all of
    them when the cones are small, and :data:`CONTROL_MAX_WORK`): a glitch
    there is an error, so it is looked for in full wherever it can be;
    ``search["control_search"]`` says what that covered.  ``together``
    names groups of inputs that change at once (see :func:`find_glitches`).
    """
    if not build.cells:
        return Glitches([], 0, 0, None)
    with paused_gc():
        circ = TimedCircuit.from_build(build, min_fraction)
    if max_work is not None:
        max_work = max(max_work, int(work_per_cell * len(circ.gates)))
    res = find_glitches(circ, multi=multi, max_transitions=max_transitions, seed=seed, max_work=max_work,
                        together=together)
    search = dict(res["transitions"])
    search["min_delay"] = "typical figure" if min_fraction is None else f"{min_fraction:g} of the maximum"
    search["sample"] = _sample_text(search)
    hazards, total = res["hazards"], res["hazards_total"]
    if circ.watch:
        cres = find_glitches(circ.cone(list(circ.watch)), multi=multi, max_transitions=CONTROL_MAX_TRANSITIONS,
                             seed=seed, max_work=CONTROL_MAX_WORK, together=together)
        have = {_hazard_key(h) for h in res["hazards"]}
        extra = [h for h in cres["hazards"] if h["error"] and _hazard_key(h) not in have]
        # errors first: they are what a builder must act on
        hazards = extra + hazards
        total += len(extra)
        ctl = dict(cres["transitions"])
        ctl["sample"] = _sample_text(ctl)
        ctl["nets"] = sorted(circ.watch)
        search["control_search"] = ctl
    errors = [h for h in hazards if h["error"]]
    rest = [h for h in hazards if not h["error"]]
    hazards = (errors + rest)[:MAX_LISTED]
    return Glitches(hazards, total, sum(1 for h in errors), search)


def _hazard_key(h: dict) -> tuple:
    return (h["net"], h["kind"], tuple(h["inputs_changed"]))
