"""Clamped-clamped blade loaded at mid-span: bending plus stretching (strong hardening).

Notes
-----
A blade of span L, width b and thickness t (I = b t^3/12, A = b t) is clamped at both
ends, which cannot move towards each other; a transverse force F at mid-span moves it
by the stroke u = delta. Once delta is comparable with t, the blade must stretch to
deflect and the axial tension N makes it harden from ``F = 192 E I delta / L^3``
(Roark; common practice) towards the membrane law ``F = 8 E A delta^3 / L^3``.

Model: moderate-rotation (von Karman) beam with a uniform tension N. With
kappa = sqrt(N / E I) and the tension parameter a = kappa L / 4, the exact solution of
``E I w'''' - N w'' = F delta_D(x - L/2)`` for clamped ends gives, on the half-span,

    w'(x) = F / (2 N) [1 - cosh(kappa x - a) / cosh a]
    delta = F / (2 N) [L/2 - (2/kappa) tanh a]                         (derived here)
    F     = 192 E I delta / L^3 * R(a),         R = a^3 / (3 (a - tanh a))
    M_clamp = M_centre = E I kappa^2 delta tanh a / (2 (a - tanh a))
    eps   = (1/2L) int w'^2 dx = c(a) delta^2 / L^2,
            c = a (2a - 3 tanh a + a sech^2 a) / (a - tanh a)^2         (2.4 -> 2)

and the stretching closes the system, ``N = E I (4a/L)^2 = A sigma_axial(eps)``. For a
linear material ``sigma_axial = E eps``, so ``(4/3) a^2 = c(a) (delta/t)^2``: a, and with
it ``F L^3 / (E I t)``, depends on delta/t alone. That normalised curve is tabulated
once (lazily, regular grid in delta/t, 0..64, step 1/32) and read with arithmetic
indexing; it reproduces the exact tension solution within 1e-5 and matches the
checked values 327.088 at delta = t and 15324.134 at delta = 5t. The cubic law
k1 x + k3 x^3 (k3 = 11.52 EA/L^3) is not used: it is 19 % high at delta = 5t.

Stress: the two moments are equal, so
``sigma = 6 M / (b t^2) + N / A = E t delta B(a) / L^2 + sigma_axial``, with
B = 4 a^2 tanh a / (a - tanh a) (-> 12, the linear 12 E t delta / L^2).

Hyperelastic strip (``law`` not linear): large-deflection chord model
---------------------------------------------------------------------
A thin elastomer strip only shows its law (softening, for most elastomers) at membrane
strains of 10-60 %, i.e. delta/L of 0.2-0.6, far beyond moderate rotation (at
delta/L = 0.08 the membrane strain is ~1.5 % and any law changes the force by ~1 %).
Hyperelastic rows are therefore solved in closed form by a chord-frame model
(derived here), not with the table:

* Each half-span runs from the clamp (0, 0) to the load point (L/2, delta). Its chord
  has the exact angle phi = atan q, q = 2 delta/L, and length L_c = (L/2) sqrt(1 + q^2);
  the clamped ends sit at -phi to the chord and the half-span is point-symmetric about
  its middle (also in the exact large-rotation problem).
* In the chord frame the half-span is a beam-column with end slopes -phi under the
  chord tension T, solved with the linear theory above but relative to the chord,
  where the only rotations are those of the bending boundary layers. With
  b = (L_c/2) sqrt(T / (lambda E I)) (lambda E I: stiffness per stretched length of a
  rod with M = E I dtheta/ds, s the unstretched arc length):

      end moment        M = 6 lambda E I phi h(b) / L_c,    h = b^2 tanh b / (3 (b - tanh b))
      transverse force  Q = 2 M / L_c                        (perpendicular to the chord)
      stretch           lambda L/2 = L_c (1 + phi^2 G(b) / 2),
                        G = (b^2 sech^2 b / 2 + b tanh b / 2 - tanh^2 b) / (b - tanh b)^2
      force             F = 2 (T sin phi + Q cos phi),       T = A P(lambda)

  with P the uniaxial nominal stress of the material's Ogden series at the mean
  stretch lambda of the centreline (uniform tension). h runs from 1 (pure bending,
  F = 192 E I delta / L^3) to ~b/3, G from 1/5 to ~1/(2b) (string: lambda =
  sqrt(1 + q^2), F = 2 A P(lambda) q / lambda, the exact membrane law).
* For small angles (phi -> q, L_c -> L/2, lambda E I -> E I) these are exactly the
  moderate-rotation relations above (b = a, 2 (1 + G) = c, F = 2 N q a / (a - tanh a)):
  the model extends the exact tension solution. For large b it is the string with
  exact large-rotation kinematics plus bending boundary layers of length
  sqrt(E I / T) at the clamps and the load point; only the end rotations relative to
  the chord inside those layers are linearised (relative error ~ phi^2/24 of an
  O(t/L) correction).
* The closure lambda -> T -> b -> G -> lambda contracts (factor ~ 1/(4 b) for large b,
  small for small b): from G = 1/5, one pass with the small-strain modulus and one with
  the law reach ~2e-4 in force (checked for tpu, natural rubber, silicone).
* So that hyperelastic strips keep the previous behaviour where moderate rotation
  holds, the exact kinematic functions (phi, sin phi, cos phi, L_c and lambda in the
  bending stiffness) are blended with their moderate-rotation forms by a smoothstep
  weight w of delta/L: w = 0 up to ROTATION_LIMIT = 0.08 (the model then is the exact
  moderate-rotation closure of the tension solution with the material's law) and
  w = 1 from BLEND_END = 0.10.

Checked against an extensible elastica with the material's law, computed in
tests/validation/test_elastomer_blade.py (solve_bvp on the half span, axial stretch
from the axial force through the law, M = E I dtheta/ds): within 0.6 % for
L/t = 20..200, tpu, natural rubber and silicone, w = 1, delta/L up to
HYPER_ROTATION_LIMIT; the largest deviation, ~1.9 %, is at delta/L = 0.08 where the
moderate-rotation form is kept. Approximations: uniform axial stretch (the axial force
varies only in the boundary layers), a uniaxial state (narrow strip; a wide strip in
plane strain is up to 4/3 stiffer axially for an incompressible material), linear
bending with the small-strain modulus E, no shear deformation.

Stress of hyperelastic strips (against ``yield_MPa``, the allowable nominal stress of
elastomers): the nominal stress of the material's own law at the most stretched
fibre, ``P(1 + eps_f)``, at the clamp: ``eps_f = (lambda_c - 1) + eps_b``, with the clamp
bending strain ``eps_b = (t/2) M / (E I) = 3 lambda t phi h(b) / L_c`` and the clamp
axial stretch ``lambda_c - 1 = (lambda - 1) cos phi`` (there the axial force is the
horizontal one, ~ T cos phi; secant estimate, conservative for a softening law); at
large rotation eps_b takes the exact boundary-layer turn 2 sin(phi/2) for phi and the
stiffness at lambda_c (factor sinc(phi/2) sqrt(lambda_c/lambda)). Against the
elastica's largest lam - 1 + (t/2)|M|/(E I) this peak fibre strain is 0-2 % high up
to delta/L = 0.3 and at most 6 % high at 0.6 (L/t = 20..200). At small strain
P(1 + eps_f) equals the linear convention (axial plus bending stress); at large strain
it does not overstate a softening material as E eps_b would. Where w = 0 the previous
measure ``E eps_b + lambda P(lambda)`` (bending plus true axial stress, strain
``lambda - 1 + eps_b``) is kept; the two are blended with w. The clamp bending strain
of a stretched strip does not shrink with its thickness, ~ 2 sin(phi/2) sqrt(3 P/E):
about 0.35 for tpu at delta/L = 0.3.

Validity: delta/t <= 64 (table range; the requirement is >= 5; linear materials only,
hyperelastic rows do not use the table), moderate rotation delta/L <= 0.08 for linear
materials (the string limit then differs from the finite-rotation extensible elastica
by about 3 (delta/L)^2 <= 2 %), delta/L <= HYPER_ROTATION_LIMIT for hyperelastic
strips (chord model, as verified), slenderness L/t >= 20 (shear adds ~12.5 (t/L)^2 of
the compliance, Timoshenko beam; <= 3 %), and for hyperelastic materials the peak
fibre nominal strain eps_f within the material's strain limit.

References: the exact tension solution above (derived for this project; check values
F L^3/(E I t) = 327.088 at delta = t, 15 324.134 at 5 t, computed from it); W.C. Young &
R.G. Budynas, Roark's Formulas for Stress and Strain (192 E I / L^3, FL/8 moments);
S. Timoshenko & J.N. Goodier / S. Timoshenko & S. Woinowsky-Krieger for the
stretching beam (memory); R.W. Ogden, Proc. R. Soc. Lond. A 326:565, 1972.
"""

