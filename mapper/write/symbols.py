"""Schematic symbols: their pins on the grid and their outlines.

Gates are drawn in the distinctive shapes of IEEE Std 91-1984 (AND: flat
back and round front; OR: curved back and pointed front; exclusive-OR: OR
with a second back line; buffer: triangle; a small circle on an output
for negation), or as rectangles with the qualifying symbol of IEC 60617-12
(``&``, ``≥1``, ``=1``, ``1``) when ``shapes="rectangular"``.  Flip-flops,
latches, multiplexers and any cell the shapes do not cover are labelled
blocks with their pin names inside (a clock input marked with the
dynamic-input triangle, an active-low input with a negation circle).
Relays follow IEEE Std 315 / IEC 60617-7 in detached form: the coil is a
rectangle named after the relay, and each pole is a changeover contact
drawn at rest (the blade on the normally-closed contact), named after the
relay and its pole.  Diodes, resistors (zigzag; a rectangle with
``shapes="rectangular"``) and capacitors follow IEEE Std 315.

Every symbol is laid out on the drawing grid (:data:`G` units): inputs on
its west side and outputs on its east side, two grid steps apart, each pin
a stub of two grid steps ending on a grid node (the pin's connection
point).  :func:`draw_symbol` draws one at an absolute position.
"""
from __future__ import annotations

from dataclasses import dataclass, field

from .drawing import INK, PAPER, TINT, el, text_width

__all__ = ["G", "GATE_W", "BLOCK_W", "SymPin", "Symbol", "gate_kind", "draw_symbol", "STUB"]

#: grid step in drawing units (0.1 inch at 100 units per inch)
G = 10
#: length of a pin stub, in grid steps
STUB = 2
#: body widths in grid steps
GATE_W = 4
BLOCK_W = 6


@dataclass
class SymPin:
    """One pin of a symbol.

    ``key`` is the pin as :meth:`mapper.build.Build.nets` names it (a
    package pin number, or a relay terminal such as ``COM1``); ``number``
    is what is printed (the package pin number); ``name`` the cell's pin
    name; ``row`` its grid row below the symbol's top; ``side`` ``"W"``
    (stub to the west) or ``"E"``.
    """

    part: str
    key: str
    number: str
    name: str
    net: str | None
    side: str
    row: int = 0
    negated: bool = False
    clock: bool = False


