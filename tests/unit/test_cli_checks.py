"""`springsynth evaluate`, `verify` and `tolerance` on the command line: the values they print
and write, every option a user touches, and their argument errors (exit 2, one line)."""

from __future__ import annotations

import re

import numpy as np
import pandas as pd
import pytest
from typer.testing import CliRunner

from springsynth.assembly.evaluate import evaluate_design
from springsynth.cli import app
from springsynth.io.design_toml import design_to_toml, load_design
from tests.conftest import blade, design, write_study, write_target

runner = CliRunner()


def _blades(tmp_path):
    """Two guided 17-7PH blades in parallel (count 2), the second engaging after 0.5 mm."""
    p = tmp_path / "d.toml"
    p.write_text(design_to_toml(design(blade(count=2), blade(offset_mm=0.5, params={"thickness_mm": 0.25}),
                                       name="pair")))
    return p


def _target(tmp_path, x_end=4.0, tol=0.1):
    x = np.linspace(0, x_end, 9)
    return write_target(tmp_path / "t.csv", x, 0.6 * x, tol=tol)


def _one_line_error(r, *words):
    """Exit 2, one line on stderr starting with "error:", naming each of ``words``."""
    assert r.exit_code == 2, r.output
    assert "Traceback" not in r.output
    err = r.stderr.strip()
    lines = [ln for ln in err.splitlines() if ln.strip()]
    assert len(lines) == 1 and lines[0].startswith("error: "), err
    for w in words:
        assert w in lines[0], (w, lines[0])


# --------------------------------------------------------------------------- argument errors

@pytest.mark.parametrize("args, words", [
    ([], ["--to X", "--at TARGET.csv"]),
    (["--to", "3", "--at", "T"], ["not both"]),
    (["--to", "0"], ["--to must be a positive number", "0"]),
    (["--to", "-2"], ["--to must be a positive number", "-2"]),
    (["--to", "nan"], ["--to must be a positive number", "nan"]),
    (["--to", "inf"], ["--to must be a positive number", "inf"]),
    (["--to", "3", "--points", "1"], ["--points must be at least 2", "1"]),
])
@pytest.mark.parametrize("command", ["evaluate", "verify", "tolerance"])
def test_stroke_argument_errors(tmp_path, command, args, words):
    d = _blades(tmp_path)
    args = [str(_target(tmp_path)) if a == "T" else a for a in args]
    extra = ["--samples", "20", "--out", str(tmp_path / "tol")] if command == "tolerance" else []
    r = runner.invoke(app, [command, str(d), *args, *extra])
    _one_line_error(r, command, *words)
    assert not (tmp_path / "tol").exists()          # nothing written on bad input


@pytest.mark.parametrize("command", ["evaluate", "verify", "tolerance"])
def test_missing_design_and_bad_target(tmp_path, command):
    r = runner.invoke(app, [command, str(tmp_path / "nope.toml"), "--to", "3"])
    _one_line_error(r, "nope.toml", "not found")
    bad = tmp_path / "bad.csv"
    bad.write_text("displacement_mm,force_N\n0,0\n2,1\n1,2\n")
    r = runner.invoke(app, [command, str(_blades(tmp_path)), "--at", str(bad)])
    _one_line_error(r, "bad.csv", "row 4: displacement must increase")


@pytest.mark.parametrize("args, words", [
    (["--samples", "1"], ["--samples must be at least 2", "1"]),
    (["--process", "forged"], ["process", "forged"]),
])
def test_tolerance_argument_errors(tmp_path, args, words):
    r = runner.invoke(app, ["tolerance", str(_blades(tmp_path)), "--to", "3", "--out", str(tmp_path / "tol"), *args])
    _one_line_error(r, *words)
    assert not (tmp_path / "tol").exists()


@pytest.mark.parametrize("command, args", [
    ("tolerance", ["--seed", "-1"]), ("tolerance", ["--samples", "many"]), ("verify", ["--top", "0"]),
    ("evaluate", ["--points", "x"]), ("evaluate", ["--to"]),
])
def test_option_values_rejected_by_the_parser(tmp_path, command, args):
    # typer's own usage errors: exit 2 and the option named, no traceback
    r = runner.invoke(app, [command, str(_blades(tmp_path)), *args])
    assert r.exit_code == 2 and "Traceback" not in r.output
    assert args[0] in r.output


# --------------------------------------------------------------------------- evaluate

