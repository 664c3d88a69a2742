#!/usr/bin/env python3
"""Regenerate ``mapper/data/exact_nand2.json``: minimum NAND2 chains.

Usage::

    .venv/bin/python scripts/make_exact_table.py [--cpu-minutes 24] [--jobs 2]

What it computes (the methods are described in :mod:`mapper.logic.exact`):

1. every function of 1, 2 and 3 inputs: an ascending SAT search per
   function, each result a proved minimum (a few seconds);
2. 4-input functions, one chain per input-permutation class (3984 classes):

   a. *enumeration by cost level*: the classes are split into four parts by
      their values on the all-zero and the all-one row (both unchanged by
      input permutations); for each part a process runs
      :func:`~mapper.logic.exact.enumerate_cost` for 1, 2, 3, ... gates until
      its share of CPU time is spent.  Every class found this way has a
      proved minimum; every class not found has a proved lower bound (the
      level where its part stopped);
   b. *composition*: each remaining class gets an upper-bound chain
      ``NAND(g, h)`` from two known chains, gates merged where they compute
      the same function;
   c. *descent*: with the CPU time left, SAT calls at one gate fewer than the
      best chain known, while they succeed (a refutation at the proved lower
      bound turns the chain into a proved minimum).

Budgets are CPU seconds (not wall time), so a busy machine makes the run take
longer but does not change what it finds, up to the solver's own
nondeterminism in the order of models.

Run time: about ``--cpu-minutes`` of CPU on each of ``--jobs`` processes
plus a minute for step 1 and the composition; the shipped table came from
the command above (see its ``meta`` block for the figures of that run).
"""
from __future__ import annotations

import argparse
import json
import multiprocessing as mp
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
PARTS = [(0, 0), (0, 1), (1, 0), (1, 1)]


def log(msg: str) -> None:
    print(f"[{time.strftime('%H:%M:%S')}] {msg}", file=sys.stderr, flush=True)


# ---------------------------------------------------------------------------
# step 1


def small_tables() -> dict[str, str]:
    out = {}
    for n in (1, 2, 3):
        for t in range(1 << (1 << n)):
            if E._trivial(n, [t])[0] is not None:
                continue
            o = E.search(n, [t])
            if not o.proved or o.chain.tables() != (t,):
                raise AssertionError(f"no proved chain for n={n} table={t:#x}")
            out[f"{n}:{t:x}"] = o.chain.encode()
    return out


# ---------------------------------------------------------------------------
# step 2a


def trivial_tables() -> list[int]:
    return [0, FULL] + [var_mask(N, j) for j in range(N)]


def in_part(t: int, part) -> bool:
    return (t & 1) == part[0] and ((t >> 15) & 1) == part[1]


def run_part(args):
    """Enumerate one part level by level within ``budget`` solver conflicts."""
    part, budget, max_level = args
    known = {t: 0 for t in trivial_tables()}
    size = sum(1 for t in range(1 << 16) if in_part(t, part))
    have = sum(1 for t in known if in_part(t, part))
    found = []
    levels = []
    lower = 1
    for r in range(1, max_level + 1):
        t0 = time.process_time()
        chains, complete, used = E.enumerate_cost(N, r, list(known), part, budget)
        budget -= used
        for ch in chains:
            f = ch.tables()[0]
            for p in E._perms(N):
                g = E.permute_table(f, N, p)
                if g not in known:
                    known[g] = r
                    have += in_part(g, part)
            found.append((f, ch.encode(), r))
        levels.append({"gates": r, "classes": len(chains), "complete": complete,
                       "conflicts": used, "cpu_s": round(time.process_time() - t0, 1)})
        log(f"part {part}: {r} gates, {len(chains)} classes, complete={complete}, "
            f"{time.process_time() - t0:.1f} s CPU")
        if not complete:
            lower = r
            break
        lower = r + 1
        if have == size:
            break
    return part, found, lower, levels


# ---------------------------------------------------------------------------
# step 2b


def all_classes() -> list[int]:
    seen = bytearray(1 << 16)
    reps = []
    for t in range(1 << 16):
        if seen[t]:
            continue
        orbit = {E.permute_table(t, N, p) for p in E._perms(N)}
        for g in orbit:
            seen[g] = 1
        reps.append(min(orbit))
    return sorted(reps)


