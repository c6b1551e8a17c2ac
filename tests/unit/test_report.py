"""Figures and report.html of a run folder: self-contained, complete, rebuildable from the folder alone."""

from __future__ import annotations

import dataclasses
import html
import os
import re
import shutil
import subprocess
import sys
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from typer.testing import CliRunner

from springsynth.cli import app
from springsynth.io.runfolder import build_report, read_run
from springsynth.model.safety import CAUTION
from springsynth.report.plots import knee_index, plot_pareto, representatives
from tests.conftest import write_study, write_target

runner = CliRunner()


class _Page(HTMLParser):
    """Collects what a self-containment check needs: every URL-bearing attribute, the
    tags used and the rows of the Pareto table."""

    def __init__(self):
        super().__init__()
        self.urls: list[tuple[str, str, str]] = []
        self.tags: list[str] = []
        self.imgs: list[str] = []
        self.scripts_with_src = 0
        self.in_pareto = self.in_body = False
        self.rows: list[list[str]] = []
        self.headers: list[str] = []
        self._cell: list[str] | None = None
        self._in_th = False

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        self.tags.append(tag)
        for k in ("src", "href", "data", "action", "poster", "srcset"):
            if k in a and a[k] is not None:
                self.urls.append((tag, k, a[k]))
        if tag == "img":
            self.imgs.append(a.get("src") or "")
        if tag == "script" and a.get("src"):
            self.scripts_with_src += 1
        if tag == "table" and a.get("id") == "pareto-table":
            self.in_pareto = True
        if self.in_pareto and tag == "tbody":
            self.in_body = True
        if self.in_pareto and self.in_body and tag == "tr":
            self.rows.append([])
        if self.in_pareto and tag == "td" and self.in_body:
            self._cell = []
        if self.in_pareto and tag == "th":
            self._in_th = True
            self.headers.append("")

    def handle_endtag(self, tag):
        if tag == "table" and self.in_pareto:
            self.in_pareto = self.in_body = False
        if tag == "td" and self._cell is not None:
            self.rows[-1].append("".join(self._cell).strip())
            self._cell = None
        if tag == "th":
            self._in_th = False

    def handle_data(self, data):
        if self._cell is not None:
            self._cell.append(data)
        if self._in_th:
            self.headers[-1] += data.strip()


def _parse(path) -> _Page:
    p = _Page()
    p.feed(path.read_text(encoding="utf-8"))
    return p


@pytest.fixture(scope="module")
def run_dir(tmp_path_factory):
    """A tiny seeded run written through the command line (fast budget)."""
    d = tmp_path_factory.mktemp("report")
    x = np.linspace(0, 6, 13)
    write_target(d / "lin.csv", x, 3.0 + 1.2 * x, tol=0.4)
    study = write_study(d, "lin.csv")
    out = d / "run"
    r = runner.invoke(app, ["run", str(study), "--out", str(out), "--population", "24", "--generations", "6"])
    assert r.exit_code == 0, r.output            # a straight line the blades and coils can follow
    table = pd.read_csv(out / "pareto.csv")
    assert table.feasible.any() and len(table) >= 3    # several designs, so that the report has something to lay out
    return out


@pytest.fixture
def run_copy(run_dir, tmp_path):
    dst = tmp_path / "copy"
    shutil.copytree(run_dir, dst)
    return dst


@pytest.mark.slow
def test_run_writes_all_figures_and_the_report(run_dir):
    table = pd.read_csv(run_dir / "pareto.csv")
    assert len(table) >= 1
    for f in ("pareto.png", "curves.png", "convergence.png", "report.html"):
        assert (run_dir / f).stat().st_size > 1000, f
    for i in table.design_id:
        png = run_dir / "designs" / f"{i}.png"
        assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n", png


