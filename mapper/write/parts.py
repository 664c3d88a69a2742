"""The ordering list of a build (``parts.csv``): what to buy, how many, and what it costs.

One row per part number, sorted by kind (chips, relays, support parts,
sockets) and then by part number, each with its description, kind,
package, quantity to order, how many of those are spares, sections used
and available (``sections_used``, ``sections_available``: the poles of a
relay are its sections here), unit price, extended price, currency,
the source of the price, and the references it is placed as.  Then the
totals: logic parts (chips and relays), support parts, sockets when asked
for, and last a row ``total`` over everything; its extended price is the
build summary's ``cost`` times the copies, plus spares and priced sockets.

Quantities are whole parts.  For ``copies`` N every copy is wired as the
build (``wiring.txt``), so N copies need N times each part: spare sections
are not pooled between copies, because their wiring would then differ
from the list.  ``spares`` adds parts to every row but sockets: ``"2"``
two more of each, ``"10%"`` a tenth more, rounded up.  ``sockets`` adds a
socket for every chip, by package; the catalogs price no sockets unless
they hold a part named ``SOCKET-<package>``.  Prices are summed in decimal,
so totals carry no float noise.

The file is written with Python's :mod:`csv` module (comma separated,
quoted where needed, one header row) rather than a template: quoting is
the csv module's job.
"""
from __future__ import annotations

import csv
import io
import logging
import math
import re
from collections import OrderedDict
from decimal import Decimal

from ..analyze.results import Analysis
from ..build import Build, ref_key
from ..errors import UsageError
from .files import atomic_write
from .layout import money

__all__ = ["COLUMNS", "order_rows", "parts_csv", "parts_json", "parts_table", "write_build", "spares_from_text",
           "KIND_ORDER"]

log = logging.getLogger(__name__)

COLUMNS = ("part", "description", "kind", "package", "quantity", "spares", "sections_used", "sections_available",
           "unit_price", "extended_price", "currency", "price_source", "refs")
#: the order rows are listed in
KIND_ORDER = ("chip", "relay", "support", "socket")
_TOTALS = (("logic", "total logic parts", ("chip", "relay")), ("support", "total support parts", ("support",)),
           ("sockets", "total sockets", ("socket",)))


def spares_from_text(text) -> tuple | None:
    """``"3"`` -> ``("count", 3)``; ``"10%"`` -> ``("percent", 10.0)``; ``None`` stays ``None``."""
    if text is None or isinstance(text, tuple):
        return text
    m = re.fullmatch(r"\s*(\d+(?:\.\d+)?)\s*(%?)\s*", str(text))
    if not m or (not m.group(2) and "." in m.group(1)):
        raise UsageError(f"--spares {text!r}: a whole number of spares per part, or a percentage such as 10%")
    return ("percent", float(m.group(1))) if m.group(2) else ("count", int(m.group(1)))


def _spares_for(qty: int, spares) -> int:
    if not spares or qty == 0:
        return 0
    kind, value = spares
    return int(value) if kind == "count" else math.ceil(qty * value / 100 - 1e-9)


def _price(pd) -> Decimal | None:
    return None if pd.price is None else Decimal(repr(pd.price.value))


def _natural(text: str):
    return [int(t) if t.isdigit() else t for t in re.split(r"(\d+)", text)]


def order_rows(b: Build, copies: int = 1, sockets: bool = False, spares=None) -> dict:
    """The ordering list as plain data.

    Returns ``{"copies", "rows": [row, ...], "totals": {"logic", "support"[, "sockets"]},
    "total": row, "currency"}``; each row has the keys of :data:`COLUMNS`
    (prices as :class:`~decimal.Decimal`, ``None`` when the catalog gives
    none; sections ``None`` for support parts and sockets).
    """
    if copies < 1:
        raise UsageError(f"--qty must be 1 or more (got {copies})")
    spares = spares_from_text(spares)
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
        rows.append(_row(pd, refs, copies, sum(used.get(r, 0) for r in refs), pd.units() * len(refs), spares))
    sgroups: OrderedDict[str, list] = OrderedDict()
    for s in sorted(b.support, key=lambda s: ref_key(s.ref)):
        sgroups.setdefault(s.part_id, []).append(s.ref)
    for pid, refs in sgroups.items():
        rows.append(_row(b.target.parts[pid], refs, copies, None, None, spares))
    if sockets:
        rows += _socket_rows(b, groups, copies)
    rows.sort(key=lambda r: (KIND_ORDER.index(r["kind"]) if r["kind"] in KIND_ORDER else len(KIND_ORDER),
                             _natural(r["part"])))
    currencies = sorted({r["currency"] for r in rows if r["currency"] and r["unit_price"] is not None})
    if len(currencies) > 1:
        log.warning("the catalogs price parts in several currencies (%s): the total mixes them",
                    ", ".join(currencies))
    totals = {}
    for key, label, kinds in _TOTALS:
        part = [r for r in rows if r["kind"] in kinds]
        if part or key != "sockets":
            totals[key] = _total(label, part, currencies)
    return {"copies": copies, "rows": rows, "totals": totals, "total": _total("total", rows, currencies),
            "currency": "/".join(currencies), "spares": spares, "sockets": sockets}


