"""Minimum NAND2 counts: distribution over all 3-input functions and the
4-input permutation classes of the shipped table, and solver times.

Table 1: how many 1-, 2- and 3-input functions need k NAND2 gates (from the
shipped table; every entry a proved minimum).  By duality the NOR2
distribution is the same (a NOR chain for f is a NAND chain for its dual,
and taking duals permutes the functions).

Table 2: the 4-input input-permutation classes of the table and the
functions they stand for, by gate count, proved minima and upper bounds
apart; then the figures of the run that made the table (its ``meta``).

Table 3: fresh SAT searches (no table), CPU seconds: every 3-input function
one by one (with and without the symmetry constraints), the same by
enumeration per cost level, the textbook circuits
(XOR 4, XNOR 5, 2:1 multiplexer 4, half adder 5, full adder 9 NAND2 — from
memory of standard digital-design texts) and their NOR2 forms.

Table 4: the mapper against the table: every 4-input permutation class
mapped alone as one node on ``nand-only`` (the cover of one mapping, no
part search, which would break ties between builds of as many parts by
depth): how many covers have as many gates as the table's chain, fewer (the
table's chain is then a loose upper bound) or more.

Run: ``.venv/bin/python bench/bench_exact.py [--quick]`` (``--quick`` skips
table 3's full adder and enumeration).
"""
from __future__ import annotations

import argparse
import itertools
import sys
import time
from collections import Counter
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from mapper.logic import exact as E  # noqa: E402
from mapper.logic.function import var_mask  # noqa: E402


def table1():
    print("Table 1: minimum NAND2 count of every function of n inputs (shipped table)")
    cols = {}
    for n in (1, 2, 3):
        cols[n] = Counter(E.min_gates(n, t) for t in range(1 << (1 << n)))
    top = max(max(c) for c in cols.values())
    print(f"{'gates':>5} {'n=1':>5} {'n=2':>5} {'n=3':>5}")
    for k in range(top + 1):
        print(f"{k:>5} {cols[1].get(k, 0):>5} {cols[2].get(k, 0):>5} {cols[3].get(k, 0):>5}")
    print(f"{'all':>5} {sum(cols[1].values()):>5} {sum(cols[2].values()):>5} {sum(cols[3].values()):>5}")
    nor = Counter(E.min_gates(3, t, "nor") for t in range(256))
    print(f"NOR2, n=3: same distribution: {nor == cols[3]}")


def table2():
    print("\nTable 2: 4-input functions by input-permutation class (shipped table)")
    data = E._table()
    seen = bytearray(1 << 16)
    by = Counter()
    for t in range(1 << 16):
        if seen[t]:
            continue
        orbit = {E.permute_table(t, 4, p) for p in itertools.permutations(range(4))}
        for g in orbit:
            seen[g] = 1
        ch, proved, lower = E.lookup_entry(4, t)
        by[(ch.size, proved, lower)] += 1
        by[("f", ch.size, proved, lower)] += len(orbit)
    sizes = sorted({k[0] for k in by if k[0] != "f"})
    print(f"{'gates':>5} {'proved classes':>15} {'functions':>10} {'upper-bound classes':>20} "
          f"{'functions':>10}  lower bounds of the upper-bound classes")
    tot = Counter()
    for k in sizes:
        pc = sum(v for key, v in by.items() if key[0] == k and key[1])
        pf = sum(v for key, v in by.items() if key[0] == "f" and key[1] == k and key[2])
        uc = sum(v for key, v in by.items() if key[0] == k and not key[1])
        uf = sum(v for key, v in by.items() if key[0] == "f" and key[1] == k and not key[2])
        lows = Counter()
        for key, v in by.items():
            if key[0] == k and not key[1]:
                lows[key[2]] += v
        tot.update({"pc": pc, "pf": pf, "uc": uc, "uf": uf})
        lw = ", ".join(f">={lb}: {c}" for lb, c in sorted(lows.items()))
        print(f"{k:>5} {pc:>15} {pf:>10} {uc:>20} {uf:>10}  {lw}")
    print(f"{'all':>5} {tot['pc']:>15} {tot['pf']:>10} {tot['uc']:>20} {tot['uf']:>10}")
    meta = data.get("meta", {})
    if meta:
        print(f"generator run: {meta.get('generator')} {meta.get('args')}")
        print(f"  wall {meta.get('wall_s')} s, steps {meta.get('wall_s_steps')}, CPU {meta.get('cpu_s')}")
        print(f"  {'part':>4} {'gates':>5} {'classes':>7} {'complete':>8} {'conflicts':>10} {'CPU s':>7}")
        for part, levels in sorted(meta.get("levels", {}).items()):
            for lv in levels:
                print(f"  {part:>4} {lv['gates']:>5} {lv['classes']:>7} {str(lv['complete']):>8} "
                      f"{lv.get('conflicts', 0):>10} {lv['cpu_s']:>7}")


