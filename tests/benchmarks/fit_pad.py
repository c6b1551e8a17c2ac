"""Finite-element reference of the bonded elastomer pad and the fit of the kernel's constants.

Not collected by pytest (no ``test_`` prefix). Run::

    python tests/benchmarks/fit_pad.py generate training [workers] [n_strains]  # -> pad_fe_table.csv
    python tests/benchmarks/fit_pad.py generate heldout [workers] [n_strains]   # -> pad_fe_heldout.csv
    python tests/benchmarks/fit_pad.py fit               # least-squares constants (training table only)
    python tests/benchmarks/fit_pad.py check [heldout]   # kernel vs a stored table

Training table (the fit's data). Plan width W = 20 mm; plan aspect L/W = 1, 2, 4; thickness
t set to give shape factors S = LW/(2t(L+W)) of 0.25, 0.5, 1, 1.75 with t <= min(L, W) (and
one square natural rubber pad at S = 2.5, outside the declared range, to see the fit
extrapolate); the catalogue's natural rubber (Ogden 1972, nu = 0.4999), silicone
(neo-Hookean, nu = 0.4999) and TPU (Mooney-Rivlin, nu = 0.49). Also ``LAW_CASES``: two invented
laws of ``INLINE`` far from linear (a one-term Ogden law, alpha = 4, stiff in shear; a one-term
law with alpha = -2.5, stiff in compression) at S = 0.5, 1, 1.75. The catalogue laws are nearly
linear in shear, so they cannot tell how far the model follows a law's non-linearity; these
cases set the kernel's law band (``SHEAR_SECANT_BAND``), not its constants: the fit reads only
the catalogue laws' rows.

Held-out table (never read by the fit; ``tests/validation/test_pad_heldout.py`` compares the
kernel with it). Twenty cases of other shape factors (0.35 ... 1.75), other plan aspects
(1.25, 1.5, 2.5, 3) and other sizes, with the catalogue's three laws and three laws of
``INLINE`` (a Mooney-Rivlin rubber, a neo-Hookean elastomer at nu = 0.49, a two-term Ogden
law); ``HELDOUT_CASES`` lists them.

Both: nominal compressive strains u/t = 0.002, then 0.025 ... 0.3 in steps of 0.025 (the
first ``n_strains`` of them, default all 13; a case whose mesh level stops early, Newton's method
failing at large strain, keeps the strains it reached, two fewer at a time); the solver is
``springsynth.checks.verify.pad_force_fe`` (plates reaching past the block, the bulge rolling onto
them in frictionless contact). Columns: the material and its Ogden series
(``ogden_mu_MPa``, ``ogden_alpha``, ``nu``, ``E_MPa``), the block, the strain, the forces on
mesh levels 3 and 4 and the reference ``F_ref_N``. Where both levels were solved the
reference is the first-order extrapolation 4 F_4 - 3 F_3 (as ``springsynth verify`` does;
column ``ref`` = extrapolated). Rows that only level 3 reached (training cases whose level 4
stopped at u/t = 0.15) are corrected by the mean excess d(eps) of level 3 over the
extrapolation on the cases that have both, F_3 / (1 + d(eps)) (``ref`` = level3_corrected;
``d_spread`` = largest deviation of one case's excess from the mean, the uncertainty of the
corrected rows, 2 ... 4.5 %); none of them lies inside the declared range.

The fit minimises the relative deviation of the kernel from ``F_ref_N`` over the catalogue laws'
training rows inside the declared range (``in_range``: u/t <= MODEL_STRAIN_LIMIT, S <= S_MAX, the
law band; soft-L1, then plain least squares).
"""

from __future__ import annotations

import csv
import json
import os
import sys
import time
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path

os.environ.setdefault("OMP_NUM_THREADS", "1")
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import numpy as np