def _total(label: str, rows: list, currencies: list) -> dict:
    priced = [r["extended_price"] for r in rows if r["extended_price"] is not None]
    missing = len(rows) - len(priced)
    words = (["all parts"] if label == "total" else []) + ([f"{missing} row(s) without a price"] if missing else [])
    sections = [r for r in rows if r["sections_available"] is not None]
    return {
        "part": label, "description": ", ".join(words),
        "kind": "", "package": "", "quantity": sum(r["quantity"] for r in rows),
        "spares": sum(r["spares"] for r in rows),
        "sections_used": sum(r["sections_used"] for r in sections) if sections else None,
        "sections_available": sum(r["sections_available"] for r in sections) if sections else None,
        "unit_price": None, "extended_price": sum(priced, Decimal(0)) if priced or not rows else None,
        "currency": "/".join(currencies), "price_source": "", "refs": "",
    }


def _row(pd, refs, copies, used, available, spares) -> dict:
    unit = _price(pd)
    need = len(refs) * copies
    extra = _spares_for(need, spares)
    qty = need + extra
    return {
        "part": pd.id, "description": pd.description, "kind": pd.kind, "package": pd.package, "quantity": qty,
        "spares": extra,
        "sections_used": None if used is None else used * copies,
        "sections_available": None if available is None else available * copies,
        "unit_price": unit, "extended_price": None if unit is None else unit * qty,
        "currency": pd.currency if unit is not None else "",
        "price_source": pd.price.source if pd.price is not None else "no price in the catalog",
        "refs": " ".join(refs) + (f" (x{copies})" if copies > 1 else ""),
    }


def _socket_rows(b: Build, groups: dict, copies: int) -> list:
    by_package: OrderedDict[str, list] = OrderedDict()
    for pid, refs in groups.items():
        pd = b.target.parts[pid]
        if pd.kind == "chip":
            by_package.setdefault(pd.package, []).extend(refs)
    out = []
    for package, refs in by_package.items():
        refs = sorted(refs, key=ref_key)
        sock = b.target.parts.get(f"SOCKET-{package}")
        unit = _price(sock) if sock is not None else None
        qty = len(refs) * copies
        out.append({
            "part": f"SOCKET-{package}", "description": f"{package} socket, one per chip of that package",
            "kind": "socket", "package": package, "quantity": qty, "spares": 0,
            "sections_used": None, "sections_available": None, "unit_price": unit,
            "extended_price": None if unit is None else unit * qty,
            "currency": sock.currency if unit is not None and sock is not None else "",
            "price_source": sock.price.source if sock is not None and sock.price is not None
            else "no price in the catalog",
            "refs": " ".join(refs) + (f" (x{copies})" if copies > 1 else ""),
        })
    return out


def _cell(key, value) -> str:
    if value is None:
        return ""
    if key in ("unit_price", "extended_price"):
        return money(value)
    return str(value)


def _all_rows(data: dict) -> list:
    return data["rows"] + list(data["totals"].values()) + [data["total"]]


def parts_csv(b: Build, copies: int = 1, sockets: bool = False, spares=None) -> str:
    """``parts.csv`` text: a header row, one row per part number, the totals, and the ``total`` row last."""
    data = order_rows(b, copies, sockets, spares)
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(COLUMNS)
    for r in _all_rows(data):
        w.writerow([_cell(k, r[k]) for k in COLUMNS])
    return buf.getvalue()


def parts_json(b: Build, copies: int = 1, sockets: bool = False, spares=None) -> dict:
    """The ordering list for ``--json``: prices as numbers, keys as in :data:`COLUMNS`."""
    data = order_rows(b, copies, sockets, spares)

    def plain(r):
        return {k: (float(v) if isinstance(v, Decimal) else v) for k, v in r.items()}

    return {"design": b.design, "target": b.target.name, "copies": copies,
            "rows": [plain(r) for r in data["rows"]], "total": plain(data["total"]),
            "totals": {k: plain(v) for k, v in data["totals"].items()},
            "sockets": sockets, "spares": list(data["spares"]) if data["spares"] else None}


def parts_table(b: Build, copies: int = 1, sockets: bool = False, spares=None) -> str:
    """The ordering list as an aligned text table (for the terminal)."""
    data = order_rows(b, copies, sockets, spares)
    rows = _all_rows(data)
    word = "poles" if any(r["kind"] == "relay" for r in rows) else "sections"
    head = ("part", "package", "qty", "spares", word, "unit", "extended", "description")
    lines = []
    for r in rows:
        used = "" if r["sections_available"] in (None, 0) else f"{r['sections_used']}/{r['sections_available']}"
        lines.append((r["part"], r["package"], str(r["quantity"]), str(r["spares"] or ""), used,
                      money(r["unit_price"]),
                      (money(r["extended_price"]) + " " + r["currency"]).strip(), r["description"]))
    widths = [max(len(x[i]) for x in lines + [head]) for i in range(len(head) - 1)]
    out = []
    first_total = len(data["rows"])
    for k, row in enumerate([head] + lines):
        if k == first_total + 1 or k == len(lines):
            out.append("  ".join("-" * wd for wd in widths))
        cells = [row[0].ljust(widths[0]), row[1].ljust(widths[1])] + \
            [row[i].rjust(widths[i]) for i in range(2, len(widths))]
        out.append("  ".join(cells + [row[-1]]).rstrip())
    if copies > 1:
        out.append(f"for {copies} copies, each wired as the build")
    return "\n".join(out) + "\n"


def write_build(b: Build, analysis: Analysis, path, protect=(), copies: int = 1, sockets: bool = False,
                spares=None, **options) -> list:
    """Write ``parts.csv`` of ``b`` for ``copies`` copies to ``path`` (atomically)."""
    return [atomic_write(path, parts_csv(b, copies, sockets, spares), protect=protect)]
