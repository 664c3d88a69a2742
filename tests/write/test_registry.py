"""The registries of readers and writers name every module that reads or writes a format."""
from __future__ import annotations

import importlib
import pkgutil

import pytest

import mapper.read
import mapper.write
from mapper.errors import UsageError
from mapper.read import READERS, reader_for
from mapper.write import BUILD_WRITERS, NETLIST_MODULES, WRITERS, writer_for


def _modules(package):
    return [importlib.import_module(f"{package.__name__}.{m.name}") for m in pkgutil.iter_modules(package.__path__)]


def test_every_netlist_writer_is_registered_with_its_suffixes():
    writers = [m for m in _modules(mapper.write) if hasattr(m, "write_netlist")]
    assert writers and set(writers) == set(NETLIST_MODULES)
    for m in writers:
        assert m.SUFFIXES and all(WRITERS[s] is m for s in m.SUFFIXES), m.__name__
        for s in m.SUFFIXES:
            assert writer_for(f"x{s}") is m


def test_every_build_writer_is_among_the_build_files():
    writers = {m for m in _modules(mapper.write) if hasattr(m, "write_build")}
    assert writers == {m for _, m in BUILD_WRITERS}
    names = [n for n, _ in BUILD_WRITERS]
    assert len(names) == len(set(names))


def test_every_reader_is_registered():
    readers = {m.__name__ for m in _modules(mapper.read) if hasattr(m, "read")}
    assert readers and readers == set(READERS.values())
    for suffix, name in READERS.items():
        assert reader_for(f"x{suffix}").__name__ == name


@pytest.mark.parametrize("lookup", [reader_for, writer_for])
def test_an_unknown_suffix_is_a_usage_error(lookup):
    with pytest.raises(UsageError, match="known:"):
        lookup("design.xyz")
