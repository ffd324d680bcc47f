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
``defects``          no       ``yes`` when the levels are nonconformities per unit
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
need a ``lot_size`` and take no ``fixed_c``, ``max_n`` or ``defects``. When
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

import importlib
import math
import sys
from dataclasses import dataclass, field

import numpy as np
from scipy import special

from lotwise.core import kernels as oc
from lotwise.core.types import Scope
from lotwise.core.quantities import (InputError, Infeasible, parse_count, parse_level, parse_rate,
                                     parse_risk)

__all__ = ["REQUIRED", "OPTIONAL", "OUTPUT", "SCHEMES", "SAFETY_NOTE", "BatchResult",
           "design_many", "design_catalogue", "read_catalogue", "catalogue_frame",
           "progress_bar"]

REQUIRED = ("part", "lot_size", "aql", "rql")
OPTIONAL = ("alpha", "beta", "scheme", "model", "fixed_c", "max_n", "defects",
            "deliveries_per_year")
OUTPUT = ("n", "c", "plan", "model_used", "alpha_actual", "beta_actual", "full_inspection",
          "units_per_year", "error")

#: Plan families the batch designs by other means than the family registry:
#: ``scheme -> "module:function"`` or ``None`` for the built-in array search
#: (single sampling). Every other family with a designer in
#: :data:`lotwise.families.base.REGISTRY` is designed by its own designer
#: (:func:`design_registered`). A function here takes one normalised problem
#: as keywords (``aql, rql, alpha, beta, lot_size, model, defects, fixed_c,
#: max_n``) and returns a dict with the keys ``n``, ``c``, ``plan``
#: (notation), ``alpha_actual``, ``beta_actual``, ``full_inspection``; it
#: raises :class:`~lotwise.core.quantities.Infeasible` or
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
    pr = _Problems.build(model=model, aql=aql, rql=rql, alpha=alpha, beta=beta,
                         lot_size=lot_size, c_cap=c_cap)
    m = pr.aql.size
    fixed = np.full(m, -1, dtype=np.int64) if fixed_c is None else \
        np.asarray(fixed_c, dtype=np.int64).ravel()
    n_out = np.full(m, -1, dtype=np.int64)
    c_out = np.full(m, -1, dtype=np.int64)
    _search_fixed_c(pr, fixed, n_out, c_out)
    _scan_free_c(pr, np.flatnonzero(fixed < 0), n_out, c_out)
    a_act, b_act = pr.risks(n_out, c_out)
    return n_out, c_out, a_act, b_act


@dataclass(frozen=True, kw_only=True)
class _Problems:
    """The design problems of one :func:`design_many` call under one model,
    as flat arrays (one element per problem)."""

    model: str
    aql: np.ndarray
    rql: np.ndarray
    alpha: np.ndarray
    beta: np.ndarray
    N: np.ndarray        # lot sizes (1 for the binomial and Poisson models)
    d1: np.ndarray       # lot counts at the AQL (rounded up), hypergeometric
    d2: np.ndarray       # lot counts at the RQL (rounded down), hypergeometric
    cap: np.ndarray      # largest sample size
    c_limit: np.ndarray  # acceptance numbers from here on cannot work

    @classmethod
    def build(cls, *, model, aql, rql, alpha, beta, lot_size, c_cap) -> "_Problems":
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
        return cls(model=model, aql=aql, rql=rql, alpha=alpha, beta=beta, N=N, d1=d1, d2=d2,
                   cap=cap, c_limit=c_limit)

    def aql_ok(self, rows, n, c):
        """Where ``(n, c)`` meets the producer's risk, for problems ``rows``."""
        pa = _pa(self.model, n, c, self.aql[rows], self.d1[rows], self.N[rows])
        return pa >= 1.0 - self.alpha[rows] - _TOL

    def n_min(self, rows, c):
        """:func:`_n_min` for problems ``rows`` and acceptance numbers ``c``."""
        def fails(idx, n):
            return ~self.aql_ok(rows[idx], n, c[idx])

        return _n_min(self.model, c, self.rql[rows], self.d2[rows], self.N[rows],
                      self.beta[rows], self.cap[rows], fails)

    def risks(self, n_out, c_out):
        """``(alpha_actual, beta_actual)`` of the plans found (NaN where none)."""
        m = self.aql.size
        ok = n_out >= 0
        a_act = np.full(m, np.nan)
        b_act = np.full(m, np.nan)
        if ok.any():
            i = np.flatnonzero(ok)
            a_act[i] = 1.0 - _pa(self.model, n_out[i], c_out[i], self.aql[i], self.d1[i],
                                 self.N[i])
            b_act[i] = _pa(self.model, n_out[i], c_out[i], self.rql[i], self.d2[i], self.N[i])
        return a_act, b_act


