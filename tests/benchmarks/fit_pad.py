"""Regenerate the finite-element reference table behind the elastomer_pad kernel fit.

Not collected by pytest (no ``test_`` prefix). Run::

    /work/venv/bin/python tests/benchmarks/fit_pad.py            # FE table -> pad_fe_table.csv
    /work/venv/bin/python tests/benchmarks/fit_pad.py --check    # kernel vs the stored table

Design of experiments: plan width W = 20 mm, plan aspect L/W = 1, 2, 4; the thickness t set
to give shape factors S = LW/(2t(L+W)) of 0.25 ... 5 with t <= min(L, W); nominal
compressive strains u/t = 0.01, 0.05, 0.10, 0.15, 0.20; the catalogue's natural rubber
(Ogden 1972), silicone (neo-Hookean) and TPU (Mooney-Rivlin, nu = 0.49). Each case is
``springsynth._verify.pad_force_fe`` on the 3- and 4-element meshes, extrapolated as the
verifier does (F = 4 F4 - 3 F3); the column ``richardson`` = (F - F4)/F is its own
error estimate (the size of the extrapolation step). Rows with F_N = nan: the FE stopped
(Newton failure, element inversion at the bonded edge) even with 4 sub-steps per strain:
natural rubber and silicone (nu = 0.4999) at S >= 3.5 (square), S = 5 at every aspect.

Findings (2 cores, about 2 minutes for the table):
* At L/W = 4 the mesh has ny = 2 elements across the half-width in BOTH meshes, so the
  Richardson step there under-states the error (|richardson| < 1 % while L/W = 1, 2 show
  2-10 %); those rows are not a converged reference.
* The kernel with beta = 2 deviates from the table by -17 % ... +13 % at u/t = 0.01 and
  -26 % ... +29 % over all strains (rows with an FE value).
* Finite-strain behaviour is material dependent at S >~ 1: neo-Hookean silicone stiffens
  beyond its scaled uniaxial law (+20 % at S = 2.5, u/t = 0.2), the Ogden-1972 rubber does
  not, TPU (nu = 0.49) is bulk-dominated and nearly linear at S >= 2.5.
"""

from __future__ import annotations

import csv
import sys
from concurrent.futures import ProcessPoolExecutor
import os
from pathlib import Path

os.environ.setdefault("OMP_NUM_THREADS", "1")
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("MKL_NUM_THREADS", "1")

import numpy as np

TABLE = Path(__file__).with_name("pad_fe_table.csv")
W = 20.0
ASPECTS = (1.0, 2.0, 4.0)
S_TARGETS = (0.25, 0.5, 1.0, 1.75, 2.5, 3.5, 5.0)
STRAINS = (0.01, 0.05, 0.10, 0.15, 0.20)
MATERIALS = ("natural_rubber", "silicone", "tpu")


def _material(mid):
    from springsynth._materials import catalogue
    c = catalogue()
    return c[mid] if isinstance(c, dict) else next(m for m in c if m.id == mid)


def cases():
    out = []
    for mid in MATERIALS:
        for asp in ASPECTS:
            L = asp * W
            for S in S_TARGETS:
                t = L * W / (2.0 * S * (L + W))
                if t <= min(L, W) * (1 + 1e-9):
                    out.append((mid, L, W, round(t, 4)))
    return out


def run_case(case):
    from springsynth._verify import pad_force_fe
    mid, L, W, t = case
    mat = _material(mid)
    e = np.asarray(STRAINS)
    for sub in (1, 4):
        # thin, stiff blocks may need smaller load steps for Newton (sub-steps between the strains)
        ee = np.interp(np.arange(1, sub * e.size + 1) / sub, np.arange(e.size + 1), np.r_[0.0, e])
        try:
            F3 = pad_force_fe(L, W, t, mat, t * ee, n_plan=3)[sub - 1::sub]
            F4 = pad_force_fe(L, W, t, mat, t * ee, n_plan=4)[sub - 1::sub]
            break
        except Exception:   # the FE stops (element inversion at the bonded edge): no reference here
            F3 = F4 = np.full(e.size, np.nan)
    F = 4.0 * F4 - 3.0 * F3
    return [(mid, L, W, t, e, f, (f - f4) / f) for e, f, f4 in zip(STRAINS, F, F4)]


def generate(path=TABLE, workers=2):
    rows = []
    with ProcessPoolExecutor(workers) as ex:
        for res in ex.map(run_case, cases(), chunksize=1):
            rows.extend(res)
            print(*res, sep="\n", flush=True)
    with open(path, "w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["material", "L_mm", "W_mm", "t_mm", "strain", "F_N", "richardson"])
        for r in rows:
            w.writerow([r[0], f"{r[1]:g}", f"{r[2]:g}", f"{r[3]:g}", f"{r[4]:g}", f"{r[5]:.6g}", f"{r[6]:.4f}"])
    return rows


def load(path=TABLE):
    with open(path) as fh:
        r = list(csv.DictReader(fh))
    return r


def check(path=TABLE):
    """Kernel / FE - 1 over the stored table; returns the array of deviations."""
    from springsynth._materials import MaterialArrays
    from springsynth.elements import get_kind
    pad = get_kind("elastomer_pad")
    dev = []
    for r in load(path):
        L, Wd, t, e, F = (float(r[k]) for k in ("L_mm", "W_mm", "t_mm", "strain", "F_N"))
        p = {"length_mm": np.array([L]), "width_mm": np.array([Wd]), "thickness_mm": np.array([t])}
        f = pad.force(p, MaterialArrays.of(_material(r["material"])), np.array([[e * t]]))[0, 0]
        dev.append(f / F - 1.0)
        print(f"{r['material']:15s} L/W={L / Wd:g} S={L * Wd / (2 * t * (L + Wd)):5.2f} e={e:.2f} "
              f"FE={F:10.4g} kernel/FE-1={dev[-1]:+.4f} rich={float(r['richardson']):+.4f}")
    dev = np.array(dev)
    print("max |dev| =", np.nanmax(np.abs(dev)), "(rows without an FE value skipped)")
    return dev


if __name__ == "__main__":
    if "--check" in sys.argv:
        check()
    else:
        generate()