from __future__ import annotations

from functools import lru_cache
from typing import NamedTuple

import numpy as np

from springsynth.elements._base import DENSITY_TO_G_PER_MM3, ElementKind, Param
from springsynth.elements._stretching import RegularTable, ogden_uniaxial_nominal

#: Table range and step in delta/t.
X_TABLE = 64.0
X_STEP = 1.0 / 32.0
#: Largest delta/L of the moderate-rotation model (string limit: ~3 (delta/L)^2 error).
ROTATION_LIMIT = 0.08
#: Smallest span / thickness (Timoshenko shear correction ~12.5 (t/L)^2 <= 3 %).
SLENDERNESS_MIN = 20.0
#: End of the blend from moderate-rotation to exact chord kinematics (hyperelastic rows), delta/L.
BLEND_END = 0.10
#: Largest delta/L of the large-deflection chord model for hyperelastic strips (verified).
HYPER_ROTATION_LIMIT = 0.6
#: Fixed-point passes for the hyperelastic stretching closure (the first with the
#: small-strain modulus, the others with the law).
_HYPER_PASSES = 2
#: Points per block of the kernels (keeps their temporaries small and in cache).
_BLOCK_POINTS = 32768
#: Points per row from which the hyperelastic rows go law by law (fewer, or fewer than _BLOCK_POINTS in
#: all: one pass, mixed laws; each pass has a fixed cost of some 150 numpy calls).
_LAW_GROUP_POINTS = 16
#: Below this b the chord functions take their b -> 0 limits (error ~ b^2/15 < 1e-5).
_B_MIN = 0.01


