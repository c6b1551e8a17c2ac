"""springsynth: inverse design of springs and flexures from a target force curve."""

__version__ = "0.1.0"
