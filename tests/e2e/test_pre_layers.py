"""Moving the package into layers changed nothing a user sees.

``tests/data/pre_layers`` was written by the package before the move (commit 614fd5a):
``pareto.csv`` of a seeded run of ``studies/latch-preload.toml`` (population 24,
12 generations, seed 3, no verification), and ``checkpoint.pkl``, the same run stopped
after its fifth generation. The same seed must still give a byte-identical
``pareto.csv``, and the old checkpoint must still resume to it. Chains came later: the run
sets ``search.max_chain=1`` (elements in parallel only, the genome of that time), and the
old checkpoint, which has no such option, reads as parallel only by itself. Stock sizes and
practical resolution came later too: the run sets ``search.stock="continuous"`` (every value free),
and the old checkpoint reads as continuous by itself.

Every run now adds an ``in_spec_share`` column (the yield of each Pareto design, computed after
the search from its own random stream): it is dropped from the new file, and every other
field must be the same text as before, in the same order (the search itself did not change).
"""

from __future__ import annotations

import csv
from pathlib import Path

import pytest

import springsynth as ss
from springsynth.io.runfolder import write_run

ROOT = Path(__file__).resolve().parents[2]
DATA = ROOT / "tests" / "data" / "pre_layers"
OVERRIDES = ["search.population=24", "search.generations=12", "search.verify_top=0", "search.max_chain=1",
             'search.stock="continuous"']

pytestmark = pytest.mark.slow
#: columns added since the files were written, each computed after the search (it cannot move it)
ADDED = ("in_spec_share",)


def _fields(path: Path) -> list[list[str]]:
    """The rows of a CSV file as written (text fields), the ``ADDED`` columns left out."""
    with open(path, newline="", encoding="utf-8") as f:
        rows = list(csv.reader(f))
    keep = [j for j, name in enumerate(rows[0]) if name not in ADDED]
    return [[r[j] for j in keep] for r in rows]


def _same_as_before(folder: Path) -> None:
    new = folder / "pareto.csv"
    assert new.read_text().splitlines()[0].split(",")[4] == "in_spec_share"   # after the objectives
    assert _fields(new) == _fields(DATA / "pareto.csv")


def _study():
    st = ss.load_study(ROOT / "studies" / "latch-preload.toml", overrides=OVERRIDES)
    assert st.search.stock == "continuous"      # stock sizes came later: the search of that time was free
    return st


def test_same_seed_gives_the_pareto_csv_written_before_the_move(tmp_path):
    res = ss.synthesize(_study(), seed=3)
    _same_as_before(write_run(res, tmp_path / "run", plots=False))


def test_a_checkpoint_written_before_the_move_resumes(tmp_path):
    res = ss.synthesize(_study(), resume=(DATA / "checkpoint.pkl").read_bytes())
    assert not res.partial
    _same_as_before(write_run(res, tmp_path / "run", plots=False))
