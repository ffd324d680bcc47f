"""What a plan sheet says: the content both renderers (PDF, Markdown) use.

:func:`build_content` formats a resolved plan file
(:class:`~lotwise.documents.partplan.PartPlan`) into a :class:`SheetContent`
from the same result dictionaries as ``--json``, so a number on the sheet is
the number the command line reports. :func:`oc_rows` is the OC table written
beside the sheet.
"""

from __future__ import annotations

import datetime as _dt
from dataclasses import dataclass, field
from pathlib import Path

from lotwise.core.numbers import probability
from lotwise.core.quantities import format_level, format_pct
from lotwise.core.version import __version__

__all__ = ["CAUTION", "DEFAULT_REJECTED", "MODEL_TEXT", "ORDER_NOTE", "PLAN_HEADER",
           "RISK_HEADER", "order_rows",
           "SheetContent", "alternatives", "build_content", "error_free", "fmt_pa", "oc_rows",
           "plan_name"]

CAUTION = (
    "Sampling inspection judges lots; it cannot guarantee that an accepted lot is free of "
    "nonconforming items, and a plan's protection holds only under random selection and the "
    "stated model. Critical (safety-related) characteristics call for 100 % inspection, "
    "error-proofing or the stricter plans a contract or regulation requires. The user remains "
    "responsible for meeting the applicable standards, customer requirements and regulations; "
    "this sheet supports, and does not replace, the judgement of a qualified quality "
    "professional."
)

DEFAULT_REJECTED = (
    "Hold and tag the lot as rejected; do not release it to production. Notify the supplier. "
    "Disposition under the nonconforming-material procedure: return to the supplier, or screen "
    "every item and replace the nonconforming ones (rectifying inspection), with the decision "
    "recorded against the lot."
)

#: How the sheet names the model the plan is judged by.
MODEL_TEXT = {
    "hypergeometric": "hypergeometric (finite lot, drawn without replacement; type A OC)",
    "binomial": "binomial (process fraction nonconforming; type B OC)",
    "poisson": "Poisson",
}

PLAN_HEADER = ["Characteristic", "Class", "Sample", "Accept (c)", "Reject (r)", "AQL / alpha",
               "RQL / beta"]
RISK_HEADER = ["Char.", "Model", "Pa(AQL)", "alpha", "target", "Pa(RQL)", "beta", "target",
               "Verdict"]


ORDER_NOTE = (
    "The units of the pick list in a random order drawn from its seed. Take them in this "
    "order: the positions a procedure names (a stage, the units of a sequential plan, a "
    "smaller sample) are then themselves a random sample of the lot, which the pick list's "
    "own rows, sorted by unit number, are not.")


def order_rows(order, per: int = 10) -> list:
    """The inspection order as table rows: the positions, then ``per`` unit numbers."""
    out = []
    for j in range(0, len(order), per):
        part = [str(u) for u in order[j:j + per]]
        out.append([f"{j + 1}-{j + len(part)}"] + part + [""] * (per - len(part)))
    return out


def fmt_pa(x: float) -> str:
    """Acceptance probabilities on sheets: four decimals
    (:func:`lotwise.core.numbers.probability`)."""
    return probability(x)


@dataclass(frozen=True, kw_only=True)
class SheetContent:
    """Everything a sheet says, already formatted; both renderers use it."""

    title: str
    subtitle: str
    scope: list  # (label, text)
    plan_line: str
    plan_rows: list  # [id, class, c, r, aql/alpha, rql/beta]
    risk_rows: list  # [id, model, Pa(AQL), alpha, target, Pa(RQL), beta, target, verdict]
    guarantees: list  # sentences
    poisson: list  # sentences
    model_note: str
    selection: str
    rejected: str
    cautions: list
    rationale: str
    footer: str
    verdict: str
    picks: list = field(default_factory=list)
    alternatives: str = ""
    banner: str = ""  # a plan not to be used at the bench: the banner, first on the page
    reasons: list = field(default_factory=list)  # why it falls short, one line each
    procedures: list = field(default_factory=list)  # bench.Procedure per characteristic
    records: list = field(default_factory=list)  # bench.RecordBlock per characteristic
    record_head: list = field(default_factory=list)  # (label, prefilled text) of the form
    record_csv: str = ""  # the file name of the CSV template beside the sheet
    approvals: list = field(default_factory=list)  # (label, text or "" to sign)
    cost: list = field(default_factory=list)  # sentences on the inspection cost
    order: list = field(default_factory=list)  # the inspection order's unit numbers, or []


