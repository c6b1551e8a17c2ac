"""The search finds a chain again from its own curve: a coil spring loading a straight column.

The target is the force of a known two-link chain (helical_compression + column, a ramp that
turns into the column's buckling plateau), sampled at 25 strokes. No arrangement side by side
of these kinds makes that shape; with ``max_chain = 2`` a modest search (60 x 40) must come
within 0.5 % curve error, for two seeds, with a chain of those two kinds. The search is the free
one (``stock = "continuous"``): the known chain's 0.7 mm music wire is no ASTM A228 size.
"""

from __future__ import annotations

import numpy as np
import pytest

import springsynth as ss
from springsynth.assembly.design import Chain
from springsynth.assembly.evaluate import evaluate_design
from springsynth.io.design_toml import load_design
from tests.conftest import ROOT, write_target

pytestmark = pytest.mark.slow


@pytest.fixture(scope="module")
def study_path(tmp_path_factory):
    folder = tmp_path_factory.mktemp("recover")
    d = load_design(ROOT / "tests" / "corpus" / "designs" / "valid_chain.toml")
    x = np.linspace(0.0, 6.0, 25)
    write_target(folder / "t.csv", x, evaluate_design(d, x).force_N[0])
    (folder / "s.toml").write_text("""name = "recover-chain"
[target]
file = "t.csv"
[envelope]
length_mm = 80
width_mm = 30
height_mm = 30
[limits]
stress_ratio = 1.0
[search]
elements = ["helical_compression", "column"]
materials = ["music_wire", "stainless_17_7ph"]
max_elements = 2
max_chain = 2
verify_top = 0
stock = "continuous"
""")
    return folder / "s.toml"


@pytest.mark.parametrize("seed", [1, 2])
def test_a_two_link_chain_is_recovered_from_its_own_curve(study_path, seed):
    res = ss.synthesize(ss.load_study(study_path), seed=seed, population=60, generations=40)
    df = res.to_frame()
    best = int(np.argmin(df["curve_error_pct"]))
    assert df["curve_error_pct"][best] <= 0.5
    d = res.designs[best]
    chains = [b for b in d.branches if isinstance(b, Chain)]
    assert chains and sorted(e.kind for e in chains[0].links) == ["column", "helical_compression"]