def tension_solution(a: np.ndarray) -> dict[str, np.ndarray]:
    """Exact moderate-rotation solution parametrised by the tension parameter a > 0.

    Parameters
    ----------
    a : ndarray, shape (k,)
        ``a = kappa L / 4``, ``kappa = sqrt(N / E I)``; use a >= 0.02 (cancellation below).

    Returns
    -------
    dict of ndarray, each shape (k,)
        ``x`` = delta/t for a linear material, ``R`` = F / (192 E I delta / L^3),
        ``B`` = sigma_bending L^2 / (E t delta), ``c`` = eps L^2 / delta^2.
    """
    th = np.tanh(a)
    d = a - th
    J = 2.0 * a - 3.0 * th + a / np.cosh(a) ** 2
    c = a * J / d**2
    return {
        "x": np.sqrt(4.0 * a**2 / (3.0 * c)),
        "R": a**3 / (3.0 * d),
        "B": 4.0 * a**2 * th / d,
        "c": c,
    }


@lru_cache(maxsize=1)
def normalised_tables() -> dict[str, RegularTable]:
    """The tension solution resampled on the regular delta/t grid (built once, ~ms).

    Returns
    -------
    dict of RegularTable over x = delta/t in [0, X_TABLE], step X_STEP:
    ``R`` (force ratio), ``B`` (bending stress factor), ``c`` (strain factor) and
    ``S`` = sigma L^2 / (E t^2) for a linear material = x B + c x^2.
    """
    a = np.linspace(0.02, 110.0, 40001)
    sol = tension_solution(a)
    # exact small-deflection limits at a = 0
    xs = np.concatenate(([0.0], sol["x"]))
    grid = np.arange(0.0, X_TABLE + 0.5 * X_STEP, X_STEP)
    out = {}
    for key, lim in (("R", 1.0), ("B", 12.0), ("c", 2.4)):
        out[key] = np.interp(grid, xs, np.concatenate(([lim], sol[key])))
    out["S"] = grid * out["B"] + out["c"] * grid**2
    return {k: RegularTable(0.0, X_STEP, v) for k, v in out.items()}


