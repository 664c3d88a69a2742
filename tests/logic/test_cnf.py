"""Tests of the Tseitin encoding (mapper/logic/cnf.py).

Outside sources named beside each check:
* Tseitin's transformation (G. S. Tseitin 1968): three clauses per AND node,
  a formula linear in the graph, satisfiable with a root forced to 1 exactly
  when the root's function has a 1;
* textbook truth tables (XOR, majority; common practice);
* an ariths-gen adder (generator library) against Python integer arithmetic,
  the SAT solver's model read back through the encoding.
"""
from __future__ import annotations

import itertools

from pysat.solvers import Solver

import generated
from mapper.logic.aig import AIG, from_netlist
from mapper.logic.cnf import AigCnf, aig_var, sat_var, tseitin
from mapper.read.blif import read


def _models_over(clauses, root, input_vars):
    """Input assignments (tuples of 0/1) under which ``root`` can be true."""
    found = set()
    with Solver(name="minisat22", bootstrap_with=clauses) as s:
        while s.solve(assumptions=[root]):
            model = set(s.get_model())
            bits = tuple(1 if v in model else 0 for v in input_vars)
            found.add(bits)
            s.add_clause([-v if b else v for v, b in zip(input_vars, bits)])
    return found


def test_three_clauses_per_and_node():
    # Tseitin: v <-> a&b is (-v|a)(-v|b)(v|-a|-b)
    g = AIG()
    a, b = g.add_input("a"), g.add_input("b")
    x = g.add_and(a, b ^ 1)
    clauses, (rx,) = tseitin(g, [x])
    assert rx == sat_var(x >> 1) and aig_var(rx) == x >> 1
    sa, sb = sat_var(a >> 1), sat_var(b >> 1)
    assert sorted(map(sorted, clauses)) == sorted(map(sorted, [[-rx, sa], [-rx, -sb], [rx, -sa, sb]]))


def test_models_are_the_truth_table():
    # XOR3 and majority-of-3 (common practice): the inputs under which the root
    # can be 1 are exactly the ON-set of the textbook truth table
    g = AIG()
    x, y, z = (g.add_input(n) for n in "xyz")
    xor3 = g.add_xor(g.add_xor(x, y), z)
    maj = g.add_or(g.add_or(g.add_and(x, y), g.add_and(x, z)), g.add_and(y, z))
    ins = [sat_var(v >> 1) for v in (x, y, z)]
    for root, f in ((xor3, lambda p, q, r: p ^ q ^ r), (maj, lambda p, q, r: int(p + q + r >= 2))):
        clauses, (r,) = tseitin(g, [root])
        on = {bits for bits in itertools.product((0, 1), repeat=3) if f(*bits)}
        assert _models_over(clauses, r, ins) == on
        assert _models_over(clauses, -r, ins) == set(itertools.product((0, 1), repeat=3)) - on


def test_constant_roots():
    # a formula asking the constant false to be true is unsatisfiable; true is satisfiable
    g = AIG()
    enc = AigCnf(g)
    with Solver(name="minisat22") as s:
        f = enc.lit(0)
        s.append_formula(enc.clauses)
        assert not s.solve(assumptions=[f])
        assert s.solve(assumptions=[enc.lit(1)])


def test_only_the_cone_is_encoded_and_shared_logic_once(tmp_path):
    # linear size (Tseitin): an ariths-gen multiplier's cone of one output gets
    # exactly 3 clauses per AND node of that cone, none for the rest
    n = read(generated.make("arr", 6, tmp_path))
    g, lits = from_netlist(n)
    enc = AigCnf(g)
    top = lits[n.outputs[-1]]
    enc.lit(top)
    cone = g.cone([top])
    assert enc.num_clauses == 3 * len(cone)
    assert len(cone) < g.num_ands
    before = enc.num_clauses
    enc.encode([lits[o] for o in n.outputs])  # the rest, shared nodes not again
    assert enc.num_clauses == 3 * len(g.cone([lits[o] for o in n.outputs]))
    assert enc.num_clauses > before


def test_model_values_match_integer_addition(tmp_path):
    # ariths-gen 4-bit ripple-carry adder: for all 256 operand pairs the solver,
    # given the inputs, must set the sum bits to x + y (Python integer arithmetic)
    n = read(generated.make("rca", 4, tmp_path))
    g, lits = from_netlist(n)
    with Solver(name="minisat22") as s:
        enc = AigCnf(g, sink=s)
        outs = [enc.lit(lits[o]) for o in n.outputs]
        ins = {name: enc.lit(lits[name]) for name in n.inputs}
        for x in range(16):
            for y in range(16):
                assumptions = [ins[f"a[{i}]"] if (x >> i) & 1 else -ins[f"a[{i}]"] for i in range(4)]
                assumptions += [ins[f"b[{i}]"] if (y >> i) & 1 else -ins[f"b[{i}]"] for i in range(4)]
                assert s.solve(assumptions=assumptions)
                model = set(s.get_model())
                total = sum((1 if o in model else 0) << i for i, o in enumerate(outs))
                assert total == x + y
