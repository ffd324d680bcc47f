"""One assessment of any plan against agreed targets: the JSON contract.

:func:`assess` judges a plan of any family (single, double, multiple,
sequential, chain, skip-lot, variables, ...) against the targets in a scope
and returns an :class:`Assessment`. Every command that prints a plan's
figures -- ``design``, ``check``, ``oc``, ``compare``, ``sheet``, ``batch``,
``next``, ``validate`` -- goes through it, so the terminal, ``--json``, the
sheets and the Python API show the same numbers.

The JSON object (:meth:`Assessment.to_json`) has one shape for every family;
a key means the same thing, with the same type, whatever plan it describes:

``scheme`` and the plan's own keys (``n``, ``c``, ``r`` for a single plan;
``n1, c1, r1, n2, c2`` for a double plan; ...), ``label``, ``notation``,
``max_sample``
    what was judged;
``model``, ``lot_size``, ``per_unit``, ``targets``
    how and against what;
``models``
    per applicable model ``pa_aql``, ``pa_rql``, ``alpha``, ``beta``,
    ``meets``, ``meets_alpha``, ``meets_beta`` (and ``lot_counts`` under the
    hypergeometric model; ``asn_aql``, ``asn_rql`` for plans whose sample
    varies);
``pa_aql``, ``pa_rql``, ``alpha``, ``beta``, ``meets``
    the same under the judging model;
``plan_quality``
    the plan's own producer's, indifference and consumer's quality levels;
``plan_quality_counts``, ``plan_quality_pa`` (finite lot: an attribute plan
judged by the hypergeometric model; absent otherwise)
    those levels as whole counts ``D`` of the lot (``plan_quality`` is then
    ``D/N``) and the true ``Pa`` at each count;
``asn`` (plans whose sample varies)
    ``{"aql", "rql", "max", "max_at"}``, and ``asn_curtailed``;
``aoql``, ``aoql_p``, ``ati``, ``rectifying`` (lot size known)
    rectifying inspection: the AOQL (a number) and where it occurs, the ATI
    at the AQL and RQL, the formula and the same under every model;
``poisson_verdict`` (and ``poisson_design``)
    how far the Poisson approximation is from the exact model;
``statements``
    the plain-words sentences, ending with the safety note.

Family-specific keys (Wald's approximations of a sequential plan, the c = 0
comparison of a chain plan, the attributes plan beside a variables plan) come
from the family's ``extras`` hook (:class:`lotwise.families.base.Family`).

Examples
--------
A supplier quotes "sample 80, accept on 2" for lots agreed at AQL 1 % and
RQL 8 %:

>>> from lotwise.core.types import Scope, Targets
>>> from lotwise.families.base import parse_plan
>>> a = assess(parse_plan("n=80,c=2"), Targets(aql=0.01, rql=0.08), Scope())
>>> a.meets, round(a.to_json()["beta"], 4)
(True, 0.0404)
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from lotwise.analysis.audit import risks_under
from lotwise.core.search import ASN_TOP_PA
from lotwise.core.quantities import (format_level, format_pct, format_risk as _pct,
                                     format_risk_vs as pct_vs)
from lotwise.core.types import AoqFormula, Scope, Targets, lot_counts, parse_choice, table_counts
from lotwise.families.base import Plan, family_of

__all__ = ["Assessment", "assess", "SAFETY", "oc_levels", "oc_table", "count_rule"]

#: The safety note every report ends with.
SAFETY = ("Sampling cannot guarantee a lot free of nonconforming items; critical "
          "characteristics need 100 % inspection or stricter plans per contract and "
          "regulation. Defer to your applicable standards and qualified quality "
          "professionals.")



#: Values :func:`_copy` shares rather than copies (immutable, checked by exact type).
_ATOMS = frozenset((int, float, str, bool, type(None)))


def _copy(obj):
    """A deep copy of a report: dicts and lists copied level by level, a flat
    list of numbers in one step (``copy.deepcopy`` visits each of the 200,000
    numbers of a sequential plan truncated at 100,000 units); anything else by
    ``copy.deepcopy``."""
    t = type(obj)
    if t in _ATOMS:
        return obj
    if t is dict:
        return {k: _copy(v) for k, v in obj.items()}
    if t is list:
        if _ATOMS.issuperset(map(type, obj)):
            return obj.copy()
        return [_copy(v) for v in obj]
    import copy

    return copy.deepcopy(obj)


@dataclass(frozen=True, kw_only=True)
class Assessment:
    """A plan judged against targets in a scope (see the module notes).

    Attributes
    ----------
    plan : Plan
    targets : Targets
    scope : Scope
    model : str
        The model the plan is judged by.
    design : object or None
        The designer's result, when the plan was designed.
    report : dict
        The JSON object (use :meth:`to_json` for a copy).
    """

    plan: Plan
    targets: Targets
    scope: Scope
    model: str
    design: object = None
    report: dict = field(default_factory=dict, repr=False)

    @property
    def meets(self) -> bool:
        """The plan meets both risks under the judging model."""
        return bool(self.report["meets"])

    @property
    def alpha(self) -> float:
        return float(self.report["alpha"])

    @property
    def beta(self) -> float:
        return float(self.report["beta"])

    def to_json(self) -> dict:
        """The JSON object the command line prints with ``--json`` (a copy: the
        caller may add to it)."""
        return _copy(self.report)

    def oc(self, p=None, *, points: int = 101):
        """The OC table as a pandas DataFrame: ``p``, ``Pa`` under every
        applicable model, and ASN, AOQ and ATI where they apply.

        ``p`` defaults to ``points`` levels from 0 to where the exact ``Pa``
        has fallen to 1 %. In a finite lot (hypergeometric) each level is
        taken as the whole count ``lot_count`` the OC table uses
        (:func:`count_rule`), and the hypergeometric ``Pa``, AOQ and ATI are
        those of that count.
        """
        import pandas as pd

        if p is None:
            p = oc_levels(self.plan, self.scope, self.model, points=points)
        ps = np.atleast_1d(np.asarray(p, dtype=float))
        cols = {"p": ps}
        for m in self.report["models"]:
            cols[m] = np.atleast_1d(np.asarray(self.plan.pa(ps, m, self.scope), dtype=float))
        if self.plan.attribute_plan and self.model == "hypergeometric":
            # whole counts rounded as the OC table rounds them (see count_rule)
            split, _ = count_rule(self.plan, self.scope, aql=self.targets.aql,
                                  rql=self.targets.rql)
            d = table_counts(ps, self.scope.lot_size, split, aql=self.targets.aql,
                             rql=self.targets.rql)
            cols["hypergeometric"] = np.atleast_1d(np.asarray(
                self.plan.pa_count(d, self.scope), dtype=float))
            cols["lot_count"] = d.astype(int)
            extra = _sample_columns(self.plan, self.scope, self.model, ps, d)
            cols.update({k: v for k, v in extra.items() if k in ("asn", "aoq", "ati")})
            if not self.plan.varying_sample:
                cols["aoq"] = np.atleast_1d(self.plan.aoq_count(d, self.scope))
                cols["ati"] = np.atleast_1d(self.plan.ati_count(d, self.scope))
            return pd.DataFrame(cols)
        if self.plan.varying_sample:
            cols["asn"] = np.atleast_1d(self.plan.asn(ps, self.model, self.scope))
        if self.plan.attribute_plan and self.scope.lot_size:
            cols["aoq"] = np.atleast_1d(self.plan.aoq(ps, self.model, self.scope))
            cols["ati"] = np.atleast_1d(self.plan.ati(ps, self.model, self.scope))
        return pd.DataFrame(cols)

    def render(self, title: str) -> str:
        """Terminal text (the same numbers as :meth:`to_json`)."""
        from lotwise.analysis.report import render_assessment

        return render_assessment(self.report, title)


def oc_levels(plan, scope: Scope, model: str, *, points: int = 101, top_pa: float = 0.01):
    """``points`` quality levels from 0 to where ``Pa`` has fallen to ``top_pa``."""
    top = plan.quality_at(top_pa, model, scope, "consumer")
    if not scope.per_unit:
        top = min(1.0, top)
    return np.linspace(0.0, max(top, 1e-9), points)


def count_rule(plan: Plan, scope: Scope, *, aql=None, rql=None) -> tuple[int, str]:
    """The plan's indifference count (where a finite lot's OC table switches
    from rounding up to rounding down, see :func:`lotwise.core.types.table_counts`)
    and the rule in words for the table's header."""
    split = int(plan.quality_count(0.5, scope, "indifference"))
    bounds = []
    if aql is not None:
        bounds.append(f"up at levels up to the AQL ({format_level(aql)})")
    if rql is not None:
        bounds.append(f"down from the RQL ({format_level(rql)}) on")
    text = (f"lot_count D: the nonconforming items of the lot of {scope.lot_size} a row is "
            "taken as (hypergeometric Pa, ASN, AOQ, ATI at D); p N rounded up below the "
            f"plan's indifference count {split}, down from it on"
            + ("; " + " and ".join(bounds) if bounds else "")
            + " (design's conservative rounding: up at the AQL, down at the RQL)")
    return split, text


