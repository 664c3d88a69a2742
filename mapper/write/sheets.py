"""The pages of a build's schematic: where each symbol, port and label goes, and the wires.

Layout
------
Symbols stand in columns by logic level, signals flowing left to right:
design inputs as ports on the left edge of a page, outputs on the right.
A page takes symbols in level order for as long as they fit (columns may
hold more than one level when a design is deep); the supply area (each
chip's supply pins and tied inputs, decoupling capacitors) follows the
logic.

Every pin that carries a net has, beyond its connection point, a strip of
grid on its row kept for that net (its *zone*).  The zone holds one of:

* a **label**: a short wire with the net's name above it -- net names
  are written where each wire starts and ends;
* a **flag**: a labelled port instead of a wire.  Every flag with the same
  name is the same net.  A net that leaves the page has one flag on it (the
  other pages are named beside it); a net with many pins on a page, or one
  the router cannot join, is flagged at every pin;
* a **rail** symbol (``VCC``, ``GND``).

Zones are kept before any wire is laid, so a flag never lands on a wire.
Wires are then routed net by net on the grid (:mod:`mapper.write.route`),
shortest nets first: no two nets overlap or touch, crossings are plain.
"""
from __future__ import annotations

import itertools
import math
from dataclasses import dataclass, field

from ..build import SUPPLY_NETS, Build
from .drawing import PAGE_W, text_width
from .route import BLOCKED, FREE, Grid
from .sheet_symbols import logic_symbols, set_levels, supply_symbols
from .symbols import STUB, G, Symbol

__all__ = ["Zone", "Port", "Page", "sheets", "OX", "OY", "GRID_W", "GRID_H", "NET_FONT"]

#: drawing units of grid node (0, 0)
OX, OY = 20, 20
#: grid nodes across and down the drawing area of a page (the title block lies below)
GRID_W = (PAGE_W - 2 * OX) // G + 1
GRID_H = (690 - OY) // G + 1
_COL_GAP = 4      # grid steps between columns: routing room
_ROW_GAP = 2      # grid steps between symbols of a column
_LABEL_ROWS = 2   # grid rows above a body for its reference and section
_RAIL_LEN = 3
#: a net with more pins than this on a page is flagged at each pin rather than wired
MAX_WIRED_PINS = 12
NET_FONT = 7.5


def zone_len(name: str) -> int:
    """Grid steps of the strip beyond a pin that holds ``name`` (label or flag)."""
    return max(2, math.ceil((text_width(name, NET_FONT) + 12) / G))


@dataclass
class Zone:
    """The strip beyond one connection point, kept for its net (see the module docstring)."""

    net: str
    x: int            # grid node of the connection point
    y: int
    dx: int           # +1: the strip runs east; -1: west
    length: int
    mode: str = "label"   # label, flag, link, rail
    refs: str = ""        # link: the other pages the net is on

    def nodes(self) -> list:
        return [(self.x + self.dx * i, self.y) for i in range(self.length + 1)]


@dataclass
class Port:
    """A design input (on the left edge) or output (on the right edge) of a page."""

    kind: str       # input, output
    name: str       # the port's name (an output may be carried by a net of another name)
    net: str
    x: int          # grid node of its connection point
    y: int
    dx: int         # the side its outline lies on: -1 west (inputs), +1 east (outputs)
    length: int


@dataclass
class Page:
    """One page: symbols placed, ports, zones and the wires of each net (grid coordinates)."""

    number: int
    symbols: list = field(default_factory=list)
    ports: list = field(default_factory=list)
    zones: list = field(default_factory=list)
    wires: dict = field(default_factory=dict)      # net -> [((x1, y1), (x2, y2)), ...]
    dots: dict = field(default_factory=dict)       # net -> [(x, y), ...]
    flagged: set = field(default_factory=set)      # nets drawn with flags at every pin of this page
    supply: bool = False                           # the page holds supply blocks


# -- sizes --------------------------------------------------------------------------------------------
def _pins_with_net(s: Symbol):
    return [p for p in s.pins() if p.net is not None]


