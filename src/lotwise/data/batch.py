"""Whole-catalogue design: one single sampling plan per part, many at once.

An inspection department keeps a catalogue of the parts it receives, one row
per part with the lot size and the targets agreed with the supplier.
:func:`design_catalogue` designs every row and :func:`read_catalogue`
reads the file; ``lotwise batch`` glues them to the command line.

Catalogue columns (names are matched without regard to case; spaces and
hyphens count as ``_``):

==================== ======== ==================================================
column               required meaning
==================== ======== ==================================================
``part``             yes      part number (any text; copied through)
``lot_size``         yes      lot size; empty for a process or a very large lot
``aql``              yes      acceptable quality level: ``0.01``, ``1%``, ``250ppm``
``rql``              yes      rejectable quality level (LTPD), written the same way
``alpha``            no       producer's risk (default 5 %)
``beta``             no       consumer's risk (default 10 %)
``scheme``           no       plan family with a designer: ``single`` (the
                              default), ``double``, ``sequential``, ``chain`` or
                              ``variables``
``model``            no       ``hypergeometric``, ``binomial`` or ``poisson``
                              (default: the exact one for the row)
``fixed_c``          no       fix the acceptance number (0 for accept-on-zero)
``max_n``            no       largest affordable sample
``per_unit``          no       ``yes`` when the levels are nonconformities per unit
``deliveries_per_year`` no    lots received per year, for the yearly load
``ratio``            no       double: ``n2 / n1`` (default 2)
``minimize``         no       double: ``asn-aql`` (default) or ``asn-max``
``truncate``         no       sequential: most units before a forced decision
``sigma``            no       variables: ``known`` or ``unknown`` (default:
                              known when ``sigma_value`` is given)
``sigma_value``      no       variables: the known process standard deviation
``limit``            no       variables: ``upper``, ``lower`` or ``both``
                              (default: the limits given, else upper)
``upper``, ``lower`` no       variables: specification limits
``prior_a, prior_b`` no       a beta prior of the lot fraction nonconforming;
``cost_inspect``     no       with ``cost_escape`` (and optionally
``cost_escape``      no       ``cost_reject_lot``): design by least expected
``cost_reject_lot``  no       cost per lot (below)
==================== ======== ==================================================

The designer columns are the families' ``design_options`` in the registry
(:func:`option_columns`); a value in a column of another scheme than the
row's is an error for that row. A row of a scheme other than single is
designed by its family's designer (:func:`design_registered`); its ``n`` is
the most units one lot may take (the sample size of a fixed-sample plan;
``n1 + n2`` for a double plan, the truncation point for a sequential one),
``c`` is empty, ``plan`` its notation and ``model_used`` the model it is
judged by (for a variables plan its own, e.g. ``noncentral-t``; the lot size
does not enter it).

Rows with ``prior_a``, ``prior_b``, ``cost_inspect`` and ``cost_escape`` are
designed by cost: the single plan with the least expected cost per lot under
Hald's model (:func:`lotwise.analysis.cost.least_cost_single`, as ``lotwise
design --minimize cost``) that also holds the row's RQL at its ``beta``; they
need a ``lot_size`` and take no ``fixed_c``, ``max_n`` or ``per_unit``. When
the catalogue has any of these columns the output gains ``expected_cost``
(empty for the other rows).

Empty optional cells take the default. Every other column is copied through.
The output holds the input columns as read, then ``n``, ``c``, ``plan``
(notation such as ``n=80,c=2``, readable by ``lotwise check --plan`` and by
the ``plan`` column of lot records), ``model_used``, ``alpha_actual``,
``beta_actual`` (the plan's risks under ``model_used``, with the lot counts
rounded up at the AQL and down at the RQL as in ``lotwise design``),
``full_inspection``, ``units_per_year`` (``n`` times the deliveries, empty
without them) and ``error`` (empty when the row was designed; otherwise the
reason, and the plan columns are empty). A row that cannot be designed never
stops the batch.

``lotwise batch --json`` prints ``{"rows", "designed", "failed",
"distinct_designs", "units_per_lot", "units_per_year",
"rows_without_deliveries", "out", "errors": [{"line", "part", "error"}],
"dropped_columns"}``.

Method
------
Rows are normalised (levels parsed to fractions, the model resolved) and
identical design problems are solved once. The problems are then solved
together, as arrays, by the same search as
:func:`lotwise.families.single.design_single`: for each row, acceptance
numbers ``c = 0, 1, 2, ...`` in blocks; for each ``c`` the smallest ``n``
meeting the consumer's risk by integer bisection (``Pa`` falls in ``n``),
then the producer's risk checked there; the first acceptance number that
passes gives the plan. The bisection is bracketed around the Poisson
sample size ``lambda_beta(c) / RQL`` (with a finite-lot correction), each
end of the bracket verified before use and widened to the full range where
the check fails, so the bracket only saves work and never changes the
answer. Rows the array search does not settle (fixed ``n`` caps, targets no
plan can meet) are handed to :func:`design_single` itself, so their
messages are those of ``lotwise design``.

References
----------
.. [1] E. G. Schilling and D. V. Neubauer, 2nd ed. (CRC Press,
    2009), ch. 5 (two-point single plans).

Examples
--------
A buyer designs the plans of three parts in one go; the last row asks for
an RQL below its AQL:

>>> import pandas as pd
>>> cat = pd.DataFrame({"part": ["P-1", "P-2", "P-3"], "lot_size": ["", "2000", "500"],
...                     "aql": ["1%", "0.65%", "4%"], "rql": ["6%", "5%", "2%"]})
>>> out = design_catalogue(cat).table
>>> out[["part", "n", "c"]].iloc[:2].to_dict("list")
{'part': ['P-1', 'P-2'], 'n': [110, 104], 'c': [3, 2]}
>>> out["error"].iloc[2].startswith("the RQL (2 %) must be above the AQL")
True
"""

