"""Workbooks (``.xlsx``) read and written as tables, through pandas and openpyxl.

A workbook stands wherever a CSV table does: the first sheet is the table, its
first non-blank row the header, each later row one record whose *line* is the
sheet's row number (so a bad row is reported where the user sees it). Cells
are turned into the text a CSV file would hold (:func:`cell_text`): whole
numbers without a decimal point, other numbers in full (shortest round trip),
dates as ``YYYY-MM-DD`` (a time of day after a space), true/false as
``true``/``false``. A percentage-formatted cell holds its fraction: 0.65 %
is read as 0.0065.

Written workbooks (:func:`rows_xlsx`, :func:`frame_xlsx`) hold one sheet with
numbers as numbers (a text cell that is a plain number, such as an echoed
lot size ``5000``, too) and text as text; a sheet holds at most
:data:`MAX_ROWS` data rows.

Examples
--------
>>> import datetime
>>> [cell_text(v) for v in (80, 80.0, 0.0065, "0.65%", None, True,
...                         datetime.datetime(2026, 1, 7))]
['80', '80', '0.0065', '0.65%', '', 'true', '2026-01-07']
>>> sheet_rows(io.BytesIO(rows_xlsx(["part", "lot_size"], [["A-1", 500], ["A-2", 60]])),
...            "CATALOGUE")[1]
[(1, ['part', 'lot_size']), (2, ['A-1', '500']), (3, ['A-2', '60'])]
"""

from __future__ import annotations

import datetime as _dt
import io
import math
import re
from pathlib import Path

from lotwise.core.quantities import InputError

__all__ = ["MAX_ROWS", "is_xlsx", "cell_text", "sheet_rows", "rows_xlsx", "frame_xlsx"]

#: Data rows one sheet holds (1,048,576 rows, less the header).
MAX_ROWS = 1_048_575


def is_xlsx(path) -> bool:
    """Whether ``path`` names a workbook (``.xlsx``, any case)."""
    return (path is not None and not hasattr(path, "read") and str(path) != "-"
            and Path(str(path)).suffix.lower() == ".xlsx")


def cell_text(v) -> str:
    """One cell as the text a CSV file would hold."""
    if v is None or (isinstance(v, float) and math.isnan(v)):
        return ""
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if math.isfinite(v) and v == int(v) and abs(v) < 2.0**53:
            return str(int(v))
        return repr(v)
    if isinstance(v, _dt.datetime):
        return v.strftime("%Y-%m-%d") if v.time() == _dt.time(0) else \
            v.isoformat(sep=" ")
    if isinstance(v, (_dt.date, _dt.time)):
        return v.isoformat()
    return str(v)


def sheet_rows(path, option: str):
    """The first sheet of the workbook at ``path`` (a file name or a binary
    stream): ``(source, rows)``, ``rows`` being ``(line, cells)`` for every row
    that is not blank, its cells as :func:`cell_text` writes them and cut after
    the last non-empty one. :func:`lotwise.data.csvio.read_table` makes a
    table of them.

    Raises :class:`InputError` naming ``option`` when the file is missing or
    is no workbook.
    """
    import pandas as pd

    source = option if hasattr(path, "read") else str(path)
    if not hasattr(path, "read"):
        p = Path(path)
        if not p.exists():
            raise InputError(f"{option} ({p}) does not exist")
        if p.is_dir():
            raise InputError(f"{option} ({p}) is a folder; give a CSV or .xlsx file")
    try:
        df = pd.read_excel(path, sheet_name=0, header=None, dtype=object, engine="openpyxl",
                           na_filter=False)
    except Exception as exc:  # a zip that is no workbook, a damaged sheet, no permission
        why = getattr(exc, "strerror", None) or str(exc) or type(exc).__name__
        raise InputError(f"{option} ({source}) is not a readable .xlsx workbook: {why}") \
            from None
    rows = []
    for k, row in enumerate(df.itertuples(index=False, name=None)):
        cells = [cell_text(v) for v in row]
        used = max((j + 1 for j, c in enumerate(cells) if c.strip()), default=0)
        if used:
            rows.append((k + 1, cells[:used]))
    return source, rows


_INT = re.compile(r"^-?\d{1,15}$")
_FLOAT = re.compile(r"^-?(?:\d+\.\d*|\.\d+)(?:[eE][+-]?\d+)?$")


def _number(v):
    """A text cell that is a plain number (``5000``, ``0.0912``) as that
    number, so the sheet holds it as one; other values as they are."""
    if isinstance(v, str):
        t = v.strip()
        if _INT.match(t):
            return int(t)
        if _FLOAT.match(t):
            return float(t)
    return v


def _check_rows(m: int, option: str) -> None:
    if m > MAX_ROWS:
        raise InputError(f"{option}: {m:,} rows do not fit one .xlsx sheet (at most "
                         f"{MAX_ROWS:,}); write a CSV file instead")


def rows_xlsx(header, rows, *, option: str = "--csv", sheet: str = "table") -> bytes:
    """A workbook of one sheet: ``header``, then ``rows`` (numbers stay numbers)."""
    import pandas as pd

    rows = list(rows)
    _check_rows(len(rows), option)
    return frame_xlsx(pd.DataFrame(rows, columns=list(header)), option=option, sheet=sheet)


def frame_xlsx(df, *, option: str = "--out", sheet: str = "table") -> bytes:
    """A workbook of one sheet holding ``df`` (no index; missing values as
    empty cells, categorical columns as their values)."""
    import pandas as pd

    _check_rows(len(df), option)
    out = pd.DataFrame(index=range(len(df)))
    for c in df.columns:
        col = df[c].reset_index(drop=True)
        if isinstance(col.dtype, pd.CategoricalDtype) or col.dtype == object or \
                isinstance(col.dtype, pd.StringDtype):
            vals = col.astype(object).to_numpy()
            out[c] = [None if (v is None or v is pd.NA or (isinstance(v, float) and v != v))
                      else _number(v) for v in vals.tolist()]
        else:
            out[c] = col.astype(object).where(col.notna(), None).to_numpy()
    buf = io.BytesIO()
    with pd.ExcelWriter(buf, engine="openpyxl") as w:
        out.to_excel(w, index=False, sheet_name=sheet)
    return buf.getvalue()
