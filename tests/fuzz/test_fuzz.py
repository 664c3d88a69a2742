"""The fuzzer's short run in `make test`: a fixed budget of inputs per reader, and zero defects.

Each input is made from ``(format, seed, case)`` by tests/fuzz/engine.py (mutations of the valid
corpus and hostile constructions) and read in a worker process under limits of processor time and
address space (a limit is a resource limit of the worker, not a measured duration).  A defect is a
traceback, an overrun of a limit, a worker that dies, an error without its position, or a round trip
that changes a design.  The long runs are ``bench/bench_fuzz.py``.
"""
from __future__ import annotations

import pytest

from fuzz import engine

#: inputs per format in `make test` (the bench runs 100,000 and more)
BUDGET = {"blif": 600, "catalog": 1000, "target": 1000}


@pytest.mark.parametrize("fmt", sorted(BUDGET))
def test_short_run_finds_no_defect(fmt):
    totals = engine.run(fmt, BUDGET[fmt], seed=2026, jobs=1)
    assert totals.tried == BUDGET[fmt]
    assert totals.read > 0 and totals.refused > 0          # the mutations reach both sides
    report = [f"case {d.case}: {d.kind}: {d.detail}" for d in totals.defects]
    assert report == []


def test_the_harness_finds_each_kind_of_defect():
    # planted defects: an exception, a loop, an allocation beyond the address space, an error without a
    # line, a process that exits; each must be counted, and a fine input must not be
    totals = engine.run("selftest", len(engine.SELFTEST_INPUTS), jobs=1, cpu_seconds=1.0, wall_factor=10)
    kinds = {engine.SELFTEST_INPUTS[d.case]: d.kind for d in totals.defects}
    assert kinds == {b"crash": "crash", b"spin": "time", b"allocate": "memory", b"no-line": "check",
                     b"exit": "died"}
    assert totals.read == 1


def test_inputs_are_reproducible_from_their_number():
    assert engine.make_input("blif", 5, 123) == engine.make_input("blif", 5, 123)
    assert engine.make_input("catalog", 5, 7) != engine.make_input("catalog", 6, 7)