def _floor_at(a: np.ndarray, lo: float) -> None:
    """``a = max(a, lo)`` in place: on large arrays with clip (scalar bounds: twice as fast as a maximum),
    on small ones with maximum (clip costs more calls)."""
    if a.size > 4096:
        np.clip(a, lo, np.inf, out=a)
    else:
        np.maximum(a, lo, out=a)


def chord_functions(b: np.ndarray, with_h: bool = True):
    """``G(b)`` (stretch) and ``h(b)`` (end moment) of the chord model, see the notes.

    Parameters
    ----------
    b : ndarray, any shape
        Chord tension parameter ``(L_c/2) sqrt(T / (lambda E I))`` >= 0. Overwritten
        (clipped to the small-b floor).
    with_h : bool
        Also return ``h`` (the fixed-point passes need only ``G``).

    Returns
    -------
    G, h : ndarray, same shape (``h`` None unless ``with_h``)
        ``G = (b^2 sech^2 b / 2 + b tanh b / 2 - tanh^2 b) / (b - tanh b)^2`` in (0, 1/5],
        ``h = b^2 tanh b / (3 (b - tanh b))`` >= 1.
    """
    _floor_at(b, _B_MIN)
    th = np.tanh(b)
    d = b - th
    th2 = th * th
    G = 1.0 - th2                                   # sech^2
    G *= b
    G += th
    G *= 0.5
    G *= b
    G -= th2
    G /= d
    G /= d
    if not with_h:
        return G, None
    h = np.multiply(b, b, out=th2)
    h *= th
    h /= d
    h *= 1.0 / 3.0
    return G, h


class _Chord(NamedTuple):
    """Kinematics of the half-span chord (module notes), arrays of shape (k, m).

    ``phi``, ``sinp``, ``cosp``: the chord angle, its sine and cosine (blended with their
    moderate-rotation forms q, q, 1); ``chord_r``: L_c / (L/2); ``s``: the chord stretch.
    Without ``blend`` (moderate rotation everywhere) ``phi`` and ``sinp`` are ``q`` itself
    and ``cosp``, ``chord_r`` are None.
    """

    blend: bool
    phi: np.ndarray
    sinp: np.ndarray
    cosp: np.ndarray | None
    chord_r: np.ndarray | None
    s: np.ndarray


def hyperelastic_solution(L, t, E, mu, alpha, u):
    """Chord-model state of hyperelastic rows (module notes), all arrays shape (k, m).

    Parameters
    ----------
    L, t, E : ndarray, shape (k,)
        Span, thickness (mm) and small-strain modulus (MPa).
    mu, alpha : ndarray, shape (k, N_OGDEN)
        Ogden series of the law.
    u : ndarray, shape (k, m)
        Mid-span travel, mm, >= 0.

    Returns
    -------
    dict of ndarray, each shape (k, m)
        ``F_per_width`` force per unit width (N/mm), ``lam`` mean axial stretch,
        ``P`` nominal axial stress (MPa), ``eps_b`` clamp bending strain of the chord
        model, ``fibre`` peak fibre nominal strain at the clamp, ``w`` the blend weight
        (0: moderate-rotation kinematics, 1: exact chord kinematics).

    Notes
    -----
    Steps: the blend weight (:func:`_blend_weight`), the chord kinematics
    (:func:`_chord_kinematics`), the stretching closure (:func:`_stretch_closure`), the
    force and clamp bending strain (:func:`_force_and_bending_strain`) and, where the
    rotation is large, the clamp's fibre strain (:func:`_large_rotation_fibre`). Written
    with in-place operations: for large populations the temporaries, not the arithmetic,
    dominate the cost.
    """
    Ec = E[:, None]
    tc = t[:, None]
    q = u * (2.0 / L)[:, None]                      # 2 delta / L
    w, tmp = _blend_weight(q)
    chord = _chord_kinematics(q, w, tmp)
    half_L = (0.5 * L)[:, None]
    kb = (0.5 * L * np.sqrt(3.0 / E) / t)[:, None]  # b = kb (L_c/(L/2)) sqrt(P / lambda_b)
    lam, P, h, lam_b, work = _stretch_closure(chord, w, Ec, kb, mu, alpha)
    F, eps_b = _force_and_bending_strain(chord, h, lam_b, P, Ec, tc, half_L, work)
    fibre = lam - 1.0
    fibre += eps_b                                  # peak fibre nominal strain (moderate rotation)
    if chord.blend:
        fibre += _large_rotation_fibre(chord, lam, eps_b, w, tmp, work)
    return {"F_per_width": F, "lam": lam, "P": P, "eps_b": eps_b, "fibre": fibre, "w": w}


