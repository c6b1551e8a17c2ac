"""Atomic file writing and run-folder creation: nothing is ever half-written or overwritten."""

from __future__ import annotations

import errno
import os
import re
import stat
import tempfile
from pathlib import Path

from springsynth.model.errors import InputError

__all__ = ["write_text_atomic", "write_bytes_atomic", "new_folder", "safe_folder_name", "new_file_mode"]


def new_file_mode() -> int:
    """Permission bits the process's umask gives a newly created file (``0o666 & ~umask``)."""
    try:  # Linux: read it without changing it (os.umask can only be read by setting it)
        with open("/proc/self/status", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("Umask:"):
                    return 0o666 & ~int(line.split()[1], 8)
    except (OSError, ValueError):
        pass
    mask = os.umask(0o022)
    os.umask(mask)
    return 0o666 & ~mask


def write_bytes_atomic(path: Path, data: bytes) -> None:
    """Write to a temporary file in the same folder, flush, then rename over ``path``.

    The file gets the permissions a plain ``open(path, "w")`` would give it: those of the
    file it replaces, or for a new file what the umask allows (the temporary file itself
    is private, mode 0600, while it is written).
    """
    path = Path(path)
    try:
        mode = stat.S_IMODE(os.stat(path).st_mode)
    except OSError:   # a new file (or one the rename below will report)
        mode = new_file_mode()
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    except OSError as e:
        raise _os_error(e, path) from None
    try:
        with os.fdopen(fd, "wb") as fh:
            if hasattr(os, "fchmod"):   # POSIX (Windows has no permission bits to carry over)
                os.fchmod(fh.fileno(), mode)
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
    """Create ``path`` and return it. An existing empty folder is used as it is; when
    ``path`` exists and holds anything, ``path-2``, ``path-3``, ... is created instead
    (nothing is ever overwritten)."""
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
            if _empty_folder(cand):
                return cand
            i += 1
            cand = path.with_name(f"{path.name}-{i}")
        except OSError as e:
            raise _os_error(e, cand) from None


def _empty_folder(path: Path) -> bool:
    try:
        return path.is_dir() and not path.is_symlink() and next(path.iterdir(), None) is None
    except OSError:
        return False


#: characters kept in a folder name made from a user's name; anything else becomes "-"
_UNSAFE = re.compile(r"[^\w.-]+")


def safe_folder_name(name: str, *, fallback: str = "run", max_len: int = 80) -> str:
    """One safe folder name from a study or design name: letters, digits, ``_``, ``.`` and ``-``.

    Path separators and other characters become ``-`` and leading dots and dashes go, so
    the name can neither climb out of its parent folder (``../../x`` gives ``x``) nor hide
    itself; ``fallback`` when nothing is left.
    """
    s = _UNSAFE.sub("-", str(name)).strip(".-")[:max_len].rstrip(".-")
    return s or fallback


def save_figure(fig, path: Path, *, dpi: int = 130, tight: bool = True) -> None:
    """Save a matplotlib figure as PNG atomically and close it."""
    from springsynth.report.plots import png_bytes

    write_bytes_atomic(Path(path), png_bytes(fig, dpi=dpi, tight=tight))