@dataclass
class Symbol:
    """One drawn symbol: a used section, a relay coil or pole, a support part, or a part's supply pins."""

    key: tuple
    kind: str          # and, or, xor, buf, block, contact, coil, diode, resistor, capacitor, supply
    negated: bool
    ref: str
    title: str         # first label line: "U3 · 74HC86"
    subtitle: str      # second label line: "section 2"
    qualifier: str = ""  # text inside a block or a rectangular gate
    west: list = field(default_factory=list)
    east: list = field(default_factory=list)
    width: int = GATE_W   # body width, grid steps
    height: int = 2        # body height, grid steps
    level: int = 0
    # position: grid coordinates of the body's top-left corner
    gx: int = 0
    gy: int = 0

    def pins(self) -> list:
        return self.west + self.east

    def layout(self) -> None:
        """Give each pin its row and the body its height (pins two steps apart)."""
        n = max(len(self.west), len(self.east), 1)
        self.height = 2 * n
        for i, p in enumerate(self.west):
            p.row = 1 + 2 * i
        if self.kind in ("and", "or", "xor", "buf") and len(self.east) == 1:
            self.east[0].row = n  # a gate's output in the middle of its inputs
        else:
            for i, p in enumerate(self.east):
                p.row = 1 + 2 * i

    def label_width(self) -> int:
        """Grid steps the two label lines need."""
        w = max(text_width(self.title, 9), text_width(self.subtitle, 8))
        return -(-int(w + 4) // G)

    def pin_end(self, p: SymPin) -> tuple[int, int]:
        """Grid node of a pin's connection point."""
        if p.side == "W":
            return self.gx - STUB, self.gy + p.row
        return self.gx + self.width + STUB, self.gy + p.row


def gate_kind(cd) -> tuple[str, bool] | None:
    """``(shape, negated)`` of a logic cell by its function, or ``None`` when no gate shape fits.

    Shapes: ``and``, ``or``, ``xor``, ``buf``; ``negated`` draws the output circle.
    """
    if cd.storage is not None or cd.function is None or cd.extra_outputs:
        return None
    n = len(cd.inputs)
    if n == 0 or n > 16:
        return None
    f = cd.function
    try:
        t = f.table()
    except ValueError:
        return None
    full = (1 << (1 << n)) - 1
    if n == 1:
        return {0b10: ("buf", False), 0b01: ("buf", True)}.get(t)
    and_t = 1 << ((1 << n) - 1)
    or_t = full ^ 1
    xor_t = sum(1 << m for m in range(1 << n) if bin(m).count("1") % 2)
    for shape, table in (("and", and_t), ("or", or_t), ("xor", xor_t)):
        if t == table:
            return shape, False
        if t == full ^ table:
            return shape, True
    return None


# -- drawing ------------------------------------------------------------------------------------------
def draw_symbol(parent, s: Symbol, ox: float, oy: float, shapes: str = "distinctive") -> None:
    """Draw ``s`` into ``parent`` (drawing units: grid node (gx, gy) is at ``(ox + gx*G, oy + gy*G)``).

    The body goes into a ``<g class="symbol">`` carrying ``data-part``;
    each pin is a ``<line class="pin">`` from the body to its connection
    point (the line's second end) with ``data-part``, ``data-pin`` and
    ``data-net``, and its package pin number beside it.
    """
    x0, y0 = ox + s.gx * G, oy + s.gy * G
    w, h = s.width * G, s.height * G
    g = el(parent, "g", **{"class": "symbol", "data-part": s.ref, "data-kind": s.kind})
    el(g, "title", f"{s.title}, {s.subtitle}" if s.subtitle else s.title)
    body = _BODIES.get(s.kind if shapes == "distinctive" or s.kind not in _RECT_GATES else "rect-gate", _block)
    inner_w, inner_e = body(g, s, x0, y0, w, h)
    cx = x0 + w / 2
    el(g, "text", s.title, x=_r(cx), y=_r(y0 - 14), text_anchor="middle", font_size=9, font_weight="bold",
       **{"class": "ref"})
    if s.subtitle:
        el(g, "text", s.subtitle, x=_r(cx), y=_r(y0 - 4), text_anchor="middle", font_size=8,
           **{"class": "section"})
    for p in s.pins():
        _draw_pin(g, s, p, x0, y0, w, inner_w, inner_e)


def _r(v: float) -> str:
    return f"{v:.2f}".rstrip("0").rstrip(".")


def _draw_pin(g, s: Symbol, p: SymPin, x0, y0, w, inner_w, inner_e) -> None:
    py = y0 + p.row * G
    if p.side == "W":
        xb = x0 + inner_w(py)
        xe = x0 - STUB * G
        if p.negated:
            el(g, "circle", cx=_r(xb - 3), cy=_r(py), r=3, fill=PAPER, stroke=INK, stroke_width=1.2)
            xb -= 6
        tx, anchor = x0 - 3, "end"
    else:
        xb = x0 + inner_e(py)
        xe = x0 + w + STUB * G
        if p.negated:
            el(g, "circle", cx=_r(xb + 4), cy=_r(py), r=4, fill=PAPER, stroke=INK, stroke_width=1.2)
            xb += 8
        tx, anchor = x0 + w + (10 if p.negated else 3), "start"
    el(g, "line", x1=_r(xb), y1=_r(py), x2=_r(xe), y2=_r(py), stroke=INK, stroke_width=1.4,
       **{"class": "pin", "data-part": p.part, "data-pin": p.key, "data-net": p.net or ""})
    el(g, "text", p.number, x=_r(tx), y=_r(py - 2.5), text_anchor=anchor, font_size=7, fill=INK,
       **{"class": "pin-number"})


def _rect(g, x0, y0, w, h, fill=TINT):
    el(g, "rect", x=_r(x0), y=_r(y0), width=_r(w), height=_r(h), fill=fill, stroke=INK, stroke_width=1.4)


def _flat(w):
    return lambda y: 0.0, lambda y: float(w)


def _shape_span(s: Symbol, y0: float, h: float) -> tuple[float, float]:
    """Top and bottom of a distinctive gate shape: at most three pin rows tall, centred on the output."""
    out_y = y0 + (s.east[0].row * G if s.east else h / 2)
    hs = min(h, 6 * G) if len(s.west) > 1 else 3 * G
    return out_y - hs / 2, out_y + hs / 2


def _and(g, s, x0, y0, w, h):
    top, bot = _shape_span(s, y0, h)
    r = (bot - top) / 2
    xm = x0 + w - r
    d = (f"M{_r(x0)},{_r(top)} H{_r(xm)} A{_r(r)},{_r(r)} 0 0 1 {_r(xm)},{_r(bot)} H{_r(x0)} Z")
    el(g, "path", d=d, fill=TINT, stroke=INK, stroke_width=1.4)
    if top > y0 or bot < y0 + h:  # more inputs than the shape is tall: the back line goes on
        el(g, "line", x1=_r(x0), y1=_r(y0), x2=_r(x0), y2=_r(y0 + h), stroke=INK, stroke_width=1.4)
    return lambda y: 0.0, lambda y: float(w)


def _or_path(x0, top, bot, w):
    ym = (top + bot) / 2
    c = 0.22 * w
    return (f"M{_r(x0)},{_r(top)} Q{_r(x0 + 0.6 * w)},{_r(top)} {_r(x0 + w)},{_r(ym)} "
            f"Q{_r(x0 + 0.6 * w)},{_r(bot)} {_r(x0)},{_r(bot)} Q{_r(x0 + c)},{_r(ym)} {_r(x0)},{_r(top)} Z"), c


def _back(top, bot, c):
    """x offset of a curved back line (a quadratic curve bulging by ``c/2``) at height y."""
    def at(y):
        if bot <= top or y <= top or y >= bot:
            return 0.0
        t = (y - top) / (bot - top)
        return 2 * t * (1 - t) * c
    return at


def _or(g, s, x0, y0, w, h, shift=0.0):
    top, bot = _shape_span(s, y0, h)
    d, c = _or_path(x0 + shift, top, bot, w - shift)
    el(g, "path", d=d, fill=TINT, stroke=INK, stroke_width=1.4)
    if top > y0 or bot < y0 + h:
        el(g, "line", x1=_r(x0), y1=_r(y0), x2=_r(x0), y2=_r(top), stroke=INK, stroke_width=1.4)
        el(g, "line", x1=_r(x0), y1=_r(bot), x2=_r(x0), y2=_r(y0 + h), stroke=INK, stroke_width=1.4)
    back = _back(top, bot, c)
    return (lambda y: shift + back(y)), (lambda y: float(w))


def _xor(g, s, x0, y0, w, h):
    top, bot = _shape_span(s, y0, h)
    _, c = _or_path(x0, top, bot, w)
    ym = (top + bot) / 2
    el(g, "path", d=f"M{_r(x0)},{_r(top)} Q{_r(x0 + c)},{_r(ym)} {_r(x0)},{_r(bot)}", fill="none", stroke=INK,
       stroke_width=1.4)
    back = _back(top, bot, c)
    _or(g, s, x0, y0, w, h, shift=6.0)
    return back, (lambda y: float(w))


def _buf(g, s, x0, y0, w, h):
    top, bot = _shape_span(s, y0, h)
    ym = (top + bot) / 2
    el(g, "path", d=f"M{_r(x0)},{_r(top)} L{_r(x0 + w)},{_r(ym)} L{_r(x0)},{_r(bot)} Z", fill=TINT, stroke=INK,
       stroke_width=1.4)
    return lambda y: 0.0, lambda y: float(w)


_QUALIFIER = {"and": "&", "or": "≥1", "xor": "=1", "buf": "1"}
_RECT_GATES = {"and", "or", "xor", "buf", "resistor"}


def _rect_gate(g, s, x0, y0, w, h):
    if s.kind == "resistor":
        return _resistor_rect(g, s, x0, y0, w, h)
    _rect(g, x0, y0, w, h)
    el(g, "text", _QUALIFIER[s.kind], x=_r(x0 + w / 2), y=_r(y0 + 13), text_anchor="middle", font_size=10,
       **{"class": "qualifier"})
    return _flat(w)


def _block(g, s, x0, y0, w, h):
    _rect(g, x0, y0, w, h)
    if s.qualifier:  # the general qualifying symbol stands at the top of the block (IEEE Std 91)
        el(g, "text", s.qualifier, x=_r(x0 + w / 2), y=_r(y0 + 8), text_anchor="middle", font_size=6.5,
           **{"class": "qualifier"})
    for p in s.pins():
        py = y0 + p.row * G
        if p.side == "W":
            if p.clock:  # the dynamic-input triangle of IEEE Std 91
                el(g, "path", d=f"M{_r(x0)},{_r(py - 4)} L{_r(x0 + 7)},{_r(py)} L{_r(x0)},{_r(py + 4)}",
                   fill="none", stroke=INK, stroke_width=1.1)
            el(g, "text", _shown(p), x=_r(x0 + (9 if p.clock else 3)), y=_r(py + 3), font_size=7.5,
               **{"class": "pin-name"})
        else:
            name = _shown(p)
            bar = {"text_decoration": "overline"} if name != p.name and not p.negated else {}
            el(g, "text", name, x=_r(x0 + w - 3), y=_r(py + 3), font_size=7.5, text_anchor="end",
               **{"class": "pin-name"}, **bar)
    return _flat(w)


def _shown(p: SymPin) -> str:
    """A pin's name inside a block: an active-low input drops its ``_N`` (the circle says it), an
    inverted output (``QN``) drops its ``N`` and is drawn with a bar over it."""
    if p.negated and p.name.endswith("_N"):
        return p.name[:-2]
    if p.side == "E" and p.name.endswith("N") and len(p.name) == 2:
        return p.name[0]
    return p.name


def _contact(g, s, x0, y0, w, h):
    # pins: west NC (row 1), NO (row 3); east COM (row 1).  Drawn at rest: blade on NC.
    nc_y, no_y, com_y = y0 + G, y0 + 3 * G, y0 + G
    fx = x0 + 0.45 * w
    piv = (x0 + w - 6, com_y)
    for yy in (nc_y, no_y):
        el(g, "line", x1=_r(x0), y1=_r(yy), x2=_r(fx), y2=_r(yy), stroke=INK, stroke_width=1.4)
    el(g, "line", x1=_r(fx), y1=_r(nc_y), x2=_r(fx), y2=_r(nc_y + 5), stroke=INK, stroke_width=1.4)
    el(g, "line", x1=_r(fx), y1=_r(no_y), x2=_r(fx), y2=_r(no_y - 5), stroke=INK, stroke_width=1.4)
    el(g, "line", x1=_r(piv[0]), y1=_r(piv[1]), x2=_r(x0 + w), y2=_r(com_y), stroke=INK, stroke_width=1.4)
    el(g, "line", x1=_r(piv[0]), y1=_r(piv[1]), x2=_r(fx - 3), y2=_r(nc_y + 6), stroke=INK, stroke_width=1.6)
    el(g, "circle", cx=_r(piv[0]), cy=_r(piv[1]), r=2, fill=INK)
    el(g, "text", "NC", x=_r(x0 + 2), y=_r(nc_y - 2), font_size=6, **{"class": "pin-name"})
    el(g, "text", "NO", x=_r(x0 + 2), y=_r(no_y - 2), font_size=6, **{"class": "pin-name"})
    return _flat(w)


def _coil(g, s, x0, y0, w, h):
    _rect(g, x0 + 6, y0 + 3, w - 12, h - 6, fill=PAPER)
    el(g, "line", x1=_r(x0), y1=_r(y0 + G), x2=_r(x0 + 6), y2=_r(y0 + G), stroke=INK, stroke_width=1.4)
    el(g, "line", x1=_r(x0 + w - 6), y1=_r(y0 + G), x2=_r(x0 + w), y2=_r(y0 + G), stroke=INK, stroke_width=1.4)
    el(g, "text", s.ref, x=_r(x0 + w / 2), y=_r(y0 + G + 3), text_anchor="middle", font_size=8)
    return _flat(w)


def _diode(g, s, x0, y0, w, h):
    # cathode (west) to the coil's positive end, anode (east) to GND: the triangle points west
    yy = y0 + G
    a, k = x0 + w * 0.68, x0 + w * 0.32
    el(g, "line", x1=_r(x0), y1=_r(yy), x2=_r(x0 + w), y2=_r(yy), stroke=INK, stroke_width=1.4)
    el(g, "path", d=f"M{_r(a)},{_r(yy - 6)} L{_r(k)},{_r(yy)} L{_r(a)},{_r(yy + 6)} Z", fill=INK, stroke=INK)
    el(g, "line", x1=_r(k), y1=_r(yy - 6), x2=_r(k), y2=_r(yy + 6), stroke=INK, stroke_width=1.6)
    return _flat(w)


def _resistor(g, s, x0, y0, w, h):
    yy = y0 + G
    pts = [(x0, yy), (x0 + 6, yy)]
    step = (w - 12) / 6
    for i in range(6):
        pts.append((x0 + 6 + step * (i + 0.5), yy + (-4 if i % 2 == 0 else 4)))
    pts += [(x0 + w - 6, yy), (x0 + w, yy)]
    el(g, "polyline", points=" ".join(f"{_r(x)},{_r(y)}" for x, y in pts), fill="none", stroke=INK,
       stroke_width=1.4)
    return _flat(w)


def _resistor_rect(g, s, x0, y0, w, h):
    yy = y0 + G
    el(g, "line", x1=_r(x0), y1=_r(yy), x2=_r(x0 + 6), y2=_r(yy), stroke=INK, stroke_width=1.4)
    el(g, "line", x1=_r(x0 + w - 6), y1=_r(yy), x2=_r(x0 + w), y2=_r(yy), stroke=INK, stroke_width=1.4)
    _rect(g, x0 + 6, yy - 4, w - 12, 8, fill=PAPER)
    return _flat(w)


def _capacitor(g, s, x0, y0, w, h):
    yy = y0 + G
    xm = x0 + w / 2
    for xx in (xm - 3, xm + 3):
        el(g, "line", x1=_r(xx), y1=_r(yy - 7), x2=_r(xx), y2=_r(yy + 7), stroke=INK, stroke_width=1.8)
    el(g, "line", x1=_r(x0), y1=_r(yy), x2=_r(xm - 3), y2=_r(yy), stroke=INK, stroke_width=1.4)
    el(g, "line", x1=_r(xm + 3), y1=_r(yy), x2=_r(x0 + w), y2=_r(yy), stroke=INK, stroke_width=1.4)
    return _flat(w)


_BODIES = {"and": _and, "or": _or, "xor": _xor, "buf": _buf, "block": _block, "supply": _block,
           "contact": _contact, "coil": _coil, "diode": _diode, "resistor": _resistor, "capacitor": _capacitor,
           "rect-gate": _rect_gate}
