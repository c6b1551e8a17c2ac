"""Study files: defaults, relative paths, overrides, and errors with suggestions."""

import pytest

from springsynth.io.study_toml import apply_overrides, load_study
from springsynth.model.errors import InputError


def test_defaults_and_relative_target(linear_study):
    st = load_study(linear_study)
    assert st.target_path.parent == linear_study.parent
    assert st.limits.stress_ratio == 0.8
    assert [k.name for k in st.search.kinds] == ["blade_guided", "helical_compression"]
    assert len(st.hash()) == 16


def test_overrides_apply_and_are_validated(linear_study):
    st = load_study(linear_study, overrides=["limits.stress_ratio=0.6", "envelope.length_mm=40"])
    assert st.limits.stress_ratio == 0.6 and st.envelope.length_mm == 40
    with pytest.raises(InputError, match="did you mean 'stress_ratio'"):
        load_study(linear_study, overrides=["limits.stress_ration=0.6"])
    with pytest.raises(InputError, match="must be > 0"):
        load_study(linear_study, overrides=["envelope.width_mm=-3"])


def test_override_parser_keeps_strings():
    assert apply_overrides({}, ["name=abc"])["name"] == "abc"


@pytest.mark.parametrize("old, new, needle", [
    ("[limits]", "[limit]", "did you mean 'limits'"),
    ("stress_ratio = 0.8", "stress_ratoi = 0.8", "did you mean 'stress_ratio'"),
    ('file = "lin.csv"', 'file = "missing.csv"', "not found"),
    ("length_mm = 60", "length_mm = 0", "must be > 0"),
    ("length_mm = 60", 'length_mm = "long"', "must be a number"),
    ('"music_wire"]', '"music_wier"]', "did you mean 'music_wire'"),
    ('elements = ["blade_guided"', 'elements = ["blade_gided"', "did you mean 'blade_guided'"),
    ("population = 60", "population = 2.5", "whole number"),
    ("seed = 3", "seed = true", "must be a whole number"),
    ("[search]", "[search]\npolish = 3", "true or false"),
])
def test_bad_studies(linear_study, old, new, needle):
    text = linear_study.read_text()
    assert old in text
    linear_study.write_text(text.replace(old, new))
    with pytest.raises(InputError) as e:
        load_study(linear_study)
    assert needle in str(e.value) and "study.toml" in str(e.value)


def test_kind_without_suitable_material(linear_study):
    text = linear_study.read_text().replace('materials = ["stainless_17_7ph", "music_wire"]', 'materials = ["music_wire"]')
    linear_study.write_text(text)
    with pytest.raises(InputError, match="no listed material suits blade_guided"):
        load_study(linear_study)


def test_target_scales_multiply_forces_band_and_stroke(linear_study):
    base = load_study(linear_study).target
    st = load_study(linear_study, overrides=["target.scale_force=2.5", "target.scale_stroke=0.5"])
    t = st.target
    # the linear target of the fixture: F = 3 + 1.2 x over 0..6 mm, band +/- 0.3 N
    assert t.x_mm == pytest.approx(0.5 * base.x_mm) and t.stroke_mm == pytest.approx(3.0)
    assert t.force_N == pytest.approx(2.5 * (3.0 + 1.2 * base.x_mm))
    assert t.force_hi_N - t.force_N == pytest.approx(2.5 * 0.3) and t.force_N - t.force_lo_N == pytest.approx(0.75)
    assert st.hash() != load_study(linear_study).hash()
    assert load_study(linear_study, overrides=["target.scale_force=1"]).target.force_N == pytest.approx(base.force_N)
    # a curve off by the same share of the target is off by the same percentage after scaling
    off = base.force_N[None] * 1.1
    assert t.curve_error_pct(2.5 * off)[0] == pytest.approx(base.curve_error_pct(off)[0])


@pytest.mark.parametrize("setting, needle", [
    ("target.scale_force=-1", "[target].scale_force: must be > 0, got -1"),
    ("target.scale_stroke=0", "[target].scale_stroke: must be > 0, got 0"),
    ('target.scale_force="big"', "[target].scale_force: must be a number, got 'big'"),
    ("target.scale_force=nan", "[target].scale_force: must be a number, got nan"),
    ("target.scale_stroke=1e9", "[target].scale_stroke: must be at most 1000000, got 1000000000.0"),
    ("target.scale_forse=2", "did you mean 'scale_force'"),
])
def test_bad_target_scales(linear_study, setting, needle):
    with pytest.raises(InputError) as e:
        load_study(linear_study, overrides=[setting])
    assert needle in str(e.value)
