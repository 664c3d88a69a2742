"""Bring-up lists (issue 21): settings against faults and input combinations, time, coverage.

Designs: ISCAS-85 c17 (published), ariths-gen ripple-carry adders and array
multipliers (an independent generator) up to a build of about 1,000 parts,
on nand-only and gates-74.  The fit (with its proof) is timed apart from the
bring-up (fault list, test generation, compaction, probe points, dictionary),
which runs on one core.

Run: ``.venv/bin/python bench/bench_bringup.py [--quick]``
"""
from __future__ import annotations

import argparse
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "tests"))

import generated  # noqa: E402
from mapper import flow  # noqa: E402
from mapper.bringup.plan import make_plan  # noqa: E402

DESIGNS = [("c17", "nand-only"), ("rca:8", "gates-74"), ("c17", "relay-spdt"), ("rca:4", "relay-dpdt"),
           ("rca:32", "nand-only"), ("arr:8", "gates-74"), ("arr:13", "nand-only"), ("arr:20", "nand-only")]


def main(argv=None):
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true", help="skip the biggest design")
    args = ap.parse_args(argv)
    designs = DESIGNS[:-1] if args.quick else DESIGNS
    print(f"{'design':<10}{'target':<11}{'inputs':>7}{'parts':>7}{'faults':>8}{'classes':>8}{'settings':>9}"
          f"{'detected':>10}{'undet':>7}{'unres':>7}{'cover %':>9}{'fit s':>8}{'bring-up s':>11}")
    with tempfile.TemporaryDirectory() as tmp:
        for name, target in designs:
            if name == "c17":
                path = ROOT / "tests" / "data" / "c17.blif"
            else:
                kind, width = name.split(":")
                path = generated.make(kind, int(width), tmp)
            t0 = time.perf_counter()
            r = flow.build(str(path), target)
            t1 = time.perf_counter()
            plan = make_plan(r.build)
            t2 = time.perf_counter()
            pct = 100.0 * len(plan.detected) / plan.detectable if plan.detectable else 100.0
            print(f"{name:<10}{target:<11}{len(plan.inputs):>7}{len(r.build.parts):>7}{plan.total:>8}"
                  f"{plan.classes:>8}{len(plan.settings):>9}{len(plan.detected):>10}{len(plan.undetectable):>7}"
                  f"{len(plan.unresolved):>7}{pct:>9.1f}{t1 - t0:>8.1f}{t2 - t1:>11.1f}", flush=True)
            print(f"{'':<10}input combinations 2^{len(plan.inputs)}; " + "; ".join(plan.methods), flush=True)


if __name__ == "__main__":
    main()
