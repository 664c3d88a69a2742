"""The schematic of a build (``schematic.svg``), and the bar chart of ``netfit compare``.

The schematic is laid out by :mod:`mapper.write.sheets` on pages of
:data:`~mapper.write.drawing.PAGE_W` × :data:`~mapper.write.drawing.PAGE_H`
drawing units (266.7 × 193 mm: it prints on landscape A4 and on landscape
Letter).  ``schematic.svg`` stacks the pages one below the other; the
report shows each page on its own.  Symbols are drawn by
:mod:`mapper.write.symbols` (IEEE Std 91 gate shapes by default,
``shapes="rectangular"`` for the IEC 60617 rectangles).

Reading the drawing by program
------------------------------
The file is meant to be read back, not only looked at:

* each page is a ``<g class="page" data-page="k">``, moved down by a
  ``transform="translate(0 Y)"`` (the only transform in the file); a
  ``@page`` rule sizes the printed sheet to one page, so a browser prints
  the file one page to a sheet;
* each pin is a ``<line class="pin">`` with ``data-part``, ``data-pin``
  (as the wiring list names it: a package pin number, or a relay terminal
  such as ``COM1``) and ``data-net``; its connection point is the line's
  second end (``x2``, ``y2``);
* the wires of a net on a page are the ``<line>`` elements of one
  ``<g class="net" data-net="...">``; a ``<circle class="junction">``
  marks each point where the net branches;
* ports (``<g class="port">``, ``data-kind`` ``input`` or ``output``),
  flags (``<g class="flag">``, ``data-kind`` ``flag`` or ``link``) and
  rail symbols (``<g class="rail">``) each have a ``<line class="lead">``
  whose first end is their connection point, and a ``<text
  class="name">`` with the name they stand for.  Flags, rail symbols and
  input ports of the same name are one net; an output port names the
  design output its wire carries.
"""
from __future__ import annotations

import logging
import math

from lxml import etree

from .. import __version__
from ..analyze.results import Analysis
from ..build import Build
from .drawing import INK, PAGE_H, PAGE_MM, PAGE_W, PALETTE, PAPER, el, svg_root, text_width
from .files import atomic_write
from .sheets import NET_FONT, OX, OY, Page, sheets
from .symbols import G, draw_symbol

_CHART_MARGIN = 24

__all__ = ["svg_element", "svg_text", "page_elements", "write_build", "bar_chart", "SHAPES"]

log = logging.getLogger(__name__)

#: the gate shapes a schematic can be drawn in
SHAPES = ("distinctive", "rectangular")


def _r(v: float) -> str:
    return f"{v:.2f}".rstrip("0").rstrip(".")


def _px(gx: float) -> float:
    return OX + gx * G


def _py(gy: float) -> float:
    return OY + gy * G


def _draw_wires(g, page: Page) -> None:
    for net in sorted(page.wires):
        ng = el(g, "g", **{"class": "net", "data-net": net}, stroke=INK, stroke_width=1.4, fill="none")
        for (x1, y1), (x2, y2) in page.wires[net]:
            el(ng, "line", x1=_r(_px(x1)), y1=_r(_py(y1)), x2=_r(_px(x2)), y2=_r(_py(y2)))
        for x, y in page.dots.get(net, ()):
            el(ng, "circle", cx=_r(_px(x)), cy=_r(_py(y)), r=3, fill=INK, stroke="none", **{"class": "junction"})


def _flag_outline(x0: float, x1: float, y: float, point_at_start: bool) -> str:
    """A port outline from x0 to x1 (x0 nearer the connection): a box with a point at one end."""
    h = 6
    d = 1 if x1 > x0 else -1
    tip = 6 * d
    if point_at_start:
        pts = [(x0, y), (x0 + tip, y - h), (x1, y - h), (x1, y + h), (x0 + tip, y + h)]
    else:
        pts = [(x0, y - h), (x1 - tip, y - h), (x1, y), (x1 - tip, y + h), (x0, y + h)]
    return "M" + " L".join(f"{_r(a)},{_r(b)}" for a, b in pts) + " Z"


