"""The elastomer pad against data its constants were not fitted to.

* Held-out finite elements: ``tests/benchmarks/pad_fe_heldout.csv``, bonded blocks of shape
  factors, plan aspects and laws that the fitting table (``pad_fe_table.csv``) does not
  contain, solved by ``springsynth.checks.verify.pad_force_fe`` on mesh levels 3 and 4 and
  extrapolated to first order (generator: ``tests/benchmarks/fit_pad.py generate heldout``).
  The fit (``fit_pad.py fit``) never reads this file.
* A published bonded-block relation: Gent & Lindley (1959) for the small-strain compression
  modulus against the shape factor.
"""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np
import pytest

from springsynth.elements import get_kind
from springsynth.elements.elastomer_pad import MODEL_STRAIN_LIMIT, S_MAX, shape_factor
from springsynth.model.materials import MaterialArrays, catalogue, material_from_mapping

PAD = get_kind("elastomer_pad")
BENCH = Path(__file__).parents[1] / "benchmarks"
HELDOUT = BENCH / "pad_fe_heldout.csv"
TRAINING = BENCH / "pad_fe_table.csv"


def _read(path):
    """Rows of a stored finite-element table (its '#' lines carry the provenance)."""
    with open(path) as fh:
        return list(csv.DictReader(line for line in fh if not line.startswith("#")))


def _material(row):
    """The row's material: the catalogue's, or an inline law rebuilt from the row's Ogden series."""
    cat = catalogue()
    if row["material"] in cat:
        return cat[row["material"]]
    return material_from_mapping(row["material"], {
        "law": "ogden", "mu_MPa": [float(v) for v in row["ogden_mu_MPa"].split()],
        "alpha": [float(v) for v in row["ogden_alpha"].split()], "nu": float(row["nu"]),
        "density_kg_m3": 1000.0, "strain_limit": 1.0}, where="pad_fe_heldout.csv")


def _kernel_over_reference(rows):
    """Kernel force / FE reference - 1 for every row, shape (len(rows),)."""
    out = np.empty(len(rows))
    for i, r in enumerate(rows):
        L, W, t, e = (float(r[k]) for k in ("L_mm", "W_mm", "t_mm", "strain"))
        p = {"length_mm": np.array([L]), "width_mm": np.array([W]), "thickness_mm": np.array([t])}
        F = PAD.force(p, MaterialArrays.of(_material(r)), np.array([[e * t]]))[0, 0]
        out[i] = F / float(r["F_ref_N"]) - 1.0
    return out


def _case(row):
    L, W, t = (float(row[k]) for k in ("L_mm", "W_mm", "t_mm"))
    return row["material"], round(L / W, 6), round(shape_factor(L, W, t), 4)


def _margins(row):
    """The kernel's validity margins for the row's block, law and strain (each <= 0 inside the range)."""
    L, W, t, e = (float(row[k]) for k in ("L_mm", "W_mm", "t_mm", "strain"))
    p = {"length_mm": np.array([L]), "width_mm": np.array([W]), "thickness_mm": np.array([t])}
    # the tables' t is printed to 7 digits: a hair of slack on the strain and the shape factor
    m = PAD.validity_margins(p, MaterialArrays.of(_material(row)), np.array([e * t * (1 - 1e-6)]))
    m["shape_factor"] = m["shape_factor"] - 1e-5
    return m


def _inside(row):
    """Whether a row lies inside the kernel's declared range (strain, shapes and the law band; the table
    goes further in strain)."""
    return all(v[0] <= 0.0 for v in _margins(row).values())


def test_held_out_set_is_disjoint_from_the_fit_and_covers_the_range():
    held, train = _read(HELDOUT), _read(TRAINING)
    assert not {_case(r) for r in held} & {_case(r) for r in train}
    # other shape factors, other plan aspects and laws the fit never saw, over the whole strain range
    assert {_case(r)[2] for r in held} - {_case(r)[2] for r in train}
    assert {_case(r)[1] for r in held} - {_case(r)[1] for r in train}
    assert {r["material"] for r in held} - {r["material"] for r in train}
    assert {r["law"] for r in held} >= {"neo_hookean", "mooney_rivlin", "ogden"}
    for case in {_case(r) for r in held}:
        strains = [float(r["strain"]) for r in held if _case(r) == case]
        assert max(strains) >= MODEL_STRAIN_LIMIT * (1 - 1e-6) and len(strains) >= 7
    assert all(r["ref"] == "extrapolated" for r in held if _inside(r))
    for r in held:   # every held-out case lies inside the declared range of shapes and laws
        L, W, t = (float(r[k]) for k in ("L_mm", "W_mm", "t_mm"))
        assert shape_factor(L, W, t) <= S_MAX * (1 + 1e-6) and t <= min(L, W) and float(r["nu"]) >= 0.49
        assert _material(r).E_MPa == pytest.approx(float(r["E_MPa"]), rel=1e-4)


