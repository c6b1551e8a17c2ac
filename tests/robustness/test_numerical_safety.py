"""Numerical safety of the evaluator, and an independent check of what the search calls feasible.

1. Every registered kind is evaluated with each parameter at its lower bound, its upper
   bound, 10x beyond each, near zero, zero and absurdly large, alone and in pairs, with
   every material that suits it plus extreme inline materials, at strokes from 0 to 10x
   its length scale, with gaps and preloads. No exception or warning may escape, and a
   design whose models give NaN or inf anywhere the search looks must carry
   ``Response.finite == False`` (so its force and stress never reach the search as numbers).
2. Small seeded searches: every design marked feasible is re-evaluated with
   ``evaluate_design``; its peak stress ratio (recomputed on a fine stroke grid from the
   kernels) must respect the limit and its packed box (recomputed from each kind's
   ``box``) must fit the envelope.
"""

from __future__ import annotations

import itertools
import math
import warnings

import numpy as np
import pytest

from springsynth.assembly.evaluate import envelope_margins, evaluate_design, evaluate_population
from springsynth.assembly.slots import Slots
from springsynth.elements import registry
from springsynth.model.materials import Material, MaterialArrays, catalogue

KINDS = sorted(registry())


def _base(q) -> float:
    if q.choices:
        return 0.0
    if q.log and q.lo > 0:
        return math.sqrt(q.lo * q.hi)
    return 0.5 * (q.lo + q.hi)


def _variants(q) -> list[float]:
    if q.choices:
        return [float(i) for i in range(len(q.choices))]
    lo, hi = q.lo, q.hi
    return [lo, hi, 10 * hi, lo / 10 if lo > 0 else -1e-3, 1e-12, 0.0, 1e6, 1e300, -1.0]


def _extreme_materials(kind) -> list[Material]:
    """Valid-but-extreme inline materials in the forms the kind is made from."""
    out = []
    for tag, E, yld in (("soft", 1e-3, 1e-6), ("stiff", 1e9, 1e9)):
        if kind.forms != ("elastomer",):
            out.append(Material(id=f"x_{tag}", name=tag, E_MPa=E, G_MPa=E / 2.6, nu=0.3, density_kg_m3=1.0,
                                yield_MPa=yld, uts_MPa=yld, forms=("wire", "strip", "bulk"),
                                sut_A_MPa=2000.0, sut_m=0.15, torsion_share=0.45))
    if "elastomer" in kind.forms:
        out.append(Material(id="x_ogden", name="ogden", E_MPa=3.0, G_MPa=1.0, nu=0.499, density_kg_m3=1000.0,
                            yield_MPa=1.0, uts_MPa=1.0, forms=("elastomer",), law="ogden",
                            ogden_mu_MPa=(1e3, -1e3 + 0.1, 0.5), ogden_alpha=(20.0, 20.0, 2.0), strain_limit=5.0))
    return out


def _population(kind):
    """Rows of parameter sets x materials x (offset, count) for one kind."""
    base = {q.name: _base(q) for q in kind.params}
    sets = []
    for q in kind.params:
        for v in _variants(q):
            sets.append({**base, q.name: v})
    numeric = [q for q in kind.params if not q.choices]
    for q1, q2 in itertools.combinations(numeric, 2):
        for v1, v2 in itertools.product((q1.lo, 10 * q1.hi, 1e-12), (q2.lo, 10 * q2.hi, 1e-12)):
            sets.append({**base, q1.name: v1, q2.name: v2})
    mats = tuple(m for m in catalogue().values() if m.suits(kind.forms)) + tuple(_extreme_materials(kind))
    length = max(base[q.name] for q in kind.params if q.unit == "mm")
    modes = [(0.0, 1.0), (0.3 * length, 2.0), (-0.3 * length, 1.0), (0.0, 1000.0)]
    rows = [(p, mi, off, cnt) for p in sets for mi in range(len(mats)) for off, cnt in modes]
    n, P = len(rows), len(kind.params)
    params = np.array([[p[q.name] for q in kind.params] for p, *_ in rows]).reshape(n, 1, P)
    slots = Slots(np.zeros((n, 1), np.intp), np.array([[r[1]] for r in rows], np.intp),
                  np.array([[r[3]] for r in rows], float), np.array([[r[2]] for r in rows], float),
                  params, (kind,), mats)
    x = np.linspace(0.0, 10.0 * length, 41)
    return slots, x


