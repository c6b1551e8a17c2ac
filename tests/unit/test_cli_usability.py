"""The command line as a new user meets it: one-line errors, 80-column tables, percentages, the run's
own target for designs taken from a run, model warnings apart from design-rule notices."""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest
from rich.console import Console
from typer.testing import CliRunner

import springsynth.cli as cli
from springsynth.assembly.design import Element
from springsynth.elements import design_rule_names, get_kind, registry, split_margins
from springsynth.io.design_toml import design_to_toml
from springsynth.io.study_toml import load_study
from springsynth.model.materials import MaterialArrays, catalogue
from springsynth.search.scoring import CONSTRAINTS
from springsynth.search.synthesis import Synthesis
from tests.conftest import blade, design, write_study, write_target

runner = CliRunner()


def _lines(text: str) -> list[str]:
    return [ln for ln in text.splitlines() if ln.strip()]


@pytest.fixture
def narrow(monkeypatch):
    """The command line's output console as an 80-column terminal."""
    monkeypatch.setattr(cli, "out", Console(width=80, highlight=False, soft_wrap=True))


def _coil(D: float, L0: float = 25.0, offset_mm: float = 0.0) -> Element:
    return Element("helical_compression", "music_wire", 1, offset_mm,
                   {"wire_diameter_mm": 0.8, "mean_diameter_mm": D, "active_coils": 8.0, "free_length_mm": L0})


def hand_run(folder, designs, *, errors=None):
    """A run folder as `springsynth run` writes it, made by hand (no search): study, target,
    run.json, pareto.csv and one design file per design."""
    folder.mkdir()
    x = np.linspace(0.0, 5.0, 11)
    write_target(folder / "target.csv", x, 2.0 + 1.5 * x, tol=0.3)
    write_study(folder, "target.csv")
    (folder / "run.json").write_text(json.dumps({"study": "t", "partial": False, "overrides": []}))
    ids = [d.name for d in designs]
    pd.DataFrame({"design_id": ids, "curve_error_pct": errors or [1.0] * len(ids)}).to_csv(folder / "pareto.csv",
                                                                                           index=False)
    (folder / "designs").mkdir()
    for d in designs:
        (folder / "designs" / f"{d.name}.toml").write_text(design_to_toml(d))
    return folder


# --------------------------------------------------------------------------- usage errors and help

def test_a_bad_option_value_is_one_line_with_exit_code_2():
    r = runner.invoke(cli.app, ["run", "study.toml", "--population", "abc"])
    assert r.exit_code == 2
    (line,) = _lines(r.output)
    assert line.startswith("error:") and "--population" in line and "'abc'" in line and "--help" in line
    assert "╭" not in r.output and "Traceback" not in r.output
    r = runner.invoke(cli.app, ["run", "study.toml", "--population=2"])
    assert r.exit_code == 2 and len(_lines(r.output)) == 1 and "'2'" in r.output
    r = runner.invoke(cli.app, ["verify"])
    assert r.exit_code == 2 and len(_lines(r.output)) == 1 and "Missing argument" in r.output


def test_help_lists_options_without_type_noise():
    r = runner.invoke(cli.app, ["run", "--help"])
    assert r.exit_code == 0 and "--help" in r.output and "--resume" in r.output
    assert "<bool>" not in r.output and "╭" not in r.output


# --------------------------------------------------------------------------- 80-column tables

def _fits(text: str, width: int = 80) -> bool:
    return all(len(ln.rstrip()) <= width for ln in text.splitlines())


def test_materials_table_shows_every_id_whole_at_80_columns(narrow):
    r = runner.invoke(cli.app, ["materials"])
    assert r.exit_code == 0
    assert _fits(r.output) and "…" not in r.output
    for mid in catalogue():
        assert f"\n{mid} " in r.output     # whole, at the start of its row
    for k in registry():
        assert k in r.output                # the legend names the kinds each form makes


def test_elements_catalogue_shows_names_whole_at_80_columns(narrow):
    r = runner.invoke(cli.app, ["elements"])
    assert r.exit_code == 0
    assert _fits(r.output) and "…" not in r.output
    for k in registry().values():
        assert f"{k.name}:" in r.output
        for q in k.params:
            assert f"\n{q.name} " in r.output


def _synthesis(study_path, errors):
    st = load_study(study_path)
    designs = (design(blade(), name="D01"),
               design(blade(count=2), _coil(6.0), blade(offset_mm=1.0, params={"thickness_mm": 0.4}), name="D02"))
    F = np.array([[errors[0], 0.41, 1234.5], [errors[1], 0.62, 98765.4]])
    return Synthesis(study=st, designs=designs, objectives=F, constraints=np.zeros((2, 7)), mass_g=np.array([1.2, 3.4]),
                     feasible=True, seed=0, population=8, generations=1, evaluations=16,
                     in_spec_share=np.array([0.935, 0.0]), yield_samples=200)