def test_evaluate_reports_size_mass_and_error_by_hand(tmp_path):
    """The printed size, mass and curve error against hand values.

    Blades L = 30, b = 10, t = 0.3 (two copies) and t = 0.25; box of a guided blade:
    u_max + t along, L and b across; copies side by side on their thinner extent (b):
    length max(4 + 0.3, 3.5 + 0.25) = 4.3, stack 3 x 10 = 30 wide, 30 high ->
    3870 mm^3. Mass rho L b t: 7810 kg/m^3 (17-7PH) x 30 x 10 x (2 x 0.3 + 0.25) mm^3 = 1.99 g.
    """
    d = _blades(tmp_path)
    t = _target(tmp_path)
    r = runner.invoke(app, ["evaluate", str(d), "--at", str(t)])
    assert r.exit_code == 0, r.output
    rho = load_design(d).materials["stainless_17_7ph"].density_kg_m3
    assert rho == 7810.0
    size = float(re.search(r"size ([\d.]+) mm³", r.output).group(1))
    mass = float(re.search(r"mass ([\d.]+) g", r.output).group(1))
    assert size == pytest.approx(4.3 * 30 * 30, rel=1e-3)
    assert mass == pytest.approx(7810e-6 * 30 * 10 * (2 * 0.3 + 0.25), rel=2e-3)
    x = np.linspace(0, 4.0, 9)
    f = evaluate_design(load_design(d), x).force_N[0]
    err = 100 * np.sqrt(np.mean((f - 0.6 * x) ** 2)) / (0.6 * 4.0)
    printed = float(re.search(r"curve error against .*: ([\d.]+) %", r.output).group(1))
    assert printed == pytest.approx(err, abs=6e-4)


# --------------------------------------------------------------------------- verify a design

def test_verify_design_at_a_target(tmp_path):
    d = _blades(tmp_path)
    t = _target(tmp_path)
    r = runner.invoke(app, ["verify", str(d), "--at", str(t)])
    assert r.exit_code == 0, r.output
    fast, solved = (float(v) for v in re.search(r"curve error against .*: ([\d.]+) % \(fast models\), ([\d.]+) % "
                                                r"\(verification solvers\)", r.output).groups())
    x = np.linspace(0, 4.0, 9)
    f = evaluate_design(load_design(d), x).force_N[0]
    assert fast == pytest.approx(100 * np.sqrt(np.mean((f - 0.6 * x) ** 2)) / 2.4, abs=6e-4)
    # the beam kernels are within 3e-4 of the exact elastica (elements/_elastica.py): the two errors agree
    assert solved == pytest.approx(fast, abs=0.05)
    # table rows: design, element, kind, force dev %, stress dev %
    rows = [[c.strip() for c in ln.split("│")[1:-1]] for ln in r.output.splitlines() if ln.startswith("│")]
    bound = lambda v: float(v.lstrip("< "))   # noqa: E731  ("< 0.01": below the shown precision)
    devs = {row[1]: (bound(row[3]), bound(row[4])) for row in rows if row[2] == "blade_guided"}
    assert set(devs) == {"1", "2"} and max(max(v) for v in devs.values()) < 0.5


# --------------------------------------------------------------------------- tolerance