def _draw_zone(g, z) -> None:
    x0, y = _px(z.x), _py(z.y)
    xe = _px(z.x + z.dx * z.length)
    mid = (x0 + xe) / 2
    if z.mode == "label":
        el(g, "text", z.net, x=_r(mid), y=_r(y - 2.5), text_anchor="middle", font_size=NET_FONT, fill=INK,
           **{"class": "net-name", "data-net": z.net})
        return
    if z.mode == "rail":
        _draw_rail(g, z.net, x0, y, z.dx)
        return
    fg = el(g, "g", **{"class": "flag", "data-kind": z.mode, "data-net": z.net})
    start = x0 + 4 * z.dx
    el(fg, "line", x1=_r(x0), y1=_r(y), x2=_r(start), y2=_r(y), stroke=INK, stroke_width=1.4, **{"class": "lead"})
    el(fg, "path", d=_flag_outline(start, xe, y, True), fill=PAPER, stroke=INK, stroke_width=1.1,
       **{"class": "outline"})
    el(fg, "text", z.net, x=_r((start + xe) / 2 + 3 * z.dx), y=_r(y + 2.7), text_anchor="middle",
       font_size=NET_FONT, **{"class": "name"})
    if z.refs:
        el(fg, "text", z.refs, x=_r((start + xe) / 2), y=_r(y - 8.5), text_anchor="middle", font_size=6.5,
           fill=INK, **{"class": "page-ref"})


def _draw_rail(g, rail: str, x0: float, y: float, dx: int) -> None:
    rg = el(g, "g", **{"class": "rail", "data-net": rail})
    x1 = x0 + 9 * dx
    el(rg, "line", x1=_r(x0), y1=_r(y), x2=_r(x1), y2=_r(y), stroke=INK, stroke_width=1.4, **{"class": "lead"})
    if rail == "GND":
        for k, half in enumerate((6, 4, 2)):
            xx = x1 + 2.5 * k * dx
            el(rg, "line", x1=_r(xx), y1=_r(y - half), x2=_r(xx), y2=_r(y + half), stroke=INK, stroke_width=1.3)
        tx = x1 + 8 * dx
    else:
        el(rg, "line", x1=_r(x1), y1=_r(y - 6), x2=_r(x1), y2=_r(y + 6), stroke=INK, stroke_width=1.8)
        tx = x1 + 3 * dx
    el(rg, "text", rail, x=_r(tx), y=_r(y + 2.7), text_anchor="start" if dx > 0 else "end", font_size=7,
       **{"class": "name"})


def _draw_port(g, p) -> None:
    x, y = _px(p.x), _py(p.y)
    pg = el(g, "g", **{"class": "port", "data-kind": p.kind, "data-net": p.net})
    start = x + 4 * p.dx
    end = _px(p.x + p.dx * p.length)
    el(pg, "line", x1=_r(x), y1=_r(y), x2=_r(start), y2=_r(y), stroke=INK, stroke_width=1.4, **{"class": "lead"})
    # an input points at the drawing, an output away from it
    el(pg, "path", d=_flag_outline(start, end, y, p.kind == "input"), fill=PAPER, stroke=INK, stroke_width=1.4,
       **{"class": "outline"})
    el(pg, "text", p.name, x=_r((start + end) / 2), y=_r(y + 2.7), text_anchor="middle", font_size=NET_FONT,
       font_weight="bold", **{"class": "name"})


def _fit_text(parent, text: str, x: float, y: float, size: float, width: float, **attrs) -> None:
    """Text shrunk so its estimated width stays within ``width``."""
    w = text_width(text, size)
    if w > width:
        size = max(4.0, size * width / w)
    el(parent, "text", text, x=_r(x), y=_r(y), font_size=_r(size), **attrs)