from __future__ import annotations

import math
import sys
from dataclasses import dataclass, field

import numpy as np

from lotwise.core.types import Scope
from lotwise.core.quantities import (InputError, Infeasible, parse_count, parse_level, parse_rate,
                                     parse_risk)

__all__ = ["REQUIRED", "OPTIONAL", "OUTPUT", "SAFETY_NOTE", "BatchResult",
           "design_catalogue", "read_catalogue", "catalogue_frame",
           "progress_bar"]

REQUIRED = ("part", "lot_size", "aql", "rql")
OPTIONAL = ("alpha", "beta", "scheme", "model", "fixed_c", "max_n", "per_unit",
            "deliveries_per_year")
OUTPUT = ("n", "c", "plan", "model_used", "alpha_actual", "beta_actual", "full_inspection",
          "units_per_year", "error")

#: Printed with every batch: what sampling plans cannot do.
SAFETY_NOTE = ("Sampling cannot guarantee a lot free of nonconforming items. Critical "
               "characteristics need 100 % inspection or stricter plans as contract and "
               "regulation require; defer to your applicable standards and qualified quality "
               "professionals.")

_YES = {"yes", "y", "true", "1", "x"}
_NO = {"no", "n", "false", "0", ""}


# --- the catalogue ------------------------------------------------------------

@dataclass(frozen=True, kw_only=True)
class BatchResult:
    """Result of :func:`design_catalogue`.

    Attributes
    ----------
    table : pandas.DataFrame
        Input columns, then the :data:`OUTPUT` columns.
    rows, designed, failed : int
        Rows read, rows designed, rows carrying an error.
    distinct : int
        Distinct design problems solved (identical rows are solved once).
    units_per_lot : int
        Sum of ``n`` over the designed rows (one lot of each part).
    units_per_year : int or None
        Sum of ``n`` times the deliveries per year, over the designed rows
        that have a delivery rate; None when no row has one.
    rows_without_deliveries : int
        Designed rows left out of the yearly sum for want of a rate.
    """

    table: object
    rows: int
    designed: int
    failed: int
    distinct: int
    units_per_lot: int
    units_per_year: int | None
    rows_without_deliveries: int
    dropped_columns: tuple = field(default_factory=tuple)
    classes: object = field(default=None, repr=False)

    def csv_chunks(self, table=None, style=None):
        """The CSV text of ``table`` (default :attr:`table`; the same rows,
        columns possibly re-typed) in pieces, the plan columns formatted
        once per distinct design (:func:`lotwise.data.csvwrite.csv_chunks`);
        ``style`` (a :class:`lotwise.data.tables.CsvStyle`) sets the separator
        and decimal mark."""
        from lotwise.data.csvwrite import csv_chunks

        sep, dec = (",", ".") if style is None else (style.sep, style.decimal)
        return csv_chunks(self.table if table is None else table, classes=self.classes,
                          sep=sep, decimal=dec)

    def errors(self, lines) -> list:
        """The rows not designed as ``{"line", "part", "error"}`` dicts, in
        row order; ``lines`` holds each row's line number (taken on whole
        columns, never row by row)."""
        err = self.table["error"].to_numpy(dtype=object)
        idx = np.flatnonzero(err != "")
        parts = self.table["part"].take(idx).tolist()
        return [{"line": int(ln), "part": str(p), "error": str(e)}
                for ln, p, e in zip(np.asarray(lines)[idx].tolist(), parts, err[idx].tolist())]

    def summary(self) -> dict:
        return {"rows": self.rows, "designed": self.designed, "failed": self.failed,
                "distinct_designs": self.distinct, "units_per_lot": self.units_per_lot,
                "units_per_year": self.units_per_year,
                "rows_without_deliveries": self.rows_without_deliveries}


def read_catalogue(path, option: str = "CATALOGUE"):
    """Read a catalogue (CSV, or an ``.xlsx`` workbook) into a DataFrame of
    text (all columns as written, names normalised, numbers with decimal
    points; categorical columns, one code per cell) plus ``_line`` (the line
    each row starts on) and ``_shape`` (a problem with the row's field count,
    or ''); ``attrs["note"]`` says how a file not in plain CSV was read."""
    from lotwise.data.csvio import read_columns

    t = read_columns(path, option, keep=("part",))
    if "defects" in t.header:
        raise InputError(f"{option} ({t.source}) has the column defects, which was renamed "
                         f"per_unit (nonconformities per unit); rename the column")
    missing = [c for c in REQUIRED if c not in t.header]
    if missing:
        raise InputError(f"{option} ({t.source}) lacks the column(s) {', '.join(missing)}; "
                         f"required: {', '.join(REQUIRED)}")
    df = catalogue_frame(t)
    df.attrs["note"] = t.note  # how the file was read ('' for plain CSV)
    return df


