"""Starting designs of a search (rerun): those that no longer fit the study are left out, with a notice."""

from __future__ import annotations

import pytest

from springsynth.assembly.design import Element
from springsynth.io.study_toml import load_study
from springsynth.search.synthesis import fitting_designs, synthesize
from tests.conftest import blade, design

COLUMN = Element("column", "stainless_17_7ph", 1, 0.0,
                 {"length_mm": 30.0, "width_mm": 5.0, "thickness_mm": 0.3, "rise_mm": 0.0, "ends": "pinned"})


def test_designs_without_a_usable_element_are_dropped(linear_study):
    st = load_study(linear_study)            # blade_guided and helical_compression only
    only_column = design(COLUMN, name="D01")
    mixed = design(COLUMN, blade(), name="D02")
    plain = design(blade(), name="D03")
    wrong_material = design(blade(material="beryllium_copper"), name="D04")   # not in the study's materials
    kept, dropped = fitting_designs(st, [only_column, mixed, plain, wrong_material])
    assert [d.name for d in kept] == ["D02", "D03"]
    assert [d.name for d in dropped] == ["D01", "D04"]


@pytest.mark.slow
def test_a_search_goes_on_without_starting_designs_that_no_longer_fit(linear_study):
    st = load_study(linear_study)
    res = synthesize(st, population=8, generations=2, warm_start=[design(COLUMN, name="D01"), design(blade(), name="D02")])
    assert len(res.designs) > 0
    (notice,) = res.notices
    assert "D01" in notice and "D02" not in notice
