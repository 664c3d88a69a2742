"""netfit: fit gate-level designs onto parts you can buy, proven equal to the design."""

__version__ = "0.1.0"
