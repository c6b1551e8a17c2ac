"""Cosine pre-curved arch, clamped at both ends, centre load on a guided shuttle (snap-through).

Notes
-----
Span l, width b, thickness t, rise h; as-made shape ``w0 = (h/2)(1 - cos 2 pi x / l)``;
both ends clamped and axially fixed; the shuttle at mid-span is pushed down by the
stroke u = d and cannot rotate (a mirrored pair or a guided shuttle), which suppresses
the antisymmetric mode. The stroke is imposed (displacement control), so the whole
curve is traced, including the negative-stiffness part where the force turns negative
(the mechanism pulls) before the arch settles near its mirrored shape.

Model: shallow-arch (extensible, moderate-rotation) theory,
``E I (w'''' - w0'''') - N w'' = -f delta_D(x - l/2)``, ``N = (E A / 2l) int (w'^2 - w0'^2) dx``.
With ``Q = h/t``, ``Delta = d/h`` and ``F = f l^3 / (E I h)``, F is a function of
(Q, Delta) only (Qiu, Lang & Slocum 2004). It is computed by a Galerkin expansion in
the symmetric clamped-clamped buckling modes ``phi_m = (1 - cos 2 m pi x/l)/2``
(eigenvalues lambda_m = (2 m pi)^2, orthogonal in bending and stretching), with the
midspan constraint ``sum_(m odd) a_m = 1 - Delta`` and multiplier F:

    (lambda_m^2 / 8)(a_m - a0_m) + T lambda_m a_m = -F [m odd],   T = (3 Q^2/32) S,
    S = sum_m lambda_m (a_m^2 - a0_m^2)          (axial strain = h^2 S / (16 l^2))

For a given T the a_m are linear in F, so each state is one scalar root in T
(bisection). The even modes (zero midspan travel) stay zero until the compression
reaches their first eigenvalue, 8 T = -(4 pi)^2; beyond it the 4 pi mode grows at
constant T and the force follows a straight line in Delta (the "F3" path of Qiu et
al., with higher modes F = 8.6461 pi^4 - 6.4846 pi^4 Delta) until the arch rejoins the
symmetric path. On this snap path T is fixed, so the symmetric amplitudes are linear in
Delta and their axial strain is a quadratic ``P(Delta)`` independent of Q (40 modes:
``12.3153 - 99.5553 Delta + 47.9999 Delta^2``); the 4 pi amplitude is
``a2^2 = -4/(3 Q^2) - P(Delta)/(4 pi)^2``, so the path runs between the two roots
Delta_b1 <= Delta_b2 (:func:`snap_strokes`; 0.132 and 1.942 for Q -> infinity) and
a2 rises as sqrt(Delta - Delta_b1) after the first and falls as sqrt(Delta_b2 - Delta)
before the second. With 40 odd modes the function reproduces the normalised peak forces
of an independent 40-mode Galerkin expansion computed for this project (F_top 743.2 /
F_bot -368.9 at Q = 10, 653.3 / -279.0 at Q = 4) and the published multimode values
~740 / ~-370 (Qiu et al. 2004, eqs. 43-44).

Bistability: the force crosses zero iff Q > sqrt(16/3) = 2.3094, the same threshold as
Qiu's single-mode model: a zero-force equilibrium has F = 0, which makes every mode
but the first vanish, so it is exactly a single-mode state. The 4 pi bifurcation is
reached only for Q > 2.3145 (single-mode model: 2.3094).

Stress: ``sigma = E t |Delta kappa|_max / 2 + |N| / A`` with the curvature change
evaluated over the span (the slowly converging point-load part of the series is
completed in closed form, ``sum_(m odd) cos(m theta)/m^2 = pi (pi - 2 theta)/8``), the
worst sign of the 4 pi mode, and the axial stress. In units of ``E t h / l^2``:
``K/4 + Q |S| / 16`` (-> 12 Delta for a nearly straight beam, Roark). The peak can lie
mid-stroke (``monotonic_stress = False``); :meth:`Arch.peak_stress_ratio` reads a
running-maximum table so that no peak between stroke points is missed.

Table: computed by :func:`build_table` (40 odd modes) on 205 Q nodes 0..24, denser
where the snap interval opens (Q ~ 2.2-4; the threshold 2.3145 is a node, followed by
quadratically spaced nodes), and shipped as ``springsynth/data/arch_table.npz``
(regenerate with ``python -m springsynth.elements.arch``). All lookups interpolate
bilinearly: rows by a per-design search, columns by an arithmetically computed index.
F and the band use Delta = 0..2.2 step 0.005. The stress and its running maximum turn
steeply at both ends of the snap path (the square roots above), which bilinear
interpolation on Delta columns smears (up to 7 % error); they are tabulated instead on
columns that follow each row's snap path (:func:`snap_deltas`): 200 equal steps of
Delta / Delta_b1 before it, 300 equal steps of theta on it,
``Delta = Delta_b1 + (Delta_b2 - Delta_b1)(1 - cos theta)/2`` (so a2 ~ sin theta is
smooth in the column), and 150 equal steps up to 2.2 after it; the kernel maps each
stroke to that column with the design's own Delta_b1, Delta_b2 (:func:`snap_columns`).
Measured against the direct 40-mode solution (:func:`galerkin`) over 700 Q values in
0..24 (random, and packed near the threshold) x Delta step 0.001, plus strokes 1e-5..0.3
on either side of both snap ends for 400 more: F within 0.39 % of max |F| along the
stroke (Q ~ 3, Delta ~ 1.6, where the snap end moves quickly with Q); stress within
0.42 % of the local value (within 0.2 % except just above the threshold: Q = 2.3146,
Delta = 1.037); its running maximum within 0.52 % (Q = 2.34, Delta = 1.81). The former
stress tables on Delta columns deviated by up to 7.0 % (stress, Q = 2.53, just after
Delta_b2) and 6.8 % (running maximum, Q = 2.54, at Delta_b1).

Validity: Q <= 24 (table), Delta <= 2.2 (through the second stable position),
shallow arch h/l <= 0.1 (slopes <= ~0.3 rad), l/t >= 20 (shear), elastic, ideal clamps
(compliant anchors lower the forces markedly). Small-strain modulus E for any material.

Box: along the stroke the beam sweeps the band from its as-made apex (h, the highest
point at any time) down to the lowest point it reaches up to u_max. That is at least
max(h, u_max) (the shuttle), but during snap-through the 4 pi mode makes the beam
S-shaped and its quarter points dip below both the clamp line and the shuttle, by up
to ~0.5 h for large Q. The band height over h is tabulated with the force (running
minimum of the lowest point of the Galerkin shape), so ``along = h band(Q, u_max/h) + t``;
across: l and b. Clamps and shuttle belong to the frame and are not included.

References: J. Qiu, J.H. Lang & A.H. Slocum, "A curved-beam bistable mechanism",
J. Microelectromech. Syst. 13(2):137-146, 2004 (bibliographic data from memory);
W.C. Young & R.G. Budynas, Roark's Formulas for Stress and Strain (straight limit).
"""

