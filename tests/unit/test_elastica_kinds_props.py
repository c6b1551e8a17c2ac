"""Property tests of the large-deflection blade and wire kinds (random populations)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from springsynth.elements import get_kind, kind_names
from springsynth.model.materials import Material, MaterialArrays

NAMES = ("blade_guided", "blade_cantilever", "wire_guided")
N = 400
M = 33

STEEL = Material(id="prop_steel", name="prop steel", E_MPa=200_000.0, G_MPa=76_923.0, nu=0.3,
                 density_kg_m3=7850.0, yield_MPa=1500.0, uts_MPa=1700.0)


def population(kind, n=N, seed=0):
    """Random designs within the parameter bounds, log-uniform where the param says so."""
    rng = np.random.default_rng(seed)
    p = {}
    for q in kind.params:
        if q.log:
            p[q.name] = np.exp(rng.uniform(math.log(q.lo), math.log(q.hi), n))
        else:
            p[q.name] = rng.uniform(q.lo, q.hi, n)
    return p


def thickness_name(kind):
    return next(q.name for q in kind.params if q.thickness)


def strokes(p, frac_max, m=M):
    return np.linspace(0.0, 1.0, m)[None, :] * (frac_max * p["length_mm"])[:, None]


def test_registered_with_expected_params():
    for name in NAMES:
        assert name in kind_names()
        kind = get_kind(name)
        assert kind.monotonic_stress
        thick = [q.name for q in kind.params if q.thickness]
        assert thick == (["wire_diameter_mm"] if name == "wire_guided" else ["thickness_mm"])
        for q in kind.params:
            assert 0 < q.lo < q.hi and q.log


@pytest.mark.parametrize("name", NAMES)
def test_shapes_and_zero_at_rest(name):
    kind = get_kind(name)
    p, mat = population(kind), MaterialArrays.of(STEEL, N)
    u = strokes(p, kind.extra["stroke_limit"])
    F, s = kind.force(p, mat, u), kind.stress(p, mat, u)
    assert F.shape == s.shape == (N, M)
    assert np.all(F[:, 0] == 0) and np.all(s[:, 0] == 0)
    assert np.all(np.isfinite(F)) and np.all(np.isfinite(s))
    for arr in kind.box(p, u[:, -1]):
        assert arr.shape == (N,) and np.all(arr > 0)
    assert kind.mass(p, mat).shape == (N,)
    assert kind.peak_stress_ratio(p, mat, u).shape == (N,)


@pytest.mark.parametrize("name", NAMES)
def test_force_and_stress_linear_in_E(name):
    kind = get_kind(name)
    p, mat = population(kind, seed=1), MaterialArrays.of(STEEL, N)
    u = strokes(p, kind.extra["stroke_limit"])
    mat2 = mat.replace(E=2.7 * mat.E)
    np.testing.assert_allclose(kind.force(p, mat2, u), 2.7 * kind.force(p, mat, u), rtol=1e-12)
    np.testing.assert_allclose(kind.stress(p, mat2, u), 2.7 * kind.stress(p, mat, u), rtol=1e-12)


@pytest.mark.parametrize("name", NAMES)
def test_force_rises_with_thickness(name):
    kind = get_kind(name)
    p, mat = population(kind, seed=2), MaterialArrays.of(STEEL, N)
    u = strokes(p, kind.extra["stroke_limit"])
    tn = thickness_name(kind)
    thicker = dict(p, **{tn: p[tn] * 1.05})
    F, F2 = kind.force(p, mat, u), kind.force(thicker, mat, u)
    assert np.all(F2[:, 1:] > F[:, 1:])
    # bending: F ~ t^3 (blade) or d^4 (wire) at the same stroke
    expo = 4 if name == "wire_guided" else 3
    np.testing.assert_allclose(F2[:, 1:] / F[:, 1:], 1.05**expo, rtol=1e-12)


@pytest.mark.parametrize("name", NAMES)
def test_force_and_stress_rise_with_stroke_even_beyond_range(name):
    # inside the range: stiffening elastica; beyond: the documented finite, rising continuation
    kind = get_kind(name)
    p, mat = population(kind, seed=3), MaterialArrays.of(STEEL, N)
    u = strokes(p, 3.0, m=301)
    F, s = kind.force(p, mat, u), kind.stress(p, mat, u)
    assert np.all(np.diff(F, axis=1) > 0) and np.all(np.diff(s, axis=1) > 0)
    assert np.all(np.isfinite(F))
    # secant stiffness never falls below the small-deflection value (stiffening)
    secant = F[:, 1:] / u[:, 1:]
    assert np.all(secant >= secant[:, :1] * (1 - 1e-12))


@pytest.mark.parametrize("name", NAMES)
def test_stroke_margin_sign(name):
    kind = get_kind(name)
    p, mat = population(kind, seed=4), MaterialArrays.of(STEEL, N)
    lim, L = kind.extra["stroke_limit"], p["length_mm"]
    inside = kind.validity_margins(p, mat, 0.99 * lim * L)["stroke"]
    edge = kind.validity_margins(p, mat, lim * L)["stroke"]
    beyond = kind.validity_margins(p, mat, 1.01 * lim * L)["stroke"]
    assert np.all(inside < 0) and np.allclose(edge, 0, atol=1e-12) and np.all(beyond > 0)
    np.testing.assert_allclose(beyond, 0.01, rtol=1e-9)   # normalised: 1 % beyond -> 0.01


@pytest.mark.parametrize("name", NAMES)
def test_slenderness_margin_sign(name):
    # Euler-Bernoulli bending needs L / t >= 10 (common practice)
    kind = get_kind(name)
    p, mat = population(kind, seed=5), MaterialArrays.of(STEEL, N)
    tn = thickness_name(kind)
    u_max = np.zeros(N)
    slender = dict(p, **{tn: p["length_mm"] / 20.0})
    stubby = dict(p, **{tn: p["length_mm"] / 5.0})
    assert np.all(kind.validity_margins(slender, mat, u_max)["slenderness"] < 0)
    np.testing.assert_allclose(kind.validity_margins(stubby, mat, u_max)["slenderness"], 1.0)


def test_guided_blade_is_two_half_cantilevers():
    # Antisymmetry: a guided blade of length L at stroke u carries the same force, and
    # the same end stress, as a cantilever of length L/2 at stroke u/2.
    g, c = get_kind("blade_guided"), get_kind("blade_cantilever")
    p, mat = population(g, seed=6), MaterialArrays.of(STEEL, N)
    u = strokes(p, g.extra["stroke_limit"])
    half = dict(p, length_mm=p["length_mm"] / 2)
    np.testing.assert_allclose(g.force(p, mat, u), c.force(half, mat, u / 2), rtol=2e-3)
    np.testing.assert_allclose(g.stress(p, mat, u), c.stress(half, mat, u / 2), rtol=2e-3)


def test_wire_equals_blade_of_same_bending_stiffness():
    # Same E I and length -> same force; stress scales with the outer-fibre distance.
    w, bl = get_kind("wire_guided"), get_kind("blade_guided")
    p, mat = population(w, seed=7), MaterialArrays.of(STEEL, N)
    d = p["wire_diameter_mm"]
    t = d.copy()
    b = 12 * (math.pi * d**4 / 64) / t**3          # b t^3 / 12 = pi d^4 / 64
    pb = {"length_mm": p["length_mm"], "width_mm": b, "thickness_mm": t}
    u = strokes(p, w.extra["stroke_limit"])
    np.testing.assert_allclose(w.force(p, mat, u), bl.force(pb, mat, u), rtol=1e-12)
    np.testing.assert_allclose(w.stress(p, mat, u), bl.stress(pb, mat, u), rtol=1e-12)


@pytest.mark.parametrize("name", NAMES)
def test_mass_linear_in_density(name):
    kind = get_kind(name)
    p, mat = population(kind, seed=8), MaterialArrays.of(STEEL, N)
    np.testing.assert_allclose(kind.mass(p, mat.replace(rho=0.5 * mat.rho)), 0.5 * kind.mass(p, mat), rtol=1e-12)
