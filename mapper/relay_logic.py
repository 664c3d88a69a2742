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
Relay storage is built so that it settles the same whichever relay moves
first, and so that no holding coil ever loses its feed while a contact is in
flight (a changeover breaks before it makes).  Two kinds of record describe
it; :func:`contact_logic` checks every pole and diode of both against this
description before it reads the build as logic.

*Sequencer* (:class:`RelaySequencer`), one per clock or enable net and kind,
steps that net through phases on *buses*: nets fed from the rail by one
contact each.  A flip-flop (kinds ``re``, ``fe``) has four buses: LM (load
master), HM (hold master), LS (load slave), HS (hold slave).  On the active
edge they change in the order HM on, LM off, LS on, HS off; on the other
edge HS on, LS off, LM on, HM off.  One single-pole relay per step makes
that order (CK are the relays on the control net; ``'`` is "not"):

    X = CK + LS          HM = X      (LS feeds X's coil through a diode)
    Y = HM (CK + W')     LM = Y', LS = Y   (one changeover: LM breaks before LS makes)
    Z = LS CK            HS = Z'
    W = HS               (W's coil is on the HS bus)

Each step starts only when the relay before it has *landed*: its coil is fed
from a bus that relay's landing made, or (where a feed must *stop* after a
bus was made) from a break contact of a relay that bus operates (W).  Every
relay released is the rest at clock 0, so a falling-edge sequencer is the
mirror of that (T, V, U, W with HS = T, LM = V, LS = V', HM = U';
``T = CK + LM``, ``V = HS (CK + W')``, ``U = LM CK``, W's coil on HM): a
build powered up with its clocks at 0 sees no edge.  A latch
(kinds ``ah``, ``al``) has two buses, LM and HM:

    X = CK'              HM = X
    W = HM               (W's coil is on the HM bus)
    Y = CK + Y W'        LM = Y      (Y holds itself until HM is made)

*Storage element* (:class:`RelayStorage`): a slave relay S holds the bit
(its coil is the storage net); a flip-flop also has a master relay M.
Each coil is fed from two diodes (a diode OR: the feeds never feed each
other or a bus):

    M coil  <-|  LM through a make contact of the data net's relay  (load)
            <-|  HM through M's own make contact                     (hold)
    S coil  <-|  LS through M's second make contact                  (load)
            <-|  HS through S's own make contact                     (hold)

A latch has only S, loaded from LM and held from HM.  At every moment a bus
feeds the load or the hold path of each coil, so a bit is never left
unfed; all masters hold before any slave loads.  A relay powers up
released: storage starts at 0, and an element that must start at 1 is
built holding its complement (its true value is read from a break contact
of S).  For the proof each storage element is one
:class:`~mapper.netlist.Storage` of the design's kind, with the data and
control nets read off its record after the check.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

from .errors import InternalError
from .logic.function import Function
from .netlist import Input, Netlist
from .order import topological_order

if TYPE_CHECKING:
    from .build import Build

__all__ = ["RelaySequencer", "RelayStorage", "MUX_FUNCTION", "contact_logic", "relay_driven_nets",
           "storage_nets", "sequencer_for"]

#: ``COM = COIL ? NO : NC`` over fan-ins (coil, no, nc), input 0 least significant
MUX_FUNCTION = Function.from_table(3, sum(
    1 << m for m in range(8) if ((m >> 1) & 1 if m & 1 else (m >> 2) & 1)))


#: the kinds of storage and which side of the control's relays is active (energized: NO)
_ACTIVE_NO = {"re": True, "ah": True, "fe": False, "al": False}


def _on_active(kind: str, com, coil, src) -> tuple:
    """A pole on the control's relay joining ``com`` to ``src`` while the control is active."""
    return (com, coil, src, None) if _ACTIVE_NO[kind] else (com, coil, None, src)


def _on_inactive(kind: str, com, coil, src) -> tuple:
    return (com, coil, None, src) if _ACTIVE_NO[kind] else (com, coil, src, None)


@dataclass
class RelaySequencer:
    """The relays that step one clock or enable net through its phases (see the module docstring).

    ``x``, ``y`` (and ``z`` for flip-flops) are the coil nets of the step
    relays; relay W's coil is a bus (HS, or HM for a latch).  ``lm``, ``hm``
    (and ``ls``, ``hs``) are the buses, ``feeds`` the private feed nets.
    """

    control: str
    kind: str
    x: str
    y: str
    lm: str
    hm: str
    feeds: tuple = ()
    z: str | None = None
    ls: str | None = None
    hs: str | None = None

    @property
    def edge(self) -> bool:
        return self.kind in ("re", "fe")

    def poles(self) -> list:
        """Every pole of the sequencer, ``(com, coil net, no, nc)``."""
        k, c = self.kind, self.control
        if k == "fe":
            # the mirror of "re": every relay released is the rest after a falling edge (clock 0), so a
            # build powered up with its clock at 0 sees no edge
            return [
                (self.z, c, "VCC", None),                  # T <- CK       (HS = T)
                (self.y, c, self.hs, None),                # V <- HS CK
                (self.y, self.hm, None, self.hs),          # V <- HS W'    (W's coil on HM)
                (self.x, c, self.lm, None),                # U <- LM CK    (HM = U')
                (self.hs, self.z, "VCC", None),            # HS = T
                ("VCC", self.y, self.lm, self.ls),         # LS = V', LM = V
                (self.hm, self.x, None, "VCC"),            # HM = U'
            ]
        if self.edge:
            return [
                _on_active(k, self.x, c, "VCC"),          # X <- CK
                _on_active(k, self.y, c, self.hm),         # Y <- HM CK
                (self.y, self.hs, None, self.hm),          # Y <- HM W'   (W's coil on HS)
                _on_active(k, self.z, c, self.ls),         # Z <- LS CK
                (self.hm, self.x, "VCC", None),            # HM = X
                ("VCC", self.y, self.ls, self.lm),         # LM = Y', LS = Y
                (self.hs, self.z, None, "VCC"),            # HS = Z'
            ]
        (ys,) = self.feeds
        return [
            _on_inactive(k, self.x, c, "VCC"),             # X <- CK'
            _on_active(k, self.y, c, "VCC"),               # Y <- CK
            (ys, self.hm, None, "VCC"),                    # ys = W'     (W's coil on HM)
            (self.y, self.y, ys, None),                    # Y <- Y W'
            (self.hm, self.x, "VCC", None),                # HM = X
            (self.lm, self.y, "VCC", None),                # LM = Y
        ]

    def diodes(self) -> list:
        """``(anode, cathode)`` of the sequencer's steering diodes."""
        if self.kind == "fe":
            return [(self.lm, self.z)]   # T <- LM: T holds until LM breaks
        return [(self.ls, self.x)] if self.edge else []

    def own_nets(self) -> set:
        """The nets nothing outside the sequencer may drive."""
        return {n for n in (self.x, self.y, self.z, self.lm, self.hm, self.ls, self.hs, *self.feeds)
                if n is not None}


@dataclass
class RelayStorage:
    """One storage element of a relay build (see the module docstring).

    ``net`` is the design's storage net; ``state`` the coil net of the slave
    relay (``net`` itself, or a net holding its complement when
    ``inverted``); ``master`` the master's coil net (flip-flops only).
    ``d`` is the data net as wired (``None`` for a constant 0, ``"VCC"``
    for a constant 1) and ``control`` the clock or enable net.
    ``paths`` are the private nets between each make contact and its diode:
    load and hold of the master (or of a latch), then of the slave.
    """

    net: str
    kind: str
    d: str | None
    control: str
    init: int
    state: str
    paths: tuple
    master: str | None = None
    inverted: bool = False
    #: the design's initial value (0, 1, 2 don't care, 3 unknown)
    design_init: int = 3

    def poles(self, seq: RelaySequencer) -> list:
        """The storage element's own poles (those on the data net's relay included)."""
        out: list = []
        first = self.master if self.master is not None else self.state
        load, hold = self.paths[0], self.paths[1]
        if self.d not in (None, "VCC"):
            out.append((load, self.d, seq.lm, None))
        out.append((hold, first, seq.hm, None))
        if self.master is not None:
            sload, shold = self.paths[2], self.paths[3]
            out.append((sload, self.master, seq.ls, None))
            out.append((shold, self.state, seq.hs, None))
        return out

    def diodes(self, seq: RelaySequencer) -> list:
        """``(anode, cathode)`` of every steering diode of the element."""
        first = self.master if self.master is not None else self.state
        out = []
        if self.d == "VCC":
            out.append((seq.lm, first))
        elif self.d is not None:
            out.append((self.paths[0], first))
        out.append((self.paths[1], first))
        if self.master is not None:
            out += [(self.paths[2], self.state), (self.paths[3], self.state)]
        return out

    def own_nets(self) -> set:
        """Nets private to the element: its paths and its master's coil."""
        return set(self.paths) | ({self.master} if self.master else set())


def sequencer_for(build: Build, lt: RelayStorage) -> RelaySequencer:
    """The sequencer that steps ``lt``'s control (``InternalError`` when the build has none)."""
    for seq in build.sequencers:
        if seq.control == lt.control and seq.kind == lt.kind:
            return seq
    raise InternalError(f"storage {lt.net}: no sequencer for {lt.kind} on {lt.control}")


def relay_driven_nets(build: Build) -> list:
    """Nets that are the common terminal of a pole, in first-use order."""
    out, seen = [], set()
    for k in build.contacts:
        if k.com not in seen:
            seen.add(k.com)
            out.append(k.com)
    return out


def storage_nets(build: Build) -> tuple[set, set]:
    """``(nets that belong to storage and its sequencers, storage output nets)`` of a relay build.

    The first set holds every net a storage pole drives or a storage diode
    feeds, the buses and the sequencers' own nets: analyses that follow
    single-driver contact networks leave them out.
    """
    inner, outs = set(), set()
    for seq in build.sequencers:
        inner |= seq.own_nets()
    for lt in build.latches:
        inner |= lt.own_nets() | {lt.state}
        outs |= {lt.state, lt.net}
        if lt.inverted:
            inner.add(lt.net)
    return inner, outs


class _Drivers:
    """The driving pole of each relay-driven net, refusing the shapes :func:`contact_logic` cannot read."""

    def __init__(self, contacts: list, coil: dict, netlist: Netlist):
        self.coil = coil
        self.by_net: dict = {}
        for k in contacts:
            if k.com in self.by_net:
                raise InternalError(f"net {k.com} is the common terminal of two poles "
                                    f"({self.by_net[k.com].part_ref} and {k.part_ref})")
            if k.com in ("VCC", "GND") or isinstance(netlist.nodes.get(k.com), Input):
                raise InternalError(f"{k.com} is on the common terminal of {k.part_ref} pole {k.pole}")
            self.by_net[k.com] = k


def _storage_contacts(build: Build) -> set:
    """Indices in ``build.contacts`` of every storage and sequencer pole, each checked to be there exactly once.

    Also checks the steering diodes, the data relay of each element, and that
    no other pole drives or reads a net private to storage.
    """
    coil = build.coils
    free: dict = {}
    for i, k in enumerate(build.contacts):
        free.setdefault((k.com, coil[k.part_ref], k.no, k.nc), []).append(i)
    used: set = set()

    def take(pole, what):
        idx = free.get(pole)
        if not idx:
            raise InternalError(f"{what}: the build lacks pole {pole} (common, coil, NO, NC)")
        used.add(idx.pop())

    seqs = {(seq.control, seq.kind): seq for seq in build.sequencers}
    if len(seqs) != len(build.sequencers):
        raise InternalError("two sequencers step the same control net the same way")
    private: set = set()
    diodes: dict = {}
    for s in build.support:
        if s.role == "steering":
            diodes[tuple(s.nets)] = diodes.get(tuple(s.nets), 0) + 1

    def diode(d, what):
        if not diodes.get(d):
            raise InternalError(f"{what}: the build lacks the steering diode {d[0]} -> {d[1]}")
        diodes[d] -= 1

    for seq in build.sequencers:
        for pole in seq.poles():
            take(pole, f"sequencer of {seq.control}")
        for d in seq.diodes():
            diode(d, f"sequencer of {seq.control}")
        private |= seq.own_nets()
    for lt in build.latches:
        seq = sequencer_for(build, lt)
        for pole in lt.poles(seq):
            take(pole, f"storage {lt.net}")
        for d in lt.diodes(seq):
            diode(d, f"storage {lt.net}")
        private |= lt.own_nets()
        if lt.inverted:
            true_pole = (lt.net, lt.state, None, "VCC")
            if free.get(true_pole) or _reads(build, lt.net):
                # the design's value itself is a net of the build only where something reads it
                take(true_pole, f"storage {lt.net} (its true value)")
    extra = [d for d, n in diodes.items() if n]
    if extra:
        raise InternalError(f"steering diodes no storage element uses: {extra}")
    for i, k in enumerate(build.contacts):
        if i in used:
            continue
        touched = {k.com, k.no, k.nc, coil[k.part_ref]} & private
        if touched:
            raise InternalError(f"{k.part_ref} pole {k.pole} touches storage-internal net(s) {sorted(touched)}")
    return used


def _reads(build: Build, net: str) -> bool:
    """Whether a pole, a coil or an output of ``build`` reads ``net``."""
    if any(build.output_nets.get(o, o) == net for o in build.outputs):
        return True
    return any(net in (k.no, k.nc, build.coils[k.part_ref]) for k in build.contacts)


def _add_storage(netlist: Netlist, lt: RelayStorage, used_rails: set) -> None:
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

    Storage and its sequencers are checked pole by pole and diode by diode
    against their records (see the module docstring) and become one storage
    element each, named like the design's.  Every other pole becomes
    ``COM = coil ? NO : NC`` (an unused terminal reads 0).  Raises
    :class:`~mapper.errors.InternalError` for any other shape: a storage pole
    or diode missing or extra, a pole touching a net private to storage, a
    net driven by two poles, a rail or input on a common terminal, a loop of
    contacts, or an undriven net.
    """
    coil = build.coils
    in_storage = _storage_contacts(build)
    rest = [k for i, k in enumerate(build.contacts) if i not in in_storage]
    drv = _Drivers(rest, coil, netlist)
    comb = drv.by_net
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
    known = set(netlist.nodes) | {"VCC", "GND"}
    for k in rest:
        for x in (coil[k.part_ref], k.no, k.nc):
            if x is not None and x not in known:
                raise InternalError(f"net {x} at {k.part_ref} pole {k.pole} is driven by nothing")
