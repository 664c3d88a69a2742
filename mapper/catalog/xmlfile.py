"""Reading catalog and target XML safely, and checking it against the shipped schemas.

Files are read with entity resolution, DTD loading and network access off; a
document type declaration or entity declaration is refused before the parser
sees the file, so a hostile file can neither read local files nor expand.
Schema faults come back as :class:`~mapper.errors.Diagnostic` objects with
file and line, one per line.
"""
from __future__ import annotations

import functools
import importlib.resources
import re

from lxml import etree

from ..errors import Diagnostic

__all__ = ["read_xml", "validate", "unsourced", "xml_parser", "MAX_BYTES"]

MAX_BYTES = 8 * 1024 * 1024  # catalogs are a few dozen kilobytes

_ENC_DECL = re.compile(rb"^<\?xml[^>]*?encoding\s*=\s*[\"']([A-Za-z0-9._\-]+)[\"']")


def xml_parser() -> etree.XMLParser:
    """The only parser catalogs and targets are read with: no entities, no DTD, no network."""
    return etree.XMLParser(resolve_entities=False, no_network=True, load_dtd=False, huge_tree=False,
                           dtd_validation=False, collect_ids=False, remove_comments=False)


def _line_of(data: bytes, offset: int) -> int:
    return data.count(b"\n", 0, offset) + 1


def read_xml(data: bytes, display: str, root_tag: str, what: str, err_cls):
    """Parse ``data`` safely; returns the root element or raises ``err_cls`` (one diagnostic)."""
    def fail(msg, line=None, col=None):
        raise err_cls(Diagnostic(msg, display, line, col))

    if len(data) > MAX_BYTES:
        fail(f"file is {len(data)} bytes; a {what} larger than {MAX_BYTES // (1024 * 1024)} MiB is refused")
    if data[:2] in (b"\xff\xfe", b"\xfe\xff") or b"\x00" in data[:4096]:
        fail(f"a {what} must be UTF-8 text", 1)
    try:
        data.decode("utf-8")
    except UnicodeDecodeError as exc:
        fail(f"a {what} must be UTF-8 text (bad byte at offset {exc.start})", _line_of(data, exc.start))
    if data.startswith(b"\xef\xbb\xbf"):
        data = data[3:]
    m = _ENC_DECL.match(data)
    if m and m.group(1).decode().lower().replace("_", "-") not in ("utf-8", "utf8", "us-ascii", "ascii"):
        fail(f"a {what} must be UTF-8 (the declaration says {m.group(1).decode()!r})", 1)
    # Refused before parsing: a catalog needs no DTD, and entities are how hostile XML reads local
    # files or expands without bound.  Nothing is parsed or fetched.
    for token, why in ((b"<!DOCTYPE", "a document type declaration (<!DOCTYPE ...>)"),
                       (b"<!ENTITY", "an entity declaration (<!ENTITY ...>)")):
        pos = data.find(token)
        if pos >= 0:
            fail(f"{why} is not allowed in a {what}; entities and DTDs are never loaded", _line_of(data, pos))
    try:
        root = etree.fromstring(data, xml_parser())
    except etree.XMLSyntaxError as exc:
        msg = re.sub(r", line \d+, column \d+$", "", exc.msg or "malformed XML")
        line, col = (exc.position if exc.position else (exc.lineno, None))
        fail(f"malformed XML: {msg}", line, col or None)
    if root.getroottree().docinfo.doctype:  # type: ignore[union-attr]  # lxml-stubs lack DocInfo.doctype
        fail(f"a document type declaration is not allowed in a {what}", 1)
    if root.tag != root_tag:
        fail(f"expected a {what} (a <{root_tag}> element at the top), found <{root.tag}>", root.sourceline)
    return root


@functools.cache
def _schema(package: str, name: str) -> etree.RelaxNG:
    data = importlib.resources.files(package).joinpath(name).read_bytes()
    return etree.RelaxNG(etree.fromstring(data, xml_parser()))


def validate(root, package: str, schema_name: str, display: str, what: str) -> list:
    """Diagnostics for every way ``root`` breaks schema ``schema_name`` of ``package`` (empty: it fits)."""
    schema = _schema(package, schema_name)
    if schema.validate(root):
        return []
    # libxml2 often says several things about one fault (the datatype, then the element that failed);
    # one diagnostic per line reads better.  Messages without a line only repeat a lined one.
    by_line: dict = {}
    for e in schema.error_log:
        msgs = by_line.setdefault(e.line or None, [])
        if e.message not in msgs:
            msgs.append(e.message)
    if len(by_line) > 1:
        by_line.pop(None, None)
    return [Diagnostic(f"does not fit the {what} schema: {'; '.join(msgs)}", display, line)
            for line, msgs in sorted(by_line.items(), key=lambda kv: kv[0] or 0)]


_FIGURE_TAGS = frozenset({"pinout", "typ", "max", "quiescent", "per-unit", "input", "output", "rating", "price",
                          "coil-voltage", "coil-resistance", "coil-current", "operate-time", "release-time",
                          "bounce-time", "contact-rating"})


def unsourced(root, display: str) -> list:
    """Figures without a ``source`` (the schema would only say the element 'failed to validate')."""
    out = []
    for el in root.iter():
        if not isinstance(el.tag, str) or (el.tag in ("input", "output") and el.get("value") is None):
            continue  # a cell's pins, not figures
        if el.tag in _FIGURE_TAGS and not (el.get("source") or "").strip():
            out.append(Diagnostic(f"<{el.tag}> has no source=\"...\": every number says where it came from "
                                  f"(a generic datasheet family, common practice, from memory, ...)", display,
                                  el.sourceline))
    return out
