"""Build speed on big designs: seconds per stage and peak memory (issue: the mapper).

Designs: ariths-gen array multipliers (an independent generator) of about
1k, 10k and 100k gates, built on nand-only with the default effort, proof
included.  Prints one row per design: gates, read s, fit s, timing and
glitch s, proof s, total s, peak RSS, parts.

Run: ``.venv/bin/python bench/bench_scale.py [--max-gates N]``
"""
from __future__ import annotations

import argparse
import resource
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "tests"))

import generated  # noqa: E402
from mapper import flow  # noqa: E402
from mapper.read import read_design  # noqa: E402

SIZES = [("arr", 13), ("arr", 41), ("arr", 129)]  # about 1k, 10k and 100k gates


def main(argv=None):
    ap = argparse.ArgumentParser()
    ap.add_argument("--max-gates", type=int, default=120_000)
    ap.add_argument("--target", default="nand-only")
    args = ap.parse_args(argv)
    target = flow.load_target(args.target)
    print(f"{'design':<10}{'gates':>8}{'read s':>8}{'fit s':>8}{'total s':>9}{'peak MB':>9}{'parts':>8}  proof")
    with tempfile.TemporaryDirectory() as tmp:
        for kind, width in SIZES:
            path = generated.make(kind, width, tmp)
            t0 = time.perf_counter()
            d = read_design(path)
            t1 = time.perf_counter()
            gates = len(d.nodes) - len(d.inputs)
            if gates > args.max_gates:
                break
            b, a = flow.fit(d, target)
            t2 = time.perf_counter()
            peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
            print(f"{kind}{width:<7}{gates:>8}{t1 - t0:>8.1f}{t2 - t1:>8.1f}{t2 - t0:>9.1f}{peak:>9.0f}"
                  f"{len(b.parts):>8}  {a.verified}", flush=True)
            stages = a.stage_s
            if stages:
                print("          " + ", ".join(f"{k} {v:.1f}s" for k, v in stages.items()), flush=True)


if __name__ == "__main__":
    main()
