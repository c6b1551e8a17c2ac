"""Stock sizes: the wire diameters and strip thicknesses a maker can buy, per material.

The lists and their sources are in ``data/stock.toml`` (package data); each ``[[wire]]`` or
``[[strip]]`` list serves the materials it names, a material no list names takes
``[default]`` (the ISO 3 R20 preferred numbers). A study's ``[stock]`` table replaces the
lists of a form for every material (:class:`StockSizes` in :mod:`springsynth.model.study`).
"""

from __future__ import annotations

import math
import tomllib
from dataclasses import dataclass
from functools import lru_cache
from importlib import resources

__all__ = ["StockList", "STOCK_FORMS", "shipped_lists", "stock_list", "MM_PER_INCH"]

#: the forms a stock list is kept for (``Param.stock`` names one of them)
STOCK_FORMS = ("wire", "strip")
MM_PER_INCH = 25.4
_FILE = "stock.toml"


@dataclass(frozen=True)
class StockList:
    """One list of stock sizes.

    Attributes
    ----------
    name : str
        What is sold (``EN 10270-3 stainless spring steel wire``).
    source : str
        Standard, table or catalogue it comes from (``[memory]`` where not checked).
    mm : tuple of float
        The sizes, mm, ascending and unique.
    materials : tuple of str
        Material ids it serves (empty for the default list and a study's own list).
    """

    name: str
    source: str
    mm: tuple[float, ...]
    materials: tuple[str, ...] = ()

    def __post_init__(self):
        v = self.mm
        if not v or any(not (math.isfinite(x) and x > 0) for x in v) or list(v) != sorted(set(v)):
            raise ValueError(f"stock list {self.name!r}: sizes must be positive, ascending and unique")


def _sizes(entry: dict, where: str) -> tuple[float, ...]:
    if "inch" in entry:     # kept to 0.1 um: the conversion is exact to far below any wire tolerance
        return tuple(round(float(x) * MM_PER_INCH, 4) for x in entry["inch"])
    if "mm" in entry:
        return tuple(float(x) for x in entry["mm"])
    raise ValueError(f"{where}: a stock list needs mm = [...] or inch = [...]")


@lru_cache(maxsize=1)
def shipped_lists() -> dict[str, tuple[StockList, ...] | StockList]:
    """The lists of ``data/stock.toml``: ``{"wire": (...), "strip": (...), "default": StockList}``.

    Raises
    ------
    ValueError
        When the file is malformed or names a material in two lists of one form.
    """
    text = resources.files("springsynth").joinpath("data").joinpath(_FILE).read_text(encoding="utf-8")
    doc = tomllib.loads(text)
    out: dict = {}
    for form in STOCK_FORMS:
        lists, seen = [], set()
        for i, e in enumerate(doc.get(form, [])):
            where = f"{_FILE} [[{form}]] #{i + 1}"
            lst = StockList(e["name"], " ".join(e["source"].split()), _sizes(e, where), tuple(e["materials"]))
            twice = seen & set(lst.materials)
            if twice:
                raise ValueError(f"{where}: {', '.join(sorted(twice))} already has a {form} list")
            seen |= set(lst.materials)
            lists.append(lst)
        out[form] = tuple(lists)
    d = doc["default"]
    out["default"] = StockList(d["name"], " ".join(d["source"].split()), _sizes(d, f"{_FILE} [default]"))
    return out


def stock_list(material_id: str, form: str, override: tuple[float, ...] = ()) -> StockList:
    """The stock list a material is bought from in ``form`` (``wire`` or ``strip``).

    Parameters
    ----------
    material_id : str
    form : str
        A name of :data:`STOCK_FORMS`.
    override : tuple of float
        A study's own sizes for this form (``[stock] wire_mm``/``strip_mm``), mm; when given, they
        serve every material.
    """
    if form not in STOCK_FORMS:
        raise ValueError(f"no stock lists for the form {form!r}")
    if override:
        return StockList(f"the study's [stock] {form}_mm", "the study", tuple(sorted(override)))
    lists = shipped_lists()
    for lst in lists[form]:
        if material_id in lst.materials:
            return lst
    return lists["default"]