def _zone_of(net: str) -> int:
    return _RAIL_LEN if net in SUPPLY_NETS else zone_len(net)


def _side_reach(s: Symbol, side: str) -> int:
    zs = [_zone_of(p.net) for p in (s.west if side == "W" else s.east) if p.net is not None]
    return STUB + max(zs, default=0)


def _tall(s: Symbol, under: dict) -> int:
    """Grid rows a symbol (and what stands under it) takes, gap included."""
    h = _TALL.get(id(s))
    if h is None:
        h = _LABEL_ROWS + s.height + 1 + _ROW_GAP
        for u in under.get(s.key, ()):
            h += _LABEL_ROWS + u.height + 1 + _ROW_GAP
        _TALL[id(s)] = h
    return h


#: rows each symbol takes, by id, for the symbols of the drawing being made (paging asks often)
_TALL: dict = {}
#: most symbols a page is tried with (a page holds far fewer: this only bounds the search)
_PAGE_MOST = 160


def _column_width(col: list, under: dict) -> tuple[int, int, int]:
    """(west reach, body width, east reach) of a column."""
    syms = [x for s in col for x in [s] + list(under.get(s.key, ()))]
    west = max((_side_reach(s, "W") for s in syms), default=STUB)
    east = max((_side_reach(s, "E") for s in syms), default=STUB)
    body = max((s.width for s in syms), default=4)
    # labels stand above the pin rows: they may reach over the stubs and zones, not beyond
    over = max((s.label_width() for s in syms), default=0) - (west + body + east)
    if over > 0:
        west, east = west + over // 2, east + over - over // 2
    return west, body, east


# -- pages of logic -----------------------------------------------------------------------------------
def _by_level(syms: list) -> list:
    cols: list = []
    for s in syms:
        if not cols or cols[-1][-1].level != s.level:
            cols.append([])
        cols[-1].append(s)
    return cols


def _chunks(syms: list, under: dict, n: int) -> list:
    """``syms`` (in level order) cut into ``n`` columns of about equal height, at level changes where it can."""
    total = sum(_tall(s, under) for s in syms)
    target = total / n
    cols: list = [[]]
    used = 0
    for s in syms:
        t = _tall(s, under)
        if cols[-1] and len(cols) < n:
            level_change = cols[-1][-1].level != s.level
            if used + t > target * 1.15 or (level_change and used >= 0.75 * target):
                cols.append([])
                used = 0
        cols[-1].append(s)
        used += t
    return cols


def _port_len(name: str) -> int:
    return zone_len(name) + 1


def _fits(syms: list, under: dict, b: Build, extra: tuple = ((), ())) -> list | None:
    """Columns for ``syms`` on one page, or ``None`` when they do not fit."""
    ins, outs = _page_ports(syms, b, extra)
    if len(ins) > (GRID_H - 2) // 2 or len(outs) > (GRID_H - 2) // 2:
        return None
    left = max((_port_len(n) for n in ins), default=0) + _COL_GAP
    right = max((_port_len(o) + (_RAIL_LEN if b.output_nets.get(o, o) in SUPPLY_NETS else 0) for o in outs),
                default=0) + _COL_GAP
    levels = len({s.level for s in syms})
    total = sum(_tall(s, under) for s in syms)
    counts = [n for n in range(min(max(levels, 8), len(syms)), 0, -1) if n * (GRID_H - 1) >= total]
    tries = itertools.chain([_by_level(syms)], (_chunks(syms, under, n) for n in counts))
    for cols in tries:
        if any(sum(_tall(s, under) for s in c) > GRID_H - 1 for c in cols):
            continue
        width = left + right + sum(sum(_column_width(c, under)) + _COL_GAP for c in cols)
        if width <= GRID_W - 1:
            return cols
    return None


