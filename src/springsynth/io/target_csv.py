"""Target force-displacement curves from CSV.

Columns: ``displacement``, ``force``; optional ``tolerance`` (a +/- band) or
``force_min`` and ``force_max``; optional ``weight``. Every header but ``weight``
carries a unit, as a suffix (``force_N``) or in brackets (``force [lbf]``); units
other than mm and N are converted with pint. Rows starting with ``#`` and blank rows
are skipped; the displacement must start at >= 0 and increase strictly; a target of
more than MAX_POINTS rows is resampled to RESAMPLED_POINTS evenly spaced points (with
a notice). Examples in ``targets/*.csv``.
"""

from __future__ import annotations

import csv
import math
import re
from array import array
from functools import lru_cache
from pathlib import Path

import numpy as np

from springsynth.model.errors import InputError
from springsynth.model.target import Target

__all__ = ["load_target", "MAX_POINTS"]

#: targets longer than this are resampled (with a notice) to RESAMPLED_POINTS points
MAX_POINTS = 2000
RESAMPLED_POINTS = 400

_COLUMNS = ("force_min", "force_max", "displacement", "tolerance", "force", "weight")
_HEADER = re.compile(r"^\s*(" + "|".join(_COLUMNS) + r")(?:_([A-Za-z0-9]+)|\s*\[\s*([^\]]*?)\s*\])?\s*$", re.I)
#: what a unit may look like: names joined by * / or spaces, each with an optional small integer power
#: (checked before pint parses it, which would evaluate arbitrary arithmetic such as ``2**1000**1000``)
_NAME = r"[^\W\d]\w*(?:\s*(?:\*\*|\^)\s*-?\d{1,2})?"
_UNIT = re.compile(rf"^{_NAME}(?:\s*[*/·]\s*{_NAME}|\s+{_NAME})*$")
_DIMENSION = {"displacement": ("[length]", "mm"), "force": ("[force]", "N"), "tolerance": ("[force]", "N"),
              "force_min": ("[force]", "N"), "force_max": ("[force]", "N")}


@lru_cache(maxsize=1)
def _ureg():
    import pint

    return pint.UnitRegistry()


def _factor(unit: str, column: str, where: str) -> float:
    """Multiplier from ``unit`` to mm or N for ``column``."""
    dim, base = _DIMENSION[column]
    if unit == base:
        return 1.0
    if len(unit) > 40 or not _UNIT.match(unit):
        raise InputError(f"unknown unit {unit!r} for {column}; use e.g. {base}", where=where)
    import tokenize

    import pint

    ureg = _ureg()
    try:
        q = ureg.Quantity(1.0, unit)
    except (pint.errors.UndefinedUnitError, pint.errors.DefinitionSyntaxError, ValueError, AttributeError, TypeError,
            AssertionError, ZeroDivisionError, tokenize.TokenError):
        raise InputError(f"unknown unit {unit!r} for {column}; use e.g. {base}", where=where) from None
    if q.dimensionality != ureg.Quantity(1.0, base).dimensionality:
        raise InputError(f"unit {unit!r} is not a {dim.strip('[]')} unit, as {column} needs (e.g. {base})", where=where)
    fac = float(q.to(base).magnitude)
    if not (math.isfinite(fac) and fac > 0):
        raise InputError(f"unit {unit!r} does not convert to a positive multiple of {base}; use e.g. {base}", where=where)
    return fac


def _parse_header(cells: list[str], where: str) -> dict[str, tuple[int, float]]:
    cols: dict[str, tuple[int, float]] = {}
    for j, raw in enumerate(cells):
        h = raw.strip()
        m = _HEADER.match(h)
        if not m:
            raise InputError(f"unknown column {h!r} (column {j + 1}); expected displacement_mm, force_N and "
                             f"optionally tolerance_N, force_min_N, force_max_N, weight", where=where)
        name = m.group(1).lower()
        unit = m.group(2) or m.group(3)
        if name in cols:
            raise InputError(f"column {name!r} appears twice (column {j + 1})", where=where)
        if name == "weight":
            if unit not in (None, "", "-"):
                raise InputError(f"weight takes no unit, got {unit!r}", where=where)
            cols[name] = (j, 1.0)
            continue
        if not unit:
            base = _DIMENSION[name][1]
            raise InputError(f"header {h!r} (column {j + 1}) has no unit; write {name}_{base} or {name} [unit]", where=where)
        cols[name] = (j, _factor(unit, name, f"{where} column {j + 1} ({h})"))
    for need in ("displacement", "force"):
        if need not in cols:
            raise InputError(f"missing column {need!r} (e.g. {need}_{_DIMENSION[need][1]}); found "
                             f"{', '.join(c.strip() for c in cells)}", where=where)
    if "tolerance" in cols and ("force_min" in cols or "force_max" in cols):
        raise InputError("give either tolerance or force_min/force_max, not both", where=where)
    if ("force_min" in cols) != ("force_max" in cols):
        raise InputError("force_min and force_max come together", where=where)
    return cols


