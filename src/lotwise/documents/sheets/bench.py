"""The bench procedure and the blank record form of a plan sheet.

The receiving clerk works from these: for each characteristic,
:func:`procedure` states the plan's rule as steps and, where the rule has
more than one decision point, as a table read after each stage or unit
(double and multiple plans: one row per stage; sequential plans: one row per
range of unit counts over which the acceptance and rejection numbers stay
the same; chain plans: the decision by count and record of earlier lots;
skip-lot plans: which lots are inspected and the state that decides it;
variables plans: the computation step by step with a worked line on example
numbers). :func:`record_form` lists the fields one lot's record needs, and
:func:`record_csv` is the same form as a CSV template.

The tables are built from the plan's own parameters (stage sizes and
numbers, the sequential plan's acceptance and rejection numbers); the tests
hold them to ``lotwise next`` and ``lotwise judge``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

__all__ = ["Procedure", "RecordBlock", "RECORD_COLUMNS", "Source", "bench_plan",
           "inspection_order", "procedure",
           "record_block", "record_csv", "rule_cells", "sequential_ranges",
           "stage_early_accept", "variables_example"]


@dataclass(frozen=True, kw_only=True)
class Procedure:
    """One characteristic's bench procedure.

    ``kind`` names the table's shape (``single``, ``stages``, ``sequential``,
    ``chain``, ``skiplot``, ``variables``, ``other``); ``header`` and ``rows``
    are the table (strings), empty when the steps say everything.
    """

    cid: str
    heading: str
    kind: str
    steps: tuple = ()
    header: tuple = ()
    rows: tuple = ()
    notes: tuple = ()
    reference: object = None  # the reference plan's procedure (skip-lot)


@dataclass(frozen=True, kw_only=True)
class RecordBlock:
    """The record-form fields of one characteristic: a table of blank cells
    (``header``, ``rows`` with the fixed cells filled) and lines to fill."""

    cid: str
    heading: str
    header: tuple
    rows: tuple
    lines: tuple = ()
    boxes: int = 0  # measurement boxes x1 .. x<boxes> (variables plans)
    steps: tuple = ()  # (label, first position, last position) per CSV row (0: none)


def bench_plan(plan):
    """The plan whose rule the inspector applies: with inspection errors the
    bench counts what the inspection flags, the inner plan's rule."""
    inner = getattr(plan, "error_free", None)
    return inner if inner is not None else plan


def _count_word(per_unit: bool) -> str:
    return "nonconformities" if per_unit else "nonconforming items"


def _rows_text(start: int, stop: int) -> str:
    return f"{start}" if start == stop else f"{start}-{stop}"


# --- the procedures ---------------------------------------------------------

def inspection_order(picks) -> tuple:
    """The pick list's units in a random order drawn from its seed: taken in
    this order, the first m units of the list are themselves a simple random
    sample of the lot (the list is sorted by unit number, so its first rows
    are not), which is what each stage of a double, multiple or sequential
    plan needs."""
    import numpy as np

    units = np.asarray(picks.units, dtype=np.int64)
    rng = np.random.default_rng([int(picks.seed) % 2**128, 0x6F72646572])  # b"order"
    return tuple(int(u) for u in rng.permutation(units))


@dataclass(frozen=True, kw_only=True)
class Source:
    """Where the units come from: ``ordered`` units of the inspection order
    (the pick list in a random order), or none (no pick list: drawn at random)."""

    ordered: int = 0  # units in the inspection order (0: no pick list)

    def units(self, a: int, b: int, whole: bool = True) -> str:
        """The units ``a`` .. ``b`` (1-based) in words."""
        if not self.ordered:
            return (f"{b - a + 1} units drawn at random from the lot"
                    + (" (from those not yet inspected)" if a > 1 else ""))
        if whole and a == 1 and b == self.ordered:
            return f"the {b} units of the pick list"
        return f"the units at positions {_rows_text(a, b)} of the inspection order"

    def cell(self, a: int, b: int, whole: bool = False) -> str:
        """The positions in a table cell (``whole``: say so when they are the
        whole pick list)."""
        if not self.ordered:
            return "at random"
        return "the whole pick list" if whole and (a, b) == (1, self.ordered) else \
            _rows_text(a, b)


