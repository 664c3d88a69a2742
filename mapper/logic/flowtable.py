"""What a feedback region does: its flow table, stable states, oscillation, and the textbook form it has.

A region of a cut netlist (:mod:`mapper.logic.feedback`) has state variables
``y`` (its cut nets) and excitations ``Y(x, y)`` over its *sources* ``x``:
the primary inputs, storage outputs and other regions' state variables that
its logic reads, found by walking back through plain logic (Huffman,
J. Franklin Inst. 257, 1954).  From the excitation tables:

* the **flow table**: for every state and every input combination, the next
  state; an entry equal to its row is a *stable state* (Huffman circles it);
* the input combinations with **no stable state**: there the region
  oscillates (a ring of an odd number of inverters has none for any input
  and is refused);
* the **form**, read from behaviour alone for a region of one state
  variable: for each input combination it either *holds* (``Y = y``),
  *loads* a value (``Y`` the same for both states: the latch's data) or
  oscillates (``Y = not y``).  A region that never oscillates is a
  level-sensitive latch whose enable is "loads" and whose data is the value
  loaded; the enable and data functions tell the common forms apart -- the
  set-reset latch (enable ``s + r``: active-high set and reset, the
  cross-coupled NOR form; ``s' + r'``: active-low, the NAND form), the gated
  set-reset latch (``en (s + r)``), the gated D latch (enable one input,
  data another) -- and two D latches on one clock at opposite levels, the
  second fed from the first, are a master-slave flip-flop (common practice of
  digital-design textbooks);
* **essential hazards** (S. H. Unger, *Asynchronous Sequential Switching
  Circuits*, Wiley 1969): from a stable state, one change of an input leads
  to one state but three changes of it to another; then a delay on that
  input's path can make the circuit end in the wrong state.  Looked for over
  each group of regions that feed one another.

Races between gates are found at gate level in :mod:`mapper.logic.async_races`.
:func:`analyse` puts it all together for a netlist; :func:`latch_form`
turns regions that are latches into declared latches (for targets that
build storage from parts).
"""
from __future__ import annotations

from dataclasses import dataclass, field

from ..errors import Diagnostic, NetlistError
from ..netlist import Logic, Netlist, Storage
from ..order import topological_order
from .async_races import gate_races
from .feedback import Region, regions
from .function import Function, isop, var_mask

__all__ = ["RegionReport", "FeedbackReport", "analyse", "tabulate", "region_sources", "latch_form",
           "flow_table_lines", "MAX_SOURCES", "MAX_STATE_VARS", "check_feedback", "settle", "compare_flow",
           "race_text", "essential_text", "critical_races_added"]

#: the most sources (inputs of a region's logic) and state variables a flow table is made over
MAX_SOURCES = 8
MAX_STATE_VARS = 6
#: the most logic nodes walked back from a region to find its sources
MAX_CONE_NODES = 400


# -- tables -------------------------------------------------------------------------------
def tabulate(netlist: Netlist, roots, variables) -> dict | None:
    """Truth tables (over ``variables``, variable ``j`` as bit ``j`` of a minterm) of ``roots`` and
    of every logic net between them and the variables; ``None`` when the logic reads anything else
    or is too big (:data:`MAX_CONE_NODES`)."""
    nodes = netlist.nodes
    vset = set(variables)
    need: list = []
    seen: set = set()
    stack = list(roots)
    while stack:
        n = stack.pop()
        if n in seen or n in vset:
            continue
        seen.add(n)
        node = nodes.get(n)
        if not isinstance(node, Logic):
            return None
        need.append(n)
        if len(need) > MAX_CONE_NODES:
            return None
        stack.extend(node.fanins)
    order, left = topological_order(need, lambda n: nodes[n].fanins)
    if left:
        return None
    nv = len(variables)
    mask = (1 << (1 << nv)) - 1
    words = {v: var_mask(nv, j) for j, v in enumerate(variables)}
    for n in order:
        node = nodes[n]
        words[n] = node.func.eval_words([words[f] for f in node.fanins], mask)
    return words


