"""What `springsynth export` states against handbook formulas, the model itself and the DXF read back.

Coil springs: R.G. Budynas & J.K. Nisbett, *Shigley's Mechanical Engineering Design*,
9th ed., ch. 10 (rate k = G d^4 / (8 D^3 Na); end types, Table 10-1; extension-spring
free length and body coils) and its solutions manual, Problem 10-3. Outlines: every DXF
is written to disk, read back with ezdxf and compared with the exact shape computed here
(the cosine and half-sine centrelines, offsets of t/2, circular notches).
"""

from __future__ import annotations

import math

import ezdxf
import numpy as np
import pytest
from ezdxf import bbox
from scipy.spatial import cKDTree

import springsynth as ss
from springsynth.export import Profile, Stroke, coil_ends, design_spec, export_files
from springsynth.export.outline import CHORD_TOLERANCE_MM, LAYER_OUTLINE, contours, link_spacing, outline_document
from springsynth.export.spec import mount_length
from tests.conftest import ROOT

IN = 25.4  # mm per inch


def _design(kind, material, count=1, offset=0.0, **params):
    from springsynth.model.materials import catalogue

    e = ss.Element(kind, material, count, offset, params)
    return ss.Design((e,), {material: catalogue()[material]}, name="t")


def _read_back(tmp_path, spec, label):
    """Write the export, read the part's DXF back with ezdxf; returns (doc, outline polylines)."""
    files = export_files(spec, with_previews=False)
    rec = next(r for r in spec.records if r["part"] == label)
    path = tmp_path / rec["dxf"]
    path.write_bytes(files[rec["dxf"]])
    doc = ezdxf.readfile(path)
    polys = list(doc.modelspace().query(f'LWPOLYLINE[layer=="{LAYER_OUTLINE}"]'))
    return doc, polys


# --------------------------------------------------------------------------- coil springs

@pytest.mark.parametrize("ends, Nt, Ls, pitch", [
    # d = 2, Na = 10, L0 = 50: Shigley Table 10-1 formulas evaluated by hand
    ("plain", 10, 2 * 11, (50 - 2) / 10),
    ("plain and ground", 11, 2 * 11, 50 / 11),
    ("closed", 12, 2 * 13, (50 - 3 * 2) / 10),
    ("closed and ground", 12, 2 * 12, (50 - 2 * 2) / 10),
])
def test_end_types_follow_shigley_table_10_1(ends, Nt, Ls, pitch):
    got = coil_ends(ends, 2.0, 10.0, 50.0)
    assert got == pytest.approx((Nt, Ls, pitch), rel=1e-12)


def test_plain_and_ground_worked_problem():
    # Shigley solutions manual, ch. 10, Problem 10-3: plain and ground ends, d = 0.105 in,
    # Nt = 12 -> Na = 11, Ls = d Nt = 1.26 in
    Nt, Ls, _ = coil_ends("plain and ground", 0.105 * IN, 11.0, 5.17 * IN)
    assert Nt == 12
    assert Ls / IN == pytest.approx(1.26, abs=5e-4)


def _flat_force_arch():
    return ss.load_design(ROOT / "studies" / "flat-force-arch.design.toml")