from __future__ import annotations

import math
from functools import lru_cache
from importlib import resources

import numpy as np

from springsynth.elements._base import DENSITY_TO_G_PER_MM3, ElementKind, Param
from springsynth.elements._stretching import RowTable, row_weights

#: Table axes.
DELTA_MAX = 2.2
DELTA_STEP = 0.005
#: Shallowness and slenderness limits.
SHALLOW_LIMIT = 0.1
SLENDERNESS_MIN = 20.0
#: Odd modes used when building the table.
N_MODES = 40
#: Stress-table columns before, on and after the snap (4 pi) path, see :func:`snap_deltas`.
SNAP_COLUMNS = (200, 300, 150)
TABLE_FILE = "arch_table.npz"

_PI = math.pi


def q_nodes() -> np.ndarray:
    """Q nodes of the table, denser where the snap-through interval opens (Q ~ 2.3-4).

    The threshold of the snap path (:func:`snap_threshold`) is a node, followed by nodes
    spaced quadratically: the snap strokes move as sqrt(Q - threshold) just above it.
    """
    qc = snap_threshold(snap_quadratic())
    return np.unique(np.round(np.concatenate((
        np.arange(0.0, 2.2, 0.1), np.arange(2.2, 2.5, 0.01), np.arange(2.5, 3.0, 0.025), np.arange(3.0, 4.0, 0.05),
        np.arange(4.0, 8.0, 0.1), np.arange(8.0, 24.0 + 1e-9, 0.25),
        qc + 0.02 * (np.arange(0, 8) / 8.0) ** 2,
    )), 10))