def catalogue_frame(t):
    """A :class:`lotwise.data.csvio.Table` or :class:`~lotwise.data.csvio.Columns`
    as the DataFrame :func:`read_catalogue` returns."""
    import pandas as pd

    from lotwise.data.csvio import Columns

    if not isinstance(t, Columns):
        t = Columns.of(t)
    df = pd.DataFrame({h: pd.Series(t.data[h]) for h in t.header}) if len(t) else \
        pd.DataFrame({h: pd.Series(dtype=object) for h in t.header})
    df["_line"] = np.asarray(t.lines, dtype=np.int64)
    df["_shape"] = _shape_column(t.problems, len(t))
    return df


def _shape_column(problems: dict, m: int):
    """The shape problem of every row ('' where none) as a categorical column:
    one small code per row, not a million references to ''."""
    import pandas as pd

    texts = list(dict.fromkeys([""] + list(problems.values())))
    codes = np.zeros(m, dtype=np.int32)
    if problems:
        at = {t: k for k, t in enumerate(texts)}
        codes[np.fromiter(problems, dtype=np.int64)] = [at[p] for p in problems.values()]
    return pd.Categorical.from_codes(codes, categories=pd.Index(texts, dtype=object))


def _parse_unique(values, parse):
    """Map each distinct text through ``parse`` once: ``(value, error)``."""
    out = {}
    for v in set(values):
        try:
            out[v] = (parse(v), "")
        except InputError as exc:
            out[v] = (None, str(exc))
    return out


def _flag(text: str, column: str) -> bool:
    t = str(text).strip().lower()
    if t in _YES:
        return True
    if t in _NO:
        return False
    raise InputError(f"{column} ({text!r}) must be yes or no")


def design_catalogue(df, *, deliveries_per_year: float | None = None, progress=None,
                     chunk: int = 5_000) -> BatchResult:
    """Design every row of a catalogue.

    Parameters
    ----------
    df : pandas.DataFrame
        Columns as in the module table, values as text (as read from CSV).
    deliveries_per_year : float, optional
        Default delivery rate for rows without a ``deliveries_per_year`` value.
    progress : callable, optional
        Called as ``progress(done, total)`` with counts of distinct problems.
    chunk : int
        Distinct problems solved per array pass.

    Notes
    -----
    Rows whose design cells agree (the same text, or texts with the same
    value for alpha, beta, scheme, fixed_c, max_n and per_unit; any valid
    ``deliveries_per_year``) form one class: one row of each class is
    designed and its plan columns are copied to the others on whole
    columns, so a large catalogue costs its distinct problems, not its rows.
    """
    import pandas as pd

    from lotwise.data.classes import row_classes, text_codes

    df, dropped = _prepared(df)
    cols = [c for c in _design_columns() if c in df.columns]
    inv, first = row_classes(df, cols + ["_shape"], _canon())
    small = df.iloc[first][["part"] + cols + ["_line", "_shape"]].astype(object)
    small = small.reset_index(drop=True)
    rate = np.full(len(df), np.nan if deliveries_per_year is None else deliveries_per_year)
    if "deliveries_per_year" in df.columns:
        codes, texts = text_codes(df["deliveries_per_year"])
        per_text = np.array([_rate_or_nan(t, deliveries_per_year) for t in texts] or [0.0])
        rate = per_text[codes]
        # the rate enters units_per_year only (below): any valid one stands for all
        small.loc[np.isfinite(rate[first]), "deliveries_per_year"] = "0"
    res = _design_table(small, progress=progress, chunk=chunk)
    table = df.drop(columns=["_line", "_shape"])
    per_class = [c for c in res.table.columns if c not in small.columns]
    for col in per_class:
        table[col] = _spread(res.table[col], inv)
    per_class.remove("units_per_year")
    designed = (table["error"] == "").to_numpy() & table["n"].notna().to_numpy()
    n = table["n"].to_numpy(dtype=float, na_value=np.nan)
    per_year = np.where(designed & np.isfinite(rate), n * rate, np.nan)
    table["units_per_year"] = per_year
    have_rate = designed & np.isfinite(rate)
    return BatchResult(table=table, rows=len(df), designed=int(designed.sum()),
                       failed=int(len(df) - designed.sum()), distinct=res.distinct,
                       units_per_lot=int(n[designed].sum()),
                       units_per_year=int(round(float(np.nansum(per_year))))
                       if have_rate.any() else None,
                       rows_without_deliveries=int((designed & ~np.isfinite(rate)).sum()),
                       dropped_columns=dropped, classes=(inv, res.table[per_class]))


def _spread(column, inv):
    """A per-class column taken to the rows (row ``i`` gets class ``inv[i]``):
    numbers as they are, text as a categorical column (small codes into
    the distinct texts)."""
    import pandas as pd

    if column.dtype != object:
        return column.take(inv).reset_index(drop=True).array
    codes, uniq = pd.factorize(column.to_numpy(dtype=object), use_na_sentinel=False)
    return pd.Categorical.from_codes(codes[inv], categories=pd.Index(uniq, dtype=object))


def _design_columns() -> list:
    """The catalogue columns a row's design depends on."""
    return list(dict.fromkeys([c for c in REQUIRED + OPTIONAL if c != "part"]
                              + list(option_columns()) + list(COST_COLUMNS)))


