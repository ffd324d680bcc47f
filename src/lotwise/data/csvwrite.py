"""Writing large tables as CSV text, column by column.

:func:`csv_chunks` gives the same text as ``DataFrame.to_csv(index=False,
lineterminator="\\n")`` (minimal quoting, empty cells for missing values)
except that floats carry at most ten significant digits
(:func:`lotwise.core.numbers.csv_number`: no float noise such as
``0.006500000000000001``), and formats each column's distinct
values once and joins the rows in slices, so a million-row batch costs
seconds, not tens of seconds, and never holds the whole text twice.

Examples
--------
>>> import pandas as pd
>>> df = pd.DataFrame({"part": ["A", "B,1"], "n": pd.array([80, None], dtype="Int64"),
...                    "beta": [0.0912, float("nan")]})
>>> print(frame_csv(df), end="")
part,n,beta
A,80,0.0912
"B,1",,
>>> frame_csv(df) == df.to_csv(index=False, lineterminator="\\n")
True
>>> frame_csv(df, sep=";", decimal=",") == df.to_csv(index=False, lineterminator="\\n",
...                                                  sep=";", decimal=",")
True
"""

from __future__ import annotations

import csv
import io

import numpy as np

from lotwise.core.numbers import csv_number

__all__ = ["csv_chunks", "frame_csv"]

_SPECIAL = ('"', "\r", "\n")


def _quoted(text: str, sep: str = ",") -> str:
    """``text`` as the csv module writes one field (minimal quoting)."""
    if sep not in text and not any(ch in text for ch in _SPECIAL):
        return text
    buf = io.StringIO()
    csv.writer(buf, delimiter=sep, lineterminator="\n").writerow([text, ""])
    return buf.getvalue()[:-2]


def _float(v, decimal: str = ".") -> str:
    """A float to at most ten significant digits (:func:`csv_number`), with
    ``decimal`` as the mark."""
    text = csv_number(float(v))
    return text if decimal == "." else text.replace(".", decimal)


def _cell(v, decimal: str = ".") -> str:
    """One value of a column of mixed objects as pandas writes it."""
    import pandas as pd

    if v is None or v is pd.NA or v is pd.NaT:
        return ""
    if isinstance(v, (float, np.floating)):
        return "" if math.isnan(v) else _float(v, decimal)
    if isinstance(v, (bool, np.bool_)):
        return str(bool(v))
    if isinstance(v, (int, np.integer)):
        return str(int(v))
    return str(v)


def _fields(uniq, dtype, sep: str = ",", decimal: str = ".") -> list:
    """Distinct values of one column as CSV fields."""
    import pandas as pd

    vals = list(uniq)
    if pd.api.types.is_float_dtype(dtype):
        texts = ["" if v != v else _float(v, decimal) for v in vals]
    elif pd.api.types.is_bool_dtype(dtype) and not any(v is pd.NA for v in vals):
        texts = [str(bool(v)) for v in vals]
    elif pd.api.types.is_integer_dtype(dtype):
        texts = ["" if v is pd.NA or v is None else str(int(v)) for v in vals]
    elif all(type(v) is str for v in vals):
        texts = vals
    else:
        texts = [_cell(v, decimal) for v in vals]
    if any(ch in "\x00".join(texts) for ch in _SPECIAL + (sep,)):  # rare: quote where needed
        texts = [_quoted(t, sep) for t in texts]
    return texts


def _column_texts(col, sep: str = ",", decimal: str = "."):
    """``(codes, texts)``: a column as codes into its distinct cells written
    as CSV fields; a categorical column keeps its own (small) codes, ``-1``
    for a missing cell (see :func:`_slice_codes`)."""
    import pandas as pd

    if isinstance(col.dtype, pd.CategoricalDtype):
        texts = _fields(np.asarray(col.cat.categories, dtype=object).tolist(),
                        col.cat.categories.dtype, sep, decimal) + [""]
        return np.asarray(col.cat.codes), np.array(texts, dtype=object)
    text_like = isinstance(col.dtype, pd.StringDtype) or col.dtype == object
    values = col.to_numpy(dtype=object) if text_like else col.array
    codes, uniq = pd.factorize(values, use_na_sentinel=False)
    texts = _fields(list(uniq), col.dtype, sep, decimal)
    return np.asarray(codes, dtype=np.int32), np.array(texts or [""], dtype=object)


def _slice_codes(codes, texts, s: int, e: int, inv=None):
    """Codes of rows ``s:e`` (through each row's class ``inv`` when given),
    a missing cell (``-1``) pointing at the empty last text."""
    part = codes[inv[s:e]] if inv is not None else codes[s:e]
    part = part.astype(np.int32)
    part[part < 0] = len(texts) - 1
    return part


def _merged(cols, m: int, sep: str = ",") -> list:
    """Neighbouring columns whose value pairs repeat (at most ``m // 8``
    distinct pairs) joined into one, so the rows are joined from fewer
    pieces."""
    import pandas as pd

    out = [cols[0]]
    for codes, texts in cols[1:]:
        c0, t0 = out[-1]
        pair, first = pd.factorize(c0.astype(np.int64) * len(texts) + codes)
        if len(first) <= m // 8:
            first = np.asarray(first, dtype=np.int64)
            joined = [a + sep + b for a, b in zip(t0[first // len(texts)].tolist(),
                                                   texts[first % len(texts)].tolist())]
            out[-1] = (np.asarray(pair, dtype=np.int32), np.array(joined + [""], dtype=object))
        else:
            out.append((codes, texts))
    return out


def csv_chunks(df, rows: int = 25_000, classes=None, sep: str = ",", decimal: str = "."):
    """The CSV text of ``df`` (header, then the rows; no index) in pieces of
    ``rows`` rows; ``"".join`` of them equals ``df.to_csv(index=False,
    lineterminator="\\n")`` (with ``sep`` and ``decimal`` as given: floats
    are written with ``decimal`` as their mark).

    ``classes``, optional, is ``(inv, per_class)``: each row's class and a
    DataFrame with one row per class holding columns of ``df`` whose value
    is the same for every row of a class (``df[c] == per_class[c][inv]``);
    those columns are formatted once per class and taken row by row only a
    slice at a time, so no column of codes as long as the table is made.
    """
    if df.shape[1] < 2:  # a lone empty field is written quoted: pandas knows how
        yield df.to_csv(index=False, lineterminator="\n", sep=sep, decimal=decimal)
        return
    yield sep.join(_quoted(str(c), sep) for c in df.columns) + "\n"
    m = len(df)
    if not m:
        return
    cols = []
    for c in df.columns:
        if classes is not None and c in classes[1].columns:
            cols.append(_column_texts(classes[1][c], sep, decimal) + (classes[0],))
        else:
            cols.append(_column_texts(df[c], sep, decimal) + (None,))
    for s in range(0, m, rows):
        e = min(s + rows, m)
        parts = _merged([(_slice_codes(codes, texts, s, e, inv), texts)
                         for codes, texts, inv in cols], e - s, sep)
        parts = [texts[codes].tolist() for codes, texts in parts]
        if len(parts) == 1:
            yield "\n".join(parts[0]) + "\n"
        else:
            yield "\n".join([sep.join(r) for r in zip(*parts)]) + "\n"


def frame_csv(df, classes=None, sep: str = ",", decimal: str = ".") -> str:
    """The whole CSV text of ``df`` (see :func:`csv_chunks`)."""
    return "".join(csv_chunks(df, classes=classes, sep=sep, decimal=decimal))