def procedure(rep, plan, scope, source: Source = Source()) -> Procedure:
    """The bench procedure of one characteristic (``rep`` its report);
    ``source`` says where its units come from."""
    from lotwise.families.chain import ChainPlan
    from lotwise.families.sequential import SequentialPlan
    from lotwise.families.skiplot import SkipLotPlan
    from lotwise.families.staged import StagedPlan
    from lotwise.families.variables import VariablesPlan

    cid = rep["characteristic"]["id"]
    plan = bench_plan(plan)
    per_unit = bool(scope.per_unit)
    if isinstance(plan, SkipLotPlan):
        return _skiplot(cid, plan, rep, scope, source)
    if isinstance(plan, VariablesPlan):
        return _variables(cid, plan, source)
    if isinstance(plan, ChainPlan):
        return _chain(cid, plan, per_unit, source)
    if isinstance(plan, SequentialPlan):
        return _sequential(cid, plan, per_unit, source)
    if isinstance(plan, StagedPlan):
        return _stages(cid, plan, per_unit, source)
    rule = plan.count_rule()
    if rule is not None:
        return _single(cid, rule[0], rule[1], per_unit, source)
    return Procedure(cid=cid, heading=f"{cid}: {plan.label}", kind="other",
                     steps=tuple(line.strip() for line in plan.describe()))


def _single(cid, n, c, per_unit, source) -> Procedure:
    what = _count_word(per_unit)
    where = source.units(1, n)
    steps = (f"Inspect {where}" + (f" ({n} units)" if "positions" in where else "")
             + f" and count the {what} found, d.",
             f"Accept the lot if d is at most {c}; reject it if d is {c + 1} or more.",
             f"You may stop as soon as d reaches {c + 1}: the lot is rejected.")
    if not per_unit and c > 0:
        steps += ("You may also stop and accept when even every unit left being "
                  f"nonconforming would keep d at most {c}.",)
    return Procedure(cid=cid, heading=f"{cid}: single plan n = {n}, c = {c}", kind="single",
                     steps=steps, header=("Units in all", "Accept if d <=", "Reject if d >="),
                     rows=((str(n), str(c), str(c + 1)),))


def stage_early_accept(plan, per_unit: bool) -> bool:
    """Whether a staged plan can accept at a stage's end without taking the
    next stage (that stage's units could not lift the count above its
    acceptance number): the sheet then says so."""
    if per_unit:
        return False
    for j in range(len(plan.sizes) - 1):
        nxt_a, nxt_n = plan.acc[j + 1], plan.sizes[j + 1]
        if nxt_a >= 0 and nxt_a - nxt_n > plan.acc[j] and nxt_a - nxt_n >= 0:
            return True
    return False


def _stages(cid, plan, per_unit, source) -> Procedure:
    what = _count_word(per_unit)
    cum = plan.cumulative
    rows = []
    for j, (size, total) in enumerate(zip(plan.sizes, cum)):
        a, r = plan.acc[j], plan.rej[j]
        start = total - size + 1
        other = (f"take stage {j + 2} ({plan.sizes[j + 1]} units)" if j + 1 < len(plan.sizes)
                 else "-")
        rows.append((str(j + 1), str(size), str(total),
                     source.cell(start, total) if size else "-",
                     "-" if a < 0 else str(a), str(r), other))
    steps = [("Take the stages in order; each stage is the next units of the inspection "
              "order (the positions in the table)" if source.ordered else
              "Take the stages in order; each stage's units are drawn at random from the units "
              "of the lot not yet inspected")
             + f". Count the {what} found, and keep d, the count found in all stages so far.",
             "At the end of each stage read its row: accept if d is at most the accept "
             "number, reject if d is at least the reject number, otherwise take the next "
             "stage. '-' means the lot cannot be accepted at that stage.",
             "Within a stage you may stop as soon as d reaches the stage's reject number: "
             "the lot is rejected."]
    if not per_unit:
        steps.append("Within a stage you may also stop and accept when even every unit left "
                     "in the stage being nonconforming would keep d within the stage's accept "
                     "number.")
    if stage_early_accept(plan, per_unit):
        steps.append("At the end of a stage, accept without taking the next stage when even "
                     "every unit of that stage being nonconforming would keep d within its "
                     "accept number.")
    kind = "double" if len(plan.sizes) == 2 else "multiple"
    return Procedure(cid=cid, heading=f"{cid}: {kind} plan {plan.label}", kind="stages",
                     steps=tuple(steps),
                     header=("After stage", "Units in stage", "Units in all", "Positions",
                             "Accept if d <=", "Reject if d >=", "Otherwise"),
                     rows=tuple(rows))


