"""A duty cycle as each element of a population sees it: its own strokes and its stress range.

A duty (:class:`springsynth.model.study.Duty`) moves the mechanism between the strokes
``stroke_min_mm`` and ``stroke_max_mm``. Each element sees its own stroke at those two
positions, :func:`element_strokes`; its kind turns them into the stress range of one duty
cycle at each place it checks (``ElementKind.fatigue_loads``). The criteria that judge
those ranges are in :mod:`springsynth.checks.fatigue`.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from springsynth.assembly.slots import Slots
from springsynth.elements import ElementKind, FatigueLoad
from springsynth.model.materials import MaterialArrays

__all__ = ["element_strokes", "duty_loads", "DutyGroup"]


def element_strokes(slots: Slots, x_mm: np.ndarray) -> np.ndarray:
    """Each element's own stroke at the mechanism strokes ``x_mm``, mm, shape (n, S, m).

    Parameters
    ----------
    slots : Slots
        n mechanisms of S slots.
    x_mm : ndarray, shape (m,)
        Strokes of the mechanism, mm.

    Notes
    -----
    An element in parallel on the stroke sees ``u = x - offset``, clipped at 0 (not yet
    engaged through a gap). This is the one place that maps the mechanism's stroke to the
    elements' strokes for the fatigue check: elements in series take their deflections from
    their chain's solution here.
    """
    x = np.asarray(x_mm, dtype=float)
    if slots.has_chains:   # the links' deflections along their chains' loading paths
        from springsynth.assembly.evaluate import evaluate_population

        return evaluate_population(slots, x, x_max_mm=float(np.max(x)), detail=True).element_stroke_mm
    with np.errstate(invalid="ignore"):
        u = x[None, None, :] - slots.offset_mm[:, :, None]
    return np.maximum(u, 0.0)


def _stroke_ranges(slots: Slots, lo_mm: float, hi_mm: float) -> tuple[np.ndarray, np.ndarray]:
    """Each element's smallest and largest own stroke over a duty between ``lo_mm`` and ``hi_mm``, (n, S) each.

    In parallel those are the strokes at the two ends; a chain link's can lie inside the
    cycle (a link unloads when its chain snaps), so the chain's path is sampled at
    ``_DUTY_POINTS`` strokes.
    """
    if not slots.has_chains:
        u = element_strokes(slots, np.array([lo_mm, hi_mm], dtype=float))
        return u[:, :, 0], u[:, :, 1]
    u = element_strokes(slots, np.linspace(lo_mm, hi_mm, _DUTY_POINTS))
    chained = slots.in_chain
    return np.where(chained, u.min(axis=2), u[:, :, 0]), np.where(chained, u.max(axis=2), u[:, :, -1])


#: strokes at which a chain's loading path is sampled over a duty cycle
_DUTY_POINTS = 33


@dataclass(frozen=True)
class DutyGroup:
    """The rows of one kind in one slot, with the stress range of each place it checks.

    Attributes
    ----------
    slot : int
    kind : ElementKind
    rows : ndarray of int, shape (r,)
        Designs (rows of the population) that have this kind in this slot.
    materials : MaterialArrays
        Their materials, fields of shape (r,).
    loads : dict of str -> FatigueLoad
        Per place (``""`` for the governing stress), arrays of shape (r,).
    """

    slot: int
    kind: ElementKind
    rows: np.ndarray
    materials: MaterialArrays
    loads: dict[str, FatigueLoad]


def duty_loads(slots: Slots, stroke_min_mm: float, stroke_max_mm: float) -> list[DutyGroup]:
    """Stress ranges of every element of a population over one duty cycle.

    Parameters
    ----------
    slots : Slots
        n mechanisms of S slots.
    stroke_min_mm, stroke_max_mm : float
        The mechanism's strokes between which the duty cycles, mm.

    Returns
    -------
    list of DutyGroup
        One per kind present in each slot (a handful); no loop over designs.
    """
    u_lo, u_hi = _stroke_ranges(slots, stroke_min_mm, stroke_max_mm)
    mats_all = MaterialArrays.take(slots.materials, np.arange(len(slots.materials)))
    out = []
    for j, ki, rows in slots.groups():
        kind = slots.kinds[ki]
        pk = slots.params[rows, j, :len(kind.params)].T           # (parameters, rows): contiguous rows below
        p = {q.name: pk[c] for c, q in enumerate(kind.params)}
        mat = mats_all.rows(slots.material[rows, j])               # fields gathered as the kind reads them
        with np.errstate(all="ignore"):
            loads = kind.fatigue_loads(p, mat, u_lo[rows, j], u_hi[rows, j])
        out.append(DutyGroup(j, kind, rows, mat, loads))
    return out