def _page_ports(syms: list, b: Build, extra: tuple = ((), ())) -> tuple[list, list]:
    """(inputs, outputs) with a port on a page of ``syms``; ``extra`` adds the first page's orphans."""
    nets = {p.net for s in syms for p in s.pins() if p.net is not None}
    ins = [i for i in b.inputs if i in nets or i in extra[0]]
    driven = {p.net for s in syms for p in s.east if p.net is not None}
    outs = [o for o in b.outputs if b.output_nets.get(o, o) in driven or o in extra[1]]
    return ins, outs


def _orphans(symbols: list, b: Build) -> tuple[set, set]:
    """Inputs no symbol uses and outputs no symbol drives (passed-through inputs, constants): page 1."""
    nets = {p.net for s in symbols for p in s.pins() if p.net is not None}
    driven = {p.net for s in symbols for p in s.east if p.net is not None}
    outs = {o for o in b.outputs if b.output_nets.get(o, o) not in driven}
    ins = {i for i in b.inputs if i not in nets} | {b.output_nets.get(o, o) for o in outs} & set(b.inputs)
    return ins, outs


def _paginate(symbols: list, under: dict, b: Build, extra: tuple) -> list:
    """Split the symbols (in level order) into pages, as many per page as fit."""
    order = sorted(symbols, key=lambda s: s.level)
    pages = []
    i = 0
    while i < len(order):
        ex = extra if i == 0 else ((), ())
        lo, hi = 1, min(len(order) - i, _PAGE_MOST)
        if _fits(order[i:i + hi], under, b, ex) is None:
            while lo < hi:  # the longest run that fits
                mid = (lo + hi + 1) // 2
                if _fits(order[i:i + mid], under, b, ex) is not None:
                    lo = mid
                else:
                    hi = mid - 1
            n = lo
        else:
            n = hi
        pages.append(order[i:i + n])
        i += n
    return pages or [[]]


def _place_page(page: Page, syms: list, under: dict, b: Build, extra: tuple) -> int:
    """Place the symbols and ports of a logic page; returns the lowest grid row used."""
    cols = _fits(syms, under, b, extra) or [syms]
    ins, outs = _page_ports(syms, b, extra)
    left = max((_port_len(n) for n in ins), default=0) + _COL_GAP
    x = left
    known_y: dict = {}
    bottom = 0
    for col in cols:
        west, body, east = _column_width(col, under)

        def bary(s):
            ys = [known_y[p.net] for p in s.west if p.net in known_y]
            return sum(ys) / len(ys) if ys else 1e9

        col.sort(key=bary)
        y = 0
        gx = x + west
        for s in col:
            for sym in [s] + list(under.get(s.key, ())):
                sym.gx, sym.gy = gx, y + _LABEL_ROWS
                y = sym.gy + sym.height + 1 + _ROW_GAP
                page.symbols.append(sym)
                for p in sym.east:
                    if p.net is not None and p.net not in SUPPLY_NETS:
                        known_y.setdefault(p.net, sym.gy + p.row)
        bottom = max(bottom, y)
        x = gx + body + east + _COL_GAP
    # ports: inputs on the left, outputs on the right, each near the rows it serves
    rows = _net_rows(page.symbols)
    want = [(sum(rows.get(n, [0])) / max(1, len(rows.get(n, []))), n) for n in ins]
    for (yy, n) in _spread(want):
        L = _port_len(n)
        page.ports.append(Port("input", n, n, L, yy, -1, L))
    in_rows = {p.net: p.y for p in page.ports}
    want = []
    for o in outs:
        net = b.output_nets.get(o, o)
        want.append((known_y.get(net, in_rows.get(net, rows.get(net, [0])[0])), o))
    for (yy, o) in _spread(want):
        net = b.output_nets.get(o, o)
        L = _port_len(o)
        page.ports.append(Port("output", o, net, GRID_W - 1 - L, yy, +1, L))
    return max([bottom] + [p.y + 2 for p in page.ports])


def _net_rows(symbols: list) -> dict:
    rows: dict = {}
    for s in symbols:
        for p in s.pins():
            if p.net is not None:
                rows.setdefault(p.net, []).append(s.gy + p.row)
    return rows