def region_sources(netlist: Netlist, region: Region) -> list | None:
    """The nets a region's flow table is drawn over: what its logic reads, back to inputs and storage.

    Walks back from the region's inputs through logic (not through storage);
    when that finds more than :data:`MAX_SOURCES` nets (or too much logic),
    the region's direct inputs are used, and ``None`` is returned when they
    are too many as well.  Primary inputs come first, in port order.
    """
    nodes = netlist.nodes
    inside = set(region.nets)
    found: list = []
    seen: set = set()
    stack = list(reversed(region.inputs))
    walked = 0
    ok = True
    while stack:
        n = stack.pop()
        if n in seen or n in inside:
            continue
        seen.add(n)
        node = nodes.get(n)
        if isinstance(node, Logic):
            if node.fanins:
                walked += 1
                stack.extend(reversed(node.fanins))
                if walked > MAX_CONE_NODES:
                    ok = False
                    break
            continue
        found.append(n)
        if len(found) > MAX_SOURCES:
            ok = False
            break
    if not ok:
        found = [n for n in region.inputs if not (isinstance(nodes.get(n), Logic) and not nodes[n].fanins)]
        if len(found) > MAX_SOURCES:
            return None
    ins = {n: i for i, n in enumerate(netlist.inputs)}
    pos = {n: i for i, n in enumerate(nodes)}
    return sorted(found, key=lambda n: (0, ins[n]) if n in ins else (1, pos.get(n, 0)))


def settle(nexts: list, x: int, y: int) -> int | None:
    """The state the flow table ``nexts[y][x]`` leads to from ``y`` under input ``x`` (``None``: it never rests)."""
    seen = set()
    while True:
        n = nexts[y][x]
        if n == y:
            return y
        if y in seen:
            return None
        seen.add(y)
        y = n


# -- reports ------------------------------------------------------------------------------
@dataclass
class RegionReport:
    """What one feedback region is and does (plain data in :meth:`as_dict`).

    ``kind`` is one of ``"sr-latch"``, ``"gated-sr-latch"``, ``"d-latch"``,
    ``"latch"`` (some other enable and data), ``"bit"`` (nothing sets or
    clears it), ``"oscillator"`` (no stable state for any input), ``"loop"``
    (a latch-like loop that oscillates for some inputs, or of several state
    variables), ``"delay"`` (it always takes a value: no storage), or
    ``"unknown"`` (too big to tabulate).
    """

    region: Region
    sources: list | None
    kind: str
    form: str
    roles: dict = field(default_factory=dict)
    complement: str | None = None
    #: ``{"states": cut nets, "sources": nets, "next": [[state per source combination] per state]}``
    table: dict | None = None
    oscillates: list = field(default_factory=list)
    races: list = field(default_factory=list)
    essential: list = field(default_factory=list)
    #: for latches: the enable and data over the sources (truth tables), for :func:`latch_form`
    load: int | None = None
    data: int | None = None

    def as_dict(self) -> dict:
        r = self.region
        return {"nets": list(r.nets), "cut": list(r.cuts), "excitation": dict(r.excitation),
                "inputs": list(r.inputs), "sources": list(self.sources or []), "kind": self.kind,
                "form": self.form, "roles": dict(self.roles), "complement": self.complement,
                "flow_table": self.table, "oscillates_when": self.oscillates, "races": self.races,
                "essential_hazards": self.essential}


@dataclass
class FeedbackReport:
    """Every region of a netlist and the groups they form (master-slave flip-flops)."""

    regions: list
    groups: list = field(default_factory=list)

    def as_dict(self) -> list:
        return [r.as_dict() for r in self.regions]

    def by_cut(self) -> dict:
        return {c: r for r in self.regions for c in r.region.cuts}


