"""The build report (``report.html``): one self-contained page.

Summary, cautions, the ordering list, the schematic (each page its own
printed sheet), the board with its numbered wires to tick off, delays
(worst path and arrival per output), glitches, the wiring by net and pin
by pin, and notes.  No scripts, no fonts or images from elsewhere, no
scroll boxes: the page opens offline and prints as it shows, drawings
scaled to the page width.  Layout: ``mapper/templates/report.html.j2``.
"""
from __future__ import annotations

import logging

from lxml import etree
from markupsafe import Markup

from .. import __version__
from ..analyze.results import Analysis, units_of
from ..build import Build
from ..place import Plan, plan_for
from .board import board_svg
from .files import atomic_write
from .layout import render
from .parts import order_rows
from .svg import page_elements
from .wiring import board_data, wiring

__all__ = ["report_text", "write_build"]

log = logging.getLogger(__name__)


def report_text(b: Build, analysis: Analysis, plan: Plan | None = None, shapes: str = "distinctive",
                sockets: bool = False, spares=None, copies: int = 1) -> str:
    """The report page of ``b`` as HTML text (``plan``: the placed board; default the default board)."""
    plan = plan if plan is not None else plan_for(b)
    s = analysis.summary(b)
    timing = analysis.figures(b)
    outputs = []
    for o, v in (timing.get("outputs") or {}).items():
        best, worst = (v + [None, None])[:2] if isinstance(v, list) else (None, v)
        outputs.append({"output": o, "best_s": best, "worst_s": worst})
    path = []
    for step in timing.get("critical_path") or []:
        where = step.get("part", "")
        if step.get("section") is not None:
            where += f", section {step['section']}"
        elif "pole" in step:
            where += f", pole {step['pole']}"
        pins = ""
        if "from_pin_number" in step:
            pins = f"{step['from_pin_number']} → {step.get('to_pin_number', '')}"
        path.append({"where": where, "what": step.get("cell") or (f"coil {step['coil']}" if "coil" in step else ""),
                     "pins": pins, "net": step.get("net", ""), "arrival_s": step.get("arrival_s")})
    figures = []
    for key, label in (("delay_s", "worst path, maximum delays"), ("delay_typ_s", "worst path, typical delays"),
                       ("levels", "logic levels on the worst path"),
                       ("clock_max_hz", "safe clock rate, at most"),
                       ("clock_period_min_s", "shortest clock period"),
                       ("clock_high_min_s", "clock high at least"), ("clock_low_min_s", "clock low at least"),
                       ("hold_slack_s", "smallest hold margin"),
                       ("supply_current_a", "supply current, worst case"),
                       ("supply_current_typ_a", "supply current, typical"),
                       ("supply_current_static_a", "supply current, nothing switching"),
                       ("coil_current_a", "coil current, every coil energized"),
                       ("operate_s", "relay operate time"), ("release_s", "relay release time"),
                       ("bounce_s", "contact bounce")):
        if timing.get(key) is not None:
            unit = {"_s": "s", "_a": "A", "hz": "Hz"}.get(key[-2:], "")
            figures.append({"label": label, "value": timing[key], "unit": unit})
    glitches = []
    for h in (timing.get("hazards") or [])[:50]:
        when = h.get("when") or []
        widths = h.get("width_s") or []
        reaches = ", ".join(f"the {w['role']} of {w['part']}" + (f" (pin {w['pin_number']})" if w.get("pin_number")
                                                                  else "") for w in h.get("reaches") or [])
        glitches.append({"output": h.get("output", ""), "kind": h.get("kind", ""),
                         "inputs": ", ".join(h.get("directions") or h.get("inputs_changed") or []),
                         "when": " ".join(f"{k}={v}" for k, v in (when[0] if when else {}).items())
                         or "in any state", "width": widths, "reaches": reaches})
    sheets = [Markup(etree.tostring(e, encoding="unicode")) for e in page_elements(b, analysis, shapes)]
    return render("report.html.j2", b=b, s=s, units=units_of(s), version=__version__,
                  order=order_rows(b, copies, sockets, spares),
                  w=wiring(b, analysis), sheets=sheets, board=board_data(b, plan),
                  board_svg=Markup(board_svg(b, analysis, plan, declaration=False)), outputs=outputs, path=path,
                  figures=figures, glitches=glitches, glitches_total=timing.get("hazards_total", len(glitches)),
                  glitch_errors=timing.get("glitch_errors", 0), supply_basis=timing.get("supply_basis", ""))


def write_build(b: Build, analysis: Analysis, path, protect=(), plan: Plan | None = None, shapes: str = "distinctive",
                sockets: bool = False, spares=None, copies: int = 1, **options) -> list:
    """Write ``report.html`` of ``b`` to ``path`` (atomically)."""
    text = report_text(b, analysis, plan, shapes, sockets, spares, copies)
    return [atomic_write(path, text, protect=protect)]