def _canon() -> dict:
    """Class of a cell text for :func:`row_classes`: the parsed value (or
    the text where it is invalid), for the columns whose parsing needs
    nothing else of the row."""
    def by(parse, default):
        def f(text):
            if text == "":
                return ("value", default)
            try:
                return ("value", parse(text))
            except InputError:
                return ("text", text)
        return f

    return {"alpha": by(lambda v: parse_risk(v, "alpha"), 0.05),
            "beta": by(lambda v: parse_risk(v, "beta"), 0.10),
            "scheme": by(_scheme, "single"),
            "fixed_c": by(lambda v: parse_count(v, "fixed_c", minimum=0), -1),
            "max_n": by(lambda v: parse_count(v, "max_n", minimum=1), 0),
            "per_unit": by(lambda v: _flag(v, "per_unit"), False),
            "deliveries_per_year": by(lambda v: parse_rate(v, "deliveries_per_year") * 0, 0)}


def _rate_or_nan(text: str, default) -> float:
    """A row's delivery rate (NaN where none or invalid)."""
    if text == "":
        return np.nan if default is None else float(default)
    try:
        return parse_rate(text, "deliveries_per_year")
    except InputError:
        return np.nan


def _design_table(df, *, deliveries_per_year: float | None = None, progress=None,
                  chunk: int = 5_000) -> BatchResult:
    """Design every row of a catalogue, row by row (:func:`design_catalogue`
    hands it one row per class of identical design cells).

    Parameters
    ----------
    df : pandas.DataFrame
        Columns as in the module table, values as text (as read from CSV).
    deliveries_per_year : float, optional
        Default delivery rate for rows without a ``deliveries_per_year`` value.
    progress : callable, optional
        Called as ``progress(done, total)`` with counts of distinct problems.
    chunk : int
        Distinct problems solved per array pass.
    """
    import pandas as pd

    df, dropped = _prepared(df)
    m = len(df)
    rows = _parse_rows(df, deliveries_per_year)
    ok = rows.error == ""
    prob = pd.DataFrame({
        "model": rows.model, "aql": rows.aql, "rql": rows.rql, "alpha": rows.alpha,
        "beta": rows.beta, "lot": np.where(rows.has_lot, rows.lot, 0),
        "fixed_c": rows.fixed_c, "max_n": rows.max_n, "per_unit": rows.per_unit,
        "scheme": rows.scheme, "options": rows.options,
    })
    sol = _Designs.empty(m)
    distinct = 0
    good = prob[ok]
    if len(good):
        distinct = _solve(good, sol, np.flatnonzero(ok), progress, chunk)
    error = rows.error
    error[ok] = sol.error[ok]
    model = rows.model
    model[ok] = np.where(sol.model[ok] != "", sol.model[ok], model[ok])
    cost_col = _cost_designs(df, error, model, rows.lot, rows.aql, rows.rql, rows.alpha,
                             rows.beta, rows.per_unit, rows.fixed_c, rows.max_n,
                             (sol.n, sol.c, sol.alpha, sol.beta, sol.plan, sol.full))
    designed = (error == "") & (sol.n >= 0)
    rate = np.array([np.nan if v is None else float(v) for v in rows.deliv], dtype=float)
    out, per_year = _output_table(df, designed, sol, model, error, rate, cost_col)
    units_lot = int(sol.n[designed].sum())
    have_rate = designed & np.isfinite(rate)
    units_year = int(round(float(np.nansum(per_year)))) if have_rate.any() else None
    return BatchResult(table=out, rows=m, designed=int(designed.sum()),
                       failed=int(m - designed.sum()), distinct=distinct,
                       units_per_lot=units_lot, units_per_year=units_year,
                       rows_without_deliveries=int((designed & ~np.isfinite(rate)).sum()),
                       dropped_columns=dropped)


def _prepared(df):
    """A copy of the catalogue with the required columns checked, ``_line`` and
    ``_shape`` present and earlier output columns dropped: ``(df, dropped)``."""
    df = df.copy(deep=False)  # copy on write: the caller's columns are not copied
    for col in REQUIRED:
        if col not in df.columns:
            raise InputError(f"catalogue lacks the column {col}; required: {', '.join(REQUIRED)}")
    if "_line" not in df.columns:
        df["_line"] = np.arange(2, len(df) + 2)
    if "_shape" not in df.columns:
        df["_shape"] = ""
    dropped = tuple(c for c in OUTPUT if c in df.columns)
    if dropped:
        df = df.drop(columns=list(dropped))
    return df.reset_index(drop=True), dropped


@dataclass(frozen=True, kw_only=True)
class _Rows:
    """The catalogue's cells parsed, one element per row (object arrays), and
    the first problem found in each row (``error``, '' where none)."""

    per_unit: np.ndarray
    lot: np.ndarray
    has_lot: np.ndarray
    aql: np.ndarray
    rql: np.ndarray
    alpha: np.ndarray
    beta: np.ndarray
    scheme: np.ndarray
    options: np.ndarray
    fixed_c: np.ndarray
    max_n: np.ndarray
    deliv: np.ndarray
    model: np.ndarray
    error: np.ndarray


def _stripped(df, c, m):
    """Column ``c`` as stripped text (empty where the column is missing)."""
    if c not in df.columns:
        return np.full(m, "", dtype=object)
    return np.array([str(v).strip() if v is not None else "" for v in df[c].tolist()],
                    dtype=object)