def _blend_weight(q):
    """Smoothstep weight of delta/L from ROTATION_LIMIT (0) to BLEND_END (1), and a work array.

    ``q = 2 delta / L``, shape (k, m). Returns ``w`` and a free work array, both (k, m).
    """
    inv_band = 1.0 / (BLEND_END - ROTATION_LIMIT)
    w = q * (0.5 * inv_band)
    w -= ROTATION_LIMIT * inv_band
    np.clip(w, 0.0, 1.0, out=w)                     # x = (delta/L - 0.08) / 0.02 in [0, 1]
    tmp = w * w
    w *= -2.0
    w += 3.0
    w *= tmp                                        # smoothstep x^2 (3 - 2 x)
    return w, tmp


def _chord_kinematics(q, w, tmp) -> _Chord:
    """Chord angle, its sine and cosine, chord length and stretch, blended with weight ``w``.

    ``q = 2 delta / L`` and ``w``, shape (k, m); ``tmp`` a work array (overwritten). The
    exact chord values (``phi = atan q``, ``L_c / (L/2) = sqrt(1 + q^2)``) replace the
    moderate-rotation ones (``q``, ``1 + q^2/2``) as ``w`` goes from 0 to 1.
    """
    blend = bool(w.any())
    q2 = np.multiply(q, q, out=tmp)
    s = q2 * 0.5
    s += 1.0                                        # moderate rotation: 1 + q^2/2
    if not blend:                                   # moderate rotation everywhere
        return _Chord(False, q, q, None, None, s)
    s_ex = q2 + 1.0
    np.sqrt(s_ex, out=s_ex)                         # exact sqrt(1 + q^2)
    phi = np.arctan(q)
    phi -= q
    phi *= w
    phi += q
    cosp = 1.0 / s_ex
    sinp = q * cosp
    sinp -= q
    sinp *= w
    sinp += q
    cosp -= 1.0
    cosp *= w
    cosp += 1.0
    np.subtract(s_ex, s, out=tmp)
    tmp *= w
    s += tmp                                        # stretch of the chord
    chord_r = s_ex
    chord_r -= 1.0
    chord_r *= w
    chord_r += 1.0                                  # L_c / (L/2)
    return _Chord(True, phi, sinp, cosp, chord_r, s)