def test_compression_spec_equals_the_model_and_the_handbook():
    d = _flat_force_arch()
    spring = d.elements[1]
    G = d.materials[spring.material].G_MPa
    names = ("wire_diameter_mm", "mean_diameter_mm", "active_coils", "free_length_mm")
    wire, D, Na, L0 = (spring.params[k] for k in names)
    rec = design_spec(d, Stroke(0.0, 4.0)).records[1]
    k_shigley = G * wire**4 / (8 * D**3 * Na)                          # Shigley eq. 10-9
    assert rec["rate_N_per_mm"] == pytest.approx(k_shigley, rel=1e-12)
    # the model's own slope: the spring's share of the design's force beyond its preload
    r = ss.evaluate_design(d, np.array([1.0, 3.0]))
    slope = (r.element_force_N[0, 1, 1] - r.element_force_N[0, 1, 0]) / 2.0 / spring.count
    assert rec["rate_N_per_mm"] == pytest.approx(slope, rel=1e-12)
    assert rec["outer_diameter_mm"] == pytest.approx(D + wire, rel=1e-15)
    assert rec["inner_diameter_mm"] == pytest.approx(D - wire, rel=1e-15)
    # closed and ground (the kernel's ends): Nt = Na + 2, Ls = d Nt, L0 = p Na + 2 d (Table 10-1)
    assert rec["total_coils"] == pytest.approx(Na + 2)
    assert rec["solid_length_mm"] == pytest.approx(wire * (Na + 2), rel=1e-15)
    assert rec["pitch_mm"] * Na + 2 * wire == pytest.approx(L0, rel=1e-14)
    # installed: preloaded 1 mm; working at x = 4 mm: deflection 5 mm, lengths L0 - u
    assert rec["installed_length_mm"] == pytest.approx(L0 - 1.0)
    assert rec["load_installed_N"] == pytest.approx(k_shigley * 1.0, rel=1e-12)
    assert rec["working_length_mm"] == pytest.approx(L0 - 5.0)
    assert rec["load_working_N"] == pytest.approx(k_shigley * 5.0, rel=1e-12)


def test_compression_solid_length_is_the_one_the_model_checks():
    """The kernel's solid_height margin (Ls + 1.15 u)/L0 - 1 implies the spec's solid length."""
    d = _flat_force_arch()
    rec = design_spec(d, Stroke(0.0, 4.0)).records[1]
    kind = ss.registry()["helical_compression"]
    e = d.elements[1]
    from springsynth.model.materials import MaterialArrays

    p = {k: np.array([float(v)]) for k, v in e.params.items()}
    u = 5.0
    g = kind.validity_margins(p, MaterialArrays.of(d.materials[e.material]), np.array([u]))["solid_height"][0]
    Ls_model = (g + 1.0) * e.params["free_length_mm"] - 1.15 * u
    assert rec["solid_length_mm"] == pytest.approx(Ls_model, rel=1e-12)


def test_extension_spec_follows_shigley():
    d = _design("helical_extension", "music_wire", wire_diameter_mm=1.0, mean_diameter_mm=8.0, active_coils=12.0,
                initial_tension_N=4.0)
    m = d.materials["music_wire"]
    rec = design_spec(d, Stroke(2.0, 10.0)).records[0]
    Nb = 12.0 - m.G_MPa / m.E_MPa                                      # Shigley: Na = Nb + G/E
    k = m.G_MPa * 1.0**4 / (8 * 8.0**3 * 12.0)
    assert rec["body_coils"] == pytest.approx(Nb, rel=1e-14)
    # L0 = 2 (D - d) + (Nb + 1) d, free length inside the hooks
    assert rec["free_length_mm"] == pytest.approx(2 * (8.0 - 1.0) + (Nb + 1) * 1.0, rel=1e-14)
    assert rec["body_length_mm"] == pytest.approx((Nb + 1) * 1.0, rel=1e-14)
    assert rec["rate_N_per_mm"] == pytest.approx(k, rel=1e-12)
    assert rec["load_installed_N"] == pytest.approx(4.0 + 2.0 * k, rel=1e-12)   # F = Fi + k u
    assert rec["load_working_N"] == pytest.approx(4.0 + 10.0 * k, rel=1e-12)
    assert rec["installed_length_mm"] == pytest.approx(rec["free_length_mm"] + 2.0)
    assert (rec["outer_diameter_mm"], rec["inner_diameter_mm"]) == pytest.approx((9.0, 7.0))


# --------------------------------------------------------------------------- outlines read back

def _centreline_distance(points, y_of_x, L, n=400_001):
    xs = np.linspace(0.0, L, n)
    tree = cKDTree(np.column_stack([xs, y_of_x(xs)]))
    return tree.query(points)[0]


