"""The verification report: elements that never engage, and deviations where nothing was compared."""

from __future__ import annotations

import math

import numpy as np

from springsynth.assembly.design import Element
from springsynth.checks.verify import verify_design
from tests.conftest import blade, design


def _coil(offset_mm: float) -> Element:
    return Element("helical_compression", "music_wire", 1, offset_mm,
                   {"wire_diameter_mm": 0.8, "mean_diameter_mm": 6.0, "active_coils": 8.0, "free_length_mm": 25.0})


def test_an_element_that_never_engages_is_reported_not_compared():
    x = np.linspace(0.0, 5.0, 6)
    rep = verify_design(design(blade(offset_mm=9.0), name="gap"), x)    # the gap lies beyond the 5 mm stroke
    (e,) = rep.elements
    assert not e.verified and "never engages" in e.note and "9 mm" in e.note
    assert math.isnan(e.force_dev_pct) and math.isnan(e.stress_dev_pct)
    assert np.all(e.force_kernel_N == 0.0)
    # nothing was compared: the assembly says so instead of "0 % deviation"
    assert math.isnan(rep.assembly_force_dev_pct) and math.isnan(rep.assembly_stress_dev_pct)
    row = rep.to_frame().iloc[-1]
    assert row.element == "assembly" and not row.verified and not row.flagged
    assert any("never engages" in f for f in rep.flags)


def test_a_late_element_leaves_the_assembly_deviation_to_the_others():
    # a blade from the start and a coil spring whose gap (8 mm) lies beyond the stroke: the assembly
    # deviation is exactly the blade's (the coil adds no force), computed here from its definition
    x = np.linspace(0.0, 5.0, 6)
    rep = verify_design(design(blade(), _coil(8.0)), x)
    b, c = rep.elements
    assert b.verified and not c.verified and "never engages" in c.note
    expected = 100.0 * np.max(np.abs(b.force_verified_N - b.force_kernel_N)) / np.max(np.abs(b.force_kernel_N))
    assert rep.assembly_force_dev_pct == b.force_dev_pct
    assert math.isclose(rep.assembly_force_dev_pct, expected, rel_tol=1e-12)
    assert math.isfinite(rep.assembly_stress_dev_pct)


def test_nothing_compared_is_not_a_zero_deviation():
    # every element unverifiable: previously the assembly compared the kernel with itself and read 0 %
    x = np.linspace(0.0, 2.0, 5)
    rep = verify_design(design(_coil(4.0), blade(offset_mm=3.0)), x)
    assert not any(e.verified for e in rep.elements)
    assert math.isnan(rep.assembly_force_dev_pct)