def error_free(plan):
    """The plan as a perfect inspection would judge it, when ``plan`` is judged with
    inspection errors; else None."""
    return plan.error_free


def _lvl(x, per_unit):
    return format_level(x, per_unit)


def plan_name(rep) -> str:
    """Short plan name for legends and sentences."""
    if not rep.get("own_sample"):
        return f"n={rep['n']}, c={rep['c']}"
    return rep.get("short_label", rep["label"])


def alternatives(pp) -> str:
    """The trade-off view in one sentence: for the first designed attributes
    characteristic, the double and sequential plans for the same two risk
    points and their average sample numbers beside the single plan."""
    if not pp.designed or pp.n is None or getattr(pp.request, "inspection", None) is not None:
        return ""  # (with inspection errors the trade-off view would assume none)
    single = {r["characteristic"]["id"] for r in pp.reports
              if not r.get("own_sample")}  # judged on the part's common sample
    ch = next((c for c in pp.request.characteristics if c.id in single and c.c is None), None)
    if ch is None:
        return ""
    from lotwise.analysis.tradeoff import asn_tradeoff

    try:
        tr = asn_tradeoff(ch.targets, pp.request.scope, model=pp.request.model, curves=False)
    except Exception:  # the view is an extra; never let it stop a sheet
        return ""
    parts, single_n = [], None
    for row in tr.rows:
        if row.plan is None:
            continue
        if not row.plan.varying_sample:  # the single plan the others are set against
            single_n = row.n_max
            continue
        verdict = "" if row.meets else ", NOT meeting a target exactly"
        parts.append(f"{row.scheme} {row.label} (average sample {row.asn_aql:.1f} at the AQL, "
                     f"{row.asn_rql:.1f} at the RQL, at most {row.n_max}{verdict})")
    if not parts or single_n is None:
        return ""
    return (f"{ch.id}, same two risk points with a varying sample: " + "; ".join(parts)
            + f"; against {single_n} units every lot for its single plan alone (see lotwise "
            "design --scheme compare-all).")


# --- the pieces of build_content ------------------------------------------------

def _verdict(pp) -> str:
    if pp.meets and pp.full and not pp.reports:
        return "Every item inspected (100 % inspection): no sample."
    if pp.meets:
        return "Meets every target."
    if pp.n is None:
        return "NO PLAN: " + pp.problem
    failed = getattr(pp, "failed", [])
    if failed:  # the others are designed; the part is flagged
        ids = ", ".join(f["characteristic"]["id"] for f in failed)
        rest = ("every other characteristic meets its targets"
                if all(r["meets"] for r in pp.reports) else "another falls short of a target")
        return f"NO PLAN for {ids} (see below); {rest}."
    return "FALLS SHORT of a target."


def _full_row(f) -> list:
    """A plan-table row for a characteristic inspected on every item."""
    ch = f["characteristic"]
    return [ch["id"], ch["class"], "every item", "-", "-", "100 % inspection", "-"]


FULL_SENTENCE = ("{id}: 100 % inspection: every item of the lot is inspected for it, so it "
                 "takes no sample and carries no sampling risk (the inspection itself may "
                 "still miss nonconforming items).")


def _failed_row(f, per_unit: bool) -> list:
    """A plan-table row for a characteristic no plan can meet."""
    ch, t = f["characteristic"], f["targets"]
    return [ch["id"], ch["class"], "no plan", "-", "-",
            f"{_lvl(t['aql'], per_unit)} / {format_pct(t['alpha'])}",
            f"{_lvl(t['rql'], per_unit)} / {format_pct(t['beta'])}"]


