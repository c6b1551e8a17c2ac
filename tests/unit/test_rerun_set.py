"""`springsynth rerun RUN --set section.key=value`: every key of the study schema reaches the
study the search is given, and a malformed setting is one clear line (exit 2, nothing written).

The search itself is replaced by a stand-in that records its arguments (a real rerun is
tested end to end in tests/e2e/test_search.py); the parent run folder is a real one.
"""

from __future__ import annotations

import numpy as np
import pytest
from typer.testing import CliRunner

import springsynth.search.synthesis as synthesis_module
from springsynth.cli import app
from springsynth.io.study_toml import _SCHEMA
from tests.conftest import write_study, write_target

runner = CliRunner()


@pytest.fixture(scope="module")
def parent(tmp_path_factory):
    """A real run folder from a one-generation search of four designs (no polish, no checks, no figures)."""
    import springsynth as ss
    from springsynth.io.runfolder import write_run

    d = tmp_path_factory.mktemp("parent")
    x = np.linspace(0, 6, 13)
    write_target(d / "lin.csv", x, 3.0 + 1.2 * x, tol=0.3)
    write_target(d / "other.csv", np.linspace(0, 8, 5), np.linspace(1, 5, 5))
    st = ss.load_study(write_study(d, "lin.csv", population=4, generations=1,
                                  extra="verify_top = 0\npolish = false"))
    return write_run(ss.synthesize(st), d / "run", plots=False)


def _kinds(st):
    return [k.name for k in st.search.kinds]


def _materials(st):
    return [m.id for m in st.search.materials]


#: key -> (value as typed after "=", what the study holds, expected; extra --set settings).
#: Each expected value differs from the parent study's (checked), so the setting took effect.
CASES = {
    "name": ('"renamed"', lambda st: st.name, "renamed", ()),
    "description": ('"a lighter variant"', lambda st: st.raw.get("description"), "a lighter variant", ()),
    "target.file": ("OTHER", lambda st: (st.target.x_mm.size, st.target.stroke_mm), (5, 8.0), ()),
    # the parent's target ends at 6 mm and 10.2 N (3 + 1.2 x): scaled by 2 and 1.5
    "target.scale_force": ("2", lambda st: round(float(st.target.force_N[-1]), 9), 20.4, ()),
    "target.scale_stroke": ("1.5", lambda st: st.target.stroke_mm, 9.0, ()),
    "envelope.length_mm": ("55", lambda st: st.envelope.length_mm, 55.0, ()),
    "envelope.width_mm": ("33.5", lambda st: st.envelope.width_mm, 33.5, ()),
    "envelope.height_mm": ("25", lambda st: st.envelope.height_mm, 25.0, ()),
    "limits.stress_ratio": ("0.6", lambda st: st.limits.stress_ratio, 0.6, ()),
    "limits.min_thickness_mm": ("0.08", lambda st: st.limits.min_thickness_mm, 0.08, ()),
    "limits.max_mass_g": ("12.5", lambda st: st.limits.max_mass_g, 12.5, ()),
    "limits.max_error_pct": ("7.5", lambda st: st.limits.max_error_pct, 7.5, ()),
    "search.elements": ('["helical_compression"]', _kinds, ["helical_compression"], ()),
    "search.materials": ('["stainless_17_7ph"]', _materials, ["stainless_17_7ph"], ()),
    "search.max_elements": ("1", lambda st: st.search.max_elements, 1, ()),
    "search.max_chain": ("1", lambda st: st.search.max_chain, 1, ()),
    "search.max_count": ("3", lambda st: st.search.max_count, 3, ()),
    "search.population": ("16", lambda st: st.search.population, 16, ()),
    "search.generations": ("7", lambda st: st.search.generations, 7, ()),
    "search.seed": ("11", lambda st: st.search.seed, 11, ()),
    "search.polish": ("true", lambda st: st.search.polish, True, ()),
    "search.verify_top": ("2", lambda st: st.search.verify_top, 2, ()),
    "search.robust": ("true", lambda st: st.search.robust, True, ()),
    "search.stock": ('"continuous"', lambda st: st.search.stock, "continuous", ()),
    "search.offset_step_mm": ("0.1", lambda st: st.search.offset_step_mm, 0.1, ()),
    "stock.wire_mm": ("[0.5, 1.0, 0.8]", lambda st: st.stock.wire_mm, (0.5, 0.8, 1.0), ()),
    "stock.strip_mm": ("[0.2, 0.1, 0.3]", lambda st: st.stock.strip_mm, (0.1, 0.2, 0.3), ()),
    "limits.in_spec_share": ("0.9", lambda st: st.limits.in_spec_share, 0.9, ()),
    "limits.band_pct": ("5", lambda st: st.limits.band_pct, 5.0, ()),
    "limits.fatigue_ratio": ("0.7", lambda st: st.limits.fatigue_ratio, 0.7, ("duty.cycles=1e6",)),
    "search.objectives": ('["curve_error_pct", "stress_ratio", "size_mm3", "fatigue_ratio"]',
                          lambda st: st.search.objectives,
                          ("curve_error_pct", "stress_ratio", "size_mm3", "fatigue_ratio"), ("duty.cycles=1e6",)),
    "duty.cycles": ("1e6", lambda st: st.duty and st.duty.cycles, 1e6, ()),
    "duty.stroke_min_mm": ("1.5", lambda st: st.duty and st.duty.stroke_min_mm, 1.5, ()),
    "duty.stroke_max_mm": ("4.5", lambda st: st.duty and st.duty.stroke_max_mm, 4.5, ()),
    "duty.shot_peened": ("true", lambda st: st.duty and st.duty.shot_peened, True, ()),
    "materials": ('{lab_steel = {E_MPa = 190000, nu = 0.3, density_kg_m3 = 7800, yield_MPa = 1200, '
                  'forms = ["strip", "wire"]}}',
                  lambda st: [(m.id, m.E_MPa) for m in st.search.materials], [("lab_steel", 190000.0)],
                  ('search.materials=["lab_steel"]',)),
}


