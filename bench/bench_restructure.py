"""Whole parts before and after restructuring (issue 22), per design and target, with seconds.

"Before" is the part search without this issue's candidates
(``fit_gates(restructure=False)``: no restructured forms, no multiplexer
parts, no one-cell targets' builds); "after" is the part search as netfit
runs it.  Both builds are proved equal to the design as read (the prover of
``netfit verify``), and the table says so.

Designs, all published files as distributed (``tests/data/published``,
README there):

* two-level set -- MCNC (LGSynth91) combinational PLA files rd53, rd73,
  xor5, squar5, con1, 9sym; the figure of the issue is the mean of "after"
  over the mean of "before" on nand-only (at most 0.5), with no design worse;
* multi-level and sequential -- ISCAS-85 c17 (MCNC copy), MCNC i4, ISCAS-89
  s27 is left out (``.bench``), s208.1 and s344 (IWLS 2005 BLIF), MCNC dk27
  and beecount;
* rd84 -- not kept as a file here: written from its definition (the binary
  count of ones of 8 inputs, one cover row per minterm).

* ``--scale``: the time figure -- the ariths-gen 41 x 41 array multiplier
  (about 10k gates, the 10k design of ``bench/bench_scale.py``) on nand-only,
  before and after, to compare what restructuring adds with the mapping.

Run: ``.venv/bin/python bench/bench_restructure.py [--quick] [--scale] [--json]``
(``--quick``: the two-level set on nand-only and gates-74 only).
"""
from __future__ import annotations

import argparse
import json
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
DATA = ROOT / "tests" / "data" / "published"
sys.path.insert(0, str(ROOT / "tests"))

from mapper import flow  # noqa: E402
from mapper.fit.fit import fit_gates  # noqa: E402
from mapper.read import read_design  # noqa: E402

TWO_LEVEL = ["rd53", "rd73", "xor5", "squar5", "con1", "9sym"]
MULTI_LEVEL = ["C17_mcnc", "i4", "s208", "s344", "dk27", "beecount"]
TARGETS = ["nand-only", "nor-only", "gates-74"]


def rd84(folder: Path) -> Path:
    """rd84 from its definition: outputs ``s0..s3`` are the bits of the count of ones of ``x0..x7``."""
    n = 8
    lines = [".model rd84", ".inputs " + " ".join(f"x{i}" for i in range(n)),
             ".outputs " + " ".join(f"s{k}" for k in range(4))]
    for k in range(4):
        lines.append(".names " + " ".join(f"x{i}" for i in range(n)) + f" s{k}")
        lines += ["".join(str((m >> i) & 1) for i in range(n)) + " 1"
                  for m in range(1 << n) if (bin(m).count("1") >> k) & 1]
    path = folder / "rd84.blif"
    path.write_text("\n".join(lines + [".end"]) + "\n")
    return path


def measure(design, target, restructure: bool) -> tuple[int, float]:
    """Parts and seconds of one proved build."""
    t0 = time.perf_counter()
    build = fit_gates(design, target, restructure=restructure)
    secs = time.perf_counter() - t0
    proof = flow.prove(design, build)   # raises on a build that differs from the design
    assert proof.status == "proved"
    return len(build.parts), secs


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true")
    ap.add_argument("--json", action="store_true")
    ap.add_argument("--scale", action="store_true")
    args = ap.parse_args(argv)
    targets = ["nand-only", "gates-74"] if args.quick else TARGETS
    rows = []
    with tempfile.TemporaryDirectory() as tmp:
        sets = [("two-level", DATA / f"{n}.blif") for n in TWO_LEVEL] + [("two-level", rd84(Path(tmp)))]
        if not args.quick:
            sets += [("multi-level", DATA / f"{n}.blif") for n in MULTI_LEVEL]
        if args.scale:
            import generated  # the tests' wrapper of the ariths-gen generator
            sets = [("scale", generated.make("arr", 41, Path(tmp)))]
            targets = ["nand-only"]
        for kind, path in sets:
            design = read_design(path, quiet=True)
            for tname in targets:
                target = flow.load_target(tname)
                before, sb = measure(design, target, False)
                after, sa = measure(design, target, True)
                rows.append({"design": path.stem, "set": kind, "target": tname, "parts_before": before,
                             "parts_after": after, "before_s": round(sb, 2), "after_s": round(sa, 2),
                             "proof": "proved"})
                if not args.json:
                    print(f"{path.stem:10} {kind:11} {tname:10} parts {before:4} -> {after:4}   "
                          f"seconds {sb:6.1f} -> {sa:6.1f}   both proved", flush=True)
    summary = {}
    for tname in targets:
        two = [r for r in rows if r["set"] == "two-level" and r["target"] == tname]
        if not two:
            continue
        mb = sum(r["parts_before"] for r in two) / len(two)
        ma = sum(r["parts_after"] for r in two) / len(two)
        summary[tname] = {"two_level_mean_before": round(mb, 2), "two_level_mean_after": round(ma, 2),
                          "ratio": round(ma / mb, 3),
                          "worse": [r["design"] for r in rows if r["target"] == tname
                                    and r["parts_after"] > r["parts_before"]]}
    if args.json:
        print(json.dumps({"rows": rows, "summary": summary}, indent=1))
    else:
        for tname, s in summary.items():
            print(f"{tname}: two-level mean parts {s['two_level_mean_before']} -> {s['two_level_mean_after']} "
                  f"(ratio {s['ratio']}); worse after: {', '.join(s['worse']) or 'none'}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
