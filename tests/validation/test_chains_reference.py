"""Chains of links in series against references computed here, independently of the chain solver.

Sources of the check values:

* Springs in series: the compliances add, ``1/k = 1/k1 + 1/k2`` (R.G. Budynas & J.K. Nisbett,
  Shigley's Mechanical Engineering Design, 9th ed., McGraw-Hill 2011, ch. 10; W.C. Young &
  R.G. Budynas, Roark's Formulas for Stress and Strain, 7th ed., 2002; the rule is in every
  spring handbook). The coil rate is ``k = G d^4 / (8 D^3 Na)`` (Shigley ch. 10, eq. 10-9 in
  the 9th edition [equation number from memory]).
* A limit point under a compliant loading device (J.M.T. Thompson & G.W. Hunt, A General
  Theory of Elastic Stability, Wiley 1973): loaded through a spring of stiffness k, a structure
  whose own stiffness falls below -k loses stability where ``dF/ds = -k`` on its falling
  branch, past its force maximum, and jumps at constant stroke to the next equilibrium.
* For every kind pair the reference is the brute-force composition of the two kernels,
  computed here by other means than the chain solver: a scalar root search per stroke
  (``scipy.optimize.brentq``) on ``sum_k g_k(F) = x``, each ``g_k`` itself a root search on
  the kernel; through a falling link, the first root along a fine scan of its own stroke
  (40 001 points, refined by brentq). The largest deviation per pair, in % of the largest
  force, is printed (``pytest -s``) for the record.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import brentq

from springsynth.assembly.design import Chain, Design, Element
from springsynth.assembly.evaluate import evaluate_design
from springsynth.elements import get_kind
from springsynth.model.materials import MaterialArrays, catalogue

CAT = catalogue()


def el(kind: str, material: str, count: int = 1, **params) -> Element:
    return Element(kind, material, count, 0.0, params)


def chain_design(*links: Element, count: int = 1, offset: float = 0.0) -> Design:
    return Design((Chain(tuple(links), count, offset),), {e.material: CAT[e.material] for e in links}, name="c")


def kernel_force(e: Element, u) -> np.ndarray:
    """Force of all copies of a link, straight from its kind's kernel (0 at u <= 0)."""
    k = get_kind(e.kind)
    p = {n: np.array([v]) for n, v in e.values().items()}
    u = np.atleast_1d(np.asarray(u, dtype=float))
    f = k.force(p, MaterialArrays.of(CAT[e.material]), u[None, :])[0] * e.count
    return np.where(u > 0, f, 0.0)


def inverse(e: Element, F: float) -> float:
    """The link's stroke at force F by a scalar root search (its left inverse; 0 for F <= 0)."""
    if F <= 0.0 or kernel_force(e, 1e-12)[0] >= F:
        return 0.0
    hi = 1e-3
    while kernel_force(e, hi)[0] < F:
        hi *= 2.0
        if hi > 1e4:            # a link whose force saturates below F (a ribbon's plateau): no stroke carries it
            return math.inf
    return brentq(lambda u: kernel_force(e, u)[0] - F, 0.0, hi, xtol=1e-14, rtol=1e-13)


def monotone_reference(links, x) -> np.ndarray:
    """F(x) from ``sum_k g_k(F) = x`` by brentq, every g_k by brentq on its kernel."""
    out = []
    for xv in x:
        hi = 1.0
        while sum(inverse(e, hi) for e in links) < xv:
            hi *= 2.0
        out.append(brentq(lambda F: sum(inverse(e, F) for e in links) - xv, 0.0, hi, xtol=1e-12, rtol=1e-12))
    return np.array(out)


