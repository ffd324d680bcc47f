"""The ``lotwise design`` handlers of ``--scheme double``, ``sequential`` and
``compare-all`` (dispatched from :mod:`lotwise.cli.design`)."""

from __future__ import annotations

import typer

from . import common
from lotwise.core.quantities import InputError, Infeasible, format_pct, parse_count
from lotwise.core.numbers import probability

def _scope(lot, per_unit, model):
    return common.scope_and_model(lot, per_unit, model)


def _not_for(scheme, **given):
    for opt, val in given.items():
        if val is not None and val is not False:
            raise InputError(f"--{opt.replace('_', '-')} ({val}) does not apply to --scheme "
                             f"{scheme}")


def _ratio(text) -> float:
    if text is None:
        return 2.0
    try:
        v = float(str(text).strip())
    except ValueError:
        v = float("nan")
    if not 0.1 <= v <= 10:
        raise InputError(f"--ratio ({text}) must be a number from 0.1 to 10 (n2 / n1)")
    return v


def _minimize(text) -> str:
    from lotwise.families.double import MINIMIZE

    if text is None:
        return "asn-aql"
    t = str(text).strip().lower()
    if t not in MINIMIZE:
        raise InputError(f"--minimize ({text}) must be one of: {', '.join(MINIMIZE)}")
    return t


def _targets(aql, rql, alpha, beta, lot, model, per_unit, plot, scheme, force):
    from lotwise.core.types import Targets

    a, r = common.levels(aql, rql, per_unit)
    al, be = common.risks(alpha, beta)
    scope, mdl = _scope(lot, per_unit, model)
    plot = common.plot_path(plot, force)
    targets = Targets(aql=a, rql=r, alpha=al, beta=be)
    base = {"scheme": scheme, "model": mdl, "lot_size": scope.lot_size,
            "targets": targets.as_dict()}
    return targets, scope, mdl, plot, base


def _truncate(text):
    return parse_count(text, "--truncate", minimum=1, maximum=10_000_000) \
        if text is not None else None


def design_double_cmd(*, scheme, aql, rql, alpha, beta, lot, model, per_unit, n, c, max_n,
                      ratio, minimize, truncate, plot, force, as_json, **_others):
    """``lotwise design --scheme double``."""
    _not_for(scheme, n=n, c=c)
    targets, scope, mdl, plot, base = _targets(aql, rql, alpha, beta, lot, model, per_unit,
                                               plot, scheme, force)
    _not_for(scheme, truncate=truncate)
    cap = parse_count(max_n, "--max-n", minimum=2) if max_n is not None else None
    return _design_double(targets, scope, mdl, _ratio(ratio), _minimize(minimize), cap,
                          plot, force, as_json, base)


def design_sequential_cmd(*, scheme, aql, rql, alpha, beta, lot, model, per_unit, n, c, max_n,
                          ratio, minimize, truncate, plot, force, as_json, **_others):
    """``lotwise design --scheme sequential``."""
    _not_for(scheme, n=n, c=c)
    targets, scope, mdl, plot, base = _targets(aql, rql, alpha, beta, lot, model, per_unit,
                                               plot, scheme, force)
    _not_for(scheme, ratio=ratio, minimize=minimize, max_n=max_n)
    return _design_sequential(targets, scope, mdl, _truncate(truncate), plot, force, as_json,
                              base)


def compare_all_cmd(*, scheme, aql, rql, alpha, beta, lot, model, per_unit, n, c, max_n,
                    ratio, minimize, truncate, plot, force, as_json, **_others):
    """``lotwise design --scheme compare-all``: single, double and sequential side by side."""
    _not_for(scheme, n=n, c=c)
    targets, scope, mdl, plot, _base = _targets(aql, rql, alpha, beta, lot, model, per_unit,
                                                plot, scheme, force)
    _not_for(scheme, max_n=max_n)
    return _compare_all(targets, scope, mdl, _ratio(ratio), _minimize(minimize),
                        _truncate(truncate), plot, force, as_json)


def _design_double(targets, scope, mdl, ratio, minimize, cap, plot, force, as_json, base):
    from lotwise.families.double import design_double
    from lotwise.analysis.assess import assess
    from lotwise.analysis.report import render_assessment as render_plan

    base.update({"ratio": ratio, "minimize": minimize})
    try:
        d = design_double(aql=targets.aql, rql=targets.rql, alpha=targets.alpha,
                          beta=targets.beta, lot_size=scope.lot_size, model=mdl,
                          per_unit=scope.per_unit, ratio=ratio, minimize=minimize, max_n=cap)
    except Infeasible as exc:
        common.infeasible(exc, as_json, base)
    rep = assess(d.plan, targets, scope, mdl, design=d,
                 design_options={"ratio": ratio, "minimize": minimize}).to_json()
    pdd = rep["poisson_design"]
    if plot:
        from lotwise.data.files import save_figure
        from lotwise.documents.plots.multistage import oc_asn_figure

        fig = oc_asn_figure(d.plan, scope, model=mdl, aql=targets.aql, rql=targets.rql)
        save_figure(fig, plot, force=force, option="--plot")
    if as_json:
        common.emit_json(rep)
        return
    what = "ASN at the AQL" if minimize == "asn-aql" else "largest ASN over the OC curve"
    text = render_plan(rep, f"Double sampling plan (smallest {what}; n2 = {ratio:g} x n1, "
                            "r1 = c2 + 1)")
    typer.echo(text)
    if pdd and "n1" in pdd:
        verdict = "meets" if pdd["meets"] else "does NOT meet"
        typer.echo(f"  A Poisson-based double design picks n1={pdd['n1']}, c1={pdd['c1']}, "
                   f"r1={pdd.get('r1', pdd['c2'] + 1)}, "
                   f"n2={pdd['n2']}, c2={pdd['c2']}; under the {mdl} model it carries alpha "
                   f"{format_pct(pdd['alpha'])} and beta {format_pct(pdd['beta'])}: it "
                   f"{verdict} the targets.")
    s = d.search
    typer.echo(f"  Search: every c1 < r1 <= c2 + 1 for n1 from {s['n1'][0]} to {s['n1'][1]} "
               f"({s['plans_evaluated']:,} plans evaluated); stopped because {s['stopped']}.")
    if plot:
        typer.echo(f"  wrote {plot}")