def test_pareto_table_fits_80_columns_with_readable_percentages(narrow, linear_study, tmp_path, capsys):
    cli._finish_run(_synthesis(linear_study, (3.03e-14, 12.3456)), tmp_path)
    text = capsys.readouterr().out
    assert _fits("\n".join(ln for ln in text.splitlines() if str(tmp_path) not in ln))   # a long path may not
    rows = [ln for ln in text.splitlines() if "D0" in ln]
    assert [ln.split()[0] for ln in rows] == ["D01", "D02"] and "…" not in text
    assert "e-14" not in text and "< 0.01" in text and "12.35" in text
    assert "98\u2009765" in text        # sizes as the report writes them (thin-space thousands)
    assert "in spec" in text and "93.5" in text


# --------------------------------------------------------------------------- model limits and design rules

def test_helical_design_rules_are_declared_and_margins_of_their_kinds():
    comp, ext = get_kind("helical_compression"), get_kind("helical_extension")
    assert comp.design_rules == {"spring_index", "solid_height"}
    assert ext.design_rules == {"spring_index", "initial_tension"}
    for k in registry().values():       # every declared rule is a margin the kind computes
        p = {q.name: np.array([0.5 * (q.lo + q.hi)]) for q in k.params}
        mat = next(m for m in catalogue().values() if m.suits(k.forms))
        assert k.design_rules <= set(k.validity_margins(p, MaterialArrays.of(mat), np.array([0.1])))
    model, rules = split_margins({"spring_index": 0.04, "buckling": 0.2})
    assert model == {"buckling": 0.2} and rules == {"spring_index": 0.04}
    assert "buckling" not in design_rule_names() and "coils_close" not in design_rule_names()


def test_coil_margins_separate_the_models_end_from_the_makers_rules():
    # Shigley ch. 10: squared-and-ground ends, Ls = d (Na + 2) = 8 mm; the force law is linear until
    # the coils close at u = L0 - Ls = 17 mm; the 15 % overrun rule asks u <= 17/1.15 = 14.78 mm
    kind, mat = get_kind("helical_compression"), MaterialArrays.of(catalogue()["music_wire"])
    p = {"wire_diameter_mm": np.array([0.8]), "mean_diameter_mm": np.array([10.0]), "active_coils": np.array([8.0]),
         "free_length_mm": np.array([25.0])}
    g = kind.validity_margins(p, mat, np.array([16.0]))
    assert g["spring_index"][0] == pytest.approx(12.5 / 12 - 1)       # a rule broken
    assert g["solid_height"][0] == pytest.approx((8 + 1.15 * 16) / 25 - 1) and g["solid_height"][0] > 0
    assert g["coils_close"][0] == pytest.approx((8 + 16) / 25 - 1) and g["coils_close"][0] < 0
    assert kind.validity_margins(p, mat, np.array([17.5]))["coils_close"][0] > 0
    p["mean_diameter_mm"] = np.array([1.2])                              # C = 1.5: factors held at C = 2
    assert kind.validity_margins(p, mat, np.array([1.0]))["low_index"][0] == pytest.approx(2 / 1.5 - 1)


def test_a_broken_design_rule_is_a_notice_not_a_model_warning(tmp_path):
    p = tmp_path / "coil.toml"
    p.write_text(design_to_toml(design(_coil(10.0), name="index125")))     # index 12.5, stroke far from solid
    r = runner.invoke(cli.app, ["evaluate", str(p), "--to", "3", "--points", "4"])
    assert r.exit_code == 0, r.output
    assert "harder to make" in r.output and "spring_index" in r.output
    assert "not trustworthy" not in r.output and "valid range" not in r.output
    r = runner.invoke(cli.app, ["evaluate", str(p), "--to", "20", "--points", "4"])   # coils close at 17 mm
    assert "outside the models' valid range (coils_close" in r.output and "not trustworthy" in r.output
    assert "harder to make" in r.output and "solid_height" in r.output


def test_infeasible_designs_name_rules_and_model_limits_apart(linear_study):
    res = _synthesis(linear_study, (1.0, 2.0))
    validity = {"spring_index": np.array([0.04, -1.0]), "buckling": np.array([-1.0, 0.25])}
    G = np.zeros((2, len(CONSTRAINTS)))
    G[:, CONSTRAINTS.index("validity")] = [0.04, 0.25]
    res = Synthesis(**{**res.__dict__, "constraints": G, "validity": validity})
    assert "breaks a design rule" in res.binding(0) and "spring_index +4.0 %" in res.binding(0)
    assert "valid range" not in res.binding(0)
    assert "leaves its model's valid range" in res.binding(1) and "buckling +25.0 %" in res.binding(1)


