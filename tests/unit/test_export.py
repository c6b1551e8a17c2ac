"""`springsynth export`: files for every kind, warnings, bad input, all-or-nothing folders."""

from __future__ import annotations

import csv
import io
import json
import re
from pathlib import Path

import ezdxf
import numpy as np
import pandas as pd
import pytest
from typer.testing import CliRunner

import springsynth as ss
from springsynth.cli import app
from springsynth.export import (
    COIL_KINDS,
    FLAT_KINDS,
    RULES,
    SOLID_KINDS,
    Stroke,
    design_spec,
    export_files,
    parts,
)
from springsynth.export.outline import LAYER_NOTES
from springsynth.io.design_toml import design_to_toml
from springsynth.io.export_folder import write_folder
from springsynth.model.errors import InputError
from springsynth.model.materials import catalogue
from tests.conftest import ROOT, blade, design

runner = CliRunner()
SHIPPED = sorted((ROOT / "studies").glob("*.design.toml"))


def _mid_design(kind) -> ss.Design:
    """One element of ``kind`` at the geometric middle of its parameter bounds, in a suitable material."""
    k = ss.registry()[kind]
    params = {}
    for q in k.params:
        if q.choices:
            params[q.name] = q.choices[-1]
        else:
            v = float(np.sqrt(q.lo * q.hi)) if q.lo > 0 else 0.5 * (q.lo + q.hi)
            params[q.name] = round(v) if q.integer else v
    mat = next(m for m in catalogue().values() if m.suits(k.forms))
    return ss.Design((ss.Element(kind, mat.id, 2, 0.5, params),), {mat.id: mat}, name=f"mid-{kind}")


# --------------------------------------------------------------------------- every kind

def test_every_registered_kind_has_export_rules():
    for name in ss.registry():
        assert name in RULES, f"kind {name!r} has no maker's rules in springsynth.export.spec.RULES"


@pytest.mark.parametrize("kind", sorted(ss.registry()))
def test_every_kind_exports_a_spec_and_a_clean_dxf_of_flat_parts(kind):
    d = _mid_design(kind)
    spec = design_spec(d, Stroke(0.0, 1.0))
    (rec,) = spec.records
    assert rec["kind"] == kind and rec["quantity"] == 2 and rec["copies"].startswith("e1-1, e1-2")
    assert rec["position"].startswith("gap 0.5 mm")
    assert rec["material_name"] == d.materials[d.elements[0].material].name
    unitless = ("spring_index", "active_coils", "total_coils", "body_coils", "shape_factor", "stress_ratio_peak")
    for k, v in rec.items():                                    # every number carries its unit in its name
        assert not isinstance(v, float) or k.endswith(("_mm", "_N", "_N_per_mm", "_MPa", "_g")) or k in unitless, k
    files = export_files(spec, with_previews=False)
    assert {"spec.csv", "spec.json", "README.txt"} <= set(files)
    if kind in FLAT_KINDS:
        doc = ezdxf.read(io.StringIO(files[rec["dxf"]].decode("utf-8")))
        assert len(doc.audit().errors) == 0
    else:
        assert kind in COIL_KINDS + SOLID_KINDS and "dxf" not in rec
    if kind in COIL_KINDS:
        for key in ("wire_diameter_mm", "outer_diameter_mm", "inner_diameter_mm", "active_coils", "ends",
                    "free_length_mm", "rate_N_per_mm", "winding", "tolerance_grade", "load_working_N"):
            assert key in rec, key
    if kind in SOLID_KINDS:
        assert "load_working_N" in rec and ("diameter_mm" in rec or "shape_factor" in rec)


def test_parts_is_the_one_walk_over_a_design():
    d = design(blade(count=2), blade(offset_mm=1.0), name="two")
    ps = parts(d, Stroke(0.0, 3.0))
    assert [p.label for p in ps] == ["e1", "e2"]
    assert [p.deflection_mm for p in ps] == [(0.0, 3.0), (0.0, 2.0)]


