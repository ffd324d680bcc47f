"""Switching schemes: normal, tightened and reduced inspection, analysed exactly.

A *switching scheme* inspects each lot with one of up to three plans, chosen
by what the previous lots showed: the **normal** plan to start with, a
stricter **tightened** plan after a run of rejections, a cheaper **reduced**
plan after a long run of acceptances, and **discontinuation** of inspection
(the supplier's lots are refused until it has corrected its process) when
too many lots fail under tightened inspection. The protection a scheme gives
is a property of the whole scheme, not of any one of its plans: the
long-run fraction of lots accepted depends on how often each plan is used.

The rules (each a key of ``[switching.rules]`` in a plan file; the defaults
are common practice, no source; a count of 0 switches its rule off):

================== ======= ===============================================
key                default meaning
================== ======= ===============================================
``tighten_rejects`` 2      on normal: switch to tightened when this many
                           lots are rejected ...
``tighten_window``  5      ... within this many consecutive lots
``relax_accepts``   5      on tightened: back to normal after this many
                           consecutive accepted lots
``reduce_accepts``  10     on normal: switch to reduced after this many
                           consecutive accepted lots ...
``reduce_limit``    none   ... whose nonconforming found add up to at most
                           this (optional; single normal plans only)
``restore_rejects`` 1      on reduced: back to normal when this many lots
                           are rejected during one period of reduced
                           inspection
``stop_rejects``    5      discontinue when this many lots are rejected in
                           all during one period of tightened inspection
================== ======= ===============================================

Windows and counts start afresh at every switch. With ``reduce_limit``, a
run that reaches ``reduce_accepts`` accepted lots whose total found exceeds
the limit does not switch, and the count of accepted lots (and their total)
starts afresh with the next lot. A scheme without a reduced plan never
reduces; one without a tightened plan never tightens (nor discontinues).

Exact analysis
--------------
Lots are judged independently, each accepted with the probability
``Pa_s(p)`` of the plan of its severity ``s`` under the scope's exact model
(binomial for a process, hypergeometric for a lot of known size, Poisson for
nonconformities per unit). The scheme is then a Markov chain whose state is
the severity and the counters the rules need: on normal the results of the
last ``tighten_window - 1`` lots (a bit pattern), the run of accepted lots and,
with ``reduce_limit``, their running total found (capped at the limit + 1,
from the probabilities ``P(X = j)``, ``j <= c``, of the count found in an
accepted lot of a single plan); on tightened the run of accepted lots and the
rejections of the period; on reduced the rejections of the period. Only the
states reachable from a fresh start on normal are built.

* The expected number of lots from a fresh start on normal until the first
  switch to tightened (the lot that triggers it included) is the sum of the
  start's row of the fundamental matrix ``(I - Q)^{-1}`` of the chain with
  tightened states absorbing [1]_; that row also gives the expected lots on
  each normal and reduced state before the switch. A small chain over the
  tightened counters gives the expected length of a tightened period and the
  probability that it ends in discontinuation rather than back on normal.
* When both switches are certain the scheme renews at every return to a fresh
  normal start, so the long-run fraction of lots on each severity is its
  expected lots per cycle over the cycle's expected length (renewal-reward,
  discontinuation switched off), and the expected lots until discontinuation
  are ``(t_N + t_T) / P_stop`` (Wald's identity: the number of cycles is
  geometric). Elsewhere (a switch that is not certain, e.g. at ``p = 0``) the
  long-run fractions are the stationary distribution of the whole chain's one
  closed class reachable from the start (from its strongly connected
  components; several closed classes are weighted by their absorption
  probabilities), and an expected number of lots is infinite (reported as
  None).
* The scheme's OC is ``sum_s pi_s Pa_s(p)`` and its average sample per lot
  ``sum_s pi_s ASN_s(p)``, with ``pi_s`` the long-run fraction on severity ``s``.

Everything is solved by linear algebra (``numpy.linalg`` for small chains,
batched over the quality levels; ``scipy.sparse.linalg.splu`` for large
ones), not by simulation.

References
----------
.. [1] J. G. Kemeny and J. L. Snell, *Finite Markov Chains*, Van Nostrand,
   1960, ch. 3 (absorbing chains, the fundamental matrix) and ch. 4
   (regular chains, the limiting distribution).
.. [2] E. G. Schilling and D. V. Neubauer, 2nd ed., CRC Press, 2009, ch. 11 (switching schemes and their
   scheme OC, from memory).

Examples
--------
With the same plan for every severity the scheme accepts exactly as that plan:

>>> from lotwise.core.types import Scope
>>> from lotwise.families.single import SinglePlan
>>> plan = SinglePlan(n=80, c=2)
>>> oc = scheme_oc(Scheme(normal=plan, tightened=plan, reduced=plan), [0.02], "binomial",
...                Scope())
>>> round(oc.levels[0].pa, 6) == round(float(plan.pa(0.02, "binomial", Scope())), 6)
True
"""

from __future__ import annotations

from dataclasses import dataclass, field
from enum import StrEnum

import numpy as np

