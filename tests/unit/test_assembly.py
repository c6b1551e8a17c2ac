"""Parallel assembly: gaps, preloads, counts, packing, and the same path for one design and a population."""

import numpy as np
import pytest

from springsynth.assembly.evaluate import envelope_margins, evaluate_design, evaluate_population
from springsynth.assembly.slots import Slots
from springsynth.model.study import Envelope
from tests.conftest import blade, design

X = np.linspace(0, 4, 41)


def test_count_multiplies_force():
    f1 = evaluate_design(design(blade()), X).force_N
    f3 = evaluate_design(design(blade(count=3)), X).force_N
    assert np.allclose(f3, 3 * f1)


def test_gap_shifts_curve_and_is_zero_before_engagement():
    base = evaluate_design(design(blade()), X).force_N[0]
    gap = evaluate_design(design(blade(offset_mm=1.0)), X).force_N[0]
    assert np.all(gap[X <= 1.0] == 0.0)
    assert np.allclose(gap[X > 1.0], np.interp(X[X > 1.0] - 1.0, X, base))


def test_preload_gives_force_at_zero_stroke():
    base = evaluate_design(design(blade()), X + 0.5).force_N[0]
    pre = evaluate_design(design(blade(offset_mm=-0.5)), X).force_N[0]
    assert pre[0] > 0 and np.allclose(pre, base)


def test_parallel_elements_add_and_detail_matches_total():
    d = design(blade(), blade(offset_mm=1.0, params={"thickness_mm": 0.4}))
    r = evaluate_design(d, X)
    assert np.allclose(r.element_force_N[0].sum(axis=0), r.force_N[0])


def test_population_matches_single_designs():
    ds = [design(blade(params={"thickness_mm": t}), blade(offset_mm=o)) for t, o in [(0.2, 0.0), (0.3, 1.0), (0.5, -1.0)]]
    pop = evaluate_population(Slots.from_designs(ds), X)
    for i, d in enumerate(ds):
        assert np.allclose(pop.force_N[i], evaluate_design(d, X).force_N[0])


def test_slots_round_trip_to_design():
    d = design(blade(count=2, offset_mm=0.3), blade(params={"length_mm": 12.5}))
    s = Slots.from_designs([d])
    back = s.design(0, name="d")
    assert back.elements == d.elements


def test_packing_model():
    # blade box: along = u_max + t, across = L and b; copies side by side across the stroke
    d = design(blade(count=2))
    r = evaluate_design(d, X)
    along, w, h = r.box_mm[0]
    assert along == pytest.approx(4.0 + 0.3)
    assert w == pytest.approx(2 * 10.0) and h == pytest.approx(30.0)
    g_len, g_cross = envelope_margins(r.box_mm, Envelope(5.0, 30.0, 20.0))
    assert g_len[0] < 0 and g_cross[0] <= 0  # fits after a quarter turn (20 wide, 30 high)
    g_len, g_cross = envelope_margins(r.box_mm, Envelope(4.0, 25.0, 25.0))
    assert g_len[0] > 0 and g_cross[0] > 0


def test_size_and_mass_by_hand():
    """Packing model of ``assembly/evaluate.py`` and each kind's box and mass, worked by hand.

    Two guided 17-7PH blades L = 30, b = 10, t = 0.3 at offset 0, and a music-wire coil
    d = 1, D = 8, Na = 8, L0 = 30 engaging at 1 mm; stroke 4 mm. Boxes: blade (u_max + t,
    L, b) = (4.3, 30, 10); coil (L0, D + d, D + d) = (30, 9, 9). Length = max along = 30;
    copies side by side on their thinner cross extent: 2 x 10 + 9 = 29 wide; height =
    max(30, 9) = 30 -> 26 100 mm^3. Mass: blades 7810 kg/m^3 x 2 x 30 x 10 x 0.3 mm^3 =
    1.4058 g; coil 7860 kg/m^3 x pi/4 x 1^2 x pi x 8 x (8 + 2 end coils, squared & ground)
    = 1.5515 g; together 2.9573 g.
    """
    from springsynth.assembly.design import Element

    coil = Element("helical_compression", "music_wire", 1, 1.0,
                   {"wire_diameter_mm": 1.0, "mean_diameter_mm": 8.0, "active_coils": 8.0, "free_length_mm": 30.0})
    r = evaluate_design(design(blade(count=2), coil), X)
    assert tuple(r.box_mm[0]) == pytest.approx((30.0, 29.0, 30.0), rel=1e-12)
    assert r.size_mm3[0] == pytest.approx(26_100.0, rel=1e-12)
    blades = 7810e-6 * 2 * 30 * 10 * 0.3
    wire = 7860e-6 * np.pi / 4 * 1.0**2 * np.pi * 8.0 * (8 + 2)
    assert blades == pytest.approx(1.4058, abs=5e-5) and wire == pytest.approx(1.5515, abs=5e-5)
    assert r.mass_g[0] == pytest.approx(blades + wire, rel=1e-12)
