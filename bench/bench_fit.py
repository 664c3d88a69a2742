"""Whole parts of netfit builds against the fair baseline (issue 17).

Designs: adders (ripple-carry, carry-lookahead), prefix adders (Kogge-Stone,
Brent-Kung, Sklansky), array and tree multipliers (Dadda, Wallace) and
comparators from the independent generator library ariths-gen; the ISCAS-85
c17 benchmark (Brglez and Fujiwara, 1985); textbook circuits
(tests/data/textbook: full and half adder, 4-way mux tree, 7-segment decoder,
2-bit comparator, 4-bit counter).

For each design and target the table prints the fair baseline
(bench/baseline.py): parts by hand (NAND2/NOR2 forms, double inversions
cancelled, gates shared), parts gate for gate (each gate in the chip that
carries it), and the parts of the proven netfit build with its ratio to the
better of the two.  Seconds are plain runs; ``--memory`` adds a second run
under tracemalloc for the peak memory (tracemalloc slows a run several times).

Run: ``.venv/bin/python bench/bench_fit.py [--quick] [--memory] [--json]``
"""
from __future__ import annotations

import argparse
import json
import sys
import tempfile
import time
import tracemalloc
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "tests"))
sys.path.insert(0, str(ROOT / "bench"))

from baseline import fair_baseline  # noqa: E402

import generated  # noqa: E402
from mapper import flow  # noqa: E402
from mapper.read import read_design  # noqa: E402

GENERATED = [("rca", 4), ("rca", 8), ("rca", 16), ("cla", 8), ("ks", 8), ("bk", 16), ("sk", 8),
             ("arr", 4), ("arr", 6), ("dadda", 8), ("wallace", 6), ("lt", 8), ("gte", 16)]
TEXTBOOK = ["full_adder", "half_adder", "mux4", "seg7", "cmp2", "counter4"]


def designs(folder, quick=False):
    gen = GENERATED[:6] if quick else GENERATED
    for kind, width in gen:
        yield f"{kind}{width}", generated.make(kind, width, folder)
    yield "c17", ROOT / "tests" / "data" / "c17.blif"
    for name in TEXTBOOK:
        yield name, ROOT / "tests" / "data" / "textbook" / f"{name}.blif"


def measure(d, t, memory: bool) -> dict:
    t0 = time.perf_counter()
    b, a = flow.fit(d, t)
    secs = time.perf_counter() - t0
    peak = None
    if memory:  # a second run: tracemalloc slows the first several times over
        tracemalloc.start()
        flow.fit(d, t)
        peak = tracemalloc.get_traced_memory()[1] / 2**20
        tracemalloc.stop()
    base = fair_baseline(d, t)
    return {"parts": len(b.parts), "base_hand": base["hand"], "base_plug": base["plug"],
            "base_best": base["best"], "ratio": len(b.parts) / base["best"], "fit_s": secs,
            "peak_mb": peak, "verified": a.verified}


def main(argv=None):
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true")
    ap.add_argument("--memory", action="store_true", help="peak memory from a second run under tracemalloc")
    ap.add_argument("--json", action="store_true")
    ap.add_argument("--targets", default="nand-only,nor-only,gates-74")
    args = ap.parse_args(argv)
    targets = [flow.load_target(t) for t in args.targets.split(",")]
    rows = []
    with tempfile.TemporaryDirectory() as tmp:
        for name, path in designs(tmp, args.quick):
            d = read_design(path)
            row = {"design": name, "nodes": len(d.nodes) - len(d.inputs), "targets": {}}
            for t in targets:
                row["targets"][t.name] = m = measure(d, t, args.memory)
                print(f"{name} {t.name} {m['parts']} / {m['base_best']} {m['fit_s']:.1f}s", file=sys.stderr,
                      flush=True)
            rows.append(row)
    if args.json:
        print(json.dumps(rows, indent=1))
        return
    head = f"{'design':<11}{'nodes':>6}"
    for t in targets:
        head += f" | {t.name[:9]:>9} {'hand':>5}{'plug':>5}{'parts':>6}{'ratio':>6}{'s':>6}"
        if args.memory:
            head += f"{'MB':>5}"
    print(head)
    print("-" * len(head))
    for r in rows:
        line = f"{r['design']:<11}{r['nodes']:>6}"
        for t in targets:
            m = r["targets"][t.name]
            hand = "-" if m["base_hand"] is None else m["base_hand"]
            plug = "-" if m["base_plug"] is None else m["base_plug"]
            line += f" | {'':>9} {hand:>5}{plug:>5}{m['parts']:>6}{m['ratio']:>6.2f}{m['fit_s']:>6.1f}"
            if args.memory:
                line += f"{m['peak_mb']:>5.0f}"
        print(line)
    print("-" * len(head))
    for t in targets:
        ms = [r["targets"][t.name] for r in rows]
        worse = [r["design"] for r in rows if r["targets"][t.name]["parts"] > r["targets"][t.name]["base_best"]]
        mean = sum(m["ratio"] for m in ms) / len(ms)
        print(f"{t.name:<10} mean parts ratio to the fair baseline {mean:.3f}   designs with more parts: "
              f"{len(worse)}{' (' + ', '.join(worse) + ')' if worse else ''}   "
              f"all proved: {all(m['verified'] == 'proved' for m in ms)}")


if __name__ == "__main__":
    main()
