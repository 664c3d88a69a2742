"""The bring-up section of report.html (``netfit build --bringup``), read back from the page.

Levels are checked against the published c17 gate list (ISCAS-85, Brglez
and Fujiwara 1985), evaluated by the test itself.
"""
from __future__ import annotations

from lxml import html

C17 = {"N10": ("N1", "N3"), "N11": ("N3", "N6"), "N16": ("N2", "N11"),
       "N19": ("N11", "N7"), "N22": ("N10", "N16"), "N23": ("N16", "N19")}
INS = ["N1", "N2", "N3", "N6", "N7"]


def test_report_section_lists_the_settings(netfit, tmp_path):
    code, out, err = netfit("build", "tests/data/c17.blif", "-t", "nand-only", "-o", tmp_path / "b", "--bringup",
                            "-q")
    assert code == 0, err
    page = html.fromstring((tmp_path / "b" / "report.html").read_bytes())
    head = page.get_element_by_id("bringup")
    assert "22 of 22 detectable fault classes detected" in head.getnext().text_content()
    tables = [t for t in head.itersiblings() if t.tag == "table"][:3]
    rows = tables[1].findall("tr")[1:]
    assert rows
    for tr in rows:
        cells = [td.text_content().strip() for td in tr.findall("td")]
        v = dict(zip(INS, map(int, cells[1:6])))
        for g, (a, b) in C17.items():
            v[g] = 1 - (v[a] & v[b])
        assert [int(cells[7]), int(cells[8])] == [v["N22"], v["N23"]]
    assert tables[2].findall("tr")[1:]   # the diagnosis table has lines


def test_report_has_no_section_unless_asked(netfit, tmp_path):
    code, out, err = netfit("build", "tests/data/c17.blif", "-t", "nand-only", "-o", tmp_path / "b", "-q")
    assert code == 0
    assert 'id="bringup"' not in (tmp_path / "b" / "report.html").read_text()


def test_report_section_lists_the_sequences(netfit, tmp_path):
    # the textbook 4-bit counter (tests/data/textbook): counts 0, 1, 2, ... from the start state, one per pulse
    code, out, err = netfit("build", "tests/data/textbook/counter4.blif", "-t", "gates-74", "-o", tmp_path / "b",
                            "--bringup", "-q")
    assert code == 0, err
    page = html.fromstring((tmp_path / "b" / "report.html").read_bytes())
    head = page.get_element_by_id("bringup")
    assert "sequence(s)" in head.getnext().text_content()
    assert len([li for li in page.iter("li") if "(clear):" in li.text_content()]) == 4   # four flip-flops cleared
    table = [t for t in head.itersiblings() if t.tag == "table"][1]
    rows = [[td.text_content().strip() for td in tr.findall("td")] for tr in table.findall("tr")[1:]]
    assert rows
    for k, cells in enumerate(rows):   # setting, sequence, step, (no inputs), blank, q0..q3, then, probes
        step = int(cells[2])
        assert [int(x) for x in cells[4:8]] == [(step - 1) >> i & 1 for i in range(4)]
        assert cells[8] == ("pulse clk" if k + 1 < len(rows) else "")   # one sequence: no pulse after the last
