"""Makeable designs: stock sizes and practical resolution in the genome (``[search] stock = "standard"``).

A wire diameter or strip thickness (a parameter with ``Param.stock``) is a discrete gene: its
unit gene ``z`` in [0, 1] picks entry ``floor(z n)`` of the sizes ``n`` of the element's
material that the kind accepts, so every gene value the variation operators can produce is a
stock size and a change of material keeps the size's rank. Every other parameter is rounded
to its resolution class (``Param.resolution``: lengths 0.1 mm, machined features 0.01 mm,
active coils a quarter turn, formed rises and the offsets of branches (gaps, preloads) to
``offset_step_mm``) inside the decode, before evaluation: the design reported is the one
evaluated. ``stock = "continuous"`` builds no plan: today's free search.

Which sizes a kind uses: the material's list (:func:`springsynth.model.stock.stock_list`, or the
study's ``[stock]`` list), within the parameter's declared bounds (and the envelope, as the
search bounds are), and not below ``limits.min_thickness_mm`` for a section thickness. A
material none of whose sizes fit is dropped for that kind (the search does not offer it); a
kind left with no material is an input error.
"""

from __future__ import annotations

import math

import numpy as np

from springsynth.elements import ElementKind, Param
from springsynth.elements._base import STEP_MM
from springsynth.model.errors import InputError
from springsynth.model.stock import stock_list
from springsynth.model.study import Study

__all__ = ["StockPlan", "search_cap", "check_stock"]


def search_cap(study: Study) -> float:
    """Largest size the search offers for a parameter in mm: the envelope's longest side."""
    env = study.envelope
    return max(env.length_mm, env.width_mm, env.height_mm)


def _search_hi(q: Param, cap: float) -> float:
    """The upper search bound of a parameter (as :class:`~springsynth.search.encoding.Encoding` sets it)."""
    return max(min(q.hi, cap) if q.unit == "mm" and q.lo > 0 else q.hi, q.lo)


def _fitting(study: Study, q: Param, material_id: str) -> np.ndarray:
    """The stock sizes of ``material_id`` the search may give parameter ``q``, mm, ascending."""
    override = study.stock.wire_mm if q.stock == "wire" else study.stock.strip_mm
    v = np.array(stock_list(material_id, q.stock, override).mm)
    lo = max(q.lo, study.limits.min_thickness_mm) if q.thickness else q.lo
    return v[(v >= lo * (1 - 1e-12)) & (v <= _search_hi(q, search_cap(study)) * (1 + 1e-12))]


class StockPlan:
    """Which genes are stock sizes, their sizes per material, and every parameter's step.

    Attributes
    ----------
    stock_gene : ndarray of bool, shape (K, P)
        Search parameter ``j`` of kind ``k`` is a stock size.
    sizes : dict of (k, j) -> ndarray, shape (M, L)
        Sizes per study material (rows in ``study.search.materials`` order), NaN-padded, mm.
    counts : dict of (k, j) -> ndarray of int, shape (M,)
        How many sizes each material has for that parameter (0: the material is dropped).
    steps : list of ndarray
        Per kind, the step of each parameter of ``kind.params``, mm or turns (0: not rounded).
    offset_step_mm : float
    """

    def __init__(self, study: Study, n_params: int):
        kinds, mats = study.search.kinds, study.search.materials
        self.offset_step_mm = float(study.search.offset_step_mm)
        self.stock_gene = np.zeros((len(kinds), n_params), bool)
        self.sizes: dict[tuple[int, int], np.ndarray] = {}
        self.counts: dict[tuple[int, int], np.ndarray] = {}
        for k, kind in enumerate(kinds):
            for j, q in enumerate(kind.search_params):
                if not q.stock:
                    continue
                lists = [_fitting(study, q, m.id) if m.suits(kind.forms) else np.empty(0) for m in mats]
                width = max(1, max(len(v) for v in lists))
                pad = np.full((len(mats), width), np.nan)
                for m, v in enumerate(lists):
                    pad[m, :len(v)] = v
                self.stock_gene[k, j] = True
                self.sizes[k, j] = pad
                self.counts[k, j] = np.array([len(v) for v in lists], dtype=np.intp)
        self.steps = [np.array([self._step(q) for q in kind.params]) for kind in kinds]

    def _step(self, q: Param) -> float:
        r = q.resolution
        if r == "offset":
            return self.offset_step_mm
        return STEP_MM.get(r, 0.0)

    def usable(self, k: int) -> np.ndarray:
        """Which study materials have a stock size for every stock parameter of kind ``k``, shape (M,)."""
        ok = None
        for (kk, _), c in self.counts.items():
            if kk == k:
                ok = c > 0 if ok is None else ok & (c > 0)
        return ok

    def pick(self, k: int, j: int, z: np.ndarray, mat: np.ndarray) -> np.ndarray:
        """Stock sizes for unit genes ``z`` (n,) of rows whose material indices are ``mat`` (n,), mm."""
        n = np.maximum(self.counts[k, j][mat], 1)
        i = np.minimum((np.clip(z, 0.0, 1.0) * n).astype(np.intp), n - 1)
        return self.sizes[k, j][mat, i]

    def gene(self, k: int, j: int, value: float, mat: int) -> float:
        """The unit gene of the stock size nearest (in ratio) to ``value`` for material ``mat``."""
        n = int(self.counts[k, j][mat])
        if n == 0 or not value > 0:
            return 0.0
        v = self.sizes[k, j][mat, :n]
        return (int(np.argmin(np.abs(np.log(v / value)))) + 0.5) / n

    def snap(self, kind: ElementKind, k: int, vals: np.ndarray) -> np.ndarray:
        """Parameters ``vals`` (n, len(kind.params)), rounded in place to each one's step within its bounds."""
        for j in np.flatnonzero(self.steps[k] > 0):
            q, st = kind.params[j], self.steps[k][j]
            lo, hi = math.ceil(q.lo / st - 1e-9) * st, math.floor(q.hi / st + 1e-9) * st
            v = np.round(vals[:, j] / st) * st
            vals[:, j] = np.round(np.clip(v, lo, hi), 9) if lo <= hi else q.lo
        return vals

    def snap_offset(self, offset_mm: np.ndarray) -> np.ndarray:
        """Offsets (gaps > 0, preloads < 0) on the grid of ``offset_step_mm``."""
        st = self.offset_step_mm
        return np.round(np.round(offset_mm / st) * st, 9) + 0.0    # + 0.0: no negative zero


def check_stock(study: Study) -> StockPlan | None:
    """The study's plan (None for ``stock = "continuous"``), after checking every kind keeps a material.

    Raises
    ------
    InputError
        When no stock size of any listed material fits one of the kind's stock parameters.
    """
    if study.search.stock != "standard":
        return None
    kinds = study.search.kinds
    plan = StockPlan(study, max(max(len(k.params), len(k.search_params)) for k in kinds))
    for k, kind in enumerate(kinds):
        ok = plan.usable(k)
        if ok is None or ok.any():
            continue
        q = next(q for q in kind.search_params if q.stock)
        lo = max(q.lo, study.limits.min_thickness_mm) if q.thickness else q.lo
        raise InputError(f"no {q.stock} stock size of the listed materials fits {kind.name}.{q.name} "
                         f"({lo:g} to {_search_hi(q, search_cap(study)):g} mm); add sizes with [stock] {q.stock}_mm, "
                         f'another material, or set stock = "continuous"', where="[search]")
    return plan