from lotwise.core.quantities import InputError
from lotwise.core.types import Scope, lot_counts
from lotwise.families.base import Plan

__all__ = ["Severity", "SEVERITIES", "RULE_KEYS", "SwitchRules", "Scheme", "SchemeLevel",
           "SchemeOC", "scheme_oc", "LotResult", "Switch", "Tracking", "track", "step",
           "found_pmf", "MAX_STATES"]


class Severity(StrEnum):
    """Which plan a lot gets (or that inspection is discontinued)."""

    NORMAL = "normal"
    TIGHTENED = "tightened"
    REDUCED = "reduced"
    DISCONTINUED = "discontinued"


#: The severities that have a plan, in the order reports show them.
SEVERITIES = ("normal", "tightened", "reduced")

#: Rule key -> (default, meaning). Defaults: common practice, no source.
RULE_KEYS = {
    "tighten_rejects": (2, "rejected lots on normal inspection that switch to tightened "
                           "(0: never)"),
    "tighten_window": (5, "consecutive lots within which those rejections must fall"),
    "relax_accepts": (5, "consecutive accepted lots on tightened that return to normal "
                         "(0: never)"),
    "reduce_accepts": (10, "consecutive accepted lots on normal that switch to reduced "
                           "(0: never)"),
    "reduce_limit": (None, "most nonconforming found in those lots in all (optional)"),
    "restore_rejects": (1, "rejected lots during one period of reduced inspection that return "
                           "to normal (0: never)"),
    "stop_rejects": (5, "rejected lots in all during one period of tightened inspection that "
                        "discontinue inspection (0: never)"),
}

#: Largest chain built (states); beyond it the rules are refused as too large.
MAX_STATES = 200_000

#: Chains up to this many states are solved densely, batched over levels.
_DENSE_MAX = 64

_SEV = {"normal": 0, "tightened": 1, "reduced": 2, "discontinued": 3}
_NAMES = ("normal", "tightened", "reduced", "discontinued")


@dataclass(frozen=True, kw_only=True)
class SwitchRules:
    """The switching rules (see the module's table); a count of 0 is "never"."""

    tighten_rejects: int = 2
    tighten_window: int = 5
    relax_accepts: int = 5
    reduce_accepts: int = 10
    reduce_limit: int | None = None
    restore_rejects: int = 1
    stop_rejects: int = 5

    def __post_init__(self):
        for key in RULE_KEYS:
            v = getattr(self, key)
            if key == "reduce_limit" and v is None:
                continue
            if isinstance(v, bool) or not isinstance(v, (int, np.integer)) or v < 0:
                raise InputError(f"{key} ({v!r}) must be a whole number of at least 0")
        if self.tighten_window < 1:
            raise InputError(f"tighten_window ({self.tighten_window}) must be at least 1")
        if self.tighten_rejects > self.tighten_window:
            raise InputError(f"tighten_rejects ({self.tighten_rejects}) must not be greater "
                             f"than tighten_window ({self.tighten_window})")

    def as_dict(self) -> dict:
        return {key: getattr(self, key) for key in RULE_KEYS}


@dataclass(frozen=True, kw_only=True)
class Scheme:
    """A switching scheme: a plan per severity and the rules between them.

    ``tightened`` and ``reduced`` are optional: without them the scheme never
    tightens (nor discontinues), or never reduces.
    """

    normal: object
    tightened: object | None = None
    reduced: object | None = None
    rules: SwitchRules = field(default_factory=SwitchRules)

    def __post_init__(self):
        for name in SEVERITIES:
            plan = getattr(self, name)
            if plan is None:
                if name == "normal":
                    raise InputError("normal: a switching scheme needs a normal plan")
                continue
            if not isinstance(plan, Plan) or not plan.lot_by_lot:
                raise InputError(
                    f"{name} ({plan.notation() if isinstance(plan, Plan) else plan}): a "
                    "switching scheme needs plans that judge each lot on its own sample; "
                    "chain and skip-lot plans depend on earlier lots")
        lim = self.rules.reduce_limit
        if lim is not None:
            if self.reduced is None or self.rules.reduce_accepts == 0:
                raise InputError(f"reduce_limit ({lim}) needs a reduced plan and "
                                 "reduce_accepts of at least 1")
            if self.normal.count_rule() is None:
                raise InputError(
                    f"reduce_limit ({lim}) needs a single normal plan (n=..,c=..): the count "
                    f"found in an accepted lot of a {self.normal.scheme} plan is not computed "
                    "exactly here")

    # which rules can fire
    @property
    def tightens(self) -> bool:
        return self.tightened is not None and self.rules.tighten_rejects > 0

    @property
    def reduces(self) -> bool:
        return self.reduced is not None and self.rules.reduce_accepts > 0

    @property
    def stops(self) -> bool:
        return self.tightens and self.rules.stop_rejects > 0

    def plan_for(self, severity: str):
        """The plan of ``severity`` (None when the scheme has none)."""
        return getattr(self, str(severity)) if str(severity) in SEVERITIES else None

    def plans(self) -> dict:
        """``severity -> plan`` for the severities the scheme has."""
        return {s: getattr(self, s) for s in SEVERITIES if getattr(self, s) is not None}

    def to_dict(self) -> dict:
        return {"plans": {s: p.notation() for s, p in self.plans().items()},
                "rules": self.rules.as_dict()}