def _scope_rows(req) -> list:
    """``(label, text)`` rows of the Scope section."""
    scope = req.scope
    counted = "nonconformities per unit" if scope.per_unit else "nonconforming items"
    lot = (f"{scope.lot_size:,} items" if scope.lot_size else "not stated (treated as a process "
           "or very large lot)")
    rows = [("Part", req.part_id + (f": {req.part_description}" if req.part_description
                                    else ""))]
    if getattr(req, "drawing", "") or getattr(req, "revision", ""):
        rows.append(("Drawing", (req.drawing or "not stated")
                     + (f", revision {req.revision}" if req.revision else "")))
    if req.supplier:
        rows.append(("Supplier", req.supplier))
    rows.append(("Lot", (req.lot_definition + "; " if req.lot_definition else "")
                 + f"lot size {lot}"))
    rows.append(("Counted", counted))
    if getattr(req, "inspection", None) is not None:
        rows.append(("Inspection", req.inspection.describe()[0].upper()
                     + req.inspection.describe()[1:] + "; every risk, curve and AOQ on this "
                     "sheet is at the true quality, the plan counting what the inspection "
                     "flags"))
    rows.append(("Characteristics", "; ".join(
        f"{c.id} {c.description} [{c.klass}]".replace("  ", " ") for c in req.characteristics)))
    return rows


def _plan_row(rep, plan, per_unit: bool) -> list:
    """One row of the plan table: characteristic, class, sample, rule, levels."""
    ch = rep["characteristic"]
    t = rep["targets"]
    levels = [f"{_lvl(t['aql'], per_unit)} / {format_pct(t['alpha'])}"
              if not rep.get("rql_only") else "none stated (c = 0)",
              f"{_lvl(t['rql'], per_unit)} / {format_pct(t['beta'])}"]
    if rep.get("own_sample", False):
        from lotwise.documents.sheets.bench import rule_cells

        accept, reject = rule_cells(plan)
        size = f"up to {rep['n']}" if rep.get("varying_sample") else f"n = {rep['n']}"
        return [ch["id"], ch["class"], size, accept, reject, *levels]
    return [ch["id"], ch["class"], f"n = {rep['n']}", str(rep["c"]), str(rep["r"]), *levels]


def _risk_rows(rep) -> list:
    """Rows of the risk table, one per model that applies."""
    ch = rep["characteristic"]
    t = rep["targets"]
    rows = []
    no_aql = rep.get("rql_only", False)  # RQL and beta only: no producer's target
    for m, r in rep["models"].items():
        star = "*" if m == rep["model"] else ""
        rows.append([ch["id"], m + star, "-" if no_aql else fmt_pa(r["pa_aql"]),
                     "-" if no_aql else format_pct(r["alpha"]),
                     "-" if no_aql else format_pct(t["alpha"]), fmt_pa(r["pa_rql"]),
                     format_pct(r["beta"]), format_pct(t["beta"]),
                     "meets" if r["meets"] else "SHORT"])
    info = rep.get("inspection_error", {})
    for key, name in (("at_upper", "upper bounds"), ("error_free", "perfect insp.")):
        r = info.get(key)
        if r:  # the same plan at the study's upper bounds / as an error-free sheet says
            rows.append([ch["id"], name, fmt_pa(r["pa_aql"]),
                         _pct_cell(r["alpha"]), format_pct(t["alpha"]), fmt_pa(r["pa_rql"]),
                         _pct_cell(r["beta"]), format_pct(t["beta"]),
                         "meets" if r["meets"] else "SHORT"])
    return rows


def _pct_cell(x: float) -> str:
    """A risk in a narrow table cell: below 0.001 ppm written as a bound."""
    return "< 0.001 ppm" if 0 < x < 1e-9 else format_pct(x)