TABLE = Path(__file__).with_name("pad_fe_table.csv")
HELDOUT = Path(__file__).with_name("pad_fe_heldout.csv")
W = 20.0
ASPECTS = (1.0, 2.0, 4.0)
S_TARGETS = (0.25, 0.5, 1.0, 1.75)
MATERIALS = ("natural_rubber", "silicone", "tpu")
#: training cases outside the declared range, solved to see how the fit extrapolates (material, L/W, S)
BEYOND = (("natural_rubber", 1.0, 2.5),)
#: training cases of two invented laws whose shear and compression responses are far from linear (so that the
#: law-dependent constants are fixed by data: the catalogue laws are nearly linear in shear); (material, L/W, S)
LAW_CASES = tuple((m, asp, S) for m in ("ogden_a4", "ogden_neg") for asp, S in ((1.0, 0.5), (2.0, 1.0), (1.0, 1.75)))
STRAINS = np.r_[0.002, np.arange(1, 13) * 0.025]
#: laws of the held-out set that are not in the catalogue (invented, typical of filled rubbers
#: and a compressible elastomer; inline-material keys)
INLINE = {
    "mr_filled": {"law": "mooney_rivlin", "C10_MPa": 0.30, "C01_MPa": 0.08, "nu": 0.4995, "density_kg_m3": 1100.0,
                  "strain_limit": 0.5},
    "nh_compressible": {"law": "neo_hookean", "mu_MPa": 1.2, "nu": 0.49, "density_kg_m3": 1200.0, "strain_limit": 0.5},
    "ogden_two_term": {"law": "ogden", "mu_MPa": [0.4, -0.1], "alpha": [3.0, -1.5], "nu": 0.4998,
                       "density_kg_m3": 1100.0, "strain_limit": 0.5},
    # training only: a one-term Ogden law that stiffens in shear (secant 1.5 G at a shear strain of 1) and one
    # with a negative exponent that stiffens in compression (nominal stress 2.3 E eps at a stretch of 0.7)
    "ogden_a4": {"law": "ogden", "mu_MPa": [0.25], "alpha": [4.0], "nu": 0.4999, "density_kg_m3": 1100.0,
                 "strain_limit": 0.5},
    "ogden_neg": {"law": "ogden", "mu_MPa": [-0.3], "alpha": [-2.5], "nu": 0.4995, "density_kg_m3": 1100.0,
                  "strain_limit": 0.5},
}
#: held-out cases, never used by the fit (material, L/W, S, W mm): shape factors, plan aspects
#: and laws that the training table does not have
HELDOUT_CASES = (
    ("natural_rubber", 1.5, 0.75, 16.0), ("natural_rubber", 3.0, 1.25, 12.0), ("natural_rubber", 1.0, 1.5, 30.0),
    ("natural_rubber", 1.5, 0.35, 20.0), ("natural_rubber", 4.0, 1.5, 10.0),
    ("silicone", 1.0, 0.75, 25.0), ("silicone", 3.0, 1.5, 10.0), ("silicone", 1.5, 1.25, 20.0),
    ("silicone", 1.25, 1.75, 20.0),
    ("tpu", 1.5, 1.5, 20.0), ("tpu", 3.0, 0.75, 14.0), ("tpu", 1.0, 1.25, 20.0), ("tpu", 2.5, 0.5, 12.0),
    ("mr_filled", 2.0, 1.25, 20.0), ("mr_filled", 1.0, 0.5, 20.0),
    ("nh_compressible", 1.0, 1.5, 20.0), ("nh_compressible", 4.0, 0.75, 10.0),
    ("ogden_two_term", 1.5, 1.0, 20.0), ("ogden_two_term", 2.5, 1.6, 12.0), ("ogden_two_term", 1.0, 0.35, 20.0),
)
#: module constants of elastomer_pad set by the fit (C_H counts three)
FITTED = ("C_H", "EDGE_ZONE", "SHEAR_STRAIN_FACTOR", "BULK_SCALE", "THINNING_POWER", "HOMOGENEOUS_POWER", "BULK_ASPECT",
          "HOMOGENEOUS_BULK", "ROLL_SCALE", "ROLL_POWER")
COLUMNS = ["material", "law", "ogden_mu_MPa", "ogden_alpha", "nu", "E_MPa", "L_mm", "W_mm", "t_mm", "strain",
           "F_level3_N", "F_level4_N", "F_ref_N", "ref", "d_spread"]


def material(mid):
    """Catalogue material, or one of ``INLINE``."""
    from springsynth.model.materials import catalogue, material_from_mapping
    cat = catalogue()
    return cat[mid] if mid in cat else material_from_mapping(mid, INLINE[mid], where="fit_pad")