# --- the rules as one step function ------------------------------------------

@dataclass(frozen=True, kw_only=True)
class _Track:
    """Which counters a state carries (only those some rule reads)."""

    mask: bool
    run: bool
    total: bool
    stop: bool
    relax: bool
    restore: bool


def _tracked(scheme: Scheme, stop: bool) -> _Track:
    r = scheme.rules
    return _Track(mask=scheme.tightens, run=scheme.reduces,
                  total=scheme.reduces and r.reduce_limit is not None,
                  stop=stop and scheme.stops, relax=scheme.tightens and r.relax_accepts > 0,
                  restore=scheme.reduces and r.restore_rejects > 0)


FRESH = {"normal": (0, 0, 0, 0), "tightened": (1, 0, 0, 0), "reduced": (2, 0, 0, 0),
         "discontinued": (3, 0, 0, 0)}


def step(scheme: Scheme, state: tuple, accepted: bool, found: int = 0, *,
         track: _Track | None = None) -> tuple[tuple, str | None]:
    """The state after one lot, and the rule that fired (None if no switch).

    ``state`` is ``(severity, a, b, c)`` with severity 0 normal (``a`` the
    results of the last ``tighten_window - 1`` lots as bits, 1 = rejected,
    most recent lowest; ``b`` the run of accepted lots; ``c`` their total
    found, capped at ``reduce_limit + 1``), 1 tightened (``a`` the run of
    accepted lots, ``b`` the lots rejected in this period), 2 reduced (``a``
    the lots rejected in this period), 3 discontinued. A rule returned is the
    key that fired: ``tighten_rejects``, ``relax_accepts``, ``reduce_accepts``,
    ``restore_rejects`` or ``stop_rejects``.
    """
    t = track or _tracked(scheme, True)
    r = scheme.rules
    sev, a, b, c = state
    if sev == 0:
        keep = (1 << (r.tighten_window - 1)) - 1
        if not accepted:
            if t.mask:
                if bin(a).count("1") + 1 >= r.tighten_rejects:
                    return FRESH["tightened"], "tighten_rejects"
                a = ((a << 1) | 1) & keep
            return (0, a, 0, 0), None
        a = (a << 1) & keep if t.mask else 0
        if not t.run:
            return (0, a, 0, 0), None
        b += 1
        if t.total:
            c = min(c + int(found), r.reduce_limit + 1)
        if b >= r.reduce_accepts:
            if not t.total or c <= r.reduce_limit:
                return FRESH["reduced"], "reduce_accepts"
            return (0, a, 0, 0), None  # over the limit: the count starts afresh
        return (0, a, b, c), None
    if sev == 1:
        if accepted:
            if t.relax and a + 1 >= r.relax_accepts:
                return FRESH["normal"], "relax_accepts"
            return (1, a + 1 if t.relax else 0, b, 0), None
        if t.stop:
            if b + 1 >= r.stop_rejects:
                return FRESH["discontinued"], "stop_rejects"
            return (1, 0, b + 1, 0), None
        return (1, 0, 0, 0), None
    if sev == 2:
        if accepted or not t.restore:
            return state, None
        if a + 1 >= r.restore_rejects:
            return FRESH["normal"], "restore_rejects"
        return (2, a + 1, 0, 0), None
    return state, None


# --- the chain -----------------------------------------------------------------

# Outcome columns of the per-level probability table.
_ACC = {0: 0, 1: 2, 2: 4}
_REJ = {0: 1, 1: 3, 2: 5}
_FOUND0 = 6


@dataclass(frozen=True, kw_only=True)
class _Chain:
    states: tuple
    severity: np.ndarray
    rows: np.ndarray      # unique (row, col) pairs of the transition matrix
    cols: np.ndarray
    edge_pair: np.ndarray  # each edge's pair index
    edge_col: np.ndarray   # each edge's outcome column
    start: int = 0


def _build(scheme: Scheme, *, stop: bool, found_max: int | None, start: str = "normal",
           inside=(0, 1, 2)) -> _Chain:
    """All states reachable from a fresh start on ``start``, and the edges; states
    of a severity not ``inside`` (and discontinued) are kept as they are."""
    t = _tracked(scheme, stop)
    index = {FRESH[start]: 0}
    states = [FRESH[start]]
    src, dst, col = [], [], []
    i = 0
    while i < len(states):
        s = states[i]
        outs = []
        sev = s[0]
        if sev == 3 or sev not in inside:
            outs.append((s, None))
        elif sev == 0 and t.total:
            outs += [(step(scheme, s, True, j, track=t)[0], _FOUND0 + j)
                     for j in range(found_max + 1)]
            outs.append((step(scheme, s, False, track=t)[0], _REJ[0]))
        else:
            outs.append((step(scheme, s, True, track=t)[0], _ACC[sev]))
            outs.append((step(scheme, s, False, track=t)[0], _REJ[sev]))
        for new, k in outs:
            if new not in index:
                index[new] = len(states)
                states.append(new)
                if len(states) > MAX_STATES:
                    raise InputError(f"the switching rules need more than {MAX_STATES:,} "
                                     "chain states; use a shorter tighten_window, fewer "
                                     "reduce_accepts or a smaller reduce_limit")
            src.append(i)
            dst.append(index[new])
            col.append(-1 if k is None else k)
        i += 1
    src, dst, col = np.array(src), np.array(dst), np.array(col)
    pairs, inv = np.unique(src * len(states) + dst, return_inverse=True)
    return _Chain(states=tuple(states), severity=np.array([s[0] for s in states]),
                  rows=pairs // len(states), cols=pairs % len(states), edge_pair=inv,
                  edge_col=col)


