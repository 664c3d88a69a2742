"""report.html, schematic.svg and board.svg rendered by a real browser engine.

Sources of the checks: Chromium (Debian's ``chromium``, installed by ``make
test``) in headless mode opens the page from disk, prints its DOM, takes a
screenshot and prints the page to PDF.  The test reads the DOM with lxml,
decodes the PNG with the standard library (``zlib``; filters as in the PNG
specification, W3C/ISO 15948, section 9) and reads the PDF with pypdf (an
independent PDF library): the tables are there, the drawings are painted,
each schematic page prints as one landscape sheet, no text lies outside
its printed page, and in a window as wide as a printed A4 page nothing
scrolls sideways (a copy of the page with a measuring script added: the
report itself has none).  The browser must log no console message.
"""
from __future__ import annotations

import json
import re
import shutil
import struct
import subprocess
import zlib
from collections import Counter
from pathlib import Path

import pypdf  # the outside PDF reader: a test dependency, never skipped
import pytest
from lxml import html as lxml_html

from mapper import flow
from mapper.read import read_design
from mapper.write.drawing import INK, TINT

DATA = Path(__file__).parent.parent / "data"
CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")


def _chromium(tmp_path, *args, timeout=90):
    # a missing browser is a failure, not a skip: `make debs` installs it
    assert CHROMIUM is not None, "chromium not installed (`make debs` installs it)"
    cmd = [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
           "--disable-component-update", "--disable-sync", "--no-first-run", "--hide-scrollbars",
           f"--user-data-dir={tmp_path / 'profile'}", "--enable-logging=stderr", "--v=0", *map(str, args)]
    return subprocess.run(cmd, capture_output=True, text=True, timeout=timeout)


def decode_png(data: bytes):
    """(width, height, rows of (r, g, b) tuples) of an 8-bit RGB or RGBA, non-interlaced PNG."""
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    pos, idat, w = 8, b"", None
    while pos < len(data):
        length, kind = struct.unpack(">I4s", data[pos:pos + 8])
        body = data[pos + 8:pos + 8 + length]
        if kind == b"IHDR":
            w, h, depth, ctype, _, _, interlace = struct.unpack(">IIBBBBB", body)
            assert depth == 8 and ctype in (2, 6) and interlace == 0, (depth, ctype, interlace)
            bpp = 3 if ctype == 2 else 4
        elif kind == b"IDAT":
            idat += body
        pos += 12 + length
    raw = zlib.decompress(idat)
    stride = w * bpp
    rows, prev = [], bytes(stride)
    for y in range(h):
        f = raw[y * (stride + 1)]
        cur = raw[y * (stride + 1) + 1:(y + 1) * (stride + 1)]
        if f == 0:
            line = bytearray(cur)
        elif f == 2:  # Up
            line = bytearray((x + b) & 255 for x, b in zip(cur, prev))
        else:
            line = bytearray(cur)
            for i in range(stride):
                a = line[i - bpp] if i >= bpp else 0
                if f == 1:  # Sub
                    line[i] = (line[i] + a) & 255
                    continue
                b = prev[i]
                if f == 3:  # Average
                    line[i] = (line[i] + ((a + b) >> 1)) & 255
                    continue
                c = prev[i - bpp] if i >= bpp else 0  # Paeth
                pa, pb, pc = abs(b - c), abs(a - c), abs(a + b - 2 * c)
                line[i] = (line[i] + (a if pa <= pb and pa <= pc else (b if pb <= pc else c))) & 255
        rows.append([tuple(line[x:x + 3]) for x in range(0, stride, bpp)])
        prev = line
    return w, h, rows


def _console(stderr: str) -> list:
    return [ln for ln in stderr.splitlines() if ":CONSOLE(" in ln or "Uncaught" in ln]


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    out = tmp_path_factory.mktemp("report")
    design = read_design(DATA / "textbook" / "seg7.blif")  # a build of several schematic pages
    r = flow.fit(design, flow.load_target("nand-only"), effort=0)
    flow.write_build(r, out, sockets=True, spares="10%")
    return out, r.build