def load_target(path: str | Path) -> Target:
    """Read and validate a target CSV; errors name the file, row and column.

    Steps: open (:func:`_open`), read the header and the rows into typed arrays
    (:func:`_read_table`), check the displacement (:func:`_displacement`), the band
    (:func:`_band`) and the weights (:func:`_weights`), and resample a long target
    (:func:`_resample`).
    """
    path = Path(path)
    where = str(path)
    fh = _open(path, where)
    try:
        with fh:
            data, rownos = _read_table(fh, where)
    except UnicodeDecodeError:
        raise InputError(_not_utf8(path), where=where) from None
    x = _displacement(data, rownos, where)
    f = _column(data, "force")
    lo, hi = _band(data, f, rownos, where)
    w = _weights(data, rownos, where)
    notices: list[str] = []
    if x.size > MAX_POINTS:
        notices.append(f"{x.size} rows resampled to {RESAMPLED_POINTS} evenly spaced points")
        x, f, lo, hi, w = _resample(x, f, lo, hi, w)
    return Target(x, f, lo, hi, w, name=where, notices=tuple(notices))


def _open(path: Path, where: str):
    """The file opened as UTF-8 text (a leading BOM skipped); a clear error when it cannot be."""
    try:
        return path.open("r", encoding="utf-8-sig", newline="")
    except FileNotFoundError:
        raise InputError("file not found; check the path", where=where) from None
    except IsADirectoryError:
        raise InputError("is a folder, not a CSV file", where=where) from None
    except (OSError, ValueError) as e:  # ValueError: a NUL in the path
        raise InputError(f"cannot be read ({getattr(e, 'strerror', None) or e})", where=where) from None


def _read_table(fh, where: str) -> tuple[dict[str, array], array]:
    """Header and rows of an open target CSV: the values of each column in mm or N, and the file row of each.

    Typed arrays, not lists of floats: a 10^6-row file stays a few tens of MB.
    """
    rows = _read_rows(fh, where)
    header_row, header = next(rows, (0, None))
    if header is None:
        raise InputError("is empty; expected a header displacement_mm,force_N and at least 3 rows", where=where)
    if len(header) == 1 and (";" in header[0] or "\t" in header[0]):
        sep = "semicolons" if ";" in header[0] else "tabs"
        raise InputError(f"row {header_row}: columns are separated by {sep}; use commas", where=where)
    cols = _parse_header(header, where)
    data: dict[str, array] = {c: array("d") for c in cols}
    rownos = array("q")
    for rowno, cells in rows:
        rownos.append(rowno)
        _read_row(rowno, cells, len(header), cols, data, where)
    return data, rownos


def _read_row(rowno: int, cells: list[str], ncol: int, cols: dict[str, tuple[int, float]],
              data: dict[str, array], where: str) -> None:
    """Append the converted values of one data row to ``data``; errors name the row and column."""
    if len(cells) != ncol:
        hint = ""
        if len(cells) > ncol and any(re.fullmatch(r"-?\d+", c.strip()) for c in cells[1:]):
            hint = " (decimal commas? use points, or quote each cell)"
        raise InputError(f"row {rowno} has {len(cells)} cells, the header has {ncol}{hint}", where=where)
    for name, (j, fac) in cols.items():
        text = cells[j].strip()
        try:
            v = float(text)
        except ValueError:
            hint = " (decimal comma? use a point)" if re.fullmatch(r"-?\d+,\d+", text) else \
                " (a quote opened in this cell is not closed)" if "\n" in text else ""
            raise InputError(f"row {rowno}, column {name}: {text!r} is not a number{hint}", where=where) from None
        if not math.isfinite(v):
            raise InputError(f"row {rowno}, column {name}: {text!r} is not a finite number", where=where)
        if not math.isfinite(v * fac):
            raise InputError(f"row {rowno}, column {name}: {text!r} overflows when converted to "
                             f"{_DIMENSION[name][1]}; check the value and the unit", where=where)
        data[name].append(v * fac)


def _column(data: dict[str, array], name: str) -> np.ndarray:
    """Column ``name`` as a new float array, shape (n,)."""
    return np.frombuffer(data[name], dtype=float).copy()


