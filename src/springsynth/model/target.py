"""The target curve: a validated value object in mm and N, and the curve error."""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from springsynth.model.errors import InputError

__all__ = ["Target", "target_from_arrays", "BAND_FLOOR_SHARE"]

#: where a target has no band of its own, the band is +- band_pct % of the target force, but
#: never narrower than +- band_pct % of this share of max|F_target| (project choice, see
#: :meth:`Target.spec_band`)
BAND_FLOOR_SHARE = 0.2


@dataclass(frozen=True)
class Target:
    """A target curve in mm and N, validated when built.

    Attributes
    ----------
    x_mm, force_N : ndarray, shape (m,)
        Strictly increasing displacement >= 0; target force.
    force_lo_N, force_hi_N : ndarray, shape (m,) or None
        Acceptance band, when given.
    weight : ndarray, shape (m,)
        Non-negative weights of the RMS error (ones by default).
    name : str
    notices : tuple of str
        Conversions or resampling applied on read, to show the user.
    """

    x_mm: np.ndarray
    force_N: np.ndarray
    force_lo_N: np.ndarray | None = None
    force_hi_N: np.ndarray | None = None
    weight: np.ndarray | None = None
    name: str = "target"
    notices: tuple[str, ...] = field(default=())

    def __post_init__(self):
        x, f = np.asarray(self.x_mm, float), np.asarray(self.force_N, float)
        w = np.ones_like(x) if self.weight is None else np.asarray(self.weight, float)
        object.__setattr__(self, "x_mm", x)
        object.__setattr__(self, "force_N", f)
        object.__setattr__(self, "weight", w)
        where = self.name
        if x.ndim != 1 or x.size < 3 or f.shape != x.shape or w.shape != x.shape:
            raise InputError(f"needs at least 3 rows of displacement and force, got {x.size}", where=where)
        for arr, nm in ((x, "displacement"), (f, "force"), (w, "weight")):
            bad = np.flatnonzero(~np.isfinite(arr))
            if bad.size:
                raise InputError(f"{nm} is not a finite number at point {bad[0] + 1}", where=where)
        if x[0] < 0:
            raise InputError(f"displacement must be >= 0 (the stroke), got {x[0]:g} mm at point 1", where=where)
        d = np.flatnonzero(np.diff(x) <= 0)
        if d.size:
            i = d[0]
            raise InputError(f"displacement must increase strictly: point {i + 2} ({x[i + 1]:g} mm) follows "
                             f"{x[i]:g} mm", where=where)
        if np.any(w < 0) or not np.any(w > 0):
            raise InputError("weights must be >= 0 and not all zero", where=where)
        if not np.any(f != 0):
            raise InputError("force is zero everywhere; nothing to match", where=where)
        if (self.force_lo_N is None) != (self.force_hi_N is None):
            raise InputError("give both force_min and force_max, or neither", where=where)
        if self.force_lo_N is not None:
            lo, hi = np.asarray(self.force_lo_N, float), np.asarray(self.force_hi_N, float)
            object.__setattr__(self, "force_lo_N", lo)
            object.__setattr__(self, "force_hi_N", hi)
            bad = np.flatnonzero(~((lo <= f) & (f <= hi)))
            if bad.size:
                i = bad[0]
                raise InputError(f"the band [{lo[i]:g}, {hi[i]:g}] N does not contain the force {f[i]:g} N at "
                                 f"point {i + 1}", where=where)

    @property
    def has_band(self) -> bool:
        return self.force_lo_N is not None

    @property
    def stroke_mm(self) -> float:
        return float(self.x_mm[-1])

    @property
    def scale_N(self) -> float:
        """``max |F_target|``, the normaliser of ``curve_error_pct``."""
        return float(np.max(np.abs(self.force_N)))

    def scaled(self, force: float = 1.0, stroke: float = 1.0) -> "Target":
        """The same curve with every force (band included) times ``force`` and every
        displacement times ``stroke``: one target serves a product family or a sweep.

        Parameters
        ----------
        force, stroke : float
            Positive, finite multipliers (dimensionless).

        Returns
        -------
        Target
            A new target; weights, name and notices are kept. The curve error of a design
            against it is relative to the scaled ``max |F_target|``.
        """
        for v, nm in ((force, "force"), (stroke, "stroke")):
            if not (isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v) and v > 0):
                raise InputError(f"scale_{nm} must be a positive number, got {v!r}", where=self.name)
        if force == 1 and stroke == 1:
            return self
        lo = None if self.force_lo_N is None else self.force_lo_N * force
        hi = None if self.force_hi_N is None else self.force_hi_N * force
        return Target(self.x_mm * stroke, self.force_N * force, lo, hi, self.weight, name=self.name,
                      notices=self.notices)

    def curve_error_pct(self, force_N: np.ndarray) -> np.ndarray:
        """``100 RMS_w(F - F_target) / max|F_target|`` for forces of shape (n, m) -> (n,)."""
        r = force_N - self.force_N
        return 100.0 * np.sqrt((r * r) @ self.weight / self.weight.sum()) / self.scale_N

    def spec_band(self, band_pct: float) -> tuple[np.ndarray, np.ndarray]:
        """The acceptance band ``(lo, hi)`` in N, each shape (m,): the target's own band when it has one.

        Without one: ``F_target +- h`` with ``h = band_pct / 100 * max(|F_target|, BAND_FLOOR_SHARE *
        max|F_target|)``: +- ``band_pct`` % of the target force (10 % is common practice for
        spring loads), except that near zero force, where a relative band would shrink to nothing
        and no maker tolerances a load, the band keeps the width it has at a fifth of the peak
        force (project choice).
        """
        if self.has_band:
            return self.force_lo_N, self.force_hi_N
        h = band_pct / 100.0 * np.maximum(np.abs(self.force_N), BAND_FLOOR_SHARE * self.scale_N)
        return self.force_N - h, self.force_N + h

    def in_spec(self, force_N: np.ndarray, band_pct: float) -> np.ndarray:
        """Whether each curve (n, m) lies inside :meth:`spec_band` at every target point, shape (n,)."""
        lo, hi = self.spec_band(band_pct)
        return np.all((force_N >= lo) & (force_N <= hi), axis=1)

    def in_band(self, force_N: np.ndarray) -> np.ndarray:
        """Whether each curve (n, m) lies inside the band at every point, shape (n,)."""
        if not self.has_band:
            raise ValueError("target has no band")
        return np.all((force_N >= self.force_lo_N) & (force_N <= self.force_hi_N), axis=1)


def target_from_arrays(x_mm, force_N, *, tolerance_N=None, name="target", weight=None) -> Target:
    """Convenience constructor (tests, API): a +/- ``tolerance_N`` band when given."""
    f = np.asarray(force_N, float)
    lo = hi = None
    if tolerance_N is not None:
        tol = np.broadcast_to(np.asarray(tolerance_N, float), f.shape)
        lo, hi = f - tol, f + tol
    return Target(np.asarray(x_mm, float), f, lo, hi, weight, name=name)
