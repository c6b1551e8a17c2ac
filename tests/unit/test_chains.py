"""Chains in the model, the files and the genome: value objects, slots, packing, design TOML, search encoding."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

import springsynth as ss
from springsynth.assembly.design import Chain, Design, Element, iter_elements
from springsynth.assembly.evaluate import evaluate_design, evaluate_population
from springsynth.assembly.slots import Slots
from springsynth.io.design_toml import design_to_toml, load_design
from springsynth.model.errors import InputError
from springsynth.model.materials import catalogue
from springsynth.search.encoding import Encoding
from springsynth.search.front import topology_keys
from springsynth.search.operators import canonical_genomes
from tests.conftest import ROOT, write_target

CAT = catalogue()
COIL = Element("helical_compression", "music_wire", 1, 0.0,
               {"wire_diameter_mm": 0.7, "mean_diameter_mm": 5.0, "active_coils": 7, "free_length_mm": 22.0})
COLUMN = Element("column", "stainless_17_7ph", 1, 0.0,
                 {"length_mm": 36.0, "width_mm": 4.0, "thickness_mm": 0.25, "rise_mm": 0.0, "ends": "pinned"})
ARCH = Element("arch", "stainless_17_7ph", 1, 0.0,
               {"length_mm": 40.0, "width_mm": 5.0, "thickness_mm": 0.2, "rise_mm": 1.0})
BLADE = Element("blade_guided", "stainless_17_7ph", 2, -0.5, {"length_mm": 24.0, "width_mm": 6.0, "thickness_mm": 0.25})


def make(*branches, name="d") -> Design:
    mats = {e.material: CAT[e.material] for b in branches for e in (b.links if isinstance(b, Chain) else (b,))}
    return Design(tuple(branches), mats, name=name)


# --------------------------------------------------------------------------- value objects

def test_chain_rules():
    with pytest.raises(InputError, match="at least 2 links"):
        Chain((COIL,))
    with pytest.raises(InputError, match="no offset of their own"):
        Chain((COIL, dataclasses.replace(COLUMN, offset_mm=0.5)))
    with pytest.raises(InputError, match="at most one link whose force falls"):
        Chain((ARCH, COIL, ARCH))


def test_design_keeps_elements_first_and_walks_every_part():
    d = make(Chain((COIL, COLUMN), 2, 0.3), BLADE)
    assert d.branches[0] == BLADE and isinstance(d.branches[1], Chain)
    assert d.parts == (BLADE, COIL, COLUMN) == d.elements
    assert [label for label, _ in iter_elements(d)] == ["e1", "e2", "e3"]
    assert d.layout == ((0, 0), (1, 0), (1, 1))
    assert "2x chain(1x helical_compression" in d.topology() and "gap 0.3" in d.topology()


def test_slots_round_trip_with_chains():
    d = make(BLADE, Chain((COIL, COLUMN), 3, -0.4), Chain((COIL, ARCH)))
    s = Slots.from_designs([d])
    assert s.link[0].tolist() == [False, False, True, False, True]
    assert s.chain_count[0].tolist() == [1, 3, 1, 1, 1]
    assert s.design(0, name="d").branches == d.branches


def test_population_evaluates_like_single_designs():
    ds = [make(BLADE, Chain((COIL, COLUMN))), make(Chain((COIL, ARCH), 2, 0.2)), make(BLADE)]
    x = np.linspace(0.0, 6.0, 31)
    pop = evaluate_population(Slots.from_designs(ds), x)
    for i, d in enumerate(ds):
        one = evaluate_design(d, x)
        assert np.allclose(pop.force_N[i], one.force_N[0], rtol=1e-12, atol=1e-12)
        assert pop.snap_mm[i] == one.snap_mm[0] or (np.isnan(pop.snap_mm[i]) and np.isnan(one.snap_mm[0]))


def test_packing_mass_and_detail_of_a_chain():
    """Links stack along the stroke (their lengths add), the chain is as wide as its widest link times its
    count, masses add; the branch's force sits in its first link's slot."""
    x = np.linspace(0.0, 6.0, 13)
    ch = evaluate_design(make(Chain((COIL, COLUMN), 2)), x)
    a = evaluate_design(make(COIL), x, x_max_mm=6.0)
    c = evaluate_design(make(COLUMN), np.array([0.0, ch.element_stroke_mm[0, 1].max()]))
    coil_box_at = evaluate_design(make(COIL), np.array([0.0, ch.element_stroke_mm[0, 0].max()]))
    assert ch.box_mm[0, 0] == pytest.approx(coil_box_at.box_mm[0, 0] + c.box_mm[0, 0])
    assert ch.box_mm[0, 1] == pytest.approx(2 * max(coil_box_at.box_mm[0, 1], c.box_mm[0, 1]))
    assert ch.mass_g[0] == pytest.approx(2 * (a.mass_g[0] + c.mass_g[0]))
    assert np.allclose(ch.element_force_N[0, 0], ch.force_N[0]) and not ch.element_force_N[0, 1].any()
    assert np.allclose(ch.element_stroke_mm[0].sum(axis=0), x)


def test_two_falling_links_from_raw_slots_are_not_finite():
    s = Slots.from_designs([make(Chain((COIL, ARCH)))])
    two = dataclasses.replace(s, kind=np.full_like(s.kind, s.kind[0, 1]),
                              params=np.repeat(s.params[:, 1:2], 2, axis=1), material=np.repeat(s.material[:, 1:2], 2, 1))
    r = evaluate_population(two, np.linspace(0, 2, 5))
    assert not r.finite[0] and np.all(r.force_N[0] == 0.0)


# --------------------------------------------------------------------------- files

def test_design_toml_round_trip_with_chains(tmp_path):
    d = make(BLADE, Chain((COIL, ARCH), 2, 0.3), name="detent")
    p = tmp_path / "d.toml"
    p.write_text(design_to_toml(d))
    back = load_design(p)
    assert back.branches == d.branches
    x = np.linspace(0.0, 6.0, 25)
    assert np.array_equal(evaluate_design(back, x).force_N, evaluate_design(d, x).force_N)


@pytest.mark.parametrize("body, needle", [
    ("[[chain]]\ncount = 1\n", "chain 1: has no [[chain.element]] links"),
    ("[[chain]]\nofset_mm = 1\n", "did you mean 'offset_mm'"),
    ("chain = 3\n", "'chain' must be an array of tables"),
])
def test_bad_chain_tables(tmp_path, body, needle):
    p = tmp_path / "bad.toml"
    p.write_text(body)
    with pytest.raises(InputError) as e:
        load_design(p)
    assert needle in str(e.value) and "bad.toml" in str(e.value)


# --------------------------------------------------------------------------- study and genome

@pytest.fixture
def chain_study(tmp_path):
    x = np.linspace(0, 5, 11)
    write_target(tmp_path / "t.csv", x, np.minimum(2.0 * x, 6.0))
    (tmp_path / "s.toml").write_text("""name = "c"
