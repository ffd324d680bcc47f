"""``lotwise design``: the plan of each ``--scheme`` with the smallest sample meeting both
risks. The command reads the options; the scheme's handler (one function per scheme, in the
module named in :data:`SCHEMES`) checks the ones that apply to it and designs."""

from __future__ import annotations

from typing import List, Optional

import typer

from . import app, common
from . import prior as prior_cli
from lotwise.core.quantities import InputError

#: ``--scheme`` -> (``"module:function"`` in this package taking every design option as
#: keywords, whether the scheme takes the prior and cost options of ``--minimize cost``).
SCHEMES = {
    "single": ("single:design_cmd", True),
    "double": ("multistage:design_double_cmd", False),
    "sequential": ("multistage:design_sequential_cmd", False),
    "compare-all": ("multistage:compare_all_cmd", False),
    "chain": ("rectifying:chain_cmd", False),
    "variables": ("variables:design_options", False),
    "csp1": ("csp:design_options", False),
    "csp2": ("csp:design_options", False),
    "csp3": ("csp:design_options", False),
}


@app.command()
def design(
    aql: Optional[str] = common.AQL,
    rql: Optional[str] = common.RQL,
    alpha: str = common.ALPHA,
    beta: str = common.BETA,
    lot: Optional[str] = common.LOT,
    model: Optional[str] = common.MODEL,
    per_unit: bool = common.PER_UNIT,
    scheme: str = typer.Option("single", "--scheme", help="Plan family: single, double, sequential, compare-all (the three side by side), chain (ChSP-1), variables, or csp1, csp2, csp3 (continuous sampling)."),
    c: Optional[str] = typer.Option(None, "--c", help="Fix the acceptance number (0 for accept-on-zero)."),
    n: Optional[str] = typer.Option(None, "--n", help="Fix the sample size and find c."),
    max_n: Optional[str] = typer.Option(None, "--max-n", help="Largest affordable sample."),
    minimize: Optional[str] = typer.Option(None, "--minimize", help="single: ati (least average total inspection at --process-average) or cost (least expected cost per lot under --prior); double: asn-aql (default) or asn-max."),
    process_average: Optional[str] = typer.Option(None, "--process-average", help="Supplier's process average, for --minimize ati."),
    aoql: Optional[str] = typer.Option(None, "--aoql", help="AOQL limit, for --minimize ati (instead of --rql)."),
    aoq_formula: str = typer.Option("screened", "--aoq-formula", help="screened (rejected lots screened, nonconforming items found replaced): in a finite lot the exact AOQ E[(D - X) 1{accept}]/N, for a single plan (D/N)((N - n)/N) Pa(n, c | N - 1, D - 1), never below p Pa (N - n)/N and N/(N - n) times it for c = 0; p Pa (N - n)/N under the binomial and Poisson models. simple: p Pa."),
    sigma: Optional[str] = typer.Option(None, "--sigma", help="variables: known or unknown."),
    sigma_value: Optional[str] = typer.Option(None, "--sigma-value", help="variables: the known sigma."),
    limit: Optional[str] = typer.Option(None, "--limit", help="variables: upper, lower or both."),
    lower: Optional[str] = typer.Option(None, "--lower", help="variables: lower specification limit."),
    upper: Optional[str] = typer.Option(None, "--upper", help="variables: upper specification limit."),
    ratio: Optional[str] = typer.Option(None, "--ratio", help="double: n2 / n1 (default 2)."),
    truncate: Optional[str] = typer.Option(None, "--truncate", help="sequential: most units to inspect (default 3 x the single plan's n)."),
    plot: Optional[str] = typer.Option(None, "--plot", help="double, sequential, compare-all: draw the chart to PATH.png, .svg or .pdf."),
    force: bool = typer.Option(False, "--force", help="Overwrite files not written by lotwise."),
    csp_f: Optional[List[str]] = typer.Option(None, "--f", help="csp1/2/3: sampling fraction (0.1, 1/10 or 10%); repeat for the list --minimize afi searches."),
    csp_i: Optional[str] = typer.Option(None, "--i", help="csp1/2/3: clearance number; find the smallest f instead."),
    prior: Optional[str] = prior_cli.PRIOR, prior_from: Optional[str] = prior_cli.PRIOR_FROM,
    part: Optional[str] = prior_cli.PART, supplier: Optional[str] = prior_cli.SUPPLIER,
    half_life: Optional[str] = prior_cli.HALF_LIFE, cost_inspect: Optional[str] = prior_cli.COST_INSPECT,
    cost_escape: Optional[str] = prior_cli.COST_ESCAPE, cost_reject_lot: Optional[str] = prior_cli.COST_REJECT,
    sheet: Optional[str] = prior_cli.SHEET, deliveries: Optional[str] = prior_cli.DELIVERIES,
    miss_rate: Optional[str] = common.MISS_RATE, false_alarm: Optional[str] = common.FALSE_ALARM,
    study: Optional[str] = common.STUDY,
    measurement_sd: Optional[str] = common.MEASUREMENT_SD, sigma_is: Optional[str] = common.SIGMA_IS,
    process_sd: Optional[str] = common.PROCESS_SD,
    as_json: bool = common.JSON,
):
    """Design the plan with the smallest sample meeting both risks (or, --minimize cost, the cheapest)."""
    opts = dict(locals())
    rates = common.error_rates(opts.pop("miss_rate"), opts.pop("false_alarm"), opts.pop("study"))
    gauge = common.gauge_args(opts.pop("measurement_sd"), opts.pop("sigma_is"),
                              opts.pop("process_sd"))
    key = scheme.strip().lower()
    if key not in SCHEMES:  # a family registered with a designer of its own (imports them all)
        names = list(SCHEMES) + [f for f in _registered() if f not in SCHEMES]
        if key not in names:
            raise InputError(f"--scheme ({scheme}) must be one of: {', '.join(names)}")
    target, takes_prior = SCHEMES.get(key, ("design:registered_cmd", False))
    extra = prior_cli.given(opts)
    if not takes_prior and (extra or minimize == "cost"):
        opt = extra[0] if extra else "--minimize"
        val = opts[prior_cli.option_key(opt)] if extra else minimize
        raise InputError(f"{opt} ({val}) applies to --scheme single (--minimize cost designs "
                         f"single plans), not {key}")
    import importlib

    if gauge is not None:
        from lotwise.families.base import REGISTRY, family

        if key not in REGISTRY or family(key).plan_class.evaluation != "process":
            raise InputError(f"--measurement-sd ({gauge['measurement_sd']:g}) applies to "
                             "--scheme variables; an attribute inspection that misjudges items "
                             "is --miss-rate/--false-alarm")
        opts["gauge"] = gauge
    if rates is not None:  # the true risks held under inspection errors
        from .inspection import design_cmd

        return design_cmd(rates, **{**opts, "scheme": key})
    module, func = target.split(":")
    handler = getattr(importlib.import_module(f"{__package__}.{module}"), func)
    opts["scheme"] = key
    return handler(**opts)