@pytest.mark.slow
def test_report_is_self_contained(run_dir):
    text = (run_dir / "report.html").read_text(encoding="utf-8")
    page = _parse(run_dir / "report.html")
    # no network: nothing loaded from or linked to anywhere but the page itself
    for tag, attr, url in page.urls:
        assert not re.match(r"^\s*(https?:)?//", url, re.I), (tag, attr, url)
        assert url.startswith(("data:", "#")), (tag, attr, url)
    assert not re.search(r"""(src|href)\s*=\s*["']?\s*(https?:)?//""", text, re.I)
    assert "@import" not in text and "url(" not in text
    assert "link" not in page.tags and "iframe" not in page.tags and page.scripts_with_src == 0
    # every figure inline
    assert len(page.imgs) >= 3 + len(pd.read_csv(run_dir / "pareto.csv"))
    assert all(src.startswith("data:image/png;base64,") for src in page.imgs)
    assert text.count("<script") <= 1


@pytest.mark.slow
def test_table_has_one_row_per_design_and_the_expected_columns(run_dir):
    table = pd.read_csv(run_dir / "pareto.csv")
    page = _parse(run_dir / "report.html")
    assert len(page.rows) == len(table)
    assert all(r[0].startswith(i) for r, i in zip(page.rows, table.design_id))
    for h in ("id", "curve error [%]", "stress ratio [-]", "size [mm³]", "mass [g]", "feasible", "topology"):
        assert h in page.headers
    text = (run_dir / "report.html").read_text(encoding="utf-8")
    for i in table.design_id:
        assert f'id="card-{i}"' in text


@pytest.mark.slow
def test_report_carries_cautions_summary_and_model_notes(run_dir):
    text = (run_dir / "report.html").read_text(encoding="utf-8")
    assert html.escape(CAUTION) in text
    for words in ("prototypes", "fatigue", "standards", "licensed"):
        assert words in text
    for words in ("envelope", "limits", "budget", "evaluations", "seed", "lin.csv"):
        assert words in text
    assert "valid:" in text and "Model validity and sources" in text


@pytest.mark.slow
def test_report_command_rebuilds_from_the_folder_alone(run_copy):
    made = [run_copy / f for f in ("pareto.png", "curves.png", "convergence.png", "report.html")]
    made += list((run_copy / "designs").glob("*.png"))
    for p in made:
        p.unlink()
    r = runner.invoke(app, ["report", str(run_copy)])
    assert r.exit_code == 0, r.output
    assert "report.html" in r.output
    for p in made:
        assert p.exists() and p.stat().st_size > 1000, p
    assert len(_parse(run_copy / "report.html").rows) == len(pd.read_csv(run_copy / "pareto.csv"))


def test_report_command_rejects_a_folder_that_is_not_a_run(tmp_path):
    r = runner.invoke(app, ["report", str(tmp_path)])
    assert r.exit_code == 2
    assert "run.json is missing" in r.output


@pytest.mark.slow
def test_verification_columns_are_shown_when_present_and_omitted_otherwise(run_copy):
    # a run verifies its top designs; a table without the column gives a report without it
    # every run has its in-spec share (a column of its own); a run written before it has none
    table = pd.read_csv(run_copy / "pareto.csv")
    assert "verified_error_pct" in table.columns and "in_spec_share" in table.columns
    table = table.drop(columns=["verified_error_pct", "in_spec_share"])
    table.to_csv(run_copy / "pareto.csv", index=False)
    build_report(read_run(run_copy))
    text = (run_copy / "report.html").read_text(encoding="utf-8")
    assert "verified_error_pct" not in text and "Verification and tolerance" not in text
    assert "in spec [%]" not in _parse(run_copy / "report.html").headers
    table.insert(6, "verified_error_pct", np.linspace(0.5, 1.5, len(table)))
    table.insert(4, "in_spec_share", 0.987)
    table.to_csv(run_copy / "pareto.csv", index=False)
    build_report(read_run(run_copy))
    text = (run_copy / "report.html").read_text(encoding="utf-8")
    page = _parse(run_copy / "report.html")
    assert "verified_error_pct" in page.headers and "in spec [%]" in page.headers
    col = page.headers.index("in spec [%]")
    assert all(row[col] == "98.7" for row in page.rows)
    assert "Verification and tolerance" in text and "98.7 % of parts in spec" in text
    assert "Monte Carlo standard error" in text      # the run summary says what the share means
    assert not any(h.startswith("e1_") for h in page.headers)


