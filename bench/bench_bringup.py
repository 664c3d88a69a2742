"""Bring-up lists (issue 21): settings against faults and input combinations, time, coverage.

Designs: ISCAS-85 c17 (published), ariths-gen ripple-carry adders and array
multipliers (an independent generator) up to a build of about 1,000 parts,
on nand-only and gates-74.  The fit (with its proof) is timed apart from the
bring-up (fault list, test generation, compaction, probe points, dictionary),
which runs on one core.

Sequential rows: gate builds with flip-flop chips -- the textbook 4-bit
counter, ISCAS-89 s27 (published .bench, translated by the tests' reader),
s208 and s344, MCNC dk27, beecount and mm4a -- with the sequences, their clock
steps in all, the faults detected, those no sequence within the bound detects,
and the coverage of the faults detectable within the bound and of all
classes.  Rows on nand-only and nor-only have their flip-flops built of gates
(random sequences from power-on only: the rest unresolved).  Block rows:
msi-74 builds with adder and comparator chips.

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

from read.test_published import bench_to_blif, read_bench  # noqa: E402

import generated  # noqa: E402
from mapper import flow  # noqa: E402
from mapper.bringup.plan import make_plan  # noqa: E402

DESIGNS = [("c17", "nand-only"), ("rca:8", "gates-74"), ("c17", "relay-spdt"), ("rca:4", "relay-dpdt"),
           ("rca:8", "msi-74"), ("cmp2", "msi-74"),
           ("rca:32", "nand-only"), ("arr:8", "gates-74"), ("arr:13", "nand-only"), ("arr:20", "nand-only")]
SEQUENTIAL = [("counter4", "gates-74"), ("s27", "gates-74ls"), ("dk27", "gates-74"), ("beecount", "gates-74ls"),
              ("dk27", "msi-74"), ("s27", "nand-only"), ("s27", "nor-only"), ("beecount", "nand-only"),
              ("s208", "gates-74ls"), ("s344", "gates-74ls"), ("mm4a", "gates-74"), ("s344", "nand-only")]


def _path(name: str, tmp: str) -> Path:
    if name == "c17":
        return ROOT / "tests" / "data" / "c17.blif"
    if name in ("cmp2", "counter4"):
        return ROOT / "tests" / "data" / "textbook" / f"{name}.blif"
    if name == "s27":
        path = Path(tmp) / "s27.blif"
        path.write_text(bench_to_blif(read_bench((ROOT / "tests/data/published/s27.bench").read_text()), "s27"))
        return path
    if ":" not in name:
        return ROOT / "tests" / "data" / "published" / f"{name}.blif"
    kind, width = name.split(":")
    return generated.make(kind, int(width), tmp)


def combinational(designs: list, tmp: str) -> None:
    print(f"{'design':<10}{'target':<11}{'inputs':>7}{'parts':>7}{'faults':>8}{'classes':>8}{'settings':>9}"
          f"{'detected':>10}{'undet':>7}{'unres':>7}{'cover %':>9}{'fit s':>8}{'bring-up s':>11}")
    for name, target in designs:
        t0 = time.perf_counter()
        r = flow.build(str(_path(name, tmp)), target)
        t1 = time.perf_counter()
        plan = make_plan(r.build)
        t2 = time.perf_counter()
        pct = 100.0 * len(plan.detected) / plan.detectable if plan.detectable else 100.0
        print(f"{name:<10}{target:<11}{len(plan.inputs):>7}{len(r.build.parts):>7}{plan.total:>8}"
              f"{plan.classes:>8}{len(plan.settings):>9}{len(plan.detected):>10}{len(plan.undetectable):>7}"
              f"{len(plan.unresolved):>7}{pct:>9.1f}{t1 - t0:>8.1f}{t2 - t1:>11.1f}", flush=True)
        print(f"{'':<10}input combinations 2^{len(plan.inputs)}; " + "; ".join(plan.methods), flush=True)


def sequential(designs: list, tmp: str) -> None:
    print(f"\n{'design':<10}{'target':<11}{'ins':>4}{'ffs':>4}{'parts':>6}{'faults':>7}{'classes':>8}{'seqs':>5}"
          f"{'steps':>6}{'bound':>6}{'detected':>9}{'beyond':>7}{'undet':>6}{'unres':>6}{'cover %':>8}"
          f"{'of all %':>9}{'fit s':>7}{'bring-up s':>11}")
    for name, target in designs:
        t0 = time.perf_counter()
        r = flow.build(str(_path(name, tmp)), target)
        t1 = time.perf_counter()
        plan = make_plan(r.build)
        t2 = time.perf_counter()
        pct = 100.0 * len(plan.detected) / plan.detectable if plan.detectable else 100.0
        every = 100.0 * len(plan.detected) / plan.classes if plan.classes else 100.0
        flops = len(plan.start) or len(r.build.storage_groups)
        print(f"{name:<10}{target:<11}{len(plan.inputs):>4}{flops:>4}{len(r.build.parts):>6}"
              f"{plan.total:>7}{plan.classes:>8}{len(plan.sequences):>5}{len(plan.steps):>6}{plan.bound:>6}"
              f"{len(plan.detected):>9}{len(plan.beyond):>7}{len(plan.undetectable):>6}{len(plan.unresolved):>6}"
              f"{pct:>8.1f}{every:>9.1f}{t1 - t0:>7.1f}{t2 - t1:>11.1f}", flush=True)
        print(f"{'':<10}" + "; ".join(plan.methods), flush=True)


def main(argv=None):
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true", help="skip the biggest designs")
    args = ap.parse_args(argv)
    designs = DESIGNS[:-1] if args.quick else DESIGNS
    seq = SEQUENTIAL[:-3] if args.quick else SEQUENTIAL
    with tempfile.TemporaryDirectory() as tmp:
        sequential(seq, tmp)
        combinational(designs, tmp)


if __name__ == "__main__":
    main()