def _combo(sources: list, x: int) -> dict:
    return {s: (x >> j) & 1 for j, s in enumerate(sources)}


def _lit(m: int, j: int, pol: int) -> int:
    full = (1 << (1 << m)) - 1
    return var_mask(m, j) if pol else full ^ var_mask(m, j)


def _literals(m: int) -> list:
    return [(j, p, _lit(m, j, p)) for j in range(m) for p in (1, 0)]


def _level(p: int) -> str:
    return "high" if p else "low"


def _expr(t: int, m: int, sources: list) -> str:
    """A sum of products over the sources for a truth table (``'`` marks a complement)."""
    full = (1 << (1 << m)) - 1
    if t == 0:
        return "0"
    if t == full:
        return "1"
    cubes, _ = Function.from_table(m, t).cover()
    terms = []
    for cube in cubes:
        lits = [sources[j] + ("" if ch == "1" else "'") for j, ch in enumerate(cube) if ch != "-"]
        terms.append("·".join(lits) or "1")
    return " + ".join(terms)


def _recognise(m: int, sources: list, load: int, data: int, q: str) -> tuple[str, str, dict]:
    """``(kind, form, roles)`` of a one-variable region that never oscillates."""
    full = (1 << (1 << m)) - 1
    if load == 0:
        return "bit", "a bit nothing sets or clears: it holds its power-up value", {}
    if load == full:
        return "delay", f"no storage: always takes {_expr(data, m, sources)}", {}
    lits = _literals(m)
    for j, p, lt in lits:
        if load == lt:
            for k, pd, ld in lits:
                if k != j and (data & load) == (ld & load):
                    inv = "" if pd else " (stores the complement of its data)"
                    return "d-latch", (f"D latch: follows {sources[k]} while {sources[j]} is {_level(p)}, holds while "
                                       f"it is {_level(1 - p)}{inv}"), {
                        "data": sources[k], "enable": sources[j], "enable_level": p, "data_level": pd}
    for a in range(len(lits)):
        for b in range(a + 1, len(lits)):
            (j, p, la), (k, pk, lb) = lits[a], lits[b]
            if j == k:
                continue
            for en in [None] + [e for e in lits if e[0] not in (j, k)]:
                gate = full if en is None else en[2]
                if load != gate & (la | lb):
                    continue
                sr = _set_reset(data, gate, (j, p, la), (k, pk, lb))
                if sr is None:
                    continue
                (sj, sp, _), (rj, rp, _), both = sr
                roles = {"set": sources[sj], "set_level": sp, "reset": sources[rj], "reset_level": rp}
                when = "" if both is None else f"; with both active {q} is {both}"
                if en is None:
                    shape = ""
                    if sp == rp:
                        shape = " (the cross-coupled NOR form)" if sp else " (the cross-coupled NAND form)"
                    if both is not None:
                        roles["both"] = both
                    levels = (f"active {_level(sp)}" if sp == rp else
                              f"set active {_level(sp)}, reset active {_level(rp)}")
                    return "sr-latch", (f"set-reset latch: set {sources[sj]} and reset {sources[rj]}, {levels}"
                                        f"{shape}{when}"), roles
                roles.update(enable=sources[en[0]], enable_level=en[1])
                if both is not None:
                    roles["both"] = both
                return "gated-sr-latch", (f"gated set-reset latch: set {sources[sj]} (active {_level(sp)}) and reset "
                                          f"{sources[rj]} (active {_level(rp)}) act while {sources[en[0]]} is "
                                          f"{_level(en[1])}{when}"), roles
    return "latch", (f"latch: takes {_expr(data & load, m, sources)} while {_expr(load, m, sources)}, "
                     "holds otherwise"), {}


