"""Stock sizes and practical resolution (``[search] stock``, ``[stock]``): the shipped lists against
their sources, which parameters take which resolution, the decode's exact membership, and bad input."""

from __future__ import annotations

import numpy as np
import pytest

import springsynth as ss
from springsynth.elements import registry
from springsynth.model.materials import catalogue
from springsynth.model.stock import shipped_lists, stock_list
from springsynth.search.encoding import Encoding
from springsynth.search.polish import _free_genes
from tests.conftest import write_study, write_target

IN = 25.4


def _names(form):
    return {lst.name: lst for lst in shipped_lists()[form]}


# --------------------------------------------------------------------------- the lists against their sources
def test_music_wire_is_the_astm_a228_series():
    mm = stock_list("music_wire", "wire").mm
    # ASTM A228/A228M tensile-requirements table as reproduced by Interwire Group's music wire page:
    # its first, last and some intermediate diameters, in inches
    for inch in (0.004, 0.010, 0.020, 0.029 + 0.001, 0.045, 0.072, 0.121, 0.177, 0.250):
        assert round(inch * IN, 4) in mm, inch
    assert mm[0] == pytest.approx(0.1016) and mm[-1] == pytest.approx(6.35)
    assert round(0.029 * IN, 4) not in mm       # that page lists 0.028 and 0.030 in, not 0.029


def test_en_10270_1_series():
    mm = stock_list("hard_drawn_a227", "wire").mm
    # EN 10270-1 tensile-strength table, first rows as reproduced by a wire maker (hengmingsteelwire.com):
    # 0.20, then 0.20 < d <= 0.22, <= 0.25, <= 0.28, <= 0.30, <= 0.32, <= 0.34
    assert mm[:7] == (0.20, 0.22, 0.25, 0.28, 0.30, 0.32, 0.34)
    # grade SM table of a spring maker (mollificiomodenese.it): 0.3 to 2.0 mm by 0.1, then these
    for d in [round(0.3 + 0.1 * i, 1) for i in range(18)] + [2.1, 2.4, 2.5, 2.6, 2.8, 3.0, 3.2, 3.4, 3.5, 3.6,
                                                            3.8, 4.0, 4.5, 5.0, 5.5, 6.0, 6.5, 7.0]:
        assert d in mm, d


def test_iso_3_r20_default():
    mm = shipped_lists()["default"].mm
    # ISO 3 series R20, rounded values of one decade
    r20 = (1.00, 1.12, 1.25, 1.40, 1.60, 1.80, 2.00, 2.24, 2.50, 2.80, 3.15, 3.55, 4.00, 4.50, 5.00, 5.60, 6.30,
           7.10, 8.00, 9.00)
    i = mm.index(1.0)
    assert mm[i:i + 20] == r20
    assert all(round(x / 10, 6) in mm and round(x / 100, 6) in mm for x in r20)
    assert all(round(x * 10, 6) in mm for x in r20 if x <= 5.0) and mm[-1] == 50.0


def test_every_list_names_its_source_and_memory_where_unchecked():
    for form in ("wire", "strip"):
        for lst in shipped_lists()[form]:
            assert len(lst.source) > 40, lst.name
            checked = ("interwiregroup" in lst.source) or ("hengming" in lst.source)
            assert checked or "[memory" in lst.source, lst.name
    assert "ISO 3" in shipped_lists()["default"].source


def test_every_catalogue_material_of_a_stock_form_has_its_own_list():
    named = {form: {m for lst in shipped_lists()[form] for m in lst.materials} for form in ("wire", "strip")}
    for mid, mat in catalogue().items():
        for form in ("wire", "strip"):
            if form in mat.forms:
                assert mid in named[form], (mid, form)
    assert set().union(*named.values()) <= set(catalogue())


def test_the_study_list_replaces_the_shipped_one():
    assert stock_list("music_wire", "wire", (0.8, 0.5)).mm == (0.5, 0.8)
    assert stock_list("no_such_material", "strip") == shipped_lists()["default"]