def _column(text, name, parse, default=None, rows=None):
    """Parse each distinct text of column ``name`` once: ``(values, errors)``
    as object arrays (``rows`` restricts to a boolean mask)."""
    vals = text[name] if rows is None else text[name][rows]
    uniq, inv = np.unique(vals.astype(str), return_inverse=True)
    table = _parse_unique(uniq.tolist(), lambda v: default if v == "" else parse(v))
    parsed = np.array([table[v][0] for v in uniq.tolist()] + [None], dtype=object)[:-1]
    errs = np.array([table[v][1] for v in uniq.tolist()] + [None], dtype=object)[:-1]
    return parsed[inv], errs[inv]


def _note(error, errs, rows=None):
    """``error`` with ``errs`` filled in where a row has no problem yet
    (``rows`` restricts to a boolean mask, updated in place)."""
    if rows is None:
        return np.where(error != "", error, errs).astype(object)
    sub = error[rows]
    error[rows] = np.where(sub != "", sub, errs)
    return error


def _parse_rows(df, deliveries_per_year) -> _Rows:
    """Parse every cell once per distinct text; keep each row's first problem."""
    m = len(df)
    text = {c: _stripped(df, c, m) for c in REQUIRED + OPTIONAL}
    opt_cols = tuple(c for c in option_columns() if c in df.columns)
    text.update({c: _stripped(df, c, m) for c in opt_cols})
    shape = np.array([str(v) if v else "" for v in df["_shape"].tolist()], dtype=object)
    error = np.where(shape == "", "", "the line " + shape).astype(object)

    per_unit, e = _column(text, "per_unit", lambda v: _flag(v, "per_unit"), False)
    error = _note(error, e)
    per_unit = np.array([bool(v) for v in per_unit], dtype=bool)
    lot, e = _column(text, "lot_size", lambda v: parse_count(v, "lot_size", minimum=1,
                                                             maximum=10**12), None)
    error = _note(error, e)
    # Levels depend on per_unit (per unit or a fraction): parse under each.
    aql = np.full(m, None, dtype=object)
    rql = np.full(m, None, dtype=object)
    for flag in (False, True):
        sel = per_unit == flag
        if not sel.any():
            continue
        for name, target in (("aql", aql), ("rql", rql)):
            vals, e = _column(text, name, lambda v, f=flag, nm=name: _level(v, nm, f), None, sel)
            target[sel] = vals
            error = _note(error, e, sel)
    parsed = {}
    for name, parse, default in (
            ("alpha", lambda v: parse_risk(v, "alpha"), 0.05),
            ("beta", lambda v: parse_risk(v, "beta"), 0.10),
            ("scheme", _scheme, "single"),
            ("fixed_c", lambda v: parse_count(v, "fixed_c", minimum=0), -1),
            ("max_n", lambda v: parse_count(v, "max_n", minimum=1), 0),
            ("deliveries_per_year", lambda v: parse_rate(v, "deliveries_per_year"),
             deliveries_per_year)):
        parsed[name], e = _column(text, name, parse, default)
        error = _note(error, e)
    parsed["options"], e = _row_options(text, parsed["scheme"], opt_cols)
    error = _note(error, e)
    has_lot = np.array([v is not None for v in lot], dtype=bool)
    model, e = _resolve_models(text["model"], has_lot, per_unit)
    error = _note(error, e)
    return _Rows(per_unit=per_unit, lot=lot, has_lot=has_lot, aql=aql, rql=rql,
                 alpha=parsed["alpha"], beta=parsed["beta"], scheme=parsed["scheme"],
                 options=parsed["options"], fixed_c=parsed["fixed_c"], max_n=parsed["max_n"],
                 deliv=parsed["deliveries_per_year"], model=model, error=error)


def _resolve_models(model_text, has_lot, per_unit):
    """The model of each row (the lot size decides the exact one):
    ``(models, errors)``, each distinct combination checked once."""
    combo = np.array([f"{mt.lower()}|{int(hl)}|{int(dd)}" for mt, hl, dd in
                      zip(model_text.tolist(), has_lot.tolist(), per_unit.tolist())])
    ucombo, cinv = np.unique(combo, return_inverse=True)
    res_model = np.full(ucombo.size, None, dtype=object)
    res_err = np.full(ucombo.size, "", dtype=object)
    for j, key in enumerate(ucombo.tolist()):
        mt, hl, dd = key.split("|")
        scope = Scope(lot_size=1 if hl == "1" else None, per_unit=dd == "1")
        try:
            res_model[j] = scope.check_model(mt or None, "model")
        except InputError as exc:
            res_err[j] = str(exc).replace("(--lot-size)", "(a lot_size value)")
    return res_model[cinv], res_err[cinv]


@dataclass(frozen=True, kw_only=True)
class _Designs:
    """Plans found, one element per problem (filled in place)."""

    n: np.ndarray
    c: np.ndarray
    alpha: np.ndarray
    beta: np.ndarray
    plan: np.ndarray
    error: np.ndarray
    full: np.ndarray
    model: np.ndarray  # a family's own model (variables), else ""

    @classmethod
    def empty(cls, size: int) -> "_Designs":
        return cls(n=np.full(size, -1, dtype=np.int64), c=np.full(size, -1, dtype=np.int64),
                   alpha=np.full(size, np.nan), beta=np.full(size, np.nan),
                   plan=np.full(size, "", dtype=object), error=np.full(size, "", dtype=object),
                   full=np.zeros(size, dtype=bool), model=np.full(size, "", dtype=object))


