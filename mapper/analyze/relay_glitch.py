"""Glitches of relay builds: nets that float while a changeover contact transfers.

A changeover contact breaks before it makes: during each transfer its
common terminal touches neither side.  :func:`relay_transfers` gives, for
every pole, when its common net may float and when it has settled;
:func:`relay_glitches` finds the static-1 hazards those gaps cause at the
outputs.
"""
from __future__ import annotations

from ..build import SUPPLY_NETS, Build
from ..logic.function import var_mask
from ..netlist import Storage
from ..order import topological_order
from ..relay_logic import storage_nets
from ..simulate import simulate
from .glitch import conditions
from .glitch_engine import bits, sec
from .relay import switch_times

__all__ = ["relay_transfers", "relay_glitches", "RELAY_MAX_INPUTS"]


def _relay_setup(build: Build):
    """(loaded nets, part ref -> (typical, transfer, bounce) seconds, drivers, pole order, nets on loops)."""
    loaded = build.support_nets("pull-down")
    sw = switch_times(build)
    # relay-driven nets in topological order (fan-ins first); nets on loops (seal-in storage) last
    inner, _ = storage_nets(build)
    drivers: dict = {}
    for k in build.contacts:
        if k.com not in inner and k.com not in SUPPLY_NETS:
            drivers.setdefault(k.com, []).append(k)
    order, left = topological_order(
        sorted(drivers),
        lambda n: {x for k in drivers[n] for x in (k.no, k.nc, build.coils.get(k.part_ref)) if x != n},
        first_first=True)
    on_loops = set(left)
    return loaded, sw, drivers, order, [n for n in drivers if n in on_loops]


def relay_transfers(build: Build) -> list:
    """For each pole of a relay build, when its common net may float and when it has settled.

    The coil net's change arrives between its earliest and latest time (coil
    levels of the relays before it: typical changeover delay at the earliest,
    the longer of operate and release time plus bounce at the latest).  The
    changeover contact then breaks -- the common terminal touches neither side
    and its net floats (or is held by its load resistor) -- and makes within
    the operate or release time (a coil diode lengthens the release time as
    in :mod:`mapper.analyze.relay`); then it bounces for the bounce
    time.  So:

    * ``floating_s`` = ``[earliest coil change, latest coil change + max(operate, release)]``
    * ``settled_s`` = ``floating_s[1] + bounce``

    each as seconds after the input change.  ``loaded`` says whether a
    resistor to ``GND`` holds the net while it floats (common practice: a
    relay-driven net feeding logic or a coil needs a defined load).
    """
    loaded, sw, drivers, order, left = _relay_setup(build)
    early: dict = {}
    late: dict = {}
    for net in order + left:  # nets on loops (seal-in storage) are timed from 0
        e = []
        la = []
        for k in drivers[net]:
            coil = build.coils.get(k.part_ref)
            typ, transfer, bounce = sw.get(k.part_ref, (0.0, 0.0, 0.0))
            e.append(early.get(coil, 0.0) + typ)
            la.append(late.get(coil, 0.0) + transfer + bounce)
            for x in (k.no, k.nc):
                if x in drivers:
                    e.append(early.get(x, 0.0))
                    la.append(late.get(x, 0.0))
        early[net] = min(e)
        late[net] = max(la)
    out = []
    coils = set(build.coils.values())
    inner, _ = storage_nets(build)
    for k in build.contacts:
        if k.com in SUPPLY_NETS or k.com in inner:
            # a pole whose common is the rail (its sides float, not the rail); the poles of storage and its
            # sequencer move on the clock, and the clock figures say how long they take
            continue
        coil = build.coils.get(k.part_ref)
        typ, transfer, bounce = sw.get(k.part_ref, (0.0, 0.0, 0.0))
        start = early.get(coil, 0.0)
        end = late.get(coil, 0.0) + transfer
        out.append({"net": k.com, "part": k.part_ref, "pole": k.pole, "coil": coil,
                    "floating_s": [round(start, 9), round(end, 9)],
                    "settled_s": round(end + bounce, 9),
                    "loaded": k.com in loaded or k.com in coils})
    return out


#: relay builds with more free variables (inputs and storage) than this are not searched
RELAY_MAX_INPUTS = 16


