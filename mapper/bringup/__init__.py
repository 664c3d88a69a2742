"""Bring-up lists: input settings that find wiring faults on a built board, and where to look when one fails.

Reads a finished :class:`~mapper.build.Build` (gate or relay, without
storage), as the analyses and writers do; :func:`mapper.bringup.plan.make_plan`
is the entry point, :mod:`mapper.bringup.report` turns a plan into text,
JSON and CSV.
"""
