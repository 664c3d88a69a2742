"""The ordering list of a build (``parts.csv``): what to buy, how many, and what it costs.

One row per part number: the logic parts (chips, relays) first, then the
support parts (decoupling capacitors, coil diodes, load resistors), each
with its description, kind, quantity, slots used and available (poles for
relays), unit price, extended price, currency, price source and the
references it is placed as.  A last row ``total`` sums quantities, slots
and extended prices; the sum equals the build summary's ``cost``
(times the number of copies).

Quantities are whole parts.  For ``copies`` N every copy is wired as the
build (``wiring.txt``), so N copies need N times each part: spare slots are
not pooled between copies, because their wiring would then differ from the
list.  Prices are summed in decimal, so totals carry no float noise.

The file is written with Python's :mod:`csv` module (comma separated,
quoted where needed, one header row) rather than a template: quoting is
the csv module's job.
"""
from __future__ import annotations

import csv
import io
import logging
from collections import OrderedDict
from decimal import Decimal

from ..analyze.results import Analysis
from ..build import Build, ref_key
from ..errors import UsageError
from .files import atomic_write
from .layout import money

__all__ = ["COLUMNS", "order_rows", "parts_csv", "parts_json", "parts_table", "write_build"]

log = logging.getLogger(__name__)

COLUMNS = ("part", "description", "kind", "quantity", "slots_used", "slots_available", "unit_price",
           "extended_price", "currency", "price_source", "refs")


def _price(pd) -> Decimal | None:
    return None if pd.price is None else Decimal(repr(pd.price.value))


def order_rows(b: Build, copies: int = 1) -> dict:
    """The ordering list as plain data.

    Returns ``{"copies", "rows": [row, ...], "total": row, "currency"}``;
    each row has the keys of :data:`COLUMNS` (prices as :class:`~decimal.Decimal`,
    ``None`` when the catalog gives none; slots ``None`` for support parts).
    """
    if copies < 1:
        raise UsageError(f"--qty must be 1 or more (got {copies})")
    groups: OrderedDict[str, list] = OrderedDict()
    for p in sorted(b.parts, key=lambda p: ref_key(p.ref)):
        groups.setdefault(p.part_id, []).append(p.ref)
    used: dict = {}
    for c in b.cells:
        used[c.part_ref] = used.get(c.part_ref, 0) + 1
    for k in b.contacts:
        used[k.part_ref] = used.get(k.part_ref, 0) + 1
    rows = []
    for pid, refs in groups.items():
        pd = b.target.parts[pid]
        per = pd.units()
        rows.append(_row(pd, refs, copies, sum(used.get(r, 0) for r in refs), per * len(refs)))
    sgroups: OrderedDict[str, list] = OrderedDict()
    for s in sorted(b.support, key=lambda s: ref_key(s.ref)):
        sgroups.setdefault(s.part_id, []).append(s.ref)
    for pid, refs in sgroups.items():
        rows.append(_row(b.target.parts[pid], refs, copies, None, None))
    currencies = sorted({r["currency"] for r in rows if r["currency"] and r["unit_price"] is not None})
    if len(currencies) > 1:
        log.warning("the catalogs price parts in several currencies (%s): the total mixes them",
                    ", ".join(currencies))
    priced = [r["extended_price"] for r in rows if r["extended_price"] is not None]
    total = {
        "part": "total", "description": "all parts" + (
            "" if len(priced) == len(rows) else f" ({len(rows) - len(priced)} without a price)"),
        "kind": "", "quantity": sum(r["quantity"] for r in rows),
        "slots_used": sum(r["slots_used"] or 0 for r in rows),
        "slots_available": sum(r["slots_available"] or 0 for r in rows),
        "unit_price": None, "extended_price": sum(priced, Decimal(0)),
        "currency": "/".join(currencies), "price_source": "", "refs": "",
    }
    return {"copies": copies, "rows": rows, "total": total, "currency": total["currency"]}


def _row(pd, refs, copies, used, available) -> dict:
    unit = _price(pd)
    qty = len(refs) * copies
    return {
        "part": pd.id, "description": pd.description, "kind": pd.kind, "quantity": qty,
        "slots_used": None if used is None else used * copies,
        "slots_available": None if available is None else available * copies,
        "unit_price": unit, "extended_price": None if unit is None else unit * qty,
        "currency": pd.currency if unit is not None else "",
        "price_source": pd.price.source if pd.price is not None else "no price in the catalog",
        "refs": " ".join(refs) + (f" (x{copies})" if copies > 1 else ""),
    }


def _cell(key, value) -> str:
    if value is None:
        return ""
    if key in ("unit_price", "extended_price"):
        return money(value)
    return str(value)


def parts_csv(b: Build, copies: int = 1) -> str:
    """``parts.csv`` text: a header row, one row per part number, a ``total`` row."""
    data = order_rows(b, copies)
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(COLUMNS)
    for r in data["rows"] + [data["total"]]:
        w.writerow([_cell(k, r[k]) for k in COLUMNS])
    return buf.getvalue()


def parts_json(b: Build, copies: int = 1) -> dict:
    """The ordering list for ``--json``: prices as numbers, SI-free keys as in :data:`COLUMNS`."""
    data = order_rows(b, copies)

    def plain(r):
        return {k: (float(v) if isinstance(v, Decimal) else v) for k, v in r.items()}

    return {"design": b.design, "target": b.target.name, "copies": copies,
            "rows": [plain(r) for r in data["rows"]], "total": plain(data["total"])}


def parts_table(b: Build, copies: int = 1) -> str:
    """The ordering list as an aligned text table (for the terminal)."""
    data = order_rows(b, copies)
    head = ("part", "qty", "slots", "unit", "extended", "description")
    lines = []
    for r in data["rows"] + [data["total"]]:
        slots = "" if r["slots_available"] in (None, 0) else f"{r['slots_used']}/{r['slots_available']}"
        lines.append((r["part"], str(r["quantity"]), slots, money(r["unit_price"]),
                      (money(r["extended_price"]) + " " + r["currency"]).strip(), r["description"]))
    widths = [max(len(x[i]) for x in lines + [head]) for i in range(len(head) - 1)]
    out = []
    for k, row in enumerate([head] + lines):
        if k == len(lines):
            out.append("  ".join("-" * wd for wd in widths))
        cells = [row[0].ljust(widths[0])] + [row[i].rjust(widths[i]) for i in range(1, len(widths))]
        out.append("  ".join(cells + [row[-1]]).rstrip())
    if copies > 1:
        out.append(f"for {copies} copies, each wired as the build")
    return "\n".join(out) + "\n"


def write_build(b: Build, analysis: Analysis, path, protect=(), copies: int = 1, **options) -> list:
    """Write ``parts.csv`` of ``b`` for ``copies`` copies to ``path`` (atomically)."""
    return [atomic_write(path, parts_csv(b, copies), protect=protect)]