def falling_reference(links, x, s_max: float, n_scan: int = 40001):
    """First equilibrium along the path parametrised by the falling link's own stroke s.

    Returns the force at each x and the chain stroke of the first fold (a local maximum of
    the path's stroke), both from a fine scan refined by brentq.
    """
    a = next(i for i, e in enumerate(links) if not get_kind(e.kind).monotonic_force)
    others = [e for i, e in enumerate(links) if i != a]

    def stroke(s):
        F = max(float(kernel_force(links[a], s)[0]), 0.0)
        return s + sum(inverse(e, F) for e in others), F

    ss = np.linspace(0.0, s_max, n_scan)
    Fs = np.maximum(kernel_force(links[a], ss), 0.0)
    us = ss.copy()
    for e in others:    # the others' inverse along the scan from a fine table of each
        ug = np.linspace(0.0, 3.0 * s_max + 20.0, 400001)
        us += np.interp(Fs, np.maximum.accumulate(kernel_force(e, ug)), ug)
    ref = []
    for xv in x:
        j = int(np.argmax(us >= xv))
        s0 = brentq(lambda s: stroke(s)[0] - xv, ss[j - 1], ss[j], xtol=1e-12) if j else 0.0
        ref.append(stroke(s0)[1])
    d = np.diff(us)
    fold = np.flatnonzero((d[:-1] > 0) & (d[1:] <= 0))
    if not fold.size:
        return np.array(ref), math.nan
    i = fold[0] + 1                                    # refine the local maximum of the path's stroke
    fine = np.linspace(ss[i - 1], ss[i + 1], 2001)
    return np.array(ref), max(stroke(s)[0] for s in fine)


def largest_deviation_pct(d: Design, x, ref, *, snap=math.nan, window=0.02) -> float:
    """100 max|F_chain - F_ref| / max|F_ref| over the strokes (those within ``window`` mm of a snap left out:
    the jump's position is compared on its own)."""
    f = evaluate_design(d, x).force_N[0]
    keep = np.isfinite(ref) & ~(np.abs(x - snap) <= window)
    return 100.0 * float(np.max(np.abs(f[keep] - ref[keep]))) / float(np.max(np.abs(ref[keep])))


COIL = el("helical_compression", "music_wire", wire_diameter_mm=0.7, mean_diameter_mm=5.0, active_coils=7,
          free_length_mm=22.0)
COIL_SOFT = el("helical_compression", "music_wire", wire_diameter_mm=0.8, mean_diameter_mm=6.0, active_coils=8,
               free_length_mm=30.0)
COLUMN = el("column", "stainless_17_7ph", length_mm=36.0, width_mm=4.0, thickness_mm=0.25, rise_mm=0.0, ends="pinned")
ARCH = el("arch", "stainless_17_7ph", length_mm=40.0, width_mm=5.0, thickness_mm=0.2, rise_mm=1.0)


# --------------------------------------------------------------------------- series compliance

def test_series_compliance_adds():
    """Two coil springs in series: 1/k = 1/k1 + 1/k2 (Shigley ch. 10; Roark), k_i = G d^4 / (8 D^3 Na)."""
    a = el("helical_compression", "music_wire", wire_diameter_mm=0.8, mean_diameter_mm=6.0, active_coils=8,
           free_length_mm=40.0)
    b = el("helical_compression", "music_wire", 2, wire_diameter_mm=1.0, mean_diameter_mm=8.0, active_coils=6,
           free_length_mm=40.0)
    G = CAT["music_wire"].G_MPa
    k1 = G * 0.8**4 / (8 * 6.0**3 * 8)
    k2 = 2 * G * 1.0**4 / (8 * 8.0**3 * 6)           # two copies in parallel inside the link
    x = np.linspace(0.0, 10.0, 21)
    r = evaluate_design(chain_design(a, b, count=3), x)
    k = 3.0 / (1.0 / k1 + 1.0 / k2)                   # three chains in parallel
    assert r.force_N[0] == pytest.approx(k * x, rel=1e-6, abs=1e-9)
    # the deflections split in the ratio of the compliances and add up to the stroke
    u1, u2 = r.element_stroke_mm[0, 0], r.element_stroke_mm[0, 1]
    assert u1 + u2 == pytest.approx(x, abs=1e-9)
    assert u1[1:] / u2[1:] == pytest.approx(np.full(20, k2 / k1), rel=1e-6)
    assert np.isnan(r.snap_mm[0])