[target]
file = "t.csv"
[envelope]
length_mm = 80
width_mm = 40
height_mm = 40
[search]
elements = ["helical_compression", "column", "arch"]
materials = ["music_wire", "stainless_17_7ph"]
max_elements = 3
population = 8
generations = 2
""")
    return tmp_path / "s.toml"


def test_max_chain_one_keeps_the_parallel_genome(chain_study):
    one = Encoding(ss.load_study(chain_study, overrides=["search.max_chain=1"]))
    two = Encoding(ss.load_study(chain_study))
    assert ss.load_study(chain_study).search.max_chain == 2
    assert one.genes_per_slot == 4 + one.n_params and not one.link_gene
    assert two.genes_per_slot == one.genes_per_slot + 1 and two.n_var == one.n_var + 3


def test_decode_enforces_max_chain_and_one_falling_link(chain_study):
    enc = Encoding(ss.load_study(chain_study))
    g = enc.genes_per_slot
    names = [k.name for k in enc.kinds]
    X = np.zeros((3, enc.n_var))
    X[:, 0::g] = names.index("helical_compression") + 1
    X[:, 1::g], X[:, 2::g] = 0.5, 1
    X[:, g - 1::g] = 1.0                             # every slot asks to join the one before
    X[1, 2 * g] = names.index("arch") + 1            # coil > coil, arch
    X[2, 1 * g] = X[2, 2 * g] = names.index("arch") + 1
    link = enc.links(X)
    assert link[0].tolist() == [False, True, False]  # max_chain = 2: a third link starts a new branch
    assert link[2].tolist() == [False, True, False]  # coil > arch, then a second arch cannot join
    topo = {enc.decode(X[i:i + 1]).design(0).topology().count("chain(") for i in range(3)}
    assert topo == {1}


def test_counts_factor_out_as_the_chain_count(chain_study):
    enc = Encoding(ss.load_study(chain_study))
    d = make(Chain((dataclasses.replace(COIL, count=2), dataclasses.replace(COLUMN, count=2))))
    X = enc.encode([d])
    back = enc.decode(X).design(0)
    assert isinstance(back.branches[0], Chain) and back.branches[0].count == 2
    assert [e.count for e in back.branches[0].links] == [1, 1]


def test_duplicates_and_topologies_understand_chains(chain_study):
    enc = Encoding(ss.load_study(chain_study))
    g = enc.genes_per_slot
    d = make(Chain((COIL, COLUMN)))
    X = np.repeat(enc.encode([d]), 2, axis=0)
    X[1, g + 3] = 0.7                                # the second link's own offset gene does not act
    assert np.array_equal(canonical_genomes(enc, X)[0], canonical_genomes(enc, X)[1])
    par = X[:1].copy()
    par[0, 2 * g - 1] = 0.0                          # the same two kinds in parallel
    keys = topology_keys(enc, np.vstack([X[:1], par]))
    assert keys[0] != keys[1]


def test_pareto_table_has_snap_and_branches(chain_study):
    res = ss.synthesize(ss.load_study(chain_study, overrides=["search.verify_top=0", "search.polish=false"]), seed=1)
    df = res.to_frame()
    assert "snap_mm" in df.columns and "e1_branch" in df.columns
    res1 = ss.synthesize(ss.load_study(chain_study, overrides=["search.verify_top=0", "search.polish=false",
                                                               "search.max_chain=1"]), seed=1)
    assert "snap_mm" not in res1.to_frame().columns


def test_shipped_chain_example_reads():
    st = ss.load_study(ROOT / "studies" / "capper-press.toml")
    assert st.search.max_chain == 2


def test_tolerance_of_a_chain_perturbs_the_chain_as_a_whole():
    from springsynth.checks.tolerance import tolerance_analysis

    d = make(Chain((COIL, COLUMN), 1, -0.2), name="cc")
    x = np.linspace(0.0, 6.0, 13)
    res = tolerance_analysis(d, x, n_samples=64, seed=1)
    q = list(res.sensitivity["quantity"])
    assert "e1.offset_mm" in q and "e2.offset_mm" not in q          # the chain's offset, once
    assert "e2.thickness_mm" in q
    assert np.all(res.p05_N <= res.p95_N + 1e-12)
    assert res.nominal_N == pytest.approx(evaluate_design(d, x).force_N[0], rel=1e-9, abs=1e-12)


def test_fatigue_judges_a_link_over_its_whole_range_through_a_snap():
    """Through a snap the spring unloads: its largest stroke in a duty cycle lies inside the cycle, not at
    its end, and the fatigue check must see it (the arch, driven on past the snap, deflects most at the end)."""
    from springsynth.assembly.duty import _stroke_ranges, element_strokes

    soft = Element("helical_compression", "music_wire", 1, 0.0,
                   {"wire_diameter_mm": 0.8, "mean_diameter_mm": 6.0, "active_coils": 8, "free_length_mm": 30.0})
    s = Slots.from_designs([make(Chain((soft, ARCH)))])
    assert np.isfinite(evaluate_population(s, np.linspace(0.0, 4.0, 9)).snap_mm[0])
    lo, hi = _stroke_ranges(s, 0.5, 4.0)
    ends = element_strokes(s, np.array([0.5, 4.0]))[0]
    assert hi[0, 0] > 1.3 * ends[0, 1]                 # the spring's peak, before the snap
    assert hi[0, 1] == pytest.approx(ends[1, 1])        # the arch's at the end
    assert lo[0] == pytest.approx(ends[:, 0])


def test_two_chains_in_one_design_add():
    """Branches act in parallel: a design of two chains and an element gives the sum of each alone."""
    x = np.linspace(0.0, 6.0, 25)
    a, b = Chain((COIL, COLUMN), 2, 0.3), Chain((COIL, ARCH), 1, -0.2)
    both = evaluate_design(make(BLADE, a, b), x)
    parts = [evaluate_design(make(br), x) for br in (BLADE, a, b)]
    assert both.force_N[0] == pytest.approx(sum(r.force_N[0] for r in parts), rel=1e-12, abs=1e-12)
    assert both.mass_g[0] == pytest.approx(sum(r.mass_g[0] for r in parts))
    assert both.snap_mm[0] == parts[2].snap_mm[0] or np.isnan(parts[2].snap_mm[0])
