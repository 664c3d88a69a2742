"""A child process for tests/write/test_out_folder.py: writes builds into one folder, over and over.

Usage: ``python folder_writer.py OUT REFS DESIGN [DESIGN ...]``.  Each design is fitted
once (nand-only, effort 0); each build is written once into ``REFS/<k>`` (the reference
copies the test compares with) and once into ``OUT``; then ``ready`` is printed and the
builds are written into ``OUT`` in turn until the process is stopped by a signal.
"""
from __future__ import annotations

import sys
from pathlib import Path


def main(argv: list) -> None:
    from mapper import flow
    from mapper.read import read_design

    out, refs = Path(argv[0]), Path(argv[1])
    results = [flow.fit(read_design(d, quiet=True), flow.load_target("nand-only"), effort=0) for d in argv[2:]]
    for k, r in enumerate(results):
        flow.write_build(r, refs / str(k))
    flow.write_build(results[0], out)
    print("ready", flush=True)
    k = 0
    while True:
        k = (k + 1) % len(results)
        flow.write_build(results[k], out)


if __name__ == "__main__":
    main(sys.argv[1:])
