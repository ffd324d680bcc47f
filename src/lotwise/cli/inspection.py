"""``lotwise design`` with ``--miss-rate``/``--false-alarm``/``--study``: the smallest plan
holding both risks at the true AQL and RQL when the inspection misjudges items (see
:mod:`lotwise.families.misclassified`)."""

from __future__ import annotations

import typer

from . import common
from lotwise.core.quantities import Infeasible

_OPTIONS = ("c", "n", "max_n", "minimize", "process_average", "aoql", "sigma", "sigma_value",
            "limit", "lower", "upper", "ratio", "truncate", "plot", "csp_f", "csp_i", "prior",
            "prior_from", "part", "supplier", "half_life", "cost_inspect", "cost_escape",
            "cost_reject_lot", "sheet", "deliveries")


def design_cmd(rates, *, scheme, aql, rql, alpha, beta, lot, model, per_unit, as_json, **o):
    """Design the ``scheme`` plan meeting both risks at the true levels under ``rates``."""
    from lotwise.analysis.assess import assess
    from lotwise.core.types import Targets
    from lotwise.families.misclassified import (DESIGN_TAKES, design_misclassified,
                                                option_value, refuse_options)

    refuse_options(scheme, [(key, o.get(key)) for key in _OPTIONS])
    a, r = common.levels(aql, rql, per_unit)
    al, be = common.risks(alpha, beta)
    scope, mdl = common.scope_and_model(lot, per_unit, model)
    options = {}
    for key in DESIGN_TAKES.get(scheme, ()):
        if o.get(key) is not None:
            options[key] = option_value(key, o[key])
    targets = Targets(aql=a, rql=r, alpha=al, beta=be)
    try:
        d = design_misclassified(scheme, rates, aql=a, rql=r, alpha=al, beta=be,
                                 lot_size=scope.lot_size, model=mdl, per_unit=per_unit, **options)
    except Infeasible as exc:
        common.infeasible(exc, as_json, {"scheme": scheme, "model": mdl,
                                         "lot_size": scope.lot_size,
                                         "targets": targets.as_dict(),
                                         "inspection_error": rates.as_dict()})
    rep = common.add_rates(assess(d.plan, targets, scope, d.model, design=d).to_json(), rates)
    if as_json:
        common.emit_json(rep)
    else:
        from lotwise.analysis.report import render_assessment

        typer.echo(render_assessment(rep, f"{scheme} plan holding both risks at the true "
                                          "quality, with inspection errors"))
