"""The trade-off view: single, double and sequential plans for the same two
risk points, side by side.

:func:`asn_tradeoff` designs one plan of each kind for the same targets and
scope (the single plan with the smallest sample, the double plan with the
smallest ASN at the AQL for the given ``n2 / n1``, and Wald's sequential
plan truncated at three times the single sample unless told otherwise) and
evaluates each under the same model: ``Pa`` and ASN at the AQL and the RQL,
the largest ASN over the OC curve, the most units ever inspected, and the
ASN and OC curves on a common grid. :func:`lotwise.documents.plots.multistage.asn_figure`
draws the curves.

Examples
--------
An incoming-inspection engineer weighs a destructive test of fuses
(AQL 1 %, RQL 5 %) for a continuous supply:

>>> from lotwise.core.types import Targets
>>> from lotwise.core.types import Scope
>>> t = asn_tradeoff(Targets(aql=0.01, rql=0.05), Scope())
>>> [row.scheme for row in t.rows]
['single', 'double', 'sequential']
>>> t.rows[0].asn_aql > t.rows[1].asn_aql > t.rows[2].asn_aql
True
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from lotwise.core.types import Scope
from lotwise.core.quantities import Infeasible, TooCostly

__all__ = ["TradeoffRow", "Tradeoff", "asn_tradeoff"]


@dataclass(frozen=True, kw_only=True)
class TradeoffRow:
    """One plan of the comparison (``plan`` None when none could be designed)."""

    scheme: str
    plan: object | None
    label: str
    pa_aql: float | None = None
    pa_rql: float | None = None
    asn_aql: float | None = None
    asn_rql: float | None = None
    asn_max: float | None = None
    n_max: int | None = None
    meets: bool | None = None
    note: str = ""

    def as_dict(self) -> dict:
        return {"scheme": self.scheme, "label": self.label,
                "plan": None if self.plan is None else self.plan.to_dict(),
                "pa_aql": self.pa_aql, "pa_rql": self.pa_rql, "asn_aql": self.asn_aql,
                "asn_rql": self.asn_rql, "asn_max": self.asn_max, "n_max": self.n_max,
                "meets": self.meets, "note": self.note}


@dataclass(frozen=True, kw_only=True)
class Tradeoff:
    """Result of :func:`asn_tradeoff`."""

    targets: object
    scope: Scope
    model: str
    rows: tuple
    ps: np.ndarray
    asn_curves: dict = field(default_factory=dict)
    pa_curves: dict = field(default_factory=dict)

    def as_dict(self, curves: bool = False) -> dict:
        out = {"scheme": "compare-all", "model": self.model, "lot_size": self.scope.lot_size,
               "per_unit": self.scope.per_unit, "targets": self.targets.as_dict(),
               "plans": [r.as_dict() for r in self.rows]}
        if curves:
            out["curves"] = {"p": [float(v) for v in self.ps],
                             "asn": {k: [float(v) for v in a] for k, a in self.asn_curves.items()},
                             "pa": {k: [float(v) for v in a] for k, a in self.pa_curves.items()}}
        return out


def _levels(targets, scope: Scope, model: str):
    if model == "hypergeometric":
        from lotwise.core import kernels as oc

        N = scope.lot_size
        return oc.lot_count(targets.aql, N, "up") / N, oc.lot_count(targets.rql, N, "down") / N
    return targets.aql, targets.rql


def _row(scheme, plan, targets, scope, model, note="", peak=True):
    from lotwise.analysis.audit import risks_under

    la, lr = _levels(targets, scope, model)
    r = risks_under(plan, targets, scope, model)
    asn_aql = float(plan.asn(la, model, scope))
    asn_rql = float(plan.asn(lr, model, scope))
    amax = float(plan.max_asn(model, scope)[0]) if peak else float("nan")
    n_max = plan.max_sample
    return TradeoffRow(scheme=scheme, plan=plan, label=plan.label, pa_aql=r.pa_aql,
                       pa_rql=r.pa_rql, asn_aql=asn_aql, asn_rql=asn_rql, asn_max=amax,
                       n_max=n_max, meets=r.meets, note=note)


def asn_tradeoff(targets, scope: Scope, *, model: str | None = None, ratio: float = 2.0,
                 minimize: str = "asn-aql", truncate: int | None = None,
                 points: int = 101, max_p: float | None = None,
                 curves: bool = True) -> Tradeoff:
    """Single, double and sequential plans for ``targets`` in ``scope``.

    Parameters
    ----------
    targets : lotwise.families.single.Targets
    scope : Scope
    model : str, optional
        Design and judging model (default: the exact one for the scope).
    ratio, minimize
        Passed to :func:`lotwise.families.double.design_double`.
    truncate : int, optional
        Truncation point of the sequential plan (default three times the
        single plan's sample).
    points : int
        Grid points of the curves, from 0 to ``max_p`` (default 2.5 times
        the RQL, at most 1).
    curves : bool
        False for the plans and their ASN at the AQL and RQL only: no
        curves, and ``asn_max`` NaN (the search over quality levels for the
        largest ASN is the costly part of a row).

    Returns
    -------
    Tradeoff
        A plan that cannot be designed is listed with ``plan=None`` and a
        note saying why.
    """
    from lotwise.families.double import design_double
    from lotwise.families.sequential import design_sequential
    from lotwise.families.single import design_single

    model = scope.check_model(model)
    kw = dict(aql=targets.aql, rql=targets.rql, alpha=targets.alpha, beta=targets.beta,
              lot_size=scope.lot_size, model=model, per_unit=scope.per_unit)
    rows = []
    for scheme, make in (("single", lambda: design_single(**kw).plan),
                         ("double", lambda: design_double(**kw, ratio=ratio,
                                                          minimize=minimize).plan),
                         ("sequential", lambda: design_sequential(**kw,
                                                                  truncate=truncate).plan)):
        try:
            plan = make()
        except (Infeasible, TooCostly) as exc:
            rows.append(TradeoffRow(scheme=scheme, plan=None, label="-", note=str(exc)))
            continue
        rows.append(_row(scheme, plan, targets, scope, model, peak=curves))
    if not curves:
        return Tradeoff(targets=targets, scope=scope, model=model, rows=tuple(rows),
                        ps=np.zeros(0))
    top = max_p if max_p is not None else 2.5 * targets.rql
    if not scope.per_unit:
        top = min(top, 1.0)
    ps = np.linspace(0.0, top, points)
    if model == "hypergeometric":
        ps = np.unique(np.round(ps * scope.lot_size)) / scope.lot_size
    asn, pa = {}, {}
    for row in rows:
        if row.plan is None:
            continue
        key = f"{row.scheme}: {row.label}"
        pa[key] = np.asarray(row.plan.pa(ps, model, scope), dtype=float)
        asn[key] = np.asarray(row.plan.asn(ps, model, scope), dtype=float)
    return Tradeoff(targets=targets, scope=scope, model=model, rows=tuple(rows), ps=ps,
                    asn_curves=asn, pa_curves=pa)