@pytest.mark.parametrize("name", KINDS)
def test_extreme_parameters_never_leak_nan(name):
    kind = registry()[name]
    slots, x = _population(kind)
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # no RuntimeWarning may escape either
        r = evaluate_population(slots, x, detail=True)
    fin = r.finite
    assert fin.any() and (~fin).any()
    # what the search reads is finite for every row flagged finite
    assert np.isfinite(r.force_N[fin]).all()
    assert np.isfinite(r.stress_ratio[fin]).all() and np.all(r.stress_ratio[~fin] == np.inf)
    assert np.isfinite(r.box_mm[fin]).all() and np.isfinite(r.size_mm3[fin]).all() and np.isfinite(r.mass_g[fin]).all()
    for rule, g in r.validity.items():
        assert not np.isnan(g).any(), rule
    assert np.isfinite(r.element_force_N[fin]).all() and np.isfinite(r.stress_ratio_curve[fin]).all()
    assert np.isfinite(r.force_N).all()  # a non-finite slot is zeroed, never passed on

    # converse, recomputed from the kernels: any NaN/inf where the assembly looks -> not finite
    P = len(kind.params)
    prm = slots.params[:, 0, :P]
    pos = np.array([q.lo > 0 and not q.choices for q in kind.params])
    insane = ~np.all(np.isfinite(prm) & ((prm > 0) | ~pos), axis=1)
    assert not fin[insane].any(), "parameters outside the physical domain must make a design not finite"
    sane = np.flatnonzero(~insane)
    p = {q.name: prm[sane, c] for c, q in enumerate(kind.params)}
    mat = MaterialArrays.take(slots.materials, slots.material[sane, 0])
    off, cnt = slots.offset_mm[sane, 0], slots.count[sane, 0]
    u = np.maximum(x[None, :] - off[:, None], 0.0)
    u_max = np.maximum(x.max() - off, 0.0)
    with np.errstate(all="ignore"):
        f = kind.force(p, mat, u)
        grid = u_max[:, None] * np.linspace(0.0, 1.0, 33)[None, :]
        s = kind.peak_stress_ratio(p, mat, u_max[:, None] if kind.monotonic_stress else grid)
        a, c1, c2 = (np.broadcast_to(v, sane.shape) for v in kind.box(p, u_max))
        ms = kind.mass(p, mat, u_max)
        margins = kind.validity_margins(p, mat, u_max)
        bad = ~np.isfinite(f).all(1) | ~np.isfinite(s) | ~np.isfinite(a + c1 + c2 + ms * cnt)
    for g in margins.values():
        bad |= ~np.isfinite(g)
    assert not fin[sane[bad]].any(), f"{name}: non-finite kernel output passed as finite"


@pytest.mark.parametrize("name", KINDS)
def test_strokes_from_zero_to_ten_lengths(name):
    """In-range designs over strokes 0 .. 10x their size: no exception; either finite or flagged."""
    kind = registry()[name]
    mats = tuple(m for m in catalogue().values() if m.suits(kind.forms))
    rng = np.random.default_rng(7)
    n = 200
    params = np.zeros((n, 1, len(kind.params)))
    for c, q in enumerate(kind.params):
        z = rng.random(n)
        if q.choices:
            v = np.floor(z * len(q.choices))
        elif q.log and q.lo > 0:
            v = q.lo * (q.hi / q.lo) ** z
        else:
            v = q.lo + z * (q.hi - q.lo)
        params[:, 0, c] = np.round(v) if q.integer else v
    slots = Slots(np.zeros((n, 1), np.intp), rng.integers(0, len(mats), (n, 1)), np.ones((n, 1)),
                  np.zeros((n, 1)), params, (kind,), mats)
    length = max(q.hi for q in kind.params if q.unit == "mm")
    for x_end in (0.0, 1e-9, 0.1 * length, length, 10 * length):
        x = np.linspace(0.0, x_end, 17)
        with warnings.catch_warnings():
            warnings.simplefilter("error")
            r = evaluate_population(slots, x, detail=True)
        fin = r.finite
        assert np.isfinite(r.force_N).all() and np.isfinite(r.stress_ratio[fin]).all()
        assert np.isfinite(r.stress_ratio_curve[fin]).all()
        if x_end == 0.0:
            assert np.all(r.force_N[:, 0] == 0.0)  # no preload, no force at zero stroke
            assert fin.all(), f"{name}: in-range designs are not finite at zero stroke"


# ------------------------------------------------------------------- independent recomputation

def _write_study(folder, kinds, materials, seed, x, f, env=(200, 150, 150)):
    (folder / "t.csv").write_text("displacement_mm,force_N,tolerance_N\n" +
                                  "".join(f"{float(a)!r},{float(b)!r},{0.1 * max(abs(float(b)), 0.5)!r}\n" for a, b in zip(x, f)))
    el = ", ".join(f'"{k}"' for k in kinds)
    ma = ", ".join(f'"{m}"' for m in materials)
    p = folder / "study.toml"
    p.write_text(f"""name = "recompute"
[target]
file = "t.csv"
[envelope]
length_mm = {env[0]}
width_mm = {env[1]}
height_mm = {env[2]}
[limits]
stress_ratio = 0.9
min_thickness_mm = 0.05
max_error_pct = 60
[search]
elements = [{el}]
materials = [{ma}]
max_elements = 2
population = 30
generations = 8
seed = {seed}
polish = false
""")
    return p