def _guarantees(rep, per_unit: bool) -> list:
    """The plain-words sentences of what one characteristic's plan guarantees."""
    ch = rep["characteristic"]
    t = rep["targets"]
    q = rep["plan_quality"]
    unit = "" if per_unit else " nonconforming"
    name = plan_name(rep)
    if "asn" in rep:
        name += (f"; average sample {rep['asn']['aql']:.1f} at the AQL, "
                 f"{rep['asn']['rql']:.1f} at the RQL")
    counts = rep.get("plan_quality_counts")
    if counts is not None:  # finite lot: whole counts, each with its true Pa
        pa, N = rep["plan_quality_pa"], rep["lot_size"]
        at = {s: f"{counts[s]} of {N} nonconforming ({format_pct(q[s], 3)}) "
                 f"{format_pct(round(pa[s], 12))} of the time" for s in counts}
        out = [f"{ch['id']} ({name}): accepts lots holding {at['producer']} (the AQL it "
               f"really protects: the largest count accepted at least "
               f"{format_pct(1 - t['alpha'])} of the time), {at['indifference']} (the count "
               f"nearest half the time), and {at['consumer']} (the RQL it really gives: the "
               f"smallest count accepted at most {format_pct(t['beta'])} of the time)."]
    else:
        out = [
            f"{ch['id']} ({name}): accepts lots at "
            f"{_lvl(q['producer'], per_unit)}{unit} {format_pct(1 - t['alpha'])} of the time "
            f"(the AQL it really protects), at {_lvl(q['indifference'], per_unit)} half the "
            f"time, and at {_lvl(q['consumer'], per_unit)} {format_pct(t['beta'])} of the time "
            "(the RQL it really gives)."]
    if rep.get("rql_only"):
        out.append(f"{ch['id']}: only the RQL and beta were stated (c = 0, no AQL): the "
                   f"producer's side is the quality level where Pa = 1 - alpha = "
                   f"{format_pct(1 - t['alpha'])}, above; the OC table gives the producer's "
                   "risk (1 - Pa) at any other level.")
    if ch.get("class") == "critical":
        out.append(f"{ch['id']}: a plan guards a critical characteristic; sampling cannot "
                   "guarantee a lot free of nonconforming items: 100 % inspection or stricter "
                   "plans as contract and regulation require.")
    if "aoql" in rep:
        out.append(
            f"{ch['id']}, rejected lots screened 100 %: AOQL {format_pct(rep['aoql'], 3)} "
            f"(reached at {_lvl(rep['aoql_p'], per_unit)}); average items inspected per lot "
            f"{rep['ati']['aql']:,.0f} at the AQL, {rep['ati']['rql']:,.0f} at the RQL.")
    return out + _error_sentences(rep)


def _error_sentences(rep) -> list:
    """What inspection errors do to one characteristic's risks, in words."""
    info = rep.get("inspection_error")
    if not info:
        return []
    cid, m = rep["characteristic"]["id"], rep["models"][rep["model"]]
    out = []
    free = info.get("error_free")
    if free:
        out.append(f"{cid}, inspection errors: at the true quality alpha is "
                   f"{format_pct(m['alpha'])} and beta {format_pct(m['beta'])}; with a perfect "
                   f"inspection the same plan would carry alpha {format_pct(free['alpha'])} and "
                   f"beta {format_pct(free['beta'])} (the curve marked 'with a perfect inspection').")
    up = info.get("at_upper")
    if up:
        out.append(f"{cid}, at the study's one-sided 95 % upper bounds (miss rate "
                   f"{format_pct(info['miss_rate_upper'])}, false-alarm rate "
                   f"{format_pct(info['false_alarm_upper'])}): alpha {format_pct(up['alpha'])}, "
                   f"beta {format_pct(up['beta'])}"
                   + ("" if up["meets"] else ": the targets are NOT met there; study more "
                      "items or improve the inspection") + ".")
    elif "at_upper" in info:
        out.append(f"{cid}: at the study's upper bounds the two rates add up to 1 or more "
                   "(the inspection might carry no information); study more items.")
    if "aoql" in rep and info["miss_rate"] > 0:
        out.append(f"{cid}: screening misses nonconforming items too, so the AOQL is the peak "
                   "over the levels the plan sentences; a very bad lot is not cleaned up by "
                   f"screening (about {format_pct(info['miss_rate'])} of its nonconforming "
                   "items stay).")
    return out


