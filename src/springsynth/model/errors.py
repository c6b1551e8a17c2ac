"""The one exception type the command line turns into a clean message and exit code 2."""

from __future__ import annotations

__all__ = ["InputError"]


class InputError(ValueError):
    """Bad user input: a file, row or field that cannot be used as given.

    The message must name where the fault is (file, row, column or field), the
    value found and what would fix it. The command line prints it on one line and
    exits with code 2; no traceback is shown.
    """

    def __init__(self, message: str, *, where: str | None = None):
        self.where = where
        super().__init__(f"{where}: {message}" if where else message)
