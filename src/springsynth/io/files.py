"""Atomic file writing and run-folder creation: nothing is ever half-written or overwritten."""

from __future__ import annotations

import errno
import os
import tempfile
from pathlib import Path

from springsynth.model.errors import InputError

__all__ = ["write_text_atomic", "write_bytes_atomic", "new_folder"]


def write_bytes_atomic(path: Path, data: bytes) -> None:
    """Write to a temporary file in the same folder, flush, then rename over ``path``."""
    path = Path(path)
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    except OSError as e:
        raise _os_error(e, path) from None
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except OSError as e:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise _os_error(e, path) from None


def write_text_atomic(path: Path, text: str) -> None:
    write_bytes_atomic(path, text.encode("utf-8"))


def _os_error(e: OSError, path: Path) -> InputError:
    if e.errno == errno.ENOSPC:
        why = "the disk is full; free some space and run again"
    elif e.errno in (errno.EACCES, errno.EPERM, errno.EROFS):
        why = "the folder is not writable; choose another with --out"
    else:
        why = e.strerror or str(e)
    return InputError(f"cannot write: {why}", where=str(path))


def new_folder(path: Path) -> Path:
    """Create ``path``; if it exists, create ``path-2``, ``path-3``, ... instead (never reuse one)."""
    path = Path(path)
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
    except OSError as e:
        raise _os_error(e, path.parent) from None
    cand, i = path, 1
    while True:
        try:
            cand.mkdir()
            return cand
        except FileExistsError:
            i += 1
            cand = path.with_name(f"{path.name}-{i}")
        except OSError as e:
            raise _os_error(e, cand) from None


def save_figure(fig, path: Path, *, dpi: int = 130, tight: bool = True) -> None:
    """Save a matplotlib figure as PNG atomically and close it."""
    from springsynth.report.plots import png_bytes

    write_bytes_atomic(Path(path), png_bytes(fig, dpi=dpi, tight=tight))
