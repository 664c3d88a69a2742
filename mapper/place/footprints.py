"""Where the pins of a package stand, in holes of 0.1 inch, seen from the part side.

* ``DIP-N``: two rows 0.3 inch apart, N/2 pins each; with the notch to the
  left, pin 1 is at the bottom left and the pins count counter-clockwise:
  1 … N/2 along the bottom row left to right, N/2+1 … N along the top row
  right to left (generic datasheets; common practice).
* ``relay-5``: a footprint of our own for the five-pin relays of the
  catalog, on the 0.1 inch grid: coil + (1), common (3) and coil - (2) on
  the top row, normally-closed (4) and normally-open (5) 0.4 inch below.
  Relay pin layouts differ between makers: check the relay you buy.
* two-pin support parts: ``radial-2.54mm`` 0.1 inch apart, ``DO-35`` and
  ``axial-0.25W`` 0.4 inch apart, ``DO-41`` (a longer body) 0.5 inch apart
  (bent leads; common practice).
* any other package: its pins in one row (a warning says so).
"""
from __future__ import annotations

import logging
import re
from dataclasses import dataclass

__all__ = ["Footprint", "footprint"]

log = logging.getLogger(__name__)


@dataclass(frozen=True)
class Footprint:
    """Pin number -> ``(dx, dy)`` hole offset; ``outline`` ``(x0, y0, x1, y1)`` in holes around the pins."""

    package: str
    pins: dict
    outline: tuple
    notch: bool = False     # a DIP's notch at the left end

    @property
    def width(self) -> int:
        return max(dx for dx, _ in self.pins.values()) + 1

    @property
    def height(self) -> int:
        return max(dy for _, dy in self.pins.values()) + 1


def _dip(n: int, package: str) -> Footprint:
    half = n // 2
    pins = {}
    for i in range(half):
        pins[i + 1] = (i, 3)
        pins[half + i + 1] = (half - 1 - i, 0)
    return Footprint(package, pins, (-0.45, 0.45, half - 0.55, 2.55), notch=True)


_TWO_PIN = {"radial-2.54mm": 1, "do-35": 4, "do-41": 5, "axial-0.25w": 4}


def footprint(package: str, pin_count: int) -> Footprint:
    """The footprint of ``package`` with ``pin_count`` pins (see the module docstring)."""
    m = re.fullmatch(r"DIP-?(\d+)", package, re.I)
    if m and int(m.group(1)) == pin_count and pin_count % 2 == 0:
        return _dip(pin_count, package)
    if package.lower() == "relay-5" and pin_count == 5:
        return Footprint(package, {1: (0, 0), 3: (2, 0), 2: (4, 0), 4: (0, 4), 5: (4, 4)}, (-0.5, -0.5, 4.5, 4.5))
    span = _TWO_PIN.get(package.lower())
    if span is not None and pin_count == 2:
        return Footprint(package, {1: (0, 0), 2: (span, 0)}, (-0.3, -0.3, span + 0.3, 0.3))
    log.warning("no footprint known for package %s: its %d pins are placed in one row", package, pin_count)
    return Footprint(package, {k: (k - 1, 0) for k in range(1, pin_count + 1)}, (-0.5, -0.5, pin_count - 0.5, 0.5))
