"""The single plan's ``lotwise design`` handler (see :data:`lotwise.cli.design.SCHEMES`):
the smallest n, then the smaller c, meeting both risks; ``--minimize ati|cost`` is routed
from here."""

from __future__ import annotations

import typer

from . import common
from . import prior as prior_cli
from lotwise.core.quantities import InputError, Infeasible, parse_count


def design_cmd(**o):
    """``lotwise design --scheme single`` with every design option as keywords."""
    if o["minimize"] == "cost" or prior_cli.given(o):
        return prior_cli.design_cost(**o)
    if o["csp_f"] or o["csp_i"] is not None:  # the continuous plans' options
        opt, val = ("--f", ", ".join(o["csp_f"])) if o["csp_f"] else ("--i", o["csp_i"])
        raise InputError(f"{opt} ({val}) applies to --scheme csp1, csp2 or csp3")
    if o["minimize"] is not None:
        from . import rectifying

        return rectifying.least_ati_cmd(**o)
    return _design(**o)


def _design(*, aql, rql, alpha, beta, lot, model, per_unit, c, n, max_n, process_average,
            aoql, ratio, truncate, plot, as_json, **_others):
    from lotwise.analysis.assess import assess
    from lotwise.core.types import Targets
    from lotwise.families.single import design_single

    for name, val in (("--process-average", process_average), ("--aoql", aoql)):
        if val is not None:
            raise InputError(f"{name} ({val}) needs --minimize ati")
    for opt, val in (("--ratio", ratio), ("--truncate", truncate), ("--plot", plot)):
        if val is not None:
            raise InputError(f"{opt} ({val}) applies to --scheme double, sequential or "
                             "compare-all, not single")
    a, r = common.levels(aql, rql, per_unit)
    al, be = common.risks(alpha, beta)
    scope, mdl = common.scope_and_model(lot, per_unit, model)
    cc = parse_count(c, "--c", minimum=0) if c is not None else None
    nn = parse_count(n, "--n", minimum=1) if n is not None else None
    cap = parse_count(max_n, "--max-n", minimum=1) if max_n is not None else None
    targets = Targets(aql=a, rql=r, alpha=al, beta=be)
    base = {"scheme": "single", "model": mdl, "lot_size": scope.lot_size,
            "targets": targets.as_dict()}
    try:
        d = design_single(aql=a, rql=r, alpha=al, beta=be, lot_size=scope.lot_size, model=mdl,
                          per_unit=per_unit, n=nn, c=cc, max_n=cap)
    except Infeasible as exc:
        common.infeasible(exc, as_json, base)
    a = assess(d.plan, targets, scope, mdl, design=d)
    if as_json:
        common.emit_json(a.to_json())
    else:
        typer.echo(a.render("Single sampling plan (smallest sample meeting both risks)"))
