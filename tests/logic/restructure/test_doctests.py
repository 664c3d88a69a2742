"""The examples in the docstrings of the restructuring modules run as written.

Outside source for the example values: common practice (majority of three is symmetric with
values 0, 0, 1, 1 by count of ones; ab + ac = a(b + c); XOR2 in three ANDs; (a+b)(c+d) has the
kernels a+b, c+d and itself; a 74HC157 section is Y = E_N ? 0 : (S ? B : A); a full adder's
carry is (a XOR b) ? cin : a).
"""
from __future__ import annotations

import doctest
import importlib

import pytest

MODULES = ["mapper.logic.restructure.symmetric", "mapper.logic.restructure.rewrite",
           "mapper.logic.restructure.structures", "mapper.logic.restructure.factor", "mapper.fit.muxes",
           "mapper.logic.restructure.muxresub"]


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name):
    result = doctest.testmod(importlib.import_module(name))
    assert result.attempted > 0 and result.failed == 0
