"""The duty from file to result: reading and validating [duty], defaults, designs, scores and the command line."""

from __future__ import annotations

import numpy as np
import pytest
from typer.testing import CliRunner

import springsynth as ss
from springsynth.assembly.design import Design, Element
from springsynth.assembly.duty import element_strokes
from springsynth.assembly.slots import Slots
from springsynth.checks.fatigue import fatigue_design, fatigue_population
from springsynth.cli import app
from springsynth.io.design_toml import design_from_mapping, design_to_toml
from springsynth.io.study_toml import apply_overrides
from springsynth.model.study import DEFAULTS, Duty
from springsynth.search.scoring import CONSTRAINTS, score, study_constraints
from tests.conftest import blade, design, write_study, write_target


@pytest.fixture
def target(tmp_path):
    return write_target(tmp_path / "t.csv", [0, 1, 2, 3, 4], [1, 2, 3, 4, 5])


def _study(tmp_path, target, extra="", **kw):
    return ss.load_study(write_study(tmp_path, str(target), extra=extra, population=8, generations=2, **kw))


# --------------------------------------------------------------------------- reading

def test_defaults_live_in_the_model():
    assert DEFAULTS["duty"] == {"cycles": 1e7, "stroke_min_mm": 0.0, "stroke_max_mm": None, "shot_peened": False}
    assert DEFAULTS["limits"]["fatigue_ratio"] == 1.0
    assert DEFAULTS["search"]["objectives"] == ("curve_error_pct", "stress_ratio", "size_mm3")


def test_a_study_without_duty_has_none(tmp_path, target):
    st = _study(tmp_path, target)
    assert st.duty is None and st.search.objectives == ("curve_error_pct", "stress_ratio", "size_mm3")


def test_duty_defaults_to_the_targets_last_point(tmp_path, target):
    st = _study(tmp_path, target, extra="[duty]\ncycles = 1e6\nstroke_min_mm = 1.5\n")
    assert st.duty == Duty(cycles=1e6, stroke_min_mm=1.5, stroke_max_mm=4.0, shot_peened=False)


@pytest.mark.parametrize("extra, words", [
    ("[duty]\ncycels = 1e6\n", ["[duty]", "'cycels'", "did you mean 'cycles'"]),
    ("[duty]\ncycles = -5\n", ["[duty].cycles", "got -5"]),
    ("[duty]\ncycles = true\n", ["[duty].cycles", "got True"]),
    ("[duty]\nstroke_min_mm = 2\nstroke_max_mm = 2\n", ["[duty].stroke_max_mm", "above stroke_min_mm = 2"]),
    ("[duty]\nstroke_max_mm = 9\n", ["stroke_max_mm = 9", "beyond the target's last point (4 mm)"]),
    ("[duty]\nstroke_min_mm = 4\n", ["stroke_min_mm = 4", "below stroke_max_mm = 4"]),
    ("[duty]\nshot_peened = 1\n", ["[duty].shot_peened", "true or false"]),
    ("[limits_x]\n", ["unknown key 'limits_x'"]),
])
def test_bad_duty_values_give_one_line(tmp_path, target, extra, words):
    with pytest.raises(ss.InputError) as e:
        _study(tmp_path, target, extra=extra)
    msg = str(e.value)
    assert "\n" not in msg
    for w in words:
        assert w in msg, msg


def test_fatigue_keys_need_a_duty(tmp_path, target):
    with pytest.raises(ss.InputError, match=r"limits.fatigue_ratio needs a \[duty\]"):
        ss.load_study(write_study(tmp_path, str(target)), overrides=["limits.fatigue_ratio=0.8"])
    with pytest.raises(ss.InputError, match="the objective fatigue_ratio needs a"):
        ss.load_study(write_study(tmp_path, str(target)),
                      overrides=['search.objectives=["curve_error_pct", "stress_ratio", "size_mm3", "fatigue_ratio"]'])