def _spread(want: list) -> list:
    """Rows two steps apart, each as near its wish as the others allow, inside the page."""
    want = sorted(want)
    out = []
    last = -1
    for yy, name in want:
        row = max(int(round(yy)), last + 2, 1)
        out.append([row, name])
        last = row
    over = (out[-1][0] - (GRID_H - 2)) if out else 0
    if over > 0:  # pushed past the bottom: shift up, keeping the spacing
        limit = GRID_H - 2
        for k in range(len(out) - 1, -1, -1):
            out[k][0] = min(out[k][0], limit)
            limit = out[k][0] - 2
    return [(r, n) for r, n in out]


# -- supply area --------------------------------------------------------------------------------------
def _place_supply(pages: list, symbols: list, top: int) -> None:
    """Supply blocks in rows: below the last page's logic when they fit there, else on new pages."""
    if not symbols:
        return
    page = pages[-1]
    x, y = 1, top + 1
    row_h = 0
    for s in symbols:
        west, body, east = _side_reach(s, "W"), max(s.width, s.label_width()), _side_reach(s, "E")
        w = west + body + east + _COL_GAP
        h = _LABEL_ROWS + s.height + 1 + _ROW_GAP
        if x + w > GRID_W - 1:
            x, y = 1, y + row_h
            row_h = 0
        if y + h > GRID_H - 1:
            page = Page(len(pages) + 1, supply=True)
            pages.append(page)
            x, y, row_h = 1, 0, 0
        page.supply = True
        s.gx, s.gy = x + west, y + _LABEL_ROWS
        page.symbols.append(s)
        x += w
        row_h = max(row_h, h)


# -- zones and wires ----------------------------------------------------------------------------------
def _zones(page: Page) -> None:
    for s in page.symbols:
        for p in _pins_with_net(s):
            x, y = s.pin_end(p)
            page.zones.append(Zone(p.net, x, y, -1 if p.side == "W" else 1, _zone_of(p.net),
                                   "rail" if p.net in SUPPLY_NETS else "label"))
    for port in page.ports:
        if port.kind == "output" and port.net in SUPPLY_NETS:
            page.zones.append(Zone(port.net, port.x, port.y, -1, _RAIL_LEN, "rail"))


def _choose_modes(page: Page, net_pages: dict, b: Build) -> None:
    by_net: dict = {}
    for z in page.zones:
        if z.mode != "rail":
            by_net.setdefault(z.net, []).append(z)
    ports = {p.net for p in page.ports if p.kind == "input"}
    for net, zs in by_net.items():
        terminals = len(zs) + sum(1 for p in page.ports if p.net == net)
        if terminals > MAX_WIRED_PINS:
            for z in zs:
                z.mode = "flag"
            page.flagged.add(net)
            continue
        others = sorted(net_pages.get(net, {page.number}) - {page.number})
        if others and net not in ports:
            link = next((z for z in zs if z.dx > 0), zs[0])  # the driver's pin when it is on this page
            link.mode = "link"
            link.refs = "p. " + ", ".join(str(k) for k in others)