def _registered() -> list[str]:
    """Families with a designer, in the registry's order."""
    from lotwise.families.base import designable

    return designable()


#: Options a family without a handler of its own cannot take (it is designed from the
#: targets, the lot size and the model alone).
_SCHEME_OPTIONS = ("c", "n", "max_n", "minimize", "process_average", "aoql", "sigma",
                   "sigma_value", "limit", "lower", "upper", "ratio", "truncate", "plot",
                   "csp_f", "csp_i")


def registered_cmd(*, scheme, aql, rql, alpha, beta, lot, model, per_unit, as_json, **o):
    """``lotwise design --scheme NAME`` for a family whose module registers a designer and
    that has no handler in :data:`SCHEMES`: its designer with the targets only."""
    from lotwise.analysis.assess import assess
    from lotwise.core.quantities import Infeasible
    from lotwise.core.types import Targets
    from lotwise.families.base import family

    for key in _SCHEME_OPTIONS:
        if o.get(key):
            raise InputError(f"--{key.replace('_', '-').replace('csp-', '')} ({o[key]}) does "
                             f"not apply to --scheme {scheme}")
    a, r = common.levels(aql, rql, per_unit)
    al, be = common.risks(alpha, beta)
    scope, mdl = common.scope_and_model(lot, per_unit, model)
    targets = Targets(aql=a, rql=r, alpha=al, beta=be)
    try:
        d = family(scheme).design(aql=a, rql=r, alpha=al, beta=be, lot_size=scope.lot_size,
                                  model=mdl, per_unit=per_unit)
    except Infeasible as exc:
        common.infeasible(exc, as_json, {"scheme": scheme, "model": mdl,
                                         "lot_size": scope.lot_size,
                                         "targets": targets.as_dict()})
    rep = assess(d.plan, targets, scope, d.model, design=d)
    if as_json:
        common.emit_json(rep.to_json())
    else:
        typer.echo(rep.render(f"{scheme} plan (designed by its family's designer)"))
