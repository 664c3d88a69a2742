"""Documents a builder wires from: the schematic read back, and the placed board's wires.

For every example and test design on every built-in target (one mapping pass), the table gives
the schematic's pages, the overlapping or touching segments of different nets that the tests'
own geometric reader finds (must be 0), the nets drawn with flags instead of wires, and then the
wires and their total length on a breadboard and on a perforated board, placed in reference
("catalog") order and placed by the annealing, with the seconds of drawing and of placing.

Then the relay builds on both breadboards, where strips fill up: wires and their length, the
support legs that stood in a strip of their own, the longest support part (holes between its
legs), the boards used.  Then crowded builds: a relay build and a gate build with a few hundred
support parts added (far more than any target's rules give), placed and wired on both
breadboards -- the boards stacked and the seconds taken; every one is read back by the tests'
strip-rule reader (tests/place/test_runs.py).

Then the large case: a 14-bit array multiplier from the ariths-gen generator library on
nand-only (about 500 parts): seconds to draw the schematic (layout, routing, SVG) and to place
and wire it, on one core.

Run: ``.venv/bin/python bench/bench_documents.py [--quick]``
"""
from __future__ import annotations

import dataclasses
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests"))
sys.path.insert(0, str(ROOT / "tests" / "place"))

from test_runs import _check_chains, _check_holes, _check_nets  # noqa: E402  (the strip-rule reader)

from drawing_reader import connectivity, read  # noqa: E402  (the tests' independent reader)
from generated import make  # noqa: E402
from mapper import flow  # noqa: E402
from mapper.place import plan  # noqa: E402
from mapper.read import read_design  # noqa: E402
from mapper.write import svg  # noqa: E402

TARGETS = ("nand-only", "nor-only", "gates-74", "relay-spdt", "relay-dpdt")
BOARDS = ("breadboard-830", "breadboard-400", "perf:100x80")


def _designs() -> list:
    return (sorted((ROOT / "examples").rglob("*.blif")) + [ROOT / "tests" / "data" / "c17.blif"]
            + sorted((ROOT / "tests" / "data" / "textbook").glob("*.blif")))


def _wires(b, board, anneal):
    p = plan(b, board, anneal=anneal)
    t = p.runs.totals()
    return t["wires"], t["length_m"]


def table(quick: bool) -> None:
    head = (f"{'design':<13}{'target':<11}{'cells':>6}{'pages':>6}{'overlap':>8}{'flagged':>8}{'draw s':>8}"
            + "".join(f"{b[:10] + ' order':>20}{b[:10] + ' placed':>20}" for b in BOARDS) + f"{'place s':>9}")
    print(head)
    designs = _designs()[:3] if quick else _designs()
    for path in designs:
        design = read_design(path)
        for target in TARGETS:
            r = flow.fit(design, flow.load_target(target), effort=0)
            b = r.build
            t0 = time.perf_counter()
            text = svg.svg_text(b, r.analysis)
            draw = time.perf_counter() - t0
            dr = read(text.encode())
            _, problems = connectivity(dr)
            pages = svg.sheets(b)
            flagged = sum(len(p.flagged) for p in pages)
            row = (f"{design.name:<13}{target:<11}{len(b.cells) + len(b.contacts):>6}{dr.pages:>6}"
                   f"{len(problems):>8}{flagged:>8}{draw:>8.2f}")
            t0 = time.perf_counter()
            for board in BOARDS:
                for anneal in (False, True):
                    n, m = _wires(b, board, anneal)
                    row += f"{n:>8} {m * 1000:>8.0f} mm "
            row += f"{time.perf_counter() - t0:>7.2f}"
            print(row, flush=True)


def _leg_span(p) -> int:
    return max((abs(a[0] - c[0]) + abs(a[1] - c[1]) for a, c in
                (list(pp.pins.values()) for pp in p.parts.values() if pp.kind == "support")), default=0)


