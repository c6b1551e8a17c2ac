"""Numbers read from files and numbers shown to people: one home for both."""

from __future__ import annotations

import math

__all__ = ["is_finite_number", "thousands", "size_text", "pct_text", "table_number", "cycles_text"]


def is_finite_number(v: int | float) -> bool:
    """Whether a number from a file is finite as a float (a huge TOML integer is not)."""
    try:
        return math.isfinite(float(v))
    except OverflowError:
        return False


def thousands(v: float) -> str:
    """``203 000`` (thin-space thousands, no decimals)."""
    return f"{v:,.0f}".replace(",", "\u2009")


def size_text(v: float) -> str:
    """A size or other positive quantity: thin-space thousands from 1000 up, three significant digits below."""
    if not math.isfinite(v):
        return "n/a"
    return thousands(v) if abs(v) >= 1000 else f"{v:.3g}"


def pct_text(v: float, *, decimals: int = 2, below: str | None = None, suffix: str = " %", missing: str = "n/a") -> str:
    """A percentage with a fixed number of decimals, ``< 0.01 %`` for what is not zero but rounds
    to it, ``missing`` (``n/a``) when not finite (never ``3.03e-14 %``); ``suffix=""`` for a
    table column whose header carries the unit."""
    if v is None or not math.isfinite(v):
        return missing
    if v != 0 and abs(v) < 0.5 * 10.0**-decimals:
        return f"{below or f'< {10.0**-decimals:.{decimals}f}'}{suffix}"
    return f"{v:.{decimals}f}{suffix}"


def table_number(v: float) -> str:
    """Plain figures for a table column: ``203000``, ``75800``, ``1.24``; blank for NaN."""
    if math.isnan(v):
        return ""
    return f"{v:.0f}" if abs(v) >= 100 else f"{v:.3g}"


def cycles_text(v: float) -> str:
    """A number of load cycles: ``34 000``, ``2.1e8``, ``< 1000``, ``> 1e12`` (beyond any fatigue data);
    ``unlimited`` for inf, ``–`` for NaN (a criterion that gives no life)."""
    if math.isnan(v):
        return "–"
    if math.isinf(v):
        return "unlimited"
    if v > 1e12:
        return "> 1e12"
    if v < 1000:
        return "< 1000"
    if v < 1e7:
        return thousands(float(f"{v:.2g}"))
    mant, exp = f"{v:.1e}".split("e")
    return f"{mant}e{int(exp)}"
