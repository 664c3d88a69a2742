"""Run every benchmark script ``bench/bench_*.py`` in turn (``make bench``).

Each script prints its own table.  Arguments after ``run.py`` are passed to
every script (for example ``--quick`` where a script knows it); ``-k WORD``
runs only the scripts whose name contains WORD.  The exit code is 0 when
every script succeeded, else 1; a failing script does not stop the others.

Run: ``.venv/bin/python bench/run.py [-k WORD] [args for the scripts...]``
"""
from __future__ import annotations

import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent


def main(argv: list[str]) -> int:
    only = None
    if len(argv) >= 2 and argv[0] == "-k":
        only, argv = argv[1], argv[2:]
    scripts = sorted(p for p in HERE.glob("bench_*.py") if only is None or only in p.name)
    failed = []
    for script in scripts:
        print(f"\n== {script.name} ==", flush=True)
        t0 = time.perf_counter()
        code = subprocess.call([sys.executable, str(script), *argv], cwd=HERE.parent)
        print(f"-- {script.name}: exit {code}, {time.perf_counter() - t0:.1f} s", flush=True)
        if code != 0:
            failed.append(script.name)
    if failed:
        print(f"\nfailed: {', '.join(failed)}", file=sys.stderr)
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
