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
``scheme``           no       plan family; ``single`` (the default) for now
``model``            no       ``hypergeometric``, ``binomial`` or ``poisson``
                              (default: the exact one for the row)
``fixed_c``          no       fix the acceptance number (0 for accept-on-zero)
``max_n``            no       largest affordable sample
``defects``          no       ``yes`` when the levels are nonconformities per unit
``deliveries_per_year`` no    lots received per year, for the yearly load
==================== ======== ==================================================

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

import importlib
import math
import sys
from dataclasses import dataclass, field

import numpy as np
from scipy import special

from lotwise.core import kernels as oc
from lotwise.core.types import Scope
from lotwise.core.quantities import InputError, Infeasible, parse_count, parse_level, parse_risk

__all__ = ["REQUIRED", "OPTIONAL", "OUTPUT", "SCHEMES", "SAFETY_NOTE", "BatchResult",
           "design_many", "design_catalogue", "read_catalogue", "catalogue_frame"]

REQUIRED = ("part", "lot_size", "aql", "rql")
OPTIONAL = ("alpha", "beta", "scheme", "model", "fixed_c", "max_n", "defects",
            "deliveries_per_year")
OUTPUT = ("n", "c", "plan", "model_used", "alpha_actual", "beta_actual", "full_inspection",
          "units_per_year", "error")

#: Plan families the batch can design: ``scheme -> "module:function"`` or
#: ``None`` for the built-in array search (single sampling). A function takes
#: one normalised problem as keywords (``aql, rql, alpha, beta, lot_size,
#: model, defects, fixed_c, max_n``) and returns a dict with the keys
#: ``n`` (the sample size a lot costs; the average sample number at the AQL
#: for plans whose sample varies), ``c``, ``plan`` (notation),
#: ``alpha_actual``, ``beta_actual``, ``full_inspection``; it raises
#: :class:`~lotwise.core.quantities.Infeasible` or
#: :class:`~lotwise.core.quantities.InputError` with the reason.
SCHEMES: dict[str, str | None] = {
    "single": None,
}

#: Printed with every batch: what sampling plans cannot do.
SAFETY_NOTE = ("Sampling cannot guarantee a lot free of nonconforming items. Critical "
               "characteristics need 100 % inspection or stricter plans as contract and "
               "regulation require; defer to your applicable standards and qualified quality "
               "professionals.")

_TOL = 1e-12  # the slack design_single allows at a risk boundary
_YES = {"yes", "y", "true", "1", "x"}
_NO = {"no", "n", "false", "0", ""}


# --- the array search ---------------------------------------------------------

def _pa(model: str, n, c, level, count, N):
    """``Pa`` under ``model``; ``level`` for binomial/Poisson, ``count`` and
    ``N`` for the hypergeometric."""
    if model == "binomial":
        return np.asarray(oc.pa_binomial(n, c, level), dtype=float)
    if model == "poisson":
        return np.asarray(oc.pa_poisson(n, c, level), dtype=float)
    return np.asarray(oc.pa_hypergeometric(n, c, N, count), dtype=float)


