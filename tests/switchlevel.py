"""An independent switch-level reading of a written relay build, for the tests.

Written apart from ``mapper/`` on purpose: it reads only the build's JSON
file as a builder would read a wiring list -- every part with every pin and
the net on it -- and knows nothing of how the build was made, of the logic
view the prover reads, or of netfit's own switch-level check
(``mapper/analyze/switch.py``).

Physics (common practice of relay logic):

* a relay's coil (pins ``COIL+``/``COIL-``) is energized when its ``COIL+``
  net is powered; its pole ``p`` joins ``COMp`` to ``NOp`` when operated and
  to ``NCp`` when released, and joins nothing while it moves (a changeover
  breaks before it makes);
* a closed contact conducts both ways; a diode (pins ``A``, ``K``) conducts
  from anode to cathode only; the supply net ``VCC`` is powered, and an
  input that is on puts ``VCC`` on its net;
* every relay moves on its own: each order of moves is explored, and a
  relay that loses its feed for any moment may release (strict gaps).
  Where every order is too many to explore (more than ``LIMIT`` states for
  one change), ``SAMPLES`` random orders are run instead, and for every relay
  that moves one order that moves it as late as it can; ``sampled`` counts
  those changes.
"""
from __future__ import annotations

import json
import random
from pathlib import Path

REL, OP, TO_OP, TO_REL = 0, 1, 2, 3
#: states explored for one change before sampled orders are used instead
LIMIT = 30_000
#: random orders of a sampled change
SAMPLES = 200


class _TooMany(Exception):
    """Too many states to explore every order of one change."""


class WiredRelays:
    """A relay build read from its JSON file (see the module docstring)."""

    def __init__(self, path: Path):
        data = json.loads(Path(path).read_text())
        self.inputs = list(data["inputs"])
        self.outputs = {o: data["output_nets"][o] for o in data["outputs"]}
        self.sampled = 0
        self.rng = random.Random(1)
        self.relays = []      # (ref, coil net, [(com, no, nc)])
        self.diodes = []      # (anode net, cathode net)
        self.loads = set()    # nets with a resistor or a coil to GND
        for part in data["parts"]:
            pins = {p["name"]: p["net"] for p in part["pins"]}
            if part["kind"] == "relay":
                poles = []
                k = 1
                while f"COM{k}" in pins:
                    poles.append((pins[f"COM{k}"], pins.get(f"NO{k}"), pins.get(f"NC{k}")))
                    k += 1
                self.relays.append((part["ref"], pins.get("COIL+"), poles))
                if pins.get("COIL+"):
                    self.loads.add(pins["COIL+"])
            elif set(pins) == {"A", "K"}:
                self.diodes.append((pins["A"], pins["K"]))
            elif set(pins) == {"P1", "P2"} and "GND" in pins.values():
                self.loads.update(n for n in pins.values() if n not in (None, "GND"))

    def _links(self) -> dict:
        """net -> ``(relay index or None, position that closes it, other net)``; diodes one way (no relay)."""
        links: dict = {}
        for r, (_, _, poles) in enumerate(self.relays):
            for com, no, nc in poles:
                for side, closed in ((no, OP), (nc, REL)):
                    if com and side:
                        links.setdefault(com, []).append((r, closed, side))
                        links.setdefault(side, []).append((r, closed, com))
        for a, k in self.diodes:
            links.setdefault(a, []).append((None, None, k))
        return links

    def powered(self, pos: tuple, on_inputs: set) -> set:
        """Nets joined to the supply with relays at ``pos`` and the inputs in ``on_inputs`` on."""
        links = self.__dict__.get("_link_table")
        if links is None:
            links = self.__dict__["_link_table"] = self._links()
        seen = set()
        todo = ["VCC"] + [i for i in self.inputs if i in on_inputs]
        while todo:
            n = todo.pop()
            if n in seen:
                continue
            seen.add(n)
            for r, closed, other in links.get(n, ()):
                if other not in seen and (r is None or pos[r] == closed):
                    todo.append(other)
        return seen

    def moves(self, pos: tuple, on_inputs: set) -> list:
        live = self.powered(pos, on_inputs)
        out = []
        for r, ((_, coil, _), p) in enumerate(zip(self.relays, pos)):
            want = OP if coil in live else REL
            nxt = {REL: TO_OP if want == OP else None, OP: TO_REL if want == REL else None,
                   TO_OP: OP, TO_REL: REL}[p]
            if nxt is not None:
                out.append(pos[:r] + (nxt,) + pos[r + 1:])
        return out

    def settle(self, pos: tuple, on_inputs: set) -> set:
        """Every settled state the orders of moves reach from ``pos`` (see the module docstring)."""
        try:
            return self._every_order(pos, on_inputs, LIMIT)
        except _TooMany:
            self.sampled += 1
            return self._sampled_orders(pos, on_inputs)

    def _sampled_orders(self, pos: tuple, on_inputs: set) -> set:
        finals: set = set()
        moved: set = set()
        for k in range(SAMPLES + len(self.relays)):
            late = k - SAMPLES if k >= SAMPLES else None
            if late is not None and late not in moved:
                continue
            state = pos
            for _ in range(10_000):
                succ = self.moves(state, on_inputs)
                if not succ:
                    finals.add(state)
                    break
                if late is not None:
                    succ = [s for s in succ if s[late] == state[late]] or succ
                nxt = self.rng.choice(succ)
                moved.update(r for r in range(len(state)) if nxt[r] != state[r])
                state = nxt
            else:
                raise AssertionError("an order of moves never settles (the relays can chatter)")
        return finals

    def _every_order(self, pos: tuple, on_inputs: set, limit: int) -> set:
        """Every settled state some order of moves reaches from ``pos``; fails on a cycle of states."""
        finals, done, on_path = set(), set(), set()
        stack = [(pos, iter(self.moves(pos, on_inputs)))]
        on_path.add(pos)
        if not self.moves(pos, on_inputs):
            return {pos}
        while stack:
            state, it = stack[-1]
            nxt = next(it, None)
            if nxt is None:
                stack.pop()
                on_path.discard(state)
                done.add(state)
                continue
            assert nxt not in on_path, "some order of moves never settles (the relays can chatter)"
            if nxt in done:
                continue
            succ = self.moves(nxt, on_inputs)
            if not succ:
                finals.add(nxt)
                done.add(nxt)
                continue
            if len(done) >= limit:
                raise _TooMany()
            on_path.add(nxt)
            stack.append((nxt, iter(succ)))
        return finals

    def start(self) -> tuple:
        """Power-up: every relay released, every input off, settled (the same whatever the order)."""
        finals = self.settle(tuple(REL for _ in self.relays), set())
        assert len(finals) == 1, f"power-up settles in {len(finals)} ways"
        return finals.pop()

    def apply(self, pos: tuple, inputs: dict) -> tuple:
        """Settle after setting ``inputs``; the settled state must not depend on the order of moves."""
        on = {i for i, v in inputs.items() if v}
        finals = self.settle(pos, on)
        assert len(finals) == 1, f"{inputs}: settles in {len(finals)} ways, depending on which relay moves first"
        return finals.pop()

    def outputs_of(self, pos: tuple, inputs: dict) -> dict:
        live = self.powered(pos, {i for i, v in inputs.items() if v})
        return {o: int(net in live) for o, net in self.outputs.items()}

    def shorted(self, pos: tuple, inputs: dict) -> bool:
        """Whether the supply reaches ``GND`` (a dead short) in this state."""
        return "GND" in self.powered(pos, {i for i, v in inputs.items() if v})


