"""An independent reader of netfit's schematic drawings: connectivity from geometry alone.

This is the tests' own code, written from the file conventions stated in
``mapper/write/svg.py`` (which element is a pin, a wire, a port) and from
the rules of reading a schematic (common practice): wires join where an end
of one lies on another or where ends meet; two wires that cross without
an end at the crossing do not join; a pin joins the wires its connection
point lies on; ports, flags and rail symbols of one name are one net.
Nothing here calls netfit's drawing code, and the ``data-net`` labels of
wires are used only to tell which wires the drawing means as one net (to
find overlaps of different nets), never to join anything.

Coordinates are compared on a 0.01 grid (the writer rounds to 0.01).
"""
from __future__ import annotations

import re
from collections import defaultdict
from dataclasses import dataclass, field

from lxml import etree

NS = "{http://www.w3.org/2000/svg}"


def _f(v) -> float:
    return round(float(v), 2)


@dataclass
class Seg:
    x1: float
    y1: float
    x2: float
    y2: float
    group: str          # data-net of the group the wire is drawn in (for the overlap check only)
    page: int

    def horizontal(self) -> bool:
        return self.y1 == self.y2

    def ends(self):
        return (self.x1, self.y1), (self.x2, self.y2)

    def contains(self, p) -> bool:
        x, y = p
        if self.horizontal():
            return y == self.y1 and min(self.x1, self.x2) <= x <= max(self.x1, self.x2)
        return x == self.x1 and min(self.y1, self.y2) <= y <= max(self.y1, self.y2)


@dataclass
class Drawing:
    """What a page set shows: pins, wires, junction dots, connectors, symbol bodies, every coordinate."""

    pins: list = field(default_factory=list)        # (page, part, pin, (x, y))
    segs: list = field(default_factory=list)        # Seg
    dots: list = field(default_factory=list)        # (page, (x, y))
    connectors: list = field(default_factory=list)  # (page, cls, kind, name, (x, y))
    bodies: list = field(default_factory=list)      # (page, part, (x0, y0, x1, y1))
    extents: list = field(default_factory=list)     # (page, x, y) every drawn coordinate, page-local
    texts: list = field(default_factory=list)       # (page, x, y, text, size, anchor)
    pages: int = 0
    page_size: tuple = (0, 0)


def _translate(g) -> float:
    t = g.get("transform")
    if not t:
        return 0.0
    m = re.fullmatch(r"translate\(0 ([-\d.]+)\)", t)
    assert m, f"unexpected transform {t!r}"
    return float(m.group(1))


def _path_points(d: str):
    nums = [float(v) for v in re.findall(r"-?\d+(?:\.\d+)?", d)]
    cmds = re.findall(r"[A-Za-z]", d)
    # the writer's paths use absolute commands only; H and V take one number, A seven
    pts, i, cur = [], 0, (0.0, 0.0)
    for c in cmds:
        if c in "ML":
            cur = (nums[i], nums[i + 1])
            i += 2
        elif c == "H":
            cur = (nums[i], cur[1])
            i += 1
        elif c == "V":
            cur = (cur[0], nums[i])
            i += 1
        elif c == "Q":
            pts.append((nums[i], nums[i + 1]))
            cur = (nums[i + 2], nums[i + 3])
            i += 4
        elif c == "A":
            cur = (nums[i + 5], nums[i + 6])
            i += 7
        elif c in "Zz":
            continue
        else:
            raise AssertionError(f"path command {c} not read by the test")
        pts.append(cur)
    return pts


def _shape_points(e):
    tag = e.tag.replace(NS, "")
    if tag == "line":
        return [(_f(e.get("x1")), _f(e.get("y1"))), (_f(e.get("x2")), _f(e.get("y2")))]
    if tag == "rect":
        x, y, w, h = (_f(e.get(k)) for k in ("x", "y", "width", "height"))
        return [(x, y), (x + w, y + h)]
    if tag == "circle":
        cx, cy, r = (_f(e.get(k)) for k in ("cx", "cy", "r"))
        return [(cx - r, cy - r), (cx + r, cy + r)]
    if tag == "path":
        return _path_points(e.get("d"))
    if tag == "polyline":
        return [tuple(float(v) for v in p.split(",")) for p in e.get("points").split()]
    return []