def _title_block(g, b: Build, analysis: Analysis, page: Page, total: int) -> None:
    tb = el(g, "g", **{"class": "title-block"})
    el(tb, "rect", x=10, y=698, width=PAGE_W - 20, height=PAGE_H - 708, fill="none", stroke=INK, stroke_width=1)
    _fit_text(tb, f"{b.design} on {b.target.name}", 18, 716, 13, 560, font_weight="bold")
    what = "supply pins, tied inputs and decoupling" if page.supply and not page.wires else "schematic"
    _fit_text(tb, f"{what}; proof against the design: {analysis.verified}; netfit {__version__}", 18, 731, 8, 560)
    _fit_text(tb, "Numbers at pins are package pins. Flags and rail symbols of one name are one net; "
                  "a flag lists the other pages its net is on.", 18, 744, 7, 560, fill="#444444")
    el(tb, "line", x1=590, y1=698, x2=590, y2=PAGE_H - 10, stroke=INK, stroke_width=1)
    el(tb, "text", f"page {page.number} of {total}", x=PAGE_W - 18, y=716, text_anchor="end", font_size=12,
       font_weight="bold")
    refs = sorted({s.ref for s in page.symbols}, key=lambda r: (r.rstrip("0123456789"), int(r[1:] or 0)
                                                               if r[1:].isdigit() else 0))
    _fit_text(tb, "parts on this page: " + (", ".join(refs) if refs else "none"), 598, 731, 8, PAGE_W - 620)


def _page_group(parent, b: Build, analysis: Analysis, page: Page, total: int, shapes: str):
    g = el(parent, "g", **{"class": "page", "data-page": page.number})
    el(g, "rect", x=5, y=5, width=PAGE_W - 10, height=PAGE_H - 10, fill="none", stroke=INK, stroke_width=1.2,
       **{"class": "frame"})
    for s in page.symbols:
        draw_symbol(g, s, OX, OY, shapes)
    zg = el(g, "g", **{"class": "zones"})
    for z in page.zones:
        _draw_zone(zg, z)
    for p in page.ports:
        _draw_port(g, p)
    _draw_wires(g, page)
    _title_block(g, b, analysis, page, total)
    return g


#: the last drawing made: the schematic writer and the report draw the same build one after the other
_LAST: list = []


def _pages(b: Build, shapes: str) -> list:
    if shapes not in SHAPES:
        raise ValueError(f"unknown gate shapes {shapes!r} (known: {', '.join(SHAPES)})")
    if _LAST and _LAST[0] is b and _LAST[1] == shapes and _LAST[2] == (len(b.cells), len(b.contacts), len(b.parts)):
        return _LAST[3]
    pages = sheets(b, shapes)
    _LAST[:] = [b, shapes, (len(b.cells), len(b.contacts), len(b.parts)), pages]
    return pages


def svg_element(b: Build, analysis: Analysis, shapes: str = "distinctive", pages=None):
    """The whole schematic as one ``<svg>``: the pages stacked (see the module docstring)."""
    pages = pages if pages is not None else _pages(b, shapes)
    n = len(pages)
    root = svg_root(PAGE_W, PAGE_H * n, f"{b.design} on {b.target.name}: schematic",
                    physical=(PAGE_MM[0], round(PAGE_MM[1] * n, 2)))
    # printed from a browser, each page of the drawing is one sheet of paper of its own size
    style = el(root, "style", f"@page {{ size: {PAGE_MM[0]}mm {PAGE_MM[1]}mm; margin: 0; }}")
    root.insert(0, style)
    for page in pages:
        g = _page_group(root, b, analysis, page, n, shapes)
        if page.number > 1:
            g.set("transform", f"translate(0 {PAGE_H * (page.number - 1)})")
    return root