@pytest.mark.parametrize("kind, params, y_of_x", [
    ("arch", dict(length_mm=40.0, width_mm=6.0, thickness_mm=0.6, rise_mm=2.0),
     lambda x: 1.0 * (1 - np.cos(2 * np.pi * x / 40.0))),                       # rise/2 (1 - cos 2 pi x/L)
    ("column", dict(length_mm=40.0, width_mm=6.0, thickness_mm=0.12, rise_mm=2.5, ends="pinned"),
     lambda x: 2.5 * np.sin(np.pi * x / 40.0)),                                  # half sine
    ("column", dict(length_mm=30.0, width_mm=4.0, thickness_mm=0.1, rise_mm=0.3, ends="clamped"),
     lambda x: 0.15 * (1 - np.cos(2 * np.pi * x / 30.0))),
])
def test_curved_outlines_follow_the_true_shape(tmp_path, kind, params, y_of_x):
    mat = "peek" if kind == "arch" else "stainless_17_7ph"
    spec = design_spec(_design(kind, mat, **params), Stroke(0.0, 1.0))
    doc, polys = _read_back(tmp_path, spec, "e1")
    assert len(doc.audit().errors) == 0
    assert doc.header["$INSUNITS"] == 4                                         # millimetres
    assert len(polys) == 1 and polys[0].closed
    pts = np.array([(x, y) for x, y, *_ in polys[0].get_points("xy")])
    L, t, c = params["length_mm"], params["thickness_mm"], mount_length(params["thickness_mm"])
    band = pts[(pts[:, 0] > 1e-9) & (pts[:, 0] < L - 1e-9)]
    assert len(band) > 100
    # every face vertex lies t/2 from the true centreline, and so do the chords between them
    dist = _centreline_distance(band, y_of_x, L)
    assert np.abs(dist - t / 2).max() < 2e-4
    side = np.sign(band[:, 1] - y_of_x(band[:, 0]))                               # lower or upper face
    mids = 0.5 * (band[1:] + band[:-1])[side[1:] == side[:-1]]
    assert np.abs(_centreline_distance(mids, y_of_x, L) - t / 2).max() < CHORD_TOLERANCE_MM + 2e-4
    # apex: rise + t/2 at mid-span; extents: blocks of c x c at both ends
    assert band[:, 1].max() == pytest.approx(params["rise_mm"] + t / 2, abs=CHORD_TOLERANCE_MM)
    ext = bbox.extents(polys)
    assert (ext.extmin.x, ext.extmax.x) == pytest.approx((-c, L + c), abs=1e-12)
    assert ext.extmin.y == pytest.approx(-c / 2, abs=1e-12)
    assert ext.extmax.y == pytest.approx(max(c / 2, params["rise_mm"] + t / 2), abs=CHORD_TOLERANCE_MM)


@pytest.mark.parametrize("kind, free_end", [("blade_guided", False), ("blade_clamped", False),
                                            ("blade_cantilever", True)])
def test_straight_blade_extents(tmp_path, kind, free_end):
    L, b, t = 24.0, 6.0, 0.25
    spec = design_spec(_design(kind, "stainless_17_7ph", count=2, length_mm=L, width_mm=b, thickness_mm=t),
                       Stroke(0.0, 2.0))
    doc, polys = _read_back(tmp_path, spec, "e1")
    assert len(doc.audit().errors) == 0
    c = mount_length(t)
    ext = bbox.extents(polys)
    assert ext.size.x == pytest.approx(L + c + (0 if free_end else c), abs=1e-12)
    assert ext.size.y == pytest.approx(c, abs=1e-12)
    pts = np.array([(x, y) for x, y, *_ in polys[0].get_points("xy")])
    band = pts[(pts[:, 0] > 0) & (pts[:, 0] < L)]
    assert np.allclose(np.abs(pts[np.isclose(pts[:, 0], L) & (np.abs(pts[:, 1]) < c / 2), 1]), t / 2)
    assert band.size == 0                         # straight faces: vertices only at the mounting edges
    rec = spec.records[0]
    assert rec["overall_length_mm"] == pytest.approx(ext.size.x)
    assert rec["copies"].startswith("e1-1, e1-2")


