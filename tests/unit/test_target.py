"""Target CSV reading: units, bands, and errors that name file, row and column."""

import numpy as np
import pytest

from springsynth.io.target_csv import MAX_POINTS, load_target
from springsynth.model.errors import InputError
from springsynth.model.target import target_from_arrays


def _w(tmp_path, text, name="t.csv"):
    p = tmp_path / name
    p.write_text(text)
    return p


def test_reads_plain_mm_and_N(tmp_path):
    t = load_target(_w(tmp_path, "displacement_mm,force_N\n0,0\n1,2\n2,4\n"))
    assert np.allclose(t.x_mm, [0, 1, 2]) and np.allclose(t.force_N, [0, 2, 4])
    assert not t.has_band


def test_converts_inch_and_lbf(tmp_path):
    # 1 in = 25.4 mm exactly, 1 lbf = 4.4482216152605 N (NIST SP 811, 2008, Appendix B)
    t = load_target(_w(tmp_path, "displacement [in],force [lbf],tolerance [lbf]\n0,0,0.1\n0.5,1,0.1\n1,2,0.1\n"))
    assert t.x_mm[-1] == pytest.approx(25.4, rel=1e-12)
    assert t.force_N[-1] == pytest.approx(2 * 4.4482216152605, rel=1e-9)
    assert t.force_hi_N[1] - t.force_N[1] == pytest.approx(0.1 * 4.4482216152605, rel=1e-9)


def test_kN_and_band_columns(tmp_path):
    t = load_target(_w(tmp_path, "displacement_mm,force [kN],force_min [kN],force_max [kN],weight\n"
                                 "0,0,-0.001,0.001,1\n1,0.01,0.009,0.011,2\n2,0.02,0.019,0.021,1\n"))
    assert t.force_N[2] == pytest.approx(20.0)
    assert t.force_lo_N[1] == pytest.approx(9.0) and t.weight[1] == 2


def test_bom_and_comments_accepted(tmp_path):
    p = tmp_path / "b.csv"
    p.write_bytes("\ufeff# a comment\ndisplacement_mm,force_N\n0,0\n1,1\n2,2\n".encode("utf-8"))
    assert load_target(p).x_mm.size == 3


@pytest.mark.parametrize("text, needle", [
    ("", "is empty"),
    ("displacement_mm,force_N\n", "at least 3"),
    ("displacement_mm;force_N\n0;0\n1;1\n2;2\n", "semicolons"),
    ("displacement_mm,force_N\n0,0\n1,1,5\n2,2\n", "row 3 has 3 cells"),
    ("displacement_mm,force_N\n0,0\n1,abc\n2,2\n", "row 3, column force: 'abc'"),
    ("displacement_mm,force_N\n0,0\n1,nan\n2,2\n", "not a finite number"),
    ("displacement_mm,force_N\n0,0\n2,1\n1,2\n", "row 4: displacement must increase"),
    ("displacement_mm,force_N\n0,0\n1,1\n1,2\n", "increase strictly"),
    ("displacement_mm,force_N\n-1,0\n1,1\n2,2\n", "must be >= 0"),
    ("displacement_mm,force_N\n0,0\n1,1\n", "3 are needed"),
    ("displacement_mm\n0\n1\n2\n", "missing column 'force'"),
    ("displacement_mm,force [wibble]\n0,0\n1,1\n2,2\n", "unknown unit 'wibble'"),
    ("displacement_mm,force [mm]\n0,0\n1,1\n2,2\n", "not a force unit"),
    ("displacement,force_N\n0,0\n1,1\n2,2\n", "has no unit"),
    ("displacement_mm,force_N,colour\n0,0,1\n1,1,1\n2,2,1\n", "unknown column 'colour'"),
    ("displacement_mm,force_N,force_min_N,force_max_N\n0,0,0,0\n1,1,1.5,2\n2,2,1,3\n", "row 3: the band"),
    ("displacement_mm,force_N\n0,0\n1,\"1,5\"\n2,2\n", "decimal comma"),
])
def test_bad_targets_name_the_fault(tmp_path, text, needle):
    p = _w(tmp_path, text, "bad.csv")
    with pytest.raises(InputError) as e:
        load_target(p)
    assert needle in str(e.value)
    assert "bad.csv" in str(e.value)


