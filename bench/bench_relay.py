"""Relays of netfit's relay builds against gate-by-gate relay templates (issue 6).

Baseline (``template_relays``), the textbook way of building logic from relays
gate by gate (common practice): every 2-input gate is two relays, one per
input (series make contacts for AND, parallel for OR, changeovers for XOR,
break contacts for the inverted forms); an inverter is one relay; a buffer
or constant none.  Wider gates are trees of 2-input gates; any other cover
is two-level logic from an irredundant cover (an inverter per complemented input, a tree of AND2 per
product term, a tree of OR2 for the sum, an inverter when the cover lists
the OFF-set).  A latch is a 2-input gate (data and enable): two relays;
edge-triggered storage is two latches: four relays.

Designs: ripple-carry adders of 1–8 bits and comparators from the
independent generator library ariths-gen (``tests/generated.py``), the
7-segment decoder and the 4-bit counter of ``tests/data/textbook``.  Every
netfit build is proven equal to its design by ``flow.fit`` before it is
counted.  Printed per design and target: relays (and the baseline's), the
saving, poles used/available, coil current with every coil energized, worst
delay, seconds.

Run: ``.venv/bin/python bench/bench_relay.py [--quick] [--json]``
"""
from __future__ import annotations

import argparse
import json
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "tests"))

import generated  # noqa: E402
from mapper import flow  # noqa: E402
from mapper.netlist import Logic, Storage, describe_function  # noqa: E402
from mapper.read import read_design  # noqa: E402

__all__ = ["template_relays", "designs", "main"]

_TWO_INPUT = {"and2", "or2", "nand2", "nor2", "xor2", "xnor2"}


def _gates2(k: int) -> int:
    """2-input gates in a tree over ``k`` inputs."""
    return max(0, k - 1)


def template_relays(netlist) -> int:
    """Relays of the gate-by-gate templates (see the module docstring)."""
    total = 0
    for node in netlist.nodes.values():
        if isinstance(node, Storage):
            total += 4 if node.kind in ("re", "fe") else 2
            continue
        if not isinstance(node, Logic):
            continue
        kind = describe_function(node.func)
        k = node.func.n
        if kind in ("buf", "const"):
            continue
        if kind == "inv":
            total += 1
        elif kind in _TWO_INPUT:
            total += 2
        elif kind.rstrip("0123456789") in ("and", "or", "nand", "nor"):
            total += 2 * _gates2(k)
        else:
            func = node.func
            if func.has_table:   # a designer would minimize first: an irredundant cover
                func = type(func).from_table(k, func.table())
            cubes, phase = func.cover()
            inverted = {j for c in cubes for j, ch in enumerate(c) if ch == "0"}
            total += len(inverted)
            for c in cubes:
                total += 2 * _gates2(sum(1 for ch in c if ch != "-"))
            total += 2 * _gates2(len(cubes))
            if not phase:
                total += 1
    return total


def designs(folder, quick=False):
    widths = (1, 2, 4) if quick else tuple(range(1, 9))
    for w in widths:
        yield f"rca{w}", generated.make("rca", w, folder)
    for w in ((4,) if quick else (4, 8)):
        yield f"lt{w}", generated.make("lt", w, folder)
    yield "seg7", ROOT / "tests" / "data" / "textbook" / "seg7.blif"
    yield "counter4", ROOT / "tests" / "data" / "textbook" / "counter4.blif"


def main(argv=None):
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true", help="small designs only")
    ap.add_argument("--json", action="store_true", help="print the rows as JSON")
    ap.add_argument("--targets", default="relay-spdt,relay-dpdt")
    args = ap.parse_args(argv)
    targets = [flow.load_target(t) for t in args.targets.split(",")]
    rows = []
    with tempfile.TemporaryDirectory() as tmp:
        for name, path in designs(tmp, args.quick):
            design = read_design(path)
            base = template_relays(design)
            for t in targets:
                t0 = time.perf_counter()
                b, a = flow.fit(design, t)
                secs = time.perf_counter() - t0
                s = a.summary(b)
                rows.append({
                    "design": name, "target": t.name, "inputs": len(design.inputs),
                    "storage": len(design.storage()), "template_relays": base,
                    "relays": s["parts_total"],
                    "saving": round(1 - s["parts_total"] / base, 3) if base else 0.0,
                    "poles_used": s.get("poles_used", 0), "poles_available": s.get("poles_available", 0),
                    "coil_current_a": s.get("coil_current_a", 0.0), "delay_s": s["delay_s"],
                    "levels": a.timing.levels, "verified": s["verified"],
                    "seconds": round(secs, 2),
                })
                if not args.json:
                    r = rows[-1]
                    if len(rows) == 1:
                        print(f"{'design':<10}{'target':<12}{'in':>4}{'ff':>4}{'templ':>7}{'relays':>8}"
                              f"{'saving':>8}{'poles':>10}{'coil mA':>9}{'delay ms':>10}{'lvl':>5}"
                              f"{'proof':>8}{'s':>7}")
                    print(f"{r['design']:<10}{r['target']:<12}{r['inputs']:>4}{r['storage']:>4}"
                          f"{r['template_relays']:>7}{r['relays']:>8}{r['saving'] * 100:>7.0f}%"
                          f"{str(r['poles_used']) + '/' + str(r['poles_available']):>10}"
                          f"{r['coil_current_a'] * 1000:>9.0f}{r['delay_s'] * 1000:>10.1f}{r['levels']:>5}"
                          f"{r['verified']:>8}{r['seconds']:>7.1f}", flush=True)
    if args.json:
        print(json.dumps(rows, indent=2))
    return rows


if __name__ == "__main__":
    main()
