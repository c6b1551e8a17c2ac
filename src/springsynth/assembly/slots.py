"""A population of designs as arrays (n designs x S slots), and back.

Every part of a design (an element, or a link of a chain) takes one slot. A chain takes
consecutive slots: its first link's slot is the branch's *head*; each following link's
slot is marked ``link`` (in series with the slot before it). A slot that is neither a
link nor followed by one is a branch of one element.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

import numpy as np

from springsynth.assembly.design import Chain, Design, Element
from springsynth.elements import ElementKind, registry
from springsynth.model.errors import InputError
from springsynth.model.materials import Material

__all__ = ["Slots"]


@dataclass(frozen=True)
class Slots:
    """A population of mechanisms as arrays: n designs x S parallel slots.

    Attributes
    ----------
    kind : ndarray of int, shape (n, S)
        Index into ``kinds``; -1 marks an empty slot.
    material : ndarray of int, shape (n, S)
        Index into ``materials``.
    count : ndarray, shape (n, S)
    offset_mm : ndarray, shape (n, S)
    params : ndarray, shape (n, S, P)
        Parameters in each kind's own order (``kind.params``), physical units,
        categorical ones as indices; unused trailing columns are ignored.
    kinds : tuple of ElementKind
    materials : tuple of Material
    link : ndarray of bool, shape (n, S)
        True where the slot is a link in series with the slot before it (the same chain);
        default: no chains.
    chain_count : ndarray, shape (n, S)
        Copies of the whole chain in parallel, read at a chain's head slot (1 elsewhere);
        default: ones.

    Notes
    -----
    For a chain, ``count`` is each link's copies inside the link and ``offset_mm`` of
    the head slot is the chain's gap or preload (the links' own offsets are unused).
    """

    kind: np.ndarray
    material: np.ndarray
    count: np.ndarray
    offset_mm: np.ndarray
    params: np.ndarray
    kinds: tuple[ElementKind, ...]
    materials: tuple[Material, ...]
    link: np.ndarray | None = None
    chain_count: np.ndarray | None = None

    def __post_init__(self):
        if self.link is None:
            object.__setattr__(self, "link", np.zeros(self.kind.shape, dtype=bool))
        elif self.link.any():   # a link needs an occupied slot before it, and is occupied itself
            occupied = self.kind >= 0
            link = self.link & occupied
            link[:, 0] = False
            link[:, 1:] &= occupied[:, :-1]
            object.__setattr__(self, "link", link)
        if self.chain_count is None:
            object.__setattr__(self, "chain_count", np.ones(self.kind.shape))

    @property
    def in_chain(self) -> np.ndarray:
        """Slots that belong to a chain (a link, or a head followed by a link), shape (n, S)."""
        nxt = np.zeros_like(self.link)
        nxt[:, :-1] = self.link[:, 1:]
        return (self.link | nxt) & (self.kind >= 0)

    @property
    def has_chains(self) -> bool:
        return bool(self.link.any())

    @property
    def n(self) -> int:
        return self.kind.shape[0]

    @property
    def n_slots(self) -> int:
        return self.kind.shape[1]

    def take(self, rows: np.ndarray) -> "Slots":
        """The designs of ``rows`` (indices or a boolean mask over n), same kinds and materials."""
        return Slots(self.kind[rows], self.material[rows], self.count[rows], self.offset_mm[rows], self.params[rows],
                     self.kinds, self.materials, self.link[rows], self.chain_count[rows])

    @classmethod
    def from_designs(cls, designs: Sequence[Design], n_slots: int | None = None,
                     kinds: Sequence[ElementKind] | None = None,
                     materials: Sequence[Material] | None = None) -> "Slots":
        """Pack designs into arrays (one row per design, empty slots padded)."""
        kinds = tuple(kinds) if kinds is not None else tuple(registry().values())
        mats: list[Material] = list(materials) if materials is not None else []
        for d in designs:
            for e in d.parts:
                m = d.materials[e.material]
                if m not in mats:
                    mats.append(m)
        S = n_slots or max(len(d.parts) for d in designs)
        P = max(len(k.params) for k in kinds)
        n = len(designs)
        kind = np.full((n, S), -1, dtype=np.intp)
        mat = np.zeros((n, S), dtype=np.intp)
        count = np.zeros((n, S))
        off = np.zeros((n, S))
        par = np.zeros((n, S, P))
        link = np.zeros((n, S), dtype=bool)
        chain_count = np.ones((n, S))
        names = [k.name for k in kinds]
        for i, d in enumerate(designs):
            if len(d.parts) > S:
                raise InputError(f"has {len(d.parts)} elements, more than the {S} slots allowed", where=d.name)
            j = 0
            for br in d.branches:
                links = br.links if isinstance(br, Chain) else (br,)
                for k, e in enumerate(links):
                    kind[i, j] = names.index(e.kind)
                    mat[i, j] = mats.index(d.materials[e.material])
                    count[i, j] = e.count
                    off[i, j] = br.offset_mm if k == 0 else 0.0
                    link[i, j] = k > 0
                    if isinstance(br, Chain) and k == 0:
                        chain_count[i, j] = br.count
                    vals = e.values()
                    par[i, j, : len(vals)] = [vals[q.name] for q in kinds[kind[i, j]].params]
                    j += 1
        return cls(kind, mat, count, off, par, kinds, tuple(mats), link, chain_count)

    def slot_order(self, j: int, skip: np.ndarray | None = None) -> tuple[np.ndarray, np.ndarray]:
        """Rows of slot ``j`` sorted by kind, and where each kind's block of them lies.

        ``skip`` (bool, shape (n,)) marks rows whose slot ``j`` is taken as empty here.

        Returns
        -------
        order : ndarray of int, shape (n,)
            Row indices: the rows whose slot ``j`` is empty first, then each kind's rows,
            in increasing order within a kind (a stable sort).
        edges : ndarray of int, shape (len(kinds) + 2,)
            Kind ``ki`` occupies ``order[edges[ki + 1]:edges[ki + 2]]`` and the empty
            slots ``order[:edges[1]]``.
        """
        K = len(self.kinds)
        key = np.maximum(self.kind[:, j], -1) + 1              # 0 = empty, 1 + ki = kind ki
        if skip is not None:
            key = np.where(skip, 0, key)
        # a stable sort of small integers is a radix sort: linear in n
        order = np.argsort(key.astype(np.int16) if K < 2**15 - 1 else key, kind="stable")
        edges = np.zeros(K + 2, dtype=np.intp)
        np.cumsum(np.bincount(key, minlength=K + 1), out=edges[1:])
        return order, edges

    def groups(self):
        """``(slot j, kind index, rows)`` for every kind present in every slot.

        Whole-population loops run over these (a handful), never over designs; ``rows``
        are increasing.
        """
        for j in range(self.n_slots):
            order, edges = self.slot_order(j)
            for ki in range(len(self.kinds)):
                if edges[ki + 2] > edges[ki + 1]:
                    yield j, ki, order[edges[ki + 1]:edges[ki + 2]]

    def design(self, i: int, name: str = "design") -> Design:
        """Row ``i`` as a :class:`Design` (the inverse of :meth:`from_designs`)."""
        branches: list = []
        used: dict[str, Material] = {}
        in_chain = self.in_chain[i]
        chain: list[Element] = []
        for j in range(self.n_slots):
            k = int(self.kind[i, j])
            if k < 0:
                continue
            kind = self.kinds[k]
            m = self.materials[int(self.material[i, j])]
            used[m.id] = m
            params: dict[str, float | str] = {}
            for c, q in enumerate(kind.params):
                v = float(self.params[i, j, c])
                params[q.name] = q.choices[int(round(v))] if q.choices else (int(round(v)) if q.integer else v)
            single = not in_chain[j]
            e = Element(kind.name, m.id, int(round(self.count[i, j])), float(self.offset_mm[i, j]) if single else 0.0,
                        params)
            if single:
                branches.append(e)
                continue
            if not self.link[i, j]:
                chain = []
                branches.append((chain, int(round(self.chain_count[i, j])), float(self.offset_mm[i, j])))
            chain.append(e)
        out = [b if isinstance(b, Element) else Chain(tuple(b[0]), b[1], b[2]) for b in branches]
        return Design(tuple(out), used, name=name)