def _schema_keys() -> list[str]:
    return sorted(sec if sub is None else f"{sec}.{k}" for sec, sub in _SCHEMA.items() for k in (sub or [None]))


class _Stop(Exception):
    """Raised by the stand-in search after recording what it was given."""


@pytest.fixture
def captured(monkeypatch):
    seen: dict = {}

    def fake_synthesize(study, **kw):
        seen["study"], seen["kw"] = study, kw
        raise _Stop

    monkeypatch.setattr(synthesis_module, "synthesize", fake_synthesize)
    return seen


def test_every_schema_key_has_a_case():
    missing = set(_schema_keys()) - set(CASES)
    assert not missing, f"add a `rerun --set` case to CASES for {sorted(missing)}"


@pytest.mark.parametrize("key", _schema_keys())
def test_rerun_set_reaches_the_study(parent, captured, tmp_path, key):
    from springsynth.io.runfolder import read_run

    if key not in CASES:
        pytest.fail(f"no `rerun --set` case for the schema key {key!r}: add one to CASES")
    text, get, expected, extra = CASES[key]
    text = text.replace("OTHER", '"' + str(parent.parent / "other.csv") + '"')
    assert get(read_run(parent).study()) != expected          # the parent differs: the setting must act
    sets = [a for s in (f"{key}={text}", *extra) for a in ("--set", s)]
    r = runner.invoke(app, ["rerun", str(parent), *sets, "--out", str(tmp_path / "re")])
    assert isinstance(r.exception, _Stop), r.output
    assert get(captured["study"]) == expected
    # warm-started from the parent's designs, with the command's own budget untouched
    assert len(captured["kw"]["warm_start"]) == len(read_run(parent).designs)
    assert captured["kw"]["population"] is None and captured["kw"]["generations"] is None


def test_rerun_budget_options_pass_through(parent, captured, tmp_path):
    r = runner.invoke(app, ["rerun", str(parent), "--population", "12", "--generations", "3", "--seed", "9",
                            "--out", str(tmp_path / "re")])
    assert isinstance(r.exception, _Stop), r.output
    kw = captured["kw"]
    assert (kw["population"], kw["generations"], kw["seed"]) == (12, 3, 9)


@pytest.mark.parametrize("setting, words", [
    ("limits.stress_ratio", ["--set needs section.key=value", "limits.stress_ratio"]),
    ("=0.5", ["--set needs section.key=value"]),
    ("nosuch.key=1", ["nosuch"]),
    ("limits=0.5", ["--set limits=0.5", "[limits]"]),
    ("limits.stress_ratio.x=1", ["--set limits.stress_ratio.x=1", "[limits]"]),
    ("limits.stres_ratio=0.5", ["did you mean 'stress_ratio'"]),
    ("limits.stress_ratio=abc", ["[limits].stress_ratio", "'abc'"]),
    ("envelope.length_mm=-1", ["[envelope].length_mm", "-1"]),
    ("search.population=2.5", ["population", "2.5"]),
    ('search.elements=["blade_guidd"]', ["blade_guidd"]),
    ("duty.cycels=1e6", ["did you mean 'cycles'"]),
    ('search.stock="std"', ["[search].stock", "'std'"]),
    ("stock.wire_mm=[0.5, 0.5]", ["[stock].wire_mm", "0.5 mm twice"]),
    ("stock.wire=[1.0]", ["did you mean 'wire_mm'"]),
    ("duty.stroke_max_mm=60", ["stroke_max_mm = 60", "beyond the target's last point"]),
    ("limits.in_spec_share=90", ["[limits].in_spec_share", "from 0 to 1", "90"]),
    ("limits.band_pct=-5", ["[limits].band_pct", "-5"]),
    ('search.objectives=["curve_error_pct", "stress_ratio", "size_mm3", "in_spec"]',
     ["unknown objective 'in_spec'", "did you mean 'in_spec_share'"]),
    ('search.objectives=["curve_error_pct", "in_spec_share"]', ["missing stress_ratio, size_mm3"]),
])
def test_malformed_set_is_one_line(parent, tmp_path, setting, words):
    before = sorted(p.name for p in parent.iterdir())
    r = runner.invoke(app, ["rerun", str(parent), "--set", setting, "--out", str(tmp_path / "re")])
    assert r.exit_code == 2, r.output
    lines = [ln for ln in r.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1 and lines[0].startswith("error: ") and "Traceback" not in r.output, r.stderr
    for w in words:
        assert w in lines[0], (w, lines[0])
    assert not (tmp_path / "re").exists() and sorted(p.name for p in parent.iterdir()) == before
