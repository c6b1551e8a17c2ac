"""Property-based fuzzing of the readers and the evaluator (hypothesis).

Readers: whatever the text, ``load_target``, ``read_toml``, ``study_from_mapping`` and
``design_from_mapping`` either return a validated object or raise ``InputError`` with a
one-line message; nothing else escapes. Evaluator: for any parameters (at and beyond
the bounds, zero, negative, huge), counts and offsets, no exception or warning escapes
and a design flagged finite carries only finite numbers; NaN or inf never reach the
search as a feasible result.

About 10,500 generated cases with the default profile (see ``conftest.py``).
"""

from __future__ import annotations

import copy
import math
import os
import shutil
import subprocess
import sys
import tempfile
import warnings
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from springsynth.assembly.evaluate import evaluate_population
from springsynth.assembly.slots import Slots
from springsynth.elements import registry
from springsynth.io.design_toml import design_from_mapping, read_toml
from springsynth.io.study_toml import study_from_mapping
from springsynth.io.target_csv import load_target
from springsynth.model.errors import InputError
from springsynth.model.materials import catalogue
from springsynth.model.target import Target
from tests.robustness.conftest import FUZZ, examples

COUNTS: dict[str, int] = {}


@pytest.fixture(scope="module")
def work():
    """A scratch folder holding a valid ``target.csv``, made when a fuzz test first needs it.

    Thousands of small rewrites: on a memory file system when there is one (a disk one
    may take milliseconds per write); removed after the module.
    """
    shm = "/dev/shm" if os.access("/dev/shm", os.W_OK) else None
    folder = Path(tempfile.mkdtemp(prefix="springsynth-fuzz-", dir=shm))
    (folder / "target.csv").write_text("displacement_mm,force_N,tolerance_N\n0,1,0.1\n1,2,0.1\n2,3,0.1\n3,4,0.1\n")
    yield folder
    shutil.rmtree(folder, ignore_errors=True)


def _count(name: str) -> None:
    COUNTS[name] = COUNTS.get(name, 0) + 1


def _one_line(e: InputError) -> None:
    msg = str(e)
    assert msg and "\n" not in msg and "\r" not in msg, repr(msg)


# ------------------------------------------------------------------------ target CSV

HEADS_OK = ["displacement_mm", "force_N", "tolerance_N", "force_min_N", "force_max_N", "weight",
            "displacement [in]", "force [lbf]", "force [kN]", "displacement [µm]", "displacement_m", "force [mN]"]
HEADS_BAD = ["disp", "force", "displacement", "force [furlong]", "force [mm]", "displacement [1/0]", "", "weight [N]",
             "force [2**99**99]", "Displacement_MM", "force []", "force [N", "tolerance", "force_N,", "x\ny",
             "force [N/mm]", "displacement [degC]", "force [%]", "force_kgf", "force_lbf", "force [(]", "dísplacement_mm"]
CELLS_ODD = ["", " ", "abc", "nan", "NaN", "inf", "-inf", "1e308", "-1e308", "1e-400", "1,5", "1;2", '"', '"1"',
             "\x00", "é", " 1 ", "0x10", "1_000", "--1", "+2", "1e5", "∞", "١", "#", "1.5.2", "\t"]

numbers = st.one_of(st.floats(allow_nan=True, allow_infinity=True, width=64).map(repr),
                    st.integers(-10**6, 10**6).map(str),
                    st.floats(0, 100).map(lambda v: f"{v:.3f}"))
cells = st.one_of(numbers, numbers, numbers, st.sampled_from(CELLS_ODD), st.text(max_size=6))
heads = st.one_of(st.sampled_from(["displacement_mm,force_N", "displacement_mm,force_N,tolerance_N",
                                   "displacement [in],force [lbf]", "displacement_mm,force_N,force_min_N,force_max_N",
                                   "displacement_mm,force [kN],weight"]),
                  st.lists(st.sampled_from(HEADS_OK + HEADS_BAD), min_size=1, max_size=6).map(",".join))


