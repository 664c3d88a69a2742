"""The ordering list: package, sorting, totals, sockets, spares; and the drawings' own palette.

Sources: the quantities are checked against the build itself (one part per reference, one
socket per chip of a package); the palette against the relative luminance formula of WCAG 2.1
(section "relative luminance", sRGB), computed here on its own.
"""
from __future__ import annotations

import csv
import io
import itertools
import math
from decimal import Decimal
from pathlib import Path

import pytest

from mapper import flow
from mapper.errors import UsageError
from mapper.read import read_design
from mapper.write.drawing import MIN_STEP, PALETTE
from mapper.write.parts import order_rows, parts_csv, spares_from_text

DATA = Path(__file__).parent.parent / "data"


def _build(target="gates-74"):
    return flow.fit(read_design(DATA / "textbook" / "full_adder.blif"), flow.load_target(target), effort=0).build


def test_rows_sorted_by_kind_then_part_with_package_and_price_source():
    b = _build("relay-spdt")
    data = order_rows(b)
    kinds = [r["kind"] for r in data["rows"]]
    assert kinds == sorted(kinds, key=["chip", "relay", "support", "socket"].index)
    for kind, group in itertools.groupby(data["rows"], key=lambda r: r["kind"]):
        parts = [r["part"] for r in group]
        assert parts == sorted(parts), kind
    for r in data["rows"]:
        pd = b.target.parts[r["part"]]
        assert r["package"] == pd.package and r["price_source"] == pd.price.source


def test_separate_totals_for_logic_and_support_parts():
    b = _build()
    data = order_rows(b, copies=3)
    logic, support = data["totals"]["logic"], data["totals"]["support"]
    assert logic["quantity"] == 3 * len(b.parts)
    assert support["quantity"] == 3 * len(b.support)
    assert data["total"]["quantity"] == logic["quantity"] + support["quantity"]
    assert data["total"]["extended_price"] == logic["extended_price"] + support["extended_price"]


@pytest.mark.parametrize("text,extra", [("2", lambda q: 2), ("10%", lambda q: math.ceil(q / 10)),
                                        ("50%", lambda q: math.ceil(q / 2))])
def test_spares_per_row(text, extra):
    b = _build()
    plain = {r["part"]: r["quantity"] for r in order_rows(b, copies=2)["rows"]}
    rows = order_rows(b, copies=2, spares=text)["rows"]
    for r in rows:
        assert r["spares"] == extra(plain[r["part"]]) and r["quantity"] == plain[r["part"]] + r["spares"]
        assert r["extended_price"] == r["unit_price"] * r["quantity"]


def test_sockets_one_per_chip_by_package():
    b = _build("gates-74")
    text = parts_csv(b, copies=2, sockets=True)
    rows = list(csv.DictReader(io.StringIO(text)))
    sockets = [r for r in rows if r["kind"] == "socket"]
    packages = {}
    for p in b.parts:
        packages[b.part_def(p.ref).package] = packages.get(b.part_def(p.ref).package, 0) + 1
    assert {r["package"]: int(r["quantity"]) for r in sockets} == {k: 2 * v for k, v in packages.items()}
    assert all(r["price_source"] == "no price in the catalog" for r in sockets)  # the catalogs price none
    assert rows[-1]["part"] == "total" and Decimal(rows[-1]["extended_price"]) > 0


@pytest.mark.parametrize("bad", ["-1", "x", "1.5", "%"])
def test_bad_spares_are_usage_errors(bad):
    with pytest.raises(UsageError, match="--spares"):
        spares_from_text(bad)


def test_parts_command_with_sockets_and_spares(netfit):
    code, out, err = netfit("parts", DATA / "c17.blif", "-t", "gates-74", "--effort", "0", "--sockets",
                            "--spares", "1", "--json", as_json=True)
    assert code == 0, err
    assert out["sockets"] is True and out["spares"] == ["count", 1]
    assert any(r["kind"] == "socket" for r in out["rows"])
    assert set(out["totals"]) == {"logic", "support", "sockets"}
    with pytest.raises(SystemExit) as exc:
        netfit("parts", DATA / "c17.blif", "-t", "gates-74", "--spares", "lots")
    assert exc.value.code == 2


def _luminance(hex_colour: str) -> float:
    # WCAG 2.1 relative luminance: sRGB channels linearised, weighted 0.2126 / 0.7152 / 0.0722
    def lin(c):
        c = c / 255
        return c / 12.92 if c <= 0.03928 else ((c + 0.055) / 1.055) ** 2.4
    r, g, b = (int(hex_colour[i:i + 2], 16) for i in (1, 3, 5))
    return 0.2126 * lin(r) + 0.7152 * lin(g) + 0.0722 * lin(b)


def test_palette_reads_in_greyscale():
    lum = [_luminance(c) for c in PALETTE]
    assert len(set(PALETTE)) == len(PALETTE) >= 5
    assert min(abs(a - c) for a, c in itertools.combinations(lum, 2)) >= MIN_STEP >= 0.05
