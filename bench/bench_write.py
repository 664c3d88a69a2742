"""Build outputs: seconds and bytes per file for builds of growing size.

Designs: ISCAS-85 c17 and ariths-gen array multipliers (independent generator library) of growing
width, built on gates-74 and nand-only with one mapping pass.  For each build the table gives the
cells, the seconds of placing the parts on the default board and wiring them (done once and handed
to every writer, as ``netfit build -o`` does), then the seconds and kilobytes of each file
``netfit build -o`` writes, and the peak memory of writing them all.

Run: ``.venv/bin/python bench/bench_write.py [--quick]``
"""
from __future__ import annotations

import sys
import tempfile
import time
import tracemalloc
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests"))

from generated import make  # noqa: E402
from mapper import flow  # noqa: E402
from mapper.place import plan  # noqa: E402
from mapper.read import read_design  # noqa: E402
from mapper.write import blif, board, html, parts, svg, verilog, wiring  # noqa: E402
from mapper.write import json as wjson  # noqa: E402

WRITERS = (("v", verilog.write_build), ("blif", blif.write_build), ("json", wjson.write_build),
           ("csv", parts.write_build), ("wiring", wiring.write_build), ("svg", svg.write_build),
           ("board", board.write_build), ("html", html.write_build))


def main(argv) -> int:
    quick = "--quick" in argv
    widths = (4, 6) if quick else (4, 6, 8, 12)
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        designs = [ROOT / "tests" / "data" / "c17.blif"] + [make("arr", w, tmp) for w in widths]
        head = f"{'design':<10}{'target':<11}{'cells':>7}{'place s':>9}" + \
            "".join(f"{k + ' s':>10}{'kB':>7}" for k, _ in WRITERS)
        print(head + f"{'peak MB':>9}")
        for path in designs:
            design = read_design(path)
            for target in ("gates-74", "nand-only"):
                try:
                    b, a = flow.fit(design, flow.load_target(target), effort=0)
                except Exception as exc:  # noqa: BLE001 -- a mapper fault is reported, the table goes on
                    print(f"{design.name:<10}{target:<11}  build failed: {type(exc).__name__}: {exc}")
                    continue
                out = tmp / f"{design.name}-{target}"
                tracemalloc.start()
                t0 = time.perf_counter()
                placed = plan(b)
                placing = time.perf_counter() - t0
                row = f"{design.name:<10}{target:<11}{len(b.cells) + len(b.contacts):>7}{placing:>9.2f}"
                for key, fn in WRITERS:
                    name = {"v": f"{design.name}.v", "blif": f"{design.name}.blif",
                            "json": f"{design.name}.json", "csv": "parts.csv", "wiring": "wiring.txt",
                            "svg": "schematic.svg", "board": "board.svg", "html": "report.html"}[key]
                    t0 = time.perf_counter()
                    fn(b, a, out / name, plan=placed)
                    dt = time.perf_counter() - t0
                    row += f"{dt:>10.3f}{(out / name).stat().st_size / 1024:>7.0f}"
                peak = tracemalloc.get_traced_memory()[1] / 1e6
                tracemalloc.stop()
                print(row + f"{peak:>9.1f}", flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