def _set_reset(data: int, gate: int, a, b):
    """``(set literal, reset literal, value with both active or None)`` when ``a``/``b`` set and reset, else None."""
    la, lb = a[2], b[2]
    only_a, only_b, both = gate & la & ~lb, gate & lb & ~la, gate & la & lb
    if not only_a or not only_b:
        return None
    for s, r, os, orr in ((a, b, only_a, only_b), (b, a, only_b, only_a)):
        if data & os == os and data & orr == 0:
            v = None
            if both:
                if data & both == both:
                    v = 1
                elif data & both == 0:
                    v = 0
                else:
                    return None
            return s, r, v
    return None


def _complement_net(netlist: Netlist, region: Region, words: dict, m: int, hold: int) -> str | None:
    """A net of the region that holds the complement of its one state variable while it holds."""
    q = region.cuts[0]
    half = 1 << m
    if not hold:
        return None
    exc = set(region.excitation.values())
    for n in region.nets:
        if n == q or n in exc or not isinstance(netlist.nodes.get(n), Logic):
            continue
        w = words.get(n)
        if w is None:
            continue
        w0, w1 = w & ((1 << half) - 1), w >> half
        if w0 & hold == hold and w1 & hold == 0:
            return n
    return None


def _region_report(netlist: Netlist, region: Region) -> RegionReport:
    """Tabulate and recognise one region (see the module docstring)."""
    sources = region_sources(netlist, region)
    k = len(region.cuts)
    if sources is None or k > MAX_STATE_VARS:
        why = (f"{len(region.cuts)} state variables" if k > MAX_STATE_VARS else "too many inputs")
        return RegionReport(region, sources, "unknown", f"feedback not tabulated ({why})")
    m = len(sources)
    variables = list(sources) + list(region.cuts)
    words = tabulate(netlist, list(region.excitation.values()) + list(region.nets), variables)
    if words is None:
        return RegionReport(region, sources, "unknown", "feedback not tabulated (its logic is too big)")
    exc = [words[region.excitation[c]] for c in region.cuts]
    nx_, ny = 1 << m, 1 << k
    nexts = [[sum(((exc[j] >> (x | (y << m))) & 1) << j for j in range(k)) for x in range(nx_)] for y in range(ny)]
    table = {"states": list(region.cuts), "sources": list(sources), "next": nexts}
    osc = [_combo(sources, x) for x in range(nx_) if all(nexts[y][x] != y for y in range(ny))]
    rep = RegionReport(region, sources, "loop", "", table=table, oscillates=osc)
    if len(osc) == nx_:
        rep.kind = "oscillator"
        rep.form = "oscillates: no stable state for any input"
    elif k == 1:
        full = (1 << nx_) - 1
        y0, y1 = exc[0] & full, exc[0] >> nx_
        hold = ~y0 & y1 & full
        load = ~(y0 ^ y1) & full
        if osc:
            rep.form = (f"loop of one state variable that oscillates for {len(osc)} of {nx_} input combinations")
        else:
            rep.kind, rep.form, rep.roles = _recognise(m, sources, load, y0 & load, region.cuts[0])
            rep.load, rep.data = load, y0 & load
        rep.complement = _complement_net(netlist, region, words, m, hold)
    else:
        stable = sum(1 for y in range(ny) for x in range(nx_) if nexts[y][x] == y)
        rep.form = f"asynchronous circuit of {k} state variables ({stable} stable total states)"
    return rep


def _ring(netlist: Netlist, region: Region) -> str:
    """`` (a ring of N inverters)`` when the region is just that, else ``""``."""
    logic = [netlist.nodes[n] for n in region.nets if isinstance(netlist.nodes.get(n), Logic)]
    if region.inputs or not logic:
        return ""
    if all(node.func.n == 1 and node.func.table() == 0b01 for node in logic):
        return f" (a ring of {len(logic)} inverter{'s' if len(logic) > 1 else ''})"
    return ""