def test_gap_preload_and_count_act_on_the_chain_as_a_whole():
    x = np.linspace(0.0, 6.0, 25)
    base = evaluate_design(chain_design(COIL, COLUMN), x + 0.5).force_N[0]
    pre = evaluate_design(chain_design(COIL, COLUMN, offset=-0.5), x).force_N[0]
    assert pre == pytest.approx(base, rel=1e-9, abs=1e-9)
    gap = evaluate_design(chain_design(COIL, COLUMN, count=2, offset=1.0), x).force_N[0]
    ref = 2 * evaluate_design(chain_design(COIL, COLUMN), np.maximum(x - 1.0, 0.0)).force_N[0]
    assert np.all(gap[x <= 1.0] == 0.0) and gap == pytest.approx(ref, rel=1e-9, abs=1e-9)


def test_coil_and_column_ramp_then_plateau_at_the_euler_load():
    """A coil spring pushing a straight column: the coil's ramp, then the column's post-buckled plateau.

    Reference (S.P. Timoshenko & J.M. Gere, Theory of Elastic Stability, 1961, sec. 2.7, pinned
    elastica): ``P/P_cr = (2 K(m)/pi)^2`` with ``Delta_b/L = 2 (1 - E(m)/K(m))``, ``m = k^2``,
    ``P_cr = pi^2 E I / L^2``; the column's stroke is ``Delta_b + P L/(E A)``. Solved here for
    P at the column's own stroke along the chain.
    """
    from scipy.special import ellipe, ellipk

    E = CAT["stainless_17_7ph"].E_MPa
    L, b, t = 36.0, 4.0, 0.25
    Pcr = math.pi**2 * E * (b * t**3 / 12.0) / L**2
    x = np.linspace(0.0, 8.0, 81)
    r = evaluate_design(chain_design(COIL, COLUMN), x)
    f = r.force_N[0]
    k = CAT["music_wire"].G_MPa * 0.7**4 / (8 * 5.0**3 * 7)
    below = f < 0.95 * Pcr
    assert f[below] == pytest.approx(k * x[below], rel=2e-3)      # the column is nearly rigid before it buckles
    assert np.all(np.diff(f) >= -1e-12)
    u_col = r.element_stroke_mm[0, 1, -1]

    def shortening(m):          # column stroke at the elastica state m, mm
        P = Pcr * (2.0 * ellipk(m) / math.pi) ** 2
        return L * 2.0 * (1.0 - ellipe(m) / ellipk(m)) + P * L / (E * b * t) - u_col

    m = brentq(shortening, 1e-12, 0.9)
    assert f[-1] == pytest.approx(Pcr * (2.0 * ellipk(m) / math.pi) ** 2, rel=1e-3)
    assert f[-1] / Pcr == pytest.approx(1.0 + (u_col / L) / 2.0, rel=0.01)   # first order: P/P_cr ~ 1 + Delta/(2 L)


# --------------------------------------------------------------------------- snaps

def test_snap_under_a_compliant_device_against_a_first_root_search():
    """Thompson & Hunt 1973: through a soft spring an arch snaps where its stiffness reaches -k."""
    d = chain_design(COIL_SOFT, ARCH)
    x = np.linspace(0.05, 6.0, 60)
    r = evaluate_design(d, x)
    snap = r.snap_mm[0]
    ref, fold = falling_reference((COIL_SOFT, ARCH), x, 2.2)
    assert math.isfinite(snap) and snap == pytest.approx(fold, rel=1e-3)
    assert largest_deviation_pct(d, x, ref, snap=snap) < 0.1
    # the limit-point condition: at the fold the arch's stiffness passes minus the spring's rate (here at
    # the corner where its snap path begins: rising before it, falling more steeply than -k after it)
    k = float(kernel_force(COIL_SOFT, 1.0)[0])
    at = evaluate_design(d, np.array([snap * (1 - 1e-7)]))
    s = at.element_stroke_mm[0, 1, 0]
    h = 2e-3
    left = float(kernel_force(ARCH, s)[0] - kernel_force(ARCH, s - h)[0]) / h
    right = float(kernel_force(ARCH, s + h)[0] - kernel_force(ARCH, s)[0]) / h
    assert left > -k > right
    assert snap == pytest.approx(s + float(kernel_force(ARCH, s)[0]) / k, rel=1e-4)   # u = s + F / k at the fold
    # the force jumps down at the snap, at constant stroke: at the fold itself the pre-snap force, just past it the
    # landing state's (the same stroke range, with the snap's stroke added to the points)
    r2 = evaluate_design(d, x, at_snaps=True)
    i = int(np.flatnonzero(r2.x_mm == r2.snap_mm[0])[0])
    assert r2.snap_mm[0] == pytest.approx(snap, abs=1e-12)
    assert r2.force_N[0, i + 1] < 0.5 * r2.force_N[0, i] and r2.x_mm[i + 1] - r2.x_mm[i] < 1e-8


