"""Shared private helpers for the stretching-dominated kinds (``blade_clamped``, ``arch``).

* look-up on regular grids with the cell index computed arithmetically (no search),
  linear in one variable and bilinear in two;
* the uniaxial nominal stress of an incompressible Ogden series, used where the
  axial (membrane) force of a strip follows a hyperelastic law.

All functions are vectorised; shapes are stated in each docstring.
"""

from __future__ import annotations

import numpy as np

__all__ = ["RegularTable", "row_weights", "RowTable", "ogden_uniaxial_nominal"]


class RegularTable:
    """Piecewise-linear function sampled on a regular grid ``x0 + k h``, k = 0..K-1.

    Parameters
    ----------
    x0, h : float
        First node and node spacing.
    values : ndarray, shape (K,)
        Ordinates at the nodes, K >= 2.

    Calling the table evaluates it at ``x`` (any shape); the cell index is computed
    arithmetically. Below the first or above the last node the end cells are
    extrapolated linearly (callers flag such points as outside the valid range).
    """

    __slots__ = ("x0", "inv_h", "values", "slopes", "last")

    def __init__(self, x0: float, h: float, values: np.ndarray):
        self.x0 = float(x0)
        self.inv_h = 1.0 / float(h)
        self.values = np.ascontiguousarray(values, dtype=float)
        self.slopes = np.diff(self.values)
        self.last = self.values.shape[0] - 2

    def __call__(self, x: np.ndarray) -> np.ndarray:
        """Values at ``x`` (any shape), new array."""
        return self.scaled((x - self.x0) * self.inv_h)

    def scaled(self, s: np.ndarray) -> np.ndarray:
        """Values at the grid coordinate ``s = (x - x0) / h`` >= 0; ``s`` is overwritten and returned."""
        i = s.astype(np.intp)           # truncation == floor for s >= 0
        np.clip(i, 0, self.last, out=i)
        s -= i
        s *= self.slopes.take(i)
        s += self.values.take(i)
        return s


