"""Command line: each command parses, loads, computes through the public API and writes."""

from __future__ import annotations

import functools
import math
import sys
from enum import Enum
from pathlib import Path
from typing import List, Optional

import typer
from rich.console import Console
from rich.markup import escape
from rich.table import Table
from typer.core import TyperGroup

from springsynth.model.errors import InputError
from springsynth.model.numbers import pct_text

try:  # typer from 0.2x carries its own copy of click, whose exceptions it raises
    from typer._click import exceptions as _cx
except ImportError:  # pragma: no cover - older typer on click
    from click import exceptions as _cx


class _Commands(TyperGroup):
    """The command group; click's usage errors (a bad option value, a missing argument) become
    one line on stderr and exit code 2, as input errors do."""

    def main(self, args=None, prog_name=None, complete_var=None, standalone_mode=True, **extra):
        if not standalone_mode:
            return super().main(args, prog_name, complete_var, standalone_mode=False, **extra)
        argv = list(sys.argv[1:] if args is None else args)
        try:
            code = super().main(argv, prog_name, complete_var, standalone_mode=False, **extra)
        except _cx.NoArgsIsHelpError as e:
            e.show()
            code = e.exit_code
        except _cx.ClickException as e:
            err.print(f"[bold red]error:[/] {escape(_usage_line(e, argv))}")
            code = e.exit_code
        except typer.Abort:
            err.print("aborted")
            code = 1
        sys.exit(code if isinstance(code, int) else 0)


def _usage_line(e, argv: list[str]) -> str:
    """One line: what is wrong, the value given and where to read more."""
    msg = " ".join(e.format_message().split()).rstrip(".")
    param = getattr(e, "param", None)
    if isinstance(e, _cx.BadParameter) and param is not None:
        opts = getattr(param, "opts", ())
        for i, a in enumerate(argv):
            name, eq, val = a.partition("=")
            if name in opts and (eq or i + 1 < len(argv)):
                msg += f" (got {val if eq else argv[i + 1]!r})"
                break
    ctx = getattr(e, "ctx", None)
    return msg + (f"; see `{ctx.command_path} --help`" if ctx is not None else "")


app = typer.Typer(cls=_Commands, add_completion=False, no_args_is_help=True, pretty_exceptions_enable=False,
                  rich_markup_mode=None,
                  help="springsynth: from a target force-displacement curve to Pareto-optimal springs and flexures.")
out = Console(highlight=False, soft_wrap=True)
err = Console(stderr=True, highlight=False, soft_wrap=True)


def _guard(fn):
    """Turn input errors into one line and exit code 2; Ctrl-C into exit code 130."""

    @functools.wraps(fn)
    def wrapper(*a, **k):
        try:
            return fn(*a, **k)
        except InputError as e:
            err.print(f"[bold red]error:[/] {escape(str(e))}")
            raise typer.Exit(2)
        except KeyboardInterrupt:
            err.print("interrupted")
            raise typer.Exit(130)

    return wrapper


def _caution():
    from springsynth.model.safety import CAUTION

    out.print(f"[dim]Caution: {CAUTION}[/]", soft_wrap=False)


def _material_notices(materials) -> None:
    """What the readers filled in for inline materials (e.g. a default strain limit)."""
    for m in materials:
        for n in m.notices:
            err.print(f"notice: {escape(n)}")


def _validity_messages(outside: dict[str, float]) -> None:
    """Margins beyond their bound, in two kinds: where a model's accuracy ends (a warning) and
    where only a rule of the trade is broken (a notice: harder to make, forces still valid)."""
    from springsynth.elements import margin_text, split_margins

    model, rules = split_margins(outside)
    if model:
        err.print(f"[bold yellow]warning:[/] outside the models' valid range ({escape(margin_text(model))}): forces "
                  "not trustworthy beyond it")
    if rules:
        err.print(f"notice: harder to make: {escape(margin_text(rules))} beyond a design rule of the trade; the model "
                  "still holds there (see `springsynth elements`)")


# ------------------------------------------------------------------------- evaluate

class Fmt(str, Enum):
    table = "table"
    csv = "csv"


