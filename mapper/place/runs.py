"""Wire runs: every net of a placed build as numbered wires, in daisy-chain order.

Each net is wired as one chain: pin to pin, in the shortest order the
placement allows, so that no pin carries more than two wires (common
wire-wrap practice, and what a breadboard strip of five holes has room
for).  The order is exact for nets of up to :data:`EXACT_PINS` stops
(dynamic programming over subsets: Held and Karp, J. SIAM 10, 1962);
longer chains start from a walk around a minimum spanning tree (Prim,
BSTJ 36, 1957), which is never longer than twice the tree, and are then
shortened by reversing stretches (2-opt: Croes, Operations Research 6,
1958).  Lengths are Manhattan distances between holes (wires laid along
the grid).

On a breadboard a chain's stops are the strips of its pins and of the
support legs standing in strips of their own (a strip joins its five
holes), each wire goes into a free hole of the strip, and supply pins are
wired to the nearest rail of their kind; rails are joined by jumpers where
a net uses more than one (top and bottom of a board, one board to the
next) and fed from the supply terminals.  The placement keeps two holes
of every strip for the wires of its chain, a hole of the rails for each
strip wired to them, and three holes of every rail row for its feed and
jumpers (:mod:`mapper.place.legs`): the wires always find their holes.
On perforated and wire-wrap boards the supply nets are daisy chains like
any other, starting at the supply terminal.

Each wire gets a suggested colour by its net's role: supply (red), ground
(black), clock or enable (yellow), signal (blue) -- the usual habit of
builders, which is no standard; use what you have, but keep one colour to
one role.
"""
from __future__ import annotations

from dataclasses import dataclass, field

from ..build import SUPPLY_NETS, Build, ref_key
from ..errors import InternalError
from .boards import BOARD_GAP, BREADBOARD_ROWS, PITCH_M, RAIL_ROWS, STRIP_ROWS, rail_rows, strip_holes
from .legs import rail_hole, rail_row_hole
from .placement import Placement

__all__ = ["End", "Wire", "Runs", "wire_runs", "best_path", "mst_length", "EXACT_PINS", "ROLE_COLOUR",
           "hole_name"]

EXACT_PINS = 9
#: wire role -> suggested colour (names), in the order a list shows them
ROLE_COLOUR = {"supply": "red", "ground": "black", "clock": "yellow", "signal": "blue"}


@dataclass
class End:
    """One end of a wire: what it joins (``U3-12``, ``VCC rail``, ``input front``) and the hole."""

    label: str
    hole: tuple


@dataclass
class Wire:
    number: int
    net: str
    role: str
    a: End
    b: End
    jumper: bool = False

    @property
    def colour(self) -> str:
        return ROLE_COLOUR[self.role]

    @property
    def holes(self) -> int:
        return abs(self.a.hole[0] - self.b.hole[0]) + abs(self.a.hole[1] - self.b.hole[1])

    @property
    def length_m(self) -> float:
        return round(self.holes * PITCH_M, 6)


@dataclass
class Runs:
    """The wires of a placed build, the chain of each net, and what goes where without a wire."""

    placement: Placement
    wires: list = field(default_factory=list)
    #: net -> the stops of its chain, in order (labels); for rails on a breadboard: the taps
    chains: dict = field(default_factory=dict)
    #: net -> the chain's length through its pins' holes, and the spanning-tree bound (holes)
    chain_holes: dict = field(default_factory=dict)

    def totals(self) -> dict:
        """Wire count, length, per colour, jumpers (SI units in key names)."""
        per: dict = {}
        for w in self.wires:
            c = per.setdefault(w.colour, {"wires": 0, "length_m": 0.0})
            c["wires"] += 1
            c["length_m"] = round(c["length_m"] + w.length_m, 6)
        return {"wires": len(self.wires), "length_m": round(sum(w.length_m for w in self.wires), 6),
                "jumpers": sum(1 for w in self.wires if w.jumper),
                "per_colour": {k: per[k] for k in ROLE_COLOUR.values() if k in per}}