def relay_glitches(build: Build, max_inputs: int = RELAY_MAX_INPUTS) -> dict:
    """Static-1 glitches of a relay build's outputs from break-before-make transfers.

    While a changeover contact transfers, its common terminal touches neither
    side: the net is cut off from the supply for that gap, and a net held by
    a load resistor reads 0.  So when a coil changes while both the
    normally-open and the normally-closed side carry 1 -- before and after
    the change -- the common net drops and comes back: a static-1 hazard of
    the contact network (hazards in contact networks: M. Yoeli and S. Rinon,
    JACM 11(1), 1964; the transfer gap: common practice).  A cut-off net
    passes the cut on through contacts of relays that do not move (contacts
    pass signals at once), down to the loaded nets that read it as 0; it is not followed
    through coils (a dropout shorter than the release time does not release a
    held relay -- common practice).  Every single-input change from every
    state of the inputs and storage outputs is examined (bit-parallel, up to
    ``max_inputs`` free variables).

    The control nets of the storage sequencers are watched as well: a
    dropout there reaches the sequencer's coils, and relays in any order may
    step the storage on it, so such a hazard is an error (``reaches`` names
    the control's relays; ``output`` is the net's name for a net that is no output).

    Returns ``hazards`` (as :func:`find_glitches`: ``output``, ``net``,
    ``kind``, ``inputs_changed``, ``directions``, ``when``, ``width_s`` =
    ``[0, transfer time of the relay that moves]``, ``racing_paths`` naming
    that relay's pole) and ``search``.
    """
    n = build.to_netlist()
    storage = [name for name, node in n.nodes.items() if isinstance(node, Storage)]
    free = list(n.inputs) + storage
    k = len(free)
    search = {"method": "break-before-make transfers, every single-input change", "free_variables": k}
    if k > max_inputs:
        search["checked"] = 0
        search["note"] = f"more than {max_inputs} inputs and storage outputs: not searched"
        return {"hazards": [], "search": search}
    npat = 1 << k
    mask = (1 << npat) - 1
    words = {x: var_mask(k, j) for j, x in enumerate(free)}
    vals = simulate(n, {x: words[x] for x in n.inputs}, mask, {x: words[x] for x in storage})
    vals["VCC"], vals["GND"] = mask, 0

    def val(net):
        return vals.get(net, 0) if net is not None else 0

    loaded, sw, drivers, order, _left = _relay_setup(build)
    out_ports: dict = {}
    for o in build.outputs:
        out_ports.setdefault(build.output_nets.get(o, o), []).append(o)
    # the control nets of the sequencers: a dropout there steps storage (its relays follow any gap)
    watch: dict = {}
    for seq in build.sequencers:
        if seq.control in n.nodes and not isinstance(n.nodes[seq.control], Storage) \
                and seq.control not in build.inputs:
            watch.setdefault(seq.control, []).extend(
                {"part": p.ref, "cell": "relay", "section": None, "pin": "coil", "pin_number": None,
                 "role": "clock" if seq.edge else "enable"}
                for p in build.parts if build.coils.get(p.ref) == seq.control)
    for net in watch:
        out_ports.setdefault(net, []).append(None)
    hazards = []
    for j, x in enumerate(free):
        sh = 1 << j
        mj = var_mask(k, j)

        def nb(w, mj=mj, sh=sh):
            return ((w & mj) >> sh) | ((w & ~mj & mask) << sh)

        glitch: dict = {}
        cause: dict = {}
        for net in order:
            if net not in n.nodes or isinstance(n.nodes[net], Storage):
                continue
            pole = drivers[net][0]
            c = val(build.coils.get(pole.part_ref))
            no, nc, z = val(pole.no), val(pole.nc), val(net)
            ch = c ^ nb(c)
            # the net is cut off (floats, or is held low by its load) for the gap
            g = ch & no & nc & nb(no) & nb(nc)
            if g:
                cause[net] = pole
            through = ~ch & mask & z & nb(z) & ((c & glitch.get(pole.no, 0)) | (~c & glitch.get(pole.nc, 0)))
            if through & ~g:
                src = pole.no if glitch.get(pole.no, 0) & c & through else pole.nc
                cause.setdefault(net, cause.get(src))
            g |= through
            if g:
                glitch[net] = g
        for net, ports in out_ports.items():
            g = glitch.get(net, 0)
            if not g:
                continue
            conds = sorted({_drop_bit(p, j) for p in bits(g)})
            dirs = []
            if g & ~mj:
                dirs.append(f"{x} rises")
            if g & mj:
                dirs.append(f"{x} falls")
            pole = cause.get(net)
            transfer = sw.get(pole.part_ref, (0, 0, 0))[1] if pole is not None else 0.0
            names = [free[i] for i in range(k) if i != j]
            reaches = watch.get(net, [])
            for port in ports:
                hazards.append({
                    "output": port if port is not None else net, "net": net, "kind": "static-1",
                    "inputs_changed": [x],
                    "directions": sorted(dirs), "when": conditions(conds, names, True),
                    "width_s": [0.0, sec(transfer)], "width_example_s": sec(transfer),
                    "racing_paths": [{"from": x, "break_before_make": {
                        "part": pole.part_ref, "pole": pole.pole, "coil": build.coils.get(pole.part_ref),
                        "net": pole.com, "loaded": pole.com in loaded} if pole is not None else None}],
                    "races": 1, "reaches": reaches if port is None else [], "error": bool(reaches) and port is None,
                })
    search["checked"] = k * npat
    search["exhaustive"] = True
    return {"hazards": hazards, "search": search}


def _drop_bit(p: int, j: int) -> int:
    """State ``p`` without bit ``j`` (higher bits move down)."""
    return (p & ((1 << j) - 1)) | ((p >> (j + 1)) << j)
