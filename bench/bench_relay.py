"""Relay builds against the relays a careful builder would use gate by gate, and their bench figures.

Baseline (``template_relays``), the careful gate-by-gate relay build (common
practice of relay logic): AND2 and OR2 are one relay each (one input passed
through the other's make contact, or the rail through its make contact in
parallel with the other input); NAND2, NOR2, XOR2 and XNOR2 two relays; an
inverter one relay (a break contact from the rail); a buffer or constant
none.  Wider gates are trees of 2-input gates; any other cover is two-level
logic from an irredundant cover (an inverter per complemented input, a tree
of AND2 per product term, a tree of OR2 for the sum, an inverter when the
cover lists the OFF-set).  A latch is a relay holding itself through its own
make contact plus the enable's pole: two relays; edge-triggered storage is
two latches: four relays (the gate-by-gate templates race -- netfit's own
storage does not; see mapper/relay_logic.py -- so the storage rows compare a
race-free build with a racing template).

Designs: ripple-carry adders of 1-8 bits, comparators and array multipliers
from the independent generator library ariths-gen (``tests/generated.py``),
the 7-segment decoder, the full adder and the 4-bit counter of
``tests/data/textbook``, n-input parity, and a 4-bit shift register of our
own.  Every netfit build is proven equal to its design, and checked as wired
(every order of relay moves where feasible), by ``flow.fit`` before it is
counted.  Printed per design and target: relays (and the baseline's), the
saving, poles used/available, the switch-level defects found (order-dependent
settles, losses in a transfer gap, shorts, floating outputs -- all 0 or the
build is refused), how much of the behaviour was checked, the worst current
an input switch and a contact carry, the lowest coil voltage, worst delay,
seconds.

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
        elif kind in ("and2", "or2"):
            total += 1
        elif kind in _TWO_INPUT:
            total += 2
        elif kind.rstrip("0123456789") in ("and", "or"):
            total += _gates2(k)
        elif kind.rstrip("0123456789") in ("nand", "nor"):
            total += _gates2(k) + 1
        else:
            func = node.func
            if func.has_table:   # a designer would minimize first: an irredundant cover
                func = type(func).from_table(k, func.table())
            cubes, phase = func.cover()
            inverted = {j for c in cubes for j, ch in enumerate(c) if ch == "0"}
            total += len(inverted)
            for c in cubes:
                total += _gates2(sum(1 for ch in c if ch != "-"))
            total += _gates2(len(cubes))
            if not phase:
                total += 1
    return total


SHIFT4 = """# a 4-bit shift register of our own: bit i takes bit i-1 on each rising edge; d enters at bit 0
.model shift4
.inputs d clk
.outputs q0 q1 q2 q3
.latch d q0 re clk 0
.latch q0 q1 re clk 0
.latch q1 q2 re clk 0
.latch q2 q3 re clk 0
.end
"""


def _parity(n: int, folder) -> Path:
    ins = [f"x{i}" for i in range(n)]
    rows = [format(m, f"0{n}b") for m in range(1 << n) if bin(m).count("1") % 2]
    p = Path(folder) / f"par{n}.blif"
    p.write_text(f".model par{n}\n.inputs {' '.join(ins)}\n.outputs p\n.names {' '.join(ins)} p\n"
                 + "".join(f"{r} 1\n" for r in rows) + ".end\n")
    return p


def designs(folder, quick=False):
    widths = (1, 2, 4) if quick else tuple(range(1, 9))
    for w in widths:
        yield f"rca{w}", generated.make("rca", w, folder)
    for w in ((4,) if quick else (4, 8)):
        yield f"lt{w}", generated.make("lt", w, folder)
    for w in ((3,) if quick else (3, 4)):
        yield f"arr{w}", generated.make("arr", w, folder)
    for n in ((4,) if quick else (4, 6, 8)):
        yield f"par{n}", _parity(n, folder)
    yield "full_add", ROOT / "tests" / "data" / "textbook" / "full_adder.blif"
    yield "seg7", ROOT / "tests" / "data" / "textbook" / "seg7.blif"
    yield "counter4", ROOT / "tests" / "data" / "textbook" / "counter4.blif"
    shift = Path(folder) / "shift4.blif"
    shift.write_text(SHIFT4)
    yield "shift4", shift


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
                    "defects": a.wiring_check["defects"],
                    "order_dependent": len(a.wiring_check["order_dependent"]),
                    "checked": f"{a.wiring_check['changes_checked']}+{a.wiring_check['changes_sampled']}s"
                               f"/{a.wiring_check['changes_total']}",
                    "worst_input_a": max(a.wired["input_current_a"].values(), default=0.0),
                    "worst_contact_a": max((c["current_a"] for c in a.wired["worst_contacts"]), default=0.0),
                    "lowest_coil_v": min((c["volts"] for c in a.wired["lowest_coil_voltages"]), default=None),
                    "pull_downs_on_coils": sum(1 for x in b.support if x.role == "pull-down"
                                               and set(x.nets) & set(b.coils.values())),
                })
                if not args.json:
                    r = rows[-1]
                    if len(rows) == 1:
                        print(f"{'design':<10}{'target':<12}{'in':>4}{'ff':>4}{'templ':>7}{'relays':>8}"
                              f"{'saving':>8}{'poles':>10}{'defects':>8}{'checked':>14}{'in mA':>7}"
                              f"{'cont mA':>8}{'min V':>7}{'delay ms':>10}{'s':>7}")
                    low = f"{r['lowest_coil_v']:.2f}" if r["lowest_coil_v"] is not None else "-"
                    print(f"{r['design']:<10}{r['target']:<12}{r['inputs']:>4}{r['storage']:>4}"
                          f"{r['template_relays']:>7}{r['relays']:>8}{r['saving'] * 100:>7.0f}%"
                          f"{str(r['poles_used']) + '/' + str(r['poles_available']):>10}{r['defects']:>8}"
                          f"{r['checked']:>14}{r['worst_input_a'] * 1000:>7.0f}{r['worst_contact_a'] * 1000:>8.0f}"
                          f"{low:>7}{r['delay_s'] * 1000:>10.1f}{r['seconds']:>7.1f}", flush=True)
    if args.json:
        print(json.dumps(rows, indent=2))
    return rows


if __name__ == "__main__":
    main()
