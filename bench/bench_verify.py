"""Read and proof times of the equivalence prover on generated designs.

Table 1: ariths-gen array multipliers of about 1k, 6k (the 32x32 figure
case) and 10k gates, and a chain of sixteen 32x32 array multipliers (about
100k gates, each stage multiplying the low half of the previous product by a
new operand; every high half is an output), written as flat BLIF at run time
(ariths-gen itself takes over ten minutes to write a single 130x130
multiplier, so the big design reuses one 32x32 circuit), read with
:func:`mapper.read.read_design`, and proven equal to a restructured copy
(tests/restructure.py: collapsed and re-expressed in other gate forms,
renamed).  Columns: gates of the design and of the copy, seconds to read,
seconds to prove (wall clock and CPU), peak resident memory of the process
(it runs alone in a subprocess, so the figure includes the interpreter,
about 40 MB), the method, the number of internal equivalences proved and
merged (over a small cut or by SAT) and the number of SAT calls.

Table 2: array against Dadda/Wallace multipliers of growing width (different
architectures: few internal equivalences, the hard case for SAT), each with
a limit on CPU seconds.

Table 3 (``--solvers``): the same proofs with each pysat back end.

Run: ``.venv/bin/python bench/bench_verify.py [--quick] [--solvers] [--limit S]``
"""
from __future__ import annotations

import argparse
import json
import resource
import signal
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "tests"))

SIZES = [("~1k gates", "arr:13"), ("figure: 32x32", "arr:32"), ("~10k gates", "arr:41"),
         ("~100k gates", "chain:16:32")]
TREE_WIDTHS = [4, 6, 8, 9, 10, 12]
SOLVERS = ["minisat22", "glucose4", "cadical195"]


def _buffered_outputs(net, prefix):
    """Outputs renamed ``prefix[i]`` through buffers (ariths-gen names the bus
    after the circuit, so two architectures would not match by name)."""
    from mapper.logic.function import Function
    out = net.copy()
    out.nodes = dict(net.nodes)
    out.outputs = []
    buf = Function.from_table(1, 0b10)
    for i, o in enumerate(net.outputs):
        out.add_logic(f"{prefix}[{i}]", [o], buf)
        out.add_output(f"{prefix}[{i}]")
    return out


def chained_multipliers(stages: int, width: int, folder) -> Path:
    """Flat BLIF of ``stages`` ariths-gen array multipliers in a chain (module docstring)."""
    import generated
    src = generated.make("arr", width, folder).read_text().splitlines()
    circ = f"arr{width}"
    body = [ln for ln in src if ln and not ln.startswith((".model", ".inputs", ".outputs", ".end"))]
    ins = [f"a[{i}]" for i in range(width)]
    outs = []
    lines = []
    for s in range(stages):
        ins += [f"b{s}[{i}]" for i in range(width)]

        def net(x, s=s):
            if x.startswith("a["):
                return x if s == 0 else f"s{s - 1}_{circ}_out[{x[2:-1]}]"
            if x.startswith("b["):
                return f"b{s}[{x[2:-1]}]"
            return f"s{s}_{x}"
        for ln in body:
            if ln.startswith(".names"):
                ln = " ".join([".names"] + [net(x) for x in ln.split()[1:]])
            lines.append(ln)
        lo = 0 if s == stages - 1 else width
        outs += [f"s{s}_{circ}_out[{i}]" for i in range(lo, 2 * width)]
    path = Path(folder) / f"chain{stages}x{circ}.blif"
    path.write_text("\n".join([f".model chain{stages}x{circ}", ".inputs " + " ".join(ins),
                               ".outputs " + " ".join(outs)] + lines + [".end"]) + "\n")
    return path


def child(args) -> None:
    """One measurement in this (fresh) process; prints one JSON line."""
    import generated
    from mapper.read import read_design
    from mapper.verify import check_equivalence
    from restructure import restructure

    with tempfile.TemporaryDirectory() as tmp:
        kind, *nums = args.design.split(":")
        if kind == "chain":
            path = chained_multipliers(int(nums[0]), int(nums[1]), tmp)
        else:
            path = generated.make(kind, int(nums[0]), tmp)
        width = int(nums[-1])
        t0 = time.perf_counter()
        a = read_design(path)
        read_s = time.perf_counter() - t0
        if args.against == "restructured":
            b = restructure(a, seed=width)
        else:
            b = _buffered_outputs(read_design(generated.make(args.against, width, tmp)), "p")
            a = _buffered_outputs(a, "p")
    c0, t0 = time.process_time(), time.perf_counter()
    res = check_equivalence(a, b, solver=args.solver)
    verify_s, cpu_s = time.perf_counter() - t0, time.process_time() - c0
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    gates = sum(1 for n in a.logic().values() if n.fanins)
    copy_gates = sum(1 for n in b.logic().values() if n.fanins)
    print(json.dumps({"gates": gates, "copy_gates": copy_gates, "read_s": read_s, "verify_s": verify_s,
                      "cpu_s": cpu_s, "peak_mb": peak, "method": res.method,
                      "equivalent": res.equivalent,
                      "merged": res.stats.get("merged_by_sat", 0) + res.stats.get("merged_by_cut", 0),
                      "sat_calls": res.stats.get("sat_calls", 0)}))