# --------------------------------------------------------------------------- which parameter takes what
#: the decision per kind (DEVELOPERS.md, "Stock sizes"): stock lists for wire diameters and strip, sheet or
#: plate thicknesses; 0.01 mm for a machined notch neck; gaps, preloads and formed rises on the offset grid;
#: every other length 0.1 mm (the elastomer pad is moulded or cut to size: a length); coils a quarter turn
EXPECTED = {
    "arch": {"length_mm": "length", "width_mm": "length", "thickness_mm": "stock", "rise_mm": "offset"},
    "blade_cantilever": {"length_mm": "length", "width_mm": "length", "thickness_mm": "stock"},
    "blade_clamped": {"length_mm": "length", "width_mm": "length", "thickness_mm": "stock"},
    "blade_guided": {"length_mm": "length", "width_mm": "length", "thickness_mm": "stock"},
    "column": {"length_mm": "length", "width_mm": "length", "thickness_mm": "stock", "rise_mm": "offset",
               "ends": "free"},
    "contact_sphere": {"radius_mm": "length"},
    "elastomer_pad": {"length_mm": "length", "width_mm": "length", "thickness_mm": "length"},
    "helical_compression": {"wire_diameter_mm": "stock", "mean_diameter_mm": "length", "active_coils": "coils",
                            "free_length_mm": "length"},
    "helical_extension": {"wire_diameter_mm": "stock", "mean_diameter_mm": "length", "active_coils": "coils",
                          "initial_tension_N": "free"},
    "notch_parallelogram": {"length_mm": "length", "width_mm": "stock", "thickness_mm": "fine",
                            "notch_radius_mm": "length"},
    "ribbon": {"width_mm": "length", "thickness_mm": "stock", "natural_radius_mm": "length"},
    "wire_guided": {"length_mm": "length", "wire_diameter_mm": "stock"},
}


def test_each_kind_declares_the_resolution_of_each_parameter():
    assert set(EXPECTED) == set(registry())
    for name, kind in registry().items():
        assert {q.name: q.resolution for q in kind.params} == EXPECTED[name], name
        for q in kind.params:       # a stock parameter is a wire diameter or a strip thickness, also in search coordinates
            assert (q.stock == "wire") == (q.tolerance == "wire"), (name, q.name)
        stock_search = {q.name for q in kind.search_params if q.stock}
        assert stock_search == {q.name for q in kind.params if q.stock}, name


# --------------------------------------------------------------------------- the decode
@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    d = tmp_path_factory.mktemp("stock")
    x = np.linspace(0, 6, 13)
    write_target(d / "lin.csv", x, 3.0 + 1.2 * x)
    return d


def _study(folder, extra="", elements=tuple(registry()), materials=tuple(catalogue()), name="study.toml"):
    p = write_study(folder, "lin.csv", elements=elements, materials=materials, extra=extra,
                    env=(120, 80, 60))
    target = folder / name
    p.replace(target)
    return ss.load_study(target)


def _on_grid(v, step):
    return np.allclose(v / step, np.round(v / step), atol=1e-7, rtol=0)


def test_decoded_designs_have_only_stock_sizes_and_grid_values(folder):
    st = _study(folder, extra="max_count = 3")
    enc = Encoding(st)
    X = np.random.default_rng(5).uniform(enc.xl, enc.xu, (600, enc.n_var))
    sl = enc.decode(X)
    seen = set()
    for s in range(enc.n_slots):
        for k, kind in enumerate(enc.kinds):
            rows = np.flatnonzero(sl.kind[:, s] == k)
            for j, q in enumerate(kind.params):
                v = sl.params[rows, s, j]
                r = q.resolution
                if r != "free":
                    assert np.all((v >= q.lo - 1e-12) & (v <= q.hi + 1e-12)), (kind.name, q.name)
                if r == "stock":
                    for i in rows:
                        m = enc.materials[sl.material[i, s]]
                        assert sl.params[i, s, j] in stock_list(m.id, q.stock).mm, (kind.name, m.id)
                    seen.add(kind.name)
                elif r in ("length", "fine", "coils", "offset"):
                    assert _on_grid(v, {"length": 0.1, "fine": 0.01, "coils": 0.25, "offset": 0.05}[r]), (kind.name, q.name)
                    assert np.array_equal(v, np.round(v, 9))        # written as short decimals
    assert seen == {n for n, e in EXPECTED.items() if "stock" in e.values()}
    assert _on_grid(sl.offset_mm, 0.05) and np.array_equal(sl.offset_mm, np.round(sl.offset_mm, 9))


def test_encode_then_decode_gives_the_same_design(folder):
    st = _study(folder)
    enc = Encoding(st)
    X = np.random.default_rng(9).uniform(enc.xl, enc.xu, (60, enc.n_var))
    sl = enc.decode(X)
    designs = [sl.design(i) for i in range(len(X))]
    sl2 = enc.decode(enc.encode(designs))
    assert np.array_equal(sl2.kind, sl.kind) and np.array_equal(sl2.material, sl.material)
    used = sl.kind >= 0         # an empty slot's offset and parameters mean nothing
    assert np.allclose(sl2.params[used], sl.params[used], rtol=1e-9, atol=0)   # rounded ones exactly (above)
    assert np.array_equal(sl2.offset_mm[used], sl.offset_mm[used])