def _displacement(data: dict[str, array], rownos: array, where: str) -> np.ndarray:
    """The displacement column, mm, shape (n,): at least 3 rows, strictly increasing, from >= 0.

    Ordering faults are reported by file row (before any resampling).
    """
    x = _column(data, "displacement")
    if x.size < 3:
        raise InputError(f"has {x.size} data rows; at least 3 are needed", where=where)
    d = np.flatnonzero(np.diff(x) <= 0)
    if d.size:
        i = int(d[0])
        raise InputError(f"row {rownos[i + 1]}: displacement must increase strictly, but {x[i + 1]:g} mm "
                         f"follows {x[i]:g} mm", where=where)
    if x[0] < 0:
        raise InputError(f"row {rownos[0]}: displacement must be >= 0 (a stroke), got {x[0]:g} mm", where=where)
    return x


def _band(data: dict[str, array], f: np.ndarray, rownos: array, where: str):
    """Lower and upper force bounds, N, shape (n,) each (None, None without a band).

    From ``tolerance`` (>= 0, ``f -+ tolerance``) or from ``force_min`` and
    ``force_max`` (which must contain the force).
    """
    if "tolerance" in data:
        tol = _column(data, "tolerance")
        if np.any(tol < 0):
            i = int(np.flatnonzero(tol < 0)[0])
            raise InputError(f"row {rownos[i]}: tolerance must be >= 0, got {tol[i]:g} N", where=where)
        with np.errstate(over="ignore"):
            lo, hi = f - tol, f + tol
        bad = np.flatnonzero(~(np.isfinite(lo) & np.isfinite(hi)))
        if bad.size:
            i = int(bad[0])
            raise InputError(f"row {rownos[i]}: force +/- tolerance overflows ({f[i]:g} +/- {tol[i]:g} N); "
                             f"check the values and units", where=where)
        return lo, hi
    if "force_min" in data:
        lo, hi = (_column(data, c) for c in ("force_min", "force_max"))
        bad = np.flatnonzero(~((lo <= f) & (f <= hi)))
        if bad.size:
            i = int(bad[0])
            raise InputError(f"row {rownos[i]}: the band [{lo[i]:g}, {hi[i]:g}] N does not contain the force "
                             f"{f[i]:g} N", where=where)
        return lo, hi
    return None, None


def _weights(data: dict[str, array], rownos: array, where: str) -> np.ndarray | None:
    """The ``weight`` column (>= 0), shape (n,), or None."""
    if "weight" not in data:
        return None
    w = _column(data, "weight")
    if np.any(w < 0):
        i = int(np.flatnonzero(w < 0)[0])
        raise InputError(f"row {rownos[i]}: weight must be >= 0, got {w[i]:g}", where=where)
    return w


def _resample(x, f, lo, hi, w):
    """Every curve at RESAMPLED_POINTS evenly spaced displacements (linear interpolation).

    ``x``, ``f`` shape (n,); ``lo``, ``hi``, ``w`` shape (n,) or None. Returns the five,
    each shape (RESAMPLED_POINTS,) or None.
    """
    xs = np.linspace(x[0], x[-1], RESAMPLED_POINTS)
    f = np.interp(xs, x, f)
    lo = None if lo is None else np.interp(xs, x, lo)
    hi = None if hi is None else np.interp(xs, x, hi)
    w = None if w is None else np.interp(xs, x, w)
    return xs, f, lo, hi, w


def _read_rows(fh, where):
    """Yield (1-based file row, cells) for non-blank, non-comment rows."""
    reader = csv.reader(fh)
    while True:
        try:
            cells = next(reader)
        except StopIteration:
            return
        except csv.Error as e:
            raise InputError(f"row {reader.line_num + 1}: CSV syntax error: {e}", where=where) from None
        if not cells or all(not c.strip() for c in cells) or cells[0].lstrip().startswith("#"):
            continue
        yield reader.line_num, cells


def _not_utf8(path: Path) -> str:
    """Message for a file that is not UTF-8, naming the first bad row and byte."""
    with path.open("rb") as fh:
        head = fh.read(4)
        if head[:2] in (b"\xff\xfe", b"\xfe\xff"):
            return "is UTF-16 text; save it as UTF-8 CSV"
        fh.seek(0)
        for row, line in enumerate(fh, start=1):
            try:
                line.decode("utf-8-sig" if row == 1 else "utf-8")
            except UnicodeDecodeError as e:
                return (f"row {row} is not UTF-8 text (byte 0x{line[e.start]:02x} at position {e.start + 1}; "
                        f"Latin-1 or Windows-1252?); save it as UTF-8 CSV")
    return "is not UTF-8 text; save it as UTF-8 CSV"
