"""The skip-lot part of a check: the long-run acceptance and the fraction of
lots inspected at the AQL and RQL, beside the reference plan's."""

from __future__ import annotations

from lotwise.core.quantities import format_level, format_pct
from lotwise.core.types import TOL, Scope
from lotwise.families.skiplot import SkipLotPlan
from lotwise.core.numbers import probability

__all__ = ["skiplot_report", "render_skiplot"]


def skiplot_report(plan: SkipLotPlan, targets, scope: Scope, model: str) -> dict:
    """The skip-lot part of a check: ``Pa`` and ``F`` at the AQL and the RQL
    beside the reference plan's ``Pa``, under every model."""
    from lotwise.core import kernels as oc

    models = {}
    for m in scope.models:
        if m == "hypergeometric":
            d1 = oc.lot_count(targets.aql, scope.lot_size, "up")
            d2 = oc.lot_count(targets.rql, scope.lot_size, "down")
            ref = (float(plan.reference.pa_count(d1, scope)),
                   float(plan.reference.pa_count(d2, scope)))
            F = (float(plan.fraction_inspected_count(d1, scope)),
                 float(plan.fraction_inspected_count(d2, scope)))
            pa = (float(plan.pa_count(d1, scope)), float(plan.pa_count(d2, scope)))
        else:
            ref = (float(plan.reference.pa(targets.aql, m, scope)),
                   float(plan.reference.pa(targets.rql, m, scope)))
            F = (float(plan.fraction_inspected(targets.aql, m, scope)),
                 float(plan.fraction_inspected(targets.rql, m, scope)))
            pa = (float(plan.pa(targets.aql, m, scope)), float(plan.pa(targets.rql, m, scope)))
        models[m] = {"pa_aql": pa[0], "pa_rql": pa[1], "alpha": 1 - pa[0], "beta": pa[1],
                     "meets_alpha": bool(1 - pa[0] <= targets.alpha + TOL),
                     "meets_beta": bool(pa[1] <= targets.beta + TOL),
                     "reference_pa_aql": ref[0], "reference_pa_rql": ref[1],
                     "fraction_inspected_aql": F[0], "fraction_inspected_rql": F[1]}
        models[m]["meets"] = models[m]["meets_alpha"] and models[m]["meets_beta"]
    main = models[model]
    out = {"scheme": "skiplot", "i": plan.i, "f": plan.f, "reference": plan.reference.to_dict(),
           "model": model, **{k: main[k] for k in ("pa_aql", "pa_rql", "alpha", "beta",
                                                     "meets", "fraction_inspected_aql",
                                                     "fraction_inspected_rql")},
           "models": models}
    pu = scope.per_unit
    lv = lambda x: format_level(x, pu)  # noqa: E731
    ref = plan.reference
    n = ref.max_sample
    if ref.varying_sample:  # units per inspected lot: the reference plan's ASN at the AQL
        level = (oc.lot_count(targets.aql, scope.lot_size, "up") / scope.lot_size
                 if model == "hypergeometric" else targets.aql)
        n = float(ref.asn(level, model, scope))
    out["statements"] = [
        f"Skip-lot SkSP-2 over {plan.reference.label}: after {plan.i} consecutive accepted lots, "
        f"inspect {format_pct(plan.f)} of lots at random; return to every lot on a rejection.",
        f"At the AQL {lv(targets.aql)}: {format_pct(main['pa_aql'])} of lots accepted (reference "
        f"plan {format_pct(main['reference_pa_aql'])}), {format_pct(main['fraction_inspected_aql'])}"
        f" of lots inspected: {main['fraction_inspected_aql'] * n:.1f} units per lot on average "
        f"instead of {n if isinstance(n, int) else f'{n:.1f}'}.",
        f"At the RQL {lv(targets.rql)}: {format_pct(main['pa_rql'])} of lots accepted (reference "
        f"plan {format_pct(main['reference_pa_rql'])}), {format_pct(main['fraction_inspected_rql'])}"
        " of lots inspected.",
        "Skip-lot inspection suits a supplier with a proven record and lots of the same product "
        "made under the same conditions; it is not for critical characteristics, which need "
        "100 % inspection or stricter plans as contracts and regulations require.",
    ]
    return out


def render_skiplot(rep: dict, per_unit: bool = False) -> str:
    from lotwise.analysis.report import table

    lines = [f"  Skip-lot SkSP-2: i = {rep['i']}, f = {rep['f']:g} over the plan above"]
    rows = []
    for m, r in rep["models"].items():
        rows.append([m + (" *" if m == rep["model"] else ""),
                     probability(r['pa_aql'], 5), probability(r['reference_pa_aql'], 5),
                     probability(r['fraction_inspected_aql'], 4),
                     probability(r['pa_rql'], 5), probability(r['reference_pa_rql'], 5),
                     probability(r['fraction_inspected_rql'], 4)])
    lines.append(table(rows, ["model", "Pa(AQL)", "ref Pa(AQL)", "F(AQL)", "Pa(RQL)",
                              "ref Pa(RQL)", "F(RQL)"], indent="    "))
    lines.append("    (F: average fraction of lots inspected)")
    lines += [f"    - {s}" for s in rep["statements"]]
    return "\n".join(lines)