def _own_sample_line(pp, owns, ordered: bool = False) -> str:
    """The plan sentence's additions for characteristics with their own plan."""
    text = ""
    for r in owns:
        extra = ""
        if r.get("attributes"):
            extra = (f" (an attributes plan for the same two points needs "
                     f"n = {r['attributes']['n']}, c = {r['attributes']['c']})")
        text += f" {r['characteristic']['id']}: {r.get('note') or r['label']}{extra}."
        if r["n"] is not None and pp.n is not None and r["n"] < pp.n:
            text += (f" Judge it on the first {r['n']} units of the inspection order (the "
                     "pick list in a random order; see the bench procedure)." if ordered else
                     f" Judge it on {r['n']} of the sampled units chosen at random "
                     "(for example with lotwise draw from the sample).")
    return text


def _plan_line(pp, ordered: bool = False) -> str:
    """The one sentence saying how to inspect a lot."""
    scope = pp.request.scope
    every = ", ".join(f["characteristic"]["id"] for f in pp.full)
    if pp.n is None and pp.full and not pp.failed:
        return (f"Inspect every item of each lot for {every} (100 % inspection): no sample "
                "is drawn.")
    if pp.n is None:
        return "No plan meets these targets: " + pp.problem
    if pp.full:
        return _sampled_line(pp, ordered) + (f" {every}: every item of the lot is inspected (100 % "
                                    "inspection), not sampled.")
    return _sampled_line(pp, ordered)


def _sampled_line(pp, ordered: bool = False) -> str:
    """The plan sentence of the sampled characteristics."""
    scope = pp.request.scope
    plan_line = (f"Inspect n = {pp.n} units drawn at random from each lot"
                 + (f" of {scope.lot_size:,}" if scope.lot_size else "")
                 + ". For each characteristic, accept the lot if the count found is at most "
                 "c; reject it at r or more. A lot is accepted only if every characteristic "
                 "is accepted.")
    if pp.reports and pp.reports[0].get("full_inspection"):
        plan_line += " The sample is the whole lot: 100 % inspection."
    owns = [r for r in pp.reports if r.get("own_sample")]
    if owns:
        plan_line = plan_line.replace("For each characteristic", "For each attributes "
                                      "characteristic") if len(owns) < len(pp.reports) else (
            f"Inspect each lot with the plan of each characteristic (largest sample "
            f"{pp.n} units, drawn at random; a smaller sample or a stage is the next "
            + ("units of the inspection order, the pick list in a random order" if ordered else
               "units drawn at random from those not yet inspected")
            + "). A lot is accepted only if every characteristic is accepted.")
        plan_line += _own_sample_line(pp, owns, ordered)
    return plan_line


def _audit_line(pp) -> str:
    """What a plan that falls short is, in words that give no instruction."""
    return ("The plan audited here, characteristic by characteristic: "
            + "; ".join(f"{r['characteristic']['id']} {plan_name(r)}"
                        + (f" ({r['note']})" if r.get("own_sample") and r.get("note") else "")
                        for r in pp.reports)
            + ". It falls short of its targets and is not an inspection instruction: no lot "
            "is to be sentenced by it.")


def _model_note(pp) -> str:
    """Which model judges the plan, and the lot counts the levels round to."""
    scope = pp.request.scope
    model = pp.model or (scope.exact_model)
    note = f"Model judged by: {MODEL_TEXT.get(model, model)} (marked *)."
    rates = getattr(pp.request, "inspection", None)
    if rates is not None:
        note += (" Rows 'perfect insp.': the same plan under that model if the inspection "
                 "never erred (what a sheet without inspection errors would state)"
                 + ("; rows 'upper bounds': at the study's one-sided 95 % upper bounds on both "
                    "rates." if rates.has_bounds else "."))
    if scope.lot_size and any("lot_counts" in r for r in pp.reports):
        parts = []
        for rep in (r for r in pp.reports if "lot_counts" in r):
            lc = rep["lot_counts"]
            parts.append(f"{rep['characteristic']['id']}: "
                         + ("" if rep.get("rql_only") else f"AQL -> {lc['aql']}, ")
                         + f"RQL -> {lc['rql']}")
        note += (" Lot counts of nonconforming items, rounded up at the AQL and down at the RQL "
                 "(the conservative way for each risk): " + "; ".join(parts) + ". The OC "
                 "table's rows are whole counts D of the lot (p = D/N, column lot_count), so "
                 "no row is rounded.")
    return note