# --------------------------------------------------------------------------- designs taken from a run

def test_verify_and_tolerance_of_a_run_design_use_the_run_target(tmp_path, monkeypatch):
    run = hand_run(tmp_path / "run", [design(blade(), name="D01")])
    d = run / "designs" / "D01.toml"
    r = runner.invoke(cli.app, ["verify", str(d)])
    assert r.exit_code == 0, r.output
    assert "target of run" in r.output and "curve error against the run's target" in r.output
    monkeypatch.chdir(tmp_path)
    r = runner.invoke(cli.app, ["tolerance", str(d), "--samples", "20", "--out", "tol"])
    assert r.exit_code == 0, r.output
    band = pd.read_csv(tmp_path / "tol" / "band.csv")
    np.testing.assert_allclose(band.displacement_mm, np.linspace(0.0, 5.0, 11))   # the run's target points
    r = runner.invoke(cli.app, ["evaluate", str(d)])
    assert r.exit_code == 0 and "curve error against the run's target" in r.output
    # outside a run folder the stroke must still be given
    other = tmp_path / "d.toml"
    other.write_text(d.read_text())
    r = runner.invoke(cli.app, ["verify", str(other)])
    assert r.exit_code == 2 and "--to X" in r.output


def test_verify_top_of_a_run_with_a_design_that_never_engages(tmp_path):
    late = design(blade(), blade(offset_mm=9.0), name="D01")     # second blade beyond the 5 mm stroke
    never = design(blade(offset_mm=7.0), name="D02")             # nothing engages at all
    run = hand_run(tmp_path / "run", [late, never], errors=[0.5, 0.7])
    r = runner.invoke(cli.app, ["verify", str(run), "--top", "2", "--points", "4"])
    assert r.exit_code == 0, r.output
    assert "not compared" in r.output and "never engages" in r.output and "Traceback" not in r.output
    table = pd.read_csv(run / "verification.csv")
    assembly = table[(table.design_id == "D02") & (table.element == "assembly")].iloc[0]
    assert np.isnan(assembly.force_dev_pct) and not assembly.verified     # not "0 %"


def test_percentages_print_with_fixed_decimals():
    from springsynth.model.numbers import pct_text

    assert pct_text(3.03e-14) == "< 0.01 %" and pct_text(-2e-9) == "< 0.01 %"
    assert pct_text(0.0) == "0.00 %" and pct_text(0.0, decimals=1) == "0.0 %"
    assert pct_text(12.3456) == "12.35 %" and pct_text(1234.5) == "1234.50 %"
    assert pct_text(0.04, decimals=1) == "< 0.1 %" and pct_text(7.25, suffix="") == "7.25"
    assert pct_text(float("nan")) == "n/a" and pct_text(float("inf"), missing="not compared") == "not compared"


def test_percentages_go_through_one_formatter(tmp_path):
    # a design that meets its target to 1e-12: the error rounds to nothing and says so
    d = tmp_path / "d.toml"
    d.write_text(design_to_toml(design(blade())))
    from springsynth.assembly.evaluate import evaluate_design
    from springsynth.io.design_toml import load_design

    x = np.linspace(0.0, 2.0, 5)
    f = evaluate_design(load_design(d), x).force_N[0]
    t = write_target(tmp_path / "exact.csv", x, f + 1e-12 * f.max())
    r = runner.invoke(cli.app, ["evaluate", str(d), "--at", str(t)])
    line = r.output.split("curve error against")[1].split("\n")[0]
    assert r.exit_code == 0 and line.endswith("< 0.001 %") and "e-" not in line    # three decimals for one design


# --------------------------------------------------------------------------- inline elastomer without a strain limit

def test_check_names_the_default_strain_limit_of_an_inline_elastomer(tmp_path):
    p = tmp_path / "pad.toml"
    p.write_text("""[materials.lab_rubber]
law = "neo_hookean"
mu_MPa = 0.42
density_kg_m3 = 1100

[[element]]
kind = "elastomer_pad"
material = "lab_rubber"
length_mm = 20.0
width_mm = 20.0
thickness_mm = 5.0
""")
    r = runner.invoke(cli.app, ["check", str(p)])
    assert r.exit_code == 0, r.output
    assert "notice:" in r.output and "strain_limit" in r.output and "0.5" in r.output