def _sheets(doc):
    return doc.xpath("//div[contains(@class, 'sheet-page')]/*[local-name()='svg']")


def test_report_tables_and_drawings_in_the_dom(report, tmp_path):
    out, b = report
    r = _chromium(tmp_path, "--dump-dom", (out / "report.html").as_uri())
    assert r.returncode == 0, r.stderr[-2000:]
    assert not _console(r.stderr)
    doc = lxml_html.fromstring(r.stdout)
    rows = doc.get_element_by_id("parts-table").findall(".//tr")
    # a header, one row per part number, support parts and sockets, three totals and the total
    n_sockets = len({b.part_def(p.ref).package for p in b.parts if b.part_def(p.ref).kind == "chip"})
    assert len(rows) == 1 + len(b.part_counts()) + len(b.support_counts()) + n_sockets + 3 + 1
    nets = doc.get_element_by_id("nets-table").findall(".//tr")
    assert len(nets) == 1 + len(b.nets())
    wires = doc.get_element_by_id("wires-table").findall(".//tr")
    text = (out / "wiring.txt").read_text()
    assert len(wires) - 1 == len(re.findall(r"^  \[ \] +\d+ ", text, re.M)) > 0
    sheets = _sheets(doc)
    assert len(sheets) >= 2
    titles = [" ".join(t.itertext()) for s in sheets for t in s.iter("{*}text") if "page " in (t.text or "")]
    assert [t for t in titles if re.fullmatch(r"page \d+ of \d+", t)] == \
        [f"page {k} of {len(sheets)}" for k in range(1, len(sheets) + 1)]
    assert doc.xpath("//*[local-name()='svg']//*[@class='part']")  # the board drawing
    assert doc.get_element_by_id("summary-table") is not None


def test_report_screenshot_is_painted_with_the_drawings(report, tmp_path):
    out, b = report
    shot = tmp_path / "report.png"
    r = _chromium(tmp_path, f"--screenshot={shot}", "--window-size=1000,2600", (out / "report.html").as_uri())
    assert r.returncode == 0 and shot.exists(), r.stderr[-2000:]
    assert not _console(r.stderr)
    w, h, rows = decode_png(shot.read_bytes())
    pixels = [p for row in rows for p in row]
    counts = Counter(pixels)
    assert len(counts) > 50  # not blank: text, tables, drawings
    white = counts[(255, 255, 255)]
    assert 0.3 < white / len(pixels) < 0.995
    # the symbols' tint (used by nothing else on the page) is on screen
    tint = tuple(int(TINT[i:i + 2], 16) for i in (1, 3, 5))
    assert sum(n for p, n in counts.items() if sum(abs(p[i] - tint[i]) for i in range(3)) < 6) > 500


def test_schematic_and_board_svg_render_alone(report, tmp_path):
    out, b = report
    ink = tuple(int(INK[i:i + 2], 16) for i in (1, 3, 5))
    for name in ("schematic.svg", "board.svg"):
        shot = tmp_path / f"{name}.png"
        r = _chromium(tmp_path, f"--screenshot={shot}", "--window-size=900,700", (out / name).as_uri())
        assert r.returncode == 0 and shot.exists(), r.stderr[-2000:]
        w, h, rows = decode_png(shot.read_bytes())
        dark = sum(1 for row in rows for p in row if sum(abs(p[i] - ink[i]) for i in range(3)) < 90)
        assert dark > 500, name


