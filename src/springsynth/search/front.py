"""Choosing designs from a population: topologies, the Pareto front, thinning."""

from __future__ import annotations

import numpy as np
from pymoo.util.nds.non_dominated_sorting import NonDominatedSorting

from springsynth.search.encoding import Encoding
from springsynth.search.metrics import normalised_objectives
from springsynth.search.scoring import Scores, score

__all__ = ["topology_keys", "pareto_front", "best_per_topology", "rows_of", "take"]


def topology_keys(enc: Encoding, X: np.ndarray) -> list[bytes]:
    """One key per genome: the multiset of its branches, each a kind or the ordered kinds of a chain.

    Without chains: its sorted kind genes (the multiset of kinds, slots in any order).
    """
    K = np.round(X[:, ::enc.genes_per_slot]).astype(np.int64)
    if not getattr(enc, "link_gene", False):
        return [r.tobytes() for r in np.sort(K.astype(np.int16), axis=1)]
    link = enc.links(X)
    base = len(enc.kinds) + 1
    code = K.copy()                     # a branch's code: its kinds in base (K + 1), head first
    for j in range(1, K.shape[1]):
        code[:, j] = np.where(link[:, j], code[:, j - 1] * base + K[:, j], K[:, j])
        code[:, j - 1] = np.where(link[:, j], 0, code[:, j - 1])     # only a branch's last slot keeps it
    return [r.tobytes() for r in np.sort(code, axis=1)]


def rows_of(X_front, Xpop):
    """Rows of ``Xpop`` equal to rows of ``X_front``."""
    keys = {r.tobytes() for r in X_front}
    return np.array([i for i, r in enumerate(Xpop) if r.tobytes() in keys], dtype=np.intp)


def best_per_topology(enc, X, sc: Scores, per_topology: int = 3):
    """For each topology present, the rows with the least violation, then the lowest error."""
    keys = topology_keys(enc, X)
    order = np.lexsort((sc.F[:, 0], sc.violation))
    best: dict[bytes, list[int]] = {}
    for i in order:
        rows = best.setdefault(keys[i], [])
        if len(rows) < per_topology:
            rows.append(int(i))
    return np.array(sorted(i for rows in best.values() for i in rows), dtype=np.intp)


def take(sc: Scores, rows) -> Scores:
    return Scores(sc.F[rows], sc.G[rows], sc.response)


def pareto_front(study, enc, X, sc: Scores, max_designs: int, *, yield_samples: int | None = None):
    """Feasible non-dominated designs (distinct), or the least-violating ones when none is feasible;
    their scores are taken again with ``yield_samples`` parts for the in-spec share (:func:`score`)."""
    ok = sc.feasible
    if ok.any():
        idx = np.flatnonzero(ok)
        F = sc.F[idx]
        front = idx[NonDominatedSorting().do(F, only_non_dominated_front=True)]
        # distinct by objectives (different genomes can decode to the same design)
        _, first = np.unique(np.round(sc.F[front], 9), axis=0, return_index=True)
        front = front[np.sort(first)]
        if len(front) > max_designs:
            front = _thin(normalised_objectives(study, sc.F[front]), front, max_designs)
        feasible = True
    else:
        order = np.argsort(sc.violation, kind="stable")
        front = order[: min(5, len(order))]
        feasible = False
    front = front[np.lexsort((sc.F[front, 2], sc.F[front, 0]))]
    sub = enc.decode(X[front])
    return X[front], score(study, sub, yield_samples=yield_samples), feasible


def _thin(Z, idx, k):
    """Keep k points spread over the front: extremes of each objective, then farthest-point picks."""
    keep = list(dict.fromkeys(int(i) for i in np.argmin(Z, axis=0)))
    d = np.min(np.linalg.norm(Z[:, None, :] - Z[None, keep, :], axis=2), axis=1)
    while len(keep) < k:
        j = int(np.argmax(d))
        keep.append(j)
        d = np.minimum(d, np.linalg.norm(Z - Z[j], axis=1))
    return idx[np.sort(keep)]