def test_missing_parameter_and_unknown_kind_are_input_errors():
    mat = catalogue()["stainless_17_7ph"]
    bad = ss.Design((ss.Element("blade_guided", mat.id, 1, 0.0, {"length_mm": 20.0, "width_mm": 5.0}),), {mat.id: mat})
    with pytest.raises(InputError, match="missing thickness_mm"):
        design_spec(bad, Stroke())
    odd = ss.Design((ss.Element("leaf_of_clover", mat.id, 1, 0.0, {}),), {mat.id: mat})
    with pytest.raises(InputError, match="unknown kind 'leaf_of_clover'"):
        design_spec(odd, Stroke())
    with pytest.raises(InputError, match="working position"):
        Stroke(2.0, 1.0)


# --------------------------------------------------------------------------- command line

@pytest.mark.parametrize("path", SHIPPED, ids=lambda p: p.name)
def test_cli_exports_the_shipped_designs(tmp_path, path):
    out = tmp_path / "x"
    r = runner.invoke(app, ["export", str(path), "--to", "3", "--out", str(out)])
    assert r.exit_code == 0, r.output
    d = ss.load_design(path)
    rows = list(csv.DictReader(io.StringIO((out / "spec.csv").read_text())))
    assert len(rows) == len(d.elements)
    meta = json.loads((out / "spec.json").read_text())
    assert meta["stroke"] == {"installed_mm": 0.0, "working_mm": 3.0} and len(meta["elements"]) == len(d.elements)
    flat = [e for e in d.elements if e.kind in FLAT_KINDS]
    assert len(list(out.glob("*.dxf"))) == len(flat) == len(list(out.glob("*.png")))
    for png in out.glob("*.png"):
        assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" and png.stat().st_size > 5_000
    assert "Caution" in r.output


def test_cli_without_a_stroke_states_what_it_left_out(tmp_path):
    r = runner.invoke(app, ["export", str(SHIPPED[0]), "--out", str(tmp_path / "x")])
    assert r.exit_code == 0 and "no working position given" in r.output
    rows = list(csv.DictReader(io.StringIO((tmp_path / "x" / "spec.csv").read_text())))
    assert "load_working_N" not in rows[0] and rows[0]["load_installed_N"] != ""


def test_existing_folder_is_never_overwritten(tmp_path):
    out = tmp_path / "x"
    out.mkdir()
    (out / "mine.txt").write_text("keep")
    r = runner.invoke(app, ["export", str(SHIPPED[0]), "--to", "2", "--out", str(out)])
    assert r.exit_code == 0
    assert (out / "mine.txt").read_text() == "keep" and (tmp_path / "x-2" / "spec.csv").exists()


@pytest.mark.parametrize("text, message", [
    ('[[element]]\nkind = "coil_of_doom"\nmaterial = "music_wire"\n', "unknown kind 'coil_of_doom'"),
    ('[[element]]\nkind = "blade_guided"\nmaterial = "stainless_17_7ph"\nlength_mm = 20.0\nwidth_mm = 5.0\n',
     "missing thickness_mm"),
])
def test_bad_design_exits_2_and_leaves_nothing(tmp_path, text, message):
    p = tmp_path / "bad.toml"
    p.write_text(text)
    out = tmp_path / "out"
    r = runner.invoke(app, ["export", str(p), "--to", "2", "--out", str(out)])
    assert r.exit_code == 2
    assert message in r.output and "Traceback" not in r.output and len(r.output.strip().splitlines()) == 1
    assert sorted(x.name for x in tmp_path.iterdir()) == ["bad.toml"]


@pytest.mark.parametrize("args", [["--to", "2", "--top", "3"], ["--to", "2", "--at", "t.csv"], ["--to", "-1"]])
def test_bad_options_exit_2(tmp_path, args):
    (tmp_path / "t.csv").write_text("displacement_mm,force_N\n0,0\n1,1\n")
    args = [a if a != "t.csv" else str(tmp_path / "t.csv") for a in args]
    r = runner.invoke(app, ["export", str(SHIPPED[0]), "--out", str(tmp_path / "o"), *args])
    assert r.exit_code == 2, r.output
    assert not (tmp_path / "o").exists()


