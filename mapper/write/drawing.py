"""What every drawing shares: SVG elements, the house colours, text widths, paper sizes.

Colours
-------
The drawings use ink on paper, with a light tint for symbol bodies, so a
schematic prints in black and white.  Where colour carries meaning (bars
of a chart, wire roles on a board) it comes from :data:`PALETTE`, a set of
our own chosen so that neighbouring entries differ both in hue along the
blue-orange axis (which the common red-green colour blindnesses keep) and
in lightness, so that a greyscale print still tells them apart: the
relative luminances (WCAG 2.1 formula) of the entries are at least
:data:`MIN_STEP` apart from each other.
"""
from __future__ import annotations

from lxml import etree

__all__ = ["SVG_NS", "INK", "PAPER", "TINT", "PALETTE", "MIN_STEP", "el", "svg_root", "text_width",
           "luminance", "PAGE_W", "PAGE_H", "PAGE_MM"]

SVG_NS = "http://www.w3.org/2000/svg"
INK = "#1a1a1a"
PAPER = "#ffffff"
TINT = "#f3f1e8"
#: our own palette, darkest first: navy, rust, mid blue, amber, sky, sand (hue alternates blue/orange)
PALETTE = ("#1b2f5b", "#a24a12", "#4a7fc9", "#e0952a", "#a9cdef", "#f6e7b8")
#: least difference of relative luminance between any two palette entries
MIN_STEP = 0.08

#: one drawing page in drawing units (100 units to the inch): 266.7 mm × 193 mm, which fits a
#: landscape A4 sheet (297 × 210 mm) and a landscape Letter sheet (279.4 × 215.9 mm) with margins
PAGE_W, PAGE_H = 1050, 760
PAGE_MM = (266.7, 193.04)


def el(parent, tag, text=None, **attrs):
    """A child element of ``parent`` in the SVG namespace; ``font_size`` becomes ``font-size``."""
    e = etree.SubElement(parent, f"{{{SVG_NS}}}{tag}",
                         {k.replace("_", "-") if not k.startswith("data") else k.replace("_", "-"): str(v)
                          for k, v in attrs.items()})
    if text is not None:
        e.text = text
    return e


def svg_root(width, height, title, physical: tuple | None = None):
    """An ``<svg>`` root of ``width`` × ``height`` drawing units, white, with a title.

    ``physical`` ``(width_mm, height_mm)`` gives the printed size.
    """
    w, h = (f"{physical[0]}mm", f"{physical[1]}mm") if physical else (str(int(width)), str(int(height)))
    root = etree.Element(f"{{{SVG_NS}}}svg", nsmap={None: SVG_NS},  # type: ignore[dict-item]  # lxml-stubs
                         attrib={"width": w, "height": h, "viewBox": f"0 0 {int(width)} {int(height)}",
                                 "font-family": "DejaVu Sans, Arial, Helvetica, sans-serif",
                                 "font-size": "11"})
    el(root, "title", title)
    el(root, "rect", x=0, y=0, width=int(width), height=int(height), fill=PAPER)
    return root


#: average advance of a character, in em, of the sans-serif faces named above (generous)
_EM = 0.6


def text_width(text: str, size: float) -> float:
    """Width of ``text`` at ``size`` drawing units, estimated generously (no font is measured)."""
    return len(text) * size * _EM


def luminance(colour: str) -> float:
    """Relative luminance of ``#rrggbb`` (WCAG 2.1, from the sRGB transfer function)."""
    def lin(c):
        c /= 255
        return c / 12.92 if c <= 0.04045 else ((c + 0.055) / 1.055) ** 2.4
    r, g, b = (int(colour[i:i + 2], 16) for i in (1, 3, 5))
    return 0.2126 * lin(r) + 0.7152 * lin(g) + 0.0722 * lin(b)