@st.composite
def csv_bytes(draw):
    head = draw(heads)
    ncol = head.count(",") + 1
    nrows = draw(st.integers(0, 8))
    monotone = draw(st.booleans())
    rows = []
    for i in range(nrows):
        width = ncol if draw(st.integers(0, 9)) else draw(st.integers(0, ncol + 2))
        row = [draw(cells) for _ in range(width)]
        if monotone and row:  # many rows valid enough to reach the later checks
            row[0] = repr(float(i))
            for j in range(1, len(row)):
                if draw(st.booleans()):
                    row[j] = repr(draw(st.floats(-100, 100)))
        rows.append(row)
    sep = draw(st.sampled_from([",", ",", ",", ";", "\t"]))
    nl = draw(st.sampled_from(["\n", "\r\n", "\r"]))
    lines = [head.replace(",", sep)] + [sep.join(r) for r in rows]
    if draw(st.booleans()):
        lines.insert(draw(st.integers(0, len(lines))), draw(st.sampled_from(["# comment", "", "   ", "#,,", ",,,"])))
    text = nl.join(lines) + draw(st.sampled_from(["", nl]))
    enc = draw(st.sampled_from(["utf-8", "utf-8", "utf-8", "utf-8-sig", "latin-1", "utf-16"]))
    data = text.encode(enc, errors="replace")
    if draw(st.integers(0, 9)) == 0:
        data += draw(st.binary(max_size=20))
    return data


@pytest.mark.slow
@settings(FUZZ, max_examples=examples(2600))
@given(csv_bytes())
def test_target_reader_raises_only_input_error(work, data):
    _count("target")
    p = work / "fuzz.csv"
    p.write_bytes(data)
    try:
        t = load_target(p)
    except InputError as e:
        _one_line(e)
        assert str(p) in str(e)
        return
    assert isinstance(t, Target)
    assert np.all(np.isfinite(t.x_mm)) and np.all(np.diff(t.x_mm) > 0) and t.x_mm[0] >= 0
    assert np.all(np.isfinite(t.force_N)) and np.all(np.isfinite(t.weight))
    if t.has_band:
        assert np.all(np.isfinite(t.force_lo_N)) and np.all(np.isfinite(t.force_hi_N))
        assert np.all(t.force_lo_N <= t.force_N) and np.all(t.force_N <= t.force_hi_N)


# ------------------------------------------------------------------------ TOML documents

STUDY = {
    "name": "fuzz",
    "target": {"file": "target.csv"},
    "envelope": {"length_mm": 60, "width_mm": 40, "height_mm": 30},
    "limits": {"stress_ratio": 0.8, "min_thickness_mm": 0.05, "max_mass_g": 50.0, "max_error_pct": 20.0},
    "search": {"elements": ["blade_guided", "column", "elastomer_pad"], "materials": ["stainless_17_7ph", "lab_rubber"],
               "max_elements": 3, "max_count": 4, "population": 40, "generations": 10, "seed": 1, "polish": True,
               "verify_top": 5, "robust": False},
    "materials": {"lab_rubber": {"law": "neo_hookean", "mu_MPa": 0.42, "density_kg_m3": 1100, "strain_limit": 0.5}},
}
DESIGN = {
    "name": "fuzz",
    "materials": {
        "lab_strip": {"E_MPa": 203000, "G_MPa": 75800, "nu": 0.3, "density_kg_m3": 7800, "yield_MPa": 1300,
                      "fatigue_MPa": 620, "forms": ["strip", "wire"]},
        "lab_ogden": {"law": "ogden", "mu_MPa": [0.6, 0.001, -0.01], "alpha": [1.3, 5.0, -2.0],
                      "density_kg_m3": 1100, "strain_limit": 0.5},
        "lab_mr": {"law": "mooney_rivlin", "C10_MPa": 0.3, "C01_MPa": 0.05, "density_kg_m3": 1100, "strain_limit": 0.6},
    },
    "element": [
        {"kind": "blade_guided", "material": "lab_strip", "count": 2, "offset_mm": 0.0,
         "length_mm": 24.0, "width_mm": 6.0, "thickness_mm": 0.25},
        {"kind": "helical_compression", "material": "music_wire", "count": 1, "offset_mm": -0.5,
         "wire_diameter_mm": 1.0, "mean_diameter_mm": 8.0, "active_coils": 6.0, "free_length_mm": 30.0},
        {"kind": "column", "material": "stainless_17_7ph", "count": 1, "offset_mm": 1.0, "length_mm": 30.0,
         "width_mm": 5.0, "thickness_mm": 0.3, "rise_mm": 1.0, "ends": "clamped"},
        {"kind": "elastomer_pad", "material": "lab_ogden", "length_mm": 20.0, "width_mm": 20.0, "thickness_mm": 5.0},
        {"kind": "elastomer_pad", "material": "lab_mr", "length_mm": 20.0, "width_mm": 20.0, "thickness_mm": 5.0},
    ],
}