# -- shortest order -----------------------------------------------------------------------------------
def _d(a, b) -> int:
    return abs(a[0] - b[0]) + abs(a[1] - b[1])


def mst_length(points: list) -> int:
    """Length of a minimum spanning tree of ``points`` (Manhattan distance; Prim's method)."""
    n = len(points)
    if n < 2:
        return 0
    best = [_d(points[0], p) for p in points]
    done = [False] * n
    done[0] = True
    total = 0
    for _ in range(n - 1):
        j = min((i for i in range(n) if not done[i]), key=lambda i: best[i])
        done[j] = True
        total += best[j]
        for i in range(n):
            if not done[i]:
                best[i] = min(best[i], _d(points[j], points[i]))
    return total


def _mst_walk(points: list) -> list:
    n = len(points)
    best = [(_d(points[0], p), 0) for p in points]
    done = [False] * n
    done[0] = True
    children: dict = {}
    for _ in range(n - 1):
        j = min((i for i in range(n) if not done[i]), key=lambda i: best[i][0])
        done[j] = True
        children.setdefault(best[j][1], []).append(j)
        for i in range(n):
            if not done[i] and _d(points[j], points[i]) < best[i][0]:
                best[i] = (_d(points[j], points[i]), j)
    order, stack = [], [0]
    while stack:  # preorder, explicit stack
        v = stack.pop()
        order.append(v)
        stack.extend(reversed(children.get(v, [])))
    return order


def _two_opt(points: list, order: list, passes: int = 4) -> list:
    n = len(order)
    for _ in range(passes):
        better = False
        for i in range(0, n - 2):
            a, b = points[order[i]], points[order[i + 1]]
            for j in range(i + 2, n):
                c = points[order[j]]
                d = points[order[j + 1]] if j + 1 < n else None
                old = _d(a, b) + (_d(c, d) if d is not None else 0)
                new = _d(a, c) + (_d(b, d) if d is not None else 0)
                if new < old:
                    order[i + 1:j + 1] = reversed(order[i + 1:j + 1])
                    b = points[order[i + 1]]
                    better = True
        if not better:
            break
    return order


def _held_karp(points: list, first: int | None) -> list:
    n = len(points)
    full = (1 << n) - 1
    inf = 1 << 30
    cost = [[inf] * n for _ in range(1 << n)]
    back = [[-1] * n for _ in range(1 << n)]
    for i in range(n):
        if first is None or i == first:
            cost[1 << i][i] = 0
    for mask in range(1, 1 << n):
        row = cost[mask]
        for j in range(n):
            c = row[j]
            if c >= inf:
                continue
            for k in range(n):
                if mask >> k & 1:
                    continue
                m2 = mask | 1 << k
                c2 = c + _d(points[j], points[k])
                if c2 < cost[m2][k]:
                    cost[m2][k] = c2
                    back[m2][k] = j
    end = min(range(n), key=lambda j: cost[full][j])
    order, mask = [], full
    while end >= 0:
        order.append(end)
        prev = back[mask][end]
        mask &= ~(1 << end)
        end = prev
    order.reverse()
    return order


def best_path(points: list, first: int | None = None) -> list:
    """An order of ``points`` for a chain: exact when short, else a spanning-tree walk shortened by 2-opt.

    ``first`` fixes the first stop (a supply terminal).  The chain is never
    longer than twice a minimum spanning tree of the points.
    """
    n = len(points)
    if n <= 2:
        return list(range(n))
    if n <= EXACT_PINS:
        return _held_karp(points, first)
    if first not in (None, 0):
        points = [points[first]] + points[:first] + points[first + 1:]
        idx = [first] + list(range(first)) + list(range(first + 1, n))
    else:
        idx = list(range(n))
    order = _mst_walk(points)
    if n <= 400:
        head = order[0]
        order = _two_opt(points, order)
        if first is not None and order[0] != head:
            order = order[::-1] if order[-1] == head else order
    return [idx[i] for i in order]