def oc_table(plan: Plan, scope: Scope, model: str, ps, *, aql=None,
             rql=None) -> tuple[list[str], list[list]]:
    """The OC table of any attribute plan: ``(header, rows)``.

    Columns: ``p``; ``Pa`` under every applicable model; ``poisson_minus_exact``
    (where Poisson is an approximation); ``lot_count`` (finite lot: the whole
    count ``D`` each level is taken as, rounded by :func:`count_rule`; the
    hypergeometric ``Pa`` and, under that model, ASN, AOQ and ATI are those
    of ``D``); ``asn`` and ``asn_curtailed`` (plans whose sample varies);
    ``aoq`` and ``ati`` (lot size known, plans whose sample varies); and the
    family's own columns (``Family.oc_columns``, e.g. Wald's approximations
    of a sequential plan).
    """
    ps = np.atleast_1d(np.asarray(ps, dtype=float))
    models = plan.models_for(scope)
    cols = {m: np.atleast_1d(np.asarray(plan.pa(ps, m, scope, "nearest"), dtype=float))
            for m in models if m != "hypergeometric"}
    extra = {}
    counts = None
    if "hypergeometric" in models:
        split, _ = count_rule(plan, scope, aql=aql, rql=rql)
        counts = table_counts(ps, scope.lot_size, split, aql=aql, rql=rql)
        cols["hypergeometric"] = np.atleast_1d(np.asarray(plan.pa_count(counts, scope),
                                                          dtype=float))
    exact = models[0]
    if exact != "poisson" and "poisson" in cols:
        extra["poisson_minus_exact"] = cols["poisson"] - cols[exact]
    if counts is not None:
        extra["lot_count"] = counts.astype(int)
    extra.update(_sample_columns(plan, scope, model, ps, counts))
    fam = family_of(plan)
    if fam.oc_columns is not None:
        own = fam.oc_columns(plan, ps, model, scope, counts=counts)
        extra.update({k: np.atleast_1d(v) for k, v in own.items()})
    header = ["p", *models, *extra]
    rows = []
    for i, pv in enumerate(ps):
        row = [float(pv)] + [float(cols[m][i]) for m in models]
        row += [int(v[i]) if k == "lot_count" else float(v[i]) for k, v in extra.items()]
        rows.append(row)
    return header, rows