def test_a_stiff_device_does_not_snap_and_follows_the_arch():
    """Through a device much stiffer than the arch's steepest fall the stroke is imposed on the arch
    (rigid loading device): no fold, the chain's force is the arch's own (no tension: clipped at 0)."""
    stiff = el("helical_compression", "music_wire", wire_diameter_mm=3.0, mean_diameter_mm=12.0, active_coils=3,
               free_length_mm=30.0)
    d = chain_design(stiff, ARCH)
    x = np.linspace(0.0, 2.1, 43)
    r = evaluate_design(d, x)
    assert np.isnan(r.snap_mm[0])
    ref, fold = falling_reference((stiff, ARCH), x, 2.2)
    assert np.isnan(fold)
    assert largest_deviation_pct(d, x, ref) < _TOL_PCT
    assert np.all(r.force_N[0] >= 0.0) and np.any(kernel_force(ARCH, x) < 0.0)


# --------------------------------------------------------------------------- every kind pair

_PAIRS = {
    "helical_compression + column": ((COIL, COLUMN), 8.0, None),
    "helical_compression + column (curved, clamped)": (
        (COIL, el("column", "stainless_17_7ph", length_mm=40.0, width_mm=5.0, thickness_mm=0.3, rise_mm=1.5,
                  ends="clamped")), 8.0, None),
    "blade_guided + column": ((el("blade_guided", "stainless_17_7ph", 2, length_mm=24.0, width_mm=6.0,
                                  thickness_mm=0.25), COLUMN), 6.0, None),
    "wire_guided + blade_clamped": ((el("wire_guided", "music_wire", length_mm=30.0, wire_diameter_mm=0.8),
                                     el("blade_clamped", "stainless_17_7ph", length_mm=40.0, width_mm=5.0,
                                        thickness_mm=0.2)), 6.0, None),
    "helical_extension + blade_cantilever": ((el("helical_extension", "music_wire", wire_diameter_mm=0.8,
                                                 mean_diameter_mm=6.0, active_coils=12, initial_tension_N=3.0),
                                              el("blade_cantilever", "stainless_17_7ph", length_mm=30.0, width_mm=8.0,
                                                 thickness_mm=0.3)), 8.0, None),
    "elastomer_pad + helical_compression": ((el("elastomer_pad", "natural_rubber", length_mm=20.0, width_mm=20.0,
                                                thickness_mm=5.0), COIL), 5.0, None),
    "notch_parallelogram + helical_compression": ((el("notch_parallelogram", "aluminium_7075_t6", length_mm=30.0,
                                                      width_mm=6.0, thickness_mm=0.4, notch_radius_mm=6.0), COIL),
                                                  5.0, None),
    "contact_sphere + helical_compression": ((el("contact_sphere", "stainless_17_7ph", radius_mm=5.0), COIL), 3.0, None),
    "ribbon + blade_guided": ((el("ribbon", "stainless_302", width_mm=10.0, thickness_mm=0.1, natural_radius_mm=10.0),
                               el("blade_guided", "stainless_17_7ph", 2, length_mm=24.0, width_mm=6.0,
                                  thickness_mm=0.25)), 6.0, None),
    "helical_compression + arch": ((COIL_SOFT, ARCH), 6.0, 2.2),
    "column + arch": ((COLUMN, ARCH), 4.0, 2.2),
    "blade_guided + arch": ((el("blade_guided", "stainless_17_7ph", 2, length_mm=24.0, width_mm=6.0,
                                thickness_mm=0.25), ARCH), 6.0, 2.2),
    "helical_compression + column + blade_guided": ((COIL, COLUMN, el("blade_guided", "stainless_17_7ph", 2,
                                                                      length_mm=24.0, width_mm=6.0,
                                                                      thickness_mm=0.25)), 8.0, None),
}
#: the deviation allowed: each link's table is piecewise linear (40 steps over its reach, marks at
#: corners and sharp bends), the composition of the tables exact
_TOL_PCT = 0.5


