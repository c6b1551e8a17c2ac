"""Tolerance analysis: Monte Carlo over manufacturing tolerances, sensitivities, robust scoring.

Every dimension of every element, each element's position along the stroke (its
offset, hence its gap or preload) and each element's modulus are perturbed by the
tolerance of the process that makes it. A tolerance ``+-T`` is read as ``+-3 sigma``
of a normal distribution (process capability Cp = 1) whose draws beyond ``+-3 sigma``
(0.27 % of them) are set on the limit: clipped, a slight over-statement of the spread
next to parts outside the limits being rejected at inspection. Copies of one element vary together
(one batch; this over-states the spread a little when copies are made separately).

Processes and tolerance classes
-------------------------------
The process follows the parameter, the kind and the material class (metal: E >= 20 GPa;
polymer; elastomer: a hyperelastic law), unless the caller forces one:

=================  ===========================================================================
rolled_strip       strip thickness of metal strip kinds: cold-rolled narrow strip, EN 10140
                   normal tolerances [memory, approximate: +-0.010 mm up to t = 0.1,
                   +-0.015 to 0.25, +-0.020 to 0.4, +-0.025 to 0.6, +-0.030 to 1.0,
                   +-0.035 to 1.5, +-0.045 to 2.5, +-0.050 above]. Slit width +-0.10 mm
                   (EN 10140 slit edge, [memory])
drawn_wire         wire diameter: EN 10270-1 / ASTM A228 spring wire [memory, approximate:
                   +-0.004 mm below 0.25, +-0.008 to 0.5, +-0.010 to 1.0, +-0.015 to 1.6,
                   +-0.020 to 2.5, +-0.025 to 4.0, +-0.030 above]
machined           other metal dimensions (lengths, rise, sphere radius): ISO 2768-m
                   [+-0.05 below 0.5 mm (project choice: the standard starts at 0.5),
                   +-0.1 to 6, +-0.2 to 30, +-0.3 to 120, +-0.5 to 400, +-0.8 above;
                   values recalled from memory]
moulded            polymer strip kinds: DIN 16742 / ISO 20457, approximated as
                   +-(0.04 mm + 0.4 % of the size) [memory, approximate; tool-bound
                   dimensions of a good tool are tighter]
moulded_rubber     elastomer pads: ISO 3302-1 class M2 [memory: +-0.10 to 4 mm, +-0.15 to
                   6.3, +-0.20 to 16, +-0.25 to 25, +-0.35 to 40, +-0.40 to 63, +-0.50 to
                   100, +-0.5 % above]
printed            only when forced: +-max(0.10 mm, 0.3 % of the size) [common practice for
                   powder-bed printing, approximate; printer dependent]
coiling            coil springs: mean diameter and free length +-1.5 % (DIN 2095 quality
                   grade 2, approximate [memory]); active coils +-0.1 coil (position of the
                   coil ends, [common practice estimate]); initial tension +-10 %
                   ([common practice]: makers hold it to about +-10-15 %)
ribbon             natural radius +-5 % ([common practice estimate])
=================  ===========================================================================

Modulus scatter: +-3 % metals, +-10 % polymers, +-15 % elastomers (hardness +-5 Shore A)
[common practice / memory]. Offsets (element position along the stroke): +-0.05 mm for
metal mechanisms (ISO 2768-f on small dimensions), +-0.10 mm otherwise (ISO 2768-m).

Sensitivity (see :func:`tolerance_analysis`): for each perturbed quantity q the
*least-squares elasticity over the stroke*, ``e_q = sum_x F0 * q dF/dq / sum_x F0^2``
(equal to d ln F / d ln q when q scales the whole curve), from central differences,
and its first-order share of the spread ``100 RMS_x(dF/dq sigma_q) / RMS_x(F0)`` (% of
the force, one sigma), by which the quantities are ranked.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, field
from functools import lru_cache

import numpy as np

from springsynth.assembly.design import Design
from springsynth.assembly.evaluate import evaluate_population
from springsynth.assembly.slots import Slots
from springsynth.elements import Param
from springsynth.model.errors import InputError
from springsynth.model.materials import Material

__all__ = ["tolerance_analysis", "ToleranceResult", "robust_error", "PROCESSES", "modulus_tolerance",
           "param_tolerance", "Sigmas", "sigmas", "perturb"]

PROCESSES = ("auto", "rolled_strip", "drawn_wire", "machined", "moulded", "moulded_rubber", "printed")
#: +-T is read as +-3 sigma
SIGMAS_PER_TOLERANCE = 3.0
#: E at or above this (MPa) counts as a metal
METAL_E_MIN = 20_000.0

_STRIP = ((0.10, 0.010), (0.25, 0.015), (0.40, 0.020), (0.60, 0.025), (1.00, 0.030), (1.50, 0.035),
          (2.50, 0.045), (math.inf, 0.050))
_WIRE = ((0.25, 0.004), (0.50, 0.008), (1.00, 0.010), (1.60, 0.015), (2.50, 0.020), (4.00, 0.025),
         (math.inf, 0.030))
_ISO2768M = ((0.5, 0.05), (6.0, 0.1), (30.0, 0.2), (120.0, 0.3), (400.0, 0.5), (math.inf, 0.8))
_RUBBER_M2 = ((4.0, 0.10), (6.3, 0.15), (16.0, 0.20), (25.0, 0.25), (40.0, 0.35), (63.0, 0.40), (100.0, 0.50))

SOURCES = {
    "rolled_strip": "EN 10140 cold-rolled narrow strip, normal thickness tolerance [memory, approximate]",
    "slit_width": "EN 10140 slit width +-0.10 mm [memory]",
    "drawn_wire": "EN 10270-1 / ASTM A228 spring-wire diameter tolerance [memory, approximate]",
    "machined": "ISO 2768-m general tolerances [memory]",
    "moulded": "DIN 16742 / ISO 20457, approx. +-(0.04 mm + 0.4 %) [memory, approximate]",
    "moulded_rubber": "ISO 3302-1 class M2 [memory]",
    "printed": "+-max(0.10 mm, 0.3 %) powder-bed printing [common practice, approximate]",
    "coiling": "DIN 2095 grade 2 approx. +-1.5 % [memory]; active coils +-0.1 [estimate]",
    "initial_tension": "+-10 % [common practice]",
    "ribbon_radius": "+-5 % [common practice estimate]",
    "modulus": "+-3 % metals, +-10 % polymers, +-15 % elastomers [common practice / memory]",
    "offset": "+-0.05 mm metal (ISO 2768-f), +-0.10 mm otherwise (ISO 2768-m)",
}


def _table(values: np.ndarray, table) -> np.ndarray:
    edges = np.array([e for e, _ in table])
    tol = np.array([t for _, t in table])
    return tol[np.minimum(np.searchsorted(edges, values, side="left"), len(tol) - 1)]


def _linear(process: str, v: np.ndarray) -> np.ndarray:
    """+- tolerance of a linear dimension ``v`` (mm) made by ``process``."""
    v = np.abs(np.asarray(v, dtype=float))
    if process == "machined":
        return _table(v, _ISO2768M)
    if process == "moulded":
        return 0.04 + 0.004 * v
    if process == "moulded_rubber":
        return np.where(v > 100.0, 0.005 * v, _table(np.minimum(v, 100.0), _RUBBER_M2))
    if process == "printed":
        return np.maximum(0.10, 0.003 * v)
    if process == "rolled_strip":
        return _table(v, _STRIP)
    if process == "drawn_wire":
        return _table(v, _WIRE)
    raise ValueError(process)


def material_class(E: np.ndarray, hyperelastic: np.ndarray) -> np.ndarray:
    """0 metal, 1 polymer, 2 elastomer; shape of ``E``."""
    return np.where(hyperelastic, 2, np.where(E >= METAL_E_MIN, 0, 1))


def modulus_tolerance(cls: np.ndarray) -> np.ndarray:
    """Relative +- modulus tolerance by material class."""
    return np.array([0.03, 0.10, 0.15])[cls]


def param_tolerance(q: Param, v: np.ndarray, cls: np.ndarray, process: str = "auto") -> np.ndarray:
    """+- tolerance of one parameter (its own unit), shape of ``v`` (0 where not perturbed).

    Parameters
    ----------
    q : Param
        The parameter; its ``tolerance`` class (declared by its kind) picks the process.
    v : ndarray, shape (n,)
        Nominal values.
    cls : ndarray of int, shape (n,)
        Material class per row (see :func:`material_class`).
    process : str
        ``auto`` or one of :data:`PROCESSES` to force it for linear dimensions.
    """
    v = np.asarray(v, dtype=float)
    tc = q.tolerance
    by_cls = lambda: np.select([cls == 0, cls == 1], [_linear("machined", v), _linear("moulded", v)],  # noqa: E731
                               _linear("moulded_rubber", v))
    fixed = {"coils": lambda: np.full(v.shape, 0.1), "coiling": lambda: 0.015 * v, "tension": lambda: 0.10 * v,
             "set_radius": lambda: 0.05 * v, "none": lambda: np.zeros(v.shape)}
    if tc in fixed:
        return fixed[tc]()
    if tc not in ("linear", "width", "strip", "wire"):
        raise ValueError(f"{q.name}: unknown tolerance class {tc!r}")
    if process != "auto":
        if process in ("rolled_strip", "drawn_wire") and tc not in ("strip", "wire"):
            return by_cls()
        return _linear(process, v)
    if tc == "wire":
        return _linear("drawn_wire", v)
    if tc == "strip":
        return np.select([cls == 0, cls == 1], [_linear("rolled_strip", v), _linear("moulded", v)],
                         _linear("moulded_rubber", v))
    if tc == "width":
        return np.where(cls == 0, 0.10, by_cls())
    return by_cls()


def offset_tolerance(cls: np.ndarray) -> np.ndarray:
    return np.where(cls == 0, 0.05, 0.10)


# --------------------------------------------------------------------------- perturbation core

@dataclass(frozen=True)
class Sigmas:
    """One-sigma perturbations of a population, shapes (n, S, P), (n, S), (M,)."""

    params: np.ndarray
    offset: np.ndarray
    modulus: np.ndarray      # relative, per material of ``slots.materials``


def sigmas(slots: Slots, process: str = "auto") -> Sigmas:
    """One-sigma perturbations of every parameter, offset and modulus of the population ``slots`` under
    ``process`` (a name of ``PROCESSES``; "auto" picks each element's usual process)."""
    n, S, P = slots.params.shape
    mats = slots.materials
    E = np.array([m.E_MPa for m in mats])
    hyper = np.array([m.hyperelastic for m in mats])
    mcls = material_class(E, hyper)
    sp = np.zeros((n, S, P))
    so = np.zeros((n, S))
    for j, ki, rows in slots.groups():
        kind = slots.kinds[ki]
        cls = mcls[slots.material[rows, j]]
        for c, q in enumerate(kind.params):
            sp[rows, j, c] = param_tolerance(q, slots.params[rows, j, c], cls, process) \
                / SIGMAS_PER_TOLERANCE
        so[rows, j] = offset_tolerance(cls) / SIGMAS_PER_TOLERANCE
    return Sigmas(sp, so, modulus_tolerance(mcls) / SIGMAS_PER_TOLERANCE)


@lru_cache(maxsize=16)
def _scaled_materials(mats: tuple[Material, ...], factors: tuple[tuple[float, ...], ...]) -> tuple[Material, ...]:
    """Copies of ``mats`` with every modulus scaled: copy ``r * M + m`` is material m times ``factors[r][m]``."""
    out = []
    for row in factors:
        for m, f in zip(mats, row):
            out.append(dataclasses.replace(m, E_MPa=m.E_MPa * f, G_MPa=m.G_MPa * f,
                                           ogden_mu_MPa=tuple(v * f for v in m.ogden_mu_MPa)))
    return tuple(out)


def perturb(slots: Slots, sig: Sigmas, zp: np.ndarray, zo: np.ndarray, ze: np.ndarray) -> Slots:
    """Rows ``i * k + r`` = design i with perturbation r.

    Parameters
    ----------
    zp : ndarray, shape (k, S, P)
        Parameter perturbations in sigmas.
    zo : ndarray, shape (k, S)
        Offset perturbations in sigmas.
    ze : ndarray, shape (k, S)
        Modulus perturbations in sigmas (of each row's material).
    """
    n, S, P = slots.params.shape
    k = zp.shape[0]
    nom = slots.params[:, None]                                   # (n, 1, S, P)
    par = nom + sig.params[:, None] * zp[None]
    par = np.where(sig.params[:, None] > 0, np.maximum(par, 1e-3 * np.abs(nom)), nom)
    off = slots.offset_mm[:, None] + sig.offset[:, None] * zo[None]
    M = len(slots.materials)
    # modulus factor per (r, j, material): copies laid out as ((r * S + j) * M + m)
    fac = 1.0 + sig.modulus[None, None, :] * ze[:, :, None]        # (k, S, M)
    mats = _scaled_materials(tuple(slots.materials), tuple(map(tuple, fac.reshape(k * S, M).tolist())))
    # the copy of material m for perturbation r in slot j has index (r * S + j) * M + m
    base = (np.arange(k)[:, None] * S + np.arange(S)[None, :]) * M           # (k, S)
    idx = base[None] + slots.material[:, None, :]                           # (n, k, S)
    return Slots(
        kind=np.repeat(slots.kind, k, axis=0),
        material=idx.reshape(n * k, S),
        count=np.repeat(slots.count, k, axis=0),
        offset_mm=off.reshape(n * k, S),
        params=par.reshape(n * k, S, P),
        kinds=slots.kinds,
        materials=mats,
        link=np.repeat(slots.link, k, axis=0),
        chain_count=np.repeat(slots.chain_count, k, axis=0),
    )


@lru_cache(maxsize=8)
def _fixed_draws(k: int, S: int, P: int, seed: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    z = np.clip(rng.standard_normal((k, S, P + 2)), -SIGMAS_PER_TOLERANCE, SIGMAS_PER_TOLERANCE)
    for a in (z,):
        a.setflags(write=False)
    return z[:, :, :P], z[:, :, P], z[:, :, P + 1]


# --------------------------------------------------------------------------- robust scoring

def robust_error(study, slots: Slots, n_samples: int = 32, percentile: float = 90.0, seed: int = 0) -> np.ndarray:
    """High-percentile curve error of each design over a fixed set of tolerance samples, shape (n,).

    Every design is evaluated with the same ``n_samples`` perturbations (seeded, so that
    the objective is deterministic across generations), all ``n * n_samples`` rows in one
    :func:`evaluate_population` call; returns the ``percentile`` of their curve errors
    (``100 RMS_w(F - F_target) / max|F_target|``, %, :meth:`Target.curve_error_pct`). Used for the curve-error objective when
    ``[search] robust = true``.

    Measured (tests/benchmarks/bench_robust.py, linear spring with preload, +-4 % band,
    4 seeds, 80 x 60): with 32 samples the chosen design's share of parts inside the band
    rose from a median 86.5 % to 89.1 % (3 of 4 seeds better); with 8 samples there was
    no gain (85.0 %), the search fitting itself to the few fixed draws. Hence 32.
    """
    t = study.target
    n, S, P = slots.params.shape
    sig = sigmas(slots)
    zp, zo, ze = _fixed_draws(n_samples, S, P, seed)
    pert = perturb(slots, sig, zp, zo, ze)
    r = evaluate_population(pert, t.x_mm, x_max_mm=t.stroke_mm)
    with np.errstate(all="ignore"):
        err = t.curve_error_pct(r.force_N).reshape(n, n_samples)
    err = np.where(np.isfinite(err), err, np.inf)
    return np.percentile(err, percentile, axis=1)


# --------------------------------------------------------------------------- single-design analysis

@dataclass(frozen=True)
class ToleranceResult:
    """Result of :func:`tolerance_analysis`.

    Attributes
    ----------
    design : str
    x_mm : ndarray, shape (m,)
    nominal_N : ndarray, shape (m,)
    p05_N, p50_N, p95_N : ndarray, shape (m,)
        Percentiles of the force over the samples.
    force_N : ndarray, shape (N, m)
        Every sample's force.
    stress_ratio : ndarray, shape (N,)
    curve_error_pct : ndarray, shape (N,) or None
        With a target.
    in_band : ndarray of bool, shape (N,) or None
        With a target: inside its band, or where it has none within +- ``band_pct`` % of its force
        (:meth:`Target.spec_band`), at every target point.
    share_in_band : float
        Share of samples in ``in_band`` (NaN without a target).
    samples : pandas.DataFrame
        One row per sample: the drawn values and summary numbers.
    sensitivity : pandas.DataFrame
        One row per perturbed quantity, ranked by ``spread_pct``.
    process : str
    band_pct : float
        The band where the target has none, +- % of the target force.
    """

    design: str
    x_mm: np.ndarray
    nominal_N: np.ndarray
    p05_N: np.ndarray
    p50_N: np.ndarray
    p95_N: np.ndarray
    force_N: np.ndarray = field(repr=False)
    stress_ratio: np.ndarray = field(repr=False)
    curve_error_pct: np.ndarray | None = field(repr=False)
    in_band: np.ndarray | None = field(repr=False)
    share_in_band: float
    samples: object = field(repr=False)
    sensitivity: object = field(repr=False)
    process: str = "auto"
    band_pct: float = 10.0

    def to_frame(self):
        """The force band: ``displacement_mm, nominal_N, p05_N, p50_N, p95_N``."""
        import pandas as pd

        return pd.DataFrame({"displacement_mm": self.x_mm, "nominal_N": self.nominal_N, "p05_N": self.p05_N,
                             "p50_N": self.p50_N, "p95_N": self.p95_N})


def _quantities(design: Design, slots: Slots, sig: Sigmas):
    """(label, kind of quantity, slot, column, sigma, nominal, source) for every perturbed quantity.

    A chain's links have no offset of their own: the chain's (its first link's slot) is perturbed once.
    """
    out = []
    for j, e in enumerate(design.parts):
        kind = slots.kinds[slots.kind[0, j]]
        for c, q in enumerate(kind.params):
            s = sig.params[0, j, c]
            if s > 0:
                src = _source(q, slots.materials[slots.material[0, j]])
                out.append((f"e{j + 1}.{q.name}", "param", j, c, s, slots.params[0, j, c], src))
        if not slots.link[0, j]:
            out.append((f"e{j + 1}.offset_mm", "offset", j, -1, sig.offset[0, j], slots.offset_mm[0, j],
                        SOURCES["offset"]))
        m = slots.material[0, j]
        out.append((f"e{j + 1}.modulus", "modulus", j, -1, sig.modulus[m], 1.0, SOURCES["modulus"]))
    return out


def _source(q: Param, mat: Material) -> str:
    """Where the tolerance of parameter ``q`` of an element in ``mat`` comes from."""
    by_class = {"wire": "drawn_wire", "coiling": "coiling", "coils": "coiling", "tension": "initial_tension",
                "set_radius": "ribbon_radius"}
    if q.tolerance in by_class:
        return SOURCES[by_class[q.tolerance]]
    cls = int(material_class(np.array([mat.E_MPa]), np.array([mat.hyperelastic]))[0])
    if cls == 2:
        return SOURCES["moulded_rubber"]
    if cls == 1:
        return SOURCES["moulded"]
    return SOURCES[{"strip": "rolled_strip", "width": "slit_width"}.get(q.tolerance, "machined")]


def tolerance_analysis(design: Design, x_mm: np.ndarray, *, target=None, n_samples: int = 2000, seed: int = 0,
                       process: str = "auto", band_pct: float = 10.0) -> ToleranceResult:
    """Monte Carlo of ``design`` over its manufacturing tolerances (module notes).

    Parameters
    ----------
    design : Design
    x_mm : ndarray, shape (m,)
        Stroke points, mm.
    target : Target, optional
        For the curve error and the share of parts in spec (inside its band or, where it has
        none, within +- ``band_pct`` % of its force: :meth:`Target.spec_band`).
    n_samples : int
        Monte Carlo samples N (all evaluated in one vectorised call).
    seed : int
    process : str
        ``auto`` (by kind and material) or a process of :data:`PROCESSES` forced on the
        linear dimensions.
    band_pct : float
        % of the target force, for a target without a band (``limits.band_pct``).

    Returns
    -------
    ToleranceResult

    Notes
    -----
    One :func:`evaluate_population` call evaluates the N samples, then the rows of
    :func:`_sensitivity_rows` (+-h for every quantity, then the nominal design);
    :func:`_sensitivity_table` ranks the quantities and :func:`_sample_table` lists the
    samples.
    """
    import pandas as pd

    if process not in PROCESSES:
        raise InputError(f"process must be one of {', '.join(PROCESSES)}, got {process!r}", where="tolerance")
    if not (isinstance(n_samples, int) and n_samples >= 2):
        raise InputError(f"samples must be a whole number >= 2, got {n_samples!r}", where="tolerance")
    x = np.asarray(x_mm, dtype=float)
    base = Slots.from_designs([design])
    _, S, P = base.params.shape
    sig = sigmas(base, process)
    rng = np.random.default_rng(seed)
    z = np.clip(rng.standard_normal((n_samples, S, P + 2)), -SIGMAS_PER_TOLERANCE, SIGMAS_PER_TOLERANCE)
    quants = _quantities(design, base, sig)
    zs_p, zs_o, zs_e, steps = _sensitivity_rows(quants, S, P)
    zp = np.concatenate([z[:, :, :P], zs_p])
    zo = np.concatenate([z[:, :, P], zs_o])
    ze = np.concatenate([z[:, :, P + 1], zs_e])
    pert = perturb(base, sig, zp, zo, ze)
    r = evaluate_population(pert, x, x_max_mm=float(x.max()))      # one call: N samples + sensitivity rows
    F_all = r.force_N
    F = F_all[:n_samples]
    F0 = F_all[-1]
    sens_df = _sensitivity_table(quants, F_all[n_samples:], steps)
    cols, err, inb, share = _sample_table(quants, z, F, r.stress_ratio[:n_samples], x, target, band_pct)
    p05, p50, p95 = np.percentile(F, [5.0, 50.0, 95.0], axis=0)
    return ToleranceResult(design.name, x, F0, p05, p50, p95, F, r.stress_ratio[:n_samples], err, inb, share,
                           pd.DataFrame(cols), sens_df, process, band_pct)


def _sensitivity_rows(quants, S: int, P: int):
    """Perturbations (in sigmas) of the sensitivity rows: ``+h`` and ``-h`` for every quantity, then nominal.

    ``h`` is a relative 1e-3 of the value (offsets, and parameters whose nominal is 0: 1 sigma;
    see :func:`_difference_step`). Returns ``zp`` (2Q+1, S, P), ``zo`` and ``ze`` (2Q+1, S), and
    each quantity's change between its two rows in its own unit, shape (Q,).
    """
    Q = len(quants)
    zs_p = np.zeros((2 * Q + 1, S, P))
    zs_o = np.zeros((2 * Q + 1, S))
    zs_e = np.zeros((2 * Q + 1, S))
    steps = np.zeros(Q)
    for qi, (_, what, j, c, s, nom, _) in enumerate(quants):
        h, steps[qi] = _difference_step(what, nom, s)
        for sign, row in ((1.0, 2 * qi), (-1.0, 2 * qi + 1)):
            if what == "param":
                zs_p[row, j, c] = sign * h
            elif what == "offset":
                zs_o[row, j] = sign * h
            else:
                zs_e[row, j] = sign * h
    return zs_p, zs_o, zs_e, steps


def _sensitivity_table(quants, F_rows: np.ndarray, steps: np.ndarray):
    """Elasticity and share of the spread of every quantity (module notes), ranked by ``spread_pct``.

    ``F_rows`` shape (2Q+1, m): the forces of the :func:`_sensitivity_rows`, the nominal last.
    Returns a pandas.DataFrame, one row per quantity.
    """
    import pandas as pd

    F0 = F_rows[-1]
    sens = []
    rms0 = math.sqrt(float(np.mean(F0 * F0))) or math.nan
    for qi, (label, what, j, c, s, nom, src) in enumerate(quants):
        dF = (F_rows[2 * qi] - F_rows[2 * qi + 1]) / steps[qi]   # dF/dq
        spread = 100.0 * math.sqrt(float(np.mean((dF * s) ** 2))) / rms0
        if what == "offset":
            elast = math.nan
        else:
            qval = 1.0 if what == "modulus" else nom
            elast = float(np.sum(F0 * dF * qval) / np.sum(F0 * F0)) if np.any(F0) and qval else math.nan
        tol = s * SIGMAS_PER_TOLERANCE
        sens.append({"quantity": label, "nominal": nom, "tolerance_pm": tol if what != "modulus" else math.nan,
                     "tolerance_pct": 100.0 * tol if what == "modulus" else (100.0 * tol / abs(nom) if nom else math.nan),
                     "elasticity": elast, "spread_pct": spread, "source": src})
    return pd.DataFrame(sens).sort_values("spread_pct", ascending=False, ignore_index=True)


def _sample_table(quants, z: np.ndarray, F: np.ndarray, stress_ratio: np.ndarray, x: np.ndarray, target,
                  band_pct: float = 10.0):
    """Columns of the samples table, and the curve error and band check against ``target``.

    ``z`` shape (N, S, P + 2): the draws in sigmas; ``F`` (N, m) and ``stress_ratio`` (N,)
    the samples' forces and stress ratios at ``x`` (m,). Returns ``(columns, curve_error_pct,
    in_band, share_in_band)``: a dict of (N,) arrays, (N,) or None, (N,) bool or None, and a
    float (NaN without a target; a target without a band: +- ``band_pct`` %, :meth:`Target.spec_band`).
    """
    P = z.shape[2] - 2
    n_samples = len(F)
    err = inb = None
    share = math.nan
    cols = {"sample": np.arange(1, n_samples + 1)}
    for qi, (label, what, j, c, s, nom, _) in enumerate(quants):
        if what == "param":
            cols[label] = np.maximum(nom + s * z[:, j, c], 1e-3 * abs(nom))
        elif what == "offset":
            cols[label] = nom + s * z[:, j, P]
        else:
            cols[label + "_factor"] = 1.0 + s * z[:, j, P + 1]
    cols["force_end_N"] = F[:, -1]
    cols["stress_ratio"] = stress_ratio
    if target is not None:
        Ft = F if np.array_equal(x, target.x_mm) else _at(F, x, target.x_mm)
        with np.errstate(all="ignore"):
            err = target.curve_error_pct(Ft)
        cols["curve_error_pct"] = err
        inb = target.in_spec(Ft, band_pct)
        share = float(np.mean(inb))
        cols["in_band"] = inb
    return cols, err, inb, share


def _difference_step(what: str, nom: float, sigma: float) -> tuple[float, float]:
    """``(h, dq)``: the +-h sigma rows of a sensitivity and the change of the quantity between them.

    A relative step of 1e-3 of the value, central; one sigma for offsets. A parameter whose
    nominal is 0 (a straight column's rise) gets one sigma too, and as its step down is clipped
    at 0 (:func:`perturb`) the difference is a forward one over one sigma, ``dq = sigma``.
    """
    if what == "param" and nom == 0:
        return 1.0, sigma
    h = 1.0 if what == "offset" else 1e-3 * abs(nom) / sigma
    return h, 2.0 * h * sigma


def _at(F: np.ndarray, x: np.ndarray, xt: np.ndarray) -> np.ndarray:
    """Each row of ``F`` (shape (N, m), at ``x``) interpolated at ``xt``: shape (N, len(xt))."""
    return np.stack([np.interp(xt, x, f) for f in F])