# -- groups: master-slave, essential hazards ------------------------------------------------
def _master_slave(reports: list) -> list:
    """Pairs of D latches on one clock at opposite levels, the second fed from the first."""
    latches = {r.region.cuts[0]: r for r in reports if r.kind == "d-latch"}
    out = []
    for slave in latches.values():
        master = latches.get(slave.roles["data"])
        if master is None or master is slave:
            continue
        mr, sr = master.roles, slave.roles
        if mr["enable"] != sr["enable"] or mr["enable_level"] == sr["enable_level"]:
            continue
        edge = "rising" if slave.roles["enable_level"] else "falling"
        inverted = (master.roles["data_level"] ^ slave.roles["data_level"]) == 1
        q, m_, clk, d = slave.region.cuts[0], master.region.cuts[0], slave.roles["enable"], master.roles["data"]
        out.append({"kind": "master-slave", "master": m_, "slave": q, "clock": clk, "edge": edge, "data": d,
                    "inverted": inverted})
        inv = " (the complement of it)" if inverted else ""
        slave.form = (f"master-slave D flip-flop: {q} takes {d}{inv} on the {edge} edge of {clk} "
                      f"(slave latch; master {m_})")
        slave.roles["flip_flop"] = {"master": m_, "edge": edge}
        master.form = f"master latch of the master-slave flip-flop {q} (follows {d} while {clk} is " \
                      f"{_level(master.roles['enable_level'])})"
        master.roles["master_of"] = q
    return out


def _groups(reports: list) -> list:
    """Regions that feed one another (through their state variables), as lists of reports."""
    of = {c: i for i, r in enumerate(reports) for c in r.region.cuts}
    parent = list(range(len(reports)))

    def find(i):
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    for i, r in enumerate(reports):
        for s in r.sources or ():
            if s in of:
                parent[find(i)] = find(of[s])
    out: dict = {}
    for i in range(len(reports)):
        out.setdefault(find(i), []).append(reports[i])
    return list(out.values())


def _essential(netlist: Netlist, group: list) -> list:
    """Essential hazards of a group of regions (Unger 1969): one change of an input against three."""
    if any(r.sources is None or r.kind == "unknown" for r in group):
        return []
    cuts = [c for r in group for c in r.region.cuts]
    if len(cuts) < 2 or len(cuts) > MAX_STATE_VARS:
        return []
    cset = set(cuts)
    sources = []
    for r in group:
        sources += [s for s in r.sources if s not in cset and s not in sources]
    if len(sources) > MAX_SOURCES:
        return []
    words = tabulate(netlist, [r.region.excitation[c] for r in group for c in r.region.cuts], sources + cuts)
    if words is None:
        return []
    m, k = len(sources), len(cuts)
    exc = [words[netlist.nodes[c].d] for c in cuts]
    nexts = [[sum(((exc[j] >> (x | (y << m))) & 1) << j for j in range(k)) for x in range(1 << m)]
             for y in range(1 << k)]
    found = []
    for y in range(1 << k):
        for x in range(1 << m):
            if nexts[y][x] != y:
                continue
            for j in range(m):
                x2 = x ^ (1 << j)
                once = settle(nexts, x2, y)
                if once is None:
                    continue
                back = settle(nexts, x, once)
                thrice = settle(nexts, x2, back) if back is not None else None
                if thrice is not None and thrice != once:
                    found.append({"input": sources[j], "inputs": _combo(sources, x),
                                  "state": _combo(cuts, y), "once": _combo(cuts, once),
                                  "thrice": _combo(cuts, thrice)})
    return found


# -- the whole netlist ----------------------------------------------------------------------
def analyse(netlist: Netlist, races: bool = True) -> FeedbackReport:
    """Every feedback region of a cut netlist, tabulated and recognised, with its races and hazards."""
    reports = [_region_report(netlist, r) for r in regions(netlist)]
    groups = _master_slave(reports)
    for grp in _groups(reports):
        ess = _essential(netlist, grp)
        for r in grp:
            mine = set(r.region.cuts)
            r.essential = [e for e in ess if mine & set(e["state"])]
    if races:
        for r in reports:
            if r.sources is not None and r.kind not in ("unknown", "oscillator"):
                r.races = gate_races(netlist, r.region, r.sources)
    return FeedbackReport(reports, groups)