@pytest.mark.slow
@pytest.mark.parametrize("name", sorted(_PAIRS))
def test_chain_force_against_independently_composed_curves(name):
    links, stroke, s_max = _PAIRS[name]
    d = chain_design(*links)
    x = np.linspace(0.0, stroke, 21)[1:]
    r = evaluate_design(d, x)
    assert r.finite[0] and r.validity_worst[0] <= 0.0         # every link inside its model's range
    if s_max is None:
        ref, fold = monotone_reference(links, x), math.nan
    else:
        ref, fold = falling_reference(links, x, s_max)
    snap = r.snap_mm[0]
    assert (math.isnan(fold) and math.isnan(snap)) or snap == pytest.approx(fold, rel=2e-3)
    dev = largest_deviation_pct(d, x, ref, snap=snap)
    print(f"\n{name}: largest deviation {dev:.4f} % of the largest force" + (f"; snap at {snap:.4f} mm "
          f"(reference {fold:.4f} mm)" if math.isfinite(snap) else ""))
    assert dev < _TOL_PCT


@pytest.mark.slow
def test_verify_composes_the_chain_from_the_links_independent_curves():
    """`verify`: each link re-solved by its own independent method (the coil by Castigliano's energy
    integral, the column by an elastica boundary-value problem), the chain composed from those curves by
    the same loading-path construction; the composed force stays within the verification threshold."""
    from springsynth.checks.verify import THRESHOLD_PCT, verify_design

    d = chain_design(COIL, COLUMN)
    rep = verify_design(d, np.linspace(0.0, 6.0, 13))
    assert [e.kind for e in rep.elements] == ["helical_compression", "column"]
    assert all(e.verified for e in rep.elements)
    assert len(rep.chains) == 1 and rep.chains[0].force_dev_pct < THRESHOLD_PCT
    assert rep.force_kernel_N == pytest.approx(evaluate_design(d, rep.x_mm).force_N[0])
    frame = rep.to_frame()
    assert "chain 1" in set(frame["element"])


@pytest.mark.slow
def test_verify_asks_a_link_only_for_the_travel_the_chain_gives_it(tmp_path):
    """A preloaded coil spring loading a short cantilever blade: the chain's stroke from free (10 mm, the
    preload included) exceeds the blade's length, but along the loading path the blade deflects far less.
    Its elastica (solve_bvp) must be solved over that range only, converge, and the composed chain agree
    with the kernel within the verification threshold (the elastica fails to converge near 1.02 L)."""
    from springsynth.checks.verify import THRESHOLD_PCT, verify_design

    path = tmp_path / "coil-blade.toml"
    path.write_text('name = "coil-blade"\n[[chain]]\ncount = 3\noffset_mm = -4.0\n'
                    '[[chain.element]]\nkind = "helical_compression"\nmaterial = "beryllium_copper"\ncount = 1\n'
                    'wire_diameter_mm = 0.7\nmean_diameter_mm = 5.7\nactive_coils = 23.25\nfree_length_mm = 29.3\n'
                    '[[chain.element]]\nkind = "blade_cantilever"\nmaterial = "beryllium_copper"\ncount = 1\n'
                    'length_mm = 6.3\nwidth_mm = 6.7\nthickness_mm = 0.3\n')
    from springsynth.io.design_toml import load_design

    d = load_design(path)
    x = np.linspace(0.0, 6.0, 13)
    blade_travel = float(np.max(evaluate_design(d, x).element_stroke_mm[0, 1]))
    assert blade_travel < 0.5 * 6.3                       # the premise: the path keeps the blade well short of L
    rep = verify_design(d, x)
    assert all(e.verified for e in rep.elements), [e.note for e in rep.elements]
    assert rep.chains[0].force_dev_pct < THRESHOLD_PCT