def _sample_columns(plan, scope: Scope, model: str, ps, counts) -> dict:
    """ASN (and curtailed ASN), AOQ and ATI columns of plans whose sample varies;
    at the table's whole counts under the hypergeometric model."""
    if not plan.varying_sample:
        return {}
    by_count = model == "hypergeometric" and counts is not None
    out = {"asn": np.atleast_1d(plan.asn_count(counts, scope) if by_count
                                else plan.asn(ps, model, scope))}
    if plan.has_curtailment:
        at = counts / scope.lot_size if by_count else ps
        out["asn_curtailed"] = np.atleast_1d(plan.asn_curtailed(at, model, scope))
    if scope.lot_size:
        if by_count:
            out["aoq"] = np.atleast_1d(plan.aoq_count(counts, scope))
            out["ati"] = np.atleast_1d(plan.ati_count(counts, scope))
        else:
            out["aoq"] = np.atleast_1d(plan.aoq(ps, model, scope))
            out["ati"] = np.atleast_1d(plan.ati(ps, model, scope))
    return out


def assess(plan: Plan, targets: Targets, scope: Scope | None = None, model: str | None = None,
           *, design=None, verdict: bool = True, aoq_formula: str | None = None,
           rectifying: bool = True, design_options: dict | None = None) -> Assessment:
    """Judge ``plan`` against ``targets`` in ``scope``.

    Parameters
    ----------
    plan : Plan
        A plan of any family.
    targets : Targets
        AQL, RQL and the two risks.
    scope : Scope, optional
        Lot size and what is counted (default: a process, items).
    model : str, optional
        The judging model; default the scope's exact one.
    design : object, optional
        The designer's result, when the plan was designed (its
        ``report_extra()`` keys are added).
    verdict : bool
        Add the Poisson verdict.
    aoq_formula : {'screened', 'simple'}, optional
        Rectifying-inspection convention (lot size known).
    rectifying : bool
        Add the rectifying-inspection figures when the lot size is known.
    design_options : dict, optional
        Designer options (e.g. a double plan's ``ratio``) for the plan a
        Poisson-based design of the same family would choose.
    """
    scope = scope or Scope()
    plan = plan.for_scope(scope)
    plan.check_cost()  # a report beyond its budget is refused before any work
    fam = family_of(plan)
    model = plan.judging_model(scope, model)
    formula = parse_choice(AoqFormula, aoq_formula or "screened", "--aoq-formula").value
    rep = _core(plan, targets, scope, model)
    if plan.attribute_plan and scope.lot_size and rectifying:
        from lotwise.analysis.rectifying import rectifying_summary

        rep.update(rectifying_summary(plan, scope, model, targets, formula))
    if verdict and plan.attribute_plan:
        from lotwise.analysis.approximation import verdict_keys

        rep.update(verdict_keys(plan, targets, scope, model, design_options or {}))
    extra_statements = []
    if fam.extras is not None:
        extra = dict(fam.extras(plan, targets, scope, model, rep))
        extra_statements += extra.pop("statements", [])
        rep.update(extra)
    if design is not None:
        rep["feasible"] = True
        extra = dict(design.report_extra())
        extra_statements += [s for s in extra.pop("statements", []) if s != SAFETY]
        rep.update(extra)
    if rep.get("never_accepts"):  # the family's extras say why first
        rep["statements"] = extra_statements + [SAFETY]
    else:
        rep["statements"] = _statements(rep, plan, scope) + extra_statements + [SAFETY]
    return Assessment(plan=plan, targets=targets, scope=scope, model=model, design=design,
                      report=rep)