_KEYCOLS = ["scheme", "model", "aql", "rql", "alpha", "beta", "lot", "fixed_c", "max_n",
            "per_unit", "options"]


def _solve(good, sol: _Designs, rows_ok, progress, chunk: int) -> int:
    """Solve the valid rows ``good`` (at positions ``rows_ok``), identical
    problems once, into ``sol``; returns the number of distinct problems."""
    for col in ("aql", "rql", "alpha", "beta"):
        good[col] = good[col].astype(float)
    for col in ("lot", "fixed_c", "max_n"):
        good[col] = good[col].astype(np.int64)
    # Identical problems solved once: groups numbered in order of first
    # appearance, which is also the order drop_duplicates keeps.
    codes = good.groupby(_KEYCOLS, sort=False).ngroup().to_numpy()
    u = good.drop_duplicates(_KEYCOLS)[_KEYCOLS].reset_index(drop=True)
    total = len(u)
    usol = _Designs.empty(total)
    if progress is not None:
        progress(0, total)
    done = _solve_by_arrays(u, usol, progress, chunk)
    _solve_one_by_one(u, usol, progress, done)
    if progress is not None:
        progress(total, total)
    settled = (usol.n >= 0) & (usol.plan == "")
    usol.plan[settled] = [f"n={a},c={b}" for a, b in zip(usol.n[settled], usol.c[settled])]
    lots = u["lot"].to_numpy()
    usol.full[:] = usol.full | ((lots > 0) & (usol.n >= lots))
    for name in ("n", "c", "alpha", "beta", "plan", "full", "error", "model"):
        getattr(sol, name)[rows_ok] = getattr(usol, name)[codes]
    return total


def _solve_by_arrays(u, usol: _Designs, progress, chunk: int) -> int:
    """The families' array searches (``Family.design_many``, e.g. single plans) for the
    problems they can take; returns how many problems they were given."""
    from lotwise.families.base import family
    from lotwise.families.single_many import whole_counts

    many = {s: family(s).array_designer() for s in u["scheme"].unique()}
    many = {s: f for s, f in many.items() if f is not None}
    # Nonconformities per unit (c may exceed n) and a largest sample go to the
    # family's own designer.
    simple = (u["scheme"].isin(list(many)) & (u["max_n"] == 0) & (u["rql"] > u["aql"])
              & (u["alpha"] + u["beta"] < 1.0) & ~u["per_unit"].astype(bool)).to_numpy().copy()
    hyper = (u["model"] == "hypergeometric").to_numpy()
    if hyper.any():
        Nh = u["lot"].to_numpy(dtype=float)
        d1 = whole_counts(u["aql"].to_numpy(), Nh, "up")
        d2 = whole_counts(u["rql"].to_numpy(), Nh, "down")
        simple &= ~hyper | ((d2 >= 1) & (d1 < d2))
    done = 0
    for scheme, design_many in many.items():
        mine = simple & (u["scheme"] == scheme).to_numpy()
        for mdl in ("hypergeometric", "binomial", "poisson"):
            idx = np.flatnonzero(mine & (u["model"] == mdl).to_numpy())
            for s in range(0, idx.size, chunk):
                part = idx[s:s + chunk]
                n_, c_, a_, b_ = design_many(
                    model=mdl, aql=u["aql"].to_numpy()[part], rql=u["rql"].to_numpy()[part],
                    alpha=u["alpha"].to_numpy()[part], beta=u["beta"].to_numpy()[part],
                    lot_size=u["lot"].to_numpy()[part], fixed_c=u["fixed_c"].to_numpy()[part])
                usol.n[part], usol.c[part], usol.alpha[part], usol.beta[part] = n_, c_, a_, b_
                done += part.size
                if progress is not None:
                    progress(done, len(u))
    return done


def _solve_one_by_one(u, usol: _Designs, progress, done: int) -> None:
    """Everything the array search did not settle goes through the single
    designer (or a scheme's own), whose messages the rows then carry."""
    rest = np.flatnonzero(usol.n < 0)
    # plain dicts, taken on whole columns: row-by-row indexing costs more than the design
    records = u.take(rest).to_dict("records")
    for k, (i, row) in enumerate(zip(rest.tolist(), records)):
        try:
            res = _design_one(row)
        except (Infeasible, InputError) as exc:
            usol.error[i] = str(exc).replace("--max-n", "max_n").replace("--lot-size", "lot_size")
        else:
            usol.n[i], usol.c[i] = res["n"], res["c"]
            usol.alpha[i], usol.beta[i] = res["alpha_actual"], res["beta_actual"]
            usol.plan[i] = res.get("plan", "")
            usol.full[i] = bool(res.get("full_inspection", False))
            usol.model[i] = res.get("model", "")
        if progress is not None and k % 50 == 0:
            progress(done + k, len(u))


