"""The board drawing (``board.svg``): where every part goes, seen from the part side.

One hole of 0.1 inch is :data:`HOLE` drawing units.  A breadboard shows its
strips and supply rails (VCC and GND named at both ends of each rail, so
the drawing reads without colour), row letters and every fifth column
number; a perforated or wire-wrap board its holes and every fifth column
and row number.  Each part is its outline with its reference and part
number, a dot at pin 1 and, for a DIP, the notch; support parts are a body
between their legs.  Input, output and supply terminals stand off the
board edge with their names.  The wires themselves are in the numbered
list of ``wiring.txt``, not drawn here.
"""
from __future__ import annotations

from lxml import etree

from .. import __version__
from ..analyze.results import Analysis
from ..build import Build
from ..place import Plan, plan_for
from ..place.boards import BOARD_GAP, BREADBOARD_ROWS, RAIL_ROWS, STRIP_ROWS
from .drawing import INK, PALETTE, PAPER, TINT, el, svg_root, text_width
from .files import atomic_write

__all__ = ["board_svg", "write_build", "HOLE"]

HOLE = 10
_RAIL_INK = {"VCC": PALETTE[1], "GND": PALETTE[0]}


def _r(v: float) -> str:
    return f"{v:.2f}".rstrip("0").rstrip(".")


def board_svg(b: Build, analysis: Analysis, plan: Plan, declaration: bool = True) -> str:
    """The drawing of ``plan`` as SVG text (see the module docstring); no XML declaration for inlining."""
    p = plan.placement
    board = p.board
    # room left of the board for the terminals' names
    margin = int(70 + max((text_width(n + " in", 7) for _, n in p.terminals), default=0))
    body = etree.tostring(_draw(b, p, board, margin), pretty_print=True, encoding="unicode")
    return ('<?xml version="1.0" encoding="UTF-8"?>\n' + body) if declaration else body


def _draw(b: Build, p, board, margin: int):
    rows = (BREADBOARD_ROWS + BOARD_GAP) * p.boards - BOARD_GAP if board.is_breadboard else board.rows
    top = 60
    width = 2 * margin + board.columns * HOLE + 40
    height = top + rows * HOLE + 50
    root = svg_root(width, height, f"{b.design} on {b.target.name}: board")
    el(root, "text", f"{b.design} on {b.target.name}: {board.title}"
       + (f", {p.boards} boards" if p.boards > 1 else ""), x=12, y=22, font_size=13, font_weight="bold")
    el(root, "text", f"parts seen from above; wires: see the numbered list in wiring.txt; netfit {__version__}",
       x=12, y=38, font_size=8.5, fill="#444444")
    defs = el(root, "defs")
    pat = el(defs, "pattern", id="hole", x=margin - HOLE / 2, y=top - HOLE / 2, width=HOLE, height=HOLE,
             patternUnits="userSpaceOnUse")
    el(pat, "rect", x=3.5, y=3.5, width=3, height=3, fill="#9a9a9a")
    def _xy(x, y, top):
        return margin + x * HOLE, top + y * HOLE

    if board.is_breadboard:
        for k in range(p.boards):
            _breadboard(root, board, top + k * (BREADBOARD_ROWS + BOARD_GAP) * HOLE, margin)
    else:
        _perfboard(root, board, top, margin)
    parts = el(root, "g", **{"class": "parts"})
    for ref in sorted(p.parts):
        _part(parts, p.parts[ref], top, _xy)
    terms = el(root, "g", **{"class": "terminals"})
    for (kind, name), (x, y) in sorted(p.terminals.items()):
        cx, cy = _xy(x, y, top)
        el(terms, "circle", cx=_r(cx), cy=_r(cy), r=3, fill=PAPER, stroke=INK, stroke_width=1.2)
        label = {"input": name, "output": name, "supply": f"{name} in"}[kind]
        left = x < 0 or (not board.is_breadboard and x == 0)
        tx = cx - 5 if left else cx + 5
        el(terms, "text", label, x=_r(tx), y=_r(cy + 3), font_size=7, text_anchor="end" if left else "start")
    return root