def test_the_study_offset_step_and_own_stock_list(folder):
    st = _study(folder, extra='offset_step_mm = 0.2\n[stock]\nwire_mm = [0.8, 0.5, 1.2]',
                elements=("helical_compression",), materials=("music_wire",))
    enc = Encoding(st)
    sl = enc.decode(np.random.default_rng(1).uniform(enc.xl, enc.xu, (200, enc.n_var)))
    used = sl.kind >= 0
    assert set(np.unique(sl.params[..., 0][used])) == {0.5, 0.8, 1.2}
    assert _on_grid(sl.offset_mm, 0.2)


def test_continuous_leaves_every_value_free(folder):
    st = _study(folder, extra='stock = "continuous"', elements=("helical_compression",), materials=("music_wire",))
    enc = Encoding(st)
    sl = enc.decode(np.random.default_rng(1).uniform(enc.xl, enc.xu, (50, enc.n_var)))
    d = sl.params[..., 0][sl.kind >= 0]
    assert enc.stock_plan is None and len(np.unique(d)) == d.size
    assert not set(d) & set(stock_list("music_wire", "wire").mm)


def test_polish_keeps_stock_sizes_fixed(folder):
    st = _study(folder, elements=("blade_guided", "helical_compression"), materials=("stainless_302",))
    enc = Encoding(st)
    x = np.random.default_rng(2).uniform(enc.xl, enc.xu, (1, enc.n_var))[0]
    free = set(_free_genes(enc, x))
    for s in range(enc.n_slots):
        b = s * enc.genes_per_slot
        k = int(round(x[b])) - 1
        if k < 0:
            continue
        for j, q in enumerate(enc.kinds[k].search_params):
            assert ((b + 4 + j) in free) == (not q.stock and not q.choices and not q.integer)


def test_a_material_without_a_fitting_size_is_dropped_for_that_kind(folder):
    # titanium sheet starts at 0.3 mm; the ribbon's thickness ends at 1 mm, so titanium stays; polymers too.
    # A study list of 2 and 3 mm fits the blade (<= 5 mm) but not the ribbon (<= 1 mm): an error naming it
    with pytest.raises(ss.InputError, match=r"ribbon\.thickness_mm.*\[stock\] strip_mm"):
        _study(folder, extra="[stock]\nstrip_mm = [2.0, 3.0]", elements=("blade_guided", "ribbon"),
               materials=("stainless_302",))
    st = _study(folder, extra="[stock]\nstrip_mm = [0.5, 0.3]", elements=("blade_guided",), materials=("peek",))
    assert st.stock.strip_mm == (0.3, 0.5)


@pytest.mark.parametrize("extra, words", [
    ('stock = "std"', ["[search].stock", "'std'", '"standard"']),
    ("stock = true", ["[search].stock"]),
    ("offset_step_mm = 0", ["[search].offset_step_mm", "> 0"]),
    ("offset_step_mm = 50", ["[search].offset_step_mm", "at most 10"]),
    ("[stock]\nwire = [1.0]", ["[stock]", "did you mean 'wire_mm'"]),
    ("[stock]\nwire_mm = []", ["[stock].wire_mm", "non-empty list"]),
    ("[stock]\nwire_mm = 0.5", ["[stock].wire_mm", "non-empty list"]),
    ("[stock]\nwire_mm = [0.5, -1]", ["[stock].wire_mm", "-1"]),
    ('[stock]\nwire_mm = [0.5, "x"]', ["[stock].wire_mm", "'x'"]),
    ("[stock]\nwire_mm = [0.5, 0.8, 0.5]", ["[stock].wire_mm", "0.5 mm twice"]),
    ("[stock]\nwire_mm = [0.5, 12]", ["[stock].wire_mm", "12 mm lies outside", "helical_compression.wire_diameter_mm"]),
    ("[stock]\nstrip_mm = [0.01]", ["[stock].strip_mm", "0.01 mm lies outside", "blade_guided.thickness_mm 0.02"]),
])
def test_bad_stock_input_is_one_clear_line(folder, extra, words):
    with pytest.raises(ss.InputError) as e:
        _study(folder, extra=extra, elements=("blade_guided", "helical_compression"),
               materials=("stainless_302", "music_wire"), name="bad.toml")
    msg = str(e.value)
    assert "\n" not in msg and "bad.toml" in msg, msg
    for w in words:
        assert w in msg, (w, msg)
