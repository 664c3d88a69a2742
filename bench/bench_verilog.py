"""Speed of the structural Verilog reader (pyslang's front end + netfit's lowering).

Prints, per design:

* ``slang``  -- pyslang's preprocessing, parsing and elaboration of the file
  (C++; all of it: every expression bound, every diagnostic collected);
* ``lower``  -- netfit's part: the subset check and the lowering of the
  elaborated design to a flat Netlist (Python, walking pyslang's objects);
* ``read``   -- the whole read, text to Netlist (``slang`` + ``lower``);
* ``check``  -- Netlist.check() of the result;
* ``peak MiB`` -- peak Python memory of the read (tracemalloc; pyslang's C++
  memory is not counted).

and, once, the import time of pyslang and of the reader in a fresh
interpreter.  All times are CPU seconds of the process
(``time.process_time``, which counts pyslang's thread too), so other work on
a shared machine does not inflate them much.  Designs: random gate-level
Verilog of our own (primitives and assigns mixed, the wires declared in one
long list) at about 1k, 10k and 100k gates, and ariths-gen array
multipliers as flat and hierarchical Verilog.

Run: ``.venv/bin/python bench/bench_verilog.py [--quick]``
"""
from __future__ import annotations

import argparse
import gc
import os
import random
import subprocess
import sys
import tempfile
import time
import tracemalloc
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "tests"))

from mapper.read.verilog import read  # noqa: E402
from mapper.read.verilog_source import compile_design, load  # noqa: E402

GATES = ["and", "or", "nand", "nor", "xor", "xnor"]
OPS = ["&", "|", "^", "~^"]


def random_design(gates: int, path: Path, seed: int = 1) -> Path:
    """Flat random structural Verilog: 64 inputs, half primitives, half assigns."""
    rng = random.Random(seed)
    nets = [f"i[{k}]" for k in range(64)]
    lines = [f"module rand{gates}(input [63:0] i, output [99:0] o);"]
    lines.append("  wire " + ", ".join(f"n{k}" for k in range(gates)) + ";")
    for k in range(gates):
        a, b = rng.sample(nets[-400:], 2)
        if k % 2:
            lines.append(f"  {rng.choice(GATES)} g{k} (n{k}, {a}, {b});")
        else:
            lines.append(f"  assign n{k} = {'~' if rng.random() < 0.2 else ''}{a} {rng.choice(OPS)} {b};")
        nets.append(f"n{k}")
    for k in range(100):
        lines.append(f"  assign o[{k}] = n{gates - 1 - k};")
    lines.append("endmodule")
    path.write_text("\n".join(lines) + "\n")
    return path


def import_time(stmt: str, before: str = "pass") -> float:
    """Seconds to run ``stmt`` (an import) in a fresh interpreter after ``before``
    (best of 3), with a bytecode cache as an installed package has one."""
    code = f"{before}; import time; t = time.process_time(); {stmt}; print(time.process_time() - t)"
    env = dict(os.environ)
    env.pop("PYTHONDONTWRITEBYTECODE", None)
    env["PYTHONPYCACHEPREFIX"] = str(Path(tempfile.gettempdir()) / "netfit-bench-pycache")
    best = None
    for _ in range(4):
        out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True,
                             env=env)
        t = float(out.stdout.strip())
        best = t if best is None else min(best, t)
    return best


def measure(path: Path) -> dict:
    gc.disable()
    try:
        t0 = time.process_time()
        src, _ = load(path)
        compile_design(src)
        t1 = time.process_time()
    finally:
        gc.enable()
    t2 = time.process_time()
    n = read(path)
    t3 = time.process_time()
    n.check()
    t4 = time.process_time()
    tracemalloc.start()
    read(path)
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    return {"nodes": len(n.nodes) - len(n.inputs), "kib": path.stat().st_size // 1024,
            "slang": t1 - t0, "lower": (t3 - t2) - (t1 - t0), "read": t3 - t2, "check": t4 - t3,
            "peak_mib": peak / 2 ** 20}


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--quick", action="store_true", help="only the small designs")
    args = ap.parse_args(argv)
    sizes = [1_000, 10_000] if args.quick else [1_000, 10_000, 100_000]
    mults = [16] if args.quick else [32, 64]
    print(f"import pyslang: {import_time('import pyslang'):.3f} s   "
          f"import mapper.read.verilog: {import_time('import mapper.read.verilog'):.3f} s "
          f"(of which {import_time('import mapper.read.verilog', 'import mapper.netlist'):.3f} s "
          "beyond the Netlist every reader needs)")
    rows = []
    with tempfile.TemporaryDirectory() as d:
        folder = Path(d)
        for s in sizes:
            rows.append((f"random {s // 1000}k gates", measure(random_design(s, folder / f"rand{s}.v"))))
        try:
            import generated
        except ImportError:
            generated = None
        if generated is not None:
            for w in mults:
                for hier in (False, True):
                    p = generated.make("arr", w, folder, fmt="v", hier=hier)
                    rows.append((f"ariths-gen arr{w} {'hier' if hier else 'flat'}", measure(p)))
    cols = ["nodes", "kib", "slang", "lower", "read", "check", "peak_mib"]
    heads = ["nodes", "KiB", "slang", "lower", "read", "check", "peak MiB"]
    print(f"{'design':<24}" + "".join(f"{h:>12}" for h in heads))
    for name, r in rows:
        cells = []
        for c in cols:
            v = r[c]
            if v is None:
                cells.append(f"{'-':>12}")
            elif isinstance(v, int):
                cells.append(f"{v:>12}")
            else:
                cells.append(f"{v:>12.2f}")
        print(f"{name:<24}" + "".join(cells))
    print("CPU seconds; 'read' is 'slang' + 'lower'")
    return 0


if __name__ == "__main__":
    sys.exit(main())