def _number_ranges(numbers: dict) -> list[list[str]]:
    """Rows ``n from-to, accept on <=, reject on >=`` where the numbers are constant."""
    rows = []
    ns, acc, rej = numbers["n"], numbers["accept"], numbers["reject"]
    start = 0
    for i in range(1, len(ns) + 1):
        if i == len(ns) or acc[i] != acc[start] or rej[i] != rej[start] or i == len(ns) - 1:
            lo, hi = ns[start], ns[i - 1]
            span = f"{lo}" if lo == hi else f"{lo}-{hi}"
            rows.append([span, "-" if acc[start] is None else str(acc[start]),
                         "-" if rej[start] is None else str(rej[start])])
            start = i
    if rows and start < len(ns):  # the truncation point on its own row
        rows.append([str(ns[-1]), str(acc[-1]), "-" if rej[-1] is None else str(rej[-1])])
    return rows


def _design_sequential(targets, scope, mdl, truncate, plot, force, as_json, base):
    from lotwise.families.sequential import design_sequential
    from lotwise.analysis.assess import assess
    from lotwise.analysis.report import render_assessment as render_plan

    try:
        d = design_sequential(aql=targets.aql, rql=targets.rql, alpha=targets.alpha,
                              beta=targets.beta, lot_size=scope.lot_size, model=mdl,
                              per_unit=scope.per_unit, truncate=truncate)
    except Infeasible as exc:
        common.infeasible(exc, as_json, base)
    rep = assess(d.plan, targets, scope, mdl, design=d).to_json()
    if plot:
        from lotwise.data.files import save_figure
        from lotwise.documents.plots.multistage import sequential_figure

        fig = sequential_figure(d.plan, per_unit=scope.per_unit,
                                title=f"Sequential plan: {d.plan.label}")
        save_figure(fig, plot, force=force, option="--plot")
    if as_json:
        common.emit_json(rep)
        return
    typer.echo(render_plan(rep, "Item-by-item sequential plan (Wald's SPRT), truncated"))
    typer.echo(f"  Truncation point: {d.plan.truncate} units ({d.truncate_source}).")
    e = d.exact
    typer.echo(f"  Exact truncated plan under the {mdl} model: alpha {format_pct(e['alpha'])}, "
               f"beta {format_pct(e['beta'])} ({'meets' if e['meets'] else 'does NOT meet'} the "
               "targets).")
    typer.echo("")
    typer.echo("  Acceptance and rejection numbers (- : not possible yet; acceptance "
               f"starts at n = {d.plan.first_acceptance}):")
    typer.echo(common.table(_number_ranges(d.numbers()),
                            ["units inspected n", "accept on <=", "reject on >="]))
    if plot:
        typer.echo(f"  wrote {plot}")


def _compare_all(targets, scope, mdl, ratio, minimize, truncate, plot, force, as_json):
    from lotwise.core.quantities import format_level
    from lotwise.analysis.tradeoff import asn_tradeoff

    if truncate is not None and scope.lot_size is not None and truncate > scope.lot_size:
        raise InputError(f"--truncate ({truncate}) must not be greater than the lot size "
                         f"({scope.lot_size})")
    res = asn_tradeoff(targets, scope, model=mdl, ratio=ratio, minimize=minimize,
                       truncate=truncate)
    if plot:
        from lotwise.data.files import save_figure
        from lotwise.documents.plots.multistage import tradeoff_figure

        save_figure(tradeoff_figure(res), plot, force=force, option="--plot")
    if as_json:
        common.emit_json(res.as_dict())
        return
    per_unit = scope.per_unit
    typer.echo(f"Trade-off for AQL {format_level(targets.aql, per_unit)} at alpha "
               f"{format_pct(targets.alpha)}, RQL {format_level(targets.rql, per_unit)} at beta "
               f"{format_pct(targets.beta)} ({mdl} model"
               + (f", lot of {scope.lot_size}" if scope.lot_size else "") + ")")
    rows = []
    for row in res.rows:
        if row.plan is None:
            rows.append([row.scheme, "-", "-", "-", "-", "-", "-", "-", row.note[:60]])
            continue
        rows.append([row.scheme, row.label, probability(row.pa_aql, 4), probability(row.pa_rql, 4),
                     f"{row.asn_aql:.1f}", f"{row.asn_rql:.1f}", f"{row.asn_max:.1f}",
                     str(row.n_max), "yes" if row.meets else "NO"])
    typer.echo(common.table(rows, ["scheme", "plan", "Pa(AQL)", "Pa(RQL)", "ASN(AQL)",
                                   "ASN(RQL)", "ASN max", "at most", "meets"]))
    typer.echo("  ASN: average units inspected per lot with every stage in full; a single "
               "plan always inspects n. 'at most' is the most units any lot can take.")
    from lotwise.analysis.assess import SAFETY

    typer.echo(f"  {SAFETY}")
    if plot:
        typer.echo(f"  wrote {plot}")


# --- check and oc ------------------------------------------------------------