def check_feedback(netlist: Netlist) -> FeedbackReport:
    """Analyse a freshly cut netlist: refuse regions that can only oscillate, note what the others are.

    Raises :class:`~mapper.errors.NetlistError` naming each loop that has no
    stable state for any input ("oscillates"); adds a note per region and a
    warning per region that oscillates for some inputs or races.
    """
    rep = analyse(netlist)
    errors = []
    for r in rep.regions:
        if not r.region.loop:
            continue  # a declared asynchronous element on no loop: a delay, nothing to say
        f, ln, col = netlist.origin.get(r.region.cuts[0]) or (None, None, None)
        nets = ", ".join(n for n in r.region.nets if n not in r.region.excitation.values())
        if r.kind == "oscillator":
            errors.append(Diagnostic(f"the loop through nets {nets} oscillates: it has no stable state for any "
                                     f"input{_ring(netlist, r.region)}; it cannot hold a value", f, ln, col))
            continue
        netlist.notes.append(Diagnostic(f"nets {nets} form a feedback loop, read as storage cut at "
                                        f"{', '.join(r.region.cuts)}: {r.form}", f, ln, col, severity="note"))
        if r.oscillates:
            shown = "; ".join(_when(c) for c in r.oscillates[:4])
            more = f" (and {len(r.oscillates) - 4} more)" if len(r.oscillates) > 4 else ""
            netlist.warnings.append(Diagnostic(f"the loop through nets {nets} oscillates while {shown}{more}",
                                               f, ln, col, severity="warning"))
        for race in r.races[:4]:
            netlist.warnings.append(Diagnostic(race_text(race, r.region.cuts), f, ln, col, severity="warning"))
        for e in r.essential[:2]:
            netlist.warnings.append(Diagnostic(essential_text(e), f, ln, col, severity="warning"))
    if errors:
        raise NetlistError(errors)
    return rep


def _when(combo: dict) -> str:
    return ", ".join(f"{k}={v}" for k, v in combo.items()) or "always"


def race_text(race: dict, cuts) -> str:
    """A race in words (see :func:`mapper.logic.async_races.gate_races`)."""
    changed = race["inputs_changed"]
    how = (f"{' and '.join(changed)} change together" if len(changed) > 1 else f"{changed[0]} changes")
    frm = _when(race["from"])
    ends = sorted({_when({c: o[c] for c in cuts if c in o}) for o in race["outcomes"]})
    text = f"race: when {how} from {frm}, "
    if len(ends) > 1:
        text += f"the result is unpredictable ({' or '.join(ends)})"
    else:
        text += f"it ends at {ends[0] if ends else 'no stable state'}"
    if race["oscillation"]:
        text += "; it may oscillate meanwhile" if ends else "; it oscillates"
    return text + f" (racing: {', '.join(race['racing'])})"


def essential_text(e: dict) -> str:
    """An essential hazard in words."""
    return (f"essential hazard (Unger): from {_when(e['state'])} with {_when(e['inputs'])}, one change of "
            f"{e['input']} ends at {_when(e['once'])} but three end at {_when(e['thrice'])}: a slow path from "
            f"{e['input']} can store the wrong value")


def flow_table_lines(table: dict) -> list:
    """Huffman's flow table as text: one row per state, one column per input combination, stable
    entries in parentheses (Huffman circles them)."""
    states, sources, nexts = table["states"], table["sources"], table["next"]
    k, m = len(states), len(sources)

    def bits(v, n):
        return "".join(str((v >> j) & 1) for j in range(n)) or "-"

    head = f"{' '.join(states)} \\ {' '.join(sources) or '(no inputs)'}"
    cols = [bits(x, m) for x in range(1 << m)]
    width = max(len(c) for c in cols) + 2
    lines = [head, " " * (k + 2) + " ".join(c.rjust(width) for c in cols)]
    for y, row in enumerate(nexts):
        cells = [(f"({bits(n, k)})" if n == y else bits(n, k)).rjust(width) for n in row]
        lines.append(bits(y, k).ljust(k + 2) + " ".join(cells))
    return lines