def sequential_ranges(plan) -> list[tuple[int, int, int, int]]:
    """``(first n, last n, acceptance number, rejection number)`` over the ranges
    of unit counts where the numbers stay the same (acceptance below 0: none yet)."""
    ns, a, r = plan.numbers()
    out = []
    for n, ai, ri in zip(ns.tolist(), a.tolist(), r.tolist()):
        ai = max(ai, -1)
        if out and out[-1][2] == ai and out[-1][3] == ri:
            out[-1] = (out[-1][0], n, ai, ri)
        else:
            out.append((n, n, ai, ri))
    return out


def _sequential(cid, plan, per_unit, source) -> Procedure:
    what = _count_word(per_unit)
    n0 = plan.truncate
    rows = tuple((_rows_text(lo, hi), "-" if a < 0 else str(a), str(r))
                 for lo, hi, a, r in sequential_ranges(plan))
    steps = (("Inspect the units one at a time in the inspection order (positions "
              f"1-{n0} at most)" if source.ordered else
              f"Inspect units drawn at random from the lot one at a time ({n0} at most)")
             + f". After each unit, with n the units inspected and d the {what} found so far, "
             "find the row holding n.",
             "Accept if d is at most the accept number; reject if d is at least the reject "
             "number; otherwise inspect the next unit. '-': the lot cannot be accepted yet.",
             f"After unit {n0} (the truncation point) the lot is always decided by the last "
             "row.")
    return Procedure(cid=cid, heading=f"{cid}: sequential plan, unit by unit, at most {n0} "
                     f"units ({plan.label})", kind="sequential", steps=steps,
                     header=("Units inspected n", "Accept if d <=", "Reject if d >="),
                     rows=rows)


def _chain(cid, plan, per_unit, source) -> Procedure:
    what = _count_word(per_unit)
    n, i = plan.n, plan.i
    lots = "lot" if i == 1 else f"{i} lots"
    steps = (f"Inspect {source.units(1, n)} and count the {what}, d.",
             f"The rule needs the record of the samples of the {lots} just before this one "
             f"(the state: how many lots in a row before this one had d = 0, counted up to "
             f"{i}). A lot with d of 1 or more ends the run of clean lots; with no record yet "
             "(the first lots) the run is 0.",
             f"d = 0: accept. d = 1: accept only if the {lots} before it all had d = 0, "
             f"otherwise reject. d = 2 or more: reject.",
             f"You may stop as soon as the lot is rejected by the table (at the second item "
             f"found; at the first when fewer than {i} clean lots precede it)"
             + ("" if per_unit else ", or accepted whatever the units left hold (d plus the "
                "units left within the count the table accepts)") + ".",
             f"Write this lot's d on the record: it decides the next {lots}.")
    rows = (("0", "any", "accept"), ("1", f"{i} or more (all of the last {i})", "accept"),
            ("1", f"fewer than {i}", "reject"), ("2 or more", "any", "reject"))
    return Procedure(cid=cid, heading=f"{cid}: chain plan ChSP-1, n = {n}, i = {i}",
                     kind="chain", steps=steps,
                     header=("Found d", "Clean lots in a row before this one", "Decision"),
                     rows=rows)


def _skiplot(cid, plan, rep, scope, source) -> Procedure:
    ref = procedure(rep, plan.reference, scope, source)
    i, f = plan.i, plan.f
    steps = ("The state is 'every lot' or 'skipping'. Start in 'every lot'.",
             f"Every lot: inspect each lot with the plan below. After {i} lots in a row "
             "accepted, change to 'skipping'.",
             f"Skipping: inspect each lot with probability {f:g} chosen at random before the "
             "lot is looked at (a random number below "
             f"{f:g}); a lot not chosen is accepted without inspection. Inspect a chosen lot "
             "with the plan below; if it is rejected, return to 'every lot'.",
             "Write the state, the random choice and the decision of every lot on the record.")
    rows = (("every lot", "every lot", f"after {i} accepted in a row: skipping"),
            ("skipping", f"at random, probability {f:g}",
             "an inspected lot rejected: every lot"))
    return Procedure(cid=cid, heading=f"{cid}: skip-lot plan SkSP-2, i = {i}, f = {f:g}",
                     kind="skiplot", steps=steps,
                     header=("State", "Lots inspected", "Change of state"), rows=rows,
                     reference=ref)