class TimedRelays(WiredRelays):
    """The same wiring with time: each relay lands a fixed time after its feed changes.

    A relay whose coil feed changes starts to move and lands ``operate``
    (or ``release``) seconds later; its contacts stay where they were until
    it lands and then change at once.  A feed that changes back before the
    relay lands cancels the move.  Which relay is how fast is given per
    relay (``times``: ref -> (operate, release)), so the model knows nothing
    of sequencers or storage: it is the bench with a stopwatch.
    """

    def __init__(self, path: Path, times: dict):
        super().__init__(path)
        self.times = [times[ref] for ref, _, _ in self.relays]

    def run(self, pos: tuple, on_inputs: set, until: float, t0: float = 0.0) -> tuple:
        """Let the relays move from ``pos`` with ``on_inputs`` held, from ``t0`` to ``until``.

        Returns ``(pos at until, moving)`` where ``moving`` maps a relay still
        in motion to ``(target, landing time)``; pass it back with the next
        call through :meth:`run_on` to go on.
        """
        return self.run_on(pos, {}, on_inputs, t0, until)

    def run_on(self, pos: tuple, moving: dict, on_inputs: set, t0: float, until: float) -> tuple:
        pos = list(pos)
        moving = dict(moving)
        t = t0
        while True:
            live = self.powered(tuple(pos), on_inputs)
            for r, (_, coil, _) in enumerate(self.relays):
                want = OP if coil in live else REL
                if r in moving:
                    if moving[r][0] != want:
                        del moving[r]          # the feed came back before it landed
                elif pos[r] != want:
                    op, rel = self.times[r]
                    moving[r] = (want, t + (op if want == OP else rel))
            if not moving:
                return tuple(pos), moving
            nxt = min(land for _, land in moving.values())
            if nxt > until:
                return tuple(pos), moving
            t = nxt
            for r in [r for r, (_, land) in moving.items() if land <= t + 1e-12]:
                pos[r] = moving.pop(r)[0]
