"""report.html and schematic.svg rendered by a real browser engine.

Source of the check: Chromium (Debian's ``chromium``, installed by ``make
test``) in headless mode opens the page from disk, prints its DOM and takes a
screenshot; the test reads the DOM with lxml, decodes the PNG with the
standard library (``zlib``; filters as in the PNG specification, W3C/ISO
15948, section 9) and requires that the tables are there, that the inline
drawing is painted (its net colours appear on screen), and that the browser
logged no console message (the page has no scripts; any message means a
fault).
"""
from __future__ import annotations

import shutil
import struct
import subprocess
import zlib
from collections import Counter
from pathlib import Path

import pytest
from lxml import html as lxml_html

from mapper import flow
from mapper.read import read_design
from mapper.write.svg import _PALETTE

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
    design = read_design(DATA / "c17.blif")
    r = flow.fit(design, flow.load_target("gates-74"), effort=0)
    flow.write_build(r, out)
    return out, r.build


def test_report_tables_and_drawing_in_the_dom(report, tmp_path):
    out, b = report
    r = _chromium(tmp_path, "--dump-dom", (out / "report.html").as_uri())
    assert r.returncode == 0, r.stderr[-2000:]
    assert not _console(r.stderr)
    doc = lxml_html.fromstring(r.stdout)
    parts = doc.get_element_by_id("parts-table")
    rows = parts.findall(".//tr")
    # one header, one row per part number, support parts, a total
    assert len(rows) == 1 + len(b.part_counts()) + len(b.support_counts()) + 1
    nets = doc.get_element_by_id("nets-table").findall(".//tr")
    assert len(nets) == 1 + len(b.nets())
    svg = doc.xpath("//div[@class='drawing']/*[local-name()='svg']")
    assert len(svg) == 1
    assert len(svg[0].xpath(".//*[local-name()='rect']")) >= len(b.cells)  # a box per cell
    assert doc.get_element_by_id("summary-table") is not None


def test_report_screenshot_is_painted_with_the_drawing(report, tmp_path):
    out, b = report
    shot = tmp_path / "report.png"
    r = _chromium(tmp_path, f"--screenshot={shot}", "--window-size=1000,1300", (out / "report.html").as_uri())
    assert r.returncode == 0 and shot.exists(), r.stderr[-2000:]
    assert not _console(r.stderr)
    w, h, rows = decode_png(shot.read_bytes())
    pixels = [p for row in rows for p in row]
    distinct_counts = Counter(pixels)
    distinct = set(distinct_counts)
    assert len(distinct) > 50  # not blank: text, tables, drawing
    white = sum(1 for p in pixels if p == (255, 255, 255))
    assert 0.3 < white / len(pixels) < 0.995
    # the drawing's net colours (strokes of the inline SVG; nothing else on the page uses them) are on screen
    wanted = [tuple(int(c[i:i + 2], 16) for i in (1, 3, 5)) for c in _PALETTE[:6]]
    counts = [sum(n for p, n in distinct_counts.items() if sum(abs(p[i] - colour[i]) for i in range(3)) < 60)
              for colour in wanted]
    assert sum(1 for c in counts if c >= 5) >= 4 and sum(counts) >= 100, counts


def test_schematic_svg_renders_alone(report, tmp_path):
    out, b = report
    shot = tmp_path / "svg.png"
    r = _chromium(tmp_path, f"--screenshot={shot}", "--window-size=900,500", (out / "schematic.svg").as_uri())
    assert r.returncode == 0 and shot.exists(), r.stderr[-2000:]
    w, h, rows = decode_png(shot.read_bytes())
    dark = sum(1 for row in rows for p in row if sum(p) < 200)  # box outlines and text
    assert dark > 500
