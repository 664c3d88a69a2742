"""Parts of a build placed on a board, to shorten the wiring.

Method: simulated annealing (Kirkpatrick, Gelatt and Vecchi, "Optimization
by simulated annealing", Science 220, 1983) as used for placement in
TimberWolf (Sechen and Sangiovanni-Vincentelli, IEEE J. Solid-State
Circuits 20(2), 1985): parts are moved to other places or swapped, a move
that shortens the wiring is always kept, a move that lengthens it is kept
with probability exp(-increase / temperature), the temperature falls
geometrically, and the distance a part may jump shrinks with it.  It
starts from the reference order at a low temperature (a twentieth of the
average change a random move makes): the reference order already keeps
parts of one stretch of logic together, and a hot start scatters them
further than the move budget (:data:`MAX_MOVES`) can gather again.  The
best placement met is kept, so the result is never longer than the start.  The
length is the half-perimeter of the box around each signal net's pins
(supply pins go to the rails, wherever the part stands; on a breadboard a
support part's leg on a net its part has no pin on counts as a pin of that
net at the part).  The random sequence is seeded: the same build gives the
same placement.

Every logic part (chip or relay) takes one *place*: on a breadboard a slot
along the centre channel, straddling it; on a perforated or wire-wrap
board a cell of a grid.  Holes under a part's body are never used (a
relay covers holes beside its pins).  Support parts stand by the part they
serve (the reference named in their purpose): on a breadboard a
decoupling capacitor plugs across the rails beside its chip, a coil diode
or load resistor goes from its part's strip to the GND rail, and a
steering diode from its part's strip to a strip of the coil's net, each
by the rules of :mod:`mapper.place.legs` (a strip keeps room for the
wires of its net; a leg that finds none goes into a strip of its own,
joined to its net by a wire); on other boards they stand in a column left
of their part.

:func:`catalog_order` places the parts in reference order instead: the
yardstick the benchmark measures the annealing against.
"""
from __future__ import annotations

import math
import random
import re
from dataclasses import dataclass, field

from ..build import SUPPLY_NETS, Build, ref_key
from ..errors import UsageError
from .boards import BOARD_GAP, BREADBOARD_ROWS, STRIP_HEADS, Board, board_of, rail_rows
from .footprints import Footprint, footprint
from .legs import Strips

__all__ = ["PlacedPart", "Placement", "place", "catalog_order", "hpwl"]

#: most moves the annealing tries (the time of a 500-part build stays in seconds)
MAX_MOVES = 60000
_SEED = 15


@dataclass
class PlacedPart:
    """One part on the board: its footprint origin hole and the hole of every pin."""

    ref: str
    part_id: str
    package: str
    kind: str
    origin: tuple
    pins: dict                    # package pin number -> (x, y)
    fp: Footprint | None = None   # None: a support part whose legs go into rails and strips
    host: str | None = None
    note: str = ""


@dataclass
class Placement:
    """Where everything stands (hole coordinates, see :mod:`mapper.place.boards`)."""

    board: Board
    boards: int
    parts: dict = field(default_factory=dict)
    #: (kind, name) -> hole; kind is input, output or supply
    terminals: dict = field(default_factory=dict)
    #: (ref, pin as Build.nets names it) -> hole
    holes: dict = field(default_factory=dict)
    method: str = ""
    length_start: float = 0.0
    length: float = 0.0
    moves: int = 0
    #: holes a support part's leg or a pin takes, or a part's body covers (no wire may go there)
    taken: set = field(default_factory=set)
    #: holes under a part's body that are not its pins
    covered: set = field(default_factory=set)
    #: breadboards: support legs ``(ref, leg)`` standing in a strip of their own, joined to their net by a wire
    own_strips: list = field(default_factory=list)

    def hole(self, ref: str, pin) -> tuple:
        return self.holes[(ref, pin)]


