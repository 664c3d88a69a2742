"""Timing and glitch analysis of builds: seconds per stage, what was found, what hazard-freedom costs.

Designs: adders, multipliers and comparators from the independent generator
library ariths-gen, ISCAS-85 c17 (Brglez and Fujiwara, 1985), and the
textbook circuits in tests/data/textbook.  For each design and target the
table prints: cells, worst path (maximum figures), clock rate for sequential
designs, CPU seconds of the static timing pass, the glitch search (input
changes examined, exhaustive or sampled, timed simulations run, CPU seconds,
and with ``--memory`` its peak traced memory from a second run), hazards
found, and -- with ``--hazard-free`` -- the consensus terms added, the parts
of the plain and the chosen hazard-free build and the hazards left.

The fit itself is not timed here (bench_fit.py does that).

``--scale`` instead times the two analyses every build runs
(:func:`static_timing` and :func:`glitch_report` with its default work
budget) on ariths-gen array multipliers of about 1k, 10k and (with
``--max-gates 120000``) 100k gates built on nand-only, and prints what the
budgeted glitch search covered.

Run: ``.venv/bin/python bench/bench_timing.py [--quick] [--targets T,...] [--changes N] [--hazard-free] [--memory]``
     ``.venv/bin/python bench/bench_timing.py --scale [--max-gates N]``
"""
from __future__ import annotations

import argparse
import sys
import tempfile
import time
import tracemalloc
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "tests"))

import generated  # noqa: E402
from mapper import flow  # noqa: E402
from mapper.analyze.glitch import find_glitches, glitch_report  # noqa: E402
from mapper.analyze.timed import TimedCircuit  # noqa: E402
from mapper.analyze.timing import static_timing  # noqa: E402
from mapper.read import read_design  # noqa: E402

GENERATED = [("rca", 4), ("rca", 8), ("cla", 8), ("ks", 8), ("arr", 4), ("lt", 8), ("rca", 16),
             ("dadda", 8), ("arr", 6)]
TEXTBOOK = ["full_adder", "half_adder", "mux4", "seg7", "cmp2", "counter4"]


def designs(folder, quick=False):
    yield "c17", ROOT / "tests" / "data" / "c17.blif"
    for name in TEXTBOOK:
        yield name, ROOT / "tests" / "data" / "textbook" / f"{name}.blif"
    for kind, width in (GENERATED[:5] if quick else GENERATED):
        yield f"{kind}{width}", generated.make(kind, width, folder)


def _si(x):
    if x is None:
        return "-"
    for scale, p in ((1e-3, "m"), (1e-6, "u"), (1e-9, "n")):
        if abs(x) >= scale:
            return f"{x / scale:.3g}{p}"
    return f"{x:.3g}"


def _hz(x):
    return f"{x / 1e6:.3g}M" if x else "-"


SCALE = [("arr", 13), ("arr", 41), ("arr", 129)]  # about 1k, 10k and 100k gates


def scale(max_gates: int, target_name: str = "nand-only") -> None:
    """Seconds of the analyses in every build on big builds (the fit is not timed)."""
    import resource

    from mapper.fit.fit import fit_gates

    target = flow.load_target(target_name)
    print(f"{'design':<10}{'gates':>8}{'cells':>8}{'timing_s':>10}{'glitch_s':>10}{'hazards':>9}"
          f"{'peak_MB':>9}  glitch search")
    with tempfile.TemporaryDirectory() as tmp:
        for kind, width in SCALE:
            d = read_design(generated.make(kind, width, tmp))
            gates = len(d.nodes) - len(d.inputs)
            if gates > max_gates:
                break
            b = fit_gates(d, target)
            t0 = time.perf_counter()
            sta = static_timing(b)
            t1 = time.perf_counter()
            gl = glitch_report(b)
            t2 = time.perf_counter()
            assert sta.delay_s > 0
            peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
            print(f"{kind}{width:<7}{gates:>8}{len(b.cells):>8}{t1 - t0:>10.2f}{t2 - t1:>10.2f}"
                  f"{gl.total:>9}{peak:>9.0f}  {gl.search['sample']}", flush=True)


def main(argv=None):
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true")
    ap.add_argument("--targets", default="gates-74,nand-only")
    ap.add_argument("--changes", type=int, default=4000, help="input changes examined per build")
    ap.add_argument("--hazard-free", action="store_true", help="also build with consensus terms")
    ap.add_argument("--memory", action="store_true", help="also measure peak memory of the glitch search")
    ap.add_argument("--scale", action="store_true", help="time the analyses of every build on big builds")
    ap.add_argument("--max-gates", type=int, default=20_000, help="with --scale: largest design")
    args = ap.parse_args(argv)
    if args.scale:
        scale(args.max_gates)
        return
    head = (f"{'design':<12}{'target':<10}{'cells':>6}{'delay_s':>9}{'clk_Hz':>9}{'sta_s':>8}"
            f"{'changes':>9}{'all':>5}{'runs':>7}{'glitch_s':>9}{'MiB':>6}{'hazards':>8}{'errors':>7}")
    if args.hazard_free:
        head += f"{'terms':>6}{'parts':>6}{'hf_parts':>9}{'hf_hazards':>11}"
    print(head)
    with tempfile.TemporaryDirectory() as tmp:
        for name, path in designs(tmp, args.quick):
            d = read_design(path)
            for tname in args.targets.split(","):
                t = flow.load_target(tname)
                try:
                    b, a = flow.fit(d, t)
                except Exception as exc:  # noqa: BLE001 -- a target the design cannot go on: the table goes on
                    print(f"{name:<12}{tname:<10}  not built: {type(exc).__name__}: {exc}")
                    continue
                t0 = time.process_time()
                sta = static_timing(b).as_dict()
                t_sta = time.process_time() - t0
                circ = TimedCircuit.from_build(b)
                t0 = time.process_time()
                res = find_glitches(circ, max_transitions=args.changes)
                t_gl = time.process_time() - t0
                peak = float("nan")
                if args.memory:  # a second run under tracemalloc, which slows Python down many times
                    tracemalloc.start()
                    find_glitches(circ, max_transitions=args.changes)
                    peak = tracemalloc.get_traced_memory()[1] / 2 ** 20
                    tracemalloc.stop()
                tr = res["transitions"]
                row = (f"{name:<12}{tname:<10}{len(b.cells):>6}{_si(sta['delay_s']):>9}"
                       f"{_hz(sta.get('clock_max_hz')):>9}{t_sta:>8.3f}"
                       f"{tr['checked']:>9}{'yes' if tr['exhaustive'] else 'no':>5}{tr['timed_runs']:>7}"
                       f"{t_gl:>9.2f}{peak:>6.1f}{res['hazards_total']:>8}{res['errors']:>7}")
                if args.hazard_free:
                    hb, hb_a = flow.fit_hazard_free(d, t)
                    hres = find_glitches(TimedCircuit.from_build(hb), max_transitions=args.changes)
                    h = hb_a.hazard_free
                    row += f"{h['terms_added']:>6}{h['parts_plain']:>6}{h['parts']:>9}{hres['hazards_total']:>11}"
                print(row, flush=True)


if __name__ == "__main__":
    main()