def _selection(pp, picks) -> str:
    """How to select the sample: the pick list when there is one."""
    req = pp.request
    scope = req.scope
    if picks is None and scope.lot_size and pp.n:
        from lotwise.data.draw import MAX_N

        return (f"Draw the {pp.n:,} units at random from the lot of {scope.lot_size:,} (every "
                f"unit equally likely); no pick list is written for a sample above "
                f"{MAX_N:,} units.")
    if picks is None:
        return ("Draw the units at random from the whole lot (every unit equally likely), "
                "for example with a seeded pick list from `lotwise draw` once the lot size "
                "is known.")
    first = ", ".join(str(u) for u in picks.units[:12])
    more = " ..." if len(picks.units) > 12 else ""
    return ("Simple random sample without replacement"
            + (f", stratified in proportion to stratum size ({req.strata})"
               if req.strata else "")
            + f". Pick list seed {picks.seed}; first units: {first}{more} (full list in "
            f"{req.stem}-picklist.csv). Re-create with: lotwise draw --lot-size "
            f"{scope.lot_size} --n {pp.n} --seed {picks.seed}"
            + (f" --strata \"{req.strata}\"" if req.strata else "") + ".")


#: The banner of a sheet whose plan is not to be used at the bench.
BANNER_SHORT = "NOT FOR USE AT THE BENCH: this plan falls short of its targets"
BANNER_NONE = "NOT FOR USE AT THE BENCH: no plan meets these targets"


def _banner(pp) -> tuple[str, list]:
    """The banner and the reasons, one line each, for a plan that falls short
    (or no plan); ``("", [])`` for a plan that meets its targets."""
    if pp.meets:  # (a part inspected 100 % throughout has no sample and meets)
        return "", []
    if pp.n is None:
        return BANNER_NONE, [pp.problem]
    reasons = [f"{f['characteristic']['id']}: no plan meets its targets: {f['reason']}."
               for f in getattr(pp, "failed", [])]
    for rep in pp.reports:
        if rep["meets"]:
            continue
        m = rep["models"][rep["model"]]
        t = rep["targets"]
        parts = []
        if not m.get("meets_alpha", m["alpha"] <= t["alpha"]):
            parts.append(f"producer's risk alpha {format_pct(m['alpha'])} against the target "
                         f"{format_pct(t['alpha'])} (Pa at the AQL {fmt_pa(m['pa_aql'])})")
        if not m.get("meets_beta", m["beta"] <= t["beta"]):
            parts.append(f"consumer's risk beta {format_pct(m['beta'])} against the target "
                         f"{format_pct(t['beta'])} (Pa at the RQL {fmt_pa(m['pa_rql'])})")
        if not parts:
            parts.append("a target is not met under the judging model")
        reasons.append(f"{rep['characteristic']['id']} ({plan_name(rep)}, {rep['model']}): "
                       + "; ".join(parts) + ".")
    reasons.append("Agree a plan that meets the targets (lotwise design) before any lot is "
                   "inspected; this sheet records the audit only.")
    return BANNER_SHORT, reasons


def _record_head(pp, picks) -> list:
    """``(label, prefilled text)`` at the head of the record form."""
    req = pp.request
    part = req.part_id + (f", {req.part_description}" if req.part_description else "")
    draw = ", ".join(x for x in (f"drawing {req.drawing}" if getattr(req, "drawing", "") else "",
                                 f"revision {req.revision}" if getattr(req, "revision", "") else "")
                     if x)
    rows = [("Part", part + (f" ({draw})" if draw else "")),
            ("Supplier", req.supplier), ("Lot number", ""), ("Lot size", (
                f"{req.scope.lot_size:,} (plan)" if req.scope.lot_size else "")),
            ("Date received", ""), ("Date inspected", ""),
            ("Pick list", f"seed {picks.seed}, {req.stem}-picklist.csv" if picks is not None
             else "units drawn at random (lotwise draw)")]
    return rows


