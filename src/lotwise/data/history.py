"""One part's lot history, for fitting a prior (``--prior-from lots.csv``).

The file is a lot log in the format :mod:`lotwise.data.records` reads
(``date, supplier, part, lot_size, sample_size, found, plan or plan_file,
disposition``). A prior needs only each lot's sample size and count found,
their order in time and which part (and supplier) they belong to, so only
those columns are read: the plan columns (a ``plan_file`` would need the
plans folder) and the dispositions play no part. Required: ``part``,
``sample_size``, ``found``; ``supplier`` when ``--supplier`` is given;
``date`` (``YYYY-MM-DD``, a time may follow) orders the lots when present,
file order otherwise (ties keep file order).

A row of the chosen part with a count that is not a whole number, a sample
of 0, ``found`` above ``sample_size`` or an unreadable date is a bad row
(reported with its line number, skipped), as in lot records.

Examples
--------
>>> import io
>>> log = io.StringIO("date,part,sample_size,found\\n2026-01-09,P-1,80,1\\n"
...                   "2026-01-02,P-1,80,0\\n2026-01-05,P-2,50,3\\n")
>>> h = read_history(log, part="P-1")
>>> h.sample_sizes.tolist(), h.found.tolist(), h.first_date, h.last_date
([80, 80], [0, 1], '2026-01-02', '2026-01-09')
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime

import numpy as np

from lotwise.core.quantities import InputError
from lotwise.data.csvio import read_table
from lotwise.data.records import BadRow

__all__ = ["LotHistory", "read_history"]


@dataclass(frozen=True, kw_only=True)
class LotHistory:
    """The lots of one part (and supplier), oldest first."""

    source: str
    part: str
    supplier: str | None
    sample_sizes: np.ndarray
    found: np.ndarray
    first_date: str | None
    last_date: str | None
    ordered_by: str
    bad_rows: tuple = ()

    @property
    def lots(self) -> int:
        return int(self.sample_sizes.size)

    def as_dict(self) -> dict:
        return {"source": self.source, "part": self.part, "supplier": self.supplier,
                "lots": self.lots, "first_date": self.first_date, "last_date": self.last_date,
                "ordered_by": self.ordered_by, "bad_rows": len(self.bad_rows)}


def _whole(text: str, name: str, minimum: int):
    try:
        v = int(text.replace("_", ""))
    except ValueError:
        return None, f"{name} ({text!r}) must be a whole number"
    if v < minimum:
        return None, f"{name} ({text}) must be at least {minimum}"
    return v, ""


def _some(items, k: int = 10) -> str:
    items = sorted(items)
    return ", ".join(items[:k]) + (f" and {len(items) - k} more" if len(items) > k else "")


def read_history(path, *, part: str, supplier: str | None = None,
                 option: str = "--prior-from") -> LotHistory:
    """The lots of ``part`` (of ``supplier`` when given) in time order.

    Raises :class:`InputError` naming ``option`` (or ``--part``/``--supplier``)
    when the file cannot be read, lacks a column, or holds no such lots.
    """
    t = read_table(path, option)
    need = ["part", "sample_size", "found"] + (["supplier"] if supplier is not None else [])
    missing = [c for c in need if c not in t.header]
    if missing:
        raise InputError(f"{option} ({t.source}) lacks the column(s) {', '.join(missing)}; "
                         "a prior needs part, sample_size and found (and supplier with "
                         "--supplier)")
    col = {h: i for i, h in enumerate(t.header)}
    rows = [(ln, [f.strip() for f in fields]) for ln, fields in zip(t.lines, t.fields)]
    parts = {r[col["part"]] for _, r in rows}
    if part not in parts:
        raise InputError(f"--part ({part}) is not in {t.source}; parts there: "
                         + _some(p for p in parts if p))
    rows = [(ln, r) for ln, r in rows if r[col["part"]] == part]
    if supplier is not None:
        names = {r[col["supplier"]] for _, r in rows}
        if supplier not in names:
            raise InputError(f"--supplier ({supplier}) has no lots of part {part} in "
                             f"{t.source}; suppliers of that part: " + _some(s for s in names if s))
        rows = [(ln, r) for ln, r in rows if r[col["supplier"]] == supplier]
    dated = "date" in col
    good, bad = [], []
    for order, (ln, r) in enumerate(rows):
        n, why_n = _whole(r[col["sample_size"]], "sample_size", 1)
        x, why_x = _whole(r[col["found"]], "found", 0)
        why = [w for w in (why_n, why_x) if w]
        if n is not None and x is not None and x > n:
            why.append(f"found ({x}) is more than sample_size ({n})")
        when = None
        if dated:
            try:
                when = datetime.fromisoformat(r[col["date"]])
            except ValueError:
                why.append(f"date ({r[col['date']]!r}) must be a date written YYYY-MM-DD")
        if why:
            bad.append(BadRow(line=int(ln), reason="; ".join(why)))
        else:
            good.append((when, order, n, x))
    if dated:
        good.sort(key=lambda g: (g[0], g[1]))
    dates = [g[0] for g in good] if dated else []
    return LotHistory(
        source=t.source, part=part, supplier=supplier,
        sample_sizes=np.array([g[2] for g in good], dtype=np.int64),
        found=np.array([g[3] for g in good], dtype=np.int64),
        first_date=dates[0].date().isoformat() if dates else None,
        last_date=dates[-1].date().isoformat() if dates else None,
        ordered_by="date" if dated else "file order", bad_rows=tuple(bad))