def test_pareto_plot_is_pure_and_labels_the_knee_and_extremes(tmp_path, monkeypatch):
    import matplotlib.figure
    import matplotlib.pyplot as plt

    # a plot function writes nothing and opens no window: any file would land in the (empty)
    # working folder, any savefig or show is recorded
    calls = []
    monkeypatch.chdir(tmp_path)
    monkeypatch.setattr(matplotlib.figure.Figure, "savefig", lambda self, *a, **k: calls.append("savefig"))
    monkeypatch.setattr(plt, "show", lambda *a, **k: calls.append("show"))
    F = np.array([[0.1, 0.9, 900.0], [5.0, 0.2, 4000.0], [19.0, 0.8, 300.0], [18.0, 0.05, 15000.0], [9.0, 0.4, 50.0]])
    feas = np.array([True, True, True, True, False])
    ids = [f"D{i + 1:02d}" for i in range(len(F))]
    reps = representatives(ids, F, feas)
    # by hand, over the four feasible rows: each objective scaled to [0, 1] by its range
    # (18.9, 0.85, 14 700), distances to the ideal point D01 1.001, D02 0.402, D03 1.333,
    # D04 1.377 -> the knee is D02; lowest error D01, smallest D03, lowest stress D04
    # (D05, infeasible, would be smallest and is not eligible)
    assert reps == {"lowest error": 0, "knee": 1, "smallest": 2, "lowest stress": 3}
    assert knee_index(F[:4]) == 1
    fig = plot_pareto(ids, F, feas, stress_limit=0.8)
    texts = [t.get_text() for ax in fig.axes for t in ax.texts]
    assert any(t.startswith("D01") and "lowest error" in t for t in texts)
    assert any(t.startswith("D02") and "knee" in t for t in texts)
    assert not any(t.startswith("D05") for t in texts)
    assert all(ax.get_xlabel() and ax.get_ylabel() for ax in fig.axes)
    assert any(ax.get_yscale() == "log" or ax.get_xscale() == "log" for ax in fig.axes)  # size spans decades
    plt.close(fig)
    # the in-spec share colours the feasible dots, on a labelled 0-100 % bar, and names its best design
    # (among the feasible ones; equal shares go to the lower error)
    share = np.array([0.9, 0.5, 0.1, 1.0, 0.0])
    assert representatives(ids, F, feas, share)["most in spec"] == 3
    assert representatives(ids, F, feas, np.array([0.5, 0.9, 0.9, 0.2, 1.0]))["most in spec"] == 1
    assert "most in spec" not in representatives(ids, F, feas, np.full(5, np.nan))
    fig = plot_pareto(ids, F, feas, stress_limit=0.8, in_spec=share)
    assert any(t.startswith("D04") and "most in spec" in t for ax in fig.axes for t in (x.get_text() for x in ax.texts))
    bar = fig.axes[-1]
    assert len(fig.axes) == 4 and "in spec" in bar.get_ylabel() and bar.get_ylim() == (0.0, 100.0)
    dots = fig.axes[0].collections[0]
    np.testing.assert_allclose(dots.get_array(), [90.0, 50.0, 10.0, 100.0])
    plt.close(fig)
    assert calls == [] and list(tmp_path.iterdir()) == []


def _report_input(folder):
    from springsynth.report.html import ReportInput

    run = read_run(folder)
    return ReportInput(run.path, run.meta, run.table, run.designs, run.study(), {})


@pytest.mark.slow
def test_figures_drawn_in_worker_processes_are_the_bytes_drawn_here(run_dir):
    from springsynth.report.html import render_report

    inp = _report_input(run_dir)
    here, pooled = render_report(inp, workers=1), render_report(inp, workers=2)
    assert here.figures == pooled.figures and here.design_figures == pooled.design_figures
    assert here.html == pooled.html
    assert set(here.design_figures) == {d.name for d in inp.designs}


