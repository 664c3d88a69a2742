"""Holes on breadboards: which strip or rail hole each support part's leg goes into.

A breadboard strip (the five holes a-e, or f-j, of one column) joins
whatever stands in it, so each strip belongs to one net.  A careful
builder keeps room in a strip for the wires of its net, and where a strip
is full puts a part's leg into a strip of its own and joins that strip to
the net with a wire.  The rules here, in that spirit (common practice):

* a leg on a supply net goes into the nearest free hole of that rail: the
  rail nearest the leg's part first, then the board's other rail of the
  same kind, then the rails of other boards (all rails of one kind are
  joined by jumpers);
* a leg on a signal net goes into a strip of that net only while the strip
  keeps :data:`WIRE_ROOM` free holes for the wires of the net's chain (a
  daisy chain enters and leaves each strip once): the strip of its own
  part's pin first, then another strip of the net within
  :data:`LEG_REACH` holes of where the leg is measured from;
* otherwise it goes into the nearest strip that no pin and no other net
  uses; that strip then belongs to the net and is a stop of the net's
  chain like a pin (one more wire).  When the boards have no such strip
  left, one more board is stacked below;
* holes under a part's body (a relay covers the holes beside and between
  its pins) are never used.

So every strip of a net keeps two free holes for the wires of its chain,
and the wire runs (:mod:`mapper.place.runs`) never run out of holes.
"""
from __future__ import annotations

from ..errors import InternalError
from .boards import BOARD_GAP, BREADBOARD_ROWS, STRIP_HEADS, board_of, rail_rows, strip_holes

__all__ = ["Strips", "WIRE_ROOM", "LEG_REACH", "NO_NET"]

#: free holes a strip keeps for the wire ends of its net's chain
WIRE_ROOM = 2
#: the farthest (in holes, along and across the board) a leg goes into another strip of its net
#: rather than into a strip of its own: 0.6 inch, a diode or resistor lying flat with its leads bent
LEG_REACH = 6
#: owner of a strip whose pin is on no net (an output or contact left open): nothing may join it
NO_NET = "\0open pin"


def _d(a, b) -> int:
    return abs(a[0] - b[0]) + abs(a[1] - b[1])


class Strips:
    """The strips and rails of stacked breadboards: which net owns each strip, which holes are free.

    ``taken`` is shared with the caller (holes of pins, of part bodies and of
    legs); every hole handed out is added to it.
    """

    def __init__(self, columns: int, boards: int, taken: set):
        self.columns, self.boards, self.taken = columns, boards, taken
        self.owner: dict = {}       # strip key (its first hole) -> net
        self.of_net: dict = {}      # net -> strip keys, in the order they joined it
        self.label: dict = {}       # strip key -> what stands in it first ("K1-COIL+")

    @staticmethod
    def key(xy) -> tuple | None:
        """The strip ``xy`` is in (its hole nearest the channel), or ``None`` for a rail or off-board hole."""
        holes = strip_holes(xy)
        return holes[0] if holes else None

    def own(self, xy, net: str | None, label: str) -> None:
        """Record a pin standing at ``xy`` on ``net`` (``None``: a pin on no net)."""
        k = self.key(xy)
        if k is None:
            return
        net = NO_NET if net is None else net
        old = self.owner.get(k)
        if old is not None and old != net:
            raise InternalError(f"{label} and {self.label[k]} stand in one breadboard strip on two nets "
                                f"({net}, {old}) -- a bug in netfit")
        if old is None:
            self.owner[k] = net
            self.of_net.setdefault(net, []).append(k)
            self.label[k] = label

    def free(self, k) -> list:
        return [h for h in strip_holes(k) if h not in self.taken]

    def _room(self, k) -> bool:
        return len(self.free(k)) > WIRE_ROOM

    def _reach(self, k, near) -> int:
        return min((_d(h, near) for h in self.free(k)), default=1 << 30)

    def take(self, k, near) -> tuple:
        """The free hole of strip ``k`` nearest ``near``, now taken."""
        free = self.free(k)
        if not free:
            raise InternalError(f"the strip of {self.label.get(k, k)} has no free hole -- a bug in netfit")
        h = min(free, key=lambda h: (_d(h, near), h[1]))
        self.taken.add(h)
        return h

    def leg(self, net: str, near, prefer=None) -> tuple[tuple, bool]:
        """A hole for a leg on signal net ``net`` by the rules of the module docstring.

        ``prefer`` is the strip of the leg's own part on ``net`` (if any);
        ``near`` the hole the leg is measured from.  Returns the hole and
        whether the leg opened a strip of its own for the net.
        """
        if prefer is not None and self.owner.get(prefer) == net and self._room(prefer):
            return self.take(prefer, near), False
        own = [(self._reach(k, near), k) for k in self.of_net.get(net, ()) if self._room(k)]
        if own:
            dist, k = min(own)
            if dist <= LEG_REACH:
                return self.take(k, near), False
        k = self._unused_near(near)
        self.owner[k] = net
        self.of_net.setdefault(net, []).append(k)
        return self.take(k, near), True

    def _unused_near(self, near) -> tuple:
        """The strip nearest ``near`` that no net owns and that has room; on a new board when there is none."""
        span = BREADBOARD_ROWS + BOARD_GAP
        here = min(max(0, board_of(near[1])), self.boards - 1)
        while True:
            best: tuple | None = None
            best_d = 1 << 30
            for k in sorted(range(self.boards), key=lambda k: abs(k - here)):
                if best is not None and (abs(k - here) - 1) * span > best_d:
                    break  # every strip of this board and beyond is farther than the best found
                for x in range(self.columns):
                    for head in STRIP_HEADS:
                        s = (x, k * span + head)
                        if s in self.owner or not self._room(s):
                            continue
                        d = self._reach(s, near)
                        if d < best_d:
                            best, best_d = s, d
            if best is not None:
                return best
            self.boards += 1  # every strip is used: stack one more board below
            here = self.boards - 1

    def rail(self, net: str, near) -> tuple:
        """The free hole of rail ``net`` nearest ``near`` (that rail row first, then the others), now taken."""
        h = rail_hole(self.taken, self.columns, self.boards, net, near)
        self.taken.add(h)
        return h


def rail_hole(taken: set, columns: int, boards: int, net: str, near) -> tuple:
    """The free hole of a rail of ``net`` nearest ``near``, looking row by row (nearest row first).

    Rows: the rail of ``net`` on ``near``'s board nearest it, the board's
    other rail of ``net``, then those of the other boards, nearest first.
    Raises :class:`InternalError` when every rail hole of ``net`` is taken.
    """
    here = min(max(0, board_of(near[1])), boards - 1)
    rows = []
    for k in sorted(range(boards), key=lambda k: abs(k - here)):
        rows += sorted(rail_rows(k, net), key=lambda r: abs(r - near[1]))
    for row in rows:
        for x in sorted(range(columns), key=lambda x: abs(x - near[0])):
            if (x, row) not in taken:
                return x, row
    raise InternalError(f"every hole of the {net} rails is taken -- a bug in netfit")