def _fmt(x: float, digits: int = 6) -> str:
    return f"{x:.{digits}g}"


def variables_example(plan) -> dict:
    """Example numbers for the worked line: ``xbar``, ``s`` (or the known
    sigma) a little inside the acceptance region, the statistics and the
    decision they give (computed as ``lotwise judge`` does)."""
    from lotwise.families.variables import estimate_known, estimate_unknown

    n = plan.n
    known = plan.sigma == "known"
    lo, up = plan.lower, plan.upper
    if known:
        s = plan.sigma_value
    elif lo is not None and up is not None:  # centred, each limit k + 0.4 s away
        s = float(f"{(up - lo) / (2 * ((plan.k or 2.0) + 0.4)):.2g}")
    else:
        lim = up if up is not None else lo
        s = float(f"{abs(lim) * 0.002:.1g}") if lim else 1.0
    # the mean: centred for two limits, k + 0.25 from a single limit
    k = plan.k if plan.k is not None else 2.0
    if lo is not None and up is not None:
        xbar = (lo + up) / 2
    elif up is not None:
        xbar = up - (k + 0.25) * s
    else:
        xbar = lo + (k + 0.25) * s
    step = 10 ** (math.floor(math.log10(s)) - 2) if s > 0 else 0.001
    xbar = round(round(xbar / step) * step, 10)
    q = {}
    if up is not None:
        q["upper"] = (up - xbar) / s
    if lo is not None:
        q["lower"] = (xbar - lo) / s
    out = {"n": n, "xbar": xbar, "s": s, "q": q, "known": known}
    if plan.limit == "both" and not known and plan.rule == "estimate":
        est = {side: float(estimate_unknown(v, n)) for side, v in q.items()}
        out["estimate"] = est
        out["estimate_total"] = sum(est.values())
        out["accept"] = out["estimate_total"] <= plan.m
    else:
        if known:
            out["estimate"] = {side: float(estimate_known(v, n)) for side, v in q.items()}
        out["accept"] = all(v >= plan.k for v in q.values())
    return out