#: the held-out laws: catalogue natural rubber (Ogden 1972), silicone (neo-Hookean), TPU (Mooney-Rivlin,
#: nu = 0.49), and three inline laws of fit_pad.INLINE (Mooney-Rivlin, neo-Hookean at nu = 0.49, two-term Ogden)
HELD_MATERIALS = ("natural_rubber", "silicone", "tpu", "mr_filled", "nh_compressible", "ogden_two_term")

#: largest and median |kernel/FE - 1| measured on the held-out rows inside the declared range
#: (``python tests/benchmarks/fit_pad.py check heldout``), per material
MEASURED = {"natural_rubber": (0.0218, 0.0069), "silicone": (0.0207, 0.0041), "tpu": (0.0159, 0.0047),
            "mr_filled": (0.0220, 0.0085), "nh_compressible": (0.0174, 0.0069), "ogden_two_term": (0.0281, 0.0037)}


def _held(material):
    """Held-out rows of one material inside the declared strain range and the kernel's deviation from them."""
    rows = [r for r in _read(HELDOUT) if r["material"] == material and _inside(r)]
    return rows, _kernel_over_reference(rows)


@pytest.mark.parametrize("material", HELD_MATERIALS)
def test_held_out_deviation_as_measured(material):
    # Regression bound on data the fit never read: the measured largest deviation + 0.3 % and
    # the measured median + 0.2 % (a change of the kernel or its constants that makes a
    # held-out case worse fails here).
    rows, dev = _held(material)
    worst, median = MEASURED[material]
    assert len(rows) >= 2 * 7
    assert np.abs(dev).max() <= worst + 0.003
    assert np.median(np.abs(dev)) <= median + 0.002


@pytest.mark.parametrize("material", HELD_MATERIALS)
def test_pad_within_3_percent_of_held_out_finite_elements(material):
    # Goal of the kind: within 3 % of the finite-element reference over its declared range
    # (u/t <= MODEL_STRAIN_LIMIT, S <= S_MAX, the law band), on cases the fit did not see.
    # Measured: 2.8 % (two-term Ogden law, 30 x 12 x 2.68 mm, u/t = 0.075), 2.2 % the others.
    rows, dev = _held(material)
    worst = int(np.argmax(np.abs(dev)))
    assert np.abs(dev).max() <= 0.03, (
        f"{material}: kernel/FE - 1 = {dev[worst]:+.4f} at L={rows[worst]['L_mm']} W={rows[worst]['W_mm']} "
        f"t={float(rows[worst]['t_mm']):.4g} u/t={rows[worst]['strain']}")


def test_law_band_ends_the_range_where_a_held_out_law_is_missed():
    # The two-term Ogden law (mu = 0.4, -0.1 MPa; alpha = 3, -1.5) stiffens in shear: in the
    # 30 x 12 x 2.68 mm block (S = 1.6) its simple-shear secant at the bonded edge's shear strain
    # passes 1.2 G (the band's end, set on the training table's alpha = 4 law, not on this file)
    # beyond u/t = 0.09. There the kernel is 3.7 % (u/t = 0.1) to 5.4 % (0.15) soft: those rows are
    # outside the declared range, and only because of the law band.
    rows = [r for r in _read(HELDOUT) if r["material"] == "ogden_two_term" and r["W_mm"] == "12"
            and float(r["strain"]) <= MODEL_STRAIN_LIMIT * (1 + 1e-6)]
    outside = [r for r in rows if not _inside(r)]
    assert [float(r["strain"]) for r in outside] == pytest.approx([0.1, 0.125, 0.15])
    assert all(_margins(r)["law_nonlinearity"][0] > 0.0 and _margins(r)["compressive_strain"][0] <= 0.0
               for r in outside)
    dev = _kernel_over_reference(outside)
    assert dev.max() < -0.03                       # measured -3.75 %, -5.33 %, -5.41 %
    assert np.abs(_kernel_over_reference([r for r in rows if _inside(r)])).max() <= 0.03