class Known:
    """Chains known for 4-input tables, by class representative."""

    def __init__(self):
        self.rep_chain: dict[int, E.Chain] = {}
        self.cost: dict[int, int] = {t: 0 for t in trivial_tables()}

    def add(self, ch: E.Chain):
        f = ch.tables()[0]
        rep, perm = E.perm_class_rep(f, N)
        old = self.rep_chain.get(rep)
        if old is not None and old.size <= ch.size:
            return
        ch_rep = ch.permuted(_inverse(perm)) if rep != f else ch
        assert ch_rep.tables() == (rep,)
        self.rep_chain[rep] = ch_rep
        for p in E._perms(N):
            self.cost[E.permute_table(rep, N, p)] = ch.size

    def chain(self, t: int) -> E.Chain:
        if t in (0, FULL):
            raise ValueError("constant")
        for j in range(N):
            if var_mask(N, j) == t:
                return E.Chain(N, (), (j,))
        rep, perm = E.perm_class_rep(t, N)
        return self.rep_chain[rep].permuted(perm)


def _inverse(p):
    inv = [0] * len(p)
    for j, pj in enumerate(p):
        inv[pj] = j
    return tuple(inv)


def merge_nand(a: E.Chain, b: E.Chain) -> E.Chain:
    """``NAND(out a, out b)`` with the gates of both, shared by function."""
    sig = [var_mask(N, j) for j in range(N)]
    where = {t: j for j, t in enumerate(sig)}
    gates = []

    def add(x, y):
        t = ~(sig[x] & sig[y]) & FULL
        if t in where:
            return where[t]
        gates.append((min(x, y), max(x, y)))
        sig.append(t)
        where[t] = len(sig) - 1
        return len(sig) - 1

    outs = []
    for ch in (a, b):
        m = list(range(N))
        for x, y in ch.gates:
            m.append(add(m[x], m[y]))
        outs.append(m[ch.outputs[0]])
    gates.append((min(outs), max(outs)))
    return E.Chain(N, tuple(gates), (N + len(gates) - 1,))


def submasks(m: int):
    s = m
    while True:
        yield s
        if s == 0:
            return
        s = (s - 1) & m


def compose(f: int, known: Known, tries: int = 24) -> E.Chain | None:
    """Best ``NAND(g, h)`` with ``g & h == ~f`` over known ``g``, ``h``."""
    c = ~f & FULL
    if bin(f).count("1") > 13:
        return None
    gs = []
    for d in submasks(f):
        g = c | d
        k = known.cost.get(g)
        if k is not None and g not in (0, FULL):
            gs.append((k, g))
    gs.sort()
    pairs = []
    for kg, g in gs[:tries]:
        free = f & ~g
        if bin(free).count("1") > 12:
            continue
        hs = []
        for e in submasks(free):
            h = c | e
            k = known.cost.get(h)
            if k is not None and h not in (0, FULL):
                hs.append((k, h))
        hs.sort()
        for kh, h in hs[:4]:
            pairs.append((kg + kh, g, h))
    pairs.sort()
    best = None
    for _, g, h in pairs[:tries]:
        ch = merge_nand(known.chain(g), known.chain(h))
        if best is None or ch.size < best.size:
            best = ch
    return best


# ---------------------------------------------------------------------------
# step 2c


def descend(args):
    """SAT calls below the best known chain while the budget lasts."""
    f, code, lower, per_call, budget = args
    best = E.Chain.decode(N, code)
    refuted_below = False
    while best.size > lower:
        if budget <= 0:
            break
        r = best.size - 1
        enc = E._Encoder(N, [f], r)
        from pysat.solvers import Solver
        with Solver(name=E._SOLVER, bootstrap_with=enc.clauses) as s:
            res = E._limited(s, min(per_call, budget))
            budget -= E._conflicts(s)
            ch = enc.decode(s.get_model()) if res else None
        if res:
            assert ch.tables() == (f,)
            best = ch
        else:
            refuted_below = res is False and r == lower
            break
    if refuted_below:
        lower = best.size
    return f, best.encode(), lower