def _stretch_closure(chord: _Chord, w, Ec, kb, mu, alpha):
    """Fixed-point passes lambda -> T -> b -> G -> lambda of the stretching closure.

    Starts from G = 1/5 (bending limit) with a first pass at the small-strain modulus
    (T = E A (lambda - 1)), then ``_HYPER_PASSES`` passes with the law. ``Ec``, ``kb``
    shape (k, 1), ``mu``, ``alpha`` (k, N_OGDEN), the rest (k, m).

    Returns
    -------
    lam, P, h, lam_b, work : ndarray, shape (k, m)
        Mean stretch, nominal axial stress (MPa), end-moment function h(b), the stretch
        in the bending stiffness (None without blend) and a free work array.
    """
    # stretch lambda = s + (phi^2/2) G(b) L_c/(L/2): exact chord kinematics for w = 1, and
    # 1 + c(a) delta^2/L^2 (c = 2 (1 + G)) of the moderate-rotation closure for w = 0
    blend = chord.blend
    gain = chord.phi * chord.phi
    gain *= 0.5
    if blend:
        gain *= chord.chord_r
    lam = gain * 0.2
    lam += chord.s
    P = np.empty_like(lam)
    bb = np.empty_like(lam)
    lam_b = np.empty_like(lam) if blend else None
    chord_r2 = chord.chord_r * chord.chord_r if blend else None
    for k in range(_HYPER_PASSES + 1):
        if k == 0:
            np.subtract(lam, 1.0, out=bb)
            bb *= Ec                                # the law's small-strain (linear) stress
        else:
            ogden_uniaxial_nominal(lam, mu, alpha, out=P)
            np.copyto(bb, P)
        if blend:
            np.subtract(lam, 1.0, out=lam_b)
            lam_b *= w
            lam_b += 1.0                            # lambda in the bending stiffness
            bb /= lam_b
            bb *= chord_r2
        _floor_at(bb, 0.0)
        np.sqrt(bb, out=bb)
        bb *= kb
        last = k == _HYPER_PASSES
        G, h = chord_functions(bb, with_h=last)
        if not last:
            G *= gain
            G += chord.s
            lam = G
    return lam, P, h, lam_b, bb


def _force_and_bending_strain(chord: _Chord, h, lam_b, P, Ec, tc, half_L, work):
    """Force per width ``2 t (P sin phi + E t^2 curv cos phi / L_c)`` and the clamp bending strain.

    The end moment is ``M = 6 E I curv``, ``curv = lambda_b phi h / L_c`` (1/mm); the
    clamp bending strain ``(t/2) M / (E I) = 3 t curv``. ``h`` is overwritten (it becomes
    the bending strain) and ``work`` is a work array; ``Ec``, ``tc``, ``half_L`` shape
    (k, 1), the rest (k, m). Returns ``F_per_width`` (N/mm) and ``eps_b``, shape (k, m).
    """
    curv = h
    curv *= chord.phi
    curv /= half_L
    if chord.blend:
        curv /= chord.chord_r
        curv *= lam_b
    F = curv * (Ec * tc * tc)
    F /= half_L
    if chord.blend:
        F /= chord.chord_r
        F *= chord.cosp
    np.multiply(P, chord.sinp, out=work)
    F += work
    F *= 2.0 * tc
    eps_b = curv
    eps_b *= 3.0 * tc                               # (t/2) M / (E I)
    return F, eps_b


def _large_rotation_fibre(chord: _Chord, lam, eps_b, w, tmp, work):
    """What large rotation adds to the peak fibre strain at the clamp, times ``w``, shape (k, m).

    At the clamp the axial force is the horizontal one, ~ T cos phi (secant estimate of
    its stretch; conservative for a law that softens), and the exact boundary layer turns
    by 2 sin(phi/2) instead of phi, at the stiffness of that stretch. ``tmp`` and
    ``work`` are work arrays (``tmp`` is returned holding the result).
    """
    lam_c = lam - 1.0
    lam_c *= chord.cosp
    lam_c += 1.0
    fac = np.multiply(chord.phi, chord.phi, out=tmp)
    fac *= 0.25                                     # x^2, x = phi/2 <= pi/4
    fac = _sinc_series(fac)                         # sin(x) / x
    np.divide(lam_c, lam, out=work)
    np.sqrt(work, out=work)
    fac *= work
    fac -= 1.0
    fac *= eps_b
    np.subtract(lam_c, lam, out=work)
    fac += work
    fac *= w
    return fac


def _sinc_series(x2: np.ndarray) -> np.ndarray:
    """``sin(x)/x`` from ``x^2`` (overwritten), |x| <= pi/2: Taylor to x^8, error < 3e-9."""
    y = x2 * (-1.0 / 362880.0)
    y += 1.0 / 5040.0
    y *= x2
    y -= 1.0 / 120.0
    y *= x2
    y += 1.0 / 6.0
    y *= x2
    np.subtract(1.0, y, out=x2)
    return x2