def _output_table(df, designed, sol: _Designs, model, error, rate, cost_col=None):
    """The input columns then the :data:`OUTPUT` columns: ``(table, per_year)``."""
    import pandas as pd

    out = df.drop(columns=["_line", "_shape"]).copy()
    out["n"] = pd.array(np.where(designed, sol.n, 0), dtype="Int64")
    out.loc[~designed, "n"] = pd.NA
    out["c"] = pd.array(np.where(designed, sol.c, 0), dtype="Int64")
    out.loc[~designed | (sol.c < 0), "c"] = pd.NA  # no c: a scheme other than single
    out["plan"] = np.where(designed, sol.plan, "")
    out["model_used"] = np.where(designed, np.where(model == None, "", model), "")  # noqa: E711
    out["alpha_actual"] = np.where(designed, sol.alpha, np.nan)
    out["beta_actual"] = np.where(designed, sol.beta, np.nan)
    out["full_inspection"] = np.where(designed, np.where(sol.full, "yes", "no"), "")
    per_year = np.where(designed & np.isfinite(rate), sol.n * rate, np.nan)
    out["units_per_year"] = per_year
    if cost_col is not None:
        out.insert(len(out.columns), "expected_cost", np.where(designed, cost_col, np.nan))
    out["error"] = error
    return out, per_year


def _level(v, name, per_unit):
    return parse_level(v, name, per_unit=per_unit)


def _scheme(v):
    from lotwise.families.base import designable

    s = str(v).strip().lower()
    names = designable()
    if s not in names:
        raise InputError(f"scheme ({v}) must be one of: {', '.join(names)}")
    return s


def option_columns() -> dict[str, list[str]]:
    """Catalogue columns that are designer options, ``column -> schemes
    taking it``: the families' ``design_options`` from the registry (``n``,
    ``c`` and ``max_n`` are the row's ``fixed_c`` and ``max_n`` columns)."""
    from lotwise.families.base import option_owners

    return option_owners()


def _row_options(text: dict, scheme, columns) -> tuple:
    """Each row's designer options as canonical JSON text, and its error.

    ``text``: column -> stripped cell texts; ``scheme``: each row's parsed
    scheme (None where it failed). A non-empty option cell must belong to
    the row's scheme and hold a value its designer takes.
    """
    import json

    from lotwise.families.base import design_option, family

    owners = option_columns()
    m = len(scheme)
    opts = np.full(m, "", dtype=object)
    errs = np.full(m, "", dtype=object)
    if not columns:
        return opts, errs
    for i in range(m):
        given = {c: text[c][i] for c in columns if text[c][i] != ""}
        if not given or scheme[i] is None:
            continue
        try:
            fam = family(scheme[i], "scheme")
            out = {}
            for col, cell in given.items():
                if col not in fam.design_options:
                    raise InputError(f"{col} ({cell}) applies to scheme "
                                     f"{' or '.join(owners[col])}, not to {scheme[i]}")
                out[col] = design_option(fam, col, cell, col, text=True)
            opts[i] = json.dumps(out, sort_keys=True)
        except InputError as exc:
            errs[i] = str(exc)
    return opts, errs


def design_registered(*, scheme: str, aql: float, rql: float, alpha: float, beta: float,
                      lot_size: int | None, model: str | None, per_unit: bool,
                      fixed_c: int | None, max_n: int | None, options: dict) -> dict:
    """One catalogue problem through the designer of family ``scheme`` (the
    registry's common signature) and judged as ``lotwise check`` judges it.

    Returns a dict with the keys ``n`` (the most units one lot may take: the
    sample size of a fixed-sample plan), ``c`` (the plan's one acceptance
    number, -1 for plans without one), ``plan`` (notation), ``model`` (the
    model the plan is judged by), ``alpha_actual``, ``beta_actual`` and
    ``full_inspection``; raises Infeasible or InputError with the reason.
    """
    from lotwise.analysis.compare import plan_risks
    from lotwise.core.types import Targets
    from lotwise.families.base import families, family

    fam = family(scheme, "scheme")
    kw = dict(options)
    if fixed_c is not None:
        if "c" not in fam.design_options:
            takes = [f.name for f in families() if "c" in f.design_options]
            raise InputError(f"fixed_c ({fixed_c}) applies to scheme {' or '.join(takes)}, "
                             f"not to {scheme}")
        kw["c"] = fixed_c
    if max_n is not None:
        if "max_n" not in fam.design_options:
            raise InputError(f"max_n ({max_n}) does not apply to scheme {scheme}")
        kw["max_n"] = max_n
    try:
        d = fam.design(aql=aql, rql=rql, alpha=alpha, beta=beta, lot_size=lot_size,
                       model=model, per_unit=per_unit, **kw)
    except InputError as exc:  # name the catalogue's columns, not the command's options
        msg = str(exc)
        for key in fam.design_options:
            column = "fixed_c" if key == "c" else key
            msg = msg.replace(f"--{key.replace('_', '-')} ", f"{column} ")
        raise InputError(msg) from None
    plan = d.plan
    targets = Targets(aql=aql, rql=rql, alpha=alpha, beta=beta)
    mdl, pa_aql, pa_rql = plan_risks(plan, targets, Scope(lot_size=lot_size, per_unit=per_unit),
                                     model)
    c = plan.sole_acceptance_number
    return {"n": int(plan.max_sample), "c": -1 if c is None else int(c),
            "plan": plan.notation(), "model": mdl,
            "alpha_actual": 1.0 - pa_aql, "beta_actual": pa_rql,
            "full_inspection": bool(lot_size and plan.max_sample >= lot_size)}