@app.command()
@_guard
def evaluate(
    design: Path = typer.Argument(..., metavar="DESIGN", help="design TOML file"),
    at: Optional[Path] = typer.Option(None, "--at", help="evaluate at the points of this target CSV (and report the error)"),
    to: Optional[float] = typer.Option(None, "--to", help="largest displacement, mm (with --points)"),
    points: int = typer.Option(41, "--points", help="number of evenly spaced points from 0 to --to"),
    out_csv: Optional[Path] = typer.Option(None, "--out", help="write displacement_mm,force_N,stress_ratio, per-element forces and kind-specific columns (e.g. parasitic travel)"),
    plot: Optional[Path] = typer.Option(None, "--plot", help="write a PNG of force (stacked by element) and stress ratio"),
):
    """Forward model of one design: force and stress ratio along the stroke."""
    from springsynth.assembly.evaluate import evaluate_design
    from springsynth.io.design_toml import load_design
    from springsynth.report.terminal import arrangement_words, evaluation_frame, fatigue_renderables

    d = load_design(design)
    _material_notices(d.materials.values())
    x, target, target_name = _stroke_points(at, to, points, "evaluate", design)
    fatigue = fatigue_renderables(d, float(max(x)), f"{design} [duty]") if d.duty else ""  # checked before output
    r = evaluate_design(d, x)
    frame = evaluation_frame(d, r)
    tab = Table(title=escape(f"{d.name}: {d.topology()}"), title_justify="left")
    for c in frame.columns:
        tab.add_column(c, justify="right")
    step = max(1, len(frame) // 12)
    shown = sorted(set(range(0, len(frame), step)) | {len(frame) - 1})
    for i in shown:
        tab.add_row(*[f"{v:.4g}" for v in frame.iloc[i]])
    out.print(tab)
    out.print(f"peak stress ratio {r.stress_ratio[0]:.3g}; size {r.size_mm3[0]:.4g} mm³ "
              f"({r.box_mm[0, 0]:.3g} x {r.box_mm[0, 1]:.3g} x {r.box_mm[0, 2]:.3g} mm); mass {r.mass_g[0]:.3g} g")
    if target is not None:
        out.print(escape(f"curve error against {target_name}: {pct_text(target.curve_error_pct(r.force_N)[0], decimals=3)}"))
    if r.snap_mm is not None and math.isfinite(r.snap_mm[0]):
        out.print(f"a chain snaps at x = {r.snap_mm[0]:.4g} mm: its loading path folds back there and the force "
                  "jumps (see the plot)")
    outside = {k: float(v[0]) for k, v in r.validity.items() if v[0] > 0}
    if not r.finite[0]:
        outside["numerical"] = math.inf
    if out_csv is not None:
        from springsynth.io.files import write_text_atomic

        write_text_atomic(out_csv, frame.to_csv(index=False, float_format="%.8g", lineterminator="\n"))
        out.print(f"wrote {out_csv}")
    if plot is not None:
        from springsynth.io.files import save_figure
        from springsynth.report.plots import plot_design

        r_plot = evaluate_design(d, x, at_snaps=True)       # the snap drawn as a vertical step
        save_figure(plot_design(d, r_plot, target=target, title=f"{d.name}: {arrangement_words(d)}"), plot)
        out.print(f"wrote {plot}")
    out.print(fatigue, end="\n" if fatigue else "", soft_wrap=False)
    _caution()
    _validity_messages(outside)


# ------------------------------------------------------------------------- catalogues

@app.command()
@_guard
def elements(fmt: Fmt = typer.Option(Fmt.table, "--format", help="table or csv")):
    """The element kinds: parameters, bounds, validity and sources."""
    from springsynth.elements import registry

    rows = []
    for k in registry().values():
        for q in k.params:
            rng = " | ".join(q.choices) if q.choices else f"{q.lo:g} .. {q.hi:g}"
            rows.append({"kind": k.name, "parameter": q.name, "unit": q.unit, "range": rng, "scale": "log" if q.log else "lin",
                         "made_to": q.made_to, "forms": " ".join(k.forms), "validity": k.validity, "design_rules": " ".join(sorted(k.design_rules)),
                         "sources": "; ".join(k.sources)})
    if fmt == Fmt.csv:
        import pandas as pd

        sys.stdout.write(pd.DataFrame(rows).to_csv(index=False, lineterminator="\n"))
        return
    from springsynth.report.terminal import kind_sections

    for part in kind_sections(registry().values()):
        out.print(part, soft_wrap=False)


@app.command()
@_guard
def materials(fmt: Fmt = typer.Option(Fmt.table, "--format", help="table or csv")):
    """The materials catalogue, with the kinds each suits and its sources."""
    import dataclasses

    import pandas as pd

    from springsynth.elements import registry
    from springsynth.model.materials import catalogue
    from springsynth.report.terminal import materials_table

    if fmt == Fmt.table:
        for part in materials_table(catalogue().values(), registry().values()):
            out.print(part, soft_wrap=False)
        return
    rows = []
    for m in catalogue().values():
        d = {k: v for k, v in dataclasses.asdict(m).items() if k != "notices"}
        d["forms"] = " ".join(m.forms)
        d["ogden_mu_MPa"] = " ".join(f"{v:g}" for v in m.ogden_mu_MPa)
        d["ogden_alpha"] = " ".join(f"{v:g}" for v in m.ogden_alpha)
        d["kinds"] = " ".join(k.name for k in registry().values() if m.suits(k.forms))
        rows.append(d)
    sys.stdout.write(pd.DataFrame(rows).to_csv(index=False, lineterminator="\n"))


# ------------------------------------------------------------------------- check

@app.command()
@_guard
def check(file: Path = typer.Argument(..., metavar="FILE", help="a target CSV, a study TOML or a design TOML")):
    """Validate a target, study or design file and say what is wrong."""
    from springsynth.io.design_toml import load_design, read_toml
    from springsynth.io.study_toml import load_study
    from springsynth.io.target_csv import load_target

    if file.suffix.lower() == ".csv":
        t = load_target(file)
        out.print(f"{file}: target with {t.x_mm.size} points over 0 .. {t.stroke_mm:g} mm, "
                  f"force {t.force_N.min():.4g} .. {t.force_N.max():.4g} N" + (", with a band" if t.has_band else ""))
        for n in t.notices:
            out.print(f"notice: {n}")
        return
    doc = read_toml(file)
    if "element" in doc or "chain" in doc:
        d = load_design(file)
        out.print(escape(f"{file}: design with {len(d.parts)} element(s) in {len(d.branches)} branch(es): "
                         f"{d.topology()}"))
        _material_notices(d.materials.values())
        return
    st = load_study(file)
    _material_notices(st.search.materials)
    words = {"scale_force": "forces", "scale_stroke": "displacements"}
    scaled = ", ".join(f"{words[k]} x{v:g}" for k, v in st.raw["target"].items() if k in words)
    out.print(f"{file}: study {st.name!r}: target {st.target_path}{f' ({scaled})' if scaled else ''} "
              f"({st.target.x_mm.size} points, stroke "
              f"{st.target.stroke_mm:g} mm); {len(st.search.kinds)} kinds, {len(st.search.materials)} materials, "
              f"up to {st.search.max_elements} elements"
              + (f", chains of up to {st.search.links_per_chain} in series" if st.search.links_per_chain > 1 else ""))


# ------------------------------------------------------------------------- run

def _progress_runner(study, **kw):
    from rich.progress import BarColumn, MofNCompleteColumn, Progress, TextColumn, TimeElapsedColumn

    from springsynth.search.synthesis import synthesize

    cols = [TextColumn("generation"), MofNCompleteColumn(), BarColumn(), TextColumn("{task.fields[info]}"),
            TimeElapsedColumn()]
    with Progress(*cols, console=err, transient=False) as prog:
        task = prog.add_task("search", total=kw.get("generations") or study.search.generations, info="")

        def on_gen(p):
            best = "-" if math.isnan(p.best_error_pct) else pct_text(p.best_error_pct)
            prog.update(task, completed=p.generation, total=p.generations,
                        info=f"evals {p.evaluations}  feasible {pct_text(100 * p.feasible_share, decimals=0)}  "
                             f"best error {best}  HV {p.hypervolume:.3f}")

        res = synthesize(study, on_generation=on_gen, **kw)
    for n in res.notices:
        err.print(f"notice: {escape(n)}")
    return res


def _finish_run(res, folder):
    from springsynth.model.table import csv_text, parse_csv
    from springsynth.report.terminal import pareto_table
    from springsynth.search.synthesis import design_columns

    df = parse_csv(csv_text(design_columns(res)))    # pareto.csv's text, read as any reader reads the file
    out.print(pareto_table(df, f"Pareto set: {len(df)} designs in {folder}"))
    if len(df) > 12:
        out.print(f"... {len(df) - 12} more in {folder / 'pareto.csv'}")
    if res.polish.get("improved"):
        p = res.polish
        out.print(f"local polish improved {p['improved']} of {p['starts']} starting designs (median error reduction "
                  f"{pct_text(p['median_reduction_pct'], decimals=0)})")
    _caution()
    if not res.feasible:
        err.print("[bold red]no feasible design found.[/] The closest designs and what they violate:")
        for i, d in enumerate(res.designs):
            err.print(escape(f"  {d.name}: {res.binding(i)}"))
        err.print("They are written, marked infeasible. Loosen the binding limits or widen the envelope.")
        raise typer.Exit(1)


@app.command()
@_guard
def run(
    study: Optional[Path] = typer.Argument(None, metavar="STUDY", help="study TOML file"),
    out_dir: Optional[Path] = typer.Option(None, "--out", help="run folder to create (default runs/<name>-<time>)"),
    population: Optional[int] = typer.Option(None, "--population", min=4),
    generations: Optional[int] = typer.Option(None, "--generations", min=1),
    seed: Optional[int] = typer.Option(None, "--seed", min=0),
    resume: Optional[Path] = typer.Option(None, "--resume", help="continue an interrupted run folder"),
):
    """Search for Pareto-optimal designs that follow the study's target curve.

    Ctrl-C (or SIGTERM) finishes the current generation, saves the results so far
    (marked partial) with a checkpoint, and exits 130; `--resume RUN` continues it.
    """
    from springsynth.io.runfolder import default_run_folder, read_run, resumed_run_folder, write_run
    from springsynth.io.study_toml import load_study

    if (study is None) == (resume is None):
        raise InputError("give a STUDY file, or --resume RUN to continue an interrupted run", where="run")
    parent = resumed = None
    overrides: list[str] = []
    checkpoint = None
    if resume is not None:
        if population is not None or generations is not None or seed is not None:
            raise InputError("--resume continues with the interrupted run's own population, generations and "
                             "seed; drop --population/--generations/--seed", where="run")
        old = read_run(resume)
        checkpoint = old.checkpoint()
        st = old.study()
        parent, overrides, resumed = old.meta.get("parent"), list(old.meta.get("overrides", [])), str(resume)
    else:
        st = load_study(study)
    for n in st.target.notices:
        err.print(f"notice: {n}")
    _material_notices(st.search.materials)
    with _stop_on_signal() as stop:
        res = _progress_runner(st, population=population, generations=generations, seed=seed,
                               should_stop=stop, resume=checkpoint)
    default = default_run_folder(st.name) if resume is None else resumed_run_folder(resume)
    folder = write_run(res, out_dir or default, parent=parent, overrides=overrides, resumed_from=resumed)
    if resume is not None:
        out.print(escape(f"resumed {resume}: the finished run is in {folder} (the interrupted run is left as it was)"))
    if res.partial:
        err.print(f"[bold yellow]interrupted[/] after generation {res.history[-1]['generation']} of "
                  f"{res.generations}: results so far (partial) in {folder}; continue with "
                  f"`springsynth run --resume {folder}`")
        raise typer.Exit(130)
    _finish_run(res, folder)


class _stop_on_signal:
    """Context manager: the first SIGINT/SIGTERM asks the search to stop after the current
    generation; a second SIGINT interrupts at once."""

    def __enter__(self):
        import signal

        self.flag = False
        self.old = {}

        def handler(signum, frame):
            if self.flag and signum == signal.SIGINT:
                raise KeyboardInterrupt
            self.flag = True
            err.print("stopping after this generation (press Ctrl-C again to abort without saving)")

        for sig in (signal.SIGINT, signal.SIGTERM):
            try:
                self.old[sig] = signal.signal(sig, handler)
            except ValueError:  # not the main thread (e.g. some test runners)
                pass
        return lambda: self.flag

    def __exit__(self, *exc):
        import signal

        for sig, h in self.old.items():
            signal.signal(sig, h)
        return False


@app.command()
@_guard
def rerun(
    run_dir: Path = typer.Argument(..., metavar="RUN", help="an earlier run folder"),
    set_: List[str] = typer.Option([], "--set", help="override, e.g. limits.stress_ratio=0.6 (repeatable)"),
    out_dir: Optional[Path] = typer.Option(None, "--out", help="run folder to create"),
    population: Optional[int] = typer.Option(None, "--population", min=4),
    generations: Optional[int] = typer.Option(None, "--generations", min=1),
    seed: Optional[int] = typer.Option(None, "--seed", min=0),
):
    """The same study with settings changed, warm-started from the run's Pareto designs."""
    from springsynth.io.runfolder import default_run_folder, read_run, write_run
    parent = read_run(run_dir)
    st = parent.study(set_)
    _material_notices(st.search.materials)
    res = _progress_runner(st, population=population, generations=generations, seed=seed,
                           warm_start=parent.designs)   # designs that no longer fit are left out, with a notice
    overrides = list(parent.meta.get("overrides", [])) + list(set_)
    folder = write_run(res, out_dir or default_run_folder(st.name), parent=str(run_dir), overrides=overrides)
    _finish_run(res, folder)


# ------------------------------------------------------------------------- batch

@app.command()
@_guard
def batch(
    studies: Optional[List[Path]] = typer.Argument(None, help="study TOML files"),
    out_dir: Optional[Path] = typer.Option(None, "--out", help="batch folder to create (new or empty)"),
    seeds: Optional[str] = typer.Option(None, "--seeds", help="N: seeds 1..N; or a list 1,4,7 (7, for one seed)"),
    vary: List[str] = typer.Option([], "--vary", help="KEY=START:STOP:COUNT or KEY=V1,V2,... (any numeric key "
                                   "--set accepts); repeated: every combination"),
    set_: List[str] = typer.Option([], "--set", help="a setting for every run, e.g. search.population=60"),
    scheduler: Optional[str] = typer.Option(None, "--scheduler", help="a running Dask scheduler, tcp://host:8786"),
    workers: Optional[int] = typer.Option(None, "--workers", min=1, help="local worker processes (default: cores)"),
    resume: Optional[Path] = typer.Option(None, "--resume", help="a stopped batch folder: make the runs it misses"),
):
    """Many independent runs (studies x --vary values x seeds) as Dask tasks, each writing its own run folder
    DIR/<study>/<variant>/seed-<n>; summary.csv and summary.png across them.

    Ctrl-C stops the batch and keeps the finished run folders (exit 130); `--resume DIR` makes the rest.
    """
    from springsynth import batch as B

    if scheduler is not None and workers is not None:
        raise InputError("--workers sizes the local cluster; a scheduler's workers are started by hand", where="batch")
    if scheduler is not None:
        B.check_scheduler(scheduler)
    folder, plan, notices = B.open_batch(studies or [], out_dir, seeds=seeds, vary=vary, settings=set_, resume=resume)
    for n in notices:
        err.print(f"notice: {n}")
    outcome = _batch_with_progress(B, plan, folder, scheduler, workers)
    frame = B.write_summary(folder, plan, outcome.rows)
    _finish_batch(B, frame, folder, outcome)


def _batch_with_progress(B, plan, folder, scheduler, workers):
    import signal
    import threading

    from rich.progress import BarColumn, MofNCompleteColumn, Progress, TextColumn, TimeElapsedColumn

    from springsynth._allocator import keep_temporaries_on_heap

    todo = len(plan.runs) - len(B.finished_rows(folder, plan))
    where = f"scheduler {scheduler}" if scheduler else f"{B.local_workers(todo, workers)} local workers"
    out.print(f"batch of {len(plan.runs)} runs into {folder}: {todo} to make on {where}")
    cols = [TextColumn("runs done"), MofNCompleteColumn(), BarColumn(), TextColumn("{task.fields[info]}"),
            TimeElapsedColumn()]
    main = threading.current_thread() is threading.main_thread()
    old = signal.signal(signal.SIGTERM, signal.default_int_handler) if main else None  # SIGTERM acts as Ctrl-C
    with Progress(*cols, console=err, transient=False) as prog:
        bar = prog.add_task("batch", total=len(plan.runs), info="starting workers")

        def on_progress(p):
            running = p.running if p.done < p.total else 0
            prog.update(bar, completed=p.done, info=f"{running} running  {p.failed} failed  ({p.workers} workers)")

        try:
            return B.run_batch(plan, folder, scheduler=scheduler, workers=workers, on_progress=on_progress,
                               worker_setup=keep_temporaries_on_heap)
        finally:
            if main:
                signal.signal(signal.SIGTERM, old)


def _finish_batch(B, frame, folder, outcome):
    counts = frame["status"].value_counts()
    t = Table(title=escape(f"{len(frame)} runs in {folder} ({outcome.skipped} already complete, {outcome.ran} "
                           f"made now, {outcome.wall_time_s:.0f} s)"), title_justify="left")
    for c in ("study", "variant", "runs", "best error % (median, min)", "hypervolume (median)", "status"):
        t.add_column(c, overflow="fold")
    for r in B.variant_table(frame).itertuples():
        t.add_row(escape(r.study), escape(r.variant), str(r.runs), f"{r.best_error_median:.3g}, {r.best_error_min:.3g}",
                  f"{r.hypervolume_median:.3g}", r.statuses)
    out.print(t)
    out.print(f"wrote {folder / 'summary.csv'} and {folder / 'summary.png'}")
    for _, r in frame[~frame["status"].isin(["ok", "infeasible", "interrupted"])].iterrows():
        err.print(f"[bold red]{r.status.replace('_', ' ')}:[/] {escape(r.folder)}: {escape(r.message)}")
    _caution()
    if outcome.interrupted:
        err.print(f"[bold yellow]interrupted:[/] {counts.get('interrupted', 0)} runs not finished; the finished run "
                  f"folders are kept; continue with `springsynth batch --resume {folder}`")
        raise typer.Exit(130)
    if counts.get("bad_input", 0):
        raise typer.Exit(2)
    if len(counts) > 1 or "ok" not in counts:
        raise typer.Exit(1)


# ------------------------------------------------------------------------- report

@app.command()
@_guard
def report(run_dir: Path = typer.Argument(..., metavar="RUN", help="a run folder written by `springsynth run`")):
    """Rebuild a run folder's figures and self-contained report.html from its files (no new search)."""
    from springsynth.io.runfolder import build_report, read_run

    path = build_report(read_run(run_dir))
    out.print(f"wrote {path}")
    _caution()


# ------------------------------------------------------------------------- verify and tolerance

def _stroke_points(at, to, points, where, design: Path):
    """``(x, target or None, its name)`` from --at, --to/--points or the run the design came from."""
    from springsynth.io.stroke import stroke_points

    sp = stroke_points(design, at=at, to=to, points=points, where=where)
    if sp.run is not None:
        out.print(escape(f"at the {sp.x_mm.size} points of the target of run {sp.run} (--at or --to to choose others)"))
    return sp.x_mm, sp.target, sp.target_name


@app.command()
@_guard
def verify(
    path: Path = typer.Argument(..., metavar="DESIGN|RUN", help="a design TOML, or a run folder (verifies its designs over the target stroke)"),
    at: Optional[Path] = typer.Option(None, "--at", help="design: verify at the points of this target CSV"),
    to: Optional[float] = typer.Option(None, "--to", help="design: largest displacement, mm"),
    points: int = typer.Option(9, "--points", help="number of stroke points from 0 to the end of the stroke"),
    top: Optional[int] = typer.Option(None, "--top", min=1, help="run: only the N lowest-error designs"),
):
    """Re-solve designs with independent high-fidelity solvers and report the deviation from the fast models."""
    if path.is_dir():
        if at is not None or to is not None:
            raise InputError("a run is verified over its own target stroke; drop --at/--to", where="verify")
        from springsynth.io.checks import verify_run

        reports, dest = verify_run(path, points=points, top=top)
        target = target_name = None
    else:
        from springsynth.checks.verify import verify_design
        from springsynth.io.design_toml import load_design

        d = load_design(path)
        _material_notices(d.materials.values())
        x, target, target_name = _stroke_points(at, to, points, "verify", path)
        reports, dest = [verify_design(d, x)], None
    _print_verification(reports)
    if target is not None:
        rep = reports[0]
        ek = target.curve_error_pct(rep.force_kernel_N[None])[0]
        ev = target.curve_error_pct(rep.force_verified_N[None])[0]
        out.print(escape(f"curve error against {target_name}: {pct_text(ek, decimals=3)} (fast models), "
                         f"{pct_text(ev, decimals=3)} (verification solvers)"))
    if dest is not None:
        out.print(f"wrote {dest}")
    for r in reports:
        for f in r.flags:
            err.print(f"[bold yellow]warning:[/] {escape(f)}")
    _caution()


def _print_verification(reports) -> None:
    from springsynth.checks.verify import THRESHOLD_PCT
    from springsynth.report.terminal import verification_table

    for part in verification_table(reports, THRESHOLD_PCT):
        out.print(part, soft_wrap=False)


@app.command()
@_guard
def tolerance(
    design: Path = typer.Argument(..., metavar="DESIGN", help="design TOML file"),
    samples: int = typer.Option(2000, "--samples", help="Monte Carlo samples"),
    at: Optional[Path] = typer.Option(None, "--at", help="target CSV: stroke points, curve error and share in its band"),
    to: Optional[float] = typer.Option(None, "--to", help="largest displacement, mm (with --points)"),
    points: int = typer.Option(41, "--points", help="number of stroke points from 0 to --to"),
    out_dir: Optional[Path] = typer.Option(None, "--out", help="folder to create for the results (default <design>-tolerance)"),
    process: str = typer.Option("auto", "--process", help="auto, rolled_strip, drawn_wire, machined, moulded, moulded_rubber or printed"),
    seed: int = typer.Option(0, "--seed", min=0),
    band_pct: float = typer.Option(10.0, "--band-pct", min=0.0, help="target without a band: ±% of its force"),
):
    """Monte Carlo over manufacturing tolerances: force band, share of parts in spec, sensitivities."""
    from springsynth.checks.tolerance import tolerance_analysis
    from springsynth.io.checks import write_tolerance
    from springsynth.io.design_toml import load_design
    from springsynth.io.files import new_folder, safe_folder_name

    d = load_design(design)
    _material_notices(d.materials.values())
    x, target, _ = _stroke_points(at, to, points, "tolerance", design)
    if samples < 2:
        raise InputError(f"--samples must be at least 2, got {samples}", where="tolerance")
    res = tolerance_analysis(d, x, target=target, n_samples=samples, seed=seed, process=process, band_pct=band_pct)
    folder = new_folder(out_dir or Path(f"{safe_folder_name(d.name, fallback='design')}-tolerance"))
    write_tolerance(res, folder, target=target)
    out.print(escape(f"{d.name}: {samples} parts; force at {x[-1]:.4g} mm: nominal {res.nominal_N[-1]:.4g} N, "
                     f"5-95 % {res.p05_N[-1]:.4g} .. {res.p95_N[-1]:.4g} N"))
    if math.isfinite(res.share_in_band):
        band = "the target band" if target.has_band else f"±{band_pct:g} % of the target force"
        out.print(f"inside {band} at every point: {pct_text(100 * res.share_in_band, decimals=1)} of parts")
    tab = Table(title="sensitivity (elasticity = least-squares d ln F / d ln p over the stroke; spread = 1-sigma "
                      "share of the force, %)", title_justify="left")
    for c in ("quantity", "tolerance", "elasticity", "spread %"):
        tab.add_column(c, no_wrap=c == "quantity", justify="left" if c == "quantity" else "right")
    for _, r in res.sensitivity.head(8).iterrows():
        tol = (f"±{pct_text(r.tolerance_pct, decimals=1)}" if r.quantity.endswith("modulus")
               else f"±{r.tolerance_pm:.3g}")
        tab.add_row(r.quantity, tol, "n/a" if not math.isfinite(r.elasticity) else f"{r.elasticity:.3g}",
                    pct_text(r.spread_pct, suffix=""))
    out.print(tab)
    out.print(f"wrote {folder}/tolerance.png, band.csv, samples.csv, sensitivity.csv")
    _caution()


# ------------------------------------------------------------------------- export

@app.command()
@_guard
def export(
    path: Path = typer.Argument(..., help="a design TOML, or a run folder (exports its Pareto designs)"),
    out_dir: Optional[Path] = typer.Option(None, "--out", help="folder to create (design: default <name>-export, "
                                           "never overwritten; run: default RUN/export, replaced)"),
    to: Optional[float] = typer.Option(None, "--to", help="design: working position of the stroke, mm"),
    at: Optional[Path] = typer.Option(None, "--at", help="design: working position = last point of this target CSV"),
    installed: float = typer.Option(0.0, "--from", help="design: installed position of the stroke, mm"),
    top: Optional[int] = typer.Option(None, "--top", min=1, help="run: only the N lowest-error designs"),
):
    """What a maker needs: spec.csv and spec.json per design, a DXF outline and preview of each flat part."""
    from springsynth.export import Stroke, design_spec, export_files, run_specs
    from springsynth.io.export_folder import write_folder

    if path.is_dir():
        from springsynth.io.runfolder import read_run

        if to is not None or at is not None or installed != 0.0:
            raise InputError("a run is exported over its own target stroke; drop --to/--at/--from", where="export")
        run_ = read_run(path)
        specs = run_specs(run_.designs, run_.table, run_.study(), top=top)
        if not specs:
            raise InputError("the run has no Pareto designs to export", where=str(path))
        files = {f"{s.design.name}/{name}": data for s in specs
                 for name, data in export_files(s, source=f"{path.name}/designs/{s.design.name}.toml").items()}
        folder = write_folder(files, out_dir or path / "export", replace=out_dir is None)
    else:
        from springsynth.io.design_toml import load_design
        from springsynth.io.target_csv import load_target

        if top is not None:
            raise InputError("--top applies to a run folder, not to a design", where="export")
        if to is not None and at is not None:
            raise InputError("give either --at TARGET.csv or --to X, not both", where="export")
        d = load_design(path)
        working = load_target(at).stroke_mm if at is not None else to
        specs = [design_spec(d, Stroke(installed, working))]
        folder = write_folder(export_files(specs[0], source=str(path)), out_dir or Path(f"{d.name}-export"))
    _export_summary(specs, folder)


def _export_summary(specs, folder):
    """One line per element (per design when a run exports many), the notices and warnings."""
    out.print(escape(f"wrote {folder}: {len(specs)} design(s)"))
    for s in specs:
        if len(specs) > 3:
            n_dxf = sum("dxf" in r for r in s.records)
            out.print(escape(f"  {s.design.name}/: {len(s.records)} element(s), {n_dxf} outline(s)"
                             + ("  INFEASIBLE" if s.warning else "")))
            continue
        for r in s.records:
            work = r.get("load_working_N")
            loads = f"{r['load_installed_N']:.4g} N installed" + ("" if work is None else f", {work:.4g} N working")
            out.print(escape(f"  {s.design.name} {r['part']}: {r['quantity']}x {r['kind']} [{r['material']}], "
                             f"{r['position']}; {loads} per copy" + (f"; {r['dxf']}" if "dxf" in r else "")),
                      soft_wrap=True)
    for n in dict.fromkeys(n for s in specs for n in s.notes):
        out.print(f"notice: {n}")
    _caution()
    for s in specs:
        if s.warning:
            err.print(f"[bold yellow]warning:[/] {escape(s.warning)}")


def main():  # console-script entry point
    from springsynth._allocator import keep_temporaries_on_heap

    keep_temporaries_on_heap()
    app()


if __name__ == "__main__":
    main()