@pytest.mark.parametrize("objectives, words", [
    ('["curve_error_pct", "stress_ratio"]', ["must include", "missing size_mm3", "may add fatigue_ratio"]),
    ('["curve_error_pct", "stress_ratio", "size_mm3", "size_mm3"]', ["names an objective twice"]),
    ('["curve_error_pct", "stress_ratio", "size_mm3", "fatige_ratio"]', ["did you mean 'fatigue_ratio'"]),
    ('"fatigue_ratio"', ["must be a list"]),
])
def test_objectives_are_validated(tmp_path, target, objectives, words):
    with pytest.raises(ss.InputError) as e:
        _study(tmp_path, target, extra=f"objectives = {objectives}\n[duty]\ncycles = 1e6\n")
    for w in words:
        assert w in str(e.value), str(e.value)


def test_objectives_may_add_fatigue_in_any_order(tmp_path, target):
    st = _study(tmp_path, target, extra='objectives = ["fatigue_ratio", "size_mm3", "curve_error_pct", '
                                        '"stress_ratio"]\n[duty]\ncycles = 1e6\n')
    assert st.search.objectives == ("curve_error_pct", "stress_ratio", "size_mm3", "fatigue_ratio")


def test_a_material_without_fatigue_data_is_refused_under_a_duty(tmp_path, target):
    with pytest.raises(ss.InputError) as e:
        _study(tmp_path, target, extra="[duty]\ncycles = 1e6\n", materials=("stainless_17_7ph", "pom"))
    assert "'pom'" in str(e.value) and "fatigue_MPa" in str(e.value) and "[search].materials" in str(e.value)
    # without a duty the same study is fine
    assert _study(tmp_path, target, materials=("stainless_17_7ph", "pom")).duty is None


def test_rerun_set_reaches_the_duty(tmp_path, target):
    path = write_study(tmp_path, str(target), extra="[duty]\ncycles = 1e6\n")
    st = ss.load_study(path, overrides=["duty.cycles=2e5", "duty.shot_peened=true", "limits.fatigue_ratio=0.9"])
    assert st.duty.cycles == 2e5 and st.duty.shot_peened and st.limits.fatigue_ratio == 0.9
    with pytest.raises(ss.InputError, match="did you mean 'stroke_min_mm'"):
        apply_overrides({"duty": {}}, ["duty.stroke_mn_mm=1"])


def test_a_design_file_keeps_its_duty_and_inline_fatigue_data():
    mat = {"E_MPa": 200_000, "density_kg_m3": 7800, "yield_MPa": 1200, "fatigue_MPa": 480.0,
           "fatigue_cycles": 1e6, "forms": ["strip"]}
    doc = {"name": "d", "materials": {"lab": mat}, "duty": {"cycles": 3e5, "stroke_min_mm": 0.5},
           "element": [{"kind": "blade_guided", "material": "lab", "length_mm": 30.0, "width_mm": 10.0,
                        "thickness_mm": 0.3}]}
    d = design_from_mapping(doc, where="d.toml")
    assert d.duty == Duty(cycles=3e5, stroke_min_mm=0.5, stroke_max_mm=None)
    import tomllib

    back = design_from_mapping(tomllib.loads(design_to_toml(d)), where="again.toml")
    assert back.duty == d.duty and back.materials["lab"] == d.materials["lab"]


# --------------------------------------------------------------------------- evaluation

def test_element_strokes_apply_gaps_and_preloads():
    d = design(blade(offset_mm=1.0), blade(offset_mm=-0.5))
    u = element_strokes(Slots.from_designs([d]), np.array([0.0, 2.0]))
    assert u.shape == (1, 2, 2)
    np.testing.assert_allclose(u[0], [[0.0, 1.0], [0.5, 2.5]])


def test_population_and_design_agree():
    designs = [design(blade(params={"thickness_mm": t}), blade(offset_mm=o)) for t, o in ((0.2, 0.0), (0.35, 1.0),
                                                                                          (0.5, -0.5))]
    duty = Duty(cycles=1e6, stroke_min_mm=0.5, stroke_max_mm=3.0)
    pop = fatigue_population(Slots.from_designs(designs), duty)
    for d, r in zip(designs, pop):
        assert r == pytest.approx(fatigue_design(d, duty).ratio, rel=1e-12)
    assert pop[0] < pop[2]          # thicker blade, same stroke: more stress