def _variables(cid, plan, source) -> Procedure:
    n = plan.n
    known = plan.sigma == "known"
    dev = f"the known sigma = {_fmt(plan.sigma_value)}" if known else "s"
    d = "sigma" if known else "s"
    steps = [f"Measure {source.units(1, n)} and write each value x1 ... x{n} on the record.",
             f"Mean: xbar = (x1 + ... + x{n}) / {n}."]
    if known:
        steps.append(f"Spread: use the known process sigma = {_fmt(plan.sigma_value)} (do not "
                     "compute s for the decision; a sample s far from it is a reason to ask "
                     "whether sigma is still known).")
    else:
        steps.append(f"Spread: s = square root of the sum of (xj - xbar)^2 over the {n} "
                     f"values, divided by {n - 1}.")
    if plan.upper is not None:
        steps.append(f"Upper limit U = {_fmt(plan.upper)}: Q_U = (U - xbar) / {d}.")
    if plan.lower is not None:
        steps.append(f"Lower limit L = {_fmt(plan.lower)}: Q_L = (xbar - L) / {d}.")
    estimate = plan.limit == "both" and not known and plan.rule == "estimate"
    if estimate:
        steps.append(f"Estimate beyond each limit: p_U = I_x(a, a) with a = {n / 2 - 1:g} and "
                     f"x = max(0, 1/2 - Q_U * sqrt({n}) / (2 * {n - 1})) (I: the regularised "
                     "incomplete beta function); p_L likewise from Q_L.")
        steps.append(f"Accept the lot if p_U + p_L is at most M = {plan.m:.6f}; otherwise "
                     "reject it.")
    else:
        both = " and ".join(f"Q_{s[0].upper()}" for s in ("upper", "lower")
                            if getattr(plan, s) is not None)
        steps.append(f"Accept the lot if {both} {'are' if ' and ' in both else 'is'} at least "
                     f"k = {plan.k:g}; otherwise reject it"
                     + (f" (for the upper limit: accept while xbar <= U - k * {d})."
                        if plan.limit == "upper" else
                        f" (for the lower limit: accept while xbar >= L + k * {d})."
                        if plan.limit == "lower" else "."))
    missing = [s for s in (("upper", "lower") if plan.limit == "both" else (plan.limit,))
               if getattr(plan, s) is None]
    notes = []
    if missing or (known and plan.sigma_value is None):
        notes.append("The plan does not state " + " and ".join(
            [f"the {m} limit's value" for m in missing]
            + (["the value of sigma"] if known and plan.sigma_value is None else []))
            + ": write it on the plan file before the bench uses this procedure.")
    else:
        ex = variables_example(plan)
        parts = [f"Worked line (example numbers, not a real lot): n = {n}, xbar = "
                 f"{_fmt(ex['xbar'], 8)}, {d} = {_fmt(ex['s'])}"]
        for side, v in ex["q"].items():
            lim = plan.upper if side == "upper" else plan.lower
            expr = (f"({_fmt(lim)} - {_fmt(ex['xbar'], 8)}) / {_fmt(ex['s'])}" if side == "upper"
                    else f"({_fmt(ex['xbar'], 8)} - {_fmt(lim)}) / {_fmt(ex['s'])}")
            parts.append(f"Q_{side[0].upper()} = {expr} = {v:.4f}")
        if estimate:
            parts.append(f"p_U = {ex['estimate']['upper']:.6f}, p_L = "
                         f"{ex['estimate']['lower']:.6f}")
            parts.append(f"p_U + p_L = {ex['estimate_total']:.6f} "
                         f"{'<=' if ex['accept'] else '>'} M = {plan.m:.6f}")
        else:
            parts.append(("at least" if ex["accept"] else "below") + f" k = {plan.k:g}")
        notes.append("; ".join(parts) + f": {'ACCEPT' if ex['accept'] else 'REJECT'}.")
        notes.append("The same lot through lotwise judge gives the same numbers and decision.")
    notes.append("The plan assumes the characteristic is normally distributed; a plot or "
                 "test of the values that looks far from normal is a reason to inspect by "
                 "attributes instead.")
    return Procedure(cid=cid, heading=f"{cid}: variables plan, {plan.method} ({plan.label})",
                     kind="variables", steps=tuple(steps), notes=tuple(notes))


def rule_cells(plan) -> tuple[str, str]:
    """The accept and reject cells of the sheet's plan table for a plan of its
    own (the bench procedure gives the full rule)."""
    from lotwise.families.chain import ChainPlan
    from lotwise.families.sequential import SequentialPlan
    from lotwise.families.skiplot import SkipLotPlan
    from lotwise.families.staged import StagedPlan
    from lotwise.families.variables import VariablesPlan

    plan = bench_plan(plan)
    if isinstance(plan, SkipLotPlan):
        return rule_cells(plan.reference)  # for the lots inspected
    if isinstance(plan, VariablesPlan):
        if plan.limit == "both" and plan.sigma == "unknown" and plan.rule == "estimate":
            return f"p_U + p_L <= M = {plan.m:.4g}", "above M"
        q = " and ".join(f"Q_{s[0].upper()}" for s in ("upper", "lower")
                         if plan.limit in (s, "both"))
        return f"{q} >= k = {plan.k:g}", "below k"
    if isinstance(plan, ChainPlan):
        return f"0; 1 after {plan.i} clean lots", "2; 1 otherwise"
    if isinstance(plan, SequentialPlan):
        return "by n (bench table)", "by n"
    if isinstance(plan, StagedPlan):
        return ("by stage " + "/".join("-" if a < 0 else str(a) for a in plan.acc),
                "/".join(str(r) for r in plan.rej))
    rule = plan.count_rule()
    if rule is not None:
        return str(rule[1]), str(rule[1] + 1)
    return "see the bench procedure", "otherwise"


# --- the record form -----------------------------------------------------------