# -- what is placed -----------------------------------------------------------------------------------
def _pin_keys(b: Build, ref: str, pd) -> dict:
    """package pin number -> the pin as :meth:`Build.nets` names it (relays by terminal name)."""
    if pd.relay is not None:
        return {num: name for num, name in pd.pin_names().items()}
    return {num: num for num in range(1, pd.pin_count + 1)}


def _host_of(b: Build, sp, logic_refs: set) -> str | None:
    for word in re.findall(r"[A-Z]+\d+", sp.purpose or ""):
        if word in logic_refs:
            return word
    nets = [n for n in sp.nets if n not in SUPPLY_NETS]
    for k in b.contacts:  # a load resistor stands by the pole that drives its net
        if k.com in nets:
            return k.part_ref
    for net in nets:
        for ref, _ in b.nets().get(net, []):
            if ref in logic_refs:
                return ref
    return None


@dataclass
class _Unit:
    ref: str
    fp: Footprint
    supports: list          # support instances standing with it
    offsets: list = field(default_factory=list)   # (net id, dx, dy) of its signal pins


def _units(b: Build, board: Board) -> tuple[list, dict]:
    logic = sorted(b.parts, key=lambda p: ref_key(p.ref))
    refs = {p.ref for p in logic}
    units = {p.ref: _Unit(p.ref, footprint(b.part_def(p.ref).package, b.part_def(p.ref).pin_count), [])
             for p in logic}
    loose = []
    for sp in sorted(b.support, key=lambda s: ref_key(s.ref)):
        host = _host_of(b, sp, refs)
        if host is None:
            pd = b.target.parts[sp.part_id]
            units[sp.ref] = _Unit(sp.ref, footprint(pd.package, pd.pin_count), [])
            loose.append(sp.ref)
        else:
            units[host].supports.append(sp)
    return list(units.values()), {sp: True for sp in loose}


# -- places ---------------------------------------------------------------------------------------------
def _support_span(b: Build, sp) -> int:
    pd = b.target.parts[sp.part_id]
    fp = footprint(pd.package, pd.pin_count)
    return max(fp.width, fp.height) - 1