def test_scores_without_a_duty_keep_their_shape(tmp_path, target):
    st = _study(tmp_path, target)
    slots = Slots.from_designs([design(blade())], kinds=st.search.kinds, materials=st.search.materials)
    sc = score(st, slots)
    assert sc.F.shape == (1, 3) and sc.G.shape == (1, len(CONSTRAINTS))
    assert sc.G[0, CONSTRAINTS.index("fatigue")] == -1.0
    assert "fatigue" not in [CONSTRAINTS[j] for j in study_constraints(st)]


def test_scores_under_a_duty(tmp_path, target):
    st = _study(tmp_path, target, extra='objectives = ["curve_error_pct", "stress_ratio", "size_mm3", '
                                        '"fatigue_ratio"]\n[duty]\ncycles = 1e6\n')
    st = ss.load_study(st.path, overrides=["limits.fatigue_ratio=0.5"])
    slots = Slots.from_designs([design(blade()), design(blade(params={"thickness_mm": 1.0}))],
                               kinds=st.search.kinds, materials=st.search.materials)
    sc = score(st, slots)
    fr = fatigue_population(slots, st.duty)
    np.testing.assert_allclose(sc.F[:, 3], fr)
    np.testing.assert_allclose(sc.G[:, CONSTRAINTS.index("fatigue")], np.maximum(fr / 0.5 - 1.0, -1.0))


def test_missing_data_in_a_design_is_an_input_error():
    e = Element("blade_guided", "pom", 1, 0.0, {"length_mm": 30.0, "width_mm": 10.0, "thickness_mm": 1.0})
    d = Design((e,), {"pom": ss.catalogue()["pom"]}, name="d")
    with pytest.raises(ss.InputError, match="'pom' has no fatigue data"):
        fatigue_design(d, Duty(stroke_max_mm=1.0))


def test_evaluate_prints_the_fatigue_table(tmp_path):
    d = design(blade(count=2), blade(offset_mm=1.0))
    text = design_to_toml(d).replace('name = "d"', 'name = "d"\n\n[duty]\ncycles = 1e5\nstroke_min_mm = 0.5')
    p = tmp_path / "d.toml"
    p.write_text(text)
    r = CliRunner().invoke(app, ["evaluate", str(p), "--to", "3"], env={"COLUMNS": "200"})
    assert r.exit_code == 0, r.output
    assert "fatigue: 100\u2009000 cycles between strokes 0.5 and 3 mm" in r.output
    assert "e2 blade_guided" in r.output and "survives the duty" in r.output
    r = CliRunner().invoke(app, ["evaluate", str(p), "--to", "0.4"])
    assert r.exit_code == 2 and "stroke_min_mm = 0.5 must lie below stroke_max_mm = 0.4" in r.output


def test_every_kind_declares_a_fatigue_criterion():
    from dataclasses import replace

    from springsynth.checks.fatigue import CRITERIA
    from springsynth.elements import missing_declarations, registry

    for kind in registry().values():
        assert kind.fatigue in CRITERIA, kind.name
    bogus = replace(registry()["blade_guided"], fatigue="bending")
    assert any(m.startswith("fatigue") for m in missing_declarations(bogus))


def test_cycles_are_written_for_people():
    from springsynth.model.numbers import cycles_text

    assert [cycles_text(v) for v in (float("nan"), float("inf"), 12.0, 34017.0, 2.1e8, 3e14)] == \
        ["–", "unlimited", "< 1000", "34\u2009000", "2.1e8", "> 1e12"]


def test_fatigue_figure_and_card():
    from springsynth.report.fatigue import fatigue_card, plot_fatigue
    from springsynth.report.style import png_bytes

    d = design(blade(), blade(offset_mm=0.5, params={"thickness_mm": 0.6}))
    rep = fatigue_design(d, Duty(cycles=1e6, stroke_min_mm=0.5, stroke_max_mm=3.0))
    fig = plot_fatigue(rep, limit=0.8, title="d: fatigue")
    assert len([ax for ax in fig.axes if ax.get_visible()]) == 2
    assert fig.axes[1].get_title().startswith("e2 blade_guided")
    assert png_bytes(fig).startswith(b"\x89PNG")
    html = fatigue_card(rep, "<img>")
    assert html.count("<tr><td>e") == 2 and f"<b>{rep.ratio:.3g}</b>" in html and "1\u2009000\u2009000 cycles" in html