# -- latches declared from regions ------------------------------------------------------------
def latch_form(netlist: Netlist, report: FeedbackReport | None = None, only=None) -> Netlist:
    """A copy of a cut netlist in which each region that is a latch is a declared latch.

    A region of one state variable that never oscillates holds or loads; it
    becomes a storage element of kind ``ah`` whose enable is "loads" and
    whose data is the value loaded, or ``al`` on an enable that is one
    input low.  The enable and data are new logic nets over the region's
    sources (or the source itself, where it is one input).  ``only`` limits
    the change to the regions whose cut nets it names.  Logic left driving
    nothing is dropped.
    """
    report = report or analyse(netlist, races=False)
    out = netlist.copy()
    for r in report.regions:
        q = r.region.cuts[0]
        if r.load is None or r.data is None or (only is not None and q not in only):
            continue
        m = len(r.sources)
        full = (1 << (1 << m)) - 1
        if r.load in (0, full):
            continue  # a bit nothing writes, or no storage at all: left as it is
        level, en = _net_for(out, r.sources, r.load, r.load, f"{q}.en", m, allow_low=True)
        _, d = _net_for(out, r.sources, r.data, r.data | (full & ~r.load), f"{q}.d", m)
        out.nodes[q] = Storage(d, "ah" if level else "al", en, netlist.nodes[q].init)
    _drop_dead(out)
    return out


def _net_for(n: Netlist, sources: list, lower: int, upper: int, name: str, m: int, allow_low: bool = False):
    """``(level, net)`` for a function between truth tables ``lower`` and ``upper`` over ``sources``: a
    source itself (level 1; level 0 for its complement when ``allow_low``), else a new logic net ``name``
    of an irredundant cover (the don't cares between the two tables used)."""
    for j, s in enumerate(sources):
        for pol in ((1, 0) if allow_low else (1,)):
            lt = _lit(m, j, pol)
            if lower & ~lt == 0 and lt & ~upper == 0:
                return pol, s
    cubes, _ = isop(lower, upper, m)
    while name in n.nodes:
        name += "_"
    n.nodes[name] = Logic(tuple(sources), Function.from_cover(m, cubes, 1))
    return 1, name


def _drop_dead(n: Netlist) -> None:
    """Remove logic nets that reach no output or storage element (left over from a region made a latch)."""
    live = set(n.outputs)
    stack = list(n.outputs)
    for name, node in n.nodes.items():
        if isinstance(node, Storage):
            live.add(name)
            stack.append(name)
    while stack:
        x = stack.pop()
        node = n.nodes.get(x)
        if node is None:
            continue
        for f in node.fanins:
            if f not in live:
                live.add(f)
                stack.append(f)
    for name in [k for k, node in n.nodes.items() if isinstance(node, Logic) and k not in live]:
        del n.nodes[name]
        n.origin.pop(name, None)


# -- two netlists cut at the same nets ----------------------------------------------------------
def _flow_over(netlist: Netlist, region: Region, sources: list) -> list | None:
    words = tabulate(netlist, list(region.excitation.values()), list(sources) + list(region.cuts))
    if words is None:
        return None
    m, k = len(sources), len(region.cuts)
    exc = [words[region.excitation[c]] for c in region.cuts]
    return [[sum(((exc[j] >> (x | (y << m))) & 1) << j for j in range(k)) for x in range(1 << m)]
            for y in range(1 << k)]


def _behaviour(nexts: list, m: int) -> tuple[set, dict]:
    """(stable total states, where each single input change from each of them leads)."""
    stable = {(x, y) for y in range(len(nexts)) for x in range(1 << m) if nexts[y][x] == y}
    moves = {(x, y, j): settle(nexts, x ^ (1 << j), y) for x, y in stable for j in range(m)}
    return stable, moves