def _breadboard(root, board, y0, margin: int) -> None:
    g = el(root, "g", **{"class": "board"})
    w = board.columns * HOLE
    el(g, "rect", x=margin - HOLE, y=_r(y0 - HOLE), width=w + HOLE, height=BREADBOARD_ROWS * HOLE + HOLE,
       rx=6, fill=TINT, stroke=INK, stroke_width=1.2)
    for y0s, y1s in ((3, 7), (10, 14)):
        el(g, "rect", x=margin - HOLE / 2, y=_r(y0 + y0s * HOLE - HOLE / 2), width=w,
           height=(y1s - y0s + 1) * HOLE, fill="url(#hole)")
    for row, (rail, _) in RAIL_ROWS.items():
        yy = y0 + row * HOLE
        el(g, "rect", x=margin - HOLE / 2, y=_r(yy - HOLE / 2), width=w, height=HOLE, fill="url(#hole)")
        off = -HOLE / 2 - 1 if row in (0, 16) else HOLE / 2 + 1
        el(g, "line", x1=margin, y1=_r(yy + off), x2=margin + w - HOLE, y2=_r(yy + off),
           stroke=_RAIL_INK[rail], stroke_width=1.5, stroke_dasharray="6 2" if rail == "GND" else "none")
        for tx, anchor in ((margin - HOLE - 3, "end"), (margin + w + 3, "start")):
            el(g, "text", rail, x=_r(tx), y=_r(yy + 3), font_size=7, text_anchor=anchor, font_weight="bold")
    for row, letter in STRIP_ROWS.items():
        yy = y0 + row * HOLE + 3
        el(g, "text", letter, x=margin - HOLE - 3, y=_r(yy), font_size=7, text_anchor="end")
    for x in range(0, board.columns, 5):
        el(g, "text", str(x + 1), x=_r(margin + x * HOLE), y=_r(y0 + 2.4 * HOLE), font_size=6,
           text_anchor="middle", fill="#555555")
    el(g, "rect", x=margin - HOLE / 2, y=_r(y0 + 8 * HOLE), width=w, height=HOLE, fill="#e4e1d4")


def _perfboard(root, board, top, margin: int) -> None:
    g = el(root, "g", **{"class": "board"})
    el(g, "rect", x=margin - HOLE, y=top - HOLE, width=(board.columns + 1) * HOLE, height=(board.rows + 1) * HOLE,
       rx=4, fill=TINT, stroke=INK, stroke_width=1.2)
    el(g, "rect", x=margin - HOLE / 2, y=top - HOLE / 2, width=board.columns * HOLE, height=board.rows * HOLE,
       fill="url(#hole)")
    for x in range(4, board.columns, 5):
        el(g, "text", str(x + 1), x=_r(margin + x * HOLE), y=_r(top - HOLE - 3), font_size=6,
           text_anchor="middle", fill="#555555")
    for y in range(4, board.rows, 5):  # on the right: the left edge holds the input terminals' names
        el(g, "text", str(y + 1), x=_r(margin + board.columns * HOLE + 3), y=_r(top + y * HOLE + 2), font_size=6,
           fill="#555555")


def _part(g, pp, top, _xy) -> None:
    pg = el(g, "g", **{"class": "part", "data-part": pp.ref})
    if pp.fp is None:  # a support part between its legs
        legs = [_xy(x, y, top) for _, (x, y) in sorted(pp.pins.items())]
        (x1, y1), (x2, y2) = legs[0], legs[-1]
        el(pg, "line", x1=_r(x1), y1=_r(y1), x2=_r(x2), y2=_r(y2), stroke=INK, stroke_width=1.2)
        mx, my = (x1 + x2) / 2, (y1 + y2) / 2
        el(pg, "rect", x=_r(mx - 4), y=_r(my - 4), width=8, height=8, fill=PALETTE[5], stroke=INK, stroke_width=0.8)
        for x, y in legs:
            el(pg, "circle", cx=_r(x), cy=_r(y), r=2, fill=INK)
        el(pg, "text", pp.ref, x=_r(mx + 6), y=_r(my + 3), font_size=6.5)
        return
    ox, oy = pp.origin
    x0, y0, x1, y1 = pp.fp.outline
    ax, ay = _xy(ox + x0, oy + y0, top)
    bx, by = _xy(ox + x1, oy + y1, top)
    el(pg, "rect", x=_r(ax), y=_r(ay), width=_r(bx - ax), height=_r(by - ay), rx=2, fill="#3b3b3b", stroke=INK)
    if pp.fp.notch:
        el(pg, "path", d=f"M{_r(ax)},{_r((ay + by) / 2 - 4)} A4,4 0 0 1 {_r(ax)},{_r((ay + by) / 2 + 4)}",
           fill=PAPER, stroke="none")
    for x, y in pp.pins.values():
        cx, cy = _xy(x, y, top)
        el(pg, "rect", x=_r(cx - 2.5), y=_r(cy - 2.5), width=5, height=5, fill="#c8c8c8", stroke=INK,
           stroke_width=0.6)
    if 1 in pp.pins:
        cx, cy = _xy(*pp.pins[1], top)
        dy = -6 if pp.fp.notch else 6
        el(pg, "circle", cx=_r(cx), cy=_r(cy + dy), r=1.8, fill=PAPER, **{"class": "pin1"})
    label = f"{pp.ref} {pp.part_id}"
    size = 7.0
    room = bx - ax - 8
    if text_width(label, size) > room:
        size = max(4.0, size * room / text_width(label, size))
    el(pg, "text", label, x=_r((ax + bx) / 2), y=_r((ay + by) / 2 + 2.5), font_size=_r(size), fill=PAPER,
       text_anchor="middle", font_weight="bold")


def write_build(b: Build, analysis: Analysis, path, protect=(), plan: Plan | None = None, **options) -> list:
    """Write ``board.svg`` of ``b`` to ``path`` (atomically)."""
    return [atomic_write(path, board_svg(b, analysis, plan if plan is not None else plan_for(b)), protect=protect)]