class BladeClamped(ElementKind):
    """Clamped-clamped blade with stretching; kernels as in the module notes.

    Linear rows read the moderate-rotation table; hyperelastic rows use the chord
    model (:func:`hyperelastic_solution`). Shapes: ``p`` values (n,), ``u`` (n, m);
    returns (n, m).
    """

    @staticmethod
    def _hyper(p, mat, rows, u, key):
        """One output of the chord model for the hyperelastic ``rows``, shape (len(rows), m).

        ``key`` is a key of :func:`hyperelastic_solution` or ``"stress"``. Evaluated in
        blocks of about _BLOCK_POINTS points (whole rows, vectorised within a block): the
        chord model needs a few dozen full-size temporaries, which cost more than their
        arithmetic once they fall out of the cache. With many points (per row and in all) the rows
        go material law by material law, so that within a block the law's exponents are scalars
        (:func:`ogden_uniaxial_nominal`).
        """
        if u.shape[1] < _LAW_GROUP_POINTS or u.size < _BLOCK_POINTS:   # few points: one pass, mixed laws
            return BladeClamped._hyper_rows(p, mat, rows, u, key)
        law = np.hstack([mat.ogden_mu[rows], mat.ogden_alpha[rows]])
        order = np.lexsort(law.T[::-1])
        law = law[order]
        ends = np.r_[np.flatnonzero((law[1:] != law[:-1]).any(axis=1)) + 1, rows.size]
        out = np.empty(u.shape)
        for start, stop in zip(np.r_[0, ends[:-1]], ends):
            sel = order[start:stop]
            out[sel] = BladeClamped._hyper_rows(p, mat, rows[sel], u[sel], key)
        return out

    @staticmethod
    def _hyper_rows(p, mat, rows, u, key):
        """:meth:`_hyper` for the ``rows`` in blocks, whatever their laws."""
        L, t = p["length_mm"][rows], p["thickness_mm"][rows]
        E, mu, al = mat.E[rows], mat.ogden_mu[rows], mat.ogden_alpha[rows]
        out = np.empty(u.shape)
        step = max(1, _BLOCK_POINTS // max(u.shape[1], 1))
        for i in range(0, u.shape[0], step):
            j = slice(i, i + step)
            out[j] = BladeClamped._hyper_block(L[j], t[j], E[j], mu[j], al[j], u[j], key)
        return out

    @staticmethod
    def _hyper_block(L, t, E, mu, al, u, key):
        """:meth:`_hyper` for one block of rows of one law (arrays as there), shape (k, m)."""
        sol = hyperelastic_solution(L, t, E, mu, al, u)
        if key != "stress":
            return sol[key]
        s = E[:, None] * sol["eps_b"]
        s += sol["lam"] * sol["P"]               # bending + true axial stress (moderate rotation)
        w = sol["w"]
        if w.any():                              # the law's nominal stress at the peak fibre
            fibre = sol["fibre"]
            fibre += 1.0
            fibre = ogden_uniaxial_nominal(fibre, mu, al, out=fibre)
            fibre -= s
            fibre *= w
            s += fibre
        return s

    @staticmethod
    def _table_curve(key, u, t, coef, times_u):
        """``coef T(u / t)`` (times ``u`` when ``times_u``) from the table ``key``, shape (n, m).

        Linear-material kernel of :meth:`force` and :meth:`stress`; ``t`` and ``coef``
        shape (n,). Evaluated in blocks of about _BLOCK_POINTS points written straight
        into the result, so its temporaries stay small and in cache.
        """
        tab = normalised_tables()[key]
        inv = 1.0 / (X_STEP * t)
        out = np.empty(u.shape)
        step = max(1, _BLOCK_POINTS // max(u.shape[1], 1))
        for i in range(0, u.shape[0], step):
            j = slice(i, i + step)
            s = tab.scaled(np.multiply(u[j], inv[j, None], out=out[j]))
            if times_u:
                s *= u[j]
            s *= coef[j, None]
        return out

    def force(self, p, mat, u):
        L, b, t = p["length_mm"], p["width_mm"], p["thickness_mm"]
        hyper = np.flatnonzero(mat.hyperelastic)
        f = self._table_curve("R", u, t, 16.0 * mat.E * b * (t / L) ** 3, times_u=True)   # 192 E I / L^3
        if hyper.size:
            fh = self._hyper(p, mat, hyper, u[hyper], "F_per_width")
            fh *= b[hyper, None]
            f[hyper] = fh
        return f

    def stress(self, p, mat, u):
        L, t = p["length_mm"], p["thickness_mm"]
        sigma = self._table_curve("S", u, t, mat.E * (t / L) ** 2, times_u=False)   # E t^2/L^2 S(delta/t)
        hyper = np.flatnonzero(mat.hyperelastic)
        if hyper.size:
            sigma[hyper] = self._hyper(p, mat, hyper, u[hyper], "stress")
        return sigma

    def validity_margins(self, p, mat, u_max):
        L, t = p["length_mm"], p["thickness_mm"]
        x = u_max / t
        hyper = np.flatnonzero(mat.hyperelastic)
        rot_limit = np.where(mat.hyperelastic, HYPER_ROTATION_LIMIT, ROTATION_LIMIT)
        table = x / X_TABLE - 1.0
        table[hyper] = -1.0                                       # hyperelastic rows use no table
        out = {
            "deflection_range": table,
            "rotation": (u_max / L) / rot_limit - 1.0,
            "slenderness": SLENDERNESS_MIN * t / L - 1.0,
        }
        strain = np.full(L.shape, -1.0)
        if hyper.size:
            fibre = self._hyper(p, mat, hyper, u_max[hyper, None], "fibre")[:, 0]   # peak fibre nominal strain
            strain[hyper] = fibre / mat.strain_limit[hyper] - 1.0
        out["strain"] = strain
        return out

    def box(self, p, u_max):
        return u_max + p["thickness_mm"], p["length_mm"].copy(), p["width_mm"].copy()

    def mass(self, p, mat, u_max=None):
        volume = p["length_mm"] * p["width_mm"] * p["thickness_mm"]
        return mat.rho * volume * DENSITY_TO_G_PER_MM3


KIND = BladeClamped(
    name="blade_clamped",
    glyph="clamped_blade",
    verification="clamped_span",
    title="blade clamped at both (axially fixed) ends, loaded at mid-span; bending plus stretching, strong hardening",
    params=(
        Param("length_mm", "mm", 5.0, 200.0, log=True, doc="span L between the clamps", tolerance="linear"),
        Param("width_mm", "mm", 0.5, 50.0, log=True, doc="blade width b", tolerance="width"),
        Param("thickness_mm", "mm", 0.02, 5.0, log=True, thickness=True, doc="blade thickness t (bending direction)", tolerance="strip",
              stock="strip"),
    ),
    forms=("strip",),
    validity=(
        f"linear materials: moderate rotation delta/L <= {ROTATION_LIMIT}, delta/t <= {X_TABLE:g} (exact tension "
        f"solution, tabulated); hyperelastic strips: delta/L <= {HYPER_ROTATION_LIMIT} (large-deflection chord "
        "model, exact string kinematics with bending boundary layers, verified against an extensible elastica "
        "with the material's law), uniform axial stretch, uniaxial law, peak fibre nominal strain within the "
        f"material's strain limit; L/t >= {SLENDERNESS_MIN:g}; elastic"
    ),
    sources=(
        "exact moderate-rotation tension solution of the clamped-clamped centre-loaded beam "
        "(derived for this project; F L^3/(E I t) = 327.088 at delta = t, 15324.134 at 5 t)",
        "W.C. Young & R.G. Budynas, Roark's Formulas for Stress and Strain (k = 192 EI/L^3, M = FL/8)",
        "R.W. Ogden, Proc. R. Soc. Lond. A 326:565-584, 1972 (uniaxial law for hyperelastic strips)",
        "large-deflection chord model of hyperelastic strips: derived here (module notes), checked against an "
        "extensible elastica with the material's law (tests/validation/test_elastomer_blade.py)",
    ),
    stroke_note="u = transverse travel of the mid-span load point",
    stress_note=("bending stress at the clamps (= at mid-span) plus the axial stress N/A; hyperelastic strips "
                 "beyond moderate rotation: nominal stress of the law at the peak fibre stretch lambda + eps_b"),
)