def _approvals(req) -> list:
    """``(label, text)`` of the approvals; empty text leaves a line to sign."""
    ap = getattr(req, "approvals", None) or {}
    return [("Prepared by", ap.get("prepared_by", "")), ("Approved by", ap.get("approved_by", "")),
            ("Date", ap.get("date", ""))]


def _cost_sentences(pp) -> list:
    """What inspection costs (or, without a cost per unit, how many units it
    takes a year), per characteristic, from ``inspection_cost``."""
    out = []
    for rep in pp.reports:
        c = rep.get("inspection_cost")
        if not c:
            continue
        basis = {"ati": "average total inspection (ATI, rejected lots screened)",
                 "asn": "average sample number (ASN)", "sample": "the sample size"}[c["basis"]]
        cid = rep["characteristic"]["id"]
        if c.get("per_lot") is not None:
            text = (f"{cid}: {c['per_unit']:,.2f} per unit x {c['units_per_lot']:,.1f} units "
                    f"per lot ({basis} at the AQL) = {c['per_lot']:,.2f} per lot")
            if c.get("per_year") is not None:
                text += (f"; x {c['deliveries_per_year']:,g} deliveries = "
                         f"{c['per_year']:,.2f} per year ({c['units_per_year']:,.0f} units)")
        else:  # deliveries without a cost per unit: the inspection load in units
            text = (f"{cid}: {c['units_per_lot']:,.1f} units per lot ({basis} at the AQL) x "
                    f"{c['deliveries_per_year']:,g} deliveries = {c['units_per_year']:,.0f} "
                    "units inspected per year")
        out.append(text + ".")
    if len(out) > 1:
        out.append("Characteristics judged on one sample share its units: the part's units "
                   "and cost per lot are the largest of these, not their sum.")
    return out


def _cautions(req) -> list:
    cautions = [CAUTION]
    if any(c.klass == "critical" for c in req.characteristics):
        cautions.insert(0, "This part has a CRITICAL characteristic: a sampling plan cannot make "
                        "it safe. Use 100 % inspection, error-proofing or the stricter plan your "
                        "contract or regulation requires; this plan is a check on top of those.")
    return cautions