def run_child(design: str, against: str, solver: str, limit: float | None):
    """Measure in a fresh process; ``None`` when it used more than ``limit``
    seconds of CPU (a CPU limit, so a busy machine does not change the answer)."""
    cmd = [sys.executable, __file__, "--child", "--design", design, "--against", against,
           "--solver", solver]
    if limit is not None:
        cmd += ["--cpu-limit", str(int(limit))]
    proc = subprocess.run(cmd, capture_output=True, text=True)
    if proc.returncode == -signal.SIGXCPU or proc.returncode == -signal.SIGKILL:
        return None
    if proc.returncode != 0:
        sys.stderr.write(proc.stderr)
        raise SystemExit(f"measurement of {design} failed")
    return json.loads(proc.stdout.strip().splitlines()[-1])


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--quick", action="store_true", help="small designs only")
    ap.add_argument("--solvers", action="store_true", help="also compare the pysat back ends")
    ap.add_argument("--limit", type=float, default=120.0, help="CPU seconds per array-vs-tree proof")
    ap.add_argument("--child", action="store_true", help=argparse.SUPPRESS)
    ap.add_argument("--design", help=argparse.SUPPRESS)
    ap.add_argument("--against", default="restructured", help=argparse.SUPPRESS)
    ap.add_argument("--solver", default=None, help=argparse.SUPPRESS)
    ap.add_argument("--cpu-limit", type=int, default=None, help=argparse.SUPPRESS)
    args = ap.parse_args()
    from mapper.verify import DEFAULT_SOLVER
    if args.child:
        if args.cpu_limit:
            resource.setrlimit(resource.RLIMIT_CPU, (args.cpu_limit, args.cpu_limit + 5))
        args.solver = args.solver or DEFAULT_SOLVER
        child(args)
        return 0

    sizes = SIZES[:2] if args.quick else SIZES
    print(f"equivalence proofs against a restructured copy (solver {DEFAULT_SOLVER})")
    head = f"{'design':<30}{'gates':>8}{'copy':>8}{'read s':>9}{'verify s':>10}{'cpu s':>8}" \
           f"{'peak MB':>9}  {'method':<14}{'merged':>8}{'SAT calls':>11}"
    print(head)
    print("-" * len(head))
    ok = True
    for label, design in sizes:
        r = run_child(design, "restructured", DEFAULT_SOLVER, None)
        ok &= r["equivalent"]
        name = design.replace("arr:", "arr").replace("chain:16:32", "16 x arr32")
        print(f"{f'{name} ({label})':<30}{r['gates']:>8}{r['copy_gates']:>8}{r['read_s']:>9.2f}"
              f"{r['verify_s']:>10.2f}{r['cpu_s']:>8.2f}{r['peak_mb']:>9.0f}  {r['method']:<14}{r['merged']:>8}"
              f"{r['sat_calls']:>11}",
              flush=True)

    print(f"\narray against tree multipliers (limit {args.limit:.0f} CPU seconds each)")
    head = f"{'design':<30}{'gates':>8}{'other':>8}{'verify s':>10}{'cpu s':>8}  {'method':<14}"
    print(head)
    print("-" * len(head))
    for tree in ("dadda", "wallace"):
        for width in (TREE_WIDTHS[:3] if args.quick else TREE_WIDTHS):
            r = run_child(f"arr:{width}", tree, DEFAULT_SOLVER, args.limit)
            name = f"arr{width} vs {tree}{width}"
            if r is None:
                print(f"{name:<30}{'':>8}{'':>8}{'> ' + format(args.limit, '.0f'):>10}{'':>8}  not proven in time",
                      flush=True)
                break
            ok &= r["equivalent"]
            print(f"{name:<30}{r['gates']:>8}{r['copy_gates']:>8}{r['verify_s']:>10.2f}{r['cpu_s']:>8.2f}"
                  f"  {r['method']:<14}", flush=True)

    if args.solvers:
        print("\npysat back ends (cpu seconds of the proof)")
        cases = [("arr:32", "restructured"), ("chain:8:32", "restructured"), ("arr:8", "dadda")]
        head = f"{'case':<30}" + "".join(f"{s:>12}" for s in SOLVERS)
        print(head)
        print("-" * len(head))
        for design, against in cases:
            cells = []
            for s in SOLVERS:
                r = run_child(design, against, s, args.limit)
                cells.append("timeout" if r is None else f"{r['cpu_s']:.2f}")
            name = design.replace("arr:", "arr").replace("chain:8:32", "8 x arr32")
            print(f"{f'{name} vs {against}':<30}" + "".join(f"{c:>12}" for c in cells), flush=True)
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