# ---------------------------------------------------------------------------


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--enum-conflicts", type=float, default=4e7,
                    help="solver conflicts for the enumeration of each of the four parts")
    ap.add_argument("--class-conflicts", type=float, default=1e5,
                    help="solver conflicts for the descent of each class left over")
    ap.add_argument("--call-conflicts", type=float, default=5e4,
                    help="solver conflicts for one SAT call of the descent")
    ap.add_argument("--jobs", type=int, default=2)
    ap.add_argument("--max-level", type=int, default=16)
    ap.add_argument("--refine", action="store_true",
                    help="start from the table at --out: only compose and descend again "
                         "for the classes not proved")
    ap.add_argument("--out", default=str(ROOT / "mapper" / "data" / E.TABLE_RESOURCE))
    args = ap.parse_args(argv)
    out = Path(args.out)
    ctx = mp.get_context("fork")
    run = {"args": {k: v for k, v in vars(args).items() if k != "out"}}
    wall0 = time.time()

    reps = all_classes()
    log(f"{len(reps)} input-permutation classes of 4-input functions")
    known = Known()
    upper: dict[int, E.Chain] = {}
    lower_of: dict[int, int] = {}
    proved: set[int] = set(trivial_tables())
    if args.refine:
        old = json.loads(out.read_text())
        small = old["small"]
        runs = old["meta"].get("runs", [])
        levels = old["meta"].get("levels", {})
        for key, (code, ok, lb) in old["n4"].items():
            rep, ch = int(key, 16), E.Chain.decode(N, code)
            if ok:
                known.add(ch)
                proved.add(rep)
            else:
                upper[rep], lower_of[rep] = ch, lb
                known.add(ch)
        rest = sorted(upper)
    else:
        runs = []
        log("1-3 inputs")
        t0 = time.process_time()
        small = small_tables()
        run["small_cpu_s"] = round(time.process_time() - t0, 1)
        log(f"{len(small)} chains, {run['small_cpu_s']} s CPU")
        # the parts run as separate processes sharing the `jobs` cores; budgets
        # are solver conflicts, so the result does not depend on the machine's load
        t0 = time.time()
        with ctx.Pool(min(len(PARTS), max(args.jobs, 1) * 2)) as pool:
            results = pool.map(run_part, [(p, int(args.enum_conflicts), args.max_level) for p in PARTS])
        run["enumeration_wall_s"] = round(time.time() - t0, 1)
        part_lower = {}
        levels = {}
        for part, found, lower, lv in results:
            part_lower[part] = lower
            levels[f"{part[0]}{part[1]}"] = lv
            for f, code, r in found:
                ch = E.Chain.decode(N, code)
                assert ch.size == r and ch.tables() == (f,)
                known.add(ch)
                proved.add(E.perm_class_rep(f, N)[0])
        log(f"enumeration: {len(proved)} classes with proved minimum")
        small_known = {tuple(map(lambda x: int(x, 16), k.split(":"))): E.Chain.decode(int(k[0]), c)
                       for k, c in small.items()}
        rest = [rep for rep in reps if rep not in proved]
        for rep in rest:
            part = (rep & 1, (rep >> 15) & 1)
            lower_of[rep] = max(part_lower[part], _cofactor_bound(rep, small_known))
        # composition, cheapest classes first so later ones can use them
        t0 = time.process_time()
        for rep in sorted(rest, key=lambda t: lower_of[t]):
            ch = compose(rep, known) or _shannon(rep, small_known)
            assert ch.tables() == (rep,)
            upper[rep] = ch
            known.add(ch)
        run["compose_cpu_s"] = round(time.process_time() - t0, 1)
    log(f"{len(rest)} classes left")

    # further rounds of composition use the bounds found so far
    t0 = time.process_time()
    for _ in range(3):
        better = 0
        for rep in rest:
            ch = compose(rep, known, tries=48)
            if ch is not None and ch.size < upper[rep].size:
                upper[rep] = ch
                known.add(ch)
                better += 1
        log(f"composition round: {better} better")
        if not better:
            break
    run["recompose_cpu_s"] = round(time.process_time() - t0, 1)

    # descent, largest gaps first
    t0 = time.time()
    log(f"descent: {len(rest)} classes")
    order = sorted(rest, key=lambda t: lower_of[t] - upper[t].size)
    tasks = [(rep, upper[rep].encode(), lower_of[rep], int(args.call_conflicts),
              int(args.class_conflicts)) for rep in order]
    with ctx.Pool(args.jobs) as pool:
        for i, (f, code, lb) in enumerate(pool.imap_unordered(descend, tasks, chunksize=4)):
            if i % 250 == 249:
                log(f"descent: {i + 1} classes done")
            ch = E.Chain.decode(N, code)
            assert ch.tables() == (f,)
            upper[f] = ch
            lower_of[f] = lb
            if lb == ch.size:
                proved.add(f)
    run["descent_wall_s"] = round(time.time() - t0, 1)

    n4 = {}
    dist = {}
    for rep in reps:
        if rep in trivial_tables():
            continue
        if rep in upper:
            ch, ok, lb = upper[rep], rep in proved, lower_of[rep]
        else:
            ch = known.rep_chain[rep]
            ok, lb = True, ch.size
        assert ch.tables() == (rep,) and lb <= ch.size and ok == (lb == ch.size)
        n4[f"0x{rep:x}"] = [ch.encode(), int(ok), lb]
        key = f"{ch.size}{'' if ok else '?'}"
        dist[key] = dist.get(key, 0) + 1
    run["wall_s"] = round(time.time() - wall0, 1)
    runs.append(run)
    meta = {
        "what": "minimum NAND2 chains: every function of 1-3 inputs; 4 inputs by input-permutation class",
        "generator": "scripts/make_exact_table.py",
        "solver": E._SOLVER,
        "classes_4": len(reps),
        "proved_4": sum(1 for r in reps if r in proved),
        "levels": levels,
        "runs": runs,
        "distribution_4": dict(sorted(dist.items(), key=lambda kv: (int(kv[0].rstrip("?")), kv[0]))),
    }
    tmp = out.with_suffix(".tmp")
    with open(tmp, "w") as fh:
        fh.write("{\n")
        fh.write(f'"meta": {json.dumps(meta, sort_keys=True)},\n')
        fh.write(f'"small": {json.dumps(small, separators=(",", ":"))},\n')
        fh.write('"n4": {\n')
        items = list(n4.items())
        for i, (k, v) in enumerate(items):
            fh.write(f'"{k}":{json.dumps(v, separators=(",", ":"))}{"," if i + 1 < len(items) else ""}\n')
        fh.write("}}\n")
    os.replace(tmp, out)
    log(f"wrote {out} ({out.stat().st_size} bytes) in {time.time() - wall0:.0f} s; "
        f"{meta['proved_4']} of {len(reps)} 4-input classes proved")
    return 0


