"""Rows with the same cells, found on whole columns.

A large table often repeats itself: a catalogue of a million parts may hold
only a few thousand distinct design problems. :func:`row_classes` numbers the
classes of rows whose chosen cells agree, so the work can be done once per
class and copied back with one ``take``; :func:`text_codes` gives any column
(categorical as read by :func:`lotwise.data.csvio.read_columns`, or plain
objects) as integer codes into its distinct texts.

Examples
--------
>>> import pandas as pd
>>> df = pd.DataFrame({"a": ["1%", " 1%", "2%", "1%"], "b": ["x", "x", "x", "y"]})
>>> inv, first = row_classes(df, ["a", "b"])
>>> inv.tolist(), first.tolist()
([0, 0, 1, 2], [0, 2, 3])
"""

from __future__ import annotations

import numpy as np

__all__ = ["row_classes", "text_codes"]


def text_codes(column):
    """``(codes, texts)``: a column as codes into its distinct cells, each
    cell as stripped text (``None`` counts as empty, anything else through
    ``str``)."""
    import pandas as pd

    if isinstance(column.dtype, pd.CategoricalDtype):
        codes = np.asarray(column.cat.codes, dtype=np.int64)
        raw = np.asarray(column.cat.categories, dtype=object).tolist()
        if (codes < 0).any():  # a missing cell: NaN, as str() writes it
            codes = np.where(codes < 0, len(raw), codes)
            raw.append(float("nan"))
    else:
        codes, uniq = pd.factorize(np.asarray(column, dtype=object), use_na_sentinel=False)
        raw = list(uniq)
    texts = ["" if v is None else str(v).strip() for v in raw]
    return np.asarray(codes, dtype=np.int64), texts


def row_classes(df, columns, canon=None):
    """Classes of the rows of ``df`` whose cells in ``columns`` agree.

    Parameters
    ----------
    df : pandas.DataFrame
    columns : list of str
        Columns compared (stripped text).
    canon : dict, optional
        ``column -> function(text)`` giving a hashable class of a text (for
        example its parsed value), so that texts meaning the same thing fall
        in one class; the function is called once per distinct text.

    Returns
    -------
    inv : ndarray of int
        Each row's class, numbered in order of first appearance.
    first : ndarray of int
        The first row of each class.
    """
    import pandas as pd

    canon = canon or {}
    m = len(df)
    key = np.zeros(m, dtype=np.int64)
    for col in columns:
        codes, texts = text_codes(df[col])
        f = canon.get(col)
        ids: dict = {}
        cls = np.array([ids.setdefault(f(t) if f else t, len(ids)) for t in texts] or [0],
                       dtype=np.int64)
        key, _ = pd.factorize(key * max(len(ids), 1) + cls[codes])
        key = np.asarray(key, dtype=np.int64)
    if not m:
        return key, np.zeros(0, dtype=np.int64)
    _, first = np.unique(key, return_index=True)
    return key, first
