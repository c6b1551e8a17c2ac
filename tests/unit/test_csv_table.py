"""The pandas-free reading of pareto.csv (springsynth.model.table) against pandas' own reader."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest

from springsynth.model.table import TableError, csv_text, parse_csv, to_floats

_CSV = "\n".join([
    "design_id,err,count,feasible,note,mixed,empty,flag_na,big,neg",
    'D01,0.5,3,True,"ok, within",1.5,,True,1e300,-2',
    "D02,NaN,4,False,,abc,,,inf,-0.5",
    'D03,1e-3,5,True,"say ""hi""",2,,False,-inf,3',
    "",
    "D04,7,6,False,None,n/a,,,12,.5",
    "",
])


def test_columns_are_typed_and_valued_as_pandas_reads_them(tmp_path):
    # reference: pandas.read_csv with its default options (the reader pareto.csv was read with before)
    path = tmp_path / "p.csv"
    path.write_text(_CSV)
    ref = pd.read_csv(path)
    tab = parse_csv(_CSV)
    assert tab.columns == list(ref.columns) and len(tab) == len(ref) == 4
    for c in ref.columns:
        got, want = tab[c], ref[c].to_numpy()
        assert got.dtype == want.dtype, c
        for a, b in zip(got, want):
            if isinstance(b, float) and math.isnan(b):
                assert isinstance(a, float) and math.isnan(a), (c, a)
            else:
                assert a == b and type(a) is type(b), (c, a, b)
    for i in range(len(ref)):
        row, want = tab.iloc[i], ref.iloc[i]
        assert list(row) == list(want.index)
        assert str(row["note"]) == str(want["note"]) and str(row["feasible"]) == str(want["feasible"])
    assert [i for i, _ in tab.iterrows()] == [0, 1, 2, 3]
    assert "err" in tab and "nope" not in tab and list(tab) == list(ref)


def test_numbers_are_coerced_as_pandas_to_numeric_does():
    tab = parse_csv(_CSV)
    for c in ("err", "count", "mixed", "note", "empty", "big", "neg", "feasible"):
        want = pd.to_numeric(pd.Series(tab[c]), errors="coerce").to_numpy(float)
        np.testing.assert_array_equal(to_floats(tab[c]), want, err_msg=c)


@pytest.mark.parametrize("text", ["", "\n\n", "a,b\n1,2,3\n"])
def test_text_that_is_not_a_table_is_refused(text):
    with pytest.raises(TableError):
        parse_csv(text)


def test_a_short_row_is_padded_with_missing_cells():
    tab = parse_csv("a,b,c\n1,2\n3,4,x\n")
    assert list(tab["a"]) == [1, 3] and tab["a"].dtype == np.int64
    assert math.isnan(tab["c"][0]) and tab["c"][1] == "x"


#: columns of every type a run writes (floats with NaN and infinities, whole numbers, bools with and
#: without a missing value, text that needs quoting, numbers among text, empty tables)
_WRITE_CASES = [
    {"design_id": ["D01", "D02"], "err": [1.5, np.nan], "count": [3, np.int64(4)], "ok": [True, np.bool_(False)],
     "e1_kind": ["arch", np.nan], "note": ['say "hi"', "a, b"], "mixed": ["q", 0.123456789],
     "big": [1e301, -np.inf], "tiny": [np.float64(1.234567891e-12), -0.0], "flag": [True, np.nan],
     "whole_and_missing": [2, np.nan], "nothing": [np.nan, np.nan]},
    {"only": [np.nan, np.nan]},
    {"design_id": [], "displacement_mm": [], "force_N": []},
    {},
]


@pytest.mark.parametrize("columns", _WRITE_CASES)
@pytest.mark.parametrize("float_format", ["%.6g", "%.8g"])
def test_csv_text_writes_the_bytes_pandas_writes(columns, float_format):
    # reference: pandas' writer, with the options a run folder's tables were written with before
    ref = pd.DataFrame(columns).to_csv(index=False, float_format=float_format, lineterminator="\n")
    assert csv_text(columns, float_format=float_format) == ref


def test_a_table_written_then_read_keeps_its_values():
    cols = _WRITE_CASES[0]
    back = parse_csv(csv_text(cols, float_format="%.17g"))
    assert list(back["count"]) == [3, 4] and back["ok"].dtype == bool and math.isnan(back["err"][1])
    assert back["big"][0] == 1e301 and back["note"][1] == "a, b" and back["tiny"][0] == 1.234567891e-12
