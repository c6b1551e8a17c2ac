"""A small table of typed columns, parsed from CSV text: what a report and a run's other readers need
of ``pareto.csv`` without loading pandas (whose import alone costs a report rebuild some 0.3 s).

Each column is typed as pandas' CSV reader (default options) types it, so code written for a
``pandas.DataFrame`` of the same file sees the same values: ``int64`` when every cell is an
integer, ``float64`` when every cell is a number or missing (NaN), ``bool`` when every cell is
``True``/``False`` (``object``, True/False/NaN, with a missing one), else ``object`` holding the
strings (NaN where missing). Missing means an empty cell or one of pandas' default NA words
(``NaN``, ``nan``, ``NA``, ``N/A``, ``null``, ``None``, ...).
A row with more cells than the header is an error; one with fewer is padded with missing cells.

:func:`csv_text` writes columns as ``pandas.DataFrame(columns).to_csv(index=False,
float_format=..., lineterminator="\n")`` writes them, byte for byte, so that a run is written without
loading pandas either.
"""

from __future__ import annotations

import csv
import io
import math
import re
from typing import Iterator

import numpy as np

__all__ = ["Table", "TableError", "csv_text", "parse_csv", "to_floats"]

#: cells read as missing (pandas' default ``na_values``)
NA_WORDS = frozenset({"", "#N/A", "#N/A N/A", "#NA", "-1.#IND", "-1.#QNAN", "-NaN", "-nan", "1.#IND", "1.#QNAN",
                      "<NA>", "N/A", "NA", "NULL", "NaN", "None", "n/a", "nan", "null"})
_INT = re.compile(r"^[+-]?\d+$")
_FLOAT = re.compile(r"^[+-]?(\d+\.?\d*([eE][+-]?\d+)?|\.\d+([eE][+-]?\d+)?|inf|infinity)$", re.IGNORECASE)
_BOOL = {"true": True, "false": False}


class TableError(ValueError):
    """The text is not a table (no header, or a row longer than the header)."""


def _column(cells: list[str]) -> np.ndarray:
    """One column's cells typed as pandas would type them; shape (n,)."""
    present = [c for c in cells if c not in NA_WORDS]
    if not present:
        return np.full(len(cells), np.nan)
    if all(c.lower() in _BOOL for c in present):    # with a missing cell: objects, True/False/NaN
        if len(present) == len(cells):
            return np.array([_BOOL[c.lower()] for c in cells], bool)
        out = np.empty(len(cells), object)
        out[:] = [math.nan if c in NA_WORDS else _BOOL[c.lower()] for c in cells]
        return out
    if len(present) == len(cells) and all(_INT.match(c) for c in present):
        try:
            return np.array([int(c) for c in cells], np.int64)
        except OverflowError:
            pass
    if all(_INT.match(c) or _FLOAT.match(c.strip()) for c in present):
        return np.array([math.nan if c in NA_WORDS else float(c) for c in cells], float)
    out = np.empty(len(cells), object)
    out[:] = [math.nan if c in NA_WORDS else c for c in cells]
    return out


class Table:
    """Named columns of equal length, in file order (the part of ``pandas.DataFrame`` a run's readers use).

    ``table[name]`` is the column as a numpy array (see the module's notes for its dtype),
    ``name in table`` asks for a column (iterating gives the names), ``len(table)`` counts rows, ``table.iloc[i]`` and
    :meth:`iterrows` give rows as dicts ``{column: value}`` (numpy scalars, strings or NaN).
    """

    def __init__(self, columns: dict[str, np.ndarray]):
        self._cols = dict(columns)
        sizes = {len(v) for v in self._cols.values()}
        if len(sizes) > 1:
            raise ValueError(f"columns of unequal length {sorted(sizes)}")
        self._n = sizes.pop() if sizes else 0

    @property
    def columns(self) -> list[str]:
        return list(self._cols)

    def __len__(self) -> int:
        return self._n

    def __contains__(self, name) -> bool:
        return name in self._cols

    def __iter__(self) -> Iterator[str]:        # the column names, as a DataFrame iterates
        return iter(self._cols)

    def __getitem__(self, name: str) -> np.ndarray:
        return self._cols[name]

    def get(self, name: str, default=None):
        return self._cols.get(name, default)

    def row(self, i: int) -> dict:
        """Row ``i`` (negative counts from the end) as ``{column: value}``."""
        if not -self._n <= i < self._n:
            raise IndexError(f"row {i} of a table of {self._n} rows")
        return {k: v[i] for k, v in self._cols.items()}

    @property
    def iloc(self) -> "_Rows":
        return _Rows(self)

    def iterrows(self) -> Iterator[tuple[int, dict]]:
        for i in range(self._n):
            yield i, self.row(i)