def found_pmf(plan, ps, model: str, scope: Scope) -> np.ndarray:
    """``P(X = j)`` for ``j = 0..c`` of the count found in a single plan's
    sample at each level (rows): the law of the count found in an accepted lot."""
    from lotwise.core.stages import stage_pmf

    ps = np.asarray(ps, dtype=float)
    x = lot_counts(ps, scope.lot_size, "nearest") if model == "hypergeometric" else ps
    j = np.arange(plan.c + 1, dtype=float)[None, :]
    return np.asarray(stage_pmf(j, plan.n, model, x[:, None], scope.lot_size), dtype=float)


def _outcomes(scheme: Scheme, ps, model: str, scope: Scope, pas: dict) -> np.ndarray:
    """Probability of each outcome column at each level: ``(levels, columns)``."""
    L = len(ps)
    width = _FOUND0 + (scheme.normal.c + 1 if scheme.rules.reduce_limit is not None else 0)
    out = np.zeros((L, width))
    for s, k in _SEV.items():
        if s in pas:
            out[:, _ACC[k]] = pas[s]
            out[:, _REJ[k]] = 1.0 - pas[s]
    if width > _FOUND0:
        out[:, _FOUND0:] = found_pmf(scheme.normal, ps, model, scope)
        out[:, _REJ[0]] = np.clip(1.0 - out[:, _FOUND0:].sum(axis=1), 0.0, 1.0)
    return out


def _pair_values(chain: _Chain, probs: np.ndarray) -> np.ndarray:
    """Transition probabilities of every unique pair at every level."""
    L = probs.shape[0]
    vals = np.zeros((L, chain.rows.size))
    stay = chain.edge_col < 0
    cols = np.where(stay, 0, chain.edge_col)
    ev = np.where(stay[None, :], 1.0, probs[:, cols])
    np.add.at(vals.T, chain.edge_pair, ev.T)  # duplicate edges add up
    return vals


# --- linear algebra ------------------------------------------------------------

def _graph(n, rows, cols):
    from scipy import sparse

    return sparse.csr_matrix((np.ones(rows.size), (rows, cols)), shape=(n, n))


def _reach(n, rows, cols, start_nodes: np.ndarray) -> np.ndarray:
    """Nodes reachable from any node of the mask ``start_nodes`` (one breadth-first
    search from an added node ``n`` linked to them all)."""
    from scipy.sparse.csgraph import breadth_first_order

    src = np.flatnonzero(start_nodes)
    g = _graph(n + 1, np.concatenate([rows, np.full(src.size, n)]),
               np.concatenate([cols, src]))
    seen = np.zeros(n + 1, dtype=bool)
    seen[breadth_first_order(g, n, directed=True, return_predecessors=False)] = True
    return seen[:n]