#: the training table's two invented non-linear laws (fit_pad.LAW_CASES): not read by the fit, they set the law band
BAND_LAWS = ("ogden_a4", "ogden_neg")
#: largest |kernel/FE - 1| of their rows (u/t <= 0.15) inside and outside the band (``fit_pad.py check``)
MEASURED_BAND = {"ogden_a4": (0.0210, 0.2141), "ogden_neg": (0.0164, 0.0627)}


@pytest.mark.parametrize("material", BAND_LAWS)
def test_law_band_holds_the_goal_on_the_laws_that_set_it(material):
    # One-term Ogden laws far from linear (alpha = 4: stiff in shear; alpha = -2.5: stiff in
    # compression), solved on training-table blocks (S = 0.5, 1, 1.75). Inside the band the
    # kernel keeps 3 % (measured 2.1 %, 1.6 %); the rows the band excludes (u/t <= 0.15 all the
    # same) are farther off (measured 21 %, 6.3 %): without the band these laws would be inside
    # the declared range and silently wrong.
    rows = [r for r in _read(TRAINING) if r["material"] == material
            and float(r["strain"]) <= MODEL_STRAIN_LIMIT * (1 + 1e-6) and r["ref"] == "extrapolated"]
    inside = [r for r in rows if _inside(r)]
    outside = [r for r in rows if not _inside(r)]
    assert len(inside) >= 6 and len(outside) >= 3
    assert all(_margins(r)["law_nonlinearity"][0] > 0.0 for r in outside)
    worst_in, worst_out = MEASURED_BAND[material]
    assert np.abs(_kernel_over_reference(inside)).max() <= min(0.03, worst_in + 0.003)
    assert np.abs(_kernel_over_reference(outside)).max() >= worst_out - 0.003 > 0.03


def test_within_3_percent_of_every_held_out_law_until_the_bulge_meets_the_plates():
    # Until the bulge rolls onto the plates (S u/t <= 0.13, see springsynth.checks.verify.pad_force_fe)
    # the kernel meets the goal on every held-out case and law: measured 2.8 %.
    rows = [r for r in _read(HELDOUT) if _inside(r)
            and shape_factor(*(float(r[k]) for k in ("L_mm", "W_mm", "t_mm"))) * float(r["strain"]) <= 0.13]
    dev = _kernel_over_reference(rows)
    assert len(rows) >= 100 and {r["material"] for r in rows} == set(HELD_MATERIALS)
    assert np.abs(dev).max() <= 0.03


@pytest.mark.xfail(strict=True, reason=(
    "goal not reached: u/t <= 0.3 within 3 % of the held-out finite elements. The kernel's form refitted to "
    "u/t <= 0.3 stays 3.7-5.8 % off held-out cases (see springsynth.elements.elastomer_pad, Notes), so the "
    "declared range stays u/t <= 0.15; with the constants fitted to 0.15 the point-by-point model is far off"))
def test_goal_held_out_within_3_percent_up_to_u_over_t_0_3():
    # The model point by point (elastomer_pad.nominal_stress, no strain clamp) on every held-out row up
    # to u/t = 0.3 with an extrapolated reference (measured: 43 % off at u/t = 0.3).
    from springsynth.elements.elastomer_pad import nominal_stress
    rows = [r for r in _read(HELDOUT) if r["ref"] == "extrapolated" and float(r["strain"]) <= 0.3 + 1e-9]
    dev = []
    for r in rows:
        L, W, t, e = (float(r[k]) for k in ("L_mm", "W_mm", "t_mm", "strain"))
        sigma = nominal_stress(np.array([[e]]), np.array([L]), np.array([W]), np.array([t]), MaterialArrays.of(_material(r)))
        dev.append(sigma[0, 0] * L * W / float(r["F_ref_N"]) - 1.0)
    assert len(rows) >= 200
    assert np.abs(dev).max() <= 0.03


