"""What a relay build's contacts compute: the logic view the prover and the analyses read.

Semantics of a relay build
--------------------------
* **Rail.**  The supply rail is net ``VCC``; coils return to ``GND``.
* **Inputs.**  A primary input is a switch (or a signal from outside) that
  puts the rail on its net when it is 1 and leaves the net open when it is 0.
* **Coils.**  A relay is energized when its coil net is 1.  A variable whose
  value moves ``k`` contacts needs ``ceil(k / P)`` relays of ``P`` poles,
  their coils in parallel on the same net.
* **Contacts.**  Every pole is a changeover: common (COM), normally open
  (NO) and normally closed (NC).  COM meets NO while the coil is energized
  and NC otherwise (a make contact is a pole with NC unused, a break contact
  one with NO unused).
* **Nets.**  A relay-driven net is 1 when a path of closed contacts joins it
  to the rail, or to an input (or other signal) net that is 1
  (*pass-through*); otherwise its defined load -- a pull-down resistor, a
  support part -- holds it at 0.

Shape of every network netfit builds (what :func:`contact_logic` checks):
each relay-driven net is the common terminal of exactly one pole (its
*driver*); the rail and input nets are never a common terminal; and
following drivers from common to NO/NC terminals never returns to a net
(the contact graph is acyclic; feedback only runs through coils, in the
storage described below).  In any state each relay-driven net then has at
most one closed contact towards its driver's selected side, so the closed
contacts form trees, each hanging from exactly one source (the rail, an
input net, or nothing), and the net's value is exactly
``coil ? value(NO) : value(NC)`` with an unused terminal reading 0.  That is
how :func:`contact_logic` turns the contacts back into logic for the proof:
one multiplexer per pole, exact, no fixed point needed.

Storage
-------
A latch is one relay holding itself through its own make contact (seal-in):
the latch net ``q`` is the common terminal of a pole on the enable's relay
whose transparent side is the data net and whose other side is a hold net
``h``; ``h`` is the common of a make contact of ``q``'s own relay, fed from
the rail.  Kind ``ah`` (transparent while the enable is 1) has the data on
NO; kind ``al`` on NC.  Edge-triggered storage is two such latches: a
master ``m`` transparent while the clock is inactive, and the slave ``q``,
transparent while the clock is active, fed from ``m`` (kind ``re``: master
``al`` and slave ``ah`` on the same clock; ``fe`` the other way round).

For the proof each latch (or master/slave pair) becomes one
:class:`~mapper.netlist.Storage` element named like the design's, of the
design's kind, with the data and control nets read off its poles after
:func:`contact_logic` has checked the exact shape above; the hold and
master nets are internal to it.  A seal-in latch powers up released (0); a
design element that must start at 1 is built with its relay holding the
complement (``q`` is then read from the relay's break contacts).
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

from .errors import InternalError
from .logic.function import Function
from .netlist import Input, Netlist
from .order import topological_order

if TYPE_CHECKING:
    from .build import Build, ContactInstance

__all__ = ["RelayLatch", "MUX_FUNCTION", "contact_logic", "relay_driven_nets", "storage_nets"]

#: ``COM = COIL ? NO : NC`` over fan-ins (coil, no, nc), input 0 least significant
MUX_FUNCTION = Function.from_table(3, sum(
    1 << m for m in range(8) if ((m >> 1) & 1 if m & 1 else (m >> 2) & 1)))


@dataclass
class RelayLatch:
    """One storage element of a relay build (see the module docstring).

    ``net`` is the design's storage net.  ``state`` is the net the relay
    holds (``net`` itself, or a net holding its complement when
    ``inverted``); ``hold`` the net between the hold contact and the
    enable pole.  Edge-triggered elements have a ``master`` latch net and its
    ``master_hold``.  ``d`` and ``control`` are the data and clock/enable
    nets as wired (``d`` is ``None`` for a constant 0 data input).
    """

    net: str
    kind: str
    d: str | None
    control: str
    init: int
    state: str
    hold: str
    master: str | None = None
    master_hold: str | None = None
    inverted: bool = False
    #: the design's initial value (0, 1, 2 don't care, 3 unknown)
    design_init: int = 3

    def own_nets(self) -> set:
        """The nets of this element's own poles: state, hold, master and master hold."""
        return {x for x in (self.state, self.hold, self.master, self.master_hold) if x is not None}


def relay_driven_nets(build: Build) -> list:
    """Nets that are the common terminal of a pole, in first-use order."""
    out, seen = [], set()
    for k in build.contacts:
        if k.com not in seen:
            seen.add(k.com)
            out.append(k.com)
    return out


def storage_nets(build: Build) -> tuple[set, set]:
    """``(nets whose driving pole belongs to storage, storage output nets)`` of a relay build."""
    driven, outs = set(), set()
    for lt in build.latches:
        driven |= lt.own_nets()
        outs |= {lt.state, lt.net}
        if lt.inverted:
            driven.add(lt.net)
    return driven, outs


class _Drivers:
    """The driving pole of each relay-driven net, refusing the shapes :func:`contact_logic` cannot read."""

    def __init__(self, build: Build, netlist: Netlist):
        self.coil = build.coils
        self.by_net: dict = {}
        for k in build.contacts:
            if k.com in self.by_net:
                raise InternalError(f"net {k.com} is the common terminal of two poles "
                                    f"({self.by_net[k.com].part_ref} and {k.part_ref})")
            if k.com in ("VCC", "GND") or isinstance(netlist.nodes.get(k.com), Input):
                raise InternalError(f"{k.com} is on the common terminal of {k.part_ref} pole {k.pole}")
            self.by_net[k.com] = k

    def pole(self, net: str) -> tuple[ContactInstance, str]:
        k = self.by_net.get(net)
        if k is None:
            raise InternalError(f"storage net {net} has no driving pole")
        return k, self.coil[k.part_ref]

    def check_hold(self, hold: str, relay_net: str, what: str) -> None:
        k, c = self.pole(hold)
        if not (c == relay_net and k.no == "VCC" and k.nc is None):
            raise InternalError(what)


