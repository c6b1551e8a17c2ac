"""Genome encoding of a study's design space (no pymoo here).

Genome: one float row per mechanism, ``n_slots`` slots of ``genes_per_slot`` genes each
(``4 + n_params``, plus one when the study allows chains, ``max_chain > 1``):

==========  =========  ==========================================================
gene        type       meaning
==========  =========  ==========================================================
0           category   kind: 0 = empty slot, k = the study's k-th kind (slot 0 never empty)
1           category   material: a number in [0, 1) picking among the materials that suit the kind
2           integer    count of identical copies, 1 .. max_count
3           real       offset / stroke, in [OFFSET_LO, OFFSET_HI] (< 0 preload, > 0 gap)
4..         real       the kind's parameters, each mapped from [0, 1] onto its bounds
                       (log scale where ``Param.log``; whole numbers and choices by rounding;
                       under ``stock = "standard"`` a stock size is entry floor(z n) of the n sizes
                       of the element's material, and every value is rounded to its resolution:
                       :mod:`springsynth.assembly.stock`)
4+n_params  category   (chains only) 1: this slot is a link in series with the slot before
                       (its chain continues), 0: a new branch (slot 0 always 0)
==========  =========  ==========================================================

Decoding a chain (:meth:`Encoding.decode`): a link needs an occupied slot before it; a
chain ends after ``max_chain`` links, and before a second link whose force falls with
stroke (a chain holds at most one); the head slot's offset is the chain's; the largest
common factor of the links' counts becomes the chain's count (two chains of one spring
and one column, rather than one chain of two springs and two columns: the same force).
"""

from __future__ import annotations

import math

import numpy as np

from springsynth.assembly.design import Chain, Design, Element
from springsynth.assembly.slots import Slots
from springsynth.assembly.stock import check_stock
from springsynth.model.study import Study

__all__ = ["Encoding", "OFFSET_LO", "OFFSET_HI"]

#: bounds of the offset gene, as multiples of the target's stroke (< 0 preload, > 0 gap)
OFFSET_LO, OFFSET_HI = -3.0, 0.9
#: attribute names of checkpoints written before the names were spelled out
_OLD_NAMES = {"S": "n_slots", "P": "n_params", "G": "genes_per_slot", "lo": "param_lo", "hi": "param_hi",
              "log": "param_log", "rnd": "param_integer", "nch": "param_choices", "npar": "n_search_params",
              "stroke": "stroke_mm"}


