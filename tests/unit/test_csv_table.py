"""The pandas-free reading of pareto.csv (springsynth.model.table) against pandas' own reader."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest

from springsynth.model.table import TableError, parse_csv, to_floats

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
