"""A seeded run is pinned, and a checkpoint written before the package moved into layers still resumes.

``tests/data/pre_layers/checkpoint.pkl`` was written by the package before the move (commit
614fd5a): a seeded run of ``studies/latch-preload.toml`` (population 24, 12 generations, seed 3, no
verification) stopped after its fifth generation. Its classes have other module paths now; the
checkpoint module's rename map must still read it.

``pareto.csv`` is what that run, made in full from scratch, writes; ``resumed.csv`` what the old
checkpoint resumes to. Until the polish changed (issue 16) both were the file the package wrote
before the move. The polish is now one batched least-squares solve over all starting designs
instead of scipy's solver per design, which changes the search's path on purpose, so both files were
written again by the package at that change (``python tests/e2e/test_pre_layers.py --rewrite``).
Any other change of a byte is a change of the search, to be made on purpose and the files rewritten.

Chains came later: the run sets ``search.max_chain=1`` (elements in parallel only, the genome of that
time), and the old checkpoint, which has no such option, reads as parallel only by itself. Stock
sizes and practical resolution came later too: the run sets ``search.stock="continuous"`` (every
value free), and the old checkpoint reads as continuous by itself.
"""

from __future__ import annotations

import sys
from pathlib import Path

import pytest

import springsynth as ss
from springsynth.io.runfolder import write_run

ROOT = Path(__file__).resolve().parents[2]
DATA = ROOT / "tests" / "data" / "pre_layers"
OVERRIDES = ["search.population=24", "search.generations=12", "search.verify_top=0", "search.max_chain=1",
             'search.stock="continuous"']

pytestmark = pytest.mark.slow


def _study():
    st = ss.load_study(ROOT / "studies" / "latch-preload.toml", overrides=OVERRIDES)
    assert st.search.stock == "continuous"      # stock sizes came later: the search of that time was free
    return st


def _fresh(folder: Path) -> Path:
    return write_run(ss.synthesize(_study(), seed=3), folder, plots=False) / "pareto.csv"


def _resumed(folder: Path) -> Path:
    res = ss.synthesize(_study(), resume=(DATA / "checkpoint.pkl").read_bytes())
    assert not res.partial
    return write_run(res, folder, plots=False) / "pareto.csv"


def test_same_seed_gives_the_pinned_pareto_csv(tmp_path):
    assert _fresh(tmp_path / "run").read_bytes() == (DATA / "pareto.csv").read_bytes()


def test_a_checkpoint_written_before_the_move_resumes(tmp_path):
    new = _resumed(tmp_path / "run")
    assert new.read_text().splitlines()[0] == (DATA / "pareto.csv").read_text().splitlines()[0]
    assert new.read_bytes() == (DATA / "resumed.csv").read_bytes()


if __name__ == "__main__" and sys.argv[1:] == ["--rewrite"]:
    import tempfile

    with tempfile.TemporaryDirectory() as d:
        (DATA / "pareto.csv").write_bytes(_fresh(Path(d) / "fresh").read_bytes())
        (DATA / "resumed.csv").write_bytes(_resumed(Path(d) / "resumed").read_bytes())
    print("rewrote", DATA / "pareto.csv", "and", DATA / "resumed.csv")