def _n_min(model, c, rql, d2, N, beta, cap, fails_aql=None):
    """Smallest ``n`` with ``Pa(RQL; n, c) <= beta`` for each element (flat
    arrays); ``-1`` where none exists up to ``cap`` (``inf`` for none).

    Integer bisection (``Pa`` falls in ``n``, documented in
    :mod:`lotwise.core.kernels`) on a bracket around the Poisson guess; the guessed ends
    are checked and replaced by the full range where they fail.

    ``fails_aql(idx, n)``, when given, tells where ``(n, c)`` misses the
    producer's risk. Once a lower end ``lo`` is known to miss the consumer's
    risk, ``n_min > lo``; if ``(lo + 1, c)`` already misses the producer's
    risk, so does ``(n_min, c)`` (``Pa`` falls in ``n``), and the element is
    returned as ``-2`` (a sample size exists, the acceptance number cannot
    work) without bisecting.
    """
    c = c.astype(float)
    size = c.shape[0]
    if size == 0:
        return np.zeros(0, dtype=np.int64)
    pa = lambda idx, n: _pa(model, n, c[idx], rql[idx], d2[idx], N[idx])  # noqa: E731
    bad = lambda idx, n: pa(idx, n) > beta[idx] + _TOL  # noqa: E731
    # Bracket: the Poisson size lambda/p and lambda/(-log(1 - p)) (exact for
    # c = 0), with the finite-lot factor 1/(1 + n/N) on the lower one; as a
    # rule n_min lies between them. Each end is checked before it is used.
    lam = special.gammainccinv(c + 1.0, beta)
    with np.errstate(divide="ignore", invalid="ignore"):
        p = d2 / N if model == "hypergeometric" else rql
        upper_g = lam / p
        lower_g = upper_g if model == "poisson" else lam / -np.log1p(-p)
        if model == "hypergeometric":
            lower_g = lower_g / (1.0 + np.maximum(lower_g - 1.0, 0.0) / N)
    upper_g = np.where(np.isfinite(upper_g), upper_g, c + 1.0)
    lower_g = np.where(np.isfinite(lower_g), lower_g, c)
    floor_ = c.copy()  # n = c accepts every lot: Pa = 1 > beta
    hi = np.minimum(np.maximum(np.ceil(upper_g) + 1.0, c + 1.0), cap)
    lo = np.minimum(np.maximum(np.floor(lower_g) - 1.0, floor_), hi - 1.0)
    hi_known = np.zeros(size, dtype=bool)
    # 1. The lower end must still miss beta; where it does not, n_min <= lo.
    chk = np.flatnonzero(lo > floor_)
    if chk.size:
        wrong = chk[~bad(chk, lo[chk])]
        hi[wrong] = lo[wrong]
        lo[wrong] = floor_[wrong]
        hi_known[wrong] = True
    # 2. n_min > lo; if (lo + 1, c) already misses alpha, c cannot work.
    doomed = np.zeros(size, dtype=bool)
    if fails_aql is not None:
        probe = np.flatnonzero(hi - lo > 1)
        if probe.size:
            doomed[probe[fails_aql(probe, lo[probe] + 1.0)]] = True
    # 3. The upper end must meet beta; grow it where it does not.
    ok_hi = np.ones(size, dtype=bool)
    chk = np.flatnonzero(~hi_known & ~doomed)
    if chk.size:
        ok_hi[chk] = ~bad(chk, hi[chk])
    grow = np.flatnonzero(~ok_hi & (hi < cap))
    while grow.size:
        lo[grow] = hi[grow]
        hi[grow] = np.minimum(hi[grow] * 2.0, cap[grow])
        good = ~bad(grow, hi[grow])
        ok_hi[grow] = good
        grow = grow[~good & (hi[grow] < cap[grow])]
    none = ~ok_hi  # no n up to the cap meets beta
    act = np.flatnonzero(ok_hi & ~doomed & (hi - lo > 1))
    while act.size:
        mid = np.floor((lo[act] + hi[act]) / 2.0)
        good = ~bad(act, mid)
        hi[act] = np.where(good, mid, hi[act])
        lo[act] = np.where(good, lo[act], mid)
        act = act[hi[act] - lo[act] > 1]
    out = hi.astype(np.int64)
    out[doomed] = -2
    out[none] = -1
    return out


def _first_c_guess(aql, rql, alpha, beta):
    """Acceptance number a Poisson two-point design would pick (sizes the
    first block of the scan only)."""
    ratio = rql / aql
    cs = np.arange(0, 257, dtype=float)
    out = np.full(aql.shape, 256, dtype=np.int64)
    for a, b in set(zip(alpha.tolist(), beta.tolist())):
        sel = (alpha == a) & (beta == b)
        r = special.gammainccinv(cs + 1.0, b) / special.gammainccinv(cs + 1.0, 1.0 - a)
        # r falls in c: the first c with r(c) <= ratio
        k = np.searchsorted(-r, -ratio[sel], side="left")
        out[sel] = np.minimum(k, 256)
    return out


