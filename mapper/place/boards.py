"""The boards a build can be placed on, in holes of 0.1 inch (2.54 mm) pitch.

``--board`` names one:

* ``breadboard-830`` (the default) and ``breadboard-400``: solderless
  breadboards of 830 and 400 tie points -- 63 and 30 columns of two
  five-hole strips (rows a-e and f-j) either side of a centre channel 0.3
  inch wide, with a pair of supply rails along each long edge (common
  practice).  A build too big for one board goes on several, stacked; their
  rails are joined by jumpers.
* ``perf:WxH``: a perforated board of W × H holes (soldered point to point);
* ``wrap:WxH``: a wire-wrap board of W × H holes (sockets with wrap posts).

Hole coordinates are ``(x, y)``: x along the board (columns), y across it,
both from 0 at the top left.  On a breadboard the rows are, from the top:
GND rail (y 0), VCC rail (y 1), strips a-e (y 3-7), the channel, strips
f-j (y 10-14), GND rail (y 16), VCC rail (y 17).  Boards after the first
stand :data:`BOARD_GAP` rows lower each.
"""
from __future__ import annotations

import re
from dataclasses import dataclass

from ..errors import UsageError

__all__ = ["Board", "board_from_spec", "BOARD_NAMES", "PITCH_M", "BREADBOARD_ROWS", "BOARD_GAP", "RAIL_ROWS",
           "STRIP_ROWS", "DEFAULT_BOARD", "board_of", "strip_holes", "rail_rows", "STRIP_HEADS"]

PITCH_M = 0.00254
DEFAULT_BOARD = "breadboard-830"
#: breadboard columns by name (tie points: 10 per column plus four rails)
BOARD_NAMES = {"breadboard-830": 63, "breadboard-400": 30}
BREADBOARD_ROWS = 18
BOARD_GAP = 2
#: breadboard rail rows -> (rail, side)
RAIL_ROWS = {0: ("GND", "top"), 1: ("VCC", "top"), 16: ("GND", "bottom"), 17: ("VCC", "bottom")}
#: breadboard strip rows -> row letter
STRIP_ROWS = {3: "a", 4: "b", 5: "c", 6: "d", 7: "e", 10: "f", 11: "g", 12: "h", 13: "i", 14: "j"}
#: breadboard rows of the hole of each strip nearest the channel (the strip's name in code)
STRIP_HEADS = (7, 10)
_LIMIT = 400


@dataclass(frozen=True)
class Board:
    """One kind of board: ``kind`` is ``breadboard``, ``perfboard`` or ``wire-wrap``."""

    key: str
    kind: str
    columns: int
    rows: int
    title: str

    @property
    def is_breadboard(self) -> bool:
        return self.kind == "breadboard"

    def tie_points(self) -> int | None:
        return self.columns * 10 + 4 * (self.columns * 50 // 63) if self.is_breadboard else None


def board_from_spec(spec: str | None) -> Board:
    """The board named by ``spec`` (see the module docstring); :class:`UsageError` for anything else."""
    spec = (spec or DEFAULT_BOARD).strip().lower()
    if spec in BOARD_NAMES:
        cols = BOARD_NAMES[spec]
        points = spec.split("-")[1]
        return Board(spec, "breadboard", cols, BREADBOARD_ROWS,
                     f"solderless breadboard, {points} tie points ({cols} columns)")
    m = re.fullmatch(r"(perf|wrap):(\d+)x(\d+)", spec)
    if m:
        w, h = int(m.group(2)), int(m.group(3))
        if not (12 <= w <= _LIMIT and 10 <= h <= _LIMIT):
            raise UsageError(f"--board {spec}: a board of 12 to {_LIMIT} holes across and 10 to {_LIMIT} down, "
                             f"please (0.1 inch pitch)")
        kind = "perfboard" if m.group(1) == "perf" else "wire-wrap"
        what = "perforated board" if kind == "perfboard" else "wire-wrap board"
        return Board(spec, kind, w, h, f"{what}, {w} × {h} holes at 0.1 inch "
                                       f"({w * 2.54:.0f} × {h * 2.54:.0f} mm)")
    names = ", ".join(sorted(BOARD_NAMES))
    raise UsageError(f"--board {spec!r}: unknown board (known: {names}, perf:WxH, wrap:WxH in holes)")


# -- breadboard geometry --------------------------------------------------------------------------------
def board_of(y: int) -> int:
    """Which of the stacked breadboards row ``y`` is on (0 for the first)."""
    return y // (BREADBOARD_ROWS + BOARD_GAP)


def strip_holes(xy) -> list:
    """The holes of the breadboard strip ``xy`` is in, nearest the channel first; ``[]`` off the strips.

    The first hole names the strip: two holes are in one strip exactly when
    their lists start with the same hole.
    """
    x, y = xy
    base = board_of(y) * (BREADBOARD_ROWS + BOARD_GAP)
    row = y - base
    if 3 <= row <= 7:
        rows = [7, 6, 5, 4, 3]
    elif 10 <= row <= 14:
        rows = [10, 11, 12, 13, 14]
    else:
        return []
    return [(x, base + r) for r in rows]


def rail_rows(board_index: int, net: str) -> list:
    """Rows of rail ``net`` on breadboard ``board_index`` (top one first)."""
    base = board_index * (BREADBOARD_ROWS + BOARD_GAP)
    return [base + r for r, (rail, _) in sorted(RAIL_ROWS.items()) if rail == net]
