"""Two-level minimization of small nodes before mapping.

Outside sources: pyeda's espresso (an independent implementation of the
published heuristic) supplies candidate covers; textbook minimum sums of
products (common practice of digital-design courses) are checked below.
"""
from __future__ import annotations

import random

import pytest

from mapper.logic.function import Function
from mapper.logic.minimize import min_cover


def _table_of(n, cubes, phase):
    t = 0
    for m in range(1 << n):
        hit = any(all(ch == "-" or int(ch) == (m >> j) & 1 for j, ch in enumerate(c)) for c in cubes)
        if hit == bool(phase):
            t |= 1 << m
    return t


def _literals(cubes):
    return sum(len(c) - c.count("-") for c in cubes)


@pytest.mark.parametrize("n", [3, 4, 5, 6])
def test_min_cover_keeps_the_function_and_never_grows(n):
    rng = random.Random(n)
    for _ in range(25):
        t = rng.getrandbits(1 << n)
        f = Function.from_table(n, t)
        if f.constant_value() is not None:
            continue
        cubes, phase = min_cover(f)
        # the cover is evaluated minterm by minterm here, independently of the
        # code under test (the definition of a sum of products)
        assert _table_of(n, cubes, phase) == t
        given, _ = f.cover()
        assert _literals(cubes) <= _literals(given)


def test_textbook_minimum_covers():
    # majority of three: ab + ac + bc, 3 cubes and 6 literals (common practice)
    maj = Function.from_table(3, 0xE8)
    cubes, _ = min_cover(maj)
    assert (len(cubes), _literals(cubes)) == (3, 6)
    # a minterm list of a + b over three inputs shrinks to two one-literal cubes
    wordy = Function.from_cover(3, ["100", "010", "110", "101", "011", "111"], 1)
    cubes, phase = min_cover(wordy)
    assert _literals(cubes) == 2 and _table_of(3, cubes, phase) == wordy.table()
    # three-input exclusive-OR has no smaller cover than its 4 minterms (common practice)
    cubes, _ = min_cover(Function.from_table(3, 0x96))
    assert (len(cubes), _literals(cubes)) == (4, 12)