VALUES = st.one_of(
    st.sampled_from([0, -1, 1, 2, 4, 7, 10**30, 10**400, -10**400, 0.0, -0.0, 0.5, -1e-300, 1e308, math.nan, math.inf,
                     -math.inf, True, False, "", "x", "60", "stainless_17_7ph", "blade_guided", "nan", ".", "/",
                     "target.csv", "../target.csv", "t\x00.csv", "x" * 300, [], [1], ["blade_guided"], ["x", 1],
                     {}, {"a": 1}, {"E_MPa": -1}, [[1, 2]], "pinned", "ogden", "neo_hookean"]),
    st.floats(allow_nan=True, allow_infinity=True),
    st.integers(-10**20, 10**20),
    st.text(max_size=8),
).map(copy.deepcopy)  # drawn lists and dicts are mutated later: never share them between cases
KEYS = st.sampled_from(["x", "length_mm", "populaton", "elements", "kind", "E_MPa", "mu_MPa", "alpha", "law", "file",
                        "count", "offset_mm", "name", "forms", "nu", "strain_limit", "rise_mm", "ends", "C01_MPa"])


def _paths(doc, prefix=()):
    """Every (path, container) in a nested dict/list document."""
    out = [prefix]
    if isinstance(doc, dict):
        for k, v in doc.items():
            out += _paths(v, prefix + (k,))
    elif isinstance(doc, list):
        for i, v in enumerate(doc):
            out += _paths(v, prefix + (i,))
    return out


def _get(doc, path):
    for k in path:
        doc = doc[k]
    return doc


@st.composite
def mutated(draw, base):
    doc = copy.deepcopy(base)
    for _ in range(draw(st.integers(1, 4))):
        paths = _paths(doc)
        path = draw(st.sampled_from(paths))
        op = draw(st.sampled_from(["set", "set", "set", "delete", "add", "wrap"]))
        if not path:
            op = "add"
        if op == "add":
            node = _get(doc, path)
            if isinstance(node, dict):
                node[draw(KEYS)] = draw(VALUES)
            elif isinstance(node, list):
                node.append(draw(VALUES))
            continue
        parent, key = _get(doc, path[:-1]), path[-1]
        if op == "delete":
            del parent[key]
        elif op == "set":
            parent[key] = draw(VALUES)
        else:
            parent[key] = [parent[key]]
    return doc


@pytest.mark.slow
@settings(FUZZ, max_examples=examples(2400))
@given(mutated(STUDY))
def test_study_mapping_raises_only_input_error(work, doc):
    _count("study")
    try:
        s = study_from_mapping(doc, where="fuzz.toml", base_dir=work)
    except InputError as e:
        _one_line(e)
        return
    assert s.search.population >= 4 and s.envelope.length_mm > 0 and s.limits.stress_ratio > 0


@pytest.mark.slow
@settings(FUZZ, max_examples=examples(3000))
@given(mutated(DESIGN))
def test_design_mapping_raises_only_input_error(doc):
    _count("design")
    try:
        d = design_from_mapping(doc, where="fuzz.toml")
    except InputError as e:
        _one_line(e)
        return
    assert d.elements
    for e in d.elements:
        assert 1 <= e.count and math.isfinite(e.offset_mm)


@pytest.mark.xfail(strict=True, raises=AssertionError,
                   reason="reader issue (found by the study fuzzing above, target.file = '\\r'): the 'not found' message "
                          "prints the resolved path raw, so a line break in the name splits the message")
@pytest.mark.parametrize("name", ["\r", "a\nb.csv"])
def test_target_file_with_a_line_break_gives_one_line(tmp_path, name):
    doc = copy.deepcopy(STUDY)
    doc["target"]["file"] = name
    with pytest.raises(InputError) as e:
        study_from_mapping(doc, where="fuzz.toml", base_dir=tmp_path)
    _one_line(e.value)


