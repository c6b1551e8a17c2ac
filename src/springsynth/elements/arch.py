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
symmetric path. With 40 odd modes the function reproduces the normalised peak forces
of the physics sheet sec. 8 (F_top 743.2 / F_bot -368.9 at Q = 10, 653.3 / -279.0 at
Q = 4) and the published multimode values ~740 / ~-370 (Qiu et al. 2004, eqs. 43-44).

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

Table: F, the stress and its running maximum on Q nodes 0..24 (denser near the
bifurcation threshold) x Delta = 0..2.2 step 0.005, computed by
:func:`build_table` (40 odd modes) and shipped as ``springsynth/data/arch_table.npz``
(regenerate with ``python -m springsynth.elements.arch``); the hot path interpolates
bilinearly (rows by a per-design search, columns arithmetically). Interpolation error
of F is below ~1 % of F_top (largest near Q ~ 2.3-3, where the snap-through interval
opens quickly with Q); of the stress a few % (square-root onset of the 4 pi mode).

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
J. Microelectromech. Syst. 13(2):137-146, 2004; physics reference sheet sec. 8;
W.C. Young & R.G. Budynas, Roark's Formulas for Stress and Strain (straight limit).
"""

from __future__ import annotations

import math
from functools import lru_cache
from importlib import resources

import numpy as np

from ._base import DENSITY_TO_G_PER_MM3, ElementKind, Param
from ._stretching import RowTable, row_weights

#: Table axes.
DELTA_MAX = 2.2
DELTA_STEP = 0.005
#: Shallowness and slenderness limits.
SHALLOW_LIMIT = 0.1
SLENDERNESS_MIN = 20.0
#: Odd modes used when building the table.
N_MODES = 40
TABLE_FILE = "arch_table.npz"

_PI = math.pi


def q_nodes() -> np.ndarray:
    """Q nodes of the table, denser where the snap-through interval opens (Q ~ 2.3-4)."""
    return np.round(np.concatenate((
        np.arange(0.0, 2.2, 0.1), np.arange(2.2, 2.5, 0.02), np.arange(2.5, 4.0, 0.05),
        np.arange(4.0, 8.0, 0.1), np.arange(8.0, 24.0 + 1e-9, 0.25),
    )), 10)


def delta_nodes() -> np.ndarray:
    return np.round(np.arange(0.0, DELTA_MAX + 0.5 * DELTA_STEP, DELTA_STEP), 10)


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
        den = lam * (lam + 8.0 * T[:, None])
        G = np.sum(1.0 / den, axis=1)
        a1 = (1.0 - D + l1**2 * G) / (1.0 + l1 * (l1 + 8.0 * T) * G)
        mu = l1 * (a1 * (l1 + 8.0 * T) - l1) / 8.0          # multiplier, F = -mu
        am = 8.0 * mu[:, None] / den
        S = l1 * (a1**2 - 1.0) + np.sum(lam * am**2, axis=1)
        return c * S - T, mu, a1, am, S

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


def build_table(q: np.ndarray | None = None, n_modes: int = N_MODES) -> dict[str, np.ndarray]:
    """The normalised tables over ``q`` (default :func:`q_nodes`) x :func:`delta_nodes`.

    Returns
    -------
    dict with ``Q`` (nq,), ``Delta`` (nd,), ``F``, ``sigma``, ``sigma_peak`` (running
    maximum of sigma over Delta) and ``band`` (height / h of the band swept by the
    beam up to Delta), each (nq, nd).
    """
    q = q_nodes() if q is None else np.asarray(q, dtype=float)
    d = delta_nodes()
    QQ, DD = np.meshgrid(q, d, indexing="ij")
    sol = galerkin(QQ.ravel(), DD.ravel(), n_modes=n_modes)
    F = sol["F"].reshape(QQ.shape)
    sig = sol["sigma"].reshape(QQ.shape)
    band = 1.0 - np.minimum.accumulate(np.minimum(sol["w_lo"].reshape(QQ.shape), 0.0), axis=1)
    return {"Q": q, "Delta": d, "F": F, "sigma": sig, "sigma_peak": np.maximum.accumulate(sig, axis=1), "band": band}


@lru_cache(maxsize=1)
def table() -> dict:
    """The shipped table, loaded once: ``Q`` and ``Delta`` node arrays and a
    :class:`RowTable` for each of ``F``, ``sigma``, ``sigma_peak`` and ``band``."""
    with resources.files("springsynth").joinpath("data").joinpath(TABLE_FILE).open("rb") as fh:
        with np.load(fh) as z:
            raw = {k: np.asarray(z[k], dtype=float) for k in z.files}
    out: dict = {"Q": raw.pop("Q"), "Delta": raw.pop("Delta")}
    out.update({k: RowTable(v) for k, v in raw.items()})
    return out


class Arch(ElementKind):
    """Clamped cosine arch with guided centre shuttle; kernels as in the module notes.

    Shapes: ``p`` values (n,), ``u`` (n, m); returns (n, m).
    """

    @staticmethod
    def _lookup(p, u, key):
        tab = table()
        h, t = p["rise_mm"], p["thickness_mm"]
        iq, wq = row_weights(h / t, tab["Q"])
        return tab[key](iq, wq, u * (1.0 / (DELTA_STEP * h))[:, None])

    def force(self, p, mat, u):
        l, b, t, h = p["length_mm"], p["width_mm"], p["thickness_mm"], p["rise_mm"]
        f = self._lookup(p, u, "F")
        f *= (mat.E * b * t**3 * h / (12.0 * l**3))[:, None]    # E I h / l^3
        return f

    def stress(self, p, mat, u):
        l, t, h = p["length_mm"], p["thickness_mm"], p["rise_mm"]
        sigma = self._lookup(p, u, "sigma")
        sigma *= (mat.E * t * h / l**2)[:, None]
        return sigma

    def peak_stress_ratio(self, p, mat, u):
        """Largest stress / allowable over the whole stroke 0..max(u), shape (n,)."""
        l, t, h = p["length_mm"], p["thickness_mm"], p["rise_mm"]
        umax = np.max(u, axis=1)[:, None]
        peak = (mat.E * t * h / l**2) * self._lookup(p, umax, "sigma_peak")[:, 0]
        return peak / self.allowable(p, mat)

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
    title="cosine pre-curved arch, clamped ends, centre load on a guided shuttle: softening, negative stiffness, snap-through",
    params=(
        Param("length_mm", "mm", 5.0, 200.0, log=True, doc="span l between the clamps"),
        Param("width_mm", "mm", 0.5, 50.0, log=True, doc="beam width b"),
        Param("thickness_mm", "mm", 0.02, 5.0, log=True, thickness=True, doc="beam thickness t (bending direction)"),
        Param("rise_mm", "mm", 0.05, 20.0, log=True, doc="as-made mid-span rise h"),
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
        "multimode Galerkin solution (physics reference sheet sec. 8: F_top 743.2, F_bot -368.9 at Q = 10)",
    ),
    stroke_note="u = travel of the centre shuttle from the as-made position towards and through the clamp line",
    monotonic_stress=False,
    stress_note="bending stress from the curvature change (worst point of the span) plus the axial stress N/A",
)


if __name__ == "__main__":  # regenerate the shipped table
    import pathlib

    out = pathlib.Path(__file__).resolve().parents[1] / "data" / TABLE_FILE
    tab = build_table()
    np.savez_compressed(out, **{k: v.astype(np.float64 if k in ("Q", "Delta") else np.float32) for k, v in tab.items()})
    print(f"wrote {out} ({tab['F'].shape[0]} x {tab['F'].shape[1]})")
