"""Single sampling plans designed for many targets at once: the array search a
catalogue of thousands of parts uses (:func:`design_many`).

Each problem is the single designer's (:func:`lotwise.families.single.design_single`):
the smallest n, then the smallest c, whose exact Pa meets both risks. The search
runs on arrays of problems under one model, with the same monotonicity (Pa falls
as n grows for fixed c and rises with c) and the same tolerance at a risk boundary,
so each row's plan equals the single designer's; rows it cannot settle (per-unit
counts, a largest sample, lot sizes too small for the targets) are left to the
single designer by the caller.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import special

from lotwise.core import kernels as oc

__all__ = ["design_many", "whole_counts"]

_TOL = 1e-12  # the slack design_single allows at a risk boundary


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
            d1 = whole_counts(aql, N, "up")
            d2 = whole_counts(rql, N, "down")
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


def whole_counts(level, N, rounding):
    """Vectorised :func:`lotwise.core.kernels.lot_count` for per-row lot sizes."""
    x = level * N
    r = np.round(x)
    whole = np.abs(x - r) <= 1e-9 * np.maximum(1.0, np.abs(x))
    if rounding == "up":
        out = np.where(whole, r, np.ceil(x))
    else:
        out = np.where(whole, r, np.floor(x))
    return np.clip(out, 0, N)
