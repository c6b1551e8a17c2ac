"""Batch plans (pure): seeds, --vary values and keys, run folders, and the command's one-line errors."""

import json

import pytest
from typer.testing import CliRunner

from springsynth.batch import Plan, RunSpec, build_plan, parse_seeds, parse_vary, plan_from_files
from springsynth.batch._plan import StudyEntry, Vary, check_vary_keys, safe_name, variant_name
from springsynth.cli import app
from springsynth.model.errors import InputError

runner = CliRunner()


def test_seeds_count_or_list():
    assert parse_seeds(None) is None
    assert parse_seeds("4") == (1, 2, 3, 4)
    assert parse_seeds("1,4,7") == (1, 4, 7)
    assert parse_seeds("7,") == (7,)
    assert parse_seeds(" 0, 3 ") == (0, 3)


@pytest.mark.parametrize("text, needle", [
    ("0", "N must be 1 .. 1000"), ("2.5", "whole number, got '2.5'"), ("1,,2", "separated by commas"),
    ("1,x", "each seed must be a whole number, got 'x'"), ("3,3", "seed 3 is listed twice"),
    ("-1,2", "each seed must be 0 .. 4294967295, got -1"), (",", "separated by commas"),
])
def test_bad_seeds(text, needle):
    with pytest.raises(InputError) as e:
        parse_seeds(text)
    assert needle in str(e.value) and str(e.value).startswith(f"--seeds {text}:")


def test_vary_range_and_list():
    v = parse_vary("target.scale_force=0.5:2:4")
    assert v == Vary("target.scale_force", ("0.5", "1", "1.5", "2"))
    # evenly spaced values read as written, not as floating-point noise (0.1 + 0.2 = 0.30000000000000004)
    assert parse_vary("limits.stress_ratio=0.1:0.3:3").values == ("0.1", "0.2", "0.3")
    assert parse_vary("envelope.length_mm = 40, 45.5 ,60").values == ("40", "45.5", "60")
    assert parse_vary("search.population=20:40:3").values == ("20", "30", "40")
    assert parse_vary("envelope.width_mm=7:7:1").values == ("7",)


@pytest.mark.parametrize("text, needle", [
    ("target.scale_force", "expected KEY=START:STOP:COUNT or KEY=V1,V2"),
    ("=1:2:3", "expected KEY=START:STOP:COUNT"),
    ("target.scale_force=1:2", "three parts"),
    ("target.scale_force=a:2:3", "START must be a number, got 'a'"),
    ("target.scale_force=1:inf:3", "STOP must be a finite number"),
    ("target.scale_force=1:2:0", "COUNT must be 1 .. 1000, got 0"),
    ("target.scale_force=1:2:2.5", "COUNT must be a whole number, got '2.5'"),
    ("target.scale_force=1:2:1", "COUNT 1 gives only START"),
    ("target.scale_force=2:2:3", "all 3 values would be the same"),
    ("target.scale_force=1,,2", "an empty value"),
    ("target.scale_force=1,1.0", "the value 1 comes twice"),
])
def test_bad_vary_text(text, needle):
    with pytest.raises(InputError) as e:
        parse_vary(text)
    assert needle in str(e.value) and str(e.value).startswith(f"--vary {text}:")


DOC = {"name": "s", "target": {"file": "t.csv"}, "envelope": {"length_mm": 30}, "search": {"population": 20}}


@pytest.mark.parametrize("key, needle", [
    ("target.scale_forse", "unknown key of [target] 'scale_forse'; did you mean 'scale_force'?"),
    ("limit.stress_ratio", "unknown section 'limit'; did you mean 'limits'?"),
    ("target.file", "target.file is not a number in s.toml (it is 't.csv')"),
    ("name", "name is not a number in s.toml"),
    ("search.polish", "search.polish is not a number in s.toml (it is true)"),
    ("search.seed", "seeds are set with --seeds"),
])
def test_vary_keys_are_the_numeric_keys_set_accepts(key, needle):
    with pytest.raises(InputError) as e:
        check_vary_keys([Vary(key, ("1", "2"))], {"s.toml": DOC})
    assert needle in str(e.value) and str(e.value).startswith(f"--vary {key}:")


def test_vary_key_twice_or_also_set():
    v = Vary("envelope.length_mm", ("20", "30"))
    check_vary_keys([v, Vary("target.scale_force", ("1", "2")), Vary("materials.lab.E_MPa", ("1", "2"))],
                    {"s.toml": DOC})
    with pytest.raises(InputError, match="varied twice"):
        check_vary_keys([v, v], {"s.toml": DOC})
    with pytest.raises(InputError, match="also given with --set"):
        check_vary_keys([v], {"s.toml": DOC}, settings=["envelope.length_mm=25"])