def _toml_text(doc) -> str:
    from springsynth.io.design_toml import toml_value as _fmt

    lines, tables = [], []
    for k, v in doc.items():
        (tables if isinstance(v, (dict, list)) and (isinstance(v, dict) or (v and isinstance(v[0], dict)))
         else lines).append((k, v))
    out = [f"{k} = {_fmt(v)}" for k, v in lines]
    for k, v in tables:
        if isinstance(v, list):
            for item in v:
                out += ["", f"[[{k}]]"] + [f"{kk} = {_fmt(vv)}" for kk, vv in item.items()]
            continue
        plain = {kk: vv for kk, vv in v.items() if not isinstance(vv, dict)}
        out += ["", f"[{k}]"] + [f"{kk} = {_fmt(vv)}" for kk, vv in plain.items()]
        for kk, vv in v.items():
            if isinstance(vv, dict):
                out += ["", f"[{k}.{kk}]"] + [f"{a} = {_fmt(b)}" for a, b in vv.items()]
    return "\n".join(out) + "\n"


STUDY_TEXT = _toml_text(STUDY)
DESIGN_TEXT = _toml_text(DESIGN)


@st.composite
def mutated_text(draw):
    text = draw(st.sampled_from([STUDY_TEXT, DESIGN_TEXT]))
    for _ in range(draw(st.integers(1, 3))):
        i = draw(st.integers(0, len(text)))
        j = min(len(text), i + draw(st.integers(0, 12)))
        ins = draw(st.one_of(st.sampled_from(["", "=", "[", "]", '"', "\n", "[[element]]\n", "nan", "inf", "1e999",
                                              "0", "-", "#", "\x00", "é", "\\", "'''", "1979-05-27", "true"]),
                             st.text(max_size=4)))
        text = text[:i] + ins + text[j:]
    raw = text.encode("utf-8", errors="surrogatepass") if draw(st.integers(0, 9)) else text.encode("latin-1", "replace")
    return raw


@pytest.mark.slow
@settings(FUZZ, max_examples=examples(1200))
@given(mutated_text())
def test_toml_text_raises_only_input_error(work, raw):
    _count("toml")
    p = work / "fuzz.toml"
    p.write_bytes(raw)
    try:
        doc = read_toml(p)
        if "element" in doc:
            design_from_mapping(doc, where=str(p))
        else:
            study_from_mapping(doc, where=str(p), base_dir=work)
    except InputError as e:
        _one_line(e)


# ------------------------------------------------------------------------ evaluator

KIND_NAMES = sorted(registry())


@st.composite
def populations(draw):
    """A small population of one kind with parameters anywhere, incl. beyond the bounds."""
    kind = registry()[draw(st.sampled_from(KIND_NAMES))]
    mats = tuple(m for m in catalogue().values() if m.suits(kind.forms))
    n = draw(st.integers(1, 4))
    params = np.zeros((n, 1, len(kind.params)))
    for i in range(n):
        for c, q in enumerate(kind.params):
            if q.choices:
                v = float(draw(st.integers(0, len(q.choices) - 1)))
            else:
                v = draw(st.one_of(
                    st.floats(q.lo, q.hi), st.floats(q.lo, q.hi), st.sampled_from([q.lo, q.hi]),
                    st.sampled_from([10 * q.hi, q.lo / 10, 0.0, 1e-12, 1e-300, 1e6, 1e300, -1.0, math.nan, math.inf]),
                    st.floats(allow_nan=True, allow_infinity=True)))
            params[i, 0, c] = v
    material = np.array([[draw(st.integers(0, len(mats) - 1))] for _ in range(n)], dtype=np.intp)
    count = np.array([[float(draw(st.sampled_from([1, 2, 4, 1000])))] for _ in range(n)])
    offset = np.array([[draw(st.one_of(st.sampled_from([0.0, -1e6, 1e6, 1e300, -1e300]), st.floats(-50, 50)))]
                       for _ in range(n)])
    # strokes up to 1e9 mm: far beyond any part; the arch kernel fails above about 1e17 (see the xfail below)
    x_end = draw(st.one_of(st.sampled_from([0.0, 1e-9, 1e4, 1e9]), st.floats(0, 500)))
    m = draw(st.integers(2, 12))
    return Slots(np.zeros((n, 1), np.intp), material, count, offset, params, (kind,), mats), np.linspace(0, x_end, m)