def compare_flow(a: Netlist, b: Netlist) -> tuple[bool, list]:
    """Compare the feedback regions of two netlists cut at the same nets: ``(same, notes)``.

    For each loop region of ``a`` and the region of ``b`` with the same cut
    nets, both flow tables are drawn over the sources of both; their stable
    states and the state each single input change leads to from each stable
    state must be the same.  Races at gate level that only ``b`` has for a
    single input change are noted (they do not make the answer "no": the
    flow tables agree, and such a race is a matter of delays).
    """
    rb = {tuple(sorted(r.cuts)): r for r in regions(b) if r.loop}
    notes: list = []
    same = True
    checked = stable_n = moves_n = 0
    for ra in regions(a):
        if not ra.loop:
            continue
        key = tuple(sorted(ra.cuts))
        other = rb.get(key)
        if other is None:
            notes.append(f"the loop of A cut at {', '.join(ra.cuts)} has no loop of B cut at the same nets: "
                         "its flow table is not compared")
            continue
        sa, sb = region_sources(a, ra), region_sources(b, other)
        srcs = list(dict.fromkeys((sa or []) + (sb or [])))
        if sa is None or sb is None or len(srcs) > MAX_SOURCES or len(ra.cuts) > MAX_STATE_VARS:
            notes.append(f"the loop cut at {', '.join(ra.cuts)} is too big for its flow table to be compared")
            continue
        fa, fb = _flow_over(a, ra, srcs), _flow_over(b, other, srcs)
        if fa is None or fb is None:
            notes.append(f"the loop cut at {', '.join(ra.cuts)} reads nets outside its sources: not compared")
            continue
        ba, bb = _behaviour(fa, len(srcs)), _behaviour(fb, len(srcs))
        checked += 1
        if ba != bb:
            same = False
            notes.append(f"the loop cut at {', '.join(ra.cuts)} has other stable states or transitions in B")
            continue
        stable_n += len(ba[0])
        moves_n += len(ba[1])
        for r in _races_only_b(a, ra, b, other, srcs)[:2]:
            notes.append("B only: " + race_text(r, other.cuts))
    if checked:
        notes.append(f"flow tables of {checked} feedback loop(s) compared: the same {stable_n} stable total "
                     f"state(s) and the same result for each of {moves_n} single input change(s) from them")
    return same, notes


def _races_only_b(a: Netlist, ra: Region, b: Netlist, rb: Region, srcs: list, critical: bool = False) -> list:
    """Races of ``b``'s region after one input change that ``a``'s region cut at the same nets has not
    (only those with more than one end when ``critical``)."""
    def key(r):
        return str(r["from"]), str(r["to"])

    def single(races):
        return [r for r in races if len(r["inputs_changed"]) == 1 and (not critical or len(r["outcomes"]) > 1)]

    mine = {key(r) for r in single(gate_races(a, ra, srcs))}
    return [r for r in single(gate_races(b, rb, srcs)) if key(r) not in mine]


def critical_races_added(a: Netlist, b: Netlist) -> list:
    """Critical races (more than one end) after one input change that the loops of ``b`` have and the
    loops of ``a`` cut at the same nets have not, in words: what a build adds to its design's races."""
    rb = {tuple(sorted(r.cuts)): r for r in regions(b) if r.loop}
    out = []
    for ra in regions(a):
        other = rb.get(tuple(sorted(ra.cuts)))
        if not ra.loop or other is None:
            continue
        sa, sb = region_sources(a, ra), region_sources(b, other)
        if sa is None or sb is None:
            continue
        srcs = list(dict.fromkeys(sa + sb))
        if len(srcs) > MAX_SOURCES:
            continue
        out += [race_text(r, other.cuts) for r in _races_only_b(a, ra, b, other, srcs, critical=True)]
    return out