def read(svg_bytes: bytes) -> Drawing:
    """Read a schematic file (``schematic.svg``) into a :class:`Drawing`."""
    root = etree.fromstring(svg_bytes)
    dr = Drawing()
    vb = [float(v) for v in root.get("viewBox").split()]
    pages = root.findall(f"{NS}g[@class='page']")
    assert pages, "no pages"
    dr.pages = len(pages)
    dr.page_size = (vb[2], vb[3] / len(pages))
    for g in pages:
        k = int(g.get("data-page"))
        dy = _translate(g)
        assert dy == dr.page_size[1] * (k - 1), (k, dy)
        _read_page(g, k, dr)
    return dr


def _read_page(g, k: int, dr: Drawing) -> None:
    for e in g.iter():
        if not isinstance(e.tag, str):
            continue
        for x, y in _shape_points(e):
            dr.extents.append((k, x, y))
        if e.tag == f"{NS}text":
            dr.texts.append((k, _f(e.get("x")), _f(e.get("y")), e.text or "", float(e.get("font-size") or 11),
                             e.get("text-anchor") or "start"))
    for e in g.iter(f"{NS}line"):
        if e.get("class") == "pin":
            dr.pins.append((k, e.get("data-part"), e.get("data-pin"), (_f(e.get("x2")), _f(e.get("y2")))))
    for ng in g.iter(f"{NS}g"):
        cls = ng.get("class")
        if cls == "net":
            for e in ng.iter(f"{NS}line"):
                x1, y1, x2, y2 = (_f(e.get(a)) for a in ("x1", "y1", "x2", "y2"))
                assert x1 == x2 or y1 == y2, "a wire that is not horizontal or vertical"
                dr.segs.append(Seg(x1, y1, x2, y2, ng.get("data-net"), k))
            for c in ng.iter(f"{NS}circle"):
                if c.get("class") == "junction":
                    dr.dots.append((k, (_f(c.get("cx")), _f(c.get("cy")))))
        elif cls in ("port", "flag", "rail"):
            lead = ng.find(f"{NS}line[@class='lead']")
            name = ng.find(f"{NS}text[@class='name']")
            assert lead is not None and name is not None, cls
            dr.connectors.append((k, cls, ng.get("data-kind") or cls, name.text,
                                  (_f(lead.get("x1")), _f(lead.get("y1")))))
        elif cls == "symbol":
            pts = []
            for e in ng.iter():
                if isinstance(e.tag, str) and e.tag != f"{NS}text" and e.get("class") != "pin" and \
                        e.tag != f"{NS}g" and e.tag != f"{NS}title":
                    pts += _shape_points(e)
            if pts:
                xs = [p[0] for p in pts]
                ys = [p[1] for p in pts]
                dr.bodies.append((k, ng.get("data-part"), (min(xs), min(ys), max(xs), max(ys))))


# -- joining ------------------------------------------------------------------------------------------
class _Union:
    def __init__(self):
        self.up: dict = {}

    def find(self, a):
        self.up.setdefault(a, a)
        root = a
        while self.up[root] != root:
            root = self.up[root]
        while self.up[a] != root:
            self.up[a], a = root, self.up[a]
        return root

    def join(self, a, b):
        ra, rb = self.find(a), self.find(b)
        if ra != rb:
            self.up[ra] = rb


def _points_on(dr: Drawing):
    """page -> {point: [segment indices containing it as an end]} and per-page segment lists."""
    ends: dict = defaultdict(lambda: defaultdict(list))
    for i, s in enumerate(dr.segs):
        for p in s.ends():
            ends[s.page][p].append(i)
    return ends


def _segments_through(dr: Drawing, page: int, p):
    return [i for i, s in enumerate(dr.segs) if s.page == page and s.contains(p)]


