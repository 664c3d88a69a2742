"""Holes on breadboards: which strip or rail hole each support part's leg goes into.

A breadboard strip (the five holes a-e, or f-j, of one column) joins
whatever stands in it, so each strip belongs to one net.  A careful
builder keeps room in a strip for the wires of its net, and where a strip
is full puts a part's leg into a strip of its own and joins that strip to
the net with a wire.  The rules here, in that spirit (common practice):

* a leg on a supply net goes into the nearest free hole of that net's
  rails on its board (all rails of one kind are joined by jumpers), as
  long as each rail keeps room for the wires that feed and join it and the
  board's rails a hole for the wire of every strip on the net; else the
  part stands at the rails of the nearest board with room;
* a leg on a signal net goes into a strip of that net only while the strip
  keeps :data:`WIRE_ROOM` free holes for the wires of the net's chain (a
  daisy chain enters and leaves each strip once) and stands within
  :data:`LEG_REACH` holes of where the leg is measured from (the part's
  other leg, or the rail hole it goes into): the strip of its own part's
  pin first, then another strip of the net;
* otherwise it goes into the nearest strip that no pin and no other net
  uses; that strip then belongs to the net and is a stop of the net's
  chain like a pin (one more wire);
* a part with both legs on signal nets (a steering diode) keeps them
  within :data:`LEG_REACH` of each other: when the second leg finds no
  strip that near the first, both go into two unused strips side by side;
* when no such strip (or no rail hole to spare) is left on the boards, one
  more board is stacked below;
* holes under a part's body (a relay covers the holes beside and between
  its pins) are never used.

So every strip of a net keeps two free holes for the wires of its chain,
every board's rails a hole for each wire that goes to them, and the wire
runs (:mod:`mapper.place.runs`) never run out of holes.
"""
from __future__ import annotations

from ..errors import InternalError
from .boards import BOARD_GAP, BREADBOARD_ROWS, STRIP_HEADS, board_of, rail_rows, strip_holes

__all__ = ["Strips", "WIRE_ROOM", "LEG_REACH", "RAIL_JOINT_ROOM", "rail_hole", "rail_row_hole", "rail_spare", "NO_NET"]

