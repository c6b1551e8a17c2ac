"""Export folders written all or nothing: every file goes into a temporary folder beside the
destination, which is renamed into place once complete."""

from __future__ import annotations

import os
import secrets
import shutil
from collections.abc import Mapping
from pathlib import Path

from springsynth.io.files import _os_error, new_folder

__all__ = ["write_folder"]


def write_folder(files: Mapping[str, bytes], out: Path, *, replace: bool = False) -> Path:
    """Write ``files`` (relative name -> bytes) as the folder ``out``, all or nothing.

    The files go into a temporary folder beside ``out`` that is renamed into place
    once complete. ``replace=False``: an existing ``out`` is kept and ``out-2``,
    ``out-3``, ... is used instead; ``replace=True``: an existing ``out`` is swapped for
    the new one. Returns the folder written. On any failure the temporary folder is
    removed and nothing is left behind.
    """
    out = Path(out)
    try:
        out.parent.mkdir(parents=True, exist_ok=True)
        tmp = out.parent / f".{out.name}.{secrets.token_hex(6)}.tmp"
        tmp.mkdir()
    except OSError as e:
        raise _os_error(e, out.parent) from None
    old = None
    try:
        for name, data in files.items():
            path = tmp / name
            path.parent.mkdir(parents=True, exist_ok=True)
            path.write_bytes(data)
        if replace and out.exists():
            old = out.with_name(f".{out.name}.old-{os.getpid()}")
            os.rename(out, old)
            dest = out
        else:
            dest = new_folder(out)      # reserves a fresh name ...
            os.rmdir(dest)              # ... that the complete folder takes over
        os.rename(tmp, dest)
    except OSError as e:
        shutil.rmtree(tmp, ignore_errors=True)
        if old is not None and not out.exists():
            os.rename(old, out)
        raise _os_error(e, out) from None
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise
    if old is not None:
        shutil.rmtree(old, ignore_errors=True)
    return dest