def record_block(proc: Procedure, plan, scope, source: Source = Source()) -> RecordBlock:
    """The record-form fields one characteristic's procedure needs."""
    plan = bench_plan(plan)
    if proc.kind == "skiplot":
        inner = record_block(proc.reference, plan.reference, scope, source)
        return RecordBlock(cid=proc.cid, heading=proc.heading,
                           header=("State (every lot / skipping)", "Accepted in a row before",
                                   "Random choice (inspect / skip)") + inner.header,
                           rows=tuple(("", "", "") + r for r in inner.rows), lines=inner.lines,
                           boxes=inner.boxes, steps=(("lot: state and random choice", 0, 0),)
                           + inner.steps)
    if proc.kind == "single":
        n = int(proc.rows[0][0])
        return RecordBlock(cid=proc.cid, heading=proc.heading,
                           header=("Positions", "Units inspected", "Found d", "Decision"),
                           rows=((source.cell(1, n, whole=True), "", "", ""),),
                           steps=(("sample", 1, n),))
    if proc.kind == "stages":
        return RecordBlock(cid=proc.cid, heading=proc.heading,
                           header=("Stage", "Positions", "Units inspected",
                                   "Found in stage", "Found in all d", "Decision"),
                           rows=tuple((r[0], r[3], "", "", "", "") for r in proc.rows),
                           steps=tuple((f"stage {r[0]}", int(r[2]) - int(r[1]) + 1, int(r[2]))
                                       for r in proc.rows if int(r[1]) > 0))
    if proc.kind == "sequential":
        return RecordBlock(cid=proc.cid, heading=proc.heading,
                           header=("Units inspected n", "Found in all d", "Unit numbers of the "
                                   "nonconforming", "Decision"),
                           rows=(("", "", "", ""),),
                           lines=("Mark each unit as it is inspected; the decision is taken at "
                                  "the first n whose row decides.",),
                           steps=tuple((f"unit {j}", j, j) for j in range(1, plan.truncate + 1)))
    if proc.kind == "chain":
        return RecordBlock(cid=proc.cid, heading=proc.heading,
                           header=("Positions", "Found d", f"d of the last {plan.i} lot(s)",
                                   "Clean lots in a row before", "Decision"),
                           rows=((source.cell(1, plan.n, whole=True), "", "", "", ""),),
                           steps=(("sample", 1, plan.n),))
    if proc.kind == "variables":
        d = "sigma (known)" if plan.sigma == "known" else "s"
        stat = ("p_U + p_L" if plan.limit == "both" and plan.sigma == "unknown"
                and plan.rule == "estimate" else
                " / ".join(f"Q_{s[0].upper()}" for s in ("upper", "lower")
                           if plan.limit in (s, "both")))
        return RecordBlock(cid=proc.cid, heading=proc.heading,
                           header=("xbar", d, stat, "Decision"), rows=(("", "", "", ""),),
                           boxes=plan.n, steps=tuple((f"measurement {j}", j, j)
                                                     for j in range(1, plan.n + 1))
                           + (("result (xbar, s, statistic)", 0, 0),))
    return RecordBlock(cid=proc.cid, heading=proc.heading,
                       header=("Units inspected", "Found d", "Decision"), rows=(("", "", ""),),
                       steps=(("sample", 0, 0),))


#: Columns of the record template (CSV), one row per step of the form.
RECORD_COLUMNS = ("lot", "date", "characteristic", "step", "positions", "units",
                  "units_inspected", "found", "found_in_all", "measurement", "state",
                  "decision", "inspector", "signature")


def record_csv(blocks, part_id: str, order=(), picks: bool = False) -> str:
    """The blank record form as a CSV template: one row per stage, unit or
    measurement to record, the fixed cells filled (``order``: the inspection
    order's unit numbers, shown beside their positions; without one, the
    units are the whole pick list when ``picks``, else drawn at random)."""
    import csv
    import io

    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(RECORD_COLUMNS)
    blank = dict.fromkeys(RECORD_COLUMNS, "")
    for b in blocks:
        for label, a, z in b.steps:
            extra = {"step": label}
            if a:
                extra["positions"] = (_rows_text(a, z) if order else
                                      "the whole pick list" if picks else "at random")
                if order:
                    extra["units"] = " ".join(str(u) for u in order[a - 1:z])
            w.writerow(list((blank | {"characteristic": b.cid} | extra).values()))
    w.writerow(list((blank | {"characteristic": "(lot decision)", "step": f"part {part_id}"})
                    .values()))
    return buf.getvalue()
