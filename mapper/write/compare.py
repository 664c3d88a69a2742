"""Layouts of ``netfit compare``: the side-by-side table and the bar chart.

The data comes from :func:`mapper.flow.compare`: one build summary per
target, or an error for a target the design cannot be built on.  The table
has one column per target and one row per figure (parts, support parts,
sections (chips) or poles (relays) in use and spare, cost, worst delay, supply current, safe clock rate, glitches
found and how many reach storage, proof); a target that
failed shows its error, wrapped, in its own column.
"""
from __future__ import annotations

import textwrap

from ..analyze.results import units_of
from ..units import si
from .layout import money, render
from .svg import bar_chart

__all__ = ["ROWS", "compare_rows", "compare_table", "compare_svg"]

def _count(n: int, plural: str) -> str:
    """``1 section``, ``2 sections``."""
    return f"{n} {plural[:-1] if n == 1 else plural}"


#: (label, function of a summary -> text)
ROWS = (
    ("parts", lambda s: str(s["parts_total"])),
    ("support parts", lambda s: str(sum(s["support_parts"].values()))),
    ("in use", lambda s: "{1}/{2} {0}".format(*units_of(s))),
    ("spare", lambda s: _count(units_of(s)[3], units_of(s)[0])),
    ("cost", lambda s: f"{money(s['cost'])} {s['currency']}".strip()),
    ("worst delay", lambda s: si(s.get("delay_s"), "s")),
    ("supply current", lambda s: si(s.get("supply_current_a"), "A")),
    ("safe clock", lambda s: si(s.get("clock_max_hz"), "Hz") if s.get("clock_max_hz") else "-"),
    ("glitches", lambda s: str(s.get("hazards_total", 0))
        + (f" ({s['glitch_errors']} reach storage)" if s.get("glitch_errors") else "")),
    ("proof", lambda s: s["verified"]),
)

_ERR_WIDTH = 26


def compare_rows(data: dict) -> tuple[list, list]:
    """``(header, rows)`` of the table: header is ``["", target, ...]``; rows are lists of text cells,
    where a cell may hold several lines (a wrapped error)."""
    header = [""] + [t["target"] for t in data["targets"]]
    rows = []
    for label, fn in ROWS:
        row = [label]
        for t in data["targets"]:
            row.append("-" if "error" in t else fn(t))
        rows.append(row)
    if any("error" in t for t in data["targets"]):
        row = ["error"]
        for t in data["targets"]:
            row.append("\n".join(textwrap.wrap(t["error"], _ERR_WIDTH)) if "error" in t else "")
        rows.append(row)
    return header, rows


def compare_table(data: dict) -> str:
    """The comparison as an aligned text table (one column per target)."""
    header, rows = compare_rows(data)
    ncol = len(header)
    widths = [max(len(line) for r in [header] + rows for line in (r[i].split("\n") or [""]))
              for i in range(ncol)]
    lines = []
    for r in [header] + rows:
        cells = [c.split("\n") for c in r]
        height = max(len(c) for c in cells)
        for k in range(height):
            parts = []
            for i, c in enumerate(cells):
                text = c[k] if k < len(c) else ""
                parts.append(text.ljust(widths[i]) if i == 0 else text.ljust(widths[i]))
            lines.append("  ".join(parts).rstrip())
    return render("compare.txt.j2", design=data["design"], lines=lines,
                  failed=[t for t in data["targets"] if "error" in t])


def compare_svg(data: dict) -> str:
    """The comparison as an SVG bar chart: one panel per figure, one bar per target."""
    def bars(key, fmt):
        out = []
        for t in data["targets"]:
            if "error" in t:
                out.append((t["target"], None, "could not be built"))
            else:
                v = t.get(key)
                out.append((t["target"], v, fmt(v) if v is not None else "-"))
        return out

    cur = next((t.get("currency") for t in data["targets"] if t.get("currency")), "")
    groups = [
        ("parts", "", bars("parts_total", lambda v: str(v))),
        ("support parts", "", [(n, v, str(v) if v is not None else t) for n, v, t in
                               [(t["target"], (sum(t["support_parts"].values()) if "error" not in t else None),
                                 "could not be built") for t in data["targets"]]]),
        ("spare sections or poles", "", [(t["target"], units_of(t)[3], str(units_of(t)[3]))
                                         if "error" not in t else (t["target"], None, "could not be built")
                                         for t in data["targets"]]),
        ("cost", cur, bars("cost", lambda v: f"{money(v)} {cur}".strip())),
        ("worst delay", "", bars("delay_s", lambda v: si(v, "s"))),
        ("supply current", "", bars("supply_current_a", lambda v: si(v, "A"))),
    ]
    return bar_chart(f"{data['design']}: targets compared", groups)
