"""Long fuzzing runs of netfit's readers and loaders (tests/fuzz/engine.py): totals per format.

Prints, per format, the inputs tried, how many were read and how many refused with a positioned
error, the defects (tracebacks, processor-time or memory overruns, workers that died, errors without
a position, round trips that changed a design), and inputs per second.  Each defect is listed once
per kind and place with the number of its input (``make_input(format, seed, case)`` makes it again)
and, with ``--save DIR``, written to ``DIR/<format>-<case>.in`` for the regression corpus.

Run: ``.venv/bin/python bench/bench_fuzz.py [--count 100000] [--jobs N] [--seed S] [--formats blif,catalog]``
(``--quick``: 2,000 per format).
"""
from __future__ import annotations

import argparse
import os
import platform
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "tests"))

from fuzz import engine  # noqa: E402


def main(argv: list) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--count", type=int, default=100_000, help="inputs per format (default 100000)")
    ap.add_argument("--jobs", type=int, default=os.cpu_count() or 1, help="worker processes")
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--formats", default=",".join(engine.FORMATS), help="comma-separated formats")
    ap.add_argument("--cpu", type=float, default=5.0, help="processor seconds per input (default 5)")
    ap.add_argument("--save", type=Path, help="folder for the inputs of the defects found")
    ap.add_argument("--quick", action="store_true", help="2,000 inputs per format")
    args = ap.parse_args(argv)
    count = 2000 if args.quick else args.count
    print(f"machine: {platform.machine()}, {os.cpu_count()} processors, Python {platform.python_version()}; "
          f"{args.jobs} workers; limits per input: {args.cpu:g} s of processor time, "
          f"{engine.MEMORY_BYTES // 2**20} MiB of address space; seed {args.seed}")
    print(f"{'format':<9}{'tried':>9}{'read':>9}{'refused':>9}{'defects':>9}{'inputs/s':>10}")
    all_defects = []
    for fmt in args.formats.split(","):
        t = engine.run(fmt, count, seed=args.seed, jobs=args.jobs, cpu_seconds=args.cpu)
        rate = t.tried / t.seconds if t.seconds else 0.0
        print(f"{fmt:<9}{t.tried:>9}{t.read:>9}{t.refused:>9}{len(t.defects):>9}{rate:>10.0f}", flush=True)
        all_defects += t.defects
    seen = set()
    for d in all_defects:
        key = (d.fmt, d.kind, d.detail[:100])
        if key in seen:
            continue
        seen.add(key)
        print(f"  {d.fmt} case {d.case}: {d.kind}: {d.detail}")
        if args.save:
            args.save.mkdir(parents=True, exist_ok=True)
            (args.save / f"{d.fmt}-{d.case}.in").write_bytes(d.data)
    print(f"defects: {len(all_defects)} ({len(seen)} distinct)")
    return 1 if all_defects else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