def design_many(*, model: str, aql, rql, alpha, beta, lot_size=None, fixed_c=None,
                c_cap: int = 10_000_000):
    """Smallest single plans for many design problems under one model.

    Parameters
    ----------
    model : {'hypergeometric', 'binomial', 'poisson'}
    aql, rql, alpha, beta : array_like
        Targets, one element per problem (validated by the caller:
        ``aql < rql``, ``alpha + beta < 1``).
    lot_size : array_like, optional
        Lot sizes (required for the hypergeometric model).
    fixed_c : array_like of int, optional
        Fixed acceptance numbers, ``-1`` where free.

    Returns
    -------
    n, c : ndarray of int
        The plans; ``-1`` where the array search settles nothing (the caller
        hands those problems to :func:`design_single` for its verdict).
    alpha_actual, beta_actual : ndarray
        The plans' risks under ``model`` (NaN where unsettled).

    Examples
    --------
    >>> n, c, a, b = design_many(model="binomial", aql=[0.01, 0.02], rql=[0.06, 0.15],
    ...                          alpha=[0.05, 0.10], beta=[0.10, 0.20])
    >>> n.tolist(), c.tolist()
    ([110, 19], [3, 1])
    """
    aql = np.asarray(aql, dtype=float).ravel()
    rql = np.asarray(rql, dtype=float).ravel()
    m = aql.size
    alpha = np.broadcast_to(np.asarray(alpha, dtype=float), (m,)).copy()
    beta = np.broadcast_to(np.asarray(beta, dtype=float), (m,)).copy()
    if model == "hypergeometric":
        N = np.asarray(lot_size, dtype=float).ravel()
        d1 = _counts(aql, N, "up")
        d2 = _counts(rql, N, "down")
        cap = N.copy()
        c_limit = d2.copy()  # c >= D2 accepts every lot at the RQL
    else:
        N = np.ones(m)
        d1 = d2 = np.zeros(m)
        cap = np.full(m, np.inf)
        c_limit = np.full(m, float(c_cap))
    fixed = np.full(m, -1, dtype=np.int64) if fixed_c is None else \
        np.asarray(fixed_c, dtype=np.int64).ravel()

    n_out = np.full(m, -1, dtype=np.int64)
    c_out = np.full(m, -1, dtype=np.int64)

    def aql_ok(rows, n, c):
        pa = _pa(model, n, c, aql[rows], d1[rows], N[rows])
        return pa >= 1.0 - alpha[rows] - _TOL

    def n_min(rows, c):
        def fails(idx, n):
            return ~aql_ok(rows[idx], n, c[idx])

        return _n_min(model, c, rql[rows], d2[rows], N[rows], beta[rows], cap[rows], fails)

    # Fixed acceptance numbers: one n each.
    fx = np.flatnonzero((fixed >= 0) & (fixed < c_limit))
    if fx.size:
        nm = n_min(fx, fixed[fx])
        have = nm >= 0  # -2: the fixed c cannot meet alpha; left to design_single
        good = np.zeros(fx.size, dtype=bool)
        good[have] = aql_ok(fx[have], nm[have], fixed[fx][have])
        n_out[fx[good]] = nm[good]
        c_out[fx[good]] = fixed[fx][good]

    # Free acceptance numbers: scan c in blocks, all rows at once.
    rows = np.flatnonzero(fixed < 0)
    if rows.size:
        start = np.zeros(rows.size, dtype=np.int64)
        width = np.clip(_first_c_guess(aql[rows], rql[rows], alpha[rows], beta[rows]) + 3,
                        4, 64)
        while rows.size:
            lim = c_limit[rows]
            width = np.minimum(width, np.maximum(lim - start, 0)).astype(np.int64)
            owner = np.repeat(np.arange(rows.size), width)
            offset = np.arange(owner.size) - np.repeat(np.cumsum(width) - width, width)
            cs = start[owner] + offset
            r_of = rows[owner]
            nm = n_min(r_of, cs)
            have = nm >= 0
            good = np.zeros(owner.size, dtype=bool)
            good[have] = aql_ok(r_of[have], nm[have], cs[have])
            hit = np.flatnonzero(good)
            done = np.zeros(rows.size, dtype=bool)
            if hit.size:
                first_owner, first_at = np.unique(owner[hit], return_index=True)
                pick = hit[first_at]
                n_out[rows[first_owner]] = nm[pick]
                c_out[rows[first_owner]] = cs[pick]
                done[first_owner] = True
            # A block whose last c has no n under the cap ends the search (n_min
            # never decreases in c); so does reaching the acceptance-number limit.
            last_none = np.zeros(rows.size, dtype=bool)
            if owner.size:
                ends = np.cumsum(width) - 1
                nz = width > 0
                last_none[nz] = nm[ends[nz]] == -1
            start = start + width
            stop = done | last_none | (start >= lim) | (width == 0)
            keep = ~stop
            rows, start, width = rows[keep], start[keep], np.minimum(width[keep] * 2, 4096)

    ok = n_out >= 0
    a_act = np.full(m, np.nan)
    b_act = np.full(m, np.nan)
    if ok.any():
        i = np.flatnonzero(ok)
        a_act[i] = 1.0 - _pa(model, n_out[i], c_out[i], aql[i], d1[i], N[i])
        b_act[i] = _pa(model, n_out[i], c_out[i], rql[i], d2[i], N[i])
    return n_out, c_out, a_act, b_act