_MEASURE = """<script>
(function () {
  const out = [];
  const width = document.documentElement.clientWidth;
  if (document.documentElement.scrollWidth > width + 1) out.push("page scrolls sideways: " +
      document.documentElement.scrollWidth + " > " + width);
  for (const e of document.body.querySelectorAll("*")) {
    const s = getComputedStyle(e);
    if ((s.overflowX === "auto" || s.overflowX === "scroll") && e.scrollWidth > e.clientWidth + 1)
      out.push("scroll box: " + e.tagName + "." + e.className);
    const r = e.getBoundingClientRect();
    if (r.width > 0 && (r.right > width + 1 || r.left < -1))
      out.push("outside the page: " + e.tagName + " " + (e.id || e.getAttribute("class") || "") + " " +
               Math.round(r.left) + ".." + Math.round(r.right));
  }
  const p = document.createElement("pre");
  p.id = "measured";
  p.textContent = JSON.stringify(out.slice(0, 20));
  document.body.appendChild(p);
})();
</script>"""


def test_report_has_no_scroll_boxes_and_nothing_outside_a_page_width(report, tmp_path):
    # 700 CSS px is the text width of an A4 page with 12 mm margins (186 mm at 96 px per inch)
    out, b = report
    page = tmp_path / "measure.html"
    page.write_text((out / "report.html").read_text().replace("</body>", _MEASURE + "</body>"))
    r = _chromium(tmp_path, "--dump-dom", "--window-size=700,1000", page.as_uri())
    assert r.returncode == 0, r.stderr[-2000:]
    doc = lxml_html.fromstring(r.stdout)
    found = json.loads(doc.get_element_by_id("measured").text)
    assert found == [], found


def test_report_prints_each_schematic_page_on_one_landscape_sheet(report, tmp_path):
    out, b = report
    pdf = tmp_path / "report.pdf"
    r = _chromium(tmp_path, "--no-pdf-header-footer", f"--print-to-pdf={pdf}", (out / "report.html").as_uri(),
                  timeout=150)
    assert r.returncode == 0 and pdf.exists(), r.stderr[-2000:]
    reader = pypdf.PdfReader(str(pdf))
    sheet_pages = {}
    outside = []
    for i, pg in enumerate(reader.pages):
        w, h = float(pg.mediabox.width), float(pg.mediabox.height)
        found = []

        def visit(text, cm, tm, font, size, w=w, h=h, found=found):
            if text.strip():
                x = tm[4] * cm[0] + tm[5] * cm[2] + cm[4]
                y = tm[4] * cm[1] + tm[5] * cm[3] + cm[5]
                found.append((x, y, text))

        text = pg.extract_text(visitor_text=visit)
        outside += [(i + 1, t) for x, y, t in found if not (0 <= x <= w and 0 <= y <= h)]
        for k in re.findall(r"page (\d+) of (\d+)", text):
            sheet_pages.setdefault(k, []).append((i + 1, w > h))
    n = len(_sheets(lxml_html.fromstring((out / "report.html").read_text())))
    # every schematic page is printed exactly once, alone on a landscape sheet
    assert sorted(sheet_pages) == sorted((str(k), str(n)) for k in range(1, n + 1)), sheet_pages
    assert all(len(v) == 1 and v[0][1] for v in sheet_pages.values()), sheet_pages
    assert len({v[0][0] for v in sheet_pages.values()}) == n
    assert len(reader.pages) > n
    assert not outside, outside[:5]


def test_schematic_file_prints_one_page_to_a_sheet(report, tmp_path):
    out, b = report
    pdf = tmp_path / "schematic.pdf"
    r = _chromium(tmp_path, "--no-pdf-header-footer", f"--print-to-pdf={pdf}", (out / "schematic.svg").as_uri())
    assert r.returncode == 0 and pdf.exists(), r.stderr[-2000:]
    reader = pypdf.PdfReader(str(pdf))
    n = len(reader.pages)
    assert n >= 2
    for k, pg in enumerate(reader.pages, 1):
        # 266.7 mm x 193.04 mm in points (72 to the inch): fits landscape A4 and Letter
        assert abs(float(pg.mediabox.width) - 266.7 / 25.4 * 72) < 2
        assert abs(float(pg.mediabox.height) - 193.04 / 25.4 * 72) < 2
        assert re.findall(r"page \d+ of \d+", pg.extract_text()) == [f"page {k} of {n}"]
