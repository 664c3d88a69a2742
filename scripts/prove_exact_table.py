#!/usr/bin/env python3
"""Prove the 4-input classes of ``mapper/data/exact_nand2.json`` that are still upper bounds.

Usage::

    .venv/bin/python scripts/prove_exact_table.py [--hours 2] [--levels 10] [--write]

Starts from the shipped table (made by ``scripts/make_exact_table.py``) and
works on the classes whose chain is not yet a proved minimum, on one core:

1. *Shannon upper bounds*: for each input ``x``, ``f = x ? f1 : f0`` from the
   proved 3-input chains of the cofactors (``NAND(NAND(~x, f0), NAND(x, f1))``,
   with the AND / OR forms when a cofactor is constant), gates shared by
   function.  A shorter chain replaces the shipped one.
2. *Enumeration by cost level* (:func:`mapper.logic.exact.enumerate_cost`)
   continued from the first level each of the four parts left incomplete,
   up to ``--levels`` gates: every chain found there is a proved minimum,
   and a level run to its end proves ``level + 1`` gates a lower bound of
   every class of the part not found.
3. *Ascending proof per class*: SAT calls at ``lower``, ``lower + 1``, ...
   below the best chain known.  Each refutation raises the proved lower
   bound; a satisfiable call gives a chain of the proved minimum size; when
   the lower bound meets the chain's size the chain is proved minimum.

4. *Mapper bounds* (on ``--write``): each class still unproved is also
   mapped as one node by the cut mapper (:func:`mapper.fit.gates.map_logic`,
   whose covers combine chains of smaller cuts); a shorter cover replaces
   the chain, and proves it when it meets the lower bound.

Every step writes a checkpoint (``--state``), so the run can be stopped and
resumed; ``--write`` folds the checkpoint into the shipped table (its ``meta``
block records the run).  The SAT encoding and the arguments for why each
step is sound are in :mod:`mapper.logic.exact`.
"""
from __future__ import annotations

import argparse
import json
import os
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from mapper.logic import exact as E  # noqa: E402
from mapper.logic.function import var_mask  # noqa: E402

N = 4
FULL = (1 << 16) - 1
PARTS = ["00", "01", "10", "11"]
TABLE = ROOT / "mapper" / "data" / E.TABLE_RESOURCE


def log(msg: str) -> None:
    print(f"[{time.strftime('%H:%M:%S')}] {msg}", file=sys.stderr, flush=True)


def load_state(path: Path) -> dict:
    if path.exists():
        return json.loads(path.read_text())
    data = json.loads(TABLE.read_text())
    done = {p: max((lv["gates"] for lv in levels if lv["complete"]), default=0)
            for p, levels in data["meta"]["levels"].items()}
    return {"n4": data["n4"], "complete_level": done, "log": []}


def save_state(path: Path, state: dict) -> None:
    tmp = path.with_suffix(".tmp")
    tmp.write_text(json.dumps(state))
    os.replace(tmp, path)


def part_of(t: int) -> str:
    return f"{t & 1}{(t >> 15) & 1}"


def small_chain(sub: int, small: dict) -> E.Chain | None:
    code = small.get(f"3:{sub:x}")
    return None if code is None else E.Chain.decode(3, code)


class Builder:
    """A NAND2 chain over four inputs with gates shared by function."""

    def __init__(self):
        self.sig = [var_mask(N, j) for j in range(N)]
        self.where = {t: j for j, t in enumerate(self.sig)}
        self.gates: list = []

    def nand(self, x: int, y: int) -> int:
        t = ~(self.sig[x] & self.sig[y]) & FULL
        if t in self.where:
            return self.where[t]
        self.gates.append((min(x, y), max(x, y)))
        self.sig.append(t)
        self.where[t] = len(self.sig) - 1
        return len(self.sig) - 1

    def inv(self, x: int) -> int:
        return self.nand(x, x)

    def sub(self, ch: E.Chain, leaves) -> int:
        m = list(leaves)
        for a, b in ch.gates:
            m.append(self.nand(m[a], m[b]))
        return m[ch.outputs[0]]

    def chain(self, out: int) -> E.Chain:
        return E.Chain(N, tuple(self.gates), (out,))