def _counts(level, N, rounding):
    """Vectorised :func:`lotwise.core.kernels.lot_count` for per-row lot sizes."""
    x = level * N
    r = np.round(x)
    whole = np.abs(x - r) <= 1e-9 * np.maximum(1.0, np.abs(x))
    if rounding == "up":
        out = np.where(whole, r, np.ceil(x))
    else:
        out = np.where(whole, r, np.floor(x))
    return np.clip(out, 0, N)


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

    def summary(self) -> dict:
        return {"rows": self.rows, "designed": self.designed, "failed": self.failed,
                "distinct_designs": self.distinct, "units_per_lot": self.units_per_lot,
                "units_per_year": self.units_per_year,
                "rows_without_deliveries": self.rows_without_deliveries}


def read_catalogue(path, option: str = "CATALOGUE"):
    """Read a catalogue CSV into a DataFrame of strings (all columns as
    written, names normalised) plus ``_line`` (the line each row starts on)
    and ``_shape`` (a problem with the row's field count, or '')."""
    from lotwise.data.csvio import read_table

    t = read_table(path, option)
    missing = [c for c in REQUIRED if c not in t.header]
    if missing:
        raise InputError(f"{option} ({t.source}) lacks the column(s) {', '.join(missing)}; "
                         f"required: {', '.join(REQUIRED)}")
    return catalogue_frame(t)


