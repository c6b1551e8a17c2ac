"""Numbers read from files and numbers shown to people: one home for both."""

from __future__ import annotations

import math

__all__ = ["is_finite_number"]


def is_finite_number(v: int | float) -> bool:
    """Whether a number from a file is finite as a float (a huge TOML integer is not)."""
    try:
        return math.isfinite(float(v))
    except OverflowError:
        return False