def delta_nodes() -> np.ndarray:
    return np.round(np.arange(0.0, DELTA_MAX + 0.5 * DELTA_STEP, DELTA_STEP), 10)


def _symmetric_state(T, D, c, lam):
    """Symmetric modes for a given tension parameter ``T`` (each array shape (k,)).

    ``lam`` (n_modes - 1,) holds the eigenvalues of the odd modes m >= 3. Returns the
    residual ``c S - T`` of the stretching condition, the multiplier ``mu`` (F = -mu),
    ``a1``, the higher amplitudes ``am`` (k, n_modes - 1) and the axial strain ``S``.
    """
    l1 = (2.0 * _PI) ** 2
    den = lam * (lam + 8.0 * T[:, None])
    G = np.sum(1.0 / den, axis=1)
    a1 = (1.0 - D + l1**2 * G) / (1.0 + l1 * (l1 + 8.0 * T) * G)
    mu = l1 * (a1 * (l1 + 8.0 * T) - l1) / 8.0          # multiplier, F = -mu
    am = 8.0 * mu[:, None] / den
    S = l1 * (a1**2 - 1.0) + np.sum(lam * am**2, axis=1)
    return c * S - T, mu, a1, am, S


def galerkin(Q: np.ndarray, Delta: np.ndarray, n_modes: int = N_MODES, n_xi: int = 201) -> dict[str, np.ndarray]:
    """Symmetric-mode Galerkin solution of the clamped cosine arch under displacement control.

    Parameters
    ----------
    Q : ndarray, shape (k,)
        Rise / thickness, >= 0.
    Delta : ndarray, shape (k,)
        Shuttle travel / rise, 0 <= Delta (up to ~2.5).
    n_modes : int
        Odd modes m = 1, 3, ..., 2 n_modes - 1 (plus the 4 pi mode after bifurcation).
    n_xi : int
        Points on the half-span where the curvature change is searched.

    Returns
    -------
    dict of ndarray, each shape (k,)
        ``F`` = f l^3/(E I h); ``sigma`` = stress l^2/(E t h); ``T`` (tension parameter,
        8T = N l^2/(E I)); ``S`` (axial strain 16 l^2/h^2); ``a2`` (4 pi mode amplitude);
        ``w_hi``, ``w_lo`` (highest and lowest point of the beam / h).
    """
    Q = np.asarray(Q, dtype=float)
    D = np.asarray(Delta, dtype=float)
    Q, D = np.broadcast_arrays(Q, D)
    m = 2.0 * np.arange(1, n_modes) + 1.0                # odd modes >= 3
    lam = (2.0 * _PI * m) ** 2
    l1, l2 = (2.0 * _PI) ** 2, (4.0 * _PI) ** 2
    c = 3.0 * Q**2 / 32.0

    def state(T):
        return _symmetric_state(T, D, c, lam)

    Tb = np.full(D.shape, -l2 / 8.0)
    Rb = state(Tb)[0]
    lo, hi = Tb.copy(), 2.0 * Q**2 + 50.0
    for _ in range(64):
        mid = 0.5 * (lo + hi)
        up = state(mid)[0] > 0.0
        lo = np.where(up, mid, lo)
        hi = np.where(up, hi, mid)
    bif = Rb < 0.0
    T = np.where(bif, Tb, 0.5 * (lo + hi))
    _, mu, a1, am, S = state(T)
    a2 = np.sqrt(np.where(bif, -Rb / np.where(c > 0, c, 1.0) / l2, 0.0))
    S = S + l2 * a2**2

    xi = np.linspace(0.0, 0.5, n_xi)
    cos = np.cos(2.0 * _PI * np.outer(m, xi))            # (n_modes - 1, n_xi)
    kap = (a1 - 1.0)[:, None] * l1 * np.cos(2.0 * _PI * xi) + (am * lam) @ cos
    # point-load tail m > 2 n_modes - 1: a_m lambda_m ~ 8 mu / lambda_m
    tail = _PI**2 * (1.0 - 4.0 * xi) / 8.0 - np.cos(2.0 * _PI * xi) - (cos / m[:, None] ** 2).sum(axis=0)
    kap += (2.0 * mu / _PI**2)[:, None] * tail
    k2 = (a2 * l2)[:, None] * np.cos(4.0 * _PI * xi)
    K = np.maximum(np.abs(kap + k2).max(axis=1), np.abs(kap - k2).max(axis=1))
    w = 0.5 * (a1[:, None] * (1.0 - np.cos(2.0 * _PI * xi)) + am @ (1.0 - cos))
    w2 = 0.5 * a2[:, None] * (1.0 - np.cos(4.0 * _PI * xi))
    return {
        "F": -mu, "sigma": K / 4.0 + Q * np.abs(S) / 16.0, "T": T, "S": S, "a2": a2,
        "w_hi": np.maximum((w + w2).max(axis=1), (w - w2).max(axis=1)),
        "w_lo": np.minimum((w + w2).min(axis=1), (w - w2).min(axis=1)),
    }