def _check_latch(lt: RelayLatch, drv: _Drivers) -> tuple[set, set]:
    """Check one storage element's poles; ``(its internal nets, nets private to it)``."""
    internal, private = set(), set()
    if lt.inverted and lt.net in drv.by_net:
        # the true value of storage held in complement: a break contact of its relay from the rail
        k_t, c_t = drv.pole(lt.net)
        if not (c_t == lt.state and k_t.no is None and k_t.nc == "VCC"):
            raise InternalError(f"{lt.net}: its true value is not a break contact of its relay")
        internal.add(lt.net)
    drv.check_hold(lt.hold, lt.state, f"{lt.net}: the hold contact is not a make contact of its own relay "
                                      "fed from the rail")
    k_q, c_q = drv.pole(lt.state)
    if c_q != lt.control:
        raise InternalError(f"{lt.net}: the enable pole is not on the control's relay")
    active = "ah" if lt.kind in ("ah", "re") else "al"
    src = lt.master if lt.master is not None else lt.d
    on, off = (k_q.no, k_q.nc) if active == "ah" else (k_q.nc, k_q.no)
    if on != src or off != lt.hold:
        raise InternalError(f"{lt.net}: the enable pole is not wired as a seal-in latch")
    internal |= {lt.hold, lt.state}
    private.add(lt.hold)
    if lt.master is not None and lt.master_hold is not None:
        drv.check_hold(lt.master_hold, lt.master, f"{lt.net}: the master's hold contact is wrong")
        k_m, c_m = drv.pole(lt.master)
        if c_m != lt.control:
            raise InternalError(f"{lt.net}: the master's enable pole is not on the clock's relay")
        on, off = (k_m.nc, k_m.no) if active == "ah" else (k_m.no, k_m.nc)
        if on != lt.d or off != lt.master_hold:
            raise InternalError(f"{lt.net}: the master is not wired as a seal-in latch")
        internal |= {lt.master, lt.master_hold}
        private |= {lt.master, lt.master_hold}
    return internal, private


def _add_storage(netlist: Netlist, lt: RelayLatch, used_rails: set) -> None:
    dn = lt.d if lt.d is not None else "GND"
    if dn in ("VCC", "GND"):
        used_rails.add(dn)
    if lt.inverted:
        # the relay holds the complement: the design's element is its complement
        inv_d = f"{lt.net}~d"
        netlist.add_logic(inv_d, [dn], Function.from_table(1, 0b01))
        netlist.add_storage(lt.net, inv_d, lt.kind, lt.control, 1)
        netlist.add_logic(lt.state, [lt.net], Function.from_table(1, 0b01))
    else:
        netlist.add_storage(lt.net, dn, lt.kind, lt.control, lt.init)


def contact_logic(build: Build, netlist: Netlist) -> None:
    """Add to ``netlist`` the logic of every relay-driven net of ``build``.

    Each pole becomes ``COM = coil ? NO : NC`` (an unused terminal reads 0);
    each :class:`RelayLatch` becomes one storage element of its kind,
    named like the design's, after its poles are checked to have exactly
    the seal-in shape of the module docstring.  Raises
    :class:`~mapper.errors.InternalError` for any other shape: a net driven
    by two poles, a rail or input on a common terminal, a loop of contacts,
    or an undriven net.
    """
    drv = _Drivers(build, netlist)
    coil = build.coils
    internal: set = set()     # nets driven by storage poles (not translated pole by pole)
    private: set = set()      # nets no pole outside their storage element may touch
    for lt in build.latches:
        i, p = _check_latch(lt, drv)
        internal |= i
        private |= p
    own_of = {}
    for lt in build.latches:
        for net in lt.own_nets():
            own_of[net] = lt.own_nets()
    for k in build.contacts:
        for x in (k.no, k.nc):
            if x in private and x not in own_of.get(k.com, ()):
                raise InternalError(f"storage-internal net {x} is used by {k.part_ref} pole {k.pole}")
    # the remaining poles in an order where fan-ins come first; a loop of contacts is refused
    comb = {net: k for net, k in drv.by_net.items() if net not in internal}
    order, stuck = topological_order(comb, lambda n: (comb[n].no, comb[n].nc, coil[comb[n].part_ref]))
    if stuck:
        raise InternalError("contacts form a loop not broken by storage through nets "
                            + ", ".join(sorted(stuck)[:8]))
    used_rails: set = set()
    for net in order:
        k = comb[net]
        fan = [coil[k.part_ref], k.no or "GND", k.nc or "GND"]
        used_rails.update(x for x in fan if x in ("VCC", "GND"))
        netlist.add_logic(net, fan, MUX_FUNCTION)
    for lt in build.latches:
        _add_storage(netlist, lt, used_rails)
    for o in build.outputs:
        net = build.output_nets.get(o, o)
        if net in ("VCC", "GND"):
            used_rails.add(net)
    for rail, value in (("VCC", 1), ("GND", 0)):
        if rail in used_rails and rail not in netlist.nodes:
            netlist.add_constant(rail, value)
    known = set(netlist.nodes) | {"VCC", "GND"} | internal
    for k in build.contacts:
        for x in (coil[k.part_ref], k.no, k.nc):
            if x is not None and x not in known:
                raise InternalError(f"net {x} at {k.part_ref} pole {k.pole} is driven by nothing")
