"""Text layouts: the jinja2 environment over ``mapper/templates`` and the filters the layouts use.

Every text output of a build (wiring list, report page, Verilog, cell
models) is a template in ``mapper/templates``; writers gather plain data and
call :func:`render`.  Templates are found through :mod:`importlib.resources`,
so they work from an installed wheel as well as from the source tree.

Figures are written with :func:`mapper.units.si` (the filter ``si``).

Examples
--------
>>> money(1.05)
'1.05'
>>> money(0.025)
'0.025'
"""
from __future__ import annotations

import functools
import importlib.resources
from decimal import Decimal

import jinja2

from ..units import si

__all__ = ["render", "environment", "money"]


def money(value) -> str:
    """A price with at least two decimals and no float noise (``0.3`` -> ``"0.30"``)."""
    if value is None:
        return ""
    d = Decimal(repr(float(value))) if not isinstance(value, Decimal) else value
    d = d.normalize()
    exponent = d.as_tuple().exponent
    places = max(2, -exponent if isinstance(exponent, int) and exponent < 0 else 0)
    return f"{d:.{places}f}"


@functools.cache
def environment() -> jinja2.Environment:
    """The shared environment: HTML and SVG templates autoescape, text ones do not."""
    root = importlib.resources.files("mapper.templates")

    def load(name):
        res = root.joinpath(name)
        if not res.is_file():
            return None
        return res.read_text(encoding="utf-8")

    env = jinja2.Environment(
        loader=jinja2.FunctionLoader(load),
        autoescape=jinja2.select_autoescape(enabled_extensions=("html", "svg", "html.j2", "svg.j2"),
                                            default_for_string=False, default=False),
        trim_blocks=True,
        lstrip_blocks=True,
        keep_trailing_newline=True,
        undefined=jinja2.StrictUndefined,
    )
    env.filters["si"] = si
    env.filters["money"] = money
    return env


def render(name: str, **context) -> str:
    """Render template ``name`` from ``mapper/templates`` with ``context``."""
    return environment().get_template(name).render(**context)