def build_content(pp, *, picks=None, today: _dt.date | None = None,
                  alternatives_text: str = "") -> SheetContent:
    """Format a :class:`~lotwise.documents.partplan.PartPlan` for the sheets."""
    req = pp.request
    per_unit = req.scope.per_unit
    today = today or _dt.date.today()
    title = f"Sampling plan: {req.part_id}" + (f", {req.part_description}"
                                               if req.part_description else "")
    verdict = _verdict(pp)
    sub = f"{'Designed plan' if pp.designed else 'Audit of a fixed plan'} ({Path(req.path).name}): {verdict}"
    plan_rows, risk_rows, guar, pois = [], [], [], []
    for rep, plan in zip(pp.reports, pp.plans):
        plan_rows.append(_plan_row(rep, plan, per_unit))
        risk_rows += _risk_rows(rep)
        guar += _guarantees(rep, per_unit)
        if "poisson_verdict" in rep:
            pois.append(f"{rep['characteristic']['id']}: {rep['poisson_verdict']['summary']}")
    for f in pp.full:
        plan_rows.append(_full_row(f))
        guar.append(FULL_SENTENCE.format(id=f["characteristic"]["id"]))
    if pp.n is not None:
        for f in getattr(pp, "failed", []):
            plan_rows.append(_failed_row(f, per_unit))
            guar.append(f"{f['characteristic']['id']}: NO PLAN meets its targets: {f['reason']}.")
    banner, reasons = _banner(pp)
    procedures, records, order = [], [], ()
    if not banner:  # a plan that falls short gets no instruction
        from lotwise.documents.sheets.bench import (Source, inspection_order, procedure,
                                                    record_block)

        order = inspection_order(picks) if picks is not None else ()
        source = Source(ordered=len(order))
        for rep, plan in zip(pp.reports, pp.plans):
            proc = procedure(rep, plan, req.scope, source)
            if rep["characteristic"]["class"] == "critical":
                from dataclasses import replace

                proc = replace(proc, notes=(
                    f"{proc.cid} is a CRITICAL characteristic: sampling cannot make it safe. "
                    "This plan is a check on top of 100 % inspection, error-proofing or the "
                    "stricter plan a contract or regulation requires (see the cautions on "
                    "the sheet).",) + proc.notes)
            procedures.append(proc)
            records.append(record_block(proc, plan, req.scope, source))
        if not any("inspection order" in " ".join(p.steps) for p in procedures):
            order = ()  # every procedure takes the whole pick list: no order needed
    footer = (f"Prepared {today.isoformat()} with lotwise {__version__}; input fingerprint "
              f"{req.fingerprint()} (SHA-256 of the plan file's parsed content). Re-create with: "
              f"lotwise sheet {req.path}")
    return SheetContent(title=title, subtitle=sub, scope=_scope_rows(req),
                        plan_line=_plan_line(pp, bool(order)) if not banner or pp.n is None
                        else _audit_line(pp), plan_rows=plan_rows, risk_rows=risk_rows,
                        guarantees=guar, poisson=pois, model_note=_model_note(pp),
                        selection=(_selection(pp, picks) if not banner else
                                   "For the record of this audit only (no lot is to be drawn "
                                   "for inspection under this plan): " + _selection(pp, picks)),
                        rejected=req.rejected_lot or DEFAULT_REJECTED, cautions=_cautions(req),
                        rationale=req.rationale, footer=footer, verdict=verdict,
                        picks=list(picks.units) if picks is not None else [],
                        alternatives=alternatives_text, banner=banner, reasons=reasons,
                        procedures=procedures, records=records,
                        record_head=_record_head(pp, picks) if procedures else [],
                        record_csv=f"{req.stem}-record.csv" if procedures else "",
                        approvals=_approvals(req), cost=_cost_sentences(pp),
                        order=list(order))


def oc_rows(pp, points: int = 41):
    """OC table (header, rows) for every characteristic's plan under every model
    that applies to it (a plan of another type under its own model). In a
    finite lot the rows are the whole counts ``D`` of the lot (``p = D/N``)."""
    import numpy as np

    from lotwise.analysis.audit import oc_grid, quality_at

    scope = pp.request.scope
    top = 0.0
    for rep, plan in zip(pp.reports, pp.plans):
        if plan.count_rule() is not None:
            q = quality_at(plan, 0.01, scope.exact_model, scope, "consumer")
        else:
            q = 1.25 * rep["plan_quality"]["consumer"]
        top = max(top, 1.25 * rep["targets"]["rql"], q)
    if not scope.per_unit:
        top = min(top, 1.0)
    ps = np.linspace(0.0, top, points)
    if scope.lot_size and not scope.per_unit:
        # a finite lot: every row a whole count D/N, so the lot_count column
        # needs no rounding and serves every characteristic's plan
        ps = np.unique(np.round(ps * scope.lot_size)) / scope.lot_size
    header = ["p"]
    cols = []
    lot_count = None
    for rep, plan in zip(pp.reports, pp.plans):
        if plan.count_rule() is not None:
            g = oc_grid(plan, scope, scope.models, ps)
            for m in scope.models:
                header.append(f"{rep['characteristic']['id']}_{m}")
                cols.append(g[m])
            lot_count = g.get("lot_count", lot_count)
        else:
            header.append(f"{rep['characteristic']['id']}_{rep['model']}")
            cols.append(np.asarray(plan.pa(ps, rep["model"], scope), dtype=float))
        inner = error_free(plan)
        if inner is not None:  # the same plan with a perfect inspection (a finite lot's
            # rows are whole counts D/N, so no level is rounded)
            header.append(f"{rep['characteristic']['id']}_error_free_{rep['model']}")
            cols.append(np.asarray(inner.pa(ps, rep["model"], scope), dtype=float))
    if lot_count is not None:
        header.append("lot_count")
        cols.append(lot_count)
    rows = [[float(ps[i])] + [c[i] for c in cols] for i in range(len(ps))]
    return header, rows