def training_cases():
    """(material, L/W, S, W) of the training table: S_TARGETS x ASPECTS x MATERIALS with t <= min(L, W), and BEYOND."""
    out = []
    for S in S_TARGETS:
        for asp in ASPECTS:
            if asp * W * W / (2.0 * S * (asp * W + W)) <= W * (1 + 1e-9):
                out += [(mid, asp, S, W) for mid in MATERIALS]
    return out + [(*c, W) for c in BEYOND] + [(*c, W) for c in LAW_CASES]


def solve(job, n_strains=STRAINS.size):
    """Forces of one case on one mesh level at the first ``n_strains`` STRAINS (as many as the FE reaches)."""
    from springsynth.checks.verify import pad_force_fe
    (mid, asp, S, Wc), level = job
    L = asp * Wc
    t = L * Wc / (2.0 * S * (L + Wc))
    for k in range(int(n_strains), 0, -2):
        try:
            return job, t, pad_force_fe(L, Wc, t, material(mid), STRAINS[:k] * t, n_edge=level)
        except Exception:
            continue
    return job, t, np.zeros(0)


def build_rows(results):
    """Table rows from ``{((mid, asp, S, W), level): (t, F)}`` (see the module docstring)."""
    excess = {}
    for (case, level), (t, F4) in results.items():
        if level == 4 and (case, 3) in results:
            F3 = results[(case, 3)][1]
            k = min(F3.size, F4.size)
            excess[case] = F3[:k] / (4.0 * F4[:k] - 3.0 * F3[:k]) - 1.0
    rows = []
    for case in dict.fromkeys(c for c, lv in results if lv == 3):
        mid, asp, S, Wc = case
        t, F3 = results[(case, 3)]
        F4 = results.get((case, 4), (t, np.zeros(0)))[1]
        m = material(mid)
        for j, f3 in enumerate(F3):
            if j < F4.size:
                f4, ref, how, spread = F4[j], 4.0 * F4[j] - 3.0 * f3, "extrapolated", 0.0
            else:
                d = np.array([e[j] for e in excess.values() if e.size > j])
                f4, ref, how, spread = np.nan, f3 / (1.0 + d.mean()), "level3_corrected", np.abs(d - d.mean()).max()
            rows.append({"material": mid, "law": m.law, "ogden_mu_MPa": " ".join(f"{v:.7g}" for v in m.ogden_mu_MPa),
                         "ogden_alpha": " ".join(f"{v:.7g}" for v in m.ogden_alpha), "nu": m.nu, "E_MPa": m.E_MPa,
                         "L_mm": asp * Wc, "W_mm": Wc, "t_mm": t, "strain": STRAINS[j],
                         "F_level3_N": f3, "F_level4_N": f4, "F_ref_N": ref, "ref": how, "d_spread": spread})
    return rows


def provenance(which):
    """Comment lines (``# ...``) at the top of a generated table: command, solver, mesh, versions, date."""
    import felupe

    return [
        f"bonded elastomer pad, {which} cases: finite-element forces and their reference (readers skip '#' lines)",
        (f"command: python tests/benchmarks/fit_pad.py generate {which} [workers] 13 "
         "(a mesh level that stops early keeps the strains it reached)"),
        f"solver: springsynth.checks.verify.pad_force_fe, felupe {felupe.__version__}, numpy {np.__version__}",
        ("mesh: one eighth of the block, 27-node hexahedra, mixed u-p-J, graded toward the bonded edges; "
         "levels n_edge = 3 and 4; load steps <= 0.025 t; plates in frictionless contact with the bulge"),
        "reference: F_ref_N = 4 F_level4_N - 3 F_level3_N (ref = extrapolated), else see fit_pad.py",
        f"generated: {time.strftime('%Y-%m-%d')}",
    ]


def write(rows, path=TABLE, which="training"):
    tmp = path.with_suffix(".tmp")
    with open(tmp, "w", newline="") as fh:
        fh.writelines(f"# {line}\n" for line in provenance(which))
        w = csv.writer(fh)
        w.writerow(COLUMNS)
        for r in rows:
            w.writerow([r["material"], r["law"], r["ogden_mu_MPa"], r["ogden_alpha"], f"{r['nu']:.6g}", f"{r['E_MPa']:.7g}",
                        f"{r['L_mm']:g}", f"{r['W_mm']:g}", f"{r['t_mm']:.7g}", f"{r['strain']:.6g}",
                        f"{r['F_level3_N']:.7g}", f"{r['F_level4_N']:.7g}", f"{r['F_ref_N']:.7g}", r["ref"],
                        f"{r['d_spread']:.4f}"])
    tmp.replace(path)