def catalogue_frame(t):
    """A :class:`lotwise.data.csvio.Table` as the DataFrame :func:`read_catalogue` returns."""
    import pandas as pd

    if len(t):
        df = pd.DataFrame(t.fields, columns=t.header, dtype=object)
    else:
        df = pd.DataFrame({h: pd.Series(dtype=object) for h in t.header})
    df["_line"] = np.asarray(t.lines, dtype=np.int64)
    df["_shape"] = t.problem_list()
    return df


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
    """
    import pandas as pd

    df = df.copy()
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
    df = df.reset_index(drop=True)
    m = len(df)

    def stripped(c):
        if c not in df.columns:
            return np.full(m, "", dtype=object)
        return np.array([str(v).strip() if v is not None else "" for v in df[c].tolist()],
                        dtype=object)

    text = {c: stripped(c) for c in REQUIRED + OPTIONAL}
    shape = np.array([str(v) if v else "" for v in df["_shape"].tolist()], dtype=object)
    error = np.where(shape == "", "", "the line " + shape).astype(object)

    def column(name, parse, default=None, rows=None):
        """Parse each distinct text of column ``name`` once: ``(values, errors)``
        as object arrays (``rows`` restricts to a boolean mask)."""
        vals = text[name] if rows is None else text[name][rows]
        uniq, inv = np.unique(vals.astype(str), return_inverse=True)
        table = _parse_unique(uniq.tolist(), lambda v: default if v == "" else parse(v))
        parsed = np.array([table[v][0] for v in uniq.tolist()] + [None], dtype=object)[:-1]
        errs = np.array([table[v][1] for v in uniq.tolist()] + [None], dtype=object)[:-1]
        return parsed[inv], errs[inv]

    def note(errs, rows=None):
        nonlocal error
        if rows is None:
            error = np.where(error != "", error, errs).astype(object)
        else:
            sub = error[rows]
            error[rows] = np.where(sub != "", sub, errs)

    defects, e = column("defects", lambda v: _flag(v, "defects"), False)
    note(e)
    defects = np.array([bool(v) for v in defects], dtype=bool)
    lot, e = column("lot_size", lambda v: parse_count(v, "lot_size", minimum=1,
                                                       maximum=10**12), None)
    note(e)
    # Levels depend on defects (per unit or a fraction): parse under each.
    aql = np.full(m, None, dtype=object)
    rql = np.full(m, None, dtype=object)
    for flag in (False, True):
        sel = defects == flag
        if not sel.any():
            continue
        for name, target in (("aql", aql), ("rql", rql)):
            vals, e = column(name, lambda v, f=flag, nm=name: _level(v, nm, f), None, sel)
            target[sel] = vals
            note(e, sel)
    alpha, e = column("alpha", lambda v: parse_risk(v, "alpha"), 0.05)
    note(e)
    beta, e = column("beta", lambda v: parse_risk(v, "beta"), 0.10)
    note(e)
    scheme, e = column("scheme", _scheme, "single")
    note(e)
    fixed_c, e = column("fixed_c", lambda v: parse_count(v, "fixed_c", minimum=0), -1)
    note(e)
    max_n, e = column("max_n", lambda v: parse_count(v, "max_n", minimum=1), 0)
    note(e)
    deliv, e = column("deliveries_per_year", lambda v: _rate(v, "deliveries_per_year"),
                      deliveries_per_year)
    note(e)

    # Resolve the model per row (the lot size decides the exact one).
    has_lot = np.array([v is not None for v in lot], dtype=bool)
    combo = np.array([f"{mt.lower()}|{int(hl)}|{int(dd)}" for mt, hl, dd in
                      zip(text["model"].tolist(), has_lot.tolist(), defects.tolist())])
    ucombo, cinv = np.unique(combo, return_inverse=True)
    res_model = np.full(ucombo.size, None, dtype=object)
    res_err = np.full(ucombo.size, "", dtype=object)
    for j, key in enumerate(ucombo.tolist()):
        mt, hl, dd = key.split("|")
        scope = Scope(lot_size=1 if hl == "1" else None, defects=dd == "1")
        try:
            res_model[j] = scope.check_model(mt or None, "model")
        except InputError as exc:
            res_err[j] = str(exc).replace("(--lot-size)", "(a lot_size value)")
    model = res_model[cinv]
    note(res_err[cinv])

    ok = error == ""
    prob = pd.DataFrame({
        "model": model, "aql": aql, "rql": rql, "alpha": alpha, "beta": beta,
        "lot": np.where(has_lot, lot, 0), "fixed_c": fixed_c, "max_n": max_n,
        "defects": defects, "scheme": scheme,
    })
    n_col = np.full(m, -1, dtype=np.int64)
    c_col = np.full(m, -1, dtype=np.int64)
    a_col = np.full(m, np.nan)
    b_col = np.full(m, np.nan)
    full_col = np.zeros(m, dtype=bool)
    plan_col = np.full(m, "", dtype=object)

    keycols = ["scheme", "model", "aql", "rql", "alpha", "beta", "lot", "fixed_c", "max_n",
               "defects"]
    good = prob[ok]
    distinct = 0
    if len(good):
        for col in ("aql", "rql", "alpha", "beta"):
            good[col] = good[col].astype(float)
        for col in ("lot", "fixed_c", "max_n"):
            good[col] = good[col].astype(np.int64)
        # Identical problems solved once: groups numbered in order of first
        # appearance, which is also the order drop_duplicates keeps.
        codes = good.groupby(keycols, sort=False).ngroup().to_numpy()
        u = good.drop_duplicates(keycols)[keycols].reset_index(drop=True)
        distinct = len(u)
        un = np.full(distinct, -1, dtype=np.int64)
        uc = np.full(distinct, -1, dtype=np.int64)
        ua = np.full(distinct, np.nan)
        ub = np.full(distinct, np.nan)
        uplan = np.full(distinct, "", dtype=object)
        uerr = np.full(distinct, "", dtype=object)
        ufull = np.zeros(distinct, dtype=bool)
        # Which problems the array search can take.
        # Nonconformities per unit (c may exceed n) go to the single designer.
        simple = ((u["scheme"] == "single") & (u["max_n"] == 0) & (u["rql"] > u["aql"])
                  & (u["alpha"] + u["beta"] < 1.0) & ~u["defects"].astype(bool)).to_numpy().copy()
        hyper = (u["model"] == "hypergeometric").to_numpy()
        if hyper.any():
            Nh = u["lot"].to_numpy(dtype=float)
            d1 = _counts(u["aql"].to_numpy(), Nh, "up")
            d2 = _counts(u["rql"].to_numpy(), Nh, "down")
            simple &= ~hyper | ((d2 >= 1) & (d1 < d2))
        done = 0
        total = distinct
        if progress is not None:
            progress(0, total)
        for mdl in ("hypergeometric", "binomial", "poisson"):
            idx = np.flatnonzero(simple & (u["model"] == mdl).to_numpy())
            for s in range(0, idx.size, chunk):
                part = idx[s:s + chunk]
                n_, c_, a_, b_ = design_many(
                    model=mdl, aql=u["aql"].to_numpy()[part], rql=u["rql"].to_numpy()[part],
                    alpha=u["alpha"].to_numpy()[part], beta=u["beta"].to_numpy()[part],
                    lot_size=u["lot"].to_numpy()[part], fixed_c=u["fixed_c"].to_numpy()[part])
                un[part], uc[part], ua[part], ub[part] = n_, c_, a_, b_
                done += part.size
                if progress is not None:
                    progress(done, total)
        # Everything not settled goes through the single designer (or a scheme's own).
        rest = np.flatnonzero(un < 0)
        for k, i in enumerate(rest):
            row = u.iloc[i]
            try:
                res = _design_one(row)
            except (Infeasible, InputError) as exc:
                uerr[i] = str(exc).replace("--max-n", "max_n").replace("--lot-size", "lot_size")
            else:
                un[i], uc[i], ua[i], ub[i] = res["n"], res["c"], res["alpha_actual"], \
                    res["beta_actual"]
                uplan[i] = res.get("plan", "")
                ufull[i] = bool(res.get("full_inspection", False))
            if progress is not None and k % 50 == 0:
                progress(done + k, total)
        if progress is not None:
            progress(total, total)
        settled = (un >= 0) & (uplan == "")
        uplan[settled] = [f"n={a},c={b}" for a, b in zip(un[settled], uc[settled])]
        lots = u["lot"].to_numpy()
        ufull |= (lots > 0) & (un >= lots)
        rows_ok = np.flatnonzero(ok)
        n_col[rows_ok] = un[codes]
        c_col[rows_ok] = uc[codes]
        a_col[rows_ok] = ua[codes]
        b_col[rows_ok] = ub[codes]
        plan_col[rows_ok] = uplan[codes]
        full_col[rows_ok] = ufull[codes]
        error[rows_ok] = uerr[codes]

    designed = (error == "") & (n_col >= 0)
    out = df.drop(columns=["_line", "_shape"]).copy()
    out["n"] = pd.array(np.where(designed, n_col, 0), dtype="Int64")
    out.loc[~designed, "n"] = pd.NA
    out["c"] = pd.array(np.where(designed, c_col, 0), dtype="Int64")
    out.loc[~designed, "c"] = pd.NA
    out["plan"] = np.where(designed, plan_col, "")
    out["model_used"] = np.where(designed, np.where(model == None, "", model), "")  # noqa: E711
    out["alpha_actual"] = np.where(designed, a_col, np.nan)
    out["beta_actual"] = np.where(designed, b_col, np.nan)
    out["full_inspection"] = np.where(designed, np.where(full_col, "yes", "no"), "")
    rate = np.array([np.nan if v is None else float(v) for v in deliv], dtype=float)
    per_year = np.where(designed & np.isfinite(rate), n_col * rate, np.nan)
    out["units_per_year"] = per_year
    out["error"] = error
    units_lot = int(n_col[designed].sum())
    have_rate = designed & np.isfinite(rate)
    units_year = int(round(float(np.nansum(per_year)))) if have_rate.any() else None
    return BatchResult(table=out, rows=m, designed=int(designed.sum()),
                       failed=int(m - designed.sum()), distinct=distinct,
                       units_per_lot=units_lot, units_per_year=units_year,
                       rows_without_deliveries=int((designed & ~np.isfinite(rate)).sum()),
                       dropped_columns=dropped)


def _level(v, name, per_unit):
    return parse_level(v, name, per_unit=per_unit)


def _scheme(v):
    s = str(v).strip().lower()
    if s not in SCHEMES:
        raise InputError(f"scheme ({v}) must be one of: {', '.join(SCHEMES)}")
    return s


def _rate(v, name):
    try:
        x = float(str(v).replace("_", ""))
    except ValueError:
        raise InputError(f"{name} ({v!r}) must be a number of lots per year, 0 or more") from None
    if not (math.isfinite(x) and x >= 0):
        raise InputError(f"{name} ({v}) must be a number of lots per year, 0 or more")
    return x


def _design_one(row) -> dict:
    """One problem through :func:`design_single` (or a registered scheme)."""
    kw = dict(aql=float(row["aql"]), rql=float(row["rql"]), alpha=float(row["alpha"]),
              beta=float(row["beta"]), lot_size=int(row["lot"]) or None, model=row["model"],
              defects=bool(row["defects"]),
              fixed_c=int(row["fixed_c"]) if int(row["fixed_c"]) >= 0 else None,
              max_n=int(row["max_n"]) or None)
    target = SCHEMES.get(row["scheme"])
    if target is not None:
        mod, func = target.split(":")
        return getattr(importlib.import_module(mod), func)(**kw)
    from lotwise.analysis.audit import risks_under
    from lotwise.families.single import design_single

    d = design_single(aql=kw["aql"], rql=kw["rql"], alpha=kw["alpha"], beta=kw["beta"],
                      lot_size=kw["lot_size"], model=kw["model"], defects=kw["defects"],
                      c=kw["fixed_c"], max_n=kw["max_n"])
    r = risks_under(d.plan, d.targets, d.scope, d.model)
    return {"n": d.n, "c": d.c, "plan": f"n={d.n},c={d.c}", "alpha_actual": r.alpha,
            "beta_actual": r.beta, "full_inspection": d.full_inspection}


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
