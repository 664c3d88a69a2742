"""Relay clock figures: hand sums of operate and release times, and a stopwatch model of the bench.

Sources:

* The sequencer's equations as documented in ``mapper/relay_logic.py`` (the
  design of the build, read here as a builder reads a circuit description):
  on the rising edge the clock's relays and X, Y, Z operate and W releases;
  on the falling edge the clock's relays and Z release, W operates, Y and X
  release, and then a master that must let go releases.  Each relay lands
  one operate or release time after its feed changes, bounce included
  (common practice of relay timing: the times add along a chain).
* Relay figures from the catalog (generic small-signal relay datasheets);
  a coil diode lengthens the release time by netfit's factor of 3 (from
  memory, as its docstring says).
* The bench itself is ``tests/switchlevel.py``'s :class:`TimedRelays`: the
  written wiring list with a stopwatch, which knows nothing of sequencers.
"""
from __future__ import annotations

import random

import pytest
from switchlevel import REL, TimedRelays

from mapper import flow
from mapper.analyze.relay import DIODE_RELEASE_FACTOR
from mapper.catalog import load_target
from mapper.read import read_design
from mapper.write import json as wjson


def _figures(target):
    parts = [p for p in target.parts.values() if p.relay is not None]
    r = parts[0].relay
    op = r.operate_time.value + r.bounce_time.value
    rel = r.release_time.value * DIODE_RELEASE_FACTOR + r.bounce_time.value
    return op, rel


def _bench(tmp_path, b, a, op, rel):
    path = tmp_path / f"{b.design}.json"
    wjson.write_build(b, a, path)
    return TimedRelays(path, {p.ref: (op, rel) for p in b.parts})


def _count(bench, high, low, cycles):
    """Clock the counter ``cycles`` times with the clock high for ``high`` and low for ``low`` seconds."""
    pos, moving = bench.run(tuple(REL for _ in bench.relays), set(), until=1.0)
    assert not moving
    t = 1.0
    seen = []
    for _ in range(cycles):
        pos, moving = bench.run_on(pos, moving, {"clk"}, t, t + high)
        t += high
        pos, moving = bench.run_on(pos, moving, set(), t, t + low)
        t += low
        out = bench.outputs_of(pos, {"clk": 0})
        seen.append(sum(out[f"q{i}"] << i for i in range(4)))
    return seen


@pytest.mark.parametrize("target", ["relay-spdt", "relay-dpdt"])
def test_counter_clock_figures_are_the_hand_sums_and_work_on_the_bench(tmp_path, data, target):
    t = load_target(target)
    b, a = flow.fit(read_design(data / "textbook" / "counter4.blif"), t)
    op, rel = _figures(t)
    ck = a.timing.clock
    # hand sums along the sequencer (see the module docstring)
    assert ck.high_min_s == pytest.approx(4 * op + rel)
    assert ck.low_min_s == pytest.approx(op + 5 * rel)
    assert ck.period_min_s == pytest.approx(2 * max(ck.high_min_s, ck.low_min_s))
    assert ck.max_hz == pytest.approx(1 / ck.period_min_s)
    # the bit's coil changes after the clock's relay and X, Y, Z have operated (a bit going to 0 loses its
    # hold when Z breaks HS); data inputs must hold until Y breaks the master's load
    assert ck.clock_to_q_s == pytest.approx(4 * op)
    assert ck.input_hold_s == pytest.approx(3 * op)
    # the bench: at the figures netfit gives, the counter counts 1, 2, ... every cycle
    bench = _bench(tmp_path, b, a, op, rel)
    assert _count(bench, ck.high_min_s * 1.001, ck.low_min_s * 1.001, 18) == [(k + 1) % 16 for k in range(18)]


@pytest.mark.parametrize("target", ["relay-spdt", "relay-dpdt"])
def test_counter_counts_at_the_figures_whatever_each_relay_s_speed(tmp_path, data, target):
    # the figures hold for every relay anywhere between its typical and its worst times (drawn at random
    # per relay, several draws): a bench of mixed fast and slow relays counts at netfit's clock
    t = load_target(target)
    b, a = flow.fit(read_design(data / "textbook" / "counter4.blif"), t)
    op, rel = _figures(t)
    part = next(p for p in t.parts.values() if p.relay is not None)
    fast = part.delay_typ["changeover"].value
    ck = a.timing.clock
    path = tmp_path / f"{b.design}.json"
    wjson.write_build(b, a, path)
    rng = random.Random(7)
    for _ in range(4):
        bench = TimedRelays(path, {p.ref: (rng.uniform(fast, op), rng.uniform(fast, rel)) for p in b.parts})
        assert _count(bench, ck.high_min_s, ck.low_min_s, 17) == [(k + 1) % 16 for k in range(17)]


def test_relay_critical_path_starts_where_it_starts(data):
    # the slowest path of a relay build is named from its real start: an input or a storage bit
    b, a = flow.fit(read_design(data / "textbook" / "full_adder.blif"), load_target("relay-dpdt"))
    st = a.timing.critical_start
    assert st is not None and st["kind"] == "input" and st["net"] in b.inputs
    assert a.timing.critical_path[-1]["net"] in {b.output_nets.get(o, o) for o in b.outputs}
    b, a = flow.fit(read_design(data / "textbook" / "counter4.blif"), load_target("relay-dpdt"))
    assert a.timing.critical_start["kind"] == "storage"


def test_two_phase_latches_are_refused_on_relays(tmp_path, netfit):
    # latches open on opposite levels of one enable, one feeding the other: as the enable changes one opens
    # while the other closes, and relays moving in any order let the data run through both
    p = tmp_path / "lat2.blif"
    p.write_text(".model lat2\n.inputs d e clk\n.outputs y\n.latch d q1 ah clk 0\n.names q1 e n1\n10 1\n01 1\n"
                 ".latch n1 q2 al clk 0\n.names q2 e y\n11 1\n.end\n")
    code, _, err = netfit("build", p, "--target", "relay-dpdt")
    assert code == 2 and "latch q2 is fed from latch q1" in err and "opposite levels of clk" in err