def test_wire_and_ribbon_extents(tmp_path):
    spec = design_spec(_design("wire_guided", "music_wire", length_mm=30.0, wire_diameter_mm=0.8), Stroke(0.0, 3.0))
    _, polys = _read_back(tmp_path, spec, "e1")
    c = mount_length(0.8)
    ext = bbox.extents(polys)
    assert (ext.size.x, ext.size.y) == pytest.approx((30.0 + 2 * c, 0.8), abs=1e-12)

    b, t, Rn, x = 10.0, 0.1, 10.0, 40.0
    spec = design_spec(_design("ribbon", "stainless_302", width_mm=b, thickness_mm=t, natural_radius_mm=Rn),
                       Stroke(0.0, x))
    _, polys = _read_back(tmp_path, spec, "e1")
    drum = 1.15 * 2 * Rn                    # handbook rule: drum 10-20 % over the natural diameter (middle)
    strip = x + 1.5 * math.pi * drum        # handbook rule: 1.5 wraps stay on the drum
    ext = bbox.extents(polys)
    assert (ext.size.x, ext.size.y) == pytest.approx((strip + mount_length(t), b), abs=1e-9)
    assert spec.records[0]["strip_length_mm"] == pytest.approx(strip, rel=1e-12)


def test_notch_stage_has_true_circular_notches_and_the_neck(tmp_path):
    L, t, r, b = 20.0, 0.3, 1.5, 8.0
    prof = Profile("notch_stage", L, t, b, mount_mm=(5.0, 5.0), block_mm=5.0, notch_radius_mm=r)
    path = tmp_path / "notch.dxf"
    outline_document(prof).saveas(path)
    doc = ezdxf.readfile(path)
    assert len(doc.audit().errors) == 0
    polys = list(doc.modelspace().query(f'LWPOLYLINE[layer=="{LAYER_OUTLINE}"]'))
    assert len(polys) == 2 and all(p.closed for p in polys)
    arcs = 0
    for p in polys:
        v = list(p.get_points("xyb"))
        for (x0, y0, bulge), (x1, y1, _) in zip(v, v[1:] + v[:1]):
            if bulge:
                theta = 4 * math.atan(abs(bulge))                              # included angle
                radius = math.hypot(x1 - x0, y1 - y0) / (2 * math.sin(theta / 2))
                assert radius == pytest.approx(r, rel=1e-12) and theta == pytest.approx(math.pi)
                arcs += 1
    assert arcs == 8                                                           # four hinges, two sides each
    # the neck: the closest approach of the outer contour and the window, on the true arcs
    flat = [np.array([(q.x, q.y) for q in ezdxf.path.make_path(p).flattening(1e-5)]) for p in polys]
    neck = cKDTree(flat[0]).query(flat[1])[0].min()
    assert neck == pytest.approx(t, abs=1e-4)
    w = t + 2 * r
    ext = bbox.extents(polys)
    assert ext.size.x == pytest.approx(link_spacing(prof) + w + 2 * 5.0)
    assert ext.size.y == pytest.approx(L + 2 * r + 2 * 5.0)


@pytest.mark.parametrize("shape, y_of_x", [
    ("straight", lambda x: 0 * x),
    ("cosine", lambda x: 1.0 * (1 - np.cos(2 * np.pi * x / 40.0))),
    ("half_sine", lambda x: 2.0 * np.sin(np.pi * x / 40.0)),
])
def test_flat_contours_are_simple_and_enclose_the_part(shape, y_of_x):
    """Counter-clockwise, and the shoelace area is the blocks plus arc length x t (no self-overlap)."""
    L, t, c = 40.0, 0.6, mount_length(0.6)
    prof = Profile(shape, L, t, 6.0, rise_mm=0.0 if shape == "straight" else 2.0, mount_mm=(c, c), block_mm=c)
    (v,) = contours(prof)
    x, y = np.array([p[0] for p in v]), np.array([p[1] for p in v])
    area = 0.5 * (np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1)))
    xs = np.linspace(0.0, L, 200_001)
    arc = np.sum(np.hypot(np.diff(xs), np.diff(y_of_x(xs))))
    assert area == pytest.approx(2 * c * c + arc * t, rel=1e-4)


