"""``netfit compare``: every target side by side, built in parallel processes.

Outside facts used: c17 is six 2-input NAND gates (Brglez and Fujiwara,
ISCAS 1985), so on the NAND-only target no more than six slots -- two quad
packages -- are needed; inverters alone cannot make a NAND (NOT is not
functionally complete; common practice), so a target of inverters only
fails and must show its error in its own column.  The bar chart is read
back with lxml as SVG.
"""
from __future__ import annotations

from pathlib import Path

import pytest
from lxml import etree

from mapper import flow
from mapper.read import read_design

DATA = Path(__file__).parent / "data"
SUMMARY_KEYS = {"design", "target", "parts_total", "parts", "cells", "support_parts", "delay_s", "cost", "currency",
                "verified"}


@pytest.fixture(scope="module")
def c17_compare():
    return flow.compare(DATA / "c17.blif", ["nand-only", "gates-74", "relay-spdt"], effort=0, jobs=2)


def test_compare_gives_every_target_a_summary(c17_compare):
    data = c17_compare
    assert data["design"] == "c17"
    assert [t["target"] for t in data["targets"]] == ["nand-only", "gates-74", "relay-spdt"]
    for t in data["targets"]:
        assert "error" not in t, t
        assert SUMMARY_KEYS <= set(t), SUMMARY_KEYS - set(t)
        # chips count sections, relays poles (issue 19: our own words, JSON keys included)
        word = "poles" if t["target"].startswith("relay") else "sections"
        assert {f"{word}_used", f"{word}_available", f"spare_{word}"} <= set(t)
        assert not any("slot" in k for k in t), [k for k in t if "slot" in k]
        assert t["verified"] == "proved"
    nand = data["targets"][0]
    # source: c17 is six NAND2 gates (ISCAS-85); a NAND-only build needs at most six sections, two quad chips
    assert set(nand["cells"]) == {"nand2"} and nand["sections_used"] <= 6 and nand["parts_total"] <= 2
    assert nand["sections_available"] == 4 * nand["parts_total"]


def test_compare_matches_a_single_build(c17_compare):
    # the worker processes build exactly what `netfit build` builds
    b, a = flow.fit(read_design(DATA / "c17.blif"), flow.load_target("gates-74"), effort=0)
    s = a.summary(b)
    got = c17_compare["targets"][1]
    for key in ("parts_total", "parts", "cells", "sections_used", "spare_sections", "support_parts", "cost"):
        assert got[key] == s[key], key


INV_ONLY = """<?xml version="1.0" encoding="UTF-8"?>
<target name="inv-only" kind="gates">
  <description>inverters only: too little to build a NAND (a target of this test)</description>
  <catalog src="74hc"/>
  <catalog src="support"/>
  <use cell="inv"><carrier part="74HC04"/></use>
  <support part="C-100N" per="chip" count="1" source="common practice"/>
</target>
"""


def test_a_target_that_cannot_build_shows_its_error(netfit, tmp_path):
    # inverters alone cannot make c17's NAND gates (common practice: NOT is not functionally complete)
    inv = tmp_path / "inv-only.xml"
    inv.write_text(INV_ONLY)
    code, data, err = netfit("compare", DATA / "c17.blif", "--targets", f"{inv},gates-74",
                             "--effort", "0", "--json", "--jobs", "2", as_json=True)
    assert code == 0, err
    first, second = data["targets"]
    assert "error" in first and first["error"] and "verified" not in first
    assert second["target"] == "gates-74" and second["verified"] == "proved"
    code, text, _ = netfit("compare", DATA / "c17.blif", "--targets", f"gates-74,{inv}", "--effort", "0",
                           "--jobs", "1")
    assert code == 0
    header = next(ln for ln in text.splitlines() if "gates-74" in ln and "inv-only" in ln)
    assert header.index("gates-74") < header.index("inv-only")
    assert any(ln.startswith("error") for ln in text.splitlines())
    # every target failing is the answer "no": exit 1
    code, _, _ = netfit("compare", DATA / "c17.blif", "--targets", str(inv), "--effort", "0")
    assert code == 1


def test_compare_table_and_bar_chart(c17_compare, tmp_path):
    from mapper.write.compare import compare_svg, compare_table
    text = compare_table(c17_compare)
    for label in ("parts", "support parts", "in use", "spare", "cost", "worst delay", "supply current", "safe clock",
                  "glitches", "proof"):
        assert any(ln.startswith(label) for ln in text.splitlines()), label
    # the glitch row shows each target's count of glitches found (c17 is combinational: no clock)
    row = next(ln for ln in text.splitlines() if ln.startswith("glitches")).split()[1:]
    assert row == [str(t["hazards_total"]) for t in c17_compare["targets"] if "error" not in t]
    clock = next(ln for ln in text.splitlines() if ln.startswith("safe clock")).split()[2:]
    assert set(clock) == {"-"}
    svg = etree.fromstring(compare_svg(c17_compare).encode())
    assert svg.tag == "{http://www.w3.org/2000/svg}svg"
    bars = svg.findall(".//{http://www.w3.org/2000/svg}rect")
    # a background plus one bar per (figure, target) with a value
    assert len(bars) >= 1 + 3 * 3


def test_unknown_target_is_a_usage_error(netfit):
    code, out, err = netfit("compare", DATA / "c17.blif", "--targets", "gates-74,no-such-target")
    assert code == 2 and "no-such-target" in err


def test_compare_svg_option_writes_the_chart(netfit, tmp_path):
    chart = tmp_path / "cmp.svg"
    code, out, err = netfit("compare", DATA / "textbook" / "half_adder.blif", "--targets", "gates-74",
                            "--effort", "0", "--svg", chart)
    assert code == 0, err
    assert etree.parse(str(chart)).getroot().tag.endswith("svg")