# -- naming holes ---------------------------------------------------------------------------------------
def hole_name(p: Placement, xy) -> str:
    """How a builder finds a hole: ``e12`` (breadboard row and column), ``VCC top 12``, ``12,7`` (x,y)."""
    x, y = xy
    if not p.board.is_breadboard:
        return f"{x + 1},{y + 1}"
    if x < 0 or x >= p.board.columns:
        return "off the board"
    span = BREADBOARD_ROWS + BOARD_GAP
    k, row = divmod(y, span)
    prefix = f"{k + 1}:" if p.boards > 1 else ""
    if row in STRIP_ROWS:
        return f"{prefix}{STRIP_ROWS[row]}{x + 1}"
    if row in RAIL_ROWS:
        rail, side = RAIL_ROWS[row]
        return f"{prefix}{rail} {side} {x + 1}"
    return f"{prefix}?{x + 1}"


# -- the runs ---------------------------------------------------------------------------------------------
def _roles(b: Build) -> dict:
    roles = {"VCC": "supply", "GND": "ground"}
    cells = b.target.cells
    for c in b.cells:
        cd = cells[c.cell]
        for pin, role in cd.roles.items():
            net = c.pins.get(pin)
            if role in ("clock", "enable") and net is not None and net not in SUPPLY_NETS:
                roles.setdefault(net, "clock")
    return roles


class _Holes:
    """Free holes of breadboard strips and rails, handed out one per wire end."""

    def __init__(self, p: Placement):
        self.p = p
        self.taken = set(p.taken)

    def strip(self, xy, toward) -> tuple:
        free = [h for h in strip_holes(xy) if h not in self.taken]
        if not free:  # the placement keeps two holes free on every strip of a net (mapper.place.legs)
            raise InternalError(f"the breadboard strip of hole {hole_name(self.p, xy)} has no free hole left "
                                f"-- a bug in netfit")
        h = min(free, key=lambda h: (_d(h, toward), h[1]))
        self.taken.add(h)
        return h

    def rail(self, net, near) -> tuple:
        """A hole for a wire from a strip to a rail of ``net`` (the rows' joint room left alone)."""
        h = rail_hole(self.taken, self.p.board.columns, self.p.boards, net, near)
        return self._take(h, f"the {net} rails have no free hole left")

    def rail_row(self, net, row: int) -> tuple:
        """A hole of rail row ``row`` for a wire that feeds or joins it."""
        return self._take(rail_row_hole(self.taken, self.p.board.columns, row, 0), f"a {net} rail row is full")

    def _take(self, h, what: str) -> tuple:
        if h is None:  # the placement keeps rail holes for every tap and joint (mapper.place.legs)
            raise InternalError(f"{what} -- a bug in netfit")
        self.taken.add(h)
        return h


def _label(b: Build, ref: str, key) -> str:
    return f"{ref}-{key}"


def wire_runs(b: Build, p: Placement) -> Runs:
    """The wires of ``b`` placed as ``p`` (see the module docstring)."""
    runs = Runs(p)
    holes = _Holes(p)
    roles = _roles(b)
    nets = b.nets()
    out_of: dict = {}
    for o in b.outputs:
        out_of.setdefault(b.output_nets.get(o, o), []).append(o)
    order = [n for n in SUPPLY_NETS if n in nets] + sorted((n for n in nets if n not in SUPPLY_NETS),
                                                            key=lambda n: _first_pin(nets[n]))
    for net in order + [n for n in b.inputs if n not in nets]:
        stops = _stops(b, p, net, nets.get(net, []), out_of.get(net, []))
        if net in SUPPLY_NETS and p.board.is_breadboard:
            _rail_net(b, p, runs, holes, net, stops)
        else:
            _chain(p, runs, holes, net, roles.get(net, "signal"), stops)
    for i, w in enumerate(runs.wires, 1):
        w.number = i
    return runs