def test_a_canvas_drawn_again_shows_only_the_new_design(run_dir):
    # one canvas draws every design of a report, its frame kept as pixels and only the design's
    # layer drawn over them: each picture must be exactly the full drawing of a new figure
    from springsynth.assembly.evaluate import evaluate_design
    from springsynth.model.study import curve_grid
    from springsynth.report.design_figure import DesignCanvas, plot_design
    from springsynth.report.style import render_png

    inp = _report_input(run_dir)
    x, target = curve_grid(inp.study), inp.study.target
    canvases: dict[int, DesignCanvas] = {}
    designs = list(inp.designs) + list(inp.designs[:1])   # the first again, after the others
    for k, d in enumerate(designs):
        r = evaluate_design(d, x, x_max_mm=target.stroke_mm)
        title = f"{d.name} ({k})"
        if len(d.branches) not in canvases:
            canvases[len(d.branches)] = DesignCanvas(len(d.branches))
        canvas = canvases[len(d.branches)]
        canvas.draw(d, r, target=target, stress_limit=0.8 - 0.2 * (k % 2), title=title)   # frames of two limits
        fresh = plot_design(d, r, target=target, stress_limit=0.8 - 0.2 * (k % 2), title=title)
        assert canvas.png() == render_png(fresh, dpi=100, tight=False), d.name


def test_palette_png_keeps_the_picture_and_the_background_exact():
    # a drawn figure with far more than 256 colours (eight overlapping translucent bands and
    # lines) reduced to a palette: nearly every pixel within a few levels of the original,
    # the rest antialiased edge pixels (a reader sees neither), the white background exact
    import io

    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    from PIL import Image

    from springsynth.report.style import PALETTE, palette_png

    fig = Figure(figsize=(4, 3), dpi=100)
    FigureCanvasAgg(fig)
    ax = fig.add_subplot()
    xs = np.linspace(0, 6, 50)
    for j, c in enumerate(PALETTE):
        ax.plot(xs, np.sin(xs + j), color=c, lw=1.5)
        ax.fill_between(xs, j * 0.1, j * 0.1 + 0.05, color=c, alpha=0.5)
    ax.set_title("palette check")
    fig.canvas.draw()
    rgba = np.asarray(fig.canvas.buffer_rgba()).copy()
    png = palette_png(rgba)
    back = np.asarray(Image.open(io.BytesIO(png)).convert("RGB")).astype(int)
    diff = np.abs(back - rgba[..., :3].astype(int)).max(axis=2)
    assert back.shape == rgba[..., :3].shape
    assert len(np.unique(rgba.reshape(-1, 4), axis=0)) > 1000
    assert np.mean(diff > 16) < 0.005 and diff.max() <= 48 and diff.mean() < 2.0
    white = np.all(rgba[..., :3] == 255, axis=2)
    assert np.all(back[white] == 255)
    assert Image.open(io.BytesIO(png)).mode == "P"
    assert png == palette_png(rgba)  # deterministic


_MODULES_AFTER = """
import runpy, sys
sys.argv = ["springsynth"] + sys.argv[1:]
try:
    runpy.run_module("springsynth.cli", run_name="__main__")
except SystemExit as e:
    assert not e.code, e.code
print(" ".join(sorted(m for m in sys.modules if m.split(".")[0] in ("pymoo", "matplotlib", "pandas")
                      or m.startswith("springsynth.search"))))
"""


@pytest.mark.slow
@pytest.mark.parametrize("command", [["report"], ["verify", "--top", "1", "--points", "3"]])
def test_report_and_verify_of_a_run_do_not_load_the_search(run_copy, command):
    # rebuilding a report or verifying a run never loads the search (pymoo), rebuilding a report never
    # loads pandas, and verifying never loads the plotting library: a user waits for none of them
    env = {**os.environ, "PYTHONPATH": str(Path(__file__).resolve().parents[2] / "src")}
    out = subprocess.run([sys.executable, "-c", _MODULES_AFTER, command[0], str(run_copy), *command[1:]],
                         capture_output=True, text=True, env=env, timeout=600)
    assert out.returncode == 0, out.stderr
    loaded = out.stdout.strip().splitlines()[-1].split()
    assert not [m for m in loaded if m.startswith(("pymoo", "springsynth.search"))], loaded
    if command[0] == "report":
        assert not [m for m in loaded if m.startswith("pandas")], loaded
    if command[0] == "verify":
        assert not [m for m in loaded if m.startswith("matplotlib")], loaded


