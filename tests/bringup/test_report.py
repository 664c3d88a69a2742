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