def table3(quick: bool):
    print("\nTable 3: fresh SAT searches (CPU seconds)")
    a, b = var_mask(2, 0), var_mask(2, 1)
    x, y, z = (var_mask(3, j) for j in range(3))
    cases = [
        ("XOR2", 2, [a ^ b], 4),
        ("XNOR2", 2, [~(a ^ b) & 0xF], 5),
        ("2:1 multiplexer", 3, [((x & ~z) | (y & z)) & 0xFF], 4),
        ("half adder", 2, [a ^ b, a & b], 5),
    ]
    if not quick:
        cases.append(("full adder", 3, [x ^ y ^ z, (x & y) | (x & z) | (y & z)], 9))
    print(f"{'circuit':<16} {'textbook':>8} {'NAND2':>6} {'CPU s':>7} {'NOR2':>5} {'CPU s':>7}")
    for name, n, tabs, book in cases:
        t0 = time.process_time()
        c1 = E.synthesize(n, tabs)
        t1 = time.process_time()
        c2 = E.synthesize(n, tabs, gate="nor")
        t2 = time.process_time()
        print(f"{name:<16} {book:>8} {c1.size:>6} {t1 - t0:>7.2f} {c2.size:>5} {t2 - t1:>7.2f}")
    t0 = time.process_time()
    sizes = [E.search(3, [t]).chain.size for t in range(256)]
    print(f"all 256 3-input functions one by one: {time.process_time() - t0:.1f} s; "
          f"agrees with the table: {sizes == [E.min_gates(3, t) for t in range(256)]}")
    if quick:
        return
    t0 = time.process_time()
    plain = [E.search(3, [t], symmetry=False).chain.size for t in range(256)]
    print(f"all 256 without the symmetry constraints: {time.process_time() - t0:.1f} s; "
          f"same counts: {plain == sizes}")
    t0 = time.process_time()
    cost = {0: 0, 0xFF: 0, x: 0, y: 0, z: 0}
    r = 0
    while len(cost) < 256:
        r += 1
        chains, complete, _ = E.enumerate_cost(3, r, list(cost))
        assert complete
        for ch in chains:
            f = ch.tables()[0]
            for p in itertools.permutations(range(3)):
                cost.setdefault(E.permute_table(f, 3, p), r)
    print(f"all 256 by enumeration per cost level: {time.process_time() - t0:.1f} s; "
          f"agrees: {all(cost[t] == E.min_gates(3, t) for t in range(256))}")


def table4(quick: bool):
    from mapper import flow
    from mapper.fit.fit import _library
    from mapper.fit.gates import map_logic
    from mapper.logic.function import Function
    from mapper.netlist import Netlist

    print("Table 4: the mapper on every 4-input class alone (nand-only, first mapping) against the table")
    target = flow.load_target("nand-only")
    reps = sorted({E.perm_class_rep(t, 4)[0] for t in range(1 << 16)}) if not quick else \
        sorted({E.perm_class_rep(t, 4)[0] for t in range(0, 1 << 16, 97)})
    same = fewer = more = 0
    worst = []
    t0 = time.perf_counter()
    for rep in reps:
        ch, proved, _ = E.lookup_entry(4, rep)
        if ch.size == 0:
            continue
        d = Netlist(f"f{rep:04x}")
        for j in range(4):
            d.add_input(f"x{j}")
        d.add_logic("f", [f"x{j}" for j in range(4)], Function.from_table(4, rep))
        d.add_output("f")
        got = len(map_logic(d, _library(target)).cells)
        if got == ch.size:
            same += 1
        elif got < ch.size:
            fewer += 1
            worst.append((rep, got, ch.size, proved))
        else:
            more += 1
            worst.append((rep, got, ch.size, proved))
    print(f"  {len(reps)} classes in {time.perf_counter() - t0:.0f} s: as the table {same}, "
          f"fewer gates {fewer}, more gates {more}")
    for rep, got, size, proved in worst[:12]:
        print(f"  0x{rep:04x}: mapper {got}, table {size} ({'proved' if proved else 'upper bound'})")


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--quick", action="store_true")
    args, _ = ap.parse_known_args(argv)
    table1()
    table2()
    table3(args.quick)
    table4(args.quick)
    return 0


if __name__ == "__main__":
    sys.exit(main())