#: free holes a strip keeps for the wire ends of its net's chain
WIRE_ROOM = 2
#: the farthest (in holes, along and across the board) a leg goes into another strip of its net
#: rather than into a strip of its own: 0.6 inch, a diode or resistor lying flat with its leads bent
LEG_REACH = 6
#: free holes each rail row keeps for the wires that feed and join it (the supply's feed, a jumper
#: from the rail row above and one to the row below: see mapper.place.runs)
RAIL_JOINT_ROOM = 3
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
        self._tap_count: dict = {}  # (board, supply net) -> wires from strips to its rails

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

    def leg(self, net: str, near, prefer=None, toward=None) -> tuple[tuple, bool]:
        """A hole for a leg on signal net ``net`` by the rules of the module docstring.

        ``prefer`` is the strip of the leg's own part on ``net`` (if any);
        ``near`` the hole the leg is measured from; ``toward`` where the
        part's other leg will go (a rail), to choose the hole within the
        strip (default ``near``).  Returns the hole and whether the leg
        opened a strip of its own for the net.
        """
        toward = near if toward is None else toward
        if prefer is not None and self.owner.get(prefer) == net and self._room(prefer) \
                and self._reach(prefer, near) <= LEG_REACH:
            return self.take(prefer, toward), False
        own = [(self._reach(k, near), k) for k in self.of_net.get(net, ()) if self._room(k)]
        if own:
            dist, k = min(own)
            if dist <= LEG_REACH:
                return self.take(k, toward), False
        k = self._unused_near(near)
        self.owner[k] = net
        self.of_net.setdefault(net, []).append(k)
        return self.take(k, toward), True

    def pair(self, nets, near, prefer) -> list:
        """Holes for the two legs of a part on signal nets ``nets``, no more than :data:`LEG_REACH` apart.

        The first leg as :meth:`leg` places it (measured from ``near``), the
        second measured from the first; if the second has no strip within
        reach of the first, both go into two strips of their own side by
        side, the pair nearest ``near``.  Returns ``[(hole, opened), ...]``.
        """
        boards = self.boards
        h1, new1 = self.leg(nets[0], near, prefer[0])
        h2, new2 = self.leg(nets[1], h1, prefer[1])
        if _d(h1, h2) <= LEG_REACH:
            return [(h1, new1), (h2, new2)]
        self._undo(h2, nets[1], new2)
        self._undo(h1, nets[0], new1)
        self.boards = boards  # a board stacked for the legs just taken back is not needed yet
        s1, s2 = self._unused_pair(near)
        out = []
        for s, net, toward in ((s1, nets[0], s2), (s2, nets[1], s1)):
            self.owner[s] = net
            self.of_net.setdefault(net, []).append(s)
            out.append((self.take(s, toward), True))
        return out

    def _undo(self, hole, net: str, opened: bool) -> None:
        self.taken.discard(hole)
        if opened:
            k = self.key(hole)
            del self.owner[k]
            self.of_net[net].remove(k)

    def _unused_pair(self, near) -> tuple:
        """Two strips no net owns, with room, side by side (or facing across the channel), nearest ``near``."""
        span = BREADBOARD_ROWS + BOARD_GAP
        while True:
            free = [(x, k * span + head) for k in range(self.boards) for x in range(self.columns)
                    for head in STRIP_HEADS]
            free = [s for s in free if s not in self.owner and self._room(s)]
            ok = set(free)
            for s in sorted(free, key=lambda s: (self._reach(s, near), s)):
                x, y = s
                other = STRIP_HEADS[1] - STRIP_HEADS[0]
                facing = (x, y + other) if (y % span) == STRIP_HEADS[0] else (x, y - other)
                for t in ((x + 1, y), (x - 1, y), facing):
                    if t in ok:
                        return s, t
            self.boards += 1  # no two free strips side by side: stack one more board below

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
        """The free hole of a rail of ``net`` nearest ``near`` for a leg, now taken.

        Each rail row keeps :data:`RAIL_JOINT_ROOM` holes for the wires that
        feed and join the rails, and each board's rails of ``net`` one more
        hole for the wire of every strip of ``net`` on the board; a leg goes
        to the nearest board with a hole beyond these, or onto a new board.
        """
        while True:
            h = rail_hole(self.taken, self.columns, self.boards, net, near, lambda k: self._taps(k, net))
            if h is not None:
                self.taken.add(h)
                return h
            self.boards += 1

    def rail_peek(self, net: str, near) -> tuple:
        """The hole :meth:`rail` would give for a leg measured from ``near`` (not taken)."""
        h = rail_hole(self.taken, self.columns, self.boards, net, near, lambda k: self._taps(k, net))
        return near if h is None else h

    def rail_board(self, nets, near) -> int:
        """The board nearest ``near``'s whose rails of every net in ``nets`` have a hole to spare for a leg.

        One more board is stacked below when none has.
        """
        here = min(max(0, board_of(near[1])), self.boards - 1)
        while True:
            for k in sorted(range(self.boards), key=lambda k: abs(k - here)):
                if all(rail_spare(self.taken, self.columns, k, n) > self._taps(k, n) for n in nets):
                    return k
            self.boards += 1

    def _taps(self, k: int, net: str) -> int:
        """Wires from strips of ``net`` on board ``k`` to its rails (one per strip; supply pins only)."""
        taps = self._tap_count.get((k, net))
        if taps is None:
            taps = self._tap_count[(k, net)] = sum(1 for s, n in self.owner.items()
                                                   if n == net and board_of(s[1]) == k)
        return taps


def _free_in_rows(taken: set, columns: int, k: int, net: str) -> dict:
    return {row: [x for x in range(columns) if (x, row) not in taken] for row in rail_rows(k, net)}


def rail_spare(taken: set, columns: int, k: int, net: str) -> int:
    """Free holes of board ``k``'s rails of ``net`` beyond the :data:`RAIL_JOINT_ROOM` each row keeps."""
    return sum(max(0, len(xs) - RAIL_JOINT_ROOM) for xs in _free_in_rows(taken, columns, k, net).values())


def rail_hole(taken: set, columns: int, boards: int, net: str, near, taps=None) -> tuple | None:
    """The free hole of a rail of ``net`` nearest ``near`` (along and across the board), or ``None``.

    The rails of ``near``'s board first (its two rails of ``net``), then those
    of the other boards, nearest board first; between holes equally near, the
    nearer rail row, then the column further left.  A rail row keeps its last
    :data:`RAIL_JOINT_ROOM` holes for the wires that feed and join it
    (:func:`rail_row_hole`); ``taps(k)``, if given, is how many more holes
    board ``k``'s rails of ``net`` keep (for the wires from its strips).
    """
    here = min(max(0, board_of(near[1])), boards - 1)
    for k in sorted(range(boards), key=lambda k: abs(k - here)):
        rows = _free_in_rows(taken, columns, k, net)
        spare = sum(max(0, len(xs) - RAIL_JOINT_ROOM) for xs in rows.values())
        if spare > (taps(k) if taps is not None else 0):
            _, _, x, row = min((abs(x - near[0]) + abs(row - near[1]), abs(row - near[1]), x, row)
                               for row, xs in rows.items() if len(xs) > RAIL_JOINT_ROOM for x in xs)
            return x, row
    return None


def rail_row_hole(taken: set, columns: int, row: int, x: int) -> tuple | None:
    """The free hole of rail row ``row`` nearest column ``x`` (the column further left between two), or ``None``."""
    free = [xx for xx in range(columns) if (xx, row) not in taken]
    return (min(free, key=lambda xx: (abs(xx - x), xx)), row) if free else None