class Encoding:
    """Maps genome rows to :class:`Slots` and back for one study."""

    def __init__(self, study: Study):
        self.study = study
        s = study.search
        self.kinds = s.kinds
        self.materials = s.materials
        self.n_slots = s.max_elements
        self.n_params = max(max(len(k.params), len(k.search_params)) for k in self.kinds)
        self.max_chain = s.links_per_chain
        self.link_gene = self.max_chain > 1 and self.n_slots > 1
        self.genes_per_slot = 4 + self.n_params + int(self.link_gene)
        self.stroke_mm = study.target.stroke_mm
        K, P = len(self.kinds), self.n_params
        cap = max(study.envelope.length_mm, study.envelope.width_mm, study.envelope.height_mm)
        self.param_lo = np.ones((K, P))
        self.param_hi = np.ones((K, P))
        self.param_log = np.zeros((K, P), bool)
        self.param_integer = np.zeros((K, P), bool)
        self.param_choices = np.zeros((K, P), int)
        self.n_search_params = np.array([len(k.search_params) for k in self.kinds])
        for i, k in enumerate(self.kinds):
            for j, q in enumerate(k.search_params):
                hi = min(q.hi, cap) if q.unit == "mm" and q.lo > 0 else q.hi
                self.param_lo[i, j], self.param_hi[i, j] = q.lo, max(hi, q.lo)
                self.param_log[i, j] = q.log
                self.param_integer[i, j] = q.integer
                self.param_choices[i, j] = len(q.choices)
        #: stock sizes and resolution (None: every value free, ``stock = "continuous"``)
        self.stock_plan = check_stock(study)
        # materials that suit each kind (and, with stock sizes, have one that fits), as indices into self.materials
        self.suitable = [np.array([m for m, mat in enumerate(self.materials) if mat.suits(k.forms)
                                   and self._has_stock(i, m)], dtype=np.intp) for i, k in enumerate(self.kinds)]
        chain_gene = [0.0] if self.link_gene else []
        xl, xu = [], []
        for slot in range(self.n_slots):
            xl += [1.0 if slot == 0 else 0.0, 0.0, 1.0, OFFSET_LO] + [0.0] * P + chain_gene
            xu += [float(K), 1.0 - 1e-9, float(s.max_count), OFFSET_HI] + [1.0] * P + \
                [0.0 if slot == 0 else 1.0] * len(chain_gene)
        self.xl, self.xu = np.array(xl), np.array(xu)
        self.categorical = np.tile(np.r_[[1, 1, 0, 0], np.zeros(P), [1] * len(chain_gene)], self.n_slots).astype(bool)
        self.integer = np.tile(np.r_[[0, 0, 1, 0], np.zeros(P), [1] * len(chain_gene)], self.n_slots).astype(bool)
        #: kinds whose force falls with stroke (a chain holds at most one)
        self.falling = np.array([not k.monotonic_force for k in self.kinds] + [False])

    @property
    def n_var(self) -> int:
        return self.n_slots * self.genes_per_slot

    def _has_stock(self, k: int, m: int) -> bool:
        usable = None if self.stock_plan is None else self.stock_plan.usable(k)
        return usable is None or bool(usable[m])

    def stock_gene(self, k: int, j: int) -> bool:
        """Search parameter ``j`` of kind ``k`` is a stock size (a discrete gene the polish keeps)."""
        return self.stock_plan is not None and bool(self.stock_plan.stock_gene[k, j])

    # ------------------------------------------------------------------ decode
    def values(self, k: int, z: np.ndarray, mat: np.ndarray | None = None, *, snap: bool = True) -> np.ndarray:
        """Parameter values of kind ``k`` (in ``kind.params`` order) from unit genes ``z`` (n, P).

        ``mat`` (n,): material indices of the rows (into ``self.materials``), needed for stock sizes;
        ``snap=False`` leaves lengths, coils and rises unrounded (the polish's inner steps).
        """
        kind = self.kinds[k]
        q = self._search_values(k, z)
        plan = self.stock_plan
        if plan is not None:
            for j in np.flatnonzero(plan.stock_gene[k]):
                q[:, j] = plan.pick(k, j, z[:, j], mat)
        if kind.search_params is kind.params:
            return plan.snap(kind, k, q) if plan is not None and snap else q
        p = kind.from_search({sp.name: q[:, j] for j, sp in enumerate(kind.search_params)})
        out = np.zeros_like(q)
        for j, par in enumerate(kind.params):
            out[:, j] = p[par.name]
        return plan.snap(kind, k, out) if plan is not None and snap else out

    def _search_values(self, k: int, z: np.ndarray) -> np.ndarray:
        lo, hi = self.param_lo[k], self.param_hi[k]
        z = np.clip(z, 0.0, 1.0)
        with np.errstate(divide="ignore", invalid="ignore"):  # the log branch is unused where lo = 0
            v = np.where(self.param_log[k], lo * (hi / lo) ** z, lo + z * (hi - lo))
        v = np.where(self.param_integer[k], np.round(v), v)
        ch = self.param_choices[k] > 0
        if ch.any():
            v = np.where(ch, np.minimum(np.floor(z * self.param_choices[k]), self.param_choices[k] - 1), v)
        return v

    def decode(self, X: np.ndarray, *, snap: bool = True) -> Slots:
        """The designs of genome rows ``X`` (n, n_var) as :class:`Slots`.

        Under ``stock = "standard"`` every value is rounded to its resolution here, before any evaluation;
        ``snap=False`` leaves the continuous values unrounded (stock sizes stay stock sizes): the polish's
        inner steps, whose result is rounded and evaluated again.
        """
        X = np.atleast_2d(X)
        n = X.shape[0]
        kind = np.full((n, self.n_slots), -1, dtype=np.intp)
        mat = np.zeros((n, self.n_slots), dtype=np.intp)
        params = np.zeros((n, self.n_slots, self.n_params))
        for s in range(self.n_slots):
            base = s * self.genes_per_slot
            kg = np.clip(np.round(X[:, base]).astype(np.intp) - 1, -1, len(self.kinds) - 1)
            kind[:, s] = kg
            for k in np.unique(kg):
                if k < 0:
                    continue
                rows = np.flatnonzero(kg == k)
                suit = self.suitable[k]
                pick = np.minimum((X[rows, base + 1] * len(suit)).astype(np.intp), len(suit) - 1)
                mat[rows, s] = suit[pick]
                params[rows, s] = self.values(k, X[rows, base + 4: base + 4 + self.n_params], suit[pick], snap=snap)
        count = np.round(X[:, 2::self.genes_per_slot]).clip(1, None)
        offset = X[:, 3::self.genes_per_slot] * self.stroke_mm
        if self.stock_plan is not None and snap:
            offset = self.stock_plan.snap_offset(offset)
        if not self.link_gene:
            return Slots(kind, mat, count, offset, params, self.kinds, self.materials)
        link = self.links(X, kind)
        chain_count = np.ones((n, self.n_slots))
        if link.any():
            count, chain_count = _factor_counts(count, link)
            offset = np.where(link, 0.0, offset)
        return Slots(kind, mat, count, offset, params, self.kinds, self.materials, link, chain_count)

    def links(self, X: np.ndarray, kind: np.ndarray | None = None) -> np.ndarray:
        """Which slots are links in series with the slot before, shape (n, n_slots) (module notes).

        ``kind`` (n, n_slots): the decoded kind indices (-1 empty), when already known.
        """
        X = np.atleast_2d(X)
        n, S, g = X.shape[0], self.n_slots, self.genes_per_slot
        if not self.link_gene:
            return np.zeros((n, S), dtype=bool)
        if kind is None:
            kind = np.clip(np.round(X[:, ::g]).astype(np.intp) - 1, -1, len(self.kinds) - 1)
        want = np.round(X[:, g - 1::g]) >= 1.0
        falls = self.falling[kind]                          # kind -1 reads the trailing False
        link = np.zeros((n, S), dtype=bool)
        run = np.ones(n, dtype=np.intp)                     # links so far in the current chain
        fell = falls[:, 0].copy()                           # the current chain holds a falling link
        for j in range(1, S):
            ok = want[:, j] & (kind[:, j] >= 0) & (kind[:, j - 1] >= 0) & (run < self.max_chain) \
                & ~(fell & falls[:, j])
            link[:, j] = ok
            run = np.where(ok, run + 1, 1)
            fell = np.where(ok, fell | falls[:, j], falls[:, j])
        return link

    # ------------------------------------------------------------------ encode
    def encode(self, designs: list[Design]) -> np.ndarray:
        """Genome rows for designs (warm starts); elements beyond the slots or of kinds or
        materials outside the study are dropped, values clipped to the bounds. A chain is
        kept whole or dropped whole (too many links for ``max_chain`` or the slots left, or
        a link the study cannot make)."""
        X = np.zeros((len(designs), self.n_var))
        for i, d in enumerate(designs):
            slot = 0
            for br in d.branches:
                if not isinstance(br, Chain):
                    if slot < self.n_slots and self._usable(br):
                        self._put(X[i], slot, br, br.count, br.offset_mm, link=False)
                        slot += 1
                    continue
                L = len(br.links)
                if L > self.max_chain or slot + L > self.n_slots or not all(map(self._usable, br.links)):
                    continue
                for k, e in enumerate(br.links):
                    self._put(X[i], slot, e, e.count * br.count, br.offset_mm, link=k > 0)
                    slot += 1
            if slot == 0:
                raise ValueError(f"design {d.name} has no element usable in this study")
        return np.clip(X, self.xl, self.xu)

    def _usable(self, e: Element) -> bool:
        """The study can make this element: its kind, and its material for that kind."""
        names = [k.name for k in self.kinds]
        mids = [m.id for m in self.materials]
        if e.kind not in names or e.material not in mids:
            return False
        return mids.index(e.material) in list(self.suitable[names.index(e.kind)])

    def _put(self, row: np.ndarray, slot: int, e: Element, count: int, offset_mm: float, *, link: bool) -> None:
        """Write one element's genes into ``row`` at ``slot``."""
        k = [q.name for q in self.kinds].index(e.kind)
        suit = list(self.suitable[k])
        base = slot * self.genes_per_slot
        m = [q.id for q in self.materials].index(e.material)
        row[base] = k + 1
        row[base + 1] = (suit.index(m) + 0.5) / len(suit)
        row[base + 2] = count
        row[base + 3] = offset_mm / self.stroke_mm
        if self.link_gene:
            row[base + self.genes_per_slot - 1] = float(link)
        kind = self.kinds[k]
        vals = e.values()
        if kind.search_params is not kind.params:
            vals = {n: float(np.ravel(v)[0]) for n, v in kind.to_search({n: np.array([v]) for n, v in vals.items()}).items()}
        for j, q in enumerate(kind.search_params):
            v, lo, hi = vals[q.name], self.param_lo[k, j], self.param_hi[k, j]
            if self.stock_gene(k, j):
                z = self.stock_plan.gene(k, j, v, m)
            elif q.choices:
                z = (v + 0.5) / len(q.choices)
            elif hi <= lo:
                z = 0.0
            elif q.log:
                z = math.log(max(v, 1e-300) / lo) / math.log(hi / lo)
            else:
                z = (v - lo) / (hi - lo)
            row[base + 4 + j] = z

    def __setstate__(self, state: dict) -> None:
        """Unpickle, also from a checkpoint written with the old one-letter attribute names, or before
        chains existed (elements in parallel only)."""
        self.__dict__.update({_OLD_NAMES.get(k, k): v for k, v in state.items()})
        self.__dict__.setdefault("max_chain", 1)
        self.__dict__.setdefault("link_gene", False)
        self.__dict__.setdefault("falling", np.array([not k.monotonic_force for k in self.kinds] + [False]))
        self.__dict__.setdefault("stock_plan", None)     # before stock sizes: every value free


def _factor_counts(count: np.ndarray, link: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Link counts divided by the chain's largest common factor, which becomes the chain's count.

    ``count`` and ``link`` (n, S); returns the counts and the chain counts (at each head, 1 elsewhere).
    """
    n, S = count.shape
    c = count.astype(np.int64)
    g = c.copy()                                   # running gcd along each chain, head to tail
    for j in range(1, S):
        g[:, j] = np.where(link[:, j], np.gcd(g[:, j - 1], c[:, j]), c[:, j])
    for j in range(S - 2, -1, -1):                 # the chain's gcd back to every member
        g[:, j] = np.where(link[:, j + 1], g[:, j + 1], g[:, j])
    in_chain = link.copy()
    in_chain[:, :-1] |= link[:, 1:]
    g = np.where(in_chain, g, 1)
    head = in_chain & ~link
    return (c // g).astype(float), np.where(head, g, 1).astype(float)