def _cofactor_bound(f: int, small_known) -> int:
    """Setting an input the function depends on to 0 removes at least the
    gates that read it, so ``cost(f) >= cost(f | x=0) + 1``."""
    best = 0
    for x in range(N):
        if not E._depends(N, f, x):
            continue
        rest = [j for j in range(N) if j != x]
        sub = 0
        for m in range(8):
            mm = 0
            for q, j in enumerate(rest):
                if (m >> q) & 1:
                    mm |= 1 << j
            if (f >> mm) & 1:
                sub |= 1 << m
        triv = E._trivial(3, [sub])[0]
        c = 0 if triv is not None else small_known[(3, sub)].size
        best = max(best, c + 1)
    return best


def _shannon(f: int, small_known) -> E.Chain:
    """``f = NAND(NAND(~x3, f0), NAND(x3, f1))`` from 3-input chains: a
    fallback upper bound, never needed when composition succeeds."""
    def cof(v):
        sub = 0
        for m in range(8):
            if (f >> (m | (v << 3))) & 1:
                sub |= 1 << m
        return sub

    sig = [var_mask(N, j) for j in range(N)]
    gates = []

    def add(x, y):
        gates.append((min(x, y), max(x, y)))
        sig.append(~(sig[x] & sig[y]) & FULL)
        return len(sig) - 1

    def build(sub):
        triv = E._trivial(3, [sub])[0]
        if triv is not None:
            if triv >= 0:
                return triv
            # a constant cofactor: 0 = NAND(1, 1) built from x0
            one = add(0, add(0, 0))
            return one if triv == E.TIE_HIGH else add(one, one)
        ch = small_known[(3, sub)]
        m = [0, 1, 2]
        for x, y in ch.gates:
            m.append(add(m[x], m[y]))
        return m[ch.outputs[0]]

    f0, f1 = build(cof(0)), build(cof(1))
    nx = add(3, 3)
    a = add(nx, f0)
    b = add(3, f1)
    add(a, b)
    return E.Chain(N, tuple(gates), (len(sig) - 1,))


if __name__ == "__main__":
    sys.exit(main())
