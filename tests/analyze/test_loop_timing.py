"""Timing of feedback loops kept as gates: once round the loop, and the shortest input pulse it keeps.

Outside sources, named beside each check:

* 74HC gate delay, typical 7 ns (generic datasheets, as in /work/shared/TRADE-FACTS.md; the NOR2 is taken
  to match the NAND2, from memory);
* common practice (introductory digital-design textbooks): a set-reset latch of two cross-coupled gates
  settles in two gate delays, and a set or reset pulse must last at least those two gate delays for the
  latch to keep the new value once the pulse ends.
"""
from __future__ import annotations

from pathlib import Path

import pytest

from mapper import flow
from mapper.analyze.timing import cell_delay
from mapper.read import read_design

DATA = Path(__file__).parent.parent / "data" / "latches"
HC_GATE_TYP_S = 7e-9  # generic 74HC datasheets, typical at 5 V, 15 pF


def _fit(name, target):
    return flow.fit(read_design(DATA / name, quiet=True), flow.load_target(target), effort=1)


@pytest.mark.parametrize("name, target, inputs", [("nor_sr.v", "nor-only", ("s", "r")),
                                                  ("nand_sr.v", "nand-only", ("sn", "rn"))])
def test_set_reset_pair_takes_two_gate_delays(name, target, inputs):
    r = _fit(name, target)
    (lp,) = r.analysis.timing.loops
    assert lp["cut"] == ["q"] and sorted(lp["nets"]) == ["q", "qn"]
    # two gates once round: twice the typical datasheet figure
    assert lp["loop_delay_typ_s"] == pytest.approx(2 * HC_GATE_TYP_S)
    # and twice the catalog's maximum figure of the gate, as the build placed it
    cells = r.build.cells
    assert len(cells) == 2
    assert lp["loop_delay_s"] == pytest.approx(sum(cell_delay(r.build, c)[1] for c in cells))
    # a set or reset pulse must last the two gate delays (common practice)
    assert set(lp["pulse_min_s"]) == set(inputs)
    for i in inputs:
        assert lp["pulse_min_s"][i] == pytest.approx(lp["loop_delay_s"])


def test_gated_latch_enable_pulse_covers_its_steering_gate():
    # the enable passes one steering NAND before it reaches the loop: its pulse must last that gate and
    # the time round the loop (common practice); the loop itself is at least two gates
    r = _fit("dlatch.v", "nand-only")
    (lp,) = r.analysis.timing.loops
    gate = max(cell_delay(r.build, c)[1] for c in r.build.cells)
    assert lp["loop_delay_s"] >= 2 * gate - 1e-15
    assert lp["pulse_min_s"]["en"] >= lp["loop_delay_s"] + gate - 1e-15


def test_timing_command_shows_the_loop(netfit):
    code, out, _ = netfit("timing", DATA / "nor_sr.v", "-t", "nor-only")
    assert code == 0
    assert "feedback loop at q" in out and "shortest pulse that the loop keeps: s " in out
    code, data, _ = netfit("timing", DATA / "nor_sr.v", "-t", "nor-only", "--json", as_json=True)
    (lp,) = data["feedback_loops"]
    assert set(lp) >= {"cut", "loop_delay_s", "loop_delay_typ_s", "pulse_min_s"}