def _search_fixed_c(pr: _Problems, fixed, n_out, c_out) -> None:
    """Fixed acceptance numbers: one ``n`` each, written into ``n_out``/``c_out``."""
    fx = np.flatnonzero((fixed >= 0) & (fixed < pr.c_limit))
    if not fx.size:
        return
    nm = pr.n_min(fx, fixed[fx])
    have = nm >= 0  # -2: the fixed c cannot meet alpha; left to design_single
    good = np.zeros(fx.size, dtype=bool)
    good[have] = pr.aql_ok(fx[have], nm[have], fixed[fx][have])
    n_out[fx[good]] = nm[good]
    c_out[fx[good]] = fixed[fx][good]


def _scan_free_c(pr: _Problems, rows, n_out, c_out) -> None:
    """Free acceptance numbers: scan ``c`` in blocks, all ``rows`` at once; the
    first ``c`` whose smallest ``n`` meets the producer's risk gives the plan."""
    if not rows.size:
        return
    start = np.zeros(rows.size, dtype=np.int64)
    width = np.clip(_first_c_guess(pr.aql[rows], pr.rql[rows], pr.alpha[rows], pr.beta[rows])
                    + 3, 4, 64)
    while rows.size:
        lim = pr.c_limit[rows]
        width = np.minimum(width, np.maximum(lim - start, 0)).astype(np.int64)
        owner = np.repeat(np.arange(rows.size), width)
        offset = np.arange(owner.size) - np.repeat(np.cumsum(width) - width, width)
        cs = start[owner] + offset
        r_of = rows[owner]
        nm = pr.n_min(r_of, cs)
        have = nm >= 0
        good = np.zeros(owner.size, dtype=bool)
        good[have] = pr.aql_ok(r_of[have], nm[have], cs[have])
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

    df, dropped = _prepared(df)
    m = len(df)
    rows = _parse_rows(df, deliveries_per_year)
    ok = rows.error == ""
    prob = pd.DataFrame({
        "model": rows.model, "aql": rows.aql, "rql": rows.rql, "alpha": rows.alpha,
        "beta": rows.beta, "lot": np.where(rows.has_lot, rows.lot, 0),
        "fixed_c": rows.fixed_c, "max_n": rows.max_n, "defects": rows.defects,
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
                             rows.beta, rows.defects, rows.fixed_c, rows.max_n,
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
    return df.reset_index(drop=True), dropped


@dataclass(frozen=True, kw_only=True)
class _Rows:
    """The catalogue's cells parsed, one element per row (object arrays), and
    the first problem found in each row (``error``, '' where none)."""

    defects: np.ndarray
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

    defects, e = _column(text, "defects", lambda v: _flag(v, "defects"), False)
    error = _note(error, e)
    defects = np.array([bool(v) for v in defects], dtype=bool)
    lot, e = _column(text, "lot_size", lambda v: parse_count(v, "lot_size", minimum=1,
                                                             maximum=10**12), None)
    error = _note(error, e)
    # Levels depend on defects (per unit or a fraction): parse under each.
    aql = np.full(m, None, dtype=object)
    rql = np.full(m, None, dtype=object)
    for flag in (False, True):
        sel = defects == flag
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
    model, e = _resolve_models(text["model"], has_lot, defects)
    error = _note(error, e)
    return _Rows(defects=defects, lot=lot, has_lot=has_lot, aql=aql, rql=rql,
                 alpha=parsed["alpha"], beta=parsed["beta"], scheme=parsed["scheme"],
                 options=parsed["options"], fixed_c=parsed["fixed_c"], max_n=parsed["max_n"],
                 deliv=parsed["deliveries_per_year"], model=model, error=error)


def _resolve_models(model_text, has_lot, defects):
    """The model of each row (the lot size decides the exact one):
    ``(models, errors)``, each distinct combination checked once."""
    combo = np.array([f"{mt.lower()}|{int(hl)}|{int(dd)}" for mt, hl, dd in
                      zip(model_text.tolist(), has_lot.tolist(), defects.tolist())])
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
            "defects", "options"]


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
    """The array search (:func:`design_many`) for the problems it can take;
    returns how many problems it was given."""
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
    for mdl in ("hypergeometric", "binomial", "poisson"):
        idx = np.flatnonzero(simple & (u["model"] == mdl).to_numpy())
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
    for k, i in enumerate(rest):
        row = u.iloc[i]
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
    names = list(dict.fromkeys(list(SCHEMES) + designable()))
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
                      lot_size: int | None, model: str | None, defects: bool,
                      fixed_c: int | None, max_n: int | None, options: dict) -> dict:
    """One catalogue problem through the designer of family ``scheme`` (the
    registry's common signature) and judged as ``lotwise check`` judges it.

    Returns the dict of a :data:`SCHEMES` function: ``n`` is the most units
    one lot may take (the sample size of a fixed-sample plan), ``c`` is -1
    (no single acceptance number), ``model`` the model the plan is judged by.
    """
    from lotwise.analysis.compare import plan_risks
    from lotwise.core.types import Targets
    from lotwise.families.base import family

    fam = family(scheme, "scheme")
    if fixed_c is not None:
        raise InputError(f"fixed_c ({fixed_c}) applies to scheme single, not to {scheme}")
    kw = dict(options)
    if max_n is not None:
        if "max_n" not in fam.design_options:
            raise InputError(f"max_n ({max_n}) does not apply to scheme {scheme}")
        kw["max_n"] = max_n
    try:
        d = fam.design(aql=aql, rql=rql, alpha=alpha, beta=beta, lot_size=lot_size,
                       model=model, defects=defects, **kw)
    except InputError as exc:  # name the catalogue's columns, not the command's options
        msg = str(exc)
        for key in fam.design_options:
            msg = msg.replace(f"--{key.replace('_', '-')} ", f"{key} ")
        raise InputError(msg) from None
    plan = d.plan
    targets = Targets(aql=aql, rql=rql, alpha=alpha, beta=beta)
    mdl, pa_aql, pa_rql = plan_risks(plan, targets, Scope(lot_size=lot_size, defects=defects),
                                     model)
    return {"n": int(plan.max_sample), "c": -1, "plan": plan.notation(), "model": mdl,
            "alpha_actual": 1.0 - pa_aql, "beta_actual": pa_rql,
            "full_inspection": bool(lot_size and plan.max_sample >= lot_size)}


def _design_one(row) -> dict:
    """One problem through :func:`design_single` (or a registered scheme)."""
    if row["scheme"] not in SCHEMES:
        import json

        return design_registered(
            scheme=row["scheme"], aql=float(row["aql"]), rql=float(row["rql"]),
            alpha=float(row["alpha"]), beta=float(row["beta"]),
            lot_size=int(row["lot"]) or None, model=row["model"], defects=bool(row["defects"]),
            fixed_c=int(row["fixed_c"]) if int(row["fixed_c"]) >= 0 else None,
            max_n=int(row["max_n"]) or None,
            options=json.loads(row["options"]) if row["options"] else {})
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


def _cost_designs(df, error, model, lot, aql, rql, alpha, beta, defects, fixed_c, max_n, cols):
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
                                   ("max_n", max_n[i] > 0, "max_n"), ("defects", defects[i], "defects")):
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
