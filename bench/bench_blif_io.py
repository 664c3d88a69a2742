"""Read/write speed of the BLIF reader and the BLIF/JSON writers.

Prints one table row per design: nodes, file size, seconds to read (parse
and flatten), to check, to write BLIF and JSON, and the peak memory of the
read.  Designs: random logic of our own at about 1k, 10k and 100k nodes
(flat), and ariths-gen array multipliers written as hierarchical BLIF (so
the flattening of many ``.subckt`` instances is timed too).

Run: ``.venv/bin/python bench/bench_blif_io.py [--quick]``
"""
from __future__ import annotations

import argparse
import random
import sys
import tempfile
import time
import tracemalloc
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "tests"))

from mapper.read.blif import read  # noqa: E402
from mapper.write import blif as wblif  # noqa: E402
from mapper.write import json as wjson  # noqa: E402

COVERS = [("11 1", 2), ("01 1\n10 1", 2), ("0- 1\n-0 1", 2), ("1-- 1\n-11 1", 3), ("0 1", 1), ("00 0", 2),
          ("1--- 1\n-1-- 1\n--11 1", 4)]


def random_design(nodes: int, path: Path, seed: int = 1) -> Path:
    """A flat random netlist: 64 inputs, each node reads nets among the last 500."""
    rng = random.Random(seed)
    ins = [f"i{k}" for k in range(64)]
    nets = list(ins)
    body = []
    for k in range(nodes):
        cover, n = rng.choice(COVERS)
        fi = rng.sample(nets[-500:], n)
        body.append(f".names {' '.join(fi)} n{k}\n{cover}")
        nets.append(f"n{k}")
    head = [f".model rand{nodes}", ".inputs " + " ".join(ins), ".outputs " + " ".join(nets[-100:])]
    path.write_text("\n".join(head + body + [".end"]) + "\n")
    return path


def measure(path: Path) -> dict:
    t0 = time.perf_counter()
    n = read(path)
    t1 = time.perf_counter()
    n.check()
    t2 = time.perf_counter()
    out = path.with_suffix(".out.blif")
    wblif.write_netlist(n, out)
    t3 = time.perf_counter()
    wjson.write_netlist(n, path.with_suffix(".json"))
    t4 = time.perf_counter()
    tracemalloc.start()
    read(path)
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    return {"nodes": len(n.nodes) - len(n.inputs), "kib": path.stat().st_size // 1024,
            "read": t1 - t0, "check": t2 - t1, "blif": t3 - t2, "json": t4 - t3, "peak_mib": peak / 2**20}


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--quick", action="store_true", help="only the small designs")
    args = ap.parse_args(argv)
    sizes = [1_000, 10_000] if args.quick else [1_000, 10_000, 100_000]
    mults = [16] if args.quick else [16, 32, 64]
    rows = []
    with tempfile.TemporaryDirectory() as d:
        folder = Path(d)
        for s in sizes:
            rows.append((f"random {s}", measure(random_design(s, folder / f"rand{s}.blif"))))
        try:
            import generated
        except ImportError:
            generated = None
        if generated is not None:
            for w in mults:
                p = generated.make("arr", w, folder, hier=True)
                rows.append((f"ariths-gen arr{w} hier", measure(p)))
    print(f"{'design':<24}{'nodes':>9}{'KiB':>8}{'read s':>9}{'check s':>9}{'blif s':>9}"
          f"{'json s':>9}{'peak MiB':>10}")
    for name, r in rows:
        print(f"{name:<24}{r['nodes']:>9}{r['kib']:>8}{r['read']:>9.2f}{r['check']:>9.2f}{r['blif']:>9.2f}"
              f"{r['json']:>9.2f}{r['peak_mib']:>10.1f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
