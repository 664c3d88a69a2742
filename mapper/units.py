"""Numbers with SI units: read from catalogs, written for people.

:func:`parse_quantity` reads the figures of catalog files (``"7 ns"``,
``"10 kohm"``); :func:`si` writes a figure with an SI prefix and three
significant digits, the one formatter every report and the command line use.

Examples
--------
>>> parse_quantity("7 ns")
(7e-09, 's')
>>> parse_quantity("10 kohm")
(10000.0, 'ohm')
>>> si(7e-09, "s")
'7 ns'
>>> si(0.000606, "A")
'606 µA'
>>> si(0.0009996, "A")
'1 mA'
>>> si(1500.0, "ohm")
'1.5 kohm'
>>> si(0, "s"), si(None, "s")
('0 s', '-')
>>> parse_quantity("1e99")
Traceback (most recent call last):
...
ValueError: '1e99' is out of range: a figure must lie between 1e-18 and 1e+12 in SI units (or be 0)
"""
from __future__ import annotations

import re
from decimal import Decimal

__all__ = ["parse_quantity", "si", "UNIT_WORDS"]

#: what each unit measures, for messages
UNIT_WORDS = {"s": "a time (s)", "A": "a current (A)", "V": "a voltage (V)", "ohm": "a resistance (ohm)",
              "UL": "a number of unit loads (UL)", "": "a plain number", "W": "a power (W)",
              "F": "a capacitance (F)", "Hz": "a frequency (Hz)"}
_PREFIX = {"": 0, "p": -12, "n": -9, "u": -6, "µ": -6, "m": -3, "k": 3, "M": 6, "G": 9}  # powers of ten
_QTY = re.compile(r"^\s*([0-9]+(?:\.[0-9]+)?(?:[eE][+-]?[0-9]+)?)\s?(p|n|u|µ|m|k|M|G)?(s|A|V|W|F|ohm|Ω|UL|Hz)?\s*$")
_SCALES = ((1e6, "M"), (1e3, "k"), (1, ""), (1e-3, "m"), (1e-6, "µ"), (1e-9, "n"), (1e-12, "p"))
#: the figures a catalog may give, in SI units: nothing a part is sold or measured by lies outside
#: (a price of 10^12, a delay of a picosecond's millionth are typing errors, or hostile)
FIGURE_MIN, FIGURE_MAX = 1e-18, 1e12
#: longest quantity text and largest decimal exponent read (checked before any number is made of them)
_MAX_TEXT, _MAX_EXP = 64, 100


def parse_quantity(text: str) -> tuple[float, str]:
    """``"7 ns"`` -> ``(7e-09, "s")``; ``"10 kohm"`` -> ``(10000.0, "ohm")``; ``"0.30"`` -> ``(0.3, "")``.

    Raises ``ValueError`` for anything else: a prefix without a unit, text
    longer than 64 characters, an exponent beyond 100, or a value outside
    :data:`FIGURE_MIN` .. :data:`FIGURE_MAX` other than 0 (so every figure
    is finite).
    """
    if text is None or len(text) > _MAX_TEXT:
        raise ValueError(f"{_clip(text)!r} is not a number with an SI unit")
    m = _QTY.match(text)
    if not m:
        raise ValueError(f"{text!r} is not a number with an SI unit")
    num, prefix, unit = m.group(1), m.group(2) or "", m.group(3) or ""
    if unit == "Ω":
        unit = "ohm"
    if prefix and not unit:
        raise ValueError(f"{text!r} has a prefix {prefix!r} but no unit")
    mantissa, _, exp = num.lower().partition("e")
    if exp and abs(int(exp)) > _MAX_EXP:
        raise ValueError(f"{text!r} is out of range: its exponent is beyond {_MAX_EXP}")
    # scaled in decimal so "7 ns" is exactly the float nearest 7e-9
    value = float(Decimal(num).scaleb(_PREFIX[prefix]))
    if value != 0 and not (FIGURE_MIN <= value <= FIGURE_MAX):
        raise ValueError(f"{text!r} is out of range: a figure must lie between {FIGURE_MIN:g} and "
                         f"{FIGURE_MAX:g} in SI units (or be 0)")
    return value, unit


def _clip(text, n: int = 24) -> str:
    text = "" if text is None else str(text)
    return text if len(text) <= n else text[:n] + "…"


def si(value, unit: str = "") -> str:
    """``value`` with an SI prefix and three significant digits (``"-"`` for ``None``).

    A value that rounds up to the next prefix takes it (``0.9996 mA`` is
    ``1 mA``, never ``1e+03 µA``).
    """
    if value is None:
        return "-"
    value = float(value)
    if value == 0:
        return f"0 {unit}".rstrip()
    for scale, prefix in _SCALES:
        if abs(value) >= scale * 0.9995:
            return f"{value / scale:.3g} {prefix}{unit}".rstrip()
    return f"{value:.3g} {unit}".rstrip()
