"""Checkpoints of an interrupted search: the pickled search state behind a version stamp.

A checkpoint written by an earlier layout of the package still loads: classes that
moved are found through ``MOVED`` (old module -> the modules that now hold its
names), and :class:`~springsynth.search.encoding.Encoding` renames its old attributes
when unpickled.
"""

from __future__ import annotations

import importlib
import io
import pickle

from springsynth.model.errors import InputError

__all__ = ["dumps", "loads", "FORMAT", "MOVED"]

#: version stamp of the checkpoint layout (0: written before the stamp existed)
FORMAT = 1
_MAGIC = b"springsynth-checkpoint\n"

#: where the classes of the package's first layout live now
MOVED: dict[str, tuple[str, ...]] = {
    "springsynth._search": ("springsynth.search.operators", "springsynth.search.loop"),
    "springsynth._problem": ("springsynth.search.encoding", "springsynth.search.scoring"),
    "springsynth._study": ("springsynth.model.study",),
    "springsynth._target": ("springsynth.model.target",),
    "springsynth._assembly": ("springsynth.model.study", "springsynth.assembly.design", "springsynth.assembly.slots",
                              "springsynth.assembly.evaluate"),
    "springsynth._materials": ("springsynth.model.materials",),
    "springsynth._errors": ("springsynth.model.errors",),
}


class _Unpickler(pickle.Unpickler):
    def find_class(self, module: str, name: str):
        for new in MOVED.get(module, ()):
            mod = importlib.import_module(new)
            if hasattr(mod, name):
                return getattr(mod, name)
        return super().find_class(module, name)


def dumps(state: dict) -> bytes:
    """Checkpoint bytes of a search state (a dict of picklable objects)."""
    return _MAGIC + pickle.dumps({"format": FORMAT, "state": state}, protocol=pickle.HIGHEST_PROTOCOL)


def loads(data: bytes) -> dict:
    """The search state in ``data``, from this layout or an earlier one."""
    stamped = data.startswith(_MAGIC)
    try:
        obj = _Unpickler(io.BytesIO(data[len(_MAGIC):] if stamped else data)).load()
    except (pickle.UnpicklingError, AttributeError, ModuleNotFoundError, EOFError, ImportError) as e:
        raise InputError(f"the checkpoint cannot be read ({e}); start the run again", where="checkpoint.pkl") from None
    if not stamped:
        return obj
    if obj.get("format", 0) > FORMAT:
        raise InputError(f"the checkpoint was written by a newer springsynth (format {obj['format']}, this one "
                         f"reads up to {FORMAT})", where="checkpoint.pkl")
    return obj["state"]