def test_plan_is_studies_times_variants_times_seeds():
    studies = [StudyEntry("/a/one.toml", "one", 5), StudyEntry("/a/two.toml", "two", 9)]
    varies = [Vary("target.scale_force", ("1", "1.5")), Vary("envelope.length_mm", ("20", "30", "40"))]
    plan = build_plan(studies, seeds=(1, 2), varies=varies, settings=["search.population=8"])
    assert len(plan.runs) == 2 * 6 * 2
    first = plan.runs[0]
    assert first.folder == "one/scale_force=1,length_mm=20/seed-1"
    assert first.overrides == ["search.population=8", "target.scale_force=1", "envelope.length_mm=20"]
    assert plan.runs[1].folder == "one/scale_force=1,length_mm=20/seed-2"
    assert plan.runs[2].folder == "one/scale_force=1,length_mm=30/seed-1"  # last key varies fastest
    assert len({r.folder for r in plan.runs}) == len(plan.runs)
    # no --seeds: each study's own seed; no --vary: one variant named base
    own = build_plan(studies, seeds=None, varies=[])
    assert [r.folder for r in own.runs] == ["one/base/seed-5", "two/base/seed-9"]


def test_plan_round_trips_through_json():
    plan = build_plan([StudyEntry("/a/one.toml", "one", 1)], seeds=(3, 4),
                      varies=[Vary("limits.stress_ratio", ("0.6", "0.8"))], settings=["search.generations=5"])
    again = Plan.from_dict(json.loads(json.dumps(plan.to_dict())))
    assert again == plan
    r = plan.runs[-1]
    assert RunSpec.from_dict(json.loads(json.dumps(r.to_dict()))) == r


def test_folder_names_are_safe_and_readable():
    assert safe_name("bench clamp / v2") == "bench_clamp_v2"
    assert safe_name("../etc") == "etc" and safe_name("..") == "_"  # never a path out of the batch folder
    assert variant_name([("target.scale_force", "1.5")]) == "scale_force=1.5"
    # two keys ending alike keep their sections apart
    assert variant_name([("materials.a.E_MPa", "1"), ("materials.b.E_MPa", "2")]) == \
        "materials.a.E_MPa=1,materials.b.E_MPa=2"


def test_two_studies_with_one_name_are_refused():
    with pytest.raises(InputError, match="both have the name 'x'"):
        build_plan([StudyEntry("/a/x.toml", "x", 1), StudyEntry("/b/x.toml", "x", 1)], seeds=None, varies=[])


def test_plan_from_files_checks_the_studies(linear_study):
    plan = plan_from_files([linear_study], seeds=(1,), varies=[parse_vary("target.scale_stroke=0.5,1")],
                           settings=["search.population=8"])
    assert [r.folder for r in plan.runs] == ["t/scale_stroke=0.5/seed-1", "t/scale_stroke=1/seed-1"]
    with pytest.raises(InputError, match="did you mean 'population'"):
        plan_from_files([linear_study], seeds=None, varies=[], settings=["search.populaton=8"])


@pytest.mark.parametrize("args, needle", [
    (["--vary", "target.scale_forse=1:2:2"], "did you mean 'scale_force'"),
    (["--vary", "target.scale_force=1:2"], "three parts"),
    (["--vary", "target.file=1:2:2"], "is not a number"),
    (["--seeds", "0"], "N must be 1"),
    (["--set", "limits.stress_ration=0.5"], "did you mean 'stress_ratio'"),
    (["--scheduler", "nonsense"], "not a scheduler address (missing port number"),
    (["--scheduler", "tcp://127.0.0.1:8786", "--workers", "2"], "--workers sizes the local cluster"),
])
def test_batch_command_bad_options_exit_2_with_one_line(linear_study, tmp_path, args, needle):
    out = tmp_path / "b"
    r = runner.invoke(app, ["batch", str(linear_study), "--out", str(out), *args])
    assert r.exit_code == 2, r.output
    lines = [ln for ln in r.output.splitlines() if ln.strip()]
    assert len(lines) == 1 and lines[0].startswith("error:") and needle in lines[0] and "Traceback" not in r.output
    assert not out.exists()  # nothing written before the input is known to be good


def test_batch_command_needs_studies_and_a_new_folder(linear_study, tmp_path):
    r = runner.invoke(app, ["batch", str(linear_study)])
    assert r.exit_code == 2 and "--out DIR" in r.output
    (tmp_path / "full").mkdir()
    (tmp_path / "full" / "x.txt").write_text("x")
    r = runner.invoke(app, ["batch", str(linear_study), "--out", str(tmp_path / "full")])
    assert r.exit_code == 2 and "not empty" in r.output
    r = runner.invoke(app, ["batch", "--resume", str(tmp_path / "full")])
    assert r.exit_code == 2 and "not a batch folder" in r.output
    r = runner.invoke(app, ["batch", str(linear_study), "--resume", str(tmp_path / "full")])
    assert r.exit_code == 2 and "drop the studies" in r.output