@pytest.mark.slow
@settings(FUZZ, max_examples=examples(800))
@given(populations())
def test_evaluator_never_returns_non_finite_as_finite(pop):
    _count("evaluator")
    slots, x = pop
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        r = evaluate_population(slots, x, detail=True)
    fin = r.finite
    assert np.isfinite(r.force_N).all()
    assert np.isfinite(r.stress_ratio[fin]).all() and np.all(r.stress_ratio[~fin] == np.inf)
    for arr in (r.box_mm, r.size_mm3, r.mass_g, r.stress_ratio_curve, r.element_force_N):
        assert np.isfinite(arr[fin]).all()
    for g in r.validity.values():
        assert not np.isnan(g).any()
    bad_input = ~np.all(np.isfinite(slots.params[:, 0]), axis=1) | ~np.isfinite(slots.offset_mm[:, 0])
    assert not fin[bad_input].any()


def _arch():
    if "arch" not in registry():
        pytest.skip("no arch kind")
    kind = registry()["arch"]
    mats = tuple(m for m in catalogue().values() if m.suits(kind.forms))
    return kind, mats


def test_absurd_stroke_is_flagged_not_raised():
    """Strokes beyond 1e9 mm (from a target, an offset or the API) mark a design not finite."""
    kind, mats = _arch()
    for off, x in ((0.0, [0.0, 1e300]), (-1e300, [0.0, 1.0]), (1e300, [0.0, 1.0])):
        slots = Slots(np.zeros((1, 1), np.intp), np.zeros((1, 1), np.intp), np.ones((1, 1)), np.full((1, 1), off),
                      np.array([[[5.0, 1.0, 1.0, 1.0]]]), (kind,), mats)
        r = evaluate_population(slots, np.array(x), detail=True)
        assert not r.finite[0] and np.isfinite(r.force_N).all()


@pytest.mark.xfail(reason="kernel issue (reported): the arch table lookup casts a stroke above ~1e17 mm to a "
                          "negative index; the assembly keeps such strokes away from kernels", raises=IndexError,
                   strict=True)
def test_arch_kernel_absurd_stroke():
    """The kernel itself at a stroke of 1e300 mm: a force array, zero at zero stroke, and far
    past the snap the beam only stretches, so the force is positive and at least that at 1e16 mm
    (inf is acceptable, NaN is not). Fails today with the IndexError above (strict: a fixed
    kernel makes this xfail an error until the mark is removed)."""
    from springsynth.model.materials import MaterialArrays

    kind, mats = _arch()
    p = {q.name: np.array([v]) for q, v in zip(kind.params, (5.0, 1.0, 1.0, 1.0))}
    mat = MaterialArrays.of(mats[0])
    with np.errstate(all="ignore"):
        far = kind.force(p, mat, np.array([[1e16]]))[0, 0]
        f = kind.force(p, mat, np.array([[0.0, 1e300]]))
    assert f.shape == (1, 2) and f[0, 0] == 0.0
    assert not np.isnan(f[0, 1]) and f[0, 1] >= far > 0


@pytest.mark.slow
def test_fuzz_case_count():
    """The suite above draws at least 10,000 cases (with the default profile)."""
    if os.environ.get("SPRINGSYNTH_FUZZ_SCALE", "1") != "1" or len(COUNTS) < 5:
        pytest.skip("count checked only when the whole module runs with the default profile")
    assert sum(COUNTS.values()) >= 10_000, COUNTS


# ------------------------------------------------------------------------ command-line round trips

@pytest.mark.slow
@pytest.mark.parametrize("data", [
    b"displacement_mm,force [2**9**9*N]\n0,1\n1,2\n2,3\n",
    b"\xff\xfe\x00d\x00i",
    b"displacement_mm,force_N\n0,1\n1,\"2\n2,3\n",
    b"displacement_mm,force_N,weight\n0,1,1\n1,2,-3\n2,3,1\n",
])
def test_cli_round_trip_bad_target(tmp_path, data):
    p = tmp_path / "t.csv"
    p.write_bytes(data)
    r = subprocess.run([sys.executable, "-m", "springsynth.cli", "check", str(p)], capture_output=True, text=True,
                       timeout=120, env={**os.environ, "NO_COLOR": "1"})
    assert r.returncode == 2 and "Traceback" not in r.stderr
    assert len(r.stderr.strip().splitlines()) == 1 and "t.csv" in r.stderr