def _first_pin(pins) -> tuple:
    return min((ref_key(r), str(k)) for r, k in pins) if pins else (("", 0), "")


def _stops(b: Build, p: Placement, net: str, pins: list, outputs: list) -> list:
    """``(label, hole, kind)`` of everything on ``net``: pins (one stop per breadboard strip), support legs
    standing in a rail (kind ``rail``), terminals (kind ``terminal``)."""
    stops: list = []
    seen_strip: dict = {}
    logic = {q.ref for q in b.parts}
    for ref, key in sorted(pins, key=lambda rk: (ref_key(rk[0]) if rk[0] in logic else ("~", 0), str(rk[1]))):
        xy = p.holes[(ref, key)]
        if p.board.is_breadboard:
            strip = strip_holes(xy)
            if not strip:  # a support part's leg in a rail
                stops.append((_label(b, ref, key), xy, "rail"))
                continue
            first = strip[0]
            if first in seen_strip:
                continue
            seen_strip[first] = True
        stops.append((_label(b, ref, key), xy, "pin"))
    if net in b.inputs:
        stops.insert(0, (f"input {net}", p.terminals[("input", net)], "terminal"))
    for o in outputs:
        stops.append((f"output {o}", p.terminals[("output", o)], "terminal"))
    if net in SUPPLY_NETS:
        stops.insert(0, (f"supply {net}", p.terminals[("supply", net)], "terminal"))
    return stops


def _end(p: Placement, holes: _Holes, stop, toward) -> End:
    label, xy, kind = stop
    if p.board.is_breadboard and kind == "pin":
        return End(label, holes.strip(xy, toward))
    return End(label, xy)


def _chain(p: Placement, runs: Runs, holes: _Holes, net: str, role: str, stops: list) -> None:
    if not stops:
        return
    pts = [s[1] for s in stops]
    first = 0 if net in SUPPLY_NETS else None
    order = best_path(pts, first)
    runs.chains[net] = [stops[i][0] for i in order]
    runs.chain_holes[net] = (sum(_d(pts[a], pts[c]) for a, c in zip(order, order[1:])), 2 * mst_length(pts))
    for a, c in zip(order, order[1:]):
        ea = _end(p, holes, stops[a], stops[c][1])
        eb = _end(p, holes, stops[c], ea.hole)
        runs.wires.append(Wire(0, net, role, ea, eb))


def _rail_net(b: Build, p: Placement, runs: Runs, holes: _Holes, net: str, stops: list) -> None:
    """A supply net on breadboards: each pin's strip to the nearest rail of ``net``; rails joined."""
    role = "supply" if net == "VCC" else "ground"
    span = BREADBOARD_ROWS + BOARD_GAP
    used: set = set()
    taps = []
    for label, xy, kind in stops:
        if kind == "terminal":
            continue
        if kind == "rail":
            used.add(xy[1])
            continue
        a = End(label, holes.strip(xy, (xy[0], min(rail_rows(xy[1] // span, net), key=lambda r: abs(r - xy[1])))))
        r = holes.rail(net, a.hole)
        used.add(r[1])
        runs.wires.append(Wire(0, net, role, a, End(f"{net} rail", r)))
        taps.append(label)
    runs.chains[net] = taps
    if not used:
        return
    # feed the first board's top rail, and join every rail row used, in order down the boards
    rows = sorted(used | {rail_rows(0, net)[0]})
    term = p.terminals[("supply", net)]
    runs.wires.append(Wire(0, net, role, End(f"supply {net}", term), End(f"{net} rail", holes.rail_row(net, rows[0]))))
    for r1, r2 in zip(rows, rows[1:]):
        h1 = holes.rail_row(net, r1)
        h2 = holes.rail_row(net, r2)
        runs.wires.append(Wire(0, net, role, End(f"{net} rail", h1), End(f"{net} rail", h2), jumper=True))