def _core(plan, targets: Targets, scope: Scope, model: str) -> dict:
    """The keys every family has."""
    models = {}
    for m in plan.models_for(scope):
        d = risks_under(plan, targets, scope, m).as_dict()
        if plan.varying_sample:
            la, lr = _levels(targets, scope, m)
            d["asn_aql"], d["asn_rql"] = (float(v) for v in np.ravel(
                plan.asn(np.array([la, lr]), m, scope)))
        models[m] = d
    main = models[model]
    rep = {"scheme": plan.scheme}
    rep.update(plan.to_dict())
    rep.update({
        "label": plan.label,
        "notation": plan.notation(),
        "max_sample": plan.max_sample,
        "model": model,
        "lot_size": scope.lot_size,
        "per_unit": scope.per_unit,
        "targets": targets.as_dict(),
        "models": models,
        "pa_aql": main["pa_aql"], "pa_rql": main["pa_rql"],
        "alpha": main["alpha"], "beta": main["beta"],
        "meets": main["meets"],
    })
    rep.update(_plan_quality(plan, targets, scope, model))
    if "lot_counts" in main:
        lc = main["lot_counts"]
        rep["lot_counts"] = {"aql": lc["aql"], "rql": lc["rql"], "aql_rounding": "up",
                             "rql_rounding": "down"}
    if plan.varying_sample:
        amax, amax_at = plan.max_asn(model, scope)
        rep["n_max"] = plan.max_sample
        rep["asn"] = {"aql": main["asn_aql"], "rql": main["asn_rql"], "max": float(amax),
                      "max_at": float(amax_at)}
        rep["asn_curtailed"] = None
        if plan.has_curtailment:
            la, lr = _levels(targets, scope, model)
            ac = np.ravel(plan.asn_curtailed(np.array([la, lr]), model, scope))
            rep["asn_curtailed"] = {"aql": float(ac[0]), "rql": float(ac[1])}
    return rep


def _plan_quality(plan, targets: Targets, scope: Scope, model: str) -> dict:
    """``plan_quality``: the levels where ``Pa`` is 1 - alpha, 0.5 and beta.

    In a finite lot (an attribute plan judged by the hypergeometric model)
    they are whole counts ``D`` (``plan_quality_counts``), ``plan_quality``
    holds ``D/N`` and ``plan_quality_pa`` the true ``Pa`` at each count:
    producer the largest ``D`` with ``Pa >= 1 - alpha``, indifference the
    ``D`` whose ``Pa`` is nearest 0.5, consumer the smallest ``D`` with
    ``Pa <= beta``. Elsewhere the two count keys are absent.
    """
    sides = ("producer", "indifference", "consumer")
    probs = (1.0 - targets.alpha, 0.5, targets.beta)
    if plan.attribute_plan and model == "hypergeometric":
        N = scope.lot_size
        counts = {s: int(plan.quality_count(pr, scope, s)) for s, pr in zip(sides, probs)}
        return {"plan_quality": {s: counts[s] / N for s in sides},
                "plan_quality_counts": counts,
                "plan_quality_pa": {s: float(plan.pa_count(counts[s], scope)) for s in sides}}
    extra = (ASN_TOP_PA,) if plan.varying_sample else ()  # max_asn's range, found alongside
    levels = plan.quality_levels(probs + extra, model, scope, sides + ("consumer",) * len(extra))
    return {"plan_quality": {s: float(q) for s, q in zip(sides, levels)}}