def snap_quadratic(n_modes: int = N_MODES) -> np.ndarray:
    """Coefficients ``(p0, p1, p2)`` of the axial strain on the snap path, ``P(Delta)``.

    At the bifurcation tension ``8 T = -(4 pi)^2`` the symmetric amplitudes are linear in
    Delta, so their axial strain ``S`` is a quadratic ``P = p0 + p1 Delta + p2 Delta^2``
    that does not depend on Q, and the 4 pi mode amplitude is
    ``a2^2 = -4/(3 Q^2) - P(Delta)/(4 pi)^2`` wherever that is positive.

    Returns
    -------
    ndarray, shape (3,)
    """
    m = 2.0 * np.arange(1, n_modes) + 1.0
    lam = (2.0 * _PI * m) ** 2
    T = np.full(3, -(4.0 * _PI) ** 2 / 8.0)
    S = _symmetric_state(T, np.array([0.0, 1.0, 2.0]), 0.0, lam)[4]
    p2 = 0.5 * (S[2] - 2.0 * S[1] + S[0])
    return np.array([S[0], S[1] - S[0] - p2, p2])


def snap_threshold(coef: np.ndarray) -> float:
    """Smallest Q whose stroke reaches the snap path (2.3145 with 40 modes), from :func:`snap_quadratic`."""
    p0, p1, p2 = coef
    return math.sqrt(16.0 * p2 * (4.0 * _PI) ** 2 / (3.0 * (p1 * p1 - 4.0 * p2 * p0)))