def page_elements(b: Build, analysis: Analysis, shapes: str = "distinctive", pages=None) -> list:
    """Each page as its own ``<svg>`` (for the report: one printed sheet each)."""
    pages = pages if pages is not None else _pages(b, shapes)
    out = []
    for page in pages:
        root = svg_root(PAGE_W, PAGE_H, f"{b.design} on {b.target.name}: schematic page {page.number}",
                        physical=PAGE_MM)
        root.set("class", "sheet")
        _page_group(root, b, analysis, page, len(pages), shapes)
        out.append(root)
    return out


def svg_text(b: Build, analysis: Analysis, declaration: bool = True, shapes: str = "distinctive") -> str:
    """The schematic as SVG text (with an XML declaration unless it is to be inlined in HTML)."""
    body = etree.tostring(svg_element(b, analysis, shapes), pretty_print=True, encoding="unicode")
    return ('<?xml version="1.0" encoding="UTF-8"?>\n' + body) if declaration else body


def write_build(b: Build, analysis: Analysis, path, protect=(), shapes: str = "distinctive", **options) -> list:
    """Write ``schematic.svg`` of ``b`` to ``path`` (atomically)."""
    return [atomic_write(path, svg_text(b, analysis, shapes=shapes), protect=protect)]


def bar_chart(title: str, groups: list) -> str:
    """A bar chart as SVG text: ``groups`` is a list of ``(figure label, unit, [(name, value or None, text)])``.

    One panel per figure, one bar per name, scaled to the largest value of
    its panel; a ``None`` value is drawn as a grey note (``text``).
    """
    names = []
    for _, _, bars in groups:
        for name, _, _ in bars:
            if name not in names:
                names.append(name)
    bar_h, panel_gap = 18, 26
    label_w = max([len(n) for n in names] + [8]) * 7 + 20
    plot_w = 320
    width = _CHART_MARGIN * 2 + label_w + plot_w + 110
    height = 50 + sum(28 + len(bars) * (bar_h + 4) + panel_gap for _, _, bars in groups)
    root = svg_root(width, height, title)
    el(root, "text", title, x=_CHART_MARGIN, y=24, font_size=15, font_weight="bold")
    y = 50
    for label, unit, bars in groups:
        values = [v for _, v, _ in bars if v is not None and v > 0]
        vmax = max(values, default=0)
        vmin = min(values, default=0)
        log = vmin > 0 and vmax / vmin > 1000  # ns beside ms: a linear bar would hide the small ones
        scale_note = ", log scale" if log else ""
        el(root, "text", label + (f" ({unit}{scale_note})" if unit else (f" ({scale_note[2:]})" if log else "")),
            x=_CHART_MARGIN, y=y + 12, font_weight="bold")
        y += 22
        for name, value, text in bars:
            colour = PALETTE[names.index(name) % len(PALETTE)]
            el(root, "text", name, x=_CHART_MARGIN + label_w - 8, y=y + 13, text_anchor="end")
            if value is None:
                el(root, "text", text or "-", x=_CHART_MARGIN + label_w, y=y + 13, fill="#888888")
            else:
                if value <= 0 or vmax <= 0:
                    w = 0.0
                elif log:
                    span = math.log10(vmax) - math.log10(vmin) + 1
                    w = plot_w * (math.log10(value) - math.log10(vmin) + 1) / span
                else:
                    w = max(1.0, plot_w * value / vmax)
                r = el(root, "rect", x=_CHART_MARGIN + label_w, y=y, width=round(w, 2), height=bar_h, fill=colour,
                       stroke=INK, stroke_width=0.6)
                el(r, "title", f"{name}: {text}")
                el(root, "text", text, x=_CHART_MARGIN + label_w + w + 6, y=y + 13)
            y += bar_h + 4
        y += panel_gap
    body = etree.tostring(root, pretty_print=True, encoding="unicode")
    return '<?xml version="1.0" encoding="UTF-8"?>\n' + body