@pytest.mark.slow
def test_a_run_writes_its_tables_without_pandas(tmp_path):
    # pareto.csv and curves.csv are written by model.table's writer (byte for byte what pandas wrote,
    # tests/unit/test_csv_table.py), and the terminal's table reads them back: a run never imports pandas
    x = np.linspace(0, 6, 13)
    write_target(tmp_path / "lin.csv", x, 3.0 + 1.2 * x, tol=0.4)
    study = write_study(tmp_path, "lin.csv")
    env = {**os.environ, "PYTHONPATH": str(Path(__file__).resolve().parents[2] / "src")}
    out = subprocess.run([sys.executable, "-c", _MODULES_AFTER, "run", str(study), "--out", str(tmp_path / "run"),
                          "--population", "12", "--generations", "3"], capture_output=True, text=True, env=env,
                         timeout=600)
    assert out.returncode == 0, out.stderr
    loaded = out.stdout.strip().splitlines()[-1].split()
    assert "pymoo" in loaded and not [m for m in loaded if m.startswith("pandas")], loaded
    assert "Pareto set" in out.stdout and len(pd.read_csv(tmp_path / "run" / "pareto.csv")) >= 1


def _dies_in_a_worker(k):
    import multiprocessing

    if multiprocessing.current_process().name != "MainProcess":
        os._exit(3)          # a worker process that dies (as a crash would)
    return k * 2


def test_jobs_are_run_here_when_a_worker_process_dies():
    from springsynth.report.figures import run_jobs

    jobs = [(f"j{k}", _dies_in_a_worker, (k,), {}) for k in range(3)]
    assert run_jobs(jobs, workers=2) == {"j0": 0, "j1": 2, "j2": 4}


def test_design_figures_are_cut_into_equal_jobs_that_draw_every_design_once(run_dir):
    # two worker processes share the design figures: equal shares, every design in exactly one
    from springsynth.assembly.evaluate import evaluate_design
    from springsynth.model.study import curve_grid
    from springsynth.report.figures import design_jobs, design_results

    inp = _report_input(run_dir)
    x, target = curve_grid(inp.study), inp.study.target
    designs = [dataclasses.replace(d, name=f"{d.name}-{k}") for k in range(7) for d in inp.designs]
    items = [(d, evaluate_design(d, x, x_max_mm=target.stroke_mm), d.name, None) for d in designs]
    for parts in (1, 2, 3):
        jobs = design_jobs(items, target, 0.8, parts=parts)
        assert [k for k, *_ in jobs] == ["designs", "designs-2", "designs-3"][:parts]
        shares = [[it[0].name for it in args[0]] for _, _, args, _ in jobs]
        assert sorted(sum(shares, [])) == sorted(d.name for d in designs)
        assert max(map(len, shares)) - min(map(len, shares)) <= 1
    done = {"designs": {"D01": b"a"}, "designs-2": {"D02": b"b"}, "pareto.png": b"c", "maker": {}}
    assert design_results(done) == {"D01": b"a", "D02": b"b"}


@pytest.mark.parametrize("load_1min, running_now, workers", [
    (1.1, 1.0, 2),     # the previous command ended seconds ago: only this process runs now
    (2.0, 2.0, 1),     # another process has run for a while and runs now
    (0.3, 2.0, 2),     # another process started a moment ago: not yet counted as busy
    (0.2, 1.0, 2),
])
def test_the_report_takes_a_second_worker_where_a_core_is_idle(monkeypatch, load_1min, running_now, workers):
    import springsynth.report.figures as fig

    monkeypatch.setattr(fig.sys, "platform", "linux")
    monkeypatch.setattr(fig.os, "sched_getaffinity", lambda pid: {0, 1}, raising=False)
    monkeypatch.setattr(fig.os, "cpu_count", lambda: 2)
    monkeypatch.setattr(fig.os, "getloadavg", lambda: (load_1min, 1.0, 1.0))
    monkeypatch.setattr(fig, "_running_now", lambda: running_now)
    assert fig.default_workers() == workers
