"""Nearest-valid-name suggestions for unknown keys, kinds and materials."""

from __future__ import annotations

import difflib
from typing import Iterable

__all__ = ["unknown_key_message", "suggest"]


def suggest(word: str, options: Iterable[str]) -> str | None:
    """The closest option to ``word``, or None when nothing is close."""
    hits = difflib.get_close_matches(str(word), sorted(options), n=1, cutoff=0.5)
    return hits[0] if hits else None


def unknown_key_message(key: str, options: Iterable[str], what: str = "key") -> str:
    options = sorted(options)
    near = suggest(key, options)
    hint = f"did you mean {near!r}?" if near else f"valid: {', '.join(options)}"
    return f"unknown {what} {key!r}; {hint}"
