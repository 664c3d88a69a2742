"""A drawing of the build (``schematic.svg``), made with lxml.

Every used slot (a relay's used pole) is a box labelled with its part and
slot (``U3.2``), its cell and its part number; boxes stand in columns by
logic level (inputs on the left, outputs on the right); nets are lines from
the driving pin along a vertical trunk to every pin they feed, each net in
its own colour, named at its driver.  Pins held at a rail show the rail's
name instead of a line.  Storage elements count as sources, so feedback
through them runs right to left; relay seal-in loops are cut where the
level order is stuck.

Builds of more than :data:`MAX_CELLS` boxes are not drawn cell by cell (no
one can follow thousands of crossing lines): the drawing then shows one box
per part with its slots in use, and a note pointing to the wiring list.
"""
from __future__ import annotations

import logging
import math
from dataclasses import dataclass, field

from lxml import etree

from .. import __version__
from ..analyze.results import Analysis
from ..build import SUPPLY_NETS, Build, ref_key
from .files import atomic_write

__all__ = ["MAX_CELLS", "svg_element", "svg_text", "write_build", "bar_chart"]

log = logging.getLogger(__name__)

SVG_NS = "http://www.w3.org/2000/svg"
#: most boxes drawn one by one; beyond this the drawing is a part overview
MAX_CELLS = 150

_BOX_W = 104
_PIN_STEP = 16
_MARGIN = 24
_PALETTE = ("#1f77b4", "#d62728", "#2ca02c", "#9467bd", "#8c564b", "#e377c2", "#17becf", "#bcbd22",
            "#ff7f0e", "#393b79", "#637939", "#843c39", "#7b4173", "#3182bd", "#e6550d", "#31a354")


@dataclass
class _Box:
    key: tuple
    title: str
    subtitle: str
    inputs: list  # (pin, net or None)
    outputs: list
    storage: bool = False
    level: int = 0
    x: float = 0.0
    y: float = 0.0
    h: float = 0.0
    pin_xy: dict = field(default_factory=dict)


def _boxes(b: Build) -> list:
    cells = b.target.cells
    out = []
    for c in sorted(b.cells, key=lambda c: (ref_key(c.part_ref), c.slot)):
        cd = cells[c.cell]
        pid = b.part(c.part_ref).part_id
        out.append(_Box(("cell", c.part_ref, c.slot), f"{c.part_ref}.{c.slot}", f"{c.cell} · {pid}",
                        [(p, c.pins.get(p)) for p in cd.inputs],
                        [(p, c.pins.get(p)) for p in (cd.output, *cd.extra_outputs)],
                        storage=cd.storage is not None))
    for k in sorted(b.contacts, key=lambda k: (ref_key(k.part_ref), k.pole)):
        pid = b.part(k.part_ref).part_id
        out.append(_Box(("pole", k.part_ref, k.pole), f"{k.part_ref}.{k.pole}", f"pole · {pid}",
                        [("COIL", b.coils.get(k.part_ref)), ("NO", k.no), ("NC", k.nc)], [("COM", k.com)]))
    return out


def _levels(boxes: list, inputs: set) -> None:
    """Logic level of each box: 1 + the level of the boxes driving it; iterative (Kahn), loops cut."""
    driver = {}
    for bx in boxes:
        for _, net in bx.outputs:
            if net is not None and net not in SUPPLY_NETS:
                driver[net] = bx
    deps = {}
    users: dict = {}
    for bx in boxes:
        d = set()
        if not bx.storage:
            for _, net in bx.inputs:
                src = driver.get(net)
                if src is not None and src is not bx:
                    d.add(id(src))
        deps[id(bx)] = d
        for s in d:
            users.setdefault(s, []).append(bx)
    by_id = {id(bx): bx for bx in boxes}
    level: dict = {}
    remaining = {i: set(d) for i, d in deps.items()}
    ready = [bx for bx in boxes if not remaining[id(bx)]]
    done = 0
    while done < len(boxes):
        if not ready:
            # a loop (relay seal-in through coils): cut it at the box with the fewest unplaced drivers
            left = [bx for bx in boxes if id(bx) not in level]
            cut = min(left, key=lambda bx: (len(remaining[id(bx)]), ref_key(bx.key[1]), bx.key[2]))
            remaining[id(cut)] = set()
            ready.append(cut)
        bx = ready.pop()
        if id(bx) in level:
            continue
        level[id(bx)] = 1 + max((level[i] for i in deps[id(bx)] if i in level), default=0)
        done += 1
        for u in users.get(id(bx), ()):
            r = remaining[id(u)]
            r.discard(id(bx))
            if not r and id(u) not in level:
                ready.append(u)
    for i, lv in level.items():
        by_id[i].level = lv