def _svg_arc_midpoint(p0, p1, r, large, sweep):
    """Middle of an SVG elliptical arc with rx = ry = r and no rotation, from the endpoint-to-centre
    conversion of the W3C SVG 1.1 specification, Appendix F.6.5 (equations F.6.5.1 to F.6.5.6)."""
    (x1, y1), (x2, y2) = p0, p1
    xp, yp = (x1 - x2) / 2, (y1 - y2) / 2
    coef = math.sqrt(max(0.0, (r * r * r * r - r * r * yp * yp - r * r * xp * xp) / (r * r * (xp * xp + yp * yp))))
    coef *= -1.0 if large == sweep else 1.0
    cx, cy = coef * yp + (x1 + x2) / 2, -coef * xp + (y1 + y2) / 2
    t1 = math.atan2((yp - (-coef * xp)) / r, (xp - coef * yp) / r)
    t2 = math.atan2((-yp - (-coef * xp)) / r, (-xp - coef * yp) / r)
    dt = (t2 - t1) % (2 * math.pi)
    if not sweep:
        dt -= 2 * math.pi
    return cx + r * math.cos(t1 + dt / 2), cy + r * math.sin(t1 + dt / 2)


def test_report_outline_svg_draws_the_dxf_arcs():
    """The report's SVG outline of a notch stage: its arcs have the DXF's centres and sides, checked
    through ezdxf's own bulge-to-arc conversion (ezdxf.math.bulge_to_arc) against the SVG
    specification's arc parameterisation (y is flipped in SVG)."""
    import re

    from ezdxf.math import bulge_to_arc

    from springsynth.export.outline import outline_svg

    L, t, r = 20.0, 0.3, 1.5
    prof = Profile("notch_stage", L, t, 8.0, mount_mm=(5.0, 5.0), block_mm=5.0, notch_radius_mm=r)
    svg = outline_svg(prof)
    d = re.search(r'<path d="([^"]+)"', svg).group(1)
    arcs, here = [], None          # (start, r_x, r_y, large-arc flag, sweep flag, end), walking the path
    for cmd, args in re.findall(r"([MLAZ])([^MLAZ]*)", d):
        v = [float(a) for a in args.split()]
        if cmd == "A":
            arcs.append((here, v[0], v[1], int(v[3]), int(v[4]), (v[5], v[6])))
        if cmd != "Z":
            here = (v[-2], v[-1])
    expected = []
    for c in contours(prof):
        for (x0, y0, b), (x1, y1, _) in zip(c, c[1:] + c[:1]):
            if b:
                centre, a0, a1, rad = bulge_to_arc((x0, y0), (x1, y1), b)   # counter-clockwise from a0 to a1
                am = a0 + ((a1 - a0) % (2 * math.pi)) / 2
                expected.append(((x0, -y0), (x1, -y1), (centre[0] + rad * math.cos(am), centre[1] + rad * math.sin(am))))
    assert len(arcs) == len(expected) == 8
    for (start, rx, ry, large, sweep, end), (s0, s1, mid) in zip(arcs, expected):
        assert start == pytest.approx(s0, abs=1e-4) and end == pytest.approx(s1, abs=1e-4)
        assert rx == ry == pytest.approx(r, abs=1e-4)
        mx, my = _svg_arc_midpoint(start, end, rx, large, sweep)
        assert (mx, -my) == pytest.approx(mid, abs=1e-3)
    # every outline vertex is in the path (y flipped), and the view box holds them all
    vb = tuple(map(float, re.search(r'viewBox="([^"]+)"', svg).group(1).split()))
    for c in contours(prof):
        for x, y, _ in c:
            assert vb[0] <= x <= vb[0] + vb[2] and vb[1] <= -y <= vb[1] + vb[3]