def row_weights(q: np.ndarray, nodes: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Cell index and weight of ``q`` on the (possibly uneven) node list ``nodes``.

    Only used on per-design arrays (shape (n,)), so a search is cheap here.

    Parameters
    ----------
    q : ndarray, shape (n,)
        Values, clipped to the node range.
    nodes : ndarray, shape (k,)
        Increasing nodes, k >= 2.

    Returns
    -------
    iq : ndarray of int, shape (n,)
        Lower node of the cell, 0 <= iq <= k - 2.
    wq : ndarray, shape (n,)
        Weight of the upper node, in [0, 1].
    """
    qc = np.clip(q, nodes[0], nodes[-1])
    iq = np.clip(np.searchsorted(nodes, qc, side="right") - 1, 0, nodes.shape[0] - 2)
    wq = (qc - nodes[iq]) / (nodes[iq + 1] - nodes[iq])
    return iq, wq


class RowTable:
    """Function of (q, x) tabulated on rows q_k (any spacing) x regular columns x = j h.

    Parameters
    ----------
    values : ndarray, shape (nq, nx)
        Table, nx >= 2.

    :meth:`__call__` interpolates bilinearly: rows by a per-design cell (see
    :func:`row_weights`), columns by an arithmetically computed cell index; beyond the
    last column the end cell is extrapolated linearly.
    """

    __slots__ = ("nx", "flat", "slope", "flat_up", "slope_up")

    def __init__(self, values: np.ndarray):
        v = np.ascontiguousarray(values, dtype=float)
        self.nx = v.shape[1]
        sl = np.zeros_like(v)
        sl[:, :-1] = np.diff(v, axis=1)
        self.flat = v.ravel()
        self.slope = sl.ravel()
        self.flat_up = self.flat[self.nx:]      # same column, next row
        self.slope_up = self.slope[self.nx:]

    def __call__(self, iq: np.ndarray, wq: np.ndarray, s: np.ndarray) -> np.ndarray:
        """Interpolated values, shape (n, m).

        Parameters
        ----------
        iq, wq : ndarray, shape (n,)
            Row cell and upper-row weight per design (:func:`row_weights`).
        s : ndarray, shape (n, m)
            Column coordinate in units of the column step (x / h), >= 0. Overwritten.
        """
        j = s.astype(np.intp)
        np.minimum(j, self.nx - 2, out=j)
        s -= j
        j += (iq * self.nx)[:, None]
        lo = self.flat.take(j)
        d = self.slope.take(j)
        d *= s
        lo += d
        hi = self.flat_up.take(j)
        d = self.slope_up.take(j)
        d *= s
        hi += d
        hi -= lo
        hi *= wq[:, None]
        hi += lo
        return hi


def ogden_uniaxial_nominal(lam: np.ndarray, mu: np.ndarray, alpha: np.ndarray, out: np.ndarray | None = None) -> np.ndarray:
    """Uniaxial nominal (first Piola) stress of an incompressible Ogden series, MPa.

    ``P(lam) = sum_p mu_p (lam^(alpha_p - 1) - lam^(-alpha_p/2 - 1))``
    (Ogden, Proc. R. Soc. Lond. A 326:565, 1972). Neo-Hookean and Mooney-Rivlin laws
    arrive here already as equivalent Ogden series.

    Parameters
    ----------
    lam : ndarray, shape (n, m)
        Stretch, > 0.
    mu, alpha : ndarray, shape (n, k)
        Ogden moduli (MPa) and exponents; padding terms have mu = 0.
    out : ndarray, shape (n, m), optional
        Where to write the result (may be ``lam`` itself).

    Returns
    -------
    ndarray, shape (n, m)

    Works in place on two work arrays (large temporaries cost more than the arithmetic).
    """
    shape = np.broadcast_shapes(lam.shape, mu.shape[:1] + (1,))
    if lam.size >= _ONE_LAW_POINTS and lam.shape == shape and (mu == mu[:1]).all() and (alpha == alpha[:1]).all():
        return _ogden_one_law(lam, mu[0], alpha[0], np.empty(shape) if out is None else out)
    log_lam = np.log(lam)
    if log_lam.shape != shape:
        log_lam = np.broadcast_to(log_lam, shape).copy()
    out = np.empty(shape) if out is None else out
    tmp = np.empty(shape)
    first = True
    for p in range(mu.shape[1]):
        if not mu[:, p].any():      # padding term
            continue
        a = alpha[:, p : p + 1]
        m = mu[:, p : p + 1]
        np.multiply(log_lam, a - 1.0, out=tmp)
        np.exp(tmp, out=tmp)
        if first:                   # the first term is written, not added to zeros
            np.multiply(tmp, m, out=out)
            first = False
        else:
            tmp *= m
            out += tmp
        np.multiply(log_lam, -0.5 * a - 1.0, out=tmp)
        np.exp(tmp, out=tmp)
        tmp *= m
        out -= tmp
    if first:                       # no term at all
        out[...] = 0.0
    return out



#: points from which one law's exponents are worth sorting into whole and other ones (:func:`_ogden_one_law`)
_ONE_LAW_POINTS = 4096
#: largest whole exponent taken by repeated multiplication in :func:`_ogden_one_law`
_MAX_WHOLE_POWER = 6


def _ogden_one_law(lam: np.ndarray, mu: np.ndarray, alpha: np.ndarray, out: np.ndarray) -> np.ndarray:
    """:func:`ogden_uniaxial_nominal` when every row has the same law (``mu``, ``alpha`` shape (k,)).

    The exponents are then scalars: whole ones (neo-Hookean and Mooney-Rivlin terms have
    alpha = +-2, giving lam, lam^-2, lam^-3 and 1) are taken by multiplication, the others
    as ``exp(e ln lam)``; the same sum, equal to the general path within round-off.
    """
    if np.shares_memory(out, lam):
        lam = lam.copy()
    powers: dict[float, np.ndarray] = {}
    recip = None
    log_lam = None

    def power(e: float) -> np.ndarray | float:
        nonlocal recip, log_lam
        if e == 0.0:
            return 1.0
        if e in powers:
            return powers[e]
        if e == round(e) and abs(e) <= _MAX_WHOLE_POWER:
            if e < 0 and recip is None:
                recip = np.divide(1.0, lam)
            base = lam if e > 0 else recip
            v = base
            for _ in range(int(abs(e)) - 1):
                v = v * base
        else:
            if log_lam is None:
                log_lam = np.log(lam)
            v = np.multiply(log_lam, e)
            np.exp(v, out=v)
        powers[e] = v
        return v

    first = True
    for m, a in zip(mu.tolist(), alpha.tolist()):
        if m == 0.0:                # padding term
            continue
        if first:                   # the first term is written, not added to zeros
            np.multiply(power(a - 1.0), m, out=out)
            first = False
        else:
            out += np.multiply(power(a - 1.0), m)
        out -= np.multiply(power(-0.5 * a - 1.0), m)
    if first:                       # no term at all
        out[...] = 0.0
    return out
