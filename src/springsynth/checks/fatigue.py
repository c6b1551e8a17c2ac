"""Fatigue under a duty: each element's stress range judged by a published criterion.

Every criterion here is a straight failure line in the plane of mean and alternating
stress (a Goodman line; for the elastomer criterion a line of constant peak strain)::

    fatigue_ratio = sigma_a / A + sigma_m / M

with ``A`` the alternating strength at zero mean for the required life and ``M`` the mean
intercept. Under proportional loading (the load line from the origin through the operating
point) the factor of safety is ``n = 1 / fatigue_ratio``: a ratio <= 1 survives the duty.
sigma_m = (high + low)/2 and sigma_a = (high - low)/2 of the stress range of one duty cycle
(:mod:`springsynth.assembly.duty`); the kinds give the governing stress as a magnitude, so
sigma_m >= 0, where the Goodman line applies (a compressive mean would earn no credit: it is
taken as 0).

Criteria by what an element's place reads (``ElementKind.fatigue``):

* ``torsion``, coil-spring wire (R.G. Budynas & J.K. Nisbett, *Shigley's Mechanical
  Engineering Design*, 9th ed., ch. 10, fatigue of helical springs): the shear carries the
  curvature correction K_B as the kinds compute it; ``M = S_su = 0.67 S_ut(d)``. For a steel
  spring wire (``zimmerli``) the Goodman line passes through Zimmerli's infinite-life point,
  S_sa = 241 MPa at S_sm = 379 MPa unpeened, 398 at 534 MPa shot-peened, so
  ``A = S_se = S_sa / (1 - S_sm / S_su)``; these are infinite-life data (no life estimate;
  conservative for a shorter duty). A material with its own figure (``fatigue_MPa`` at
  ``fatigue_cycles``, fully reversed normal stress) uses ``A = 0.577 S_f(N)`` (distortion
  energy; Shigley ch. 6 [memory: load factor k_c = 0.59 for torsion in the 9th ed.]).
* ``wire_bending``, spring wire in bending (hooks, wire flexures): ``M = S_ut(d)``; the
  material's own figure gives ``A = S_f(N)``, else a Zimmerli wire's ``A = S_se / 0.577``, as
  Shigley does for the bending of an extension spring's hook [memory: ch. 10 example].
* ``normal``, strips, plates and bars in bending or axial load: the modified Goodman line
  ``A = S_f(N)``, ``M = S_ut`` with the material's own figure (Shigley ch. 6).
* ``shear``, the shear stress below a contact: ``A = 0.577 S_f(N)``, ``M = 0.67 S_ut``.
* ``elastomer``: the maximum-strain criterion (W.V. Mars & A. Fatemi, A literature survey on
  fatigue analysis approaches for rubber, Int. J. Fatigue 24:949-961, 2002, for the family),
  ``fatigue_ratio = eps_max / eps_f(N)`` (the line ``A = M = eps_f``): no credit is taken for
  a minimum strain (strain-crystallising natural rubber does gain from one). The strain-life
  line ``eps_f(N) = eps_f(N_ref) (N_ref / N)^(1 / (2F))`` follows from a crack-growth rate
  ``da/dN ~ T^F`` with tearing energy T ~ W ~ eps^2 (A.N. Gent, P.B. Lindley & A.G. Thomas,
  J. Appl. Polym. Sci. 8:455-466, 1964), F = 2 for natural rubber [memory].

``S_f(N)``, the fatigue strength at N cycles, is the Basquin line in log-log coordinates
through ``f S_ut`` at 10^3 cycles (f = 0.9) and the material's figure at its cycles,
extended beyond them (no endurance limit assumed: conservative for steels) and held at
``f S_ut`` below 10^3 cycles (Shigley ch. 6, eqs. 6-13 to 6-16, which anchor the line at the
endurance limit at 10^6 [memory: equation numbers of the 9th ed.]). The estimated life is the
N at which the criterion gives exactly 1: ``S_f(N) = sigma_rev = sigma_a / (1 - sigma_m / M)``.

A place whose stress peaks inside the stroke counts two cycles per duty cycle (its kind says
so); a material without the figure its kind reads cannot be used under a duty
(:func:`fatigue_data_missing`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from springsynth.assembly.design import Design
from springsynth.assembly.duty import duty_loads
from springsynth.assembly.slots import Slots
from springsynth.elements import ElementKind, FatigueLoad, get_kind
from springsynth.model.errors import InputError
from springsynth.model.materials import Material, MaterialArrays
from springsynth.model.study import Duty

__all__ = ["CRITERIA", "ZIMMERLI_UNPEENED_MPA", "ZIMMERLI_PEENED_MPA", "zimmerli_endurance", "basquin_strength",
           "basquin_life", "goodman_ratio", "Judgement", "judge", "fatigue_population", "fatigue_design",
           "FatigueReport", "ElementFatigue", "fatigue_data_missing", "check_fatigue_data"]

#: Zimmerli's infinite-life point for steel spring wire under 10 mm, (S_sa, S_sm) in MPa (Shigley ch. 10)
ZIMMERLI_UNPEENED_MPA = (241.0, 379.0)
ZIMMERLI_PEENED_MPA = (398.0, 534.0)
#: torsional ultimate strength / tensile ultimate, S_su = 0.67 S_ut (Shigley ch. 10)
SHEAR_ULTIMATE_SHARE = 0.67
#: shear fatigue strength / normal fatigue strength (distortion energy, Shigley ch. 6)
SHEAR_FROM_NORMAL = 0.577
#: fatigue strength at 10^3 cycles / S_ut (Shigley ch. 6)
F_1000 = 0.9
N_LOW = 1e3
#: crack-growth exponent F of the elastomer strain-life line (natural rubber; Gent, Lindley & Thomas 1964) [memory]
ELASTOMER_EXPONENT = 2.0

#: every criterion by the mode a kind's place declares (``ElementKind.fatigue``), in words
CRITERIA = {
    "torsion": "Goodman line in torsion (Shigley ch. 10): Zimmerli's data or the material's own figure",
    "wire_bending": "modified Goodman for spring wire in bending: the material's own figure or Zimmerli's S_se/0.577",
    "normal": "modified Goodman with the material's S-N figure (Basquin line, Shigley ch. 6)",
    "shear": "Goodman line in shear: 0.577 S_f(N) and 0.67 S_ut",
    "elastomer": "maximum-strain criterion with the material's fatigue strain (Mars & Fatemi 2002)",
}


# --------------------------------------------------------------------------- published pieces

def zimmerli_endurance(sut_MPa, peened) -> np.ndarray:
    """Torsional endurance at zero mean on the Goodman line through Zimmerli's point, MPa.

    ``S_se = S_sa / (1 - S_sm / S_su)``, ``S_su = 0.67 S_ut`` (Shigley ch. 10). NaN where
    ``S_su <= S_sm`` (a wire too weak for Zimmerli's data). Arrays broadcast.
    """
    ssa = np.where(peened, ZIMMERLI_PEENED_MPA[0], ZIMMERLI_UNPEENED_MPA[0])
    ssm = np.where(peened, ZIMMERLI_PEENED_MPA[1], ZIMMERLI_UNPEENED_MPA[1])
    ssu = SHEAR_ULTIMATE_SHARE * np.asarray(sut_MPa, dtype=float)
    with np.errstate(all="ignore"):
        return np.where(ssu > ssm, ssa / (1.0 - ssm / ssu), np.nan)


def _basquin_slope(su, s_ref, n_ref, f):
    """Exponent b of ``S = f S_u (N / 10^3)^b`` through (10^3, f S_u) and (n_ref, s_ref) (<= 0)."""
    with np.errstate(all="ignore"):
        b = np.log10(s_ref / (f * su)) / np.log10(n_ref / N_LOW)
    return np.minimum(b, -1e-9)


def basquin_strength(su, s_ref, n_ref, n, *, f: float = F_1000) -> np.ndarray:
    """Fatigue strength at ``n`` cycles on the Basquin line, MPa (arrays broadcast).

    The line runs in log-log coordinates through ``f su`` at 10^3 cycles and ``s_ref`` at
    ``n_ref`` cycles (Shigley ch. 6: ``S_f = a N^b``, ``a = (f S_ut)^2 / S_e`` and
    ``b = -log10(f S_ut / S_e) / 3`` for ``n_ref = 10^6``); below 10^3 cycles it is held at
    ``f su``, beyond ``n_ref`` it continues.
    """
    b = _basquin_slope(su, s_ref, n_ref, f)
    return f * su * (np.maximum(n, N_LOW) / N_LOW) ** b


def basquin_life(s, su, s_ref, n_ref, *, f: float = F_1000) -> np.ndarray:
    """Cycles at which the Basquin line reaches the fully reversed stress ``s`` (inverse of
    :func:`basquin_strength`; below 10^3 cycles the line is extrapolated)."""
    b = _basquin_slope(su, s_ref, n_ref, f)
    with np.errstate(all="ignore"):
        return N_LOW * (np.asarray(s, dtype=float) / (f * su)) ** (1.0 / b)


def goodman_ratio(alternating, mean, A, M) -> np.ndarray:
    """``sigma_a / A + sigma_m / M``: 1 / the factor of safety under proportional loading."""
    with np.errstate(all="ignore"):
        return alternating / A + mean / M


# --------------------------------------------------------------------------- criteria

@dataclass(frozen=True)
class Judgement:
    """One place of a group of elements judged over the duty; arrays shape (r,).

    ``mean``, ``alternating``, ``allowable`` (A, the alternating strength at zero mean) and
    ``mean_limit`` (M) in MPa, or as strains for ``unit = "-"``; ``life`` in cycles (NaN where
    the criterion gives none, inf without an alternating part); ``basis`` names the data used.
    """

    mode: str
    unit: str
    mean: np.ndarray
    alternating: np.ndarray
    allowable: np.ndarray
    mean_limit: np.ndarray
    ratio: np.ndarray
    life: np.ndarray
    required: np.ndarray
    basis: np.ndarray


def _life_from_rev(rev_strength_of_life, a, m, M):
    """Life where ``A(N) = sigma_rev = sigma_a / (1 - sigma_m / M)`` (0 at or beyond M, inf with no sigma_a)."""
    with np.errstate(all="ignore"):
        rev = a / (1.0 - m / M)
        life = rev_strength_of_life(rev)
    return np.where(m >= M, 0.0, np.where(a <= 0.0, np.inf, life))


def _normal_strengths(load: FatigueLoad, mat: MaterialArrays, n, scale: float):
    """``A = scale S_f(n)`` on the material's own figure and the life function in the same units."""
    su, s_ref, n_ref = load.ultimate, mat.fatigue, mat.fatigue_cycles
    A = scale * basquin_strength(su, s_ref, n_ref, n)

    def life(rev):
        return basquin_life(rev / scale, su, s_ref, n_ref)

    return A, life


def judge(load: FatigueLoad, mat: MaterialArrays, duty: Duty, *, detail: bool = True) -> Judgement:
    """Judge one place's stress range over ``duty`` by the criterion of its mode (module notes).

    ``detail=False`` leaves out the life and the basis (NaN and empty): what a search needs.
    """
    lo, hi = load.low, load.high
    mean, alt = 0.5 * (hi + lo), 0.5 * (hi - lo)
    n = duty.cycles * load.per_duty
    if load.mode == "elastomer":
        return _elastomer(load, mat, n, mean, alt)
    own = np.isfinite(mat.fatigue)
    if load.mode in ("torsion", "shear"):
        M, scale = SHEAR_ULTIMATE_SHARE * load.ultimate, SHEAR_FROM_NORMAL
    elif load.mode in ("wire_bending", "normal"):
        M, scale = load.ultimate, 1.0
    else:
        raise ValueError(f"unknown fatigue mode {load.mode!r}")
    A_own, life_own = _normal_strengths(load, mat, n, scale)
    zim = ~own & mat.zimmerli & (load.mode in ("torsion", "wire_bending"))
    A = np.where(own, A_own, np.nan)
    if zim.any():
        A = np.where(zim, zimmerli_endurance(load.ultimate, duty.shot_peened) * (scale / SHEAR_FROM_NORMAL), A)
    ratio = goodman_ratio(alt, np.maximum(mean, 0.0), A, M)      # a compressive mean earns no credit
    if not detail:
        return Judgement(load.mode, "MPa", mean, alt, A, M, ratio, np.full(n.shape, np.nan), n, np.array([]))
    life = np.where(own, _life_from_rev(life_own, alt, np.maximum(mean, 0.0), M), np.nan)
    peened = "peened" if duty.shot_peened else "unpeened"
    basis = np.where(own, "material figure", np.where(zim, f"Zimmerli {peened}", "no fatigue data"))
    return Judgement(load.mode, "MPa", mean, alt, A, M, ratio, life, n, basis)


def _elastomer(load: FatigueLoad, mat: MaterialArrays, n, mean, alt) -> Judgement:
    """Maximum-strain criterion with the power-law strain-life line (module notes)."""
    k = 1.0 / (2.0 * ELASTOMER_EXPONENT)
    with np.errstate(all="ignore"):
        eps_f = mat.fatigue_strain * (mat.fatigue_cycles / n) ** k
        peak = mean + alt
        life = np.where(peak > 0, mat.fatigue_cycles * (mat.fatigue_strain / peak) ** (1.0 / k), np.inf)
    basis = np.where(np.isfinite(mat.fatigue_strain), "material fatigue strain", "no fatigue data")
    return Judgement("elastomer", "-", mean, alt, eps_f, eps_f, goodman_ratio(alt, mean, eps_f, eps_f), life, n, basis)


# --------------------------------------------------------------------------- a population and a design

def fatigue_population(slots: Slots, duty: Duty) -> np.ndarray:
    """Worst fatigue ratio over the elements and places of each design, shape (n,).

    ``duty`` must be resolved (``stroke_max_mm`` set). A place without the data its criterion
    reads, or whose model returns no finite stress, gives inf (never feasible).
    """
    worst = np.zeros(slots.n)
    for g in duty_loads(slots, duty.stroke_min_mm, duty.stroke_max_mm):
        for load in g.loads.values():
            r = judge(load, g.materials, duty, detail=False).ratio
            r = np.where(np.isfinite(r), r, np.inf)
            worst[g.rows] = np.maximum(worst[g.rows], r)
    return worst


@dataclass(frozen=True)
class ElementFatigue:
    """One place of one element of a design, judged over the duty (stresses in ``unit``)."""

    element: int            # 1-based, as the columns e<j>_ of pareto.csv and `evaluate`
    kind: str
    place: str              # "" for the governing stress of the kind
    mode: str
    basis: str
    unit: str               # "MPa", or "-" for an elastomer's strain
    low: float
    high: float
    mean: float
    alternating: float
    allowable: float        # A: alternating strength at zero mean for the required life
    mean_limit: float       # M: mean intercept of the failure line
    ratio: float
    life_cycles: float      # NaN: the criterion gives no life (infinite-life data)
    required_cycles: float


@dataclass(frozen=True)
class FatigueReport:
    """Every element of a design judged over a duty; ``ratio`` is the worst."""

    duty: Duty
    places: tuple[ElementFatigue, ...]

    @property
    def ratio(self) -> float:
        r = [p.ratio if math.isfinite(p.ratio) else math.inf for p in self.places]
        return max(r) if r else 0.0


def fatigue_design(design: Design, duty: Duty | None = None) -> FatigueReport:
    """Judge every element of ``design`` over ``duty`` (default: the design's own, resolved).

    Raises
    ------
    InputError
        When there is no duty, its stroke is not resolved, or a material lacks the fatigue
        figure its kind reads (:func:`check_fatigue_data`).
    """
    duty = duty if duty is not None else design.duty
    if duty is None or duty.stroke_max_mm is None:
        raise InputError("no resolved [duty] to judge fatigue against", where=design.name)
    for e in design.elements:
        check_fatigue_data(get_kind(e.kind), design.materials[e.material], where=design.name)
    slots = Slots.from_designs([design])
    places = []
    for g in duty_loads(slots, duty.stroke_min_mm, duty.stroke_max_mm):
        for name, load in g.loads.items():
            jd = judge(load, g.materials, duty)
            places.append(ElementFatigue(
                element=g.slot + 1, kind=g.kind.name, place=name, mode=jd.mode, basis=str(jd.basis[0]),
                unit=jd.unit, low=float(load.low[0]), high=float(load.high[0]), mean=float(jd.mean[0]),
                alternating=float(jd.alternating[0]), allowable=float(jd.allowable[0]),
                mean_limit=float(jd.mean_limit[0]), ratio=float(jd.ratio[0]), life_cycles=float(jd.life[0]),
                required_cycles=float(jd.required[0])))
    places.sort(key=lambda p: p.element)
    return FatigueReport(duty, tuple(places))


# --------------------------------------------------------------------------- data a material needs

def fatigue_data_missing(kind: ElementKind, material: Material) -> str | None:
    """The material field the fatigue check of ``kind`` needs and ``material`` lacks (None: has it)."""
    if kind.fatigue == "elastomer":
        return None if math.isfinite(material.fatigue_strain) else "fatigue_strain"
    if math.isfinite(material.fatigue_MPa):
        return None
    if kind.fatigue in ("torsion", "wire_bending") and material.zimmerli:
        return None
    return "fatigue_MPa"


def check_fatigue_data(kind: ElementKind, material: Material, *, where: str) -> None:
    """Raise a one-line :class:`InputError` when ``material`` cannot be judged in ``kind`` under a duty."""
    field = fatigue_data_missing(kind, material)
    if field is None:
        return
    what = ("the peak nominal strain of a cycle from zero survived for fatigue_cycles" if field == "fatigue_strain"
            else "the fully reversed fatigue strength at fatigue_cycles")
    raise InputError(f"material {material.id!r} has no fatigue data for {kind.name} under a [duty]: define it "
                     f"inline as [materials.<new id>] with {field} ({what}; fatigue_cycles defaults to 1e7), "
                     f"or leave it out", where=where)
