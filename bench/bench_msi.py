"""Medium-scale chips (issue 20): whole parts on msi-74 against the design's gates plugged in directly.

Designs: adders (ripple-carry, carry-lookahead, Kogge-Stone, Brent-Kung,
Sklansky, carry-select, PG ripple; 4, 8 and 16 bits) and comparators from
the independent generator library ariths-gen; textbook circuits
(tests/data/textbook: 4-way multiplexer tree, 2-bit comparator, 4-bit
counter, 7-segment decoder, full and half adder).

Columns: *plug* is the direct plug-in of the design's gates on gates-74
(each gate into the chip that carries it, packed per part type; the fair
baseline's "gate for gate", bench/baseline.py); *gates-74* the proven netfit
build without medium-scale chips; *msi-74* the proven build that may use
them; *x plug* the msi-74 parts over the plug-in; *MSI* the medium-scale
chips in the msi-74 build.  The goal of the issue: at most 0.5 x plug on
the arithmetic set, and never more parts than gates-74.

Run: ``.venv/bin/python bench/bench_msi.py [--quick] [--json]``
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
sys.path.insert(0, str(ROOT / "bench"))

from baseline import fair_baseline  # noqa: E402

import generated  # noqa: E402
from mapper import flow  # noqa: E402
from mapper.read import read_design  # noqa: E402

ADDERS = [(k, w) for k in ("rca", "cla", "ks", "bk", "sk", "csel", "pg") for w in (4, 8, 16)]
COMPARATORS = [("lt", 8), ("gte", 16), ("gt", 12)]
TEXTBOOK = ["mux4", "cmp2", "counter4", "seg7", "full_adder", "half_adder"]
QUICK = [("rca", 8), ("cla", 8), ("ks", 16), ("lt", 8)]


def designs(folder, quick=False):
    """``(name, path, arithmetic?)`` of every design of the table."""
    for kind, width in QUICK if quick else ADDERS + COMPARATORS:
        yield f"{kind}{width}", generated.make(kind, width, folder), kind in generated.ADDERS
    if not quick:
        for name in TEXTBOOK:
            yield name, ROOT / "tests" / "data" / "textbook" / f"{name}.blif", False


def measure(design, gates, msi) -> dict:
    row: dict = {"plug_parts": fair_baseline(design, gates)["plug"]}
    for key, target in (("gates74", gates), ("msi74", msi)):
        t0 = time.perf_counter()
        b, a = flow.fit(design, target)
        row[f"{key}_s"] = time.perf_counter() - t0
        row[f"{key}_parts"] = len(b.parts)
        row[f"{key}_proof"] = a.proof.status
        if key == "msi74":   # the medium-scale parts: those of msi-74 that gates-74 does not list
            row["msi_chips"] = sum(1 for p in b.parts if p.part_id not in gates.parts)
    row["ratio_to_plug"] = row["msi74_parts"] / row["plug_parts"]
    return row


def main(argv=None):
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true")
    ap.add_argument("--json", action="store_true")
    args = ap.parse_args(argv)
    gates, msi = flow.load_target("gates-74"), flow.load_target("msi-74")
    rows = []
    with tempfile.TemporaryDirectory() as tmp:
        for name, path, arith in designs(tmp, args.quick):
            d = read_design(path)
            row = {"design": name, "arithmetic": arith, **measure(d, gates, msi)}
            print(f"{name}: {row['msi74_parts']} / plug {row['plug_parts']}", file=sys.stderr, flush=True)
            rows.append(row)
    if args.json:
        print(json.dumps(rows, indent=1))
        return
    head = f"{'design':<10}{'plug':>6}{'gates-74':>10}{'msi-74':>8}{'MSI':>5}{'x plug':>8}{'s':>7}  proof"
    print(head)
    print("-" * len(head))
    for r in rows:
        proof = "proved" if r["gates74_proof"] == r["msi74_proof"] == "proved" else "NOT PROVED"
        print(f"{r['design']:<10}{r['plug_parts']:>6}{r['gates74_parts']:>10}{r['msi74_parts']:>8}"
              f"{r['msi_chips']:>5}{r['ratio_to_plug']:>8.2f}{r['msi74_s']:>7.1f}  {proof}")
    print("-" * len(head))
    arith = [r for r in rows if r["arithmetic"]]
    if arith:
        mean = sum(r["ratio_to_plug"] for r in arith) / len(arith)
        over = [r["design"] for r in arith if r["ratio_to_plug"] > 0.5]
        print(f"adders: mean msi-74 parts / plug-in {mean:.3f}; over 0.5: {', '.join(over) or 'none'}")
    worse = [r["design"] for r in rows if r["msi74_parts"] > r["gates74_parts"]]
    print(f"designs with more parts on msi-74 than on gates-74: {', '.join(worse) or 'none'}")


if __name__ == "__main__":
    main()
