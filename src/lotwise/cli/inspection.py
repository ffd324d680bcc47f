"""``lotwise design`` with ``--miss-rate``/``--false-alarm``/``--study``: the smallest plan
holding both risks at the true AQL and RQL when the inspection misjudges items (see
:mod:`lotwise.families.misclassified`)."""

from __future__ import annotations

import typer

from . import common
from lotwise.core.quantities import InputError, Infeasible, parse_count

#: Design options that still apply with inspection errors, per scheme.
_TAKES = {"single": ("c", "n", "max_n"), "double": ("ratio",), "sequential": ("truncate",),
          "chain": ("max_n",)}
_NOT_ATTRIBUTE = ("variables", "csp1", "csp2", "csp3", "compare-all")
_OPTIONS = ("c", "n", "max_n", "minimize", "process_average", "aoql", "sigma", "sigma_value",
            "limit", "lower", "upper", "ratio", "truncate", "plot", "csp_f", "csp_i", "prior",
            "prior_from", "part", "supplier", "half_life", "cost_inspect", "cost_escape",
            "cost_reject_lot", "sheet", "deliveries")


def design_cmd(rates, *, scheme, aql, rql, alpha, beta, lot, model, defects, as_json, **o):
    """Design the ``scheme`` plan meeting both risks at the true levels under ``rates``."""
    from lotwise.analysis.assess import assess
    from lotwise.core.types import Targets
    from lotwise.families.misclassified import design_misclassified

    if scheme in _NOT_ATTRIBUTE:
        raise InputError(f"--scheme ({scheme}): --miss-rate/--false-alarm/--study design "
                         "attribute plans (single, double, sequential, chain)"
                         + ("; a gauge's error in a variables plan is --measurement-sd"
                            if scheme == "variables" else ""))
    takes = _TAKES.get(scheme, ())
    for key in _OPTIONS:
        val = o.get(key)
        if val and key not in takes:
            opt = "--" + key.replace("_", "-").replace("csp-", "")
            shown = ", ".join(val) if isinstance(val, list) else val
            raise InputError(f"{opt} ({shown}) cannot be combined with --miss-rate/"
                             f"--false-alarm/--study for --scheme {scheme}")
    a, r = common.levels(aql, rql, defects)
    al, be = common.risks(alpha, beta)
    scope, mdl = common.scope_and_model(lot, defects, model)
    options = {}
    for key in takes:
        if o.get(key) is not None:
            options[key] = _option(key, o[key])
    targets = Targets(aql=a, rql=r, alpha=al, beta=be)
    try:
        d = design_misclassified(scheme, rates, aql=a, rql=r, alpha=al, beta=be,
                                 lot_size=scope.lot_size, model=mdl, defects=defects, **options)
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


def _option(key: str, value):
    """A design option's value, checked as the error-free handlers check it."""
    from lotwise.core.quantities import parse_fraction

    if key == "ratio":
        v = parse_fraction(value, "--ratio")
        if not v > 0:
            raise InputError(f"--ratio ({value}) must be a number above 0")
        return v
    minimum = 0 if key == "c" else 1
    return parse_count(value, "--" + key.replace("_", "-"), minimum=minimum)