def shannon(f: int, x: int, small: dict) -> E.Chain | None:
    """``f`` split on input ``x`` from 3-input chains of its cofactors."""
    rest = [j for j in range(N) if j != x]
    cof = []
    for v in (0, 1):
        sub = 0
        for m in range(8):
            mm = v << x
            for q, j in enumerate(rest):
                if (m >> q) & 1:
                    mm |= 1 << j
            if (f >> mm) & 1:
                sub |= 1 << m
        cof.append(sub)
    b = Builder()

    def build(sub):
        triv = E._trivial(3, [sub])[0]
        if triv is not None:
            return triv if triv < 0 else rest[triv]
        ch = small_chain(sub, small)
        return None if ch is None else b.sub(ch, rest)

    f0, f1 = build(cof[0]), build(cof[1])
    if f0 is None or f1 is None:
        return None
    lo, hi = E.TIE_LOW, E.TIE_HIGH
    if f0 == lo and f1 == hi:
        return None  # a projection
    if f0 == lo:        # f = x & f1
        out = b.inv(b.nand(x, f1))
    elif f1 == lo:      # f = ~x & f0 = NOR(x, ~f0)
        out = b.inv(b.nand(b.inv(x), f0))
    elif f0 == hi:      # f = ~x | f1 = NAND(x, ~f1)
        out = b.nand(x, b.inv(f1))
    elif f1 == hi:      # f = x | f0 = NAND(~x, ~f0)
        out = b.nand(b.inv(x), b.inv(f0))
    else:
        out = b.nand(b.nand(b.inv(x), f0), b.nand(x, f1))
    ch = b.chain(out)
    return ch if ch.tables() == (f,) else None


def step_shannon(state: dict, small: dict) -> int:
    better = 0
    for key, (code, proved, lower) in state["n4"].items():
        if proved:
            continue
        f = int(key, 16)
        best = E.Chain.decode(N, code)
        for x in range(N):
            ch = shannon(f, x, small)
            if ch is not None and ch.size < best.size:
                best = ch
        if best.size < E.Chain.decode(N, code).size:
            state["n4"][key] = [best.encode(), int(best.size == lower), lower]
            better += 1
    return better