def snap_strokes(Q: np.ndarray, coef: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Strokes / h where the 4 pi mode appears and vanishes again, ``Delta_b1 <= Delta_b2``.

    Parameters
    ----------
    Q : ndarray, shape (n,)
        Rise / thickness, >= 0.
    coef : ndarray, shape (3,)
        :func:`snap_quadratic`.

    Returns
    -------
    D1, D2 : ndarray, shape (n,)
        Ends of the snap path (the roots of ``a2^2 = 0``); both equal to the vertex
        ``-p1 / (2 p2)`` where the path is not reached (Q <= 2.3145 with 40 modes).
    """
    p0, p1, p2 = coef
    with np.errstate(divide="ignore"):
        disc = (p1 * p1 - 4.0 * p2 * p0) - (16.0 * p2 * (4.0 * _PI) ** 2 / 3.0) / (Q * Q)
    half = np.sqrt(np.maximum(disc, 0.0)) * (0.5 / p2)
    mid = -p1 / (2.0 * p2)
    return mid - half, mid + half


def snap_deltas(q: np.ndarray, coef: np.ndarray) -> np.ndarray:
    """Delta at the columns of the stress tables, one row per Q, shape (nq, sum(SNAP_COLUMNS) + 1).

    Three blocks of :data:`SNAP_COLUMNS` ``(n1, n2, n3)`` cells: ``Delta = D1 z`` before the
    snap path, ``Delta = D1 + (D2 - D1)(1 - cos theta)/2`` on it (theta = 0..pi, so that
    ``a2`` ~ sin theta is smooth in the column index: no square-root onset at either
    end) and ``D2 + (DELTA_MAX - D2) z`` after it, z = 0..1 in equal steps; D1, D2 from
    :func:`snap_strokes`. :func:`snap_columns` is the inverse.
    """
    n1, n2, n3 = SNAP_COLUMNS
    D1, D2 = (v[:, None] for v in snap_strokes(np.asarray(q, dtype=float), coef))
    pre = D1 * (np.arange(n1 + 1) / n1)
    on = D1 + (D2 - D1) * (0.5 - 0.5 * np.cos(_PI * np.arange(1, n2 + 1) / n2))
    post = D2 + (DELTA_MAX - D2) * (np.arange(1, n3 + 1) / n3)
    return np.concatenate((pre, on, post), axis=1)


def snap_columns(D: np.ndarray, Q: np.ndarray, coef: np.ndarray) -> np.ndarray:
    """Column coordinate (in cells) of the stress tables for strokes ``D`` = u/h.

    Parameters
    ----------
    D : ndarray, shape (n, m)
        Strokes / rise, >= 0.
    Q : ndarray, shape (n,)
        Rise / thickness.
    coef : ndarray, shape (3,)
        :func:`snap_quadratic`.

    Returns
    -------
    ndarray, shape (n, m)
        Inverse of :func:`snap_deltas`; beyond DELTA_MAX it grows linearly.
    """
    n1, n2, n3 = SNAP_COLUMNS
    D1, D2 = snap_strokes(Q, coef)
    s = np.minimum(D, D1[:, None])
    s *= (n1 / D1)[:, None]
    r = np.subtract(D, D1[:, None])
    r *= (-2.0 / np.maximum(D2 - D1, 1e-12))[:, None]
    r += 1.0
    np.clip(r, -1.0, 1.0, out=r)
    np.arccos(r, out=r)
    r *= n2 / _PI
    s += r
    np.subtract(D, D2[:, None], out=r)
    np.maximum(r, 0.0, out=r)
    r *= (n3 / (DELTA_MAX - D2))[:, None]
    s += r
    return s


def build_table(q: np.ndarray | None = None, n_modes: int = N_MODES) -> dict[str, np.ndarray]:
    """The normalised tables over ``q`` (default :func:`q_nodes`).

    Returns
    -------
    dict with ``Q`` (nq,), ``Delta`` (nd,) = :func:`delta_nodes`, ``snap_quadratic`` (3,);
    on the Delta columns, each (nq, nd): ``F`` and ``band`` (height / h of the band swept
    by the beam up to Delta); on the :func:`snap_deltas` columns, each (nq, ns): ``sigma``
    and ``sigma_peak`` (its running maximum over Delta).
    """
    q = q_nodes() if q is None else np.asarray(q, dtype=float)
    d = delta_nodes()
    coef = snap_quadratic(n_modes)
    QQ, DD = np.meshgrid(q, d, indexing="ij")
    sol = galerkin(QQ.ravel(), DD.ravel(), n_modes=n_modes)
    F = sol["F"].reshape(QQ.shape)
    band = 1.0 - np.minimum.accumulate(np.minimum(sol["w_lo"].reshape(QQ.shape), 0.0), axis=1)
    ds = snap_deltas(q, coef)
    sig = galerkin(np.repeat(q, ds.shape[1]), ds.ravel(), n_modes=n_modes)["sigma"].reshape(ds.shape)
    return {
        "Q": q, "Delta": d, "snap_quadratic": coef, "F": F, "band": band,
        "sigma": sig, "sigma_peak": np.maximum.accumulate(sig, axis=1),
    }


@lru_cache(maxsize=1)
def table() -> dict:
    """The shipped table, loaded once: ``Q``, ``Delta`` and ``snap_quadratic`` arrays and a
    :class:`RowTable` for each of ``F``, ``band``, ``sigma`` and ``sigma_peak``."""
    with resources.files("springsynth").joinpath("data").joinpath(TABLE_FILE).open("rb") as fh:
        with np.load(fh) as z:
            raw = {k: np.asarray(z[k], dtype=float) for k in z.files}
    out: dict = {k: raw.pop(k) for k in ("Q", "Delta", "snap_quadratic")}
    out.update({k: RowTable(v) for k, v in raw.items()})
    return out


class Arch(ElementKind):
    """Clamped cosine arch with guided centre shuttle; kernels as in the module notes.

    Shapes: ``p`` values (n,), ``u`` (n, m); returns (n, m).
    """

    @staticmethod
    def _lookup(p, u, key):
        """Table ``key`` at strokes ``u`` (n, m): Delta columns (F, band)."""
        tab = table()
        h, t = p["rise_mm"], p["thickness_mm"]
        iq, wq = row_weights(h / t, tab["Q"])
        return tab[key](iq, wq, u * (1.0 / (DELTA_STEP * h))[:, None])

    @staticmethod
    def _lookup_snap(p, u, key):
        """Table ``key`` at strokes ``u`` (n, m): snap-path columns (sigma, sigma_peak)."""
        tab = table()
        h, t = p["rise_mm"], p["thickness_mm"]
        Q = h / t
        iq, wq = row_weights(Q, tab["Q"])
        return tab[key](iq, wq, snap_columns(u * (1.0 / h)[:, None], Q, tab["snap_quadratic"]))

    def force(self, p, mat, u):
        l, b, t, h = p["length_mm"], p["width_mm"], p["thickness_mm"], p["rise_mm"]
        f = self._lookup(p, u, "F")
        f *= (mat.E * b * t**3 * h / (12.0 * l**3))[:, None]    # E I h / l^3
        return f

    def stress(self, p, mat, u):
        l, t, h = p["length_mm"], p["thickness_mm"], p["rise_mm"]
        sigma = self._lookup_snap(p, u, "sigma")
        sigma *= (mat.E * t * h / l**2)[:, None]
        return sigma

    def peak_stress_ratio(self, p, mat, u):
        """Largest stress / allowable over the whole stroke 0..max(u), shape (n,)."""
        l, t, h = p["length_mm"], p["thickness_mm"], p["rise_mm"]
        umax = np.max(u, axis=1)[:, None]
        peak = (mat.E * t * h / l**2) * self._lookup_snap(p, umax, "sigma_peak")[:, 0]
        return peak / self.allowable(p, mat)

    def stroke_reach(self, p):
        return DELTA_MAX * p["rise_mm"]

    def stroke_marks(self, p):
        """The ends of the snap path, ``Delta_b1 h`` and ``Delta_b2 h``, and where the curve bends: six
        points on the rise before the path and twelve on the stiffening rise after it (the path
        itself is straight); NaN below the threshold Q, where the curve is smooth."""
        h = p["rise_mm"]
        d1, d2 = snap_strokes(h / p["thickness_mm"], table()["snap_quadratic"])
        rise = d1[:, None] * np.linspace(0.15, 0.9, 6)[None, :]
        after = d2[:, None] + (DELTA_MAX - d2)[:, None] * (np.arange(1, 13) / 13.0)[None, :]
        marks = np.concatenate([d1[:, None], d2[:, None], rise, after], axis=1)
        return np.where((d2 > d1)[:, None], marks * h[:, None], np.nan)

    def validity_margins(self, p, mat, u_max):
        l, t, h = p["length_mm"], p["thickness_mm"], p["rise_mm"]
        q_hi = float(table()["Q"][-1])
        return {
            "rise_thickness": (h / t) / q_hi - 1.0,
            "stroke_rise": (u_max / h) / DELTA_MAX - 1.0,
            "shallowness": (h / l) / SHALLOW_LIMIT - 1.0,
            "slenderness": SLENDERNESS_MIN * t / l - 1.0,
        }

    def box(self, p, u_max):
        h, t = p["rise_mm"], p["thickness_mm"]
        band = self._lookup(p, u_max[:, None], "band")[:, 0]
        along = h * np.maximum(band, u_max / h) + t
        return along, p["length_mm"].copy(), p["width_mm"].copy()

    def mass(self, p, mat, u_max=None):
        l, b, t, h = p["length_mm"], p["width_mm"], p["thickness_mm"], p["rise_mm"]
        arc = l * (1.0 + (_PI * h / l) ** 2 / 4.0)          # cosine arc length, shallow
        return mat.rho * arc * b * t * DENSITY_TO_G_PER_MM3


KIND = Arch(
    name="arch",
    glyph="arch",
    verification="clamped_span",
    verify_quick=False,
    title="cosine pre-curved arch, clamped ends, centre load on a guided shuttle: softening, negative stiffness, snap-through",
    params=(
        Param("length_mm", "mm", 5.0, 200.0, log=True, doc="span l between the clamps", tolerance="linear"),
        Param("width_mm", "mm", 0.5, 50.0, log=True, doc="beam width b", tolerance="width"),
        Param("thickness_mm", "mm", 0.02, 5.0, log=True, thickness=True, doc="beam thickness t (bending direction)", tolerance="strip",
              stock="strip"),
        Param("rise_mm", "mm", 0.05, 20.0, log=True, doc="as-made mid-span rise h", tolerance="linear",
              step="offset"),
    ),
    forms=("strip",),
    validity=(
        "shallow-arch theory, symmetric modes (shuttle guided): rise/thickness Q <= 24, stroke <= 2.2 x rise, "
        f"rise/span <= {SHALLOW_LIMIT}, span/thickness >= {SLENDERNESS_MIN:g}; elastic, ideal clamps; "
        "bistable (force crosses zero) for Q > 2.309"
    ),
    sources=(
        "J. Qiu, J.H. Lang & A.H. Slocum, A curved-beam bistable mechanism, J. Microelectromech. Syst. "
        "13(2):137-146, 2004",
        "multimode Galerkin solution computed for this project (F_top 743.2, F_bot -368.9 E I h/l^3 at Q = 10; "
        "Qiu et al. quote ~740 / ~370, eqs. 43-44)",
    ),
    stroke_note="u = travel of the centre shuttle from the as-made position towards and through the clamp line",
    monotonic_stress=False,
    monotonic_force=False,
    stress_note="bending stress from the curvature change (worst point of the span) plus the axial stress N/A",
)


if __name__ == "__main__":  # regenerate the shipped table
    import pathlib

    out = pathlib.Path(__file__).resolve().parents[1] / "data" / TABLE_FILE
    tab = build_table()
    np.savez_compressed(out, **{k: v.astype(np.float64 if v.ndim == 1 else np.float32) for k, v in tab.items()})
    print(f"wrote {out} ({tab['F'].shape[0]} x {tab['F'].shape[1]})")