def relay_boards(quick: bool) -> None:
    print(f"\n{'design':<13}{'target':<11}{'board':<16}{'wires':>6}{'mm':>7}{'own':>5}{'leg max':>8}{'boards':>7}")
    for path in (_designs()[:3] if quick else _designs()):
        design = read_design(path)
        for target in ("relay-spdt", "relay-dpdt"):
            b = flow.fit(design, flow.load_target(target), effort=0).build
            for board in ("breadboard-830", "breadboard-400"):
                pl = plan(b, board)
                t = pl.runs.totals()
                p = pl.placement
                print(f"{design.name:<13}{target:<11}{board:<16}{t['wires']:>6}{t['length_m'] * 1000:>7.0f}"
                      f"{len(p.own_strips):>5}{_leg_span(p):>8}{p.boards:>7}", flush=True)


def crowded(quick: bool) -> None:
    print(f"\n{'crowded build':<28}{'added':>6}{'board':>16}{'boards':>7}{'wires':>6}{'own':>5}{'leg max':>8}"
          f"{'place s':>9}  read back")
    cases = (("half_adder", "relay-spdt"), ("c17", "nand-only"))
    for name, target in cases:
        src = ROOT / "tests" / "data" / ("c17.blif" if name == "c17" else f"textbook/{name}.blif")
        b = flow.fit(read_design(src), flow.load_target(target), effort=0).build
        nets = sorted(n for n in b.nets() if n not in ("VCC", "GND"))
        for added in ((60,) if quick else (60, 300)):
            extra = []
            for i in range(added):  # loads to GND, diodes between two nets, capacitors across the rails
                a, c = nets[i % len(nets)], nets[(7 * i + 3) % len(nets)]
                pair = [(a, "GND"), (a, c), ("VCC", "GND")][i % 3]
                extra.append(dataclasses.replace(b.support[0], ref=f"X{1000 + i}", nets=pair, purpose="added"))
            many = dataclasses.replace(b, support=list(b.support) + extra)
            for board in ("breadboard-830", "breadboard-400"):
                t0 = time.perf_counter()
                pl = plan(many, board)
                sec = time.perf_counter() - t0
                _check_nets(many, pl)
                _check_chains(many, pl)
                _check_holes(many, pl)
                p = pl.placement
                print(f"{name + ' on ' + target:<28}{added:>6}{board:>16}{p.boards:>7}{len(pl.runs.wires):>6}"
                      f"{len(p.own_strips):>5}{_leg_span(p):>8}{sec:>9.2f}  nets, chains, holes right", flush=True)


def large(quick: bool) -> None:
    width = 8 if quick else 14
    with tempfile.TemporaryDirectory() as tmp:
        src = make("arr", width, Path(tmp))
        r = flow.fit(read_design(src), flow.load_target("nand-only"), effort=0)
        b = r.build
        t0 = time.perf_counter()
        text = svg.svg_text(b, r.analysis)
        draw = time.perf_counter() - t0
        t0 = time.perf_counter()
        p = plan(b, "breadboard-830")
        place = time.perf_counter() - t0
        base = plan(b, "breadboard-830", anneal=False).runs.totals()
        dr = read(text.encode())
        t = p.runs.totals()
        print(f"\nlarge: {width}-bit array multiplier on nand-only: {len(b.parts)} parts, {len(b.cells)} cells")
        print(f"  schematic: {dr.pages} pages, {len(connectivity(dr)[1])} overlapping segments, drawn in {draw:.1f} s")
        print(f"  placed on {p.placement.boards} breadboards in {place:.1f} s ({p.placement.moves} moves): "
              f"{t['wires']} wires, {t['length_m']:.1f} m (reference order: {base['wires']} wires, "
              f"{base['length_m']:.1f} m)")
        print(f"  draw + place: {draw + place:.1f} s (goal: under 30 s on one core)")


def main(argv) -> int:
    quick = "--quick" in argv
    table(quick)
    relay_boards(quick)
    crowded(quick)
    large(quick)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