def _el(parent, tag, text=None, **attrs):
    e = etree.SubElement(parent, f"{{{SVG_NS}}}{tag}", {k.replace("_", "-"): str(v) for k, v in attrs.items()})
    if text is not None:
        e.text = text
    return e


def _root(width, height, title):
    root = etree.Element(f"{{{SVG_NS}}}svg", nsmap={None: SVG_NS},  # type: ignore[dict-item]  # lxml-stubs
                         attrib={"width": str(int(width)), "height": str(int(height)),
                                 "viewBox": f"0 0 {int(width)} {int(height)}",
                                 "font-family": "DejaVu Sans, Arial, Helvetica, sans-serif",
                                 "font-size": "11"})
    _el(root, "title", title)
    _el(root, "rect", x=0, y=0, width=int(width), height=int(height), fill="#ffffff")
    return root


def svg_element(b: Build, analysis: Analysis):
    """The drawing of ``b`` as an lxml ``<svg>`` element (see the module docstring)."""
    boxes = _boxes(b)
    if len(boxes) > MAX_CELLS:
        return _overview(b, len(boxes))
    _levels(boxes, set(b.inputs))
    cols: dict = {}
    for bx in boxes:
        cols.setdefault(bx.level, []).append(bx)
    nlev = max(cols, default=0)
    out_col = nlev + 1
    # trunks: one per net, in the channel right of its driver's column
    drv_col = {n: 0 for n in b.inputs}
    for bx in boxes:
        for _, net in bx.outputs:
            if net is not None:
                drv_col[net] = bx.level
    trunks: dict = {}
    for net, col in drv_col.items():
        trunks.setdefault(col, []).append(net)
    gap = {col: max(70, 12 * len(nets) + 40) for col, nets in trunks.items()}
    col_x = {}
    x = _MARGIN + 70  # room for input names
    col_x[0] = x
    for col in range(1, out_col + 1):
        x += gap.get(col - 1, 70) + (_BOX_W if col > 1 else 0)
        col_x[col] = x
    # order boxes in a column by the mean height of what feeds them (one pass, left to right)
    ypos = {}
    top = _MARGIN + 40
    for i, net in enumerate(b.inputs):
        ypos[net] = top + 10 + i * 26
    height = top + 26 * len(b.inputs) + 20
    for col in range(1, nlev + 1):
        column = cols.get(col, [])

        def bary(bx):
            ys = [ypos[n] for _, n in bx.inputs if n in ypos]
            return sum(ys) / len(ys) if ys else 0.0

        column.sort(key=bary)
        y = top
        for bx in column:
            rows = max(len(bx.inputs), len(bx.outputs), 2)
            bx.h = rows * _PIN_STEP + 30
            bx.x, bx.y = col_x[col], y
            for i, (pin, _net) in enumerate(bx.inputs):
                py = y + 38 + i * _PIN_STEP
                bx.pin_xy[("in", pin)] = (bx.x, py)
            for i, (pin, net) in enumerate(bx.outputs):
                py = y + 38 + i * _PIN_STEP
                bx.pin_xy[("out", pin)] = (bx.x + _BOX_W, py)
                if net is not None:
                    ypos[net] = py
            y += bx.h + 22
        height = max(height, y + 10)
    outs = list(b.outputs)
    out_y = {}
    oy = top
    for o in outs:
        out_y[o] = oy + 10
        oy += 26
    height = max(height, oy + 20) + 70
    width = col_x[out_col] + 120 + _MARGIN
    cost, currency = b.cost()
    root = _root(width, height, f"{b.design} on {b.target.name}")
    _el(root, "text", f"{b.design} on {b.target.name}", x=_MARGIN, y=22, font_size=15, font_weight="bold")
    _el(root, "text", f"{len(b.parts)} parts, {b.slots_used()} of {b.slots_available()} slots used, "
                      f"{cost:.2f} {currency}; proof: {analysis.verified}; netfit {__version__}",
        x=_MARGIN, y=38, fill="#555555")
    wires = _el(root, "g", id="nets", fill="none", stroke_width="1.4")
    labels = _el(root, "g", id="net-names", font_size="9")
    # where each net starts
    start: dict = {}
    for net in b.inputs:
        start[net] = (col_x[0], ypos[net])
    for bx in boxes:
        for pin, net in bx.outputs:
            if net is not None:
                start[net] = bx.pin_xy[("out", pin)]
    ends: dict = {}
    for bx in boxes:
        for pin, net in bx.inputs:
            if net is not None and net not in SUPPLY_NETS:
                ends.setdefault(net, []).append(bx.pin_xy[("in", pin)])
    for o in outs:
        net = b.output_nets.get(o, o)
        if net not in SUPPLY_NETS:
            ends.setdefault(net, []).append((col_x[out_col], out_y[o]))
    colour: dict = {}
    for col, nets in trunks.items():
        base = col_x[col] + (_BOX_W if col > 0 else 0)
        for i, net in enumerate(sorted(nets, key=lambda n: start.get(n, (0, 0))[1])):
            colour[net] = _PALETTE[len(colour) % len(_PALETTE)]
            if net not in start or net not in ends:
                continue
            x0, y0 = start[net]
            xt = base + 16 + 12 * i
            g = _el(wires, "g", stroke=colour[net])
            _el(g, "title", net)
            pts = ends[net]
            ys = [y0] + [py for _, py in pts]
            _el(g, "line", x1=x0, y1=y0, x2=xt, y2=y0)
            if max(ys) > min(ys):
                _el(g, "line", x1=xt, y1=min(ys), x2=xt, y2=max(ys))
            for px, py in pts:
                _el(g, "line", x1=xt, y1=py, x2=px, y2=py)
                if len(pts) > 1 or py != y0:
                    _el(g, "circle", cx=xt, cy=py, r=2, fill=colour[net], stroke="none")
            _el(labels, "text", net, x=x0 + 3, y=y0 - 3, fill=colour[net])
    # input and output ports
    ports = _el(root, "g", id="ports")
    for net in b.inputs:
        x0, y0 = start[net]
        _el(ports, "text", net, x=x0 - 6, y=y0 + 4, text_anchor="end", font_weight="bold")
        _el(ports, "circle", cx=x0, cy=y0, r=3, fill="#000000")
    for o in outs:
        net = b.output_nets.get(o, o)
        px, py = col_x[out_col], out_y[o]
        _el(ports, "circle", cx=px, cy=py, r=3, fill="#000000")
        label = o if net not in SUPPLY_NETS else f"{o} = {net}"
        _el(ports, "text", label, x=px + 6, y=py + 4, font_weight="bold")
    cells_g = _el(root, "g", id="cells")
    for bx in boxes:
        g = _el(cells_g, "g")
        _el(g, "title", f"{bx.title}: {bx.subtitle}")
        _el(g, "rect", x=bx.x, y=bx.y, width=_BOX_W, height=bx.h, rx=4, fill="#fbfbf4" if not bx.storage else
            "#eef4fb", stroke="#333333", stroke_width="1.2")
        _el(g, "text", bx.title, x=bx.x + _BOX_W / 2, y=bx.y + 13, text_anchor="middle", font_weight="bold")
        _el(g, "text", bx.subtitle, x=bx.x + _BOX_W / 2, y=bx.y + 24, text_anchor="middle", font_size="8.5",
            fill="#555555")
        for pin, net in bx.inputs:
            px, py = bx.pin_xy[("in", pin)]
            _el(g, "text", pin, x=px + 4, y=py + 3, font_size="8.5")
            if net in SUPPLY_NETS:
                _el(g, "text", net, x=px - 4, y=py + 3, font_size="8.5", text_anchor="end", fill="#888888")
        for pin, net in bx.outputs:
            px, py = bx.pin_xy[("out", pin)]
            _el(g, "text", pin, x=px - 4, y=py + 3, font_size="8.5", text_anchor="end")
            if net is None:
                _el(g, "text", "open", x=px + 4, y=py + 3, font_size="8", fill="#888888")
    # the parts, as a footer
    foot = _el(root, "g", id="parts", font_size="10", fill="#333333")
    line = []
    for p in sorted(b.parts, key=lambda p: ref_key(p.ref)):
        line.append(f"{p.ref} {p.part_id}")
    text = "parts: " + ", ".join(line)
    if b.support:
        sc = b.support_counts()
        text += "; support: " + ", ".join(f"{k} ×{v}" for k, v in sorted(sc.items()))
    _el(foot, "text", text[:400], x=_MARGIN, y=height - 16)
    return root