def step_levels(state: dict, max_level: int, budget: float, path: Path) -> None:
    for part in PARTS:
        while state["complete_level"][part] < max_level:
            r = state["complete_level"][part] + 1
            cheaper = []
            for key, (code, proved, lower) in state["n4"].items():
                size = len(code.partition(">")[0]) // 2
                if proved and size < r:
                    f = int(key, 16)
                    cheaper.extend(E.permute_table(f, N, p) for p in E._perms(N))
            cheaper += [0, FULL] + [var_mask(N, j) for j in range(N)]
            t0 = time.process_time()
            chains, complete, used = E.enumerate_cost(N, r, cheaper, (int(part[0]), int(part[1])), int(budget))
            for ch in chains:
                f = ch.tables()[0]
                rep, perm = E.perm_class_rep(f, N)
                ch_rep = ch.permuted([perm.index(j) for j in range(N)])
                assert ch_rep.tables() == (rep,) and ch.size == r
                state["n4"][f"0x{rep:x}"] = [ch_rep.encode(), 1, r]
            entry = {"step": "levels", "part": part, "gates": r, "classes": len(chains), "complete": complete,
                     "conflicts": used, "cpu_s": round(time.process_time() - t0, 1)}
            state["log"].append(entry)
            log(str(entry))
            if not complete:
                save_state(path, state)
                break
            state["complete_level"][part] = r
            for key, val in state["n4"].items():
                if not val[1] and part_of(int(key, 16)) == part and val[2] < r + 1:
                    val[2] = r + 1
                    val[1] = int(len(val[0].partition(">")[0]) // 2 == val[2])
            save_state(path, state)


def prove_class(f: int, best: E.Chain, lower: int, call_budget, deadline: float):
    """Ascending SAT calls; returns (chain, lower, proved)."""
    from pysat.solvers import Solver
    while lower < best.size and time.time() < deadline:
        enc = E._Encoder(N, [f], lower)
        with Solver(name=E._SOLVER, bootstrap_with=enc.clauses) as s:
            res = E._limited(s, call_budget)
            ch = enc.decode(s.get_model()) if res else None
        if res is None:
            break
        if res:
            assert ch.tables() == (f,) and ch.size == lower
            return ch, lower, True
        lower += 1
    return best, lower, best.size == lower


def step_classes(state: dict, deadline: float, call_budget, path: Path) -> None:
    todo = sorted((val[2], len(val[0].partition(">")[0]) // 2, key)
                  for key, val in state["n4"].items() if not val[1])
    log(f"per-class proof: {len(todo)} classes")
    done = 0
    for lower, size, key in todo:
        if time.time() >= deadline:
            break
        f = int(key, 16)
        ch, lb, ok = prove_class(f, E.Chain.decode(N, state["n4"][key][0]), lower, call_budget, deadline)
        state["n4"][key] = [ch.encode(), int(ok), lb]
        done += ok
        if done % 10 == 0:
            save_state(path, state)
    save_state(path, state)
    log(f"per-class proof: {done} proved")


def mapper_chain(f: int) -> E.Chain | None:
    """The cut mapper's cover of ``f`` alone on nand-only, as a chain (``None``
    when it uses a rail)."""
    from mapper import flow
    from mapper.fit.fit import _library
    from mapper.fit.gates import map_logic
    from mapper.logic.function import Function
    from mapper.netlist import Netlist

    d = Netlist("f")
    for j in range(N):
        d.add_input(f"x{j}")
    d.add_logic("f", [f"x{j}" for j in range(N)], Function.from_table(N, f))
    d.add_output("f")
    lib = _library(flow.load_target("nand-only"))
    best = None
    for limit in (8, 16):
        m = map_logic(d, lib, cuts_per_node=limit)
        sig = {f"x{j}": j for j in range(N)}
        gates = []
        for c in m.cells:
            if any(a not in sig for a in c.args):
                break
            a, b = sorted(sig[x] for x in c.args)
            gates.append((a, b))
            sig[c.out] = N + len(gates) - 1
        else:
            out = sig.get(m.outputs["f"])
            if out is not None:
                ch = E.Chain(N, tuple(gates), (out,))
                if ch.tables() == (f,) and (best is None or ch.size < best.size):
                    best = ch
    return best


def step_mapper(state: dict) -> int:
    better = 0
    for key, val in state["n4"].items():
        if val[1]:
            continue
        ch = mapper_chain(int(key, 16))
        if ch is not None and ch.size < len(val[0].partition(">")[0]) // 2:
            assert ch.size >= val[2], key  # a proved lower bound can never be beaten
            state["n4"][key] = [ch.encode(), int(ch.size == val[2]), val[2]]
            better += 1
    return better


def write_table(state: dict) -> None:
    log(f"mapper bounds: {step_mapper(state)} classes better")
    data = json.loads(TABLE.read_text())
    meta = data["meta"]
    dist: dict = {}
    for key, (code, ok, lb) in state["n4"].items():
        ch = E.Chain.decode(N, code)
        assert ch.tables() == (int(key, 16),) and lb <= ch.size and bool(ok) == (lb == ch.size)
        k = f"{ch.size}{'' if ok else '?'}"
        dist[k] = dist.get(k, 0) + 1
    meta["proved_4"] = sum(1 for v in state["n4"].values() if v[1]) + 3  # with the 3 trivial classes
    meta["distribution_4"] = dict(sorted(dist.items(), key=lambda kv: (int(kv[0].rstrip("?")), kv[0])))
    meta.setdefault("runs", []).append({"generator": "scripts/prove_exact_table.py", "log": state["log"][-40:]})
    meta["complete_level"] = state["complete_level"]
    tmp = TABLE.with_suffix(".tmp")
    with open(tmp, "w") as fh:
        fh.write("{\n")
        fh.write(f'"meta": {json.dumps(meta, sort_keys=True)},\n')
        fh.write(f'"small": {json.dumps(data["small"], separators=(",", ":"))},\n')
        fh.write('"n4": {\n')
        items = sorted(state["n4"].items(), key=lambda kv: int(kv[0], 16))
        for i, (k, v) in enumerate(items):
            fh.write(f'"{k}":{json.dumps(v, separators=(",", ":"))}{"," if i + 1 < len(items) else ""}\n')
        fh.write("}}\n")
    os.replace(tmp, TABLE)
    log(f"wrote {TABLE}: {meta['proved_4']} of {meta['classes_4']} classes proved")


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--state", default="/tmp/netfit-exact-state.json")
    ap.add_argument("--hours", type=float, default=2.0, help="wall hours for the whole run (checked between SAT calls)")
    ap.add_argument("--levels", type=int, default=9, help="enumerate cost levels up to this many gates")
    ap.add_argument("--level-conflicts", type=float, default=3e7)
    ap.add_argument("--call-conflicts", type=float, default=0, help="0: no limit per SAT call")
    ap.add_argument("--write", action="store_true", help="only fold the checkpoint into the table")
    args = ap.parse_args(argv)
    path = Path(args.state)
    state = load_state(path)
    if args.write:
        write_table(state)
        return 0
    deadline = time.time() + 3600 * args.hours
    small = json.loads(TABLE.read_text())["small"]
    log(f"shannon: {step_shannon(state, small)} classes better")
    save_state(path, state)
    step_levels(state, args.levels, args.level_conflicts, path)
    step_classes(state, deadline, int(args.call_conflicts) or None, path)
    return 0


if __name__ == "__main__":
    sys.exit(main())