def generate(which="training", workers="1", n_strains="13"):
    """Solve the training or the held-out cases and write their table.

    Every case is solved on levels 3 and 4. Solved cases are appended to ``<table>.partial.jsonl`` as they
    finish, so that an interrupted run resumes where it stopped; the file is removed once
    the table is written.
    """
    cases, path = (training_cases(), TABLE) if which == "training" else (list(HELDOUT_CASES), HELDOUT)
    jobs = [(c, lv) for c in cases for lv in (4, 3)]
    partial = path.with_suffix(".partial.jsonl")
    results = {}
    if partial.exists():
        for line in partial.read_text().splitlines():
            d = json.loads(line)
            results[(tuple(d["case"]), d["level"])] = (d["t"], np.array(d["F"]))
    jobs = [j for j in jobs if j not in results]
    with ProcessPoolExecutor(int(workers)) as ex, open(partial, "a") as fh:
        for (case, level), t, F in ex.map(solve, jobs, [int(n_strains)] * len(jobs), chunksize=1):
            results[(case, level)] = (t, F)
            fh.write(json.dumps({"case": list(case), "level": level, "t": t, "F": F.tolist()}) + "\n")
            fh.flush()
            print(case, level, f"{F.size} strains", time.strftime("%H:%M:%S"), flush=True)
    order = {c: i for i, c in enumerate(cases)}
    rows = build_rows(dict(sorted(results.items(), key=lambda kv: (order[kv[0][0]], kv[0][1]))))
    write(rows, path, which)
    partial.unlink()
    return rows


def load(path=TABLE):
    """Rows of a stored table that have a reference force."""
    with open(path) as fh:
        return [r for r in csv.DictReader(line for line in fh if not line.startswith("#"))
                if np.isfinite(float(r["F_ref_N"]))]


def kernel_forces(rows, constants=None):
    """Kernel force (N) for every table row, one vectorised call (optionally with other constants)."""
    from springsynth.elements import elastomer_pad as ep
    from springsynth.model.materials import MaterialArrays
    saved = {k: getattr(ep, k) for k in FITTED}
    if constants is not None:
        ep.C_H = tuple(constants[:3])
        for k, v in zip(FITTED[1:], constants[3:]):
            setattr(ep, k, v)
    try:
        L, Wd, t, e = (np.array([float(r[k]) for r in rows]) for k in ("L_mm", "W_mm", "t_mm", "strain"))
        ids = sorted({r["material"] for r in rows})
        mats = MaterialArrays.take([material(m) for m in ids], np.array([ids.index(r["material"]) for r in rows]))
        p = {"length_mm": L, "width_mm": Wd, "thickness_mm": t}
        return ep.KIND.force(p, mats, (e * t)[:, None])[:, 0]
    finally:
        for k, v in saved.items():
            setattr(ep, k, v)


def deviations(rows, constants=None):
    return kernel_forces(rows, constants) / np.array([float(r["F_ref_N"]) for r in rows]) - 1.0


def in_range(row):
    """Whether a table row lies inside the kernel's declared range: strain, shape factor and law band."""
    from springsynth.elements import elastomer_pad as ep
    from springsynth.model.materials import MaterialArrays
    L, Wd, t, e = (float(row[k]) for k in ("L_mm", "W_mm", "t_mm", "strain"))
    band = ep.law_band_margin(np.array([ep.shape_factor(L, Wd, t)]), np.array([e]), MaterialArrays.of(material(row["material"])))
    return (e <= ep.MODEL_STRAIN_LIMIT * (1 + 1e-6) and ep.shape_factor(L, Wd, t) <= ep.S_MAX * (1 + 1e-5)
            and band[0] <= 0.0)