def _own_strokes(design, stroke):
    """Each element's largest own stroke: ``stroke - offset`` in a branch of its own; a chain link's largest
    deflection along its chain's loading path, read on a fine grid of 401 strokes."""
    fine = evaluate_design(design, np.linspace(0.0, stroke, 401), x_max_mm=stroke).element_stroke_mm[0]
    out = []
    for j, ((b, _), e) in enumerate(zip(design.layout, design.parts)):
        chained = hasattr(design.branches[b], "links")
        out.append(float(fine[j].max()) if chained else max(stroke - e.offset_mm, 0.0))
    return out


def _independent_box(design, stroke):
    """Branches side by side across the stroke; a chain's links stack along it (each at its own stroke)."""
    along, width, height = 0.0, 0.0, 0.0
    strokes = iter(_own_strokes(design, stroke))
    for br in design.branches:
        links = getattr(br, "links", None) or (br,)
        a_sum, w_max = 0.0, 0.0
        for e in links:
            kind = registry()[e.kind]
            p = {k: np.array([v]) for k, v in e.values().items()}
            a, c1, c2 = (float(np.ravel(v)[0]) for v in kind.box(p, np.array([next(strokes)])))
            a_sum += a
            w_max = max(w_max, e.count * min(c1, c2))
            height = max(height, c1, c2)
        along = max(along, a_sum)
        width += (br.count if len(links) > 1 else 1) * w_max
    return along, width, height


def _independent_stress_ratio(design, stroke):
    peak = 0.0
    for e, u_top in zip(design.parts, _own_strokes(design, stroke)):
        kind = registry()[e.kind]
        p = {k: np.array([v]) for k, v in e.values().items()}
        mat = MaterialArrays.of(design.materials[e.material])
        u = np.linspace(0.0, u_top, 401)[None, :]
        peak = max(peak, float(np.max(kind.stress(p, mat, u)) / kind.allowable(p, mat)[0]))
    return peak


CASES = [
    (("blade_guided", "helical_compression"), ("stainless_17_7ph", "music_wire"), 1,
     np.linspace(0, 5, 11), lambda x: 2.0 + 1.5 * x),
    (("column", "blade_cantilever", "wire_guided"), ("stainless_17_7ph", "beryllium_copper"), 2,
     np.linspace(0, 3, 13), lambda x: 4.0 * np.minimum(x, 0.5) / 0.5),
    (("elastomer_pad", "contact_sphere", "ribbon"), ("silicone", "stainless_302", "titanium_6al4v", "peek"), 3,
     np.linspace(0, 2, 9), lambda x: 1.0 + 3.0 * x**2),
]


@pytest.mark.slow
@pytest.mark.parametrize("kinds, materials, seed, x, law", CASES)
def test_feasible_designs_recompute_feasible(tmp_path, kinds, materials, seed, x, law):
    from springsynth.io.study_toml import load_study
    from springsynth.search.synthesis import synthesize

    kinds = tuple(k for k in kinds if k in registry())
    st = load_study(_write_study(tmp_path, kinds, materials, seed, x, law(x)))
    res = synthesize(st)
    stroke, lim, env = st.target.stroke_mm, st.limits, st.envelope
    feasible = [i for i in range(len(res.designs)) if np.all(res.constraints[i] <= 0)]
    assert feasible, "the search found no feasible design: the check below would be vacuous"
    for i in feasible:
        d = res.designs[i]
        r = evaluate_design(d, st.target.x_mm, x_max_mm=stroke)
        assert r.finite[0], d.topology()
        assert np.isfinite(r.force_N).all()
        assert r.stress_ratio[0] <= lim.stress_ratio * (1 + 1e-9), d.topology()
        assert r.stress_ratio[0] == pytest.approx(res.objectives[i, 1], rel=1e-9, abs=1e-12)
        # peak stress from the kernels on a fine grid (not the assembly's shortcut)
        assert _independent_stress_ratio(d, stroke) <= lim.stress_ratio * 1.01, d.topology()
        box = _independent_box(d, stroke)
        assert np.allclose(box, r.box_mm[0], rtol=1e-9)
        along, w, h = box
        assert along <= env.length_mm * (1 + 1e-12)
        fits = (w <= env.width_mm * (1 + 1e-12) and h <= env.height_mm * (1 + 1e-12)) or \
               (w <= env.height_mm * (1 + 1e-12) and h <= env.width_mm * (1 + 1e-12))
        assert fits, (d.topology(), box, env)
        g_len, g_cross = envelope_margins(r.box_mm, env)
        assert g_len[0] <= 0 and g_cross[0] <= 0
        assert r.validity_worst[0] <= 0
        assert r.min_thickness_mm[0] >= lim.min_thickness_mm