def _overview(b: Build, n_boxes: int):
    parts = sorted(b.parts, key=lambda p: ref_key(p.ref))
    used: dict = {}
    for c in b.cells:
        used[c.part_ref] = used.get(c.part_ref, 0) + 1
    for k in b.contacts:
        used[k.part_ref] = used.get(k.part_ref, 0) + 1
    per_row = 12
    bw, bh = 96, 46
    rows = (len(parts) + per_row - 1) // per_row
    width = _MARGIN * 2 + per_row * (bw + 10)
    height = 90 + rows * (bh + 10) + 20
    root = _root(width, height, f"{b.design} on {b.target.name} (overview)")
    _el(root, "text", f"{b.design} on {b.target.name}: {len(parts)} parts", x=_MARGIN, y=22, font_size=15,
        font_weight="bold")
    _el(root, "text", f"{n_boxes} cells are too many to draw one by one (the limit is {MAX_CELLS}); "
                      f"each box is a part with its slots in use. Every connection is in wiring.txt.",
        x=_MARGIN, y=40, fill="#555555")
    g = _el(root, "g", id="parts")
    for i, p in enumerate(parts):
        pd = b.target.parts[p.part_id]
        avail = pd.relay.poles if pd.relay is not None else len(pd.slots)
        x = _MARGIN + (i % per_row) * (bw + 10)
        y = 60 + (i // per_row) * (bh + 10)
        _el(g, "rect", x=x, y=y, width=bw, height=bh, rx=4, fill="#fbfbf4", stroke="#333333")
        _el(g, "text", p.ref, x=x + bw / 2, y=y + 15, text_anchor="middle", font_weight="bold")
        _el(g, "text", p.part_id, x=x + bw / 2, y=y + 28, text_anchor="middle", font_size="9")
        _el(g, "text", f"{used.get(p.ref, 0)}/{avail} used", x=x + bw / 2, y=y + 40, text_anchor="middle",
            font_size="9", fill="#555555")
    return root


def svg_text(b: Build, analysis: Analysis, declaration: bool = True) -> str:
    """The drawing as SVG text (with an XML declaration unless it is to be inlined in HTML)."""
    root = svg_element(b, analysis)
    body = etree.tostring(root, pretty_print=True, encoding="unicode")
    return ('<?xml version="1.0" encoding="UTF-8"?>\n' + body) if declaration else body


def write_build(b: Build, analysis: Analysis, path, protect=(), **options) -> list:
    """Write ``schematic.svg`` of ``b`` to ``path`` (atomically)."""
    return [atomic_write(path, svg_text(b, analysis), protect=protect)]


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
    width = _MARGIN * 2 + label_w + plot_w + 110
    height = 50 + sum(28 + len(bars) * (bar_h + 4) + panel_gap for _, _, bars in groups)
    root = _root(width, height, title)
    _el(root, "text", title, x=_MARGIN, y=24, font_size=15, font_weight="bold")
    y = 50
    for label, unit, bars in groups:
        values = [v for _, v, _ in bars if v is not None and v > 0]
        vmax = max(values, default=0)
        vmin = min(values, default=0)
        log = vmin > 0 and vmax / vmin > 1000  # ns beside ms: a linear bar would hide the small ones
        scale_note = ", log scale" if log else ""
        _el(root, "text", label + (f" ({unit}{scale_note})" if unit else (f" ({scale_note[2:]})" if log else "")),
            x=_MARGIN, y=y + 12, font_weight="bold")
        y += 22
        for name, value, text in bars:
            colour = _PALETTE[names.index(name) % len(_PALETTE)]
            _el(root, "text", name, x=_MARGIN + label_w - 8, y=y + 13, text_anchor="end")
            if value is None:
                _el(root, "text", text or "-", x=_MARGIN + label_w, y=y + 13, fill="#888888")
            else:
                if value <= 0 or vmax <= 0:
                    w = 0.0
                elif log:
                    span = math.log10(vmax) - math.log10(vmin) + 1
                    w = plot_w * (math.log10(value) - math.log10(vmin) + 1) / span
                else:
                    w = max(1.0, plot_w * value / vmax)
                r = _el(root, "rect", x=_MARGIN + label_w, y=y, width=round(w, 2), height=bar_h, fill=colour)
                _el(r, "title", f"{name}: {text}")
                _el(root, "text", text, x=_MARGIN + label_w + w + 6, y=y + 13)
            y += bar_h + 4
        y += panel_gap
    body = etree.tostring(root, pretty_print=True, encoding="unicode")
    return '<?xml version="1.0" encoding="UTF-8"?>\n' + body
