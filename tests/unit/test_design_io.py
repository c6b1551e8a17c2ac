"""Design files: round trip, inline materials, and errors that name file and field."""

import numpy as np
import pytest

from springsynth.assembly.evaluate import evaluate_design
from springsynth.io.design_toml import design_to_toml, load_design
from springsynth.model.errors import InputError
from tests.conftest import blade, design

GOOD = """
[materials.lab_strip]
E_MPa = 203000
nu = 0.30
density_kg_m3 = 7800
yield_MPa = 1300

[[element]]
kind = "blade_guided"
material = "lab_strip"
count = 2
offset_mm = -0.5
length_mm = 24.0
width_mm = 6.0
thickness_mm = 0.25
"""


def test_reads_design_with_inline_material(tmp_path):
    p = tmp_path / "d.toml"
    p.write_text(GOOD)
    d = load_design(p)
    m = d.materials["lab_strip"]
    # G from E and nu for an isotropic solid, G = E / (2 (1 + nu)) (common practice)
    assert m.G_MPa == pytest.approx(203000 / 2.6)
    assert d.elements[0].count == 2 and d.elements[0].offset_mm == -0.5


def test_round_trip_reproduces_force(tmp_path):
    p = tmp_path / "d.toml"
    p.write_text(GOOD)
    d = load_design(p)
    q = tmp_path / "again.toml"
    q.write_text(design_to_toml(d))
    d2 = load_design(q)
    x = np.linspace(0, 3, 31)
    assert np.array_equal(evaluate_design(d, x).force_N, evaluate_design(d2, x).force_N)


def test_catalogue_design_round_trip(tmp_path):
    d = design(blade(count=3, offset_mm=0.7, params={"length_mm": 27.123456789012345}))
    q = tmp_path / "x.toml"
    q.write_text(design_to_toml(d))
    assert load_design(q).elements == d.elements


@pytest.mark.parametrize("edit, needle", [
    (lambda s: s.replace('kind = "blade_guided"', 'kind = "blade_guidded"'), "did you mean 'blade_guided'"),
    (lambda s: s.replace('material = "lab_strip"', 'material = "unobtainium"'), "unknown material 'unobtainium'"),
    (lambda s: s.replace("thickness_mm = 0.25", "thickness_mm = -0.25"), "thickness_mm: must be > 0"),
    (lambda s: s.replace("thickness_mm = 0.25", ""), "missing thickness_mm"),
    (lambda s: s.replace("width_mm = 6.0", 'width_mm = "wide"'), "width_mm: must be a finite number"),
    (lambda s: s.replace("count = 2", "count = 0"), "count must be a whole number >= 1"),
    (lambda s: s.replace("count = 2", "count = 2\ncolour = 3"), "unknown field for blade_guided 'colour'"),
    (lambda s: s.replace("[[element]]", "[[elements]]"), "did you mean 'element'"),
    (lambda s: s.replace("count = 2", "count = = 2"), "TOML syntax error"),
    (lambda s: s.replace("E_MPa = 203000", ""), "E_MPa is required"),
])
def test_bad_designs(tmp_path, edit, needle):
    p = tmp_path / "bad.toml"
    p.write_text(edit(GOOD))
    with pytest.raises(InputError) as e:
        load_design(p)
    assert needle in str(e.value) and "bad.toml" in str(e.value)


def test_material_must_suit_kind(tmp_path):
    p = tmp_path / "bad.toml"
    p.write_text(GOOD.replace('material = "lab_strip"', 'material = "silicone"'))
    with pytest.raises(InputError, match="does not suit blade_guided"):
        load_design(p)