class _Rows:
    def __init__(self, table: Table):
        self._t = table

    def __getitem__(self, i: int) -> dict:
        return self._t.row(int(i))


def parse_csv(text: str) -> Table:
    """The table of a CSV text with a header row; raises :class:`TableError` when it has no header
    or a row has more cells than the header."""
    rows = list(csv.reader(io.StringIO(text)))
    while rows and not rows[-1]:
        rows.pop()
    if not rows or not any(c.strip() for c in rows[0]):
        raise TableError("no columns to read (the file is empty)")
    head = rows[0]
    body = [r for r in rows[1:] if r]          # blank lines are skipped, as pandas skips them
    for k, r in enumerate(body, start=2):
        if len(r) > len(head):
            raise TableError(f"expected {len(head)} fields in line {k}, saw {len(r)}")
    cols = {name: _column([r[j] if j < len(r) else "" for r in body]) for j, name in enumerate(head)}
    return Table(cols)


def to_floats(column) -> np.ndarray:
    """A column as floats, NaN where a cell is missing or not a number (``pandas.to_numeric(...,
    errors="coerce")``); a column of a :class:`Table` or any sequence; shape (n,)."""
    arr = np.asarray(column)
    if arr.dtype.kind in "iufb":
        return arr.astype(float)
    out = np.full(arr.shape, np.nan)
    for i, v in enumerate(arr):
        if isinstance(v, str):
            v = v.strip()
            if not (_INT.match(v) or _FLOAT.match(v)):
                continue
        try:
            out[i] = float(v)
        except (TypeError, ValueError):
            pass
    return out


def _is_missing(v) -> bool:
    return v is None or (isinstance(v, (float, np.floating)) and math.isnan(v))


def _cells(values: list, float_format: str) -> list[str]:
    """One column's values as pandas writes them: typed as ``pandas.DataFrame`` types a column of
    Python or numpy values (bool, int64, float64 with NaN for missing, else object), each type
    written its own way (``float_format`` for float64 columns only, ``str`` in object columns,
    missing as an empty cell)."""
    def is_bool(v):
        return isinstance(v, (bool, np.bool_))

    def is_int(v):
        return isinstance(v, (int, np.integer)) and not is_bool(v)

    if values and all(is_bool(v) for v in values):
        return [str(bool(v)) for v in values]
    if values and all(is_int(v) for v in values):
        return [str(int(v)) for v in values]
    if all(is_int(v) or (isinstance(v, (float, np.floating)) and not is_bool(v)) or v is None for v in values):
        return ["" if _is_missing(v) else float_format % float(v) for v in values]
    return ["" if _is_missing(v) else str(v) for v in values]


def csv_text(columns: dict[str, list], *, float_format: str = "%.6g") -> str:
    """CSV text of named columns of equal length, as pandas writes the frame of the same columns
    (``pandas.DataFrame(columns).to_csv(index=False, float_format=float_format, lineterminator="\n")``):
    the same typing of each column, the same cells, minimal quoting by the csv module, and a bare newline
    for a table without columns."""
    if not columns:
        return "\n"
    n = {len(v) for v in columns.values()}
    if len(n) > 1:
        raise ValueError(f"columns of unequal length {sorted(n)}")
    cells = [_cells(list(v), float_format) for v in columns.values()]
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(list(columns))
    w.writerows(zip(*cells))
    return buf.getvalue()