def test_infeasible_design_carries_a_warning_on_every_file(tmp_path):
    # a guided blade pushed to 0.8 of its length: beyond the elastica's 0.5 L range, and overstressed
    p = tmp_path / "far.toml"
    p.write_text(design_to_toml(design(blade(), name="far")))
    out = tmp_path / "far-export"
    r = runner.invoke(app, ["export", str(p), "--to", "24", "--out", str(out)])
    assert r.exit_code == 0
    assert "warning" in r.output and "INFEASIBLE" in r.output
    rows = list(csv.DictReader(io.StringIO((out / "spec.csv").read_text())))
    assert all(row["warning"].startswith("INFEASIBLE DESIGN far") and "stroke +" in row["warning"] for row in rows)
    assert json.loads((out / "spec.json").read_text())["warning"].startswith("INFEASIBLE DESIGN far")
    assert "WARNING: INFEASIBLE" in (out / "README.txt").read_text()
    for f in out.glob("*.dxf"):
        texts = " ".join(t.dxf.text for t in ezdxf.readfile(f).modelspace().query(f'TEXT[layer=="{LAYER_NOTES}"]'))
        assert "INFEASIBLE DESIGN far" in texts


def test_feasible_design_has_no_warning(tmp_path):
    spec = design_spec(design(blade(), name="ok"), Stroke(0.0, 2.0))
    assert spec.warning == "" and all(r["warning"] == "" for r in spec.records)


# --------------------------------------------------------------------------- all or nothing

def test_write_folder_leaves_nothing_when_a_write_fails(tmp_path):
    files = {"a.txt": b"1", "a.txt/b.txt": b"2"}          # the second needs a folder where a file is
    with pytest.raises(InputError, match="cannot write"):
        write_folder(files, tmp_path / "out")
    assert list(tmp_path.iterdir()) == []


def test_write_folder_replaces_when_asked(tmp_path):
    first = write_folder({"a.txt": b"1"}, tmp_path / "out", replace=True)
    second = write_folder({"b.txt": b"2"}, tmp_path / "out", replace=True)
    assert first == second == tmp_path / "out"
    assert sorted(x.name for x in (tmp_path / "out").iterdir()) == ["b.txt"]
    assert [x.name for x in tmp_path.iterdir()] == ["out"]


# --------------------------------------------------------------------------- runs

@pytest.mark.slow
def test_cli_exports_a_run_top_designs(tmp_path):
    from tests.conftest import write_study, write_target

    x = np.linspace(0, 6, 13)
    write_target(tmp_path / "lin.csv", x, 3.0 + 1.2 * x, tol=0.4)
    study = write_study(tmp_path, "lin.csv")
    run = tmp_path / "run"
    r = runner.invoke(app, ["run", str(study), "--out", str(run), "--population", "16", "--generations", "3"])
    assert r.exit_code == 0, r.output            # a straight line the blades and coils can follow
    assert pd.read_csv(run / "pareto.csv").feasible.any()
    # every design card of the report shows its maker's table and a preview per flat part
    page = (run / "report.html").read_text()
    designs = [ss.load_design(p) for p in sorted((run / "designs").glob("*.toml"))]
    cards = re.findall(r'<section class=card id="card-([^"]+)">(.*?)</section>', page, flags=re.S)
    assert len(cards) == len(designs) > 0
    flat = {d.name: sum(e.kind in FLAT_KINDS for e in d.elements) for d in designs}
    n_elements = {d.name: len(d.elements) for d in designs}
    for name, body in cards:
        maker = body[body.index("Maker's specification"):]
        assert maker[:maker.index("</table>")].count("<tr><td>e") == n_elements[name]
        assert len(re.findall(r'aria-label="[^"]* outline"><svg ', maker)) == flat[name]
    r = runner.invoke(app, ["export", str(run), "--top", "2"])
    assert r.exit_code == 0, r.output
    ids = [Path(p).name for p in sorted((run / "export").iterdir())]
    assert len(ids) == min(2, len(list((run / "designs").glob("*.toml"))))
    for i in ids:
        meta = json.loads((run / "export" / i / "spec.json").read_text())
        assert meta["stroke"]["working_mm"] == pytest.approx(6.0)
    r = runner.invoke(app, ["export", str(run), "--top", "1"])          # a second export replaces the first
    assert r.exit_code == 0 and len(list((run / "export").iterdir())) == 1
    assert runner.invoke(app, ["export", str(run), "--to", "3"]).exit_code == 2
