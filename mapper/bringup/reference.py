"""The expected behaviour, step by step, from the build's logic view: the yardstick of the fault simulators.

A :class:`~mapper.netlist.Netlist` with storage (the build's
:meth:`~mapper.build.Build.to_netlist`, which the prover has shown equal to
the design) is stepped as a builder steps a board: one input setting after
another, each settled before the next.  Edge-triggered storage takes the
value its data net had *before* the step when its control makes the active
edge (so a ripple of edges through storage that clocks storage is followed
until it stops); a latch follows its data while its control is active.
The simulators of :mod:`mapper.bringup.gatesim` and
:mod:`mapper.bringup.relaysim` read the wiring instead; the good machine of
each must agree with this wherever it knows a value, or the bring-up list
would tell a builder a wrong level (:func:`check_agrees`).
"""
from __future__ import annotations

from ..errors import InternalError
from ..netlist import Netlist
from ..simulate import simulate

__all__ = ["Stepper", "check_agrees"]

_ACTIVE = {"re": 1, "ah": 1, "fe": 0, "al": 0}


class Stepper:
    """One machine of ``netlist`` stepped setting by setting (plain 0/1 values)."""

    def __init__(self, netlist: Netlist, state: dict, inputs: dict):
        self.n = netlist
        self.storage = netlist.storage()
        self.state = {k: state.get(k, 0) & 1 for k in self.storage}
        self.inputs = {i: inputs.get(i, 0) & 1 for i in netlist.inputs}
        self.values = self._eval(self.inputs)
        self._settle_latches()

    def _eval(self, inputs: dict) -> dict:
        return {k: v & 1 for k, v in simulate(self.n, inputs, 1, self.state).items()}

    def _settle_latches(self) -> None:
        for _ in range(len(self.storage) + 2):
            moved = False
            for net, st in self.storage.items():
                if st.kind in ("ah", "al") and self.values.get(st.control, 0) == _ACTIVE[st.kind]:
                    if self.state[net] != self.values[st.d]:
                        self.state[net] = self.values[st.d]
                        moved = True
            if not moved:
                return
            self.values = self._eval(self.inputs)
        raise InternalError("latches of the logic view never settle")

    def step(self, inputs: dict) -> dict:
        """Apply ``inputs`` (name -> 0/1), settle, and return every net's value."""
        before = self.values
        self.inputs = {i: inputs.get(i, 0) & 1 for i in self.n.inputs}
        now = self._eval(self.inputs)
        for _ in range(len(self.storage) + 2):
            edges = {net: before[st.d] for net, st in self.storage.items() if st.kind in ("re", "fe")
                     and before.get(st.control) == 1 - _ACTIVE[st.kind] and now.get(st.control) == _ACTIVE[st.kind]}
            if not edges:
                break
            self.state.update(edges)
            before = now   # an edge that ripples from these takes the data it sees just before it
            now = self._eval(self.inputs)
        else:
            raise InternalError("edges of the logic view ripple without end")
        self.values = now
        self._settle_latches()
        return self.values

    def outputs(self) -> dict:
        return {o: self.values[o] for o in self.n.outputs}


def check_agrees(expected: list, got: list, where: str) -> None:
    """Raise :class:`InternalError` where a simulator's known level differs from the logic view's.

    ``expected`` holds per step a dict output -> 0/1, ``got`` per step a dict
    output -> 0, 1 or ``None`` (unknown).
    """
    for k, (e, g) in enumerate(zip(expected, got)):
        for o, v in e.items():
            if g.get(o) is not None and g[o] != v:
                raise InternalError(f"{where}: step {k + 1}, output {o} reads {g[o]} on the wiring but {v} in the "
                                    "logic view -- a bug in netfit")