def connectivity(dr: Drawing):
    """``(groups, problems)``: each group a dict with ``pins`` {(part, pin)}, ``inputs``, ``outputs``;
    problems lists overlaps and touches of wires drawn as different nets."""
    u = _Union()
    by_page: dict = defaultdict(list)
    for i, s in enumerate(dr.segs):
        by_page[s.page].append(i)
        u.find(("seg", i))
    problems = []
    # wires with wires
    for page, idx in by_page.items():
        for a_pos, i in enumerate(idx):
            a = dr.segs[i]
            for j in idx[a_pos + 1:]:
                b = dr.segs[j]
                rel = _relation(a, b)
                if rel == "apart" or rel == "cross":
                    continue
                if a.group != b.group:
                    problems.append((rel, page, a.group, b.group, a.ends(), b.ends()))
                u.join(("seg", i), ("seg", j))

    def attach(key, page, p):
        hit = _segments_through(dr, page, p)
        for i in hit:
            u.join(key, ("seg", i))
        return hit

    points: dict = defaultdict(list)
    for page, part, pin, p in dr.pins:
        key = ("pin", part, pin)
        u.find(key)
        attach(key, page, p)
        points[(page, p)].append(key)
    for n, (page, cls, kind, name, p) in enumerate(dr.connectors):
        key = ("conn", n)
        u.find(key)
        attach(key, page, p)
        points[(page, p)].append(key)
        if kind in ("input", "flag", "link") or cls == "rail":
            u.join(key, ("name", name))
    for keys in points.values():  # things ending at one point join
        for k in keys[1:]:
            u.join(keys[0], k)
    groups: dict = defaultdict(lambda: {"pins": set(), "inputs": set(), "outputs": set(), "names": set()})
    for key in list(u.up):
        r = u.find(key)
        if key[0] == "pin":
            groups[r]["pins"].add((key[1], key[2]))
        elif key[0] == "conn":
            page, cls, kind, name, _ = dr.connectors[key[1]]
            groups[r]["outputs" if kind == "output" else "inputs" if kind == "input" else "names"].add(name)
    return list(groups.values()), problems


def _relation(a: Seg, b: Seg) -> str:
    """How two axis-parallel segments meet: apart, cross (interiors only), touch, or overlap."""
    if a.horizontal() == b.horizontal():
        if a.horizontal():
            if a.y1 != b.y1:
                return "apart"
            lo = max(min(a.x1, a.x2), min(b.x1, b.x2))
            hi = min(max(a.x1, a.x2), max(b.x1, b.x2))
        else:
            if a.x1 != b.x1:
                return "apart"
            lo = max(min(a.y1, a.y2), min(b.y1, b.y2))
            hi = min(max(a.y1, a.y2), max(b.y1, b.y2))
        if lo > hi:
            return "apart"
        return "overlap" if lo < hi else "touch"
    h, v = (a, b) if a.horizontal() else (b, a)
    x, y = v.x1, h.y1
    if not (min(h.x1, h.x2) <= x <= max(h.x1, h.x2) and min(v.y1, v.y2) <= y <= max(v.y1, v.y2)):
        return "apart"
    if (x, y) in h.ends() or (x, y) in v.ends():
        return "touch"
    return "cross"


def arms(dr: Drawing):
    """page -> {point: how many wire arms, pins and connectors meet there}.

    A wire ending at a point is one arm; a wire running through it is two.
    Points looked at: wire ends, pins' connection points, connectors' points
    and junction dots.
    """
    points: dict = defaultdict(set)
    for s in dr.segs:
        points[s.page].update(s.ends())
    for page, _, _, p in dr.pins:
        points[page].add(p)
    for page, _, _, _, p in dr.connectors:
        points[page].add(p)
    for page, p in dr.dots:
        points[page].add(p)
    segs: dict = defaultdict(list)
    for s in dr.segs:
        segs[s.page].append(s)
    count: dict = defaultdict(dict)
    for page, pts in points.items():
        for p in pts:
            n = 0
            for s in segs[page]:
                if p in s.ends():
                    n += 1
                elif s.contains(p):
                    n += 2
            n += sum(1 for pg, _, _, q in dr.pins if pg == page and q == p)
            n += sum(1 for pg, _, _, _, q in dr.connectors if pg == page and q == p)
            count[page][p] = n
    return count