def _solve(n, rows, cols, vals, rhs, *, transpose=False, ones_row=False) -> np.ndarray:
    """Solve ``(I - Q) x = rhs`` (or its transpose) at every level.

    ``Q`` has entries ``vals[:, k]`` at ``(rows[k], cols[k])`` (unique
    pairs). With ``ones_row`` the last equation is replaced by ``sum x = 1``
    (the stationary distribution of an irreducible chain). Dense and batched
    for small chains, sparse LU level by level otherwise.
    """
    L = vals.shape[0]
    r, c = (cols, rows) if transpose else (rows, cols)
    if n <= _DENSE_MAX:
        A = np.broadcast_to(np.eye(n), (L, n, n)).copy()
        A[:, r, c] -= vals
        b = np.broadcast_to(rhs, (L, n)).copy()
        if ones_row:
            A[:, -1, :] = 1.0
        return np.linalg.solve(A, b[..., None])[..., 0]
    from scipy import sparse
    from scipy.sparse.linalg import splu

    # One compressed-column pattern for every level; only the values change.
    q = r != n - 1 if ones_row else np.ones(r.size, dtype=bool)
    diag = np.arange(n - 1 if ones_row else n)
    er = np.concatenate([r[q], diag] + ([np.full(n, n - 1)] if ones_row else []))
    ec = np.concatenate([c[q], diag] + ([np.arange(n)] if ones_row else []))
    base = np.concatenate([np.zeros(int(q.sum())), np.ones(er.size - int(q.sum()))])
    u, inv = np.unique(ec * n + er, return_inverse=True)
    indices, indptr = u % n, np.searchsorted(u // n, np.arange(n + 1))
    data = np.zeros((L, u.size))
    np.add.at(data.T, inv, np.concatenate([-vals[:, q].T, np.broadcast_to(
        base[q.sum():, None], (base.size - int(q.sum()), L))]))
    out = np.empty((L, n))
    rhs = np.asarray(rhs, dtype=float)
    for k in range(L):
        A = sparse.csc_matrix((data[k], indices, indptr), shape=(n, n))
        out[k] = splu(A).solve(rhs)
    return out


def _sub(chain_rows, chain_cols, keep: np.ndarray):
    """Pairs inside the node set ``keep`` renumbered, and which pairs they were."""
    new = -np.ones(keep.size, dtype=np.int64)
    new[keep] = np.arange(int(keep.sum()))
    inside = keep[chain_rows] & keep[chain_cols]
    return new, inside, new[chain_rows[inside]], new[chain_cols[inside]]


def _groups(chain: _Chain, probs: np.ndarray, vals: np.ndarray):
    """Levels grouped by which outcomes have positive probability, each group
    with the mask of the pairs that are positive there (the same for every
    level of the group: a pair's probability is a sum of outcome probabilities)."""
    pos = probs > 0
    patterns, group = np.unique(pos, axis=0, return_inverse=True)
    group = np.asarray(group).ravel()
    for g in range(patterns.shape[0]):
        lv = np.flatnonzero(group == g)
        yield lv, vals[lv[0]] > 0


def _long_run(chain: _Chain, probs: np.ndarray, vals: np.ndarray) -> np.ndarray:
    """Long-run fraction of lots in each state from the start, per level.

    Levels are grouped by which pairs have positive probability; each group
    is analysed once (reachable states, strongly connected components, closed
    classes) and solved for all its levels together.
    """
    from scipy.sparse.csgraph import connected_components

    n = len(chain.states)
    L = vals.shape[0]
    out = np.zeros((L, n))
    for lv, pat in _groups(chain, probs, vals):
        rows, cols = chain.rows[pat], chain.cols[pat]
        start = np.zeros(n, dtype=bool)
        start[chain.start] = True
        seen = _reach(n, rows, cols, start)
        new, inside, rr, cc = _sub(rows, cols, seen)
        m = int(seen.sum())
        _, lab = connected_components(_graph(m, rr, cc), directed=True, connection="strong")
        leaves = np.zeros(lab.max() + 1, dtype=bool)
        leaves[:] = True
        leaves[np.unique(lab[rr[lab[rr] != lab[cc]]])] = False  # classes with an exit
        nodes = np.flatnonzero(seen)
        weights = _class_weights(chain, vals[lv][:, pat][:, inside], rr, cc, lab, leaves,
                                 new[chain.start])
        for cls in np.flatnonzero(leaves):
            members = lab == cls
            _, ins, r2, c2 = _sub(rr, cc, members)
            k = int(members.sum())
            v = vals[lv][:, pat][:, inside][:, ins]
            b = np.zeros(k)
            b[-1] = 1.0
            pi = _solve(k, r2, c2, v, b, transpose=True, ones_row=True)
            out[np.ix_(lv, nodes[members])] += weights[cls][:, None] * pi
    return np.clip(out, 0.0, None)


def _class_weights(chain, v, rr, cc, lab, leaves, start) -> dict:
    """Probability of ending in each closed class from ``start``, per level."""
    classes = np.flatnonzero(leaves)
    L = v.shape[0]
    if len(classes) == 1:
        return {int(classes[0]): np.ones(L)}
    closed = leaves[lab]
    trans = ~closed
    if not trans[start]:
        return {int(cl): np.full(L, float(lab[start] == cl)) for cl in classes}
    new, ins, r2, c2 = _sub(rr, cc, trans)
    m = int(trans.sum())
    res = {}
    for cl in classes:
        into = trans[rr] & (lab[cc] == cl) & closed[cc]
        rhs_lv = np.zeros((L, m))
        np.add.at(rhs_lv.T, new[rr[into]], v[:, into].T)
        x = np.stack([_solve(m, r2, c2, v[k:k + 1, ins], rhs_lv[k])[0] for k in range(L)])
        res[int(cl)] = x[:, new[start]]
    return res


def _visits(chain: _Chain, probs: np.ndarray, vals: np.ndarray,
            absorbing: np.ndarray) -> np.ndarray:
    """Expected lots spent in each state from the start until a state in
    ``absorbing`` is entered (the start's row of the fundamental matrix
    ``(I - Q)^{-1}``), per level: ``(levels, states)``; a row of ``inf`` where
    absorption is not certain (some reachable state never leads to it)."""
    n = len(chain.states)
    L = vals.shape[0]
    out = np.full((L, n), np.inf)
    trans = ~absorbing
    for lv, pat in _groups(chain, probs, vals):
        rows, cols = chain.rows[pat], chain.cols[pat]
        inner = trans[rows] & trans[cols]
        start = np.zeros(n, dtype=bool)
        start[chain.start] = True
        seen = _reach(n, rows[inner], cols[inner], start)
        exits = np.zeros(n, dtype=bool)
        exits[rows[trans[rows] & absorbing[cols]]] = True
        back = _reach(n, cols[inner], rows[inner], exits & seen)
        if not np.all(back[seen]):
            continue
        new, inside, rr, cc = _sub(rows[inner], cols[inner], seen)
        v = vals[lv][:, pat][:, inner][:, inside]
        m = int(seen.sum())
        e = np.zeros(m)
        e[new[chain.start]] = 1.0
        x = _solve(m, rr, cc, v, e, transpose=True)
        block = np.zeros((lv.size, n))
        block[:, seen] = np.clip(x, 0.0, None)  # rounding can leave -1e-17
        out[lv] = block
    return out


def _absorbed_in(chain: _Chain, vals: np.ndarray, visits: np.ndarray,
                 target: np.ndarray) -> np.ndarray:
    """Probability of ending in ``target`` states: expected visits times the
    one-step probabilities into them."""
    into = target[chain.cols] & ~target[chain.rows]
    with np.errstate(invalid="ignore"):
        return (visits[:, chain.rows[into]] * vals[:, into]).sum(axis=1)


# --- the scheme's OC -------------------------------------------------------------

@dataclass(frozen=True, kw_only=True)
class SchemeLevel:
    """The scheme at one quality level (``None``: infinite or switched off)."""

    p: float
    pa: float
    asn: float
    share: dict
    lots_to_tightened: float | None
    lots_to_discontinue: float | None
    plan_pa: dict = field(default_factory=dict)

    def as_dict(self) -> dict:
        return {"p": self.p, "pa": self.pa, "asn": self.asn, "share": dict(self.share),
                "lots_to_tightened": self.lots_to_tightened,
                "lots_to_discontinue": self.lots_to_discontinue,
                "plan_pa": dict(self.plan_pa)}


@dataclass(frozen=True, kw_only=True)
class SchemeOC:
    """The scheme's exact OC and its switching figures over quality levels."""

    scheme: Scheme
    model: str
    scope: Scope
    levels: tuple
    notes: tuple = ()
    states: int = 0

    def as_dict(self) -> dict:
        return {"scheme": "switching", "model": self.model, "lot_size": self.scope.lot_size,
                **self.scheme.to_dict(), "states": self.states,
                "levels": [lv.as_dict() for lv in self.levels], "notes": list(self.notes)}


def scheme_oc(scheme: Scheme, ps, model: str | None, scope: Scope) -> SchemeOC:
    """Exact OC, ASN, severity shares and expected lots to tightened and to
    discontinuation of ``scheme`` at quality levels ``ps``.

    Parameters
    ----------
    scheme : Scheme
    ps : sequence of float
        Quality levels (fractions, or nonconformities per unit).
    model : str or None
        The model of each plan's ``Pa`` (default the scope's exact one).
    scope : Scope

    Returns
    -------
    SchemeOC
    """
    model = scope.check_model(model)
    ps = np.atleast_1d(np.asarray(ps, dtype=float))
    plans = scheme.plans()
    for s, plan in plans.items():
        if scope.lot_size:
            try:
                plan.check_scope(scope)
            except InputError as exc:
                raise InputError(f"{s} ({plan.notation()}): {exc}") from None
    pas = {s: np.clip(np.asarray(p.pa(ps, model, scope), dtype=float).reshape(ps.shape), 0, 1)
           for s, p in plans.items()}
    asns = {s: np.asarray(p.asn(ps, model, scope), dtype=float).reshape(ps.shape)
            for s, p in plans.items()}
    probs = _outcomes(scheme, ps, model, scope, pas)
    found_max = scheme.normal.c if scheme.rules.reduce_limit is not None else None
    share, to_t, to_d, states = _figures(scheme, probs, found_max)
    share = {s: share[k] for s, k in _SEV.items() if k < 3}
    pa = sum(share[s] * pas[s] for s in plans)
    asn = sum(share[s] * asns[s] for s in plans)
    levels, notes = [], []
    for i, p in enumerate(ps):
        tt = float(to_t[i])
        td = None if to_d is None else float(to_d[i])
        levels.append(SchemeLevel(
            p=float(p), pa=float(pa[i]), asn=float(asn[i]),
            share={s: float(share[s][i]) for s in SEVERITIES},
            lots_to_tightened=tt if np.isfinite(tt) else None,
            lots_to_discontinue=td if td is not None and np.isfinite(td) else None,
            plan_pa={s: float(pas[s][i]) for s in plans}))
    notes += _notes(scheme, ps, to_t, to_d)
    return SchemeOC(scheme=scheme, model=model, scope=scope, levels=tuple(levels),
                    notes=tuple(notes), states=states)


def _figures(scheme: Scheme, probs: np.ndarray, found_max):
    """Shares of lots on each severity, lots to tightened and to discontinuation.

    When tightening and relaxing are both certain, the scheme renews at every
    fresh start on normal: a cycle is a normal phase (expected visits to each
    normal and reduced state from the fundamental matrix, ``t_N`` lots in all)
    and a tightened period (``t_T`` lots). The long-run shares are the expected
    lots on each severity per cycle over the cycle's length (renewal-reward),
    and, discontinuation being the end of a tightened period with probability
    ``P_stop``, the lots to it are ``(t_N + t_T) / P_stop`` (Wald's identity,
    the number of cycles being geometric). Other levels (a switch that is not
    certain) take the stationary distribution of the whole chain.
    """
    L = probs.shape[0]
    chain = _build(scheme, stop=False, found_max=found_max)
    vals = _pair_values(chain, probs)
    sev = chain.severity
    share = {k: np.zeros(L) for k in (0, 1, 2)}
    to_t, to_d = np.full(L, np.inf), (np.full(L, np.inf) if scheme.stops else None)
    fast = np.zeros(L, dtype=bool)
    states = len(chain.states)
    if scheme.tightens:
        vis = _visits(chain, probs, vals, sev == 1)
        to_t = vis.sum(axis=1)
        period = {}
        for stop in (False, True) if scheme.stops else (False,):
            ct = _build(scheme, stop=stop, found_max=None, start="tightened", inside=(1,))
            vt = _pair_values(ct, probs)
            vv = _visits(ct, probs, vt, ct.severity != 1)
            with np.errstate(invalid="ignore"):
                period[stop] = (vv.sum(axis=1), _absorbed_in(ct, vt, vv, ct.severity == 3))
            states = max(states, len(ct.states))
        t_off = period[False][0]
        fast = np.isfinite(to_t) & np.isfinite(t_off)
        with np.errstate(invalid="ignore", divide="ignore"):
            cycle = np.where(fast, to_t + t_off, 1.0)
            for k in (0, 2):
                share[k] = np.where(fast, np.where(fast[:, None], vis, 0.0)[:, sev == k]
                                    .sum(axis=1) / cycle, 0.0)
            share[1] = np.where(fast, t_off / cycle, 0.0)
            if scheme.stops:
                t_on, p_stop = period[True]
                ok = np.isfinite(to_t) & np.isfinite(t_on) & (p_stop > 0)
                to_d = np.where(ok, (to_t + t_on) / np.where(ok, p_stop, 1.0), np.inf)
    if not fast.all():
        slow = ~fast
        pi = _long_run(chain, probs[slow], vals[slow])
        for k in (0, 1, 2):
            share[k][slow] = pi[:, sev == k].sum(axis=1)
    return share, to_t, to_d, states


def _notes(scheme: Scheme, ps, to_t, to_d) -> list:
    """Why a figure is null."""
    notes = []
    if not scheme.tightens:
        why = ("the scheme has no tightened plan" if scheme.tightened is None
               else "tighten_rejects is 0")
        notes.append(f"lots_to_tightened is null at every level: {why}, so it never tightens")
    else:
        bad = [float(p) for p, t in zip(ps, to_t) if not np.isfinite(t)]
        if bad:
            notes.append("lots_to_tightened is null at p = " + ", ".join(f"{p:g}" for p in bad)
                         + ": there the switch to tightened inspection is not certain to come "
                         "(at p = 0 no lot is ever rejected), so the expected number of lots "
                         "is infinite")
    if to_d is None:
        notes.append("lots_to_discontinue is null at every level: discontinuation is switched "
                     "off (stop_rejects is 0 or the scheme never tightens)")
    else:
        bad = [float(p) for p, t in zip(ps, to_d) if not np.isfinite(t)]
        if bad:
            notes.append("lots_to_discontinue is null at p = " + ", ".join(f"{p:g}" for p in bad)
                         + ": there discontinuation is not certain to come, so the expected "
                         "number of lots is infinite")
    return notes


# --- state from records -------------------------------------------------------

@dataclass(frozen=True, kw_only=True)
class LotResult:
    """One inspected lot as the rules see it."""

    lot_id: str
    date: str
    accepted: bool
    found: int
    plan: object | None = None
    line: int | None = None
    note: str = ""


@dataclass(frozen=True, kw_only=True)
class Switch:
    """A change of severity: the lot that fired it, the rule and the lots behind it."""

    lot_id: str
    date: str
    source: str
    target: str
    rule: str
    lots: tuple = ()
    why: str = ""

    def as_dict(self) -> dict:
        return {"lot_id": self.lot_id, "date": self.date, "from": self.source,
                "to": self.target, "rule": self.rule, "lots": list(self.lots), "why": self.why}


@dataclass(frozen=True, kw_only=True)
class Tracking:
    """Where a supplier's lot history leaves the scheme."""

    next_severity: str
    reason: str
    switches: tuple
    flags: tuple
    history: tuple  # (lot, severity it was due, state after) per lot
    counters: dict

    def as_dict(self) -> dict:
        return {"next_severity": self.next_severity, "reason": self.reason,
                "counters": dict(self.counters),
                "switches": [s.as_dict() for s in self.switches],
                "flags": [dict(f) for f in self.flags],
                "lots": [{"lot_id": lot.lot_id, "date": lot.date, "severity": sev,
                          "accepted": lot.accepted, "found": lot.found}
                         for lot, sev, _ in self.history]}


def _evidence(scheme: Scheme, rule: str, period: list) -> tuple[list, str]:
    """The lots behind a switch and a sentence saying so."""
    r = scheme.rules
    ids = lambda lots: [x.lot_id for x in lots]  # noqa: E731
    if rule == "tighten_rejects":
        win = period[-r.tighten_window:]
        rej = [x for x in win if not x.accepted]
        return ids(rej), (f"{len(rej)} lots rejected ({', '.join(ids(rej))}) within "
                          f"{len(win)} consecutive lots on normal inspection (rule: "
                          f"{r.tighten_rejects} within {r.tighten_window})")
    if rule == "relax_accepts":
        run = period[-r.relax_accepts:]
        return ids(run), (f"{len(run)} consecutive lots accepted on tightened inspection "
                          f"({run[0].lot_id} to {run[-1].lot_id})")
    if rule == "reduce_accepts":
        run = period[-r.reduce_accepts:]
        tot = sum(x.found for x in run)
        lim = "" if r.reduce_limit is None else \
            f", {tot} nonconforming found in all (limit {r.reduce_limit})"
        return ids(run), (f"{len(run)} consecutive lots accepted on normal inspection "
                          f"({run[0].lot_id} to {run[-1].lot_id}){lim}")
    rej = [x for x in period if not x.accepted]
    where = "reduced" if rule == "restore_rejects" else "tightened"
    return ids(rej), (f"{len(rej)} lot(s) rejected during this period of {where} inspection "
                      f"({', '.join(ids(rej))})")


def _flags_for(scheme: Scheme, lot: LotResult, due: str) -> list:
    flags = []
    if due == "discontinued":
        flags.append("lot recorded after inspection was discontinued; taken as inspection "
                     "resumed on tightened")
    want = scheme.plan_for("tightened" if due == "discontinued" else due)
    if lot.plan is not None and want is not None and lot.plan != want:
        flags.append(f"inspected with {lot.plan.notation()} but due {due} inspection "
                     f"({want.notation()})")
    if lot.note:
        flags.append(lot.note)
    return [{"lot_id": lot.lot_id, "date": lot.date, "line": lot.line, "flag": f}
            for f in flags]


def track(scheme: Scheme, lots) -> Tracking:
    """Apply the rules to lots in inspection order, from a fresh start on normal.

    The recorded disposition drives the rules. A lot recorded after
    discontinuation is flagged and taken as inspection resumed on tightened
    (common practice, no source), with counts afresh. Each lot inspected with
    a plan other than its severity's is flagged.
    """
    t = _tracked(scheme, True)
    state = FRESH["normal"]
    period: list = []
    switches, flags, history = [], [], []
    for lot in lots:
        due = _NAMES[state[0]]
        flags += _flags_for(scheme, lot, due)
        if due == "discontinued":
            switches.append(Switch(lot_id=lot.lot_id, date=lot.date, source="discontinued",
                                   target="tightened", rule="resume", lots=(lot.lot_id,),
                                   why="inspection resumed after discontinuation"))
            state, period, due = FRESH["tightened"], [], "tightened"
        period.append(lot)
        new, rule = step(scheme, state, lot.accepted, lot.found, track=t)
        if rule is not None:
            ids, why = _evidence(scheme, rule, period)
            switches.append(Switch(lot_id=lot.lot_id, date=lot.date, source=due,
                                   target=_NAMES[new[0]], rule=rule, lots=tuple(ids), why=why))
            period = []
        state = new
        history.append((lot, due, state))
    nxt = _NAMES[state[0]]
    return Tracking(next_severity=nxt, reason=_reason(scheme, state, switches, history),
                    switches=tuple(switches), flags=tuple(flags), history=tuple(history),
                    counters=_counters(scheme, state))


def _counters(scheme: Scheme, state: tuple) -> dict:
    sev, a, b, c = state
    r = scheme.rules
    if sev == 0:
        out = {"rejected_in_window": bin(a).count("1")} if scheme.tightens else {}
        if scheme.reduces:
            out["accepted_run"] = b
            if r.reduce_limit is not None:
                out["found_in_run"] = c
        return out
    if sev == 1:
        return {"accepted_run": a, "rejected_in_period": b}
    if sev == 2:
        return {"rejected_in_period": a}
    return {}


def _reason(scheme: Scheme, state: tuple, switches: list, history: list) -> str:
    """Why the next lot gets its severity, in one sentence."""
    nxt = _NAMES[state[0]]
    if not history:
        return "no lots recorded: inspection starts on normal"
    last = switches[-1] if switches else None
    if last is not None and last.lot_id == history[-1][0].lot_id and last.rule != "resume":
        return f"{last.rule} fired at lot {last.lot_id}: {last.why}"
    since = f"since lot {last.lot_id} ({last.rule})" if last else "from the first lot"
    cnt = _counters(scheme, state)
    text = ", ".join(f"{k.replace('_', ' ')} {v}" for k, v in cnt.items())
    return f"on {nxt} inspection {since}; no rule has fired since" + (f" ({text})" if text
                                                                        else "")
