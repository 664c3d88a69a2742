"""Shared fixtures: run the ``netfit`` command in-process."""
from __future__ import annotations

import json
import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).parent))  # tests/generated.py

DATA = Path(__file__).parent / "data"


@pytest.fixture
def netfit(capsys):
    """Run ``netfit ARGS``; returns ``(exit_code, stdout, stderr)``.

    With ``as_json=True`` stdout is parsed as JSON.
    """
    from mapper.cli import main

    def run(*args, as_json=False):
        code = main([str(a) for a in args])
        out, err = capsys.readouterr()
        return code, (json.loads(out) if as_json and out.strip() else out), err

    return run


@pytest.fixture
def data():
    return DATA
