"""Restructuring before mapping: multi-level logic optimization, proved like every build."""