@pytest.mark.slow
def test_held_out_case_resolves_and_kernel_agrees():
    # One held-out case solved here (the two-term Ogden law the catalogue does not have, square
    # 20 x 20 x 14.29, S = 0.35; the smallest mesh of the set): the stored forces are the FE's
    # (same code and mesh, 1e-5 relative: Newton tolerance and a different load-step sequence),
    # and the kernel is within 3 % of the levels-3/4 extrapolation at u/t = 0.05, 0.1, 0.15
    # (measured 0.5 %).
    pytest.importorskip("felupe")
    from springsynth.checks.verify import pad_force_fe
    rows = [r for r in _read(HELDOUT) if r["material"] == "ogden_two_term" and float(r["L_mm"]) == 20.0
            and float(r["W_mm"]) == 20.0 and round(float(r["strain"]), 6) in (0.05, 0.1, 0.15)]
    assert len(rows) == 3
    t = float(rows[0]["t_mm"])
    e = np.array([float(r["strain"]) for r in rows])
    mat = _material(rows[0])
    F3 = pad_force_fe(20.0, 20.0, t, mat, e * t, n_edge=3)
    F4 = pad_force_fe(20.0, 20.0, t, mat, e * t, n_edge=4)
    assert F3 == pytest.approx([float(r["F_level3_N"]) for r in rows], rel=1e-5)
    assert F4 == pytest.approx([float(r["F_level4_N"]) for r in rows], rel=1e-5)
    p = {"length_mm": np.array([20.0]), "width_mm": np.array([20.0]), "thickness_mm": np.array([t])}
    kernel = PAD.force(p, MaterialArrays.of(mat), (e * t)[None, :])[0]
    assert np.abs(kernel / (4.0 * F4 - 3.0 * F3) - 1.0).max() <= 0.03


# --------------------------------------------------------------------------- Gent & Lindley 1959

def _apparent_modulus(S, mat, a=50.0):
    """Small-strain compression modulus F t/(A u) of a square a x a pad of shape factor S, MPa."""
    h = a / (4.0 * S)
    du = 1e-5 * h
    p = {"length_mm": np.array([a]), "width_mm": np.array([a]), "thickness_mm": np.array([h])}
    return PAD.force(p, MaterialArrays.of(mat), np.array([[du]]))[0, 0] / du * h / (a * a)


def _gent_lindley(S, E, B, beta):
    """1/E_a = 1/(E (1 + beta S^2)) + 1/B (Gent & Lindley 1959: pressure method plus bulk compliance)."""
    return 1.0 / (1.0 / (E * (1.0 + beta * S * S)) + 1.0 / B)


#: unfilled rubber of E = 3 MPa, bulk modulus B = 2000 MPa (neo-Hookean, mu = E/3, nu from B)
GL_RUBBER = {"law": "neo_hookean", "mu_MPa": 1.0, "nu": (3 * 2000.0 - 3.0) / (6 * 2000.0), "density_kg_m3": 1000.0,
             "strain_limit": 1.0}


def test_gent_lindley_check_value_and_rounded_coefficient():
    # A.N. Gent & P.B. Lindley, "The compression of bonded rubber blocks", Proc. Instn Mech.
    # Engrs 173:111-122, 1959 (citation from memory; the relation and the guidance below seen
    # as quoted in Strojniski vestnik - J. Mech. Eng. 60:506-511, 2014, eqs. (1)-(2)):
    # E_a = E (1 + beta S^2), beta = 2 "for square, circular or moderately rectangular" blocks
    # of unfilled rubber, and 1/E_a' = 1/E_a + 1/B for large S. Check value (computed from the
    # relation): S = 1.25, E = 3 MPa, B = 2000 MPa -> E_a' = 12.299 MPa.
    mat = material_from_mapping("gent_lindley_rubber", GL_RUBBER, where="test")
    assert _gent_lindley(1.25, 3.0, 2000.0, 2.0) == pytest.approx(12.299, abs=5e-4)
    # beta = 2 is rounded down for the square: the pressure method gives beta = 4 k1 (1 + b/a)^2
    # = 2.256 with the torsion coefficient k1 = 0.141 of the square (Timoshenko & Goodier,
    # Theory of Elasticity, 3rd ed., 1970, sec. 109 [memory]), so a square pad lies 9.5 %
    # above the rounded relation at S = 1.25. Measured: kernel +10.6 %; tolerance +5 ... +15 %.
    ratio = _apparent_modulus(1.25, mat) / 12.299 - 1.0
    assert 0.05 <= ratio <= 0.15


@pytest.mark.parametrize("S", [1.0, 1.25, 1.5, 1.75])
def test_gent_lindley_with_the_square_coefficient(S):
    # The same published relation with the square's pressure-method coefficient beta = 2.256
    # (see above) and the bulk compliance: the kernel's small-strain modulus within 2 % for
    # S >= 1, where the pressure part dominates (measured +1.8 % at S = 1 ... -0.3 % at S = 1.75;
    # the homogeneous part, which the relation counts as E, is 12 % stiffer in a bonded block).
    mat = material_from_mapping("gent_lindley_rubber", GL_RUBBER, where="test")
    assert _apparent_modulus(S, mat) == pytest.approx(_gent_lindley(S, 3.0, 2000.0, 16 * 0.141), rel=0.02)
