"""Genome encoding and objective/constraint evaluation for a study (no pymoo here).

Genome: one float row per mechanism, ``S`` slots of ``G = 4 + P`` genes each:

====  =========  ==========================================================
gene  type       meaning
====  =========  ==========================================================
0     category   kind: 0 = empty slot, k = the study's k-th kind (slot 0 never empty)
1     category   material: a number in [0, 1) picking among the materials that suit the kind
2     integer    count of identical copies, 1 .. max_count
3     real       offset / stroke, in [OFFSET_LO, OFFSET_HI] (< 0 preload, > 0 gap)
4..   real       the kind's parameters, each mapped from [0, 1] onto its bounds
                 (log scale where ``Param.log``; whole numbers and choices by rounding)
====  =========  ==========================================================

Objectives (all minimised): ``curve_error_pct``, ``stress_ratio``, ``size_mm3``.
Constraints (feasible when all <= 0, each normalised demand/allowable - 1):
``curve_error`` (a design that misses the curve by more than ``limits.max_error_pct`` is of
no use, however small), ``envelope_length``, ``envelope_cross``, ``stress``, ``validity``,
``min_thickness``, ``mass``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from springsynth.assembly.design import Design
from springsynth.assembly.evaluate import Response, envelope_margins, evaluate_population
from springsynth.assembly.slots import Slots
from springsynth.model.study import Study

__all__ = ["Encoding", "CONSTRAINTS", "Scores", "score", "OFFSET_LO", "OFFSET_HI"]

OFFSET_LO, OFFSET_HI = -3.0, 0.9
CONSTRAINTS = ("curve_error", "envelope_length", "envelope_cross", "stress", "validity", "min_thickness", "mass")
#: stand-in for a non-finite objective or constraint value
BIG = 1e6


@dataclass(frozen=True)
class Scores:
    """Objectives (n, 3), constraints (n, len(CONSTRAINTS)) and the response behind them."""

    F: np.ndarray
    G: np.ndarray
    response: Response

    @property
    def feasible(self) -> np.ndarray:
        return np.all(self.G <= 0.0, axis=1)

    @property
    def violation(self) -> np.ndarray:
        return np.sum(np.maximum(self.G, 0.0), axis=1)


class Encoding:
    """Maps genome rows to :class:`Slots` and back for one study."""

    def __init__(self, study: Study):
        self.study = study
        s = study.search
        self.kinds = s.kinds
        self.materials = s.materials
        self.S = s.max_elements
        self.P = max(max(len(k.params), len(k.search_params)) for k in self.kinds)
        self.G = 4 + self.P
        self.stroke = study.target.stroke_mm
        K, P = len(self.kinds), self.P
        cap = max(study.envelope.length_mm, study.envelope.width_mm, study.envelope.height_mm)
        self.lo = np.ones((K, P))
        self.hi = np.ones((K, P))
        self.log = np.zeros((K, P), bool)
        self.rnd = np.zeros((K, P), bool)
        self.nch = np.zeros((K, P), int)
        self.npar = np.array([len(k.search_params) for k in self.kinds])
        for i, k in enumerate(self.kinds):
            for j, q in enumerate(k.search_params):
                hi = min(q.hi, cap) if q.unit == "mm" and q.lo > 0 else q.hi
                self.lo[i, j], self.hi[i, j] = q.lo, max(hi, q.lo)
                self.log[i, j] = q.log
                self.rnd[i, j] = q.integer
                self.nch[i, j] = len(q.choices)
        # materials that suit each kind, as indices into self.materials
        self.suitable = [np.array([m for m, mat in enumerate(self.materials) if mat.suits(k.forms)], dtype=np.intp)
                         for k in self.kinds]
        xl, xu = [], []
        for slot in range(self.S):
            xl += [1.0 if slot == 0 else 0.0, 0.0, 1.0, OFFSET_LO] + [0.0] * P
            xu += [float(K), 1.0 - 1e-9, float(s.max_count), OFFSET_HI] + [1.0] * P
        self.xl, self.xu = np.array(xl), np.array(xu)
        kinds_of = np.tile(np.r_[[1, 1, 0, 0], np.zeros(P)], self.S).astype(bool)
        self.categorical = kinds_of
        self.integer = np.tile(np.r_[[0, 0, 1, 0], np.zeros(P)], self.S).astype(bool)

    @property
    def n_var(self) -> int:
        return self.S * self.G

    # ------------------------------------------------------------------ decode
    def values(self, k: int, z: np.ndarray) -> np.ndarray:
        """Parameter values of kind ``k`` (in ``kind.params`` order) from unit genes ``z`` (n, P)."""
        kind = self.kinds[k]
        q = self._search_values(k, z)
        if kind.search_params is kind.params:
            return q
        p = kind.from_search({sp.name: q[:, j] for j, sp in enumerate(kind.search_params)})
        out = np.zeros_like(q)
        for j, par in enumerate(kind.params):
            out[:, j] = p[par.name]
        return out

    def _search_values(self, k: int, z: np.ndarray) -> np.ndarray:
        lo, hi = self.lo[k], self.hi[k]
        z = np.clip(z, 0.0, 1.0)
        with np.errstate(divide="ignore", invalid="ignore"):  # the log branch is unused where lo = 0
            v = np.where(self.log[k], lo * (hi / lo) ** z, lo + z * (hi - lo))
        v = np.where(self.rnd[k], np.round(v), v)
        ch = self.nch[k] > 0
        if ch.any():
            v = np.where(ch, np.minimum(np.floor(z * self.nch[k]), self.nch[k] - 1), v)
        return v

    def decode(self, X: np.ndarray) -> Slots:
        X = np.atleast_2d(X)
        n = X.shape[0]
        kind = np.full((n, self.S), -1, dtype=np.intp)
        mat = np.zeros((n, self.S), dtype=np.intp)
        params = np.zeros((n, self.S, self.P))
        for s in range(self.S):
            base = s * self.G
            kg = np.clip(np.round(X[:, base]).astype(np.intp) - 1, -1, len(self.kinds) - 1)
            kind[:, s] = kg
            for k in np.unique(kg):
                if k < 0:
                    continue
                rows = np.flatnonzero(kg == k)
                params[rows, s] = self.values(k, X[rows, base + 4: base + 4 + self.P])
                suit = self.suitable[k]
                pick = np.minimum((X[rows, base + 1] * len(suit)).astype(np.intp), len(suit) - 1)
                mat[rows, s] = suit[pick]
        count = np.round(X[:, 2::self.G]).clip(1, None)
        offset = X[:, 3::self.G] * self.stroke
        return Slots(kind, mat, count, offset, params, self.kinds, self.materials)

    # ------------------------------------------------------------------ encode
    def encode(self, designs: list[Design]) -> np.ndarray:
        """Genome rows for designs (warm starts); elements beyond the slots or of kinds or
        materials outside the study are dropped, values clipped to the bounds."""
        X = np.zeros((len(designs), self.n_var))
        names = [k.name for k in self.kinds]
        mids = [m.id for m in self.materials]
        for i, d in enumerate(designs):
            slot = 0
            for e in d.elements:
                if slot >= self.S or e.kind not in names or e.material not in mids:
                    continue
                k = names.index(e.kind)
                suit = list(self.suitable[k])
                mi = mids.index(e.material)
                if mi not in suit:
                    continue
                base = slot * self.G
                X[i, base] = k + 1
                X[i, base + 1] = (suit.index(mi) + 0.5) / len(suit)
                X[i, base + 2] = e.count
                X[i, base + 3] = e.offset_mm / self.stroke
                kind = self.kinds[k]
                vals = e.values()
                if kind.search_params is not kind.params:
                    vals = {n: float(np.ravel(v)[0]) for n, v in kind.to_search({n: np.array([v]) for n, v in vals.items()}).items()}
                for j, q in enumerate(kind.search_params):
                    v, lo, hi = vals[q.name], self.lo[k, j], self.hi[k, j]
                    if q.choices:
                        z = (v + 0.5) / len(q.choices)
                    elif hi <= lo:
                        z = 0.0
                    elif q.log:
                        z = math.log(max(v, 1e-300) / lo) / math.log(hi / lo)
                    else:
                        z = (v - lo) / (hi - lo)
                    X[i, base + 4 + j] = z
                slot += 1
            if slot == 0:
                raise ValueError(f"design {d.name} has no element usable in this study")
        return np.clip(X, self.xl, self.xu)


def score(study: Study, slots: Slots) -> Scores:
    """Objectives and constraints of a population (see the module docstring)."""
    t = study.target
    r = evaluate_population(slots, t.x_mm, x_max_mm=t.stroke_mm)
    lim = study.limits
    with np.errstate(all="ignore"):
        err = t.curve_error_pct(r.force_N)
        g_len, g_cross = envelope_margins(r.box_mm, study.envelope)
        g_stress = r.stress_ratio / lim.stress_ratio - 1.0
        g_valid = r.validity_worst
        g_thick = lim.min_thickness_mm / r.min_thickness_mm - 1.0 if lim.min_thickness_mm > 0 \
            else np.full(slots.n, -1.0)
        g_mass = r.mass_g / lim.max_mass_g - 1.0 if math.isfinite(lim.max_mass_g) else np.full(slots.n, -1.0)
        g_err = err / lim.max_error_pct - 1.0
    obj_err = err
    if study.search.robust:  # [search] robust = true: 90th-percentile error over fixed tolerance samples
        from springsynth.checks.tolerance import robust_error

        obj_err = robust_error(study, slots)
    F = np.stack([obj_err, r.stress_ratio, r.size_mm3], axis=1)
    G = np.stack([g_err, g_len, g_cross, g_stress, g_valid, g_thick, g_mass], axis=1)
    G = np.maximum(G, -1.0)  # only the sign matters below zero; keeps -inf out of pymoo
    bad = ~r.finite[:, None] | ~np.isfinite(G)
    G = np.where(bad, BIG, np.minimum(G, BIG))
    F = np.where(~r.finite[:, None] | ~np.isfinite(F), BIG, np.minimum(F, BIG))
    return Scores(F, G, r)