def test_tolerance_writes_the_band_and_sensitivities_it_computes(tmp_path):
    d = _blades(tmp_path)
    t = _target(tmp_path, tol=0.5)
    out = tmp_path / "tol"
    r = runner.invoke(app, ["tolerance", str(d), "--samples", "400", "--at", str(t), "--out", str(out)])
    assert r.exit_code == 0, r.output
    band = pd.read_csv(out / "band.csv")
    x = np.linspace(0, 4.0, 9)
    np.testing.assert_allclose(band.displacement_mm, x, atol=1e-9)
    np.testing.assert_allclose(band.nominal_N, evaluate_design(load_design(d), x).force_N[0], rtol=1e-5)
    assert (band.p05_N <= band.p50_N).all() and (band.p50_N <= band.p95_N).all()
    assert (band.p05_N[1:] < band.nominal_N[1:]).all() and (band.nominal_N[1:] < band.p95_N[1:]).all()
    assert len(pd.read_csv(out / "samples.csv")) == 400
    sens = pd.read_csv(out / "sensitivity.csv").set_index("quantity")
    # a guided blade's force scales as t^3 at any stroke (inextensible elastica: F L^2/(E I) is a
    # function of u/L alone), so t1 dF/dt1 = 3 F1 and the least-squares elasticity over the stroke
    # is 3 sum(F F1) / sum(F^2), with F1 = 2 k1 x, F2 = k1 (0.25/0.3)^3 max(x - 0.5, 0) (linear shares)
    f1 = 2 * x
    f = f1 + (0.25 / 0.3) ** 3 * np.maximum(x - 0.5, 0.0)
    assert sens.loc["e1.thickness_mm", "elasticity"] == pytest.approx(3 * f @ f1 / (f @ f), rel=0.02)
    assert (out / "tolerance.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    share = float(re.search(r"inside the target band at every point: ([\d.]+) % of parts", r.output).group(1))
    assert 0.0 <= share <= 100.0


def test_tolerance_seed_and_process(tmp_path):
    d = _blades(tmp_path)

    def samples(*extra):
        out = tmp_path / f"tol{len(list(tmp_path.glob('tol*')))}"
        r = runner.invoke(app, ["tolerance", str(d), "--samples", "200", "--to", "2", "--out", str(out), *extra])
        assert r.exit_code == 0, r.output
        return out

    a, b = samples("--seed", "5"), samples("--seed", "5")
    # another seed draws other parts; printing holds +-0.10 mm on a 0.3 mm blade where rolled strip
    # holds +-0.020 mm (EN 10140 [memory]): a far wider band
    printed = samples("--seed", "6", "--process", "printed")
    assert (a / "samples.csv").read_bytes() == (b / "samples.csv").read_bytes()
    assert (a / "samples.csv").read_bytes() != (printed / "samples.csv").read_bytes()
    last = {f: pd.read_csv(f / "band.csv").iloc[-1] for f in (a, printed)}
    width = {f: (v.p95_N - v.p05_N) / v.nominal_N for f, v in last.items()}
    assert width[printed] > 3 * width[a]
    sens = pd.read_csv(printed / "sensitivity.csv").set_index("quantity")
    assert sens.loc["e1.thickness_mm", "tolerance_pm"] == pytest.approx(0.10)
    assert pd.read_csv(a / "sensitivity.csv").set_index("quantity").loc["e1.thickness_mm", "tolerance_pm"] \
        == pytest.approx(0.020)


def test_tolerance_without_out_writes_next_to_the_working_folder(tmp_path, monkeypatch):
    d = _blades(tmp_path)
    monkeypatch.chdir(tmp_path)
    for expect in ("pair-tolerance", "pair-tolerance-2"):      # never overwrites an earlier folder
        r = runner.invoke(app, ["tolerance", str(d), "--samples", "20", "--to", "2"])
        assert r.exit_code == 0, r.output
        assert expect in r.output
        assert sorted(p.name for p in (tmp_path / expect).iterdir()) == [
            "band.csv", "samples.csv", "sensitivity.csv", "tolerance.png"]


# --------------------------------------------------------------------------- verify a run folder

@pytest.fixture(scope="module")
def tiny_run(tmp_path_factory):
    """A small run folder (no search verification, no figures) whose design files are then
    replaced by single guided blades inside their model's range (t = 0.2 .. 0.4 mm, L = 30,
    stroke 6 mm = 0.2 L), so that what `verify` must find is known: the beam kernels are
    within 3e-4 of the exact elastica there (elements/_elastica.py)."""
    import springsynth as ss
    from springsynth.io.runfolder import write_run

    d = tmp_path_factory.mktemp("tiny")
    x = np.linspace(0, 6, 13)
    write_target(d / "lin.csv", x, 3.0 + 1.2 * x, tol=0.3)
    st = ss.load_study(write_study(d, "lin.csv", elements=("blade_guided",), materials=("stainless_17_7ph",),
                                  population=8, generations=1, extra="verify_top = 0\npolish = false"))
    run = write_run(ss.synthesize(st), d / "run", plots=False)
    ids = list(pd.read_csv(run / "pareto.csv").design_id)
    for i, did in enumerate(ids):
        t = 0.2 + 0.2 * i / max(len(ids) - 1, 1)
        (run / "designs" / f"{did}.toml").write_text(design_to_toml(design(blade(params={"thickness_mm": t}),
                                                                           name=did)))
    return run


@pytest.mark.slow
def test_verify_run_writes_each_designs_deviation(tiny_run):
    r = runner.invoke(app, ["verify", str(tiny_run), "--points", "3"])
    assert r.exit_code == 0, r.output
    assert "verification.csv" in r.output
    table = pd.read_csv(tiny_run / "pareto.csv")
    ver = pd.read_csv(tiny_run / "verification.csv")
    assert list(ver.columns[:3]) == ["design_id", "element", "kind"]
    assert list(ver.design_id) == [i for i in table.design_id for _ in (1, 2)]     # element 1, assembly
    assert list(ver.element) == ["1", "assembly"] * len(table)
    assert ver.verified.all() and not ver.flagged.any()
    assert (ver.force_dev_pct < 0.5).all() and (ver.stress_dev_pct < 0.5).all()


@pytest.mark.slow
def test_verify_run_top_takes_the_lowest_errors(tiny_run):
    r = runner.invoke(app, ["verify", str(tiny_run), "--points", "2", "--top", "2"])
    assert r.exit_code == 0, r.output
    best = pd.read_csv(tiny_run / "pareto.csv").sort_values("curve_error_pct", kind="stable").design_id[:2]
    ver = pd.read_csv(tiny_run / "verification.csv")
    assert list(dict.fromkeys(ver.design_id)) == list(best)


@pytest.mark.slow
@pytest.mark.parametrize("args, words", [
    (["--to", "3"], ["drop --at/--to"]),
    (["--points", "1"], ["--points must be at least 2"]),
])
def test_verify_run_argument_errors(tiny_run, args, words):
    before = sorted(p.name for p in tiny_run.iterdir())
    _one_line_error(runner.invoke(app, ["verify", str(tiny_run), *args]), "verify", *words)
    assert sorted(p.name for p in tiny_run.iterdir()) == before
