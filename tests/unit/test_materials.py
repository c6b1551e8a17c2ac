"""The materials catalogue, inline materials and their population arrays.

Check values: the design notes (required ids); Budynas & Nisbett, *Shigley's Mechanical
Engineering Design*, 9th ed., ch. 10 (Tables 10-4, 10-5, 10-6); R.W. Ogden, Proc. R. Soc.
Lond. A 326:565-584, 1972 (three-term fit to Treloar's rubber data); the incompressible
uniaxial laws (neo-Hookean, Mooney-Rivlin, Ogden: common practice). Where a value is
recalled rather than read, the comment says "memory"; "computed" values were worked out
from the formula named beside them.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from springsynth.model.errors import InputError
from springsynth.model.materials import N_OGDEN, MaterialArrays, catalogue, material_from_mapping

# DESIGN.md, "Element kinds", materials paragraph
DESIGN_IDS = (
    "music_wire", "chrome_silicon", "stainless_302", "stainless_17_7ph", "beryllium_copper",
    "phosphor_bronze", "copper", "titanium_6al4v", "aluminium_7075_t6", "carbon_steel_1095",
    "peek", "pom", "pa12", "polypropylene", "tpu", "silicone", "natural_rubber",
)
ELASTOMERS = ("tpu", "silicone", "natural_rubber")


def ogden_nominal(mu, alpha, lam):
    """Uniaxial nominal stress of an incompressible Ogden solid (Ogden 1972):
    P = sum mu_p (lam^(alpha_p - 1) - lam^(-alpha_p/2 - 1))."""
    return sum(m * (lam ** (a - 1.0) - lam ** (-a / 2.0 - 1.0)) for m, a in zip(mu, alpha))


def test_every_design_id_present_with_source():
    cat = catalogue()
    for mid in DESIGN_IDS:
        assert mid in cat, mid
        assert cat[mid].source.strip(), mid
        assert cat[mid].id == mid


def test_every_row_is_sourced_and_formed():
    for m in catalogue().values():
        assert len(m.source) > 20, m.id
        assert m.forms, m.id


@pytest.mark.parametrize("mid", ELASTOMERS)
def test_elastomers_have_laws(mid):
    m = catalogue()[mid]
    assert m.hyperelastic and m.law != "linear"
    assert "elastomer" in m.forms
    assert math.isfinite(m.strain_limit) and m.strain_limit > 0
    assert m.initial_shear_MPa > 0
    # the small-strain shear modulus of the row agrees with its law (within 1 %)
    assert m.G_MPa == pytest.approx(m.initial_shear_MPa, rel=0.01)


def test_linear_materials_have_no_law():
    for m in catalogue().values():
        if m.id not in ELASTOMERS:
            assert m.law == "linear" and not m.ogden_mu_MPa, m.id


def test_forms_as_specified():
    cat = catalogue()
    assert set(cat["music_wire"].forms) == {"wire"}
    assert set(cat["chrome_silicon"].forms) == {"wire"}
    assert set(cat["stainless_302"].forms) == {"wire", "strip"}
    for mid in ("stainless_17_7ph", "beryllium_copper", "phosphor_bronze"):
        assert set(cat[mid].forms) == {"wire", "strip"}, mid
    assert set(cat["carbon_steel_1095"].forms) == {"strip"}
    for mid in ("copper", "titanium_6al4v", "aluminium_7075_t6", "peek", "pom", "pa12", "polypropylene"):
        assert set(cat[mid].forms) == {"strip", "bulk"}, mid
    assert set(cat["tpu"].forms) == {"elastomer", "strip"}
    assert set(cat["silicone"].forms) == {"elastomer"}
    assert set(cat["natural_rubber"].forms) == {"elastomer", "strip"}  # also calendered sheet strip


def test_spring_wires():
    cat = catalogue()
    # Shigley Table 10-4, music wire: A = 2211 MPa mm^m, m = 0.145 (A = 201 kpsi in^m and m = 0.145 seen in a
    # Shigley solutions-manual excerpt; 2211 is the book's SI value)
    mw = cat["music_wire"]
    assert mw.sut_A_MPa == pytest.approx(2211) and mw.sut_m == pytest.approx(0.145)
    # static allowable at d = 1 mm: 0.45 x 2211 = 995 MPa [computed]
    assert mw.sut_A_MPa * 1.0 ** -mw.sut_m * mw.torsion_share == pytest.approx(995, abs=0.5)
    cs = cat["chrome_silicon"]
    # Shigley Table 10-4, Cr-Si A401: A = 1974 MPa mm^m, m = 0.108 [memory]
    assert cs.sut_A_MPa == pytest.approx(1974) and cs.sut_m == pytest.approx(0.108)
    # Shigley Table 10-6 (after Sines), set not removed: 0.45 music wire (seen in a solutions-manual excerpt),
    # 0.50 hardened & tempered incl. Cr-Si, 0.35 austenitic stainless / non-ferrous [memory]
    assert mw.torsion_share == 0.45
    assert cs.torsion_share == 0.50
    for mid in ("stainless_302", "beryllium_copper", "phosphor_bronze"):
        assert cat[mid].torsion_share == 0.35, mid
    # Shigley Table 10-5 (seen): G = 81.7 GPa for 0.8-1.6 mm music wire, the tabulated value; spring-wire E and G
    # are not isotropic-consistent (E/(2G) - 1 = 0.23 for fine music wire), so G is not E/(2(1+nu))
    assert mw.G_MPa == pytest.approx(81_700)
    assert mw.G_MPa != pytest.approx(mw.E_MPa / (2 * (1 + mw.nu)), rel=0.05)
    for m in cat.values():
        if "wire" in m.forms:
            assert math.isfinite(m.torsion_share), m.id
        if math.isfinite(m.sut_A_MPa):
            assert math.isfinite(m.sut_m), m.id


def test_natural_rubber_initial_shear():
    # Ogden 1972, mu = (6.3, 0.012, -0.1) kg/cm^2 = (0.6178, 0.001177, -0.009807) MPa, alpha = (1.3, 5, -2)
    # [memory; the same set is used by a public FE test deck]: initial mu = sum(mu_p alpha_p)/2 = 0.4143 MPa [computed]
    assert catalogue()["natural_rubber"].initial_shear_MPa == pytest.approx(0.4143, abs=5e-5)


def test_natural_rubber_vectors():
    # nominal stress of the Ogden 1972 set at lambda = 1.5, 2, 3 [computed from the formula above, 4 decimals]
    m = catalogue()["natural_rubber"]
    for lam, P in ((1.5, 0.3939), (2.0, 0.5911), (3.0, 0.8629)):
        assert ogden_nominal(m.ogden_mu_MPa, m.ogden_alpha, lam) == pytest.approx(P, abs=6e-5)


# --------------------------------------------------------------------------- arrays

def test_material_arrays_gather():
    cat = catalogue()
    mats = [cat["music_wire"], cat["natural_rubber"], cat["peek"]]
    idx = np.array([2, 0, 2, 1])
    a = MaterialArrays.take(mats, idx)
    np.testing.assert_array_equal(a.E, [mats[i].E_MPa for i in idx])
    np.testing.assert_array_equal(a.G, [mats[i].G_MPa for i in idx])
    np.testing.assert_array_equal(a.rho, [mats[i].density_kg_m3 for i in idx])
    np.testing.assert_array_equal(a.yield_, [mats[i].yield_MPa for i in idx])
    np.testing.assert_array_equal(a.hyperelastic, [False, False, False, True])
    assert a.ogden_mu.shape == (4, N_OGDEN)
    np.testing.assert_array_equal(a.ogden_mu[3], mats[1].ogden_mu_MPa)
    np.testing.assert_array_equal(a.ogden_mu[0], np.zeros(N_OGDEN))
    assert np.isnan(a.sut_A[0]) and a.sut_A[1] == 2211
    sub = a.subset(np.array([1, 3]))
    np.testing.assert_array_equal(sub.E, [mats[0].E_MPa, mats[1].E_MPa])
    one = MaterialArrays.of(mats[0], 3)
    np.testing.assert_array_equal(one.torsion_share, [0.45] * 3)


# --------------------------------------------------------------------------- inline

def test_inline_linear_derives_G():
    m = material_from_mapping("lab_strip", {"E_MPa": 203_000, "nu": 0.30, "density_kg_m3": 7800,
                                            "yield_MPa": 1300, "fatigue_MPa": 620}, where="design.toml")
    assert m.G_MPa == pytest.approx(203_000 / 2.6, rel=1e-12)      # G = E/(2(1+nu))
    assert m.uts_MPa == 1300 and m.fatigue_MPa == 620
    assert not m.hyperelastic
    given = material_from_mapping("lab_wire", {"E_MPa": 203_000, "G_MPa": 75_800, "density_kg_m3": 7800,
                                               "yield_MPa": 1300}, where="design.toml")
    assert given.G_MPa == 75_800


def test_inline_mooney_rivlin_maps_to_ogden():
    m = material_from_mapping("lab_rubber", {"law": "mooney_rivlin", "C10_MPa": 0.16, "C01_MPa": 0.02,
                                             "density_kg_m3": 1100, "strain_limit": 1.0}, where="study.toml")
    assert m.hyperelastic and "elastomer" in m.forms
    assert m.initial_shear_MPa == pytest.approx(2 * (0.16 + 0.02), rel=1e-12)   # mu = 2(C10 + C01)
    # Mooney-Rivlin P = 2 (C10 + C01/lam)(lam - lam^-2) (common practice) for C10 = 0.16, C01 = 0.02
    # [computed, 4 decimals]
    for lam, P in ((1.5, 0.3659), (2.0, 0.5950), (3.0, 0.9630)):
        closed = 2 * (0.16 + 0.02 / lam) * (lam - lam**-2)
        assert closed == pytest.approx(P, abs=6e-5)
        assert ogden_nominal(m.ogden_mu_MPa, m.ogden_alpha, lam) == pytest.approx(closed, rel=1e-12)


def test_inline_neo_hookean():
    m = material_from_mapping("lab_rubber", {"law": "neo_hookean", "mu_MPa": 0.4, "density_kg_m3": 1100,
                                             "strain_limit": 0.5}, where="study.toml")
    # neo-Hookean P = mu (lam - lam^-2) (common practice), mu = 0.4 [computed, 4 decimals]
    for lam, P in ((1.5, 0.4222), (2.0, 0.7000), (3.0, 1.1556)):
        assert ogden_nominal(m.ogden_mu_MPa, m.ogden_alpha, lam) == pytest.approx(P, abs=6e-5)


@pytest.mark.parametrize("table, word", [
    ({"E_MPa": 200_000, "yield_MPa": 1000}, "density_kg_m3"),
    ({"density_kg_m3": 7800, "yield_MPa": 1000}, "E_MPa"),
    ({"E_MPa": 200_000, "density_kg_m3": 7800}, "yield_MPa"),
    ({"E_MPa": -5.0, "density_kg_m3": 7800, "yield_MPa": 1000}, "E_MPa"),
    ({"E_MPa": 200_000, "nu": 0.6, "density_kg_m3": 7800, "yield_MPa": 1000}, "nu"),
    ({"E_MPa": 200_000, "density_kg_m3": 7800, "yield_MPa": 1000, "youngs": 1}, "youngs"),
    ({"E_MPa": "stiff", "density_kg_m3": 7800, "yield_MPa": 1000}, "E_MPa"),
    ({"E_MPa": 200_000, "density_kg_m3": 7800, "yield_MPa": 1000, "forms": ["coil"]}, "forms"),
    ({"law": "ogden", "mu_MPa": [0.6, 0.001], "alpha": [1.3], "density_kg_m3": 930, "strain_limit": 1}, "alpha"),
    ({"law": "mooney_rivlin", "C10_MPa": 0.16, "density_kg_m3": 1100, "strain_limit": 1}, "C01_MPa"),
    ({"law": "neo_hookean", "mu_MPa": -0.4, "density_kg_m3": 1100, "strain_limit": 1}, "shear"),
    ({"law": "yeoh", "density_kg_m3": 1100}, "law"),
])
def test_bad_inline_material(table, word):
    with pytest.raises(InputError) as info:
        material_from_mapping("bad", table, where="study.toml")
    msg = str(info.value)
    assert "study.toml [materials.bad]" in msg
    assert word in msg


def test_materials_equal_their_pickled_copies():
    # unknown properties are NaN, and NaN != NaN: a material read back from a checkpoint must still
    # equal the catalogue's, or a design written after a resume carries catalogue materials inline
    import pickle
    import tomllib

    from springsynth.assembly.design import Design, Element
    from springsynth.io.design_toml import design_from_mapping, design_to_toml

    for m in catalogue().values():
        copy = pickle.loads(pickle.dumps(m))
        assert copy is not m and copy == m and hash(copy) == hash(m)
    copied = pickle.loads(pickle.dumps(catalogue()["music_wire"]))
    assert any(isinstance(v, float) and math.isnan(v) for v in vars(copied).values())   # the case at stake
    d = Design((Element("helical_compression", "music_wire", 1, 0.0, {"wire_diameter_mm": 0.8, "mean_diameter_mm": 6.0,
                                                                       "active_coils": 8.0, "free_length_mm": 25.0}),),
               {"music_wire": copied}, name="D01")
    text = design_to_toml(d)
    assert "[materials." not in text
    back = design_from_mapping(tomllib.loads(text), where="D01.toml")   # read back: no "redefines" error
    assert back.materials["music_wire"] == catalogue()["music_wire"]


def test_materials_differ_when_a_property_does():
    import dataclasses

    m = catalogue()["stainless_17_7ph"]
    assert math.isfinite(m.fatigue_MPa)                                # a value to make unknown
    assert dataclasses.replace(m, E_MPa=m.E_MPa * 1.001) != m
    assert dataclasses.replace(m, fatigue_MPa=math.nan) != m          # unknown is not equal to a value


@pytest.mark.parametrize("law, constants", [
    ("neo_hookean", {"mu_MPa": 0.42}),
    ("mooney_rivlin", {"C10_MPa": 0.16, "C01_MPa": 0.02}),
    ("ogden", {"mu_MPa": [0.6178, 0.001177, -0.009807], "alpha": [1.3, 5.0, -2.0]}),
])
def test_hyperelastic_inline_material_gets_its_laws_default_strain_limit(law, constants):
    from springsynth.model.materials import DEFAULT_STRAIN_LIMIT

    m = material_from_mapping("lab", {"law": law, "density_kg_m3": 1100, **constants}, where="d.toml")
    assert m.strain_limit == DEFAULT_STRAIN_LIMIT[law] and 0 < m.strain_limit <= 1.0
    (notice,) = m.notices
    assert "strain_limit" in notice and f"{m.strain_limit:g}" in notice and law in notice and "d.toml" in notice
    given = material_from_mapping("lab", {"law": law, "density_kg_m3": 1100, "strain_limit": 0.3, **constants},
                                  where="d.toml")
    assert given.strain_limit == 0.3 and given.notices == ()
    assert m.yield_MPa == pytest.approx(m.E_MPa * m.strain_limit)    # the allowable follows the limit