def _design_one(row) -> dict:
    """One problem through its family's designer (:func:`design_registered`)."""
    import json

    return design_registered(
        scheme=row["scheme"], aql=float(row["aql"]), rql=float(row["rql"]),
        alpha=float(row["alpha"]), beta=float(row["beta"]),
        lot_size=int(row["lot"]) or None, model=row["model"], per_unit=bool(row["per_unit"]),
        fixed_c=int(row["fixed_c"]) if int(row["fixed_c"]) >= 0 else None,
        max_n=int(row["max_n"]) or None,
        options=json.loads(row["options"]) if row["options"] else {})


def _amount(v, name):
    """A prior parameter or a cost: a finite number above 0 (0 allowed for
    cost_reject_lot)."""
    try:
        x = float(str(v).replace("_", ""))
    except ValueError:
        x = float("nan")
    low = 0.0 if name == "cost_reject_lot" else None
    if not math.isfinite(x) or x < 0 or (x == 0 and low is None):
        raise InputError(f"{name} ({v}) must be a " + ("number, 0 or more" if low == 0.0
                                                          else "positive number"))
    return x


#: Optional columns of a least-cost design (see the module notes).
COST_COLUMNS = ("prior_a", "prior_b", "cost_inspect", "cost_escape", "cost_reject_lot")


def _cost_designs(df, error, model, lot, aql, rql, alpha, beta, per_unit, fixed_c, max_n, cols):
    """Least-cost designs of the rows that give a prior and costs, written over
    the plan columns ``cols`` (n, c, alpha, beta, plan, full) and ``error``;
    returns the ``expected_cost`` column, or None when the catalogue has no
    cost columns."""
    if not any(c in df.columns for c in COST_COLUMNS):
        return None
    from lotwise.analysis.cost import Costs, least_cost_single
    from lotwise.analysis.prior import BetaPrior
    from lotwise.families.single import SinglePlan
    from lotwise.core.types import Targets

    m = len(df)
    text = {c: [str(v).strip() if v is not None else "" for v in df[c].tolist()]
            if c in df.columns else [""] * m for c in COST_COLUMNS}
    out = np.full(m, np.nan)
    n_col, c_col, a_col, b_col, plan_col, full_col = cols
    done: dict = {}
    for i in range(m):
        vals = {c: text[c][i] for c in COST_COLUMNS}
        if error[i] != "" or not any(vals.values()):
            continue
        try:
            need = [c for c in COST_COLUMNS[:4] if not vals[c]]
            if need:
                raise InputError(f"a cost design needs prior_a, prior_b, cost_inspect and "
                                 f"cost_escape; missing: {', '.join(need)}")
            for key, val, what in (("fixed_c", fixed_c[i] >= 0, "fixed_c"),
                                   ("max_n", max_n[i] > 0, "max_n"), ("per_unit", per_unit[i], "per_unit")):
                if val:
                    raise InputError(f"{what} does not apply to a cost design (prior and costs given)")
            if lot[i] is None:
                raise InputError("a cost design needs a lot_size (the costs are counted per lot)")
            num = {c: _amount(vals[c], c) if vals[c] else None for c in COST_COLUMNS}
            prior = BetaPrior(a=num["prior_a"], b=num["prior_b"])
            costs = Costs(inspect=num["cost_inspect"], escape=num["cost_escape"],
                          reject_lot=num["cost_reject_lot"])
            key = (lot[i], prior.a, prior.b, costs, rql[i], beta[i], model[i], aql[i], alpha[i])
            if key not in done:
                d = least_cost_single(lot_size=int(lot[i]), prior=prior, costs=costs, rql=rql[i],
                                      beta=beta[i], model=model[i], aql=aql[i])
                r = SinglePlan(n=d.n, c=d.c).risks(
                    Targets(aql=aql[i], rql=rql[i], alpha=alpha[i], beta=beta[i]),
                    Scope(lot_size=int(lot[i])), model[i])
                done[key] = (d, r)
            d, r = done[key]
        except (InputError, Infeasible) as exc:
            error[i] = str(exc).replace("prior a ", "prior_a ").replace("prior b ", "prior_b ") \
                .replace("--cost-", "cost_").replace("--lot-size", "lot_size")
            n_col[i] = c_col[i] = -1
            continue
        n_col[i], c_col[i], a_col[i], b_col[i] = d.n, d.c, r.alpha, r.beta
        plan_col[i], full_col[i], out[i] = f"n={d.n},c={d.c}", d.full_inspection, d.expected_cost
    return out


def progress_bar(total_rows: int, stream=None):
    """A rich progress bar on stderr when it is a terminal; else ``None``.

    Returns ``(callback, close)``: ``callback(done, total)`` and ``close()``.
    """
    stream = stream or sys.stderr
    if not (hasattr(stream, "isatty") and stream.isatty()):
        return None, lambda: None
    from rich.console import Console
    from rich.progress import BarColumn, MofNCompleteColumn, Progress, TextColumn, \
        TimeRemainingColumn

    prog = Progress(TextColumn("designing"), BarColumn(), MofNCompleteColumn(),
                    TextColumn("distinct designs"), TimeRemainingColumn(),
                    console=Console(file=stream), transient=True)
    prog.start()
    task = prog.add_task("batch", total=None)

    def cb(done, total):
        prog.update(task, completed=done, total=total)

    return cb, prog.stop