def fit(path=TABLE):
    """Least-squares constants on the catalogue laws' training rows inside the declared range (never the
    held-out set; the rows of ``LAW_CASES`` set the law band, see the module docstring)."""
    from scipy.optimize import least_squares

    from springsynth.elements import elastomer_pad as ep
    assert Path(path).resolve() != HELDOUT.resolve(), "the fit never reads the held-out set"
    rows = [r for r in load(path) if in_range(r) and r["material"] in MATERIALS]
    x0 = [*ep.C_H, *(getattr(ep, k) for k in FITTED[1:])]
    res = least_squares(lambda c: deviations(rows, c), x0, loss="soft_l1", f_scale=0.01)
    res = least_squares(lambda c: deviations(rows, c), res.x)
    dev = deviations(rows, res.x)
    print("C_H =", tuple(round(v, 4) for v in res.x[:3]))
    for k, v in zip(FITTED[1:], res.x[3:]):
        print(f"{k} = {v:.4f}")
    print(f"max |dev| = {np.abs(dev).max():.4f}, rms = {np.sqrt(np.mean(dev**2)):.4f} over {len(rows)} rows")
    return res.x


def per_case(rows, dev):
    """Largest and median |kernel/F_ref - 1| (%) per case (material, L/W, S) and per law, inside the declared range."""
    cases = {}
    for r, d in zip(rows, dev):
        if in_range(r):
            L, Wd, t = (float(r[k]) for k in ("L_mm", "W_mm", "t_mm"))
            key = (r["material"], r["law"], round(L / Wd, 3), round(L * Wd / (2 * t * (L + Wd)), 3))
            cases.setdefault(key, []).append(abs(d) * 100.0)
    print(f"{'material':16s}{'law':14s}{'L/W':>6s}{'S':>7s}{'max %':>8s}{'median %':>10s}")
    for (mid, law, asp, S), v in sorted(cases.items(), key=lambda kv: (kv[0][1], kv[0][0], kv[0][3])):
        print(f"{mid:16s}{law:14s}{asp:6g}{S:7.3g}{max(v):8.2f}{np.median(v):10.2f}")
    for law in sorted({k[1] for k in cases}):
        v = np.concatenate([cases[k] for k in cases if k[1] == law])
        print(f"law {law:14s} max {v.max():.2f} %  median {np.median(v):.2f} %  ({v.size} points)")


def check(which="training"):
    """Kernel / F_ref - 1 over a stored table (rows outside the declared range marked), and the
    largest deviation per material and strain range."""
    from springsynth.elements import elastomer_pad as ep
    rows = load(TABLE if which == "training" else HELDOUT)
    dev = deviations(rows)
    for r, d in zip(rows, dev):
        L, Wd, t = (float(r[k]) for k in ("L_mm", "W_mm", "t_mm"))
        print(f"{r['material']:15s} L/W={L / Wd:g} S={L * Wd / (2 * t * (L + Wd)):5.2f} e={float(r['strain']):.4f} "
              f"ref={float(r['F_ref_N']):10.5g} ({r['ref']}) kernel/ref-1={d:+.4f}"
              f"{'' if in_range(r) else '  (outside the declared range)'}")
    inside = np.array([in_range(r) for r in rows])
    e = np.array([float(r["strain"]) for r in rows])
    for mid in dict.fromkeys(r["material"] for r in rows):
        m = inside & np.array([r["material"] == mid for r in rows])
        bands = [(0.0, 0.1), (0.1, 0.2), (0.2, 0.3)]
        print(f"{mid:15s} " + "  ".join(f"u/t in ({lo:g}, {hi:g}]: {np.abs(dev[m & (e > lo) & (e <= hi + 1e-9)]).max():.4f}"
                                         for lo, hi in bands if (m & (e > lo) & (e <= hi + 1e-9)).any()))
    print(f"max |dev| = {np.abs(dev[inside]).max():.4f} (rms {np.sqrt(np.mean(dev[inside] ** 2)):.4f}) over "
          f"{inside.sum()} rows inside the declared range (u/t <= {ep.MODEL_STRAIN_LIMIT:g}, S <= {ep.S_MAX:g}, law band); "
          f"{np.abs(dev[~inside]).max() if (~inside).any() else float('nan'):.4f} outside")
    per_case(rows, dev)
    return dev


if __name__ == "__main__":
    what, *args = sys.argv[1:] or ["check"]
    t0 = time.perf_counter()
    {"generate": generate, "fit": fit, "check": check}[what](*args)
    print(f"{time.perf_counter() - t0:.0f} s")