def test_missing_file(tmp_path):
    with pytest.raises(InputError, match="not found"):
        load_target(tmp_path / "nope.csv")


def test_long_target_is_resampled_with_a_notice(tmp_path):
    x = np.linspace(0, 10, MAX_POINTS + 500)
    _w(tmp_path, "displacement_mm,force_N\n" + "".join(f"{a},{2 * a}\n" for a in x), "long.csv")
    t = load_target(tmp_path / "long.csv")
    assert t.x_mm.size < MAX_POINTS and t.notices
    assert np.allclose(t.force_N, 2 * t.x_mm)


def test_curve_error_definition():
    # DESIGN.md: 100 RMS(F - F_t) / max|F_t|
    t = target_from_arrays([0, 1, 2, 3], [0, 1, 2, 4])
    f = np.array([[0, 1, 2, 4], [1, 2, 3, 5]], float)
    assert np.allclose(t.curve_error_pct(f), [0.0, 25.0])


# 1 um = 1e-3 mm, 1 m = 1000 mm, 1 mN = 1e-3 N (SI prefixes); 1 kgf = 9.80665 N and 1 gf = 9.80665e-3 N
# (standard gravity 9.80665 m/s^2, 3rd CGPM 1901; NIST SP 811, 2008, Appendix B); 1 daN = 10 N
@pytest.mark.parametrize("head, x_factor, f_factor", [
    ("displacement [µm],force [mN],tolerance [mN]", 1e-3, 1e-3),     # micro sign U+00B5, as keyboards type it
    ("displacement [μm],force_mN,tolerance_mN", 1e-3, 1e-3),         # Greek mu U+03BC
    ("displacement_um,force [gf],tolerance [gf]", 1e-3, 9.80665e-3),
    ("displacement_m,force [kgf],tolerance [kgf]", 1000.0, 9.80665),
    ("displacement [mm],force_kgf,tolerance_kgf", 1.0, 9.80665),
    ("displacement [cm],force [daN],tolerance [daN]", 10.0, 10.0),
])
def test_more_units(tmp_path, head, x_factor, f_factor):
    t = load_target(_w(tmp_path, f"{head}\n0,0,0.5\n1,2,0.5\n2,4.5,0.5\n"))
    assert t.x_mm == pytest.approx(np.array([0.0, 1.0, 2.0]) * x_factor, rel=1e-12)
    assert t.force_N == pytest.approx(np.array([0.0, 2.0, 4.5]) * f_factor, rel=1e-12)
    assert t.force_hi_N - t.force_N == pytest.approx(np.full(3, 0.5 * f_factor), rel=1e-12)


def test_weighted_curve_error_by_hand(tmp_path):
    # DESIGN.md: 100 RMS_w(F - F_t) / max|F_t| with RMS_w = sqrt(sum w r^2 / sum w). Target 0, 1, 2, 4 N
    # with weights 1, 3, 1, 0 against a curve 0, 1.5, 2, 9: residuals 0, 0.5, 0, 5 (the last point
    # weightless) -> sqrt(3 x 0.25 / 5) = 0.387298 N -> 9.68246 % of 4 N; unweighted it would be
    # sqrt((0.25 + 25)/4) / 4 = 62.81 %.
    t = load_target(_w(tmp_path, "displacement_mm,force_N,weight\n0,0,1\n1,1,3\n2,2,1\n3,4,0\n"))
    f = np.array([[0.0, 1.5, 2.0, 9.0], [0.0, 1.0, 2.0, 4.0]])
    assert t.curve_error_pct(f) == pytest.approx([100 * np.sqrt(0.75 / 5) / 4, 0.0], rel=1e-12)
    assert t.curve_error_pct(f)[0] == pytest.approx(9.68246, abs=5e-6)
    flat = target_from_arrays([0, 1, 2, 3], [0, 1, 2, 4])
    assert flat.curve_error_pct(f[:1])[0] == pytest.approx(62.81, abs=5e-3)
