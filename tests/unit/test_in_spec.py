"""The in-spec share (yield) of designs under process tolerances (springsynth.checks.in_spec),
its band, and its place in the scores of a search.

The share is checked against a direct Monte Carlo written here: each part is a design built by
hand (every parameter, offset and modulus moved by its tolerance class's sigma times a draw)
and evaluated on its own with ``evaluate_design``.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest

import springsynth as ss
from springsynth.assembly.design import Design, Element
from springsynth.assembly.evaluate import evaluate_design
from springsynth.assembly.slots import Slots
from springsynth.checks import tolerance as T
from springsynth.checks.in_spec import in_spec_share, standard_error, yield_draws
from springsynth.elements import get_kind
from springsynth.model.materials import catalogue
from springsynth.model.target import Target, target_from_arrays
from tests.conftest import blade, write_study, write_target

BAND_PCT = 3.0       # a tight band: the design below is on its edge


def _two_springs(name: str = "pair") -> Design:
    """A guided blade with a gap beside a preloaded coil spring: two slots, two materials."""
    cat = catalogue()
    coil = Element("helical_compression", "music_wire", 1, -1.0,
                   {"wire_diameter_mm": 0.8, "mean_diameter_mm": 6.0, "active_coils": 8.0, "free_length_mm": 20.0})
    b = blade(offset_mm=0.5, params={"length_mm": 30.0, "width_mm": 10.0, "thickness_mm": 0.3})
    return Design((b, coil), {"music_wire": cat["music_wire"], "stainless_17_7ph": cat["stainless_17_7ph"]}, name=name)


def _target(d: Design, band_N: float | None) -> Target:
    x = np.linspace(0.0, 3.0, 7)
    f = evaluate_design(d, x).force_N[0]
    return target_from_arrays(x, f, tolerance_N=band_N)


def _hand_part(d: Design, zp: np.ndarray, zo: np.ndarray, ze: np.ndarray, r: int) -> Design:
    """Part r of design ``d``: every quantity moved by its sigma (tolerance / 3, from its tolerance
    class) times draw r, slot by slot, as the tolerance model describes it."""
    parts, mats = [], {}
    for j, e in enumerate(d.parts):
        kind = get_kind(e.kind)
        m = d.materials[e.material]
        E, hyper = np.array([m.E_MPa]), np.array([m.hyperelastic])
        cls = T.material_class(E, hyper)
        params = {}
        for c, q in enumerate(kind.params):
            v = float(e.params[q.name])
            sigma = float(T.param_tolerance(q, np.array([v]), cls)[0]) / 3.0
            params[q.name] = max(v + sigma * zp[r, j, c], 1e-3 * abs(v)) if sigma > 0 else v
        off = e.offset_mm + float(T.offset_tolerance(cls)[0]) / 3.0 * zo[r, j]
        f = 1.0 + float(T.modulus_tolerance(cls)[0]) / 3.0 * ze[r, j]
        mid = f"{m.id}_part{j}"
        mats[mid] = dataclasses.replace(m, id=mid, E_MPa=m.E_MPa * f, G_MPa=m.G_MPa * f)
        parts.append(Element(e.kind, mid, e.count, off, params))
    return Design(tuple(parts), mats, name=f"{d.name}-{r}")


def _direct_share(d: Design, target: Target, zp, zo, ze) -> float:
    lo, hi = target.spec_band(BAND_PCT)
    inside = 0
    for r in range(zp.shape[0]):
        F = evaluate_design(_hand_part(d, zp, zo, ze, r), target.x_mm, x_max_mm=target.stroke_mm).force_N[0]
        inside += bool(np.all((F >= lo) & (F <= hi)))
    return inside / zp.shape[0]


def test_band_of_a_target_without_one_is_ten_percent_with_a_floor_near_zero_force():
    # F = 0, 1, 5, 10 N: +-10 % of F, but never less than +-10 % of a fifth of 10 N (0.2 N)
    t = Target(np.array([0.0, 1.0, 2.0, 3.0]), np.array([0.0, 1.0, 5.0, 10.0]))
    lo, hi = t.spec_band(10.0)
    np.testing.assert_allclose(hi - t.force_N, [0.2, 0.2, 0.5, 1.0])
    np.testing.assert_allclose(t.force_N - lo, [0.2, 0.2, 0.5, 1.0])
    F = np.array([[0.19, 1.19, 5.49, 9.01], [0.0, 1.0, 5.0, 11.01]])
    assert t.in_spec(F, 10.0).tolist() == [True, False]
    banded = target_from_arrays([0.0, 1.0, 2.0], [1.0, 2.0, 3.0], tolerance_N=0.05)
    assert banded.spec_band(10.0)[0] == pytest.approx([0.95, 1.95, 2.95])     # its own band wins


def test_share_equals_a_direct_monte_carlo_of_one_design_on_the_same_draws():
    d = _two_springs()
    target = _target(d, band_N=None)
    slots = Slots.from_designs([d])
    n, seed = 120, 7
    share = in_spec_share(target, slots, band_pct=BAND_PCT, n_samples=n, seed=seed)
    _, S, P = slots.params.shape
    direct = _direct_share(d, target, *yield_draws(n, S, P, seed))
    assert 0.1 < direct < 0.9          # a design on the edge, so the count means something
    assert share[0] == pytest.approx(direct, abs=1e-12)


def test_share_agrees_with_a_direct_monte_carlo_on_independent_draws():
    # binomial: the two estimates differ by less than 4 combined standard errors (a false alarm
    # about 1 in 16 000)
    d = _two_springs()
    target = _target(d, band_N=None)
    slots = Slots.from_designs([d])
    _, S, P = slots.params.shape
    share = float(in_spec_share(target, slots, band_pct=BAND_PCT, n_samples=400, seed=1)[0])
    rng = np.random.default_rng(2024)
    z = np.clip(rng.standard_normal((300, S, P + 2)), -3.0, 3.0)
    direct = _direct_share(d, target, z[:, :, :P], z[:, :, P], z[:, :, P + 1])
    p = 0.5 * (share + direct)
    se = math.sqrt(p * (1 - p) * (1 / 400 + 1 / 300))
    assert abs(share - direct) < 4 * se


def test_common_random_numbers_make_the_share_a_function_of_the_design_and_the_seed():
    d = _two_springs()
    d2 = dataclasses.replace(d, branches=(d.branches[0], dataclasses.replace(d.branches[1], offset_mm=-1.1)))
    target = _target(d, band_N=0.03 * 10)
    both = Slots.from_designs([d, d2])
    a = in_spec_share(target, both, band_pct=BAND_PCT, n_samples=64, seed=3)
    assert np.array_equal(a, in_spec_share(target, both, band_pct=BAND_PCT, n_samples=64, seed=3))
    alone = [in_spec_share(target, Slots.from_designs([x]), band_pct=BAND_PCT, n_samples=64, seed=3)[0]
             for x in (d, d2)]
    assert a.tolist() == alone                      # each design on the same parts, whatever its company
    # the small sample of the search is the first parts of the full one
    zp, zo, ze = yield_draws(200, 2, 5, 9)
    zp24, zo24, ze24 = yield_draws(24, 2, 4, 9)
    assert np.array_equal(zp24, zp[:24, :, :4]) and np.array_equal(zo24, zo[:24]) and np.array_equal(ze24, ze[:24])


def test_standard_error_is_the_binomial_one():
    assert standard_error(0.5, 200) == pytest.approx(math.sqrt(0.25 / 200))
    assert standard_error(1.0, 200) == 0.0


def _study(tmp_path, extra_limits: str = "", objectives: str | None = None, seed_line: str = ""):
    x = np.linspace(0, 6, 13)
    write_target(tmp_path / "lin.csv", x, 3.0 + 1.2 * x, tol=0.4)
    extra = f'objectives = {objectives}\n' if objectives else ""
    p = write_study(tmp_path, "lin.csv", population=8, generations=2, extra=extra + seed_line)
    text = p.read_text().replace("[limits]\n", "[limits]\n" + extra_limits)
    p.write_text(text)
    return ss.load_study(p)


def test_a_study_without_the_constraint_or_objective_computes_no_share(tmp_path, monkeypatch):
    import springsynth.checks.in_spec as mod
    from springsynth.search.encoding import Encoding
    from springsynth.search.operators import random_genomes
    from springsynth.search.scoring import CONSTRAINTS, score

    st = _study(tmp_path)
    assert not st.wants_yield
    monkeypatch.setattr(mod, "in_spec_share", lambda *a, **k: pytest.fail("the share was computed"))
    enc = Encoding(st)
    sc = score(st, enc.decode(random_genomes(enc, 16, np.random.default_rng(0))))
    assert np.all(sc.G[:, CONSTRAINTS.index("in_spec")] == -1.0) and sc.F.shape == (16, 3)


def test_the_constraint_is_the_shortfall_of_the_share_and_a_design_missing_another_scores_share_zero(tmp_path):
    from springsynth.search.encoding import Encoding
    from springsynth.search.scoring import CONSTRAINTS, score
    from springsynth.search.settings import SETTINGS

    st = _study(tmp_path, extra_limits="in_spec_share = 0.8\n")
    # a coil spring preloaded to 3 N at 1.2 N/mm (the target), and the same spring far too stiff
    coil = {"wire_diameter_mm": 0.9, "mean_diameter_mm": 7.0, "active_coils": 6.0, "free_length_mm": 25.0}
    k = get_kind("helical_compression")
    cat = catalogue()
    d = Design((Element("helical_compression", "music_wire", 1, 0.0, coil),), {"music_wire": cat["music_wire"]})
    rate = float(evaluate_design(d, np.array([0.0, 1.0]), x_max_mm=6.0).force_N[0, 1])
    d = Design((Element("helical_compression", "music_wire", 1, -3.0 / rate,
                        {**coil, "active_coils": coil["active_coils"] * rate / 1.2}),), d.materials)
    stiff = Design((Element("helical_compression", "music_wire", 1, -1.0, {**coil, "active_coils": 3.0}),),
                   d.materials)
    enc = Encoding(st)
    X = enc.encode([d, stiff])
    slots = enc.decode(X)
    sc = score(st, slots)
    g = sc.G[:, CONSTRAINTS.index("in_spec")]
    others = np.all(np.delete(sc.G, CONSTRAINTS.index("in_spec"), axis=1) <= 0, axis=1)
    assert others.tolist() == [True, False], k.name
    share = in_spec_share(st.target, slots.take(np.array([0])), band_pct=st.limits.band_pct,
                          n_samples=SETTINGS.yield_search_samples, seed=st.search.seed)[0]
    assert g[0] == pytest.approx(max(1 - share / 0.8, -1.0))
    assert g[1] == 1.0


def test_the_objective_is_one_minus_the_share(tmp_path):
    from springsynth.search.encoding import Encoding
    from springsynth.search.operators import random_genomes
    from springsynth.search.scoring import score

    st = _study(tmp_path, objectives='["curve_error_pct", "stress_ratio", "size_mm3", "in_spec_share"]')
    assert st.search.objectives[-1] == "in_spec_share" and st.wants_yield
    enc = Encoding(st)
    sc = score(st, enc.decode(random_genomes(enc, 12, np.random.default_rng(1))))
    assert sc.F.shape == (12, 4) and np.all((sc.F[:, 3] >= 0) & (sc.F[:, 3] <= 1))


@pytest.mark.parametrize("line, message", [
    ("in_spec_share = 90", "must be a share from 0 to 1 (0.9 = 90 % of parts), got 90"),
    ("in_spec_share = -0.1", "must be >= 0, got -0.1"),
    ("band_pct = 0", "must be > 0, got 0"),
    ("band_pct = 150", "must be at most 100, got 150"),
    ("in_spec_shares = 0.9", "did you mean 'in_spec_share'?"),
])
def test_bad_yield_keys_are_one_line_errors(tmp_path, line, message):
    with pytest.raises(ss.InputError) as e:
        _study(tmp_path, extra_limits=line + "\n")
    assert message in str(e.value) and "\n" not in str(e.value)
