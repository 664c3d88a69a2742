"""What a missing wire leaves an input reading, from the catalogs, and how the fault list uses it.

Facts checked: a TTL (LS) input with no wire reads high (common practice);
a CMOS (HC) input with no wire floats and may read either level (generic
74HC datasheets: unused inputs must be tied); a relay coil with no wire
stays released (common practice).
"""
from __future__ import annotations

import importlib.resources

from mapper import flow
from mapper.bringup.faults import fault_list
from mapper.catalog import builtin_catalogs, load_catalog


def test_every_logic_part_says_what_an_open_input_reads():
    seen = {}
    root = importlib.resources.files("mapper.libraries")
    for name in builtin_catalogs():
        parts, _ = load_catalog(root / f"{name}.xml")
        for pid, pd in parts.items():
            if (pd.slots or pd.relay is not None) and not pd.roles:
                assert pd.open_input is not None and pd.open_input.source, pid
                seen[pid] = pd.open_input.reads
    assert seen.get("74LS00") == "high" and seen.get("74HC00") == "either"
    assert any(r == "low" for p, r in seen.items() if p not in ("74LS00", "74HC00"))


def test_open_pins_in_the_fault_list_follow_the_family():
    for target, open_levels in (("gates-74ls", {1}), ("gates-74", {0, 1})):
        fl = fault_list(flow.build("tests/data/c17.blif", target).build)
        pins = [f for f in fl.faults if f.kind == "pin"]
        assert {f.value for f in pins if f.open} == open_levels, target
        assert all(f.open == (f.value in open_levels) for f in pins)