def _sites(b: Build, board: Board, units: list) -> tuple[list, int, tuple]:
    """Places as ``(x0, y0)`` of a footprint origin, the number of boards, and the site grid shape."""
    n = len(units)
    fw = max((u.fp.width for u in units), default=1)
    if board.is_breadboard:
        for u in units:
            dys = {dy for _, dy in u.fp.pins.values()}
            if not (dys <= {0} or (min(dys) == 0 and 3 <= max(dys) <= 7 and all(d in (0, max(dys)) for d in dys))):
                raise UsageError(f"{u.ref} ({u.fp.package}) cannot straddle a breadboard's channel: "
                                 f"choose --board perf:WxH")
        sw = fw + 1
        per = (board.columns - 1) // sw
        if per < 1:
            raise UsageError(f"{board.key} is too short for a {fw}-column part")
        boards = max(1, -(-n // per))
        sites = [(1 + k * sw, 7 + j * (BREADBOARD_ROWS + BOARD_GAP)) for j in range(boards) for k in range(per)]
        return sites, boards, (per, boards)
    margin = max((len(u.supports) for u in units), default=0)
    fh = max((u.fp.height for u in units), default=1)
    span = max((_support_span(b, sp) for u in units for sp in u.supports), default=0)
    sw = fw + margin + 2
    sh = max(fh, span + 1) + 2
    nx = (board.columns - 5) // sw
    ny = (board.rows - 4) // sh
    if nx * ny < n:
        need_w = 5 + sw * min(n, max(1, nx))
        raise UsageError(f"{board.key}: the build needs {n} part places of {sw} × {sh} holes; "
                         f"the board holds {max(0, nx) * max(0, ny)} (try --board perf:{max(need_w, board.columns)}x"
                         f"{4 + sh * -(-n // max(1, nx))})")
    sites = [(3 + margin + i * sw, 2 + j * sh) for j in range(ny) for i in range(nx)]
    return sites, 1, (nx, ny)


# -- length ---------------------------------------------------------------------------------------------
def hpwl(points) -> int:
    """Half-perimeter of the box around ``points`` (holes)."""
    xs = [p[0] for p in points]
    ys = [p[1] for p in points]
    return max(xs) - min(xs) + max(ys) - min(ys)


class _Cost:
    """Half-perimeter wire length of every signal net, kept up to date as units move."""

    def __init__(self, units: list, fixed: dict, nets_of_unit: list, net_pins: list):
        self.units, self.fixed = units, fixed
        self.nets_of_unit, self.net_pins = nets_of_unit, net_pins

    def net(self, k: int, pos: list) -> int:
        xs, ys = [], []
        for u, dx, dy in self.net_pins[k]:
            if u < 0:
                xs.append(dx)
                ys.append(dy)
            else:
                x0, y0 = pos[u]
                xs.append(x0 + dx)
                ys.append(y0 + dy)
        return max(xs) - min(xs) + max(ys) - min(ys)

    def total(self, pos: list) -> int:
        return sum(self.net(k, pos) for k in range(len(self.net_pins)))


def _signal_nets(b: Build, units: list, terminals: dict, board: Board) -> tuple[list, list]:
    """(nets of each unit, pins of each net as (unit or -1, dx or x, dy or y))."""
    nets: dict = {}

    def add(net, item):
        if net is None or net in SUPPLY_NETS:
            return
        nets.setdefault(net, []).append(item)

    for i, u in enumerate(units):
        pd = _def_of(b, u.ref)
        keys = _pin_keys(b, u.ref, pd)
        mine: dict = {}
        for num, (dx, dy) in u.fp.pins.items():
            net = _net_at(b, u.ref, keys.get(num))
            mine.setdefault(net, (dx, dy))
            add(net, (i, dx, dy))
        if not board.is_breadboard:
            for k, sp in enumerate(u.supports):
                for j, net in enumerate(sp.nets):
                    dx, dy = _support_offset(b, sp, k, j)
                    add(net, (i, dx, dy))
            continue
        # a support part stands by its part: its leg on a net the part has no pin on (a steering
        # diode's coil end) is a stop of that net there
        for sp in u.supports:
            at = next((mine[n] for n in sp.nets if n in mine and n not in SUPPLY_NETS), None)
            for net in sp.nets:
                if at is not None and net not in mine:
                    add(net, (i, *at))
    for (kind, name), (x, y) in terminals.items():
        if kind == "input":
            add(name, (-1, x, y))
        elif kind == "output":
            add(b.output_nets.get(name, name), (-1, x, y))
    net_list = [pins for pins in nets.values() if len({p[0] for p in pins if p[0] >= 0}) >= 1 and len(pins) >= 2]
    of_unit: list = [set() for _ in units]
    for k, pins in enumerate(net_list):
        for u, _, _ in pins:
            if u >= 0:
                of_unit[u].add(k)
    return [sorted(s) for s in of_unit], net_list


_NET_CACHE: dict = {}


def _net_at(b: Build, ref: str, key) -> str | None:
    table = _NET_CACHE.get(id(b))
    if table is None or table[0] is not b:
        m = {}
        for net, pins in b.nets().items():
            for r, p in pins:
                m[(r, p)] = net
        table = _NET_CACHE[id(b)] = (b, m)
    return table[1].get((ref, key))


def _support_offset(b: Build, sp, k: int, leg: int) -> tuple:
    """Offset (from its part's origin) of leg ``leg`` of the ``k``-th support part on a perforated board."""
    span = _support_span(b, sp)
    return -1 - k, (0 if leg == 0 else span)


# -- terminals ------------------------------------------------------------------------------------------
def _terminals(b: Build, board: Board) -> dict:
    t: dict = {}
    if board.is_breadboard:
        for i, name in enumerate(b.inputs):
            t[("input", name)] = (-5, 3 + i)
        for i, name in enumerate(b.outputs):
            t[("output", name)] = (board.columns + 4, 3 + i)
        t[("supply", "GND")] = (-5, 0)
        t[("supply", "VCC")] = (-5, 1)
        return t
    for i, name in enumerate(b.inputs):
        t[("input", name)] = (i // (board.rows - 4), 2 + i % (board.rows - 4))
    for i, name in enumerate(b.outputs):
        t[("output", name)] = (board.columns - 1 - i // (board.rows - 4), 2 + i % (board.rows - 4))
    t[("supply", "VCC")] = (0, 0)
    t[("supply", "GND")] = (0, board.rows - 1)
    return t


# -- annealing ------------------------------------------------------------------------------------------
def _anneal(cost: _Cost, pos_of_site: list, assign: list, shape: tuple, rng: random.Random) -> tuple[list, int]:
    """Simulated annealing of units over sites; ``assign[u]`` is the site of unit u.

    Returns the best assignment met (never worse than the start) and the number of moves tried.
    """
    n_units = len(assign)
    n_sites = len(pos_of_site)
    if n_units < 2 and n_sites <= n_units:
        return assign, 0
    per, rows = shape
    at = [-1] * n_sites
    for u, s in enumerate(assign):
        at[s] = u
    pos = [pos_of_site[s] for s in assign]
    netcost = [cost.net(k, pos) for k in range(len(cost.net_pins))]

    def delta(u, v, s_u, s_v):
        nets = set(cost.nets_of_unit[u])
        if v >= 0:
            nets.update(cost.nets_of_unit[v])
        pos[u] = pos_of_site[s_v]
        if v >= 0:
            pos[v] = pos_of_site[s_u]
        d = 0
        new = {}
        for k in nets:
            c = cost.net(k, pos)
            new[k] = c
            d += c - netcost[k]
        return d, new

    def undo(u, v, s_u, s_v):
        pos[u] = pos_of_site[s_u]
        if v >= 0:
            pos[v] = pos_of_site[s_v]

    def pick(u, radius):
        s = assign[u]
        cx, cy = s % per, s // per
        x = min(per - 1, max(0, cx + rng.randint(-radius, radius)))
        y = min(rows - 1, max(0, cy + rng.randint(-radius, radius)))
        return y * per + x

    samples = []
    for _ in range(min(200, 10 * n_units)):
        u = rng.randrange(n_units)
        s_u, s_v = assign[u], rng.randrange(n_sites)
        if s_v == s_u:
            continue
        v = at[s_v]
        d, _ = delta(u, v, s_u, s_v)
        undo(u, v, s_u, s_v)
        samples.append(abs(d))
    t = max(1.0, 0.05 * (sum(samples) / max(1, len(samples))))
    t_end = 0.05
    budget = min(MAX_MOVES, max(8000, 300 * n_units))
    per_round = max(20, 4 * n_units)
    rounds = max(1, budget // per_round)
    alpha = (t_end / t) ** (1 / rounds)
    radius = max(2, max(per, rows) // 3)
    moves = 0
    current = sum(netcost)
    best_cost, best = current, list(assign)
    for _ in range(rounds):
        for _ in range(per_round):
            u = rng.randrange(n_units)
            s_u = assign[u]
            s_v = pick(u, max(1, radius))
            if s_v == s_u:
                continue
            v = at[s_v]
            d, new = delta(u, v, s_u, s_v)
            moves += 1
            if d <= 0 or rng.random() < math.exp(-d / t):
                assign[u], at[s_v], at[s_u] = s_v, u, v
                if v >= 0:
                    assign[v] = s_u
                for k, c in new.items():
                    netcost[k] = c
                current += d
                if current < best_cost:
                    best_cost, best = current, list(assign)
            else:
                undo(u, v, s_u, s_v)
        t *= alpha
        radius = max(1, int(radius * 0.93))
    return best, moves


# -- the whole ----------------------------------------------------------------------------------------
def place(b: Build, board: Board, anneal: bool = True) -> Placement:
    """Place ``b`` on ``board`` (see the module docstring); ``anneal=False`` keeps reference order."""
    _NET_CACHE.clear()
    units, _ = _units(b, board)
    sites, boards, shape = _sites(b, board, units)
    terminals = _terminals(b, board)
    nets_of_unit, net_pins = _signal_nets(b, units, terminals, board)
    cost = _Cost(units, terminals, nets_of_unit, net_pins)
    assign = list(range(len(units)))
    start = cost.total([sites[s] for s in assign]) if units else 0
    moves = 0
    if anneal and len(units) > 1:
        assign, moves = _anneal(cost, sites, assign, shape, random.Random(_SEED))
    p = Placement(board, boards, terminals=terminals,
                  method="simulated annealing" if anneal else "reference order")
    p.length_start = start
    p.length = cost.total([sites[s] for s in assign]) if units else 0
    p.moves = moves
    used_boards = set()
    for u, s in zip(units, assign):
        _put(b, p, u, sites[s])
        used_boards.add(board_of(sites[s][1]) if board.is_breadboard else 0)
    if not board.is_breadboard:
        for u in units:
            for k, sp in enumerate(u.supports):
                _put_support(b, p, sp, u.ref, _perf_legs(b, p, sp, u.ref, k), f"beside {u.ref}")
        return p
    p.boards = max(used_boards, default=0) + 1
    strips = _strips(b, p)
    for u in units:
        for sp in u.supports:
            legs, note = _breadboard_legs(b, p, strips, sp, u.ref)
            _put_support(b, p, sp, u.ref, legs, note)
    p.boards = strips.boards  # one more when the strips ran out (see mapper.place.legs)
    return p


def catalog_order(b: Build, board: Board) -> Placement:
    """Parts in reference order, place after place: the yardstick for :func:`place`."""
    return place(b, board, anneal=False)


def _put(b: Build, p: Placement, u: _Unit, site: tuple) -> None:
    pd = _def_of(b, u.ref)
    x0, y0 = site
    pins = {num: (x0 + dx, y0 + dy) for num, (dx, dy) in u.fp.pins.items()}
    p.parts[u.ref] = PlacedPart(u.ref, pd.id, pd.package, pd.kind, (x0, y0), pins, u.fp)
    if pd.kind == "support":
        sp = _support(b, u.ref)
        numbers = sorted(pins)
        for i in range(1, len(sp.nets) + 1):
            p.holes[(u.ref, i)] = pins[numbers[i - 1]]
    else:
        keys = _pin_keys(b, u.ref, pd)
        for num, xy in pins.items():
            p.holes[(u.ref, keys[num])] = xy
    p.taken.update(pins.values())
    under = _covered(u.fp, site) - set(pins.values())
    p.covered.update(under)
    p.taken.update(under)


def _covered(fp: Footprint, origin: tuple) -> set:
    """Holes under the body of a part of footprint ``fp`` standing at ``origin`` (its pins among them)."""
    x0, y0, x1, y1 = fp.outline
    ox, oy = origin
    return {(ox + x, oy + y) for x in range(math.ceil(x0), math.floor(x1) + 1)
            for y in range(math.ceil(y0), math.floor(y1) + 1)}


def _def_of(b: Build, ref: str):
    """The part definition of logic part or support part ``ref``."""
    sp = next((s for s in b.support if s.ref == ref), None)
    return b.target.parts[sp.part_id] if sp is not None else b.part_def(ref)


def _support(b: Build, ref: str):
    return next(s for s in b.support if s.ref == ref)


def _put_support(b: Build, p: Placement, sp, host: str, legs: list, note: str) -> None:
    pd = b.target.parts[sp.part_id]
    pins = {}
    numbers = sorted(pd.pin_names()) or list(range(1, len(sp.nets) + 1))
    for i, xy in enumerate(legs, 1):
        p.holes[(sp.ref, i)] = xy
        pins[numbers[i - 1] if i - 1 < len(numbers) else i] = xy
        p.taken.add(xy)
    p.parts[sp.ref] = PlacedPart(sp.ref, pd.id, pd.package, "support", legs[0], pins, None, host, note)


def _perf_legs(b: Build, p: Placement, sp, host: str, k: int) -> list:
    x0, y0 = p.parts[host].origin
    return [(x0 + dx, y0 + dy) for dx, dy in (_support_offset(b, sp, k, j) for j in range(len(sp.nets)))]


def _strips(b: Build, p: Placement) -> Strips:
    """The breadboard strips with the pins of the logic parts (and loose support parts) standing in them."""
    strips = Strips(p.board.columns, p.boards, p.taken)
    for (ref, key), xy in sorted(p.holes.items(), key=lambda kv: (ref_key(kv[0][0]), str(kv[0][1]))):
        strips.own(xy, _net_at(b, ref, key), f"{ref}-{key}")
    return strips


def _host_pins(b: Build, p: Placement, host: str) -> dict:
    """net -> the hole of the host's first pin on it."""
    by_net: dict = {}
    for (ref, key), xy in p.holes.items():
        if ref == host:
            by_net.setdefault(_net_at(b, ref, key), xy)
    return by_net


def _breadboard_legs(b: Build, p: Placement, strips: Strips, sp, host: str) -> tuple[list, str]:
    """Holes of a support part's legs on a breadboard (the rules of :mod:`mapper.place.legs`), and in words."""
    by_net = _host_pins(b, p, host)
    # measured from the host's pin on the part's first signal net, else from its supply pin
    anchor = next((by_net[n] for n in sp.nets if n not in SUPPLY_NETS and n in by_net), None)
    if anchor is None:
        anchor = by_net.get("VCC") or by_net.get("GND") or p.parts[host].origin
    rails = [n for n in sp.nets if n in SUPPLY_NETS]
    toward = None
    near = anchor
    if rails:
        k = strips.rail_board(rails, anchor)
        if k != board_of(anchor[1]):  # the host's board has no rail hole to spare: the part stands on board k
            anchor, by_net = (anchor[0], k * (BREADBOARD_ROWS + BOARD_GAP) + STRIP_HEADS[0]), {}
        # its signal leg measured from the rail hole it will likely go into, in the strip's hole nearest
        # that rail (a short part)
        near = toward = strips.rail_peek(rails[0], (anchor[0], min(rail_rows(k, rails[0]),
                                                                      key=lambda r: abs(r - anchor[1]))))
    legs: list = [None] * len(sp.nets)
    words = [""] * len(sp.nets)
    signal = [j for j, net in enumerate(sp.nets) if net not in SUPPLY_NETS]
    prefer = [strips.key(by_net[sp.nets[j]]) if sp.nets[j] in by_net else None for j in signal]
    if len(signal) == 2:
        placed = strips.pair([sp.nets[j] for j in signal], near, prefer)
    else:
        placed = []
        for j, pref in zip(signal, prefer):
            placed.append(strips.leg(sp.nets[j], near, pref, toward))
            near = placed[-1][0]
    for j, (xy, own) in zip(signal, placed):
        net = sp.nets[j]
        strip = strips.key(xy)
        if own:
            strips.label[strip] = f"{sp.ref}-{j + 1}"
            p.own_strips.append((sp.ref, j + 1))
            words[j] = f"a strip of its own, wired into {net}"
        else:
            words[j] = f"the strip of {strips.label[strip]}"
        legs[j] = xy
    first = next((xy for xy in legs if xy is not None), anchor)
    for j, net in enumerate(sp.nets):
        if net in SUPPLY_NETS:
            legs[j] = strips.rail(net, first)
            words[j] = f"{net} rail"
    return legs, "from " + " to ".join(words)