def _levels(targets, scope: Scope, model: str):
    """The AQL and RQL as evaluated under ``model`` (whole lot counts under
    the hypergeometric model, rounded up at the AQL and down at the RQL)."""
    if model == "hypergeometric":
        from lotwise.core import kernels as oc

        N = scope.lot_size
        return (oc.lot_count(targets.aql, N, "up") / N, oc.lot_count(targets.rql, N, "down") / N)
    return targets.aql, targets.rql


def _quality_sentences(rep: dict, lots: str, lvl) -> list[str]:
    """The plan's own quality levels in words; in a finite lot each a whole
    count stated with its true ``Pa``."""
    t, q = rep["targets"], rep["plan_quality"]
    counts = rep.get("plan_quality_counts")
    if counts is None:
        return [f"The AQL it really protects: {lots} {lvl(q['producer'])} are accepted "
                f"{_pct(1 - t['alpha'])} of the time.",
                f"Indifference quality: {lots} {lvl(q['indifference'])} are accepted half "
                "the time.",
                f"The RQL it really gives: {lots} {lvl(q['consumer'])} are accepted "
                f"{_pct(t['beta'])} of the time."]
    N, pa = rep["lot_size"], rep["plan_quality_pa"]

    def held(side):
        return (f"lots holding {counts[side]} of {N} nonconforming "
                f"({format_pct(q[side], 3)}) are accepted {_pct(pa[side])} of the time")

    return [f"The AQL it really protects: {held('producer')} (the largest count of the lot "
            f"accepted at least {_pct(1 - t['alpha'])} of the time).",
            f"Indifference quality: {held('indifference')} (the count whose acceptance is "
            "nearest half the time).",
            f"The RQL it really gives: {held('consumer')} (the smallest count accepted at "
            f"most {_pct(t['beta'])} of the time)."]


def _statements(rep: dict, plan, scope: Scope) -> list[str]:
    """Plain-words sentences: risks at the targets, the plan's own quality
    levels, lot rounding, ASN and AOQL where they apply."""
    t, m = rep["targets"], rep["models"][rep["model"]]
    per_unit = scope.per_unit
    lots = "lots averaging" if per_unit else "lots with"
    if per_unit:
        lvl = lambda x: f"{x:.4g} nonconformities per unit"  # noqa: E731
    else:
        lvl = lambda x: f"{format_level(x)} nonconforming"  # noqa: E731
    ok = lambda b: "met" if b else "NOT met"  # noqa: E731
    out = [
        f"Accepts {lots} {lvl(t['aql'])} (the AQL) {_pct(m['pa_aql'])} of the time: "
        f"producer's risk {pct_vs(m['alpha'], t['alpha'])} against a target of "
        f"{_pct(t['alpha'])}, {ok(m['meets_alpha'])}.",
        f"Accepts {lots} {lvl(t['rql'])} (the RQL) {_pct(m['pa_rql'])} of the time: "
        f"consumer's risk {pct_vs(m['beta'], t['beta'])} against a target of "
        f"{_pct(t['beta'])}, {ok(m['meets_beta'])}.",
        *_quality_sentences(rep, lots, lvl),
    ]
    if "lot_counts" in rep:
        lc = rep["lot_counts"]
        out.append(f"Lot of {rep['lot_size']}: the AQL is taken as {lc['aql']} and the RQL as "
                   f"{lc['rql']} nonconforming item(s) (rounded up and down, the conservative "
                   "way for each risk).")
    if "asn" in rep:
        a = rep["asn"]
        out.append(f"Average sample number: {a['aql']:.1f} units at the AQL and {a['rql']:.1f} "
                   f"at the RQL; the largest average is {a['max']:.1f} at {lvl(a['max_at'])}; "
                   f"never more than {rep['max_sample']} units.")
        cur = rep.get("asn_curtailed")
        if cur:
            out.append(f"Stopping as soon as the decision is certain (curtailment) lowers the "
                       f"average to {cur['aql']:.1f} at the AQL and {cur['rql']:.1f} at the "
                       "RQL; the decisions do not change.")
    if "aoql" in rep:
        out.append(f"With rejected lots inspected 100 % and nonconforming items replaced, the "
                   f"average outgoing quality is at worst {format_level(rep['aoql'], per_unit)} "
                   f"(AOQL, at {format_level(rep['aoql_p'], per_unit)} incoming); any single "
                   "accepted lot may be worse.")
    return out
