"""``lotwise check``: audit a plan (or re-verify plan files) against AQL/RQL targets."""

from __future__ import annotations

from typing import List, Optional

import typer

from . import app, common
from . import prior as prior_cli
from lotwise.core.quantities import InputError


@app.command()
def check(
    paths: Optional[List[str]] = typer.Argument(None, help="Plan files or folders to re-verify."),
    plan: Optional[str] = typer.Option(None, "--plan", help='Plan notation, e.g. "n=80,c=2".'),
    n: Optional[str] = typer.Option(None, "--n", help="Sample size."),
    c: Optional[str] = typer.Option(None, "--c", help="Acceptance number."),
    aql: Optional[str] = common.AQL,
    rql: Optional[str] = common.RQL,
    alpha: str = common.ALPHA,
    beta: str = common.BETA,
    lot: Optional[str] = common.LOT,
    model: Optional[str] = common.MODEL,
    per_unit: bool = common.PER_UNIT,
    aoq_formula: Optional[str] = typer.Option(None, "--aoq-formula", help="With --lot-size: screened (default; rejected lots screened, nonconforming items found replaced): the exact finite-lot AOQ E[(D - X) 1{accept}]/N, for a single plan (D/N)((N - n)/N) Pa(n, c | N - 1, D - 1), never below p Pa (N - n)/N and N/(N - n) times it for c = 0 (p Pa (N - n)/N under --model binomial or poisson); or simple (p Pa)."),
    skip_lot: Optional[str] = typer.Option(None, "--skip-lot", help='Compare with skip-lot SkSP-2 over this plan, e.g. "i=4,f=0.25".'),
    aoq_plot: Optional[str] = typer.Option(None, "--aoq-plot", help="With --lot-size: draw OC, AOQ and ATI curves to PATH.png, .svg or .pdf."),
    force: bool = typer.Option(False, "--force", help="Overwrite files not written by lotwise."),
    at: Optional[List[str]] = typer.Option(None, "--at", help="csp1/2/3 plans: fractions nonconforming to evaluate (repeatable or comma-separated)."),
    run_length: Optional[str] = typer.Option(None, "--run-length", help="csp1/2/3 plans: also the exact figures for a run of this many units starting in 100 % inspection."),
    prior: Optional[str] = prior_cli.PRIOR, prior_from: Optional[str] = prior_cli.PRIOR_FROM,
    part: Optional[str] = prior_cli.PART, supplier: Optional[str] = prior_cli.SUPPLIER,
    half_life: Optional[str] = prior_cli.HALF_LIFE,
    miss_rate: Optional[str] = common.MISS_RATE,
    false_alarm: Optional[str] = common.FALSE_ALARM,
    study: Optional[str] = common.STUDY,
    measurement_sd: Optional[str] = common.MEASUREMENT_SD,
    sigma_is: Optional[str] = common.SIGMA_IS,
    process_sd: Optional[str] = common.PROCESS_SD,
    as_json: bool = common.JSON,
):
    """Audit a plan (or re-verify plan files): the risks it really carries.

    With --lot-size also AOQ/AOQL and ATI of rectifying inspection. Exit 0
    when it meets both targets (and so does the skip-lot plan, if asked), 1
    when it falls short. With plan files or folders, one summary row per
    characteristic.
    """
    from lotwise.analysis.assess import assess
    from lotwise.core.types import Targets
    from . import rectifying as rect_cli

    if paths:
        if plan is not None or n is not None or c is not None:
            raise InputError("give plan files/folders or --plan/--n/--c, not both")
        if common.error_rates(miss_rate, false_alarm, study) is not None:
            raise InputError("--miss-rate/--false-alarm/--study apply to --plan/--n/--c; a "
                             "plan file states its rates in its [inspection] table")
        from .sheets import check_folder  # the folder audit

        raise typer.Exit(check_folder(paths, as_json))
    p = common.plan_from(plan, n, c)
    rates = common.error_rates(miss_rate, false_alarm, study)
    gauge = common.gauge_args(measurement_sd, sigma_is, process_sd)
    if p.evaluation == "flow":  # continuous sampling: long-run figures at --at levels
        from .csp import check_cmd as flow_check

        return flow_check(p, at=at, run_length=run_length, model=model, as_json=as_json,
                          unused={"--aql": aql, "--rql": rql, "--lot-size": lot,
                                  "--per-unit": per_unit, "--aoq-formula": aoq_formula,
                                  "--skip-lot": skip_lot, "--aoq-plot": aoq_plot,
                                  "--prior": prior, "--prior-from": prior_from,
                                  "--miss-rate": miss_rate, "--false-alarm": false_alarm,
                                  "--study": study})
    for opt, val in (("--at", at), ("--run-length", run_length)):
        if val:
            raise InputError(f"{opt} ({val if opt == '--run-length' else ', '.join(val)}) "
                             "applies to continuous sampling plans (csp1, csp2, csp3)")
    pri, info = prior_cli.load_prior(prior=prior, prior_from=prior_from, part=part,
                                     supplier=supplier, half_life=half_life, as_json=as_json)
    p, layer = p.audit_parts()  # a skip-lot plan: its reference plan with --skip-lot
    if layer is not None:
        if skip_lot is not None:
            raise InputError(f"--skip-lot ({skip_lot}) cannot be combined with a skip-lot "
                             "--plan")
        skip_lot = layer
    a, r = common.levels(aql, rql, per_unit)
    al, be = common.risks(alpha, beta)
    scope, mdl = common.scope_and_model(lot, per_unit, model)
    p = p.for_scope(scope)  # checks the scope; a plan may be meant per the scope
    p = common.with_gauge(common.with_errors(p, rates, scope), gauge)  # at the true quality
    if not r > a:
        common.levels_out_of_order(a, r, per_unit, as_json)
    if aoq_formula is not None and not scope.lot_size:
        raise InputError(f"--aoq-formula ({aoq_formula}) needs --lot-size (AOQ and ATI are "
                         "computed for lots of a known size)")
    targets = Targets(aql=a, rql=r, alpha=al, beta=be)
    rep = common.add_rates(assess(p, targets, scope, mdl, aoq_formula=aoq_formula).to_json(),
                           rates)
    rep = rect_cli.check_extras(rep, p, scope, mdl, targets, aoq_formula=aoq_formula,
                                skip_lot=skip_lot, aoq_plot=aoq_plot, force=force)
    rep = prior_cli.add_posterior(rep, p, pri, info, targets, scope, skip_lot)
    meets = rep["meets"] and rep.get("skip_lot", {}).get("meets", True)
    if as_json:
        common.emit_json(rep)
    else:
        from lotwise.analysis.report import render_assessment

        verdict = "meets both targets" if rep["meets"] else "FALLS SHORT"
        typer.echo(render_assessment(rep, f"Audit of the {p.scheme} plan {p.label}: {verdict}")
                   + rect_cli.render_extras(rep) + prior_cli.render(rep))
    raise typer.Exit(0 if meets else 1)