def _route_page(page: Page) -> None:
    grid = Grid(GRID_W, GRID_H)
    ids: dict = {}

    def nid(net):
        return ids.setdefault(net, len(ids))

    node = grid.node
    # 1. every zone's connection point, and the label wires, belong to their net before anything else
    for z in page.zones:
        pts = [node(x, y) for x, y in z.nodes() if grid.inside(x, y)]
        if z.mode == "label":
            grid.claim(nid(z.net), pts)
        else:
            grid.claim(nid(z.net), pts[:1], branch_at_end=True)
    for p in page.ports:
        grid.claim(nid(p.net), [node(p.x, p.y)])
    # 2. what no wire may cross: bodies, stubs, labels, port outlines, flag and rail outlines
    for s in page.symbols:
        for pin in s.pins():
            if pin.net is None:  # an open pin: no wire may touch its end either
                x, y = s.pin_end(pin)
                _block(grid, x, y, x, y)
        lw = max(s.width, s.label_width())
        x0 = s.gx - (lw - s.width) // 2
        _block(grid, x0 - 1, s.gy - _LABEL_ROWS, x0 + lw + 1, s.gy - 1)
        _block(grid, s.gx - STUB + 1, s.gy, s.gx + s.width + STUB - 1, s.gy + s.height)
    for p in page.ports:
        lo, hi = sorted((p.x + p.dx, p.x + p.dx * p.length))
        _block(grid, lo, p.y, hi, p.y)
    for z in page.zones:
        if z.mode != "label":
            for x, y in z.nodes()[1:]:
                _block(grid, x, y, x, y)
        if z.mode == "link":  # the page numbers above the flag
            for x, y in z.nodes()[1:]:
                _block(grid, x, y - 1, x, y - 1)
    # 3. wires, shortest nets first
    groups: dict = {}
    for z in page.zones:
        if z.mode in ("label", "link"):
            pts = [node(x, y) for x, y in z.nodes()] if z.mode == "label" else [node(z.x, z.y)]
            # the driver's pin (east side) first: the tree grows from where the signal comes from
            groups.setdefault(z.net, []).append((0 if z.dx > 0 else 1, pts, pts[-1]))
    for p in page.ports:
        if p.net not in SUPPLY_NETS:
            pt = node(p.x, p.y)
            groups.setdefault(p.net, []).append((0 if p.kind == "input" else 1, [pt], pt))

    def span(net):
        xs = [grid.xy(g[2])[0] for g in groups[net]]
        ys = [grid.xy(g[2])[1] for g in groups[net]]
        return max(xs) - min(xs) + max(ys) - min(ys)

    for net in sorted(groups, key=lambda n: (span(n), n)):
        if net in page.flagged or len(groups[net]) < 2:
            continue
        gs = [(pts, attach) for _, pts, attach in sorted(groups[net], key=lambda g: g[0])]
        if not grid.route(nid(net), gs):
            page.flagged.add(net)
            for z in page.zones:
                if z.net == net and z.mode != "rail":
                    z.mode = "flag"
    ends: dict = {}
    for z in page.zones:
        ends.setdefault(z.net, {})[node(z.x, z.y)] = 2 if z.mode in ("link", "flag", "rail") else 1
    for p in page.ports:
        ends.setdefault(p.net, {})[node(p.x, p.y)] = 1
    for net, i in ids.items():
        if net in page.flagged:
            continue
        segs = grid.segments(i)
        if segs:
            page.wires[net] = segs
            page.dots[net] = grid.junctions(i, ends.get(net, {}))


def _block(grid: Grid, x0, y0, x1, y1) -> None:
    """Block the free nodes of a rectangle (nodes a net holds stay that net's)."""
    for y in range(max(0, y0), min(grid.h - 1, y1) + 1):
        for x in range(max(0, x0), min(grid.w - 1, x1) + 1):
            nd = grid.node(x, y)
            if grid.full[nd] == FREE and grid.hor[nd] == FREE and grid.ver[nd] == FREE:
                grid.full[nd] = BLOCKED


# -- the whole ----------------------------------------------------------------------------------------
def sheets(b: Build, shapes: str = "distinctive") -> list:
    """The pages of ``b``'s schematic, placed and wired (see the module docstring)."""
    _TALL.clear()
    logic, under = logic_symbols(b, shapes)
    set_levels(logic, b.inputs)
    extra = _orphans(logic, b)
    groups = _paginate(logic, under, b, extra)
    pages = []
    bottom = 0
    for k, syms in enumerate(groups, 1):
        page = Page(k)
        bottom = _place_page(page, syms, under, b, extra if k == 1 else ((), ()))
        pages.append(page)
    _place_supply(pages, supply_symbols(b), bottom)
    net_pages: dict = {}
    for page in pages:
        for s in page.symbols:
            for p in _pins_with_net(s):
                net_pages.setdefault(p.net, set()).add(page.number)
        for p in page.ports:
            net_pages.setdefault(p.net, set()).add(page.number)
    for page in pages:
        _zones(page)
        _choose_modes(page, net_pages, b)
        _route_page(page)
    return pages
