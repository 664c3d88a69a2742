"""Part catalogs and technology targets: the model, loading with schema checks, and descriptions.

A *catalog* (``libraries/*.xml``, schema ``libraries/catalog.rng``) lists
cells -- what a slot does, with its function in Verilog expression syntax --
and parts -- what you order: package, pinout, slots, delays, supply current,
loading, price, for relays the coil and contact figures, and for support
parts their role (decoupling, coil diode, pull-down).  Every figure carries a
``source``.

A *target* (``targets/*.xml``, schema ``targets/target.rng``) names its
catalogs, the cells a build may use and the parts that may carry them, the
objective order, the support-part rules and (for relays) the supply voltage.

Modules: :mod:`~mapper.catalog.model` (the objects),
:mod:`~mapper.catalog.xmlfile` (safe XML and schemas),
:mod:`~mapper.catalog.catalogs` and :mod:`~mapper.catalog.targets`
(loading and checking), :mod:`~mapper.catalog.expr` (cell functions),
:mod:`~mapper.catalog.describe` (plain data for ``netfit targets``).
All figures are in SI units: seconds, amperes, volts, ohms; loads in unit
loads (one 74LS input); prices in the part's currency.
"""
from __future__ import annotations

from .catalogs import CatalogError, builtin_catalogs, load_catalog
from .describe import describe_target
from .model import (
                    DEFAULT_OBJECTIVE,
                    SUPPORT_ROLES,
                    CellDef,
                    Figure,
                    OpenInput,
                    PartDef,
                    RelayData,
                    SlotDef,
                    SupportRule,
                    Target,
)
from .targets import TargetError, builtin_targets, load_target

__all__ = ["CatalogError", "CellDef", "DEFAULT_OBJECTIVE", "Figure", "OpenInput", "PartDef", "RelayData",
           "SUPPORT_ROLES", "SlotDef", "SupportRule", "Target", "TargetError", "builtin_catalogs", "builtin_targets",
           "describe_target", "load_catalog", "load_target"]
