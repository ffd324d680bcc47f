"""Command-line glue for variables plans: ``lotwise design --scheme variables`` and
``check``/``oc`` of a variables plan (dispatched from :mod:`lotwise.cli.design`,
:mod:`lotwise.cli.check` and :mod:`lotwise.cli.oc`). ``lotwise judge`` is in
:mod:`lotwise.cli.judge`.
"""

from __future__ import annotations

import math
import typer

from . import common
from lotwise.core.numbers import probability
from lotwise.core.quantities import InputError, Infeasible

#: Shapiro-Wilk p-value below which normality is called doubtful.
def number(text, option: str) -> float | None:
    """A finite real number such as ``25.4`` or ``-1e-3``, or None."""
    if text is None:
        return None
    try:
        v = float(str(text).strip())
    except ValueError:
        raise InputError(f"{option} ({text!r}) must be a number such as 25.4") from None
    if not math.isfinite(v):
        raise InputError(f"{option} ({text!r}) must be a finite number")
    return v


# --- design --------------------------------------------------------------------

def design_cmd(*, aql, rql, alpha, beta, sigma, sigma_value, limit, lower, upper, max_n,
               lot, model, per_unit, c, n, as_json, gauge=None):
    """``lotwise design --scheme variables``."""
    from lotwise.families.variables import design_variables
    from lotwise.core.quantities import parse_count

    for opt, val in (("--model", model), ("--c", c), ("--n", n)):
        if val is not None:
            raise InputError(f"{opt} ({val}) does not apply to --scheme variables")
    if per_unit:
        raise InputError("--per-unit does not apply to --scheme variables: a variables plan "
                         "judges a fraction nonconforming from measurements")
    if sigma is None:
        raise InputError("--sigma is required with --scheme variables: known or unknown")
    sigma = sigma.strip().lower()
    if sigma not in ("known", "unknown"):
        raise InputError(f"--sigma ({sigma}) must be 'known' or 'unknown'")
    limit = (limit or "").strip().lower() or None
    lo, up = number(lower, "--lower"), number(upper, "--upper")
    if limit is None:
        limit = "both" if (lo is not None and up is not None) else (
            "lower" if lo is not None else "upper")
    if limit not in ("upper", "lower", "both"):
        raise InputError(f"--limit ({limit}) must be one of: upper, lower, both")
    sv = number(sigma_value, "--sigma-value")
    if sv is not None and not sv > 0:
        raise InputError(f"--sigma-value ({sigma_value}) must be a positive number")
    if lo is not None and up is not None and not lo < up:
        raise InputError(f"--lower ({lo:g}) must be below --upper ({up:g})")
    a, r = common.levels(aql, rql, False)
    al, be = common.risks(alpha, beta)
    cap = parse_count(max_n, "--max-n", minimum=1) if max_n is not None else None
    nlot = common.lot_size(lot)
    base = {"scheme": "variables", "sigma": sigma, "limit": limit,
            "targets": {"aql": a, "alpha": al, "rql": r, "beta": be}}
    if gauge is not None:
        return _design_measured(gauge, base, nlot, as_json, aql=a, rql=r, alpha=al, beta=be,
                                sigma=sigma, limit=limit, sigma_value=sv, lower=lo, upper=up,
                                max_n=cap)
    try:
        d = design_variables(aql=a, rql=r, alpha=al, beta=be, sigma=sigma, limit=limit,
                             sigma_value=sv, lower=lo, upper=up, max_n=cap)
    except Infeasible as exc:
        common.infeasible(exc, as_json, base)
    from lotwise.analysis.assess import assess
    from lotwise.core.types import Scope

    rep = assess(d.plan, d.targets, Scope(lot_size=nlot), design=d).to_json()
    if nlot is not None and d.n >= nlot:
        rep["full_inspection"] = True
        rep["statements"].insert(0, f"The sample ({d.n}) is not smaller than the lot of {nlot}: "
                                    "measure every item.")
    if as_json:
        common.emit_json(rep)
    else:
        typer.echo(render_design(rep))


def _design_measured(gauge, base, nlot, as_json, **kw):
    """``design --scheme variables --measurement-sd``: the smallest plan holding both
    risks at the true fraction nonconforming through the gauge, and the guard-banded
    alternative (see :mod:`lotwise.families.measured`)."""
    from lotwise.analysis.assess import assess
    from lotwise.core.types import Scope, Targets
    from lotwise.families.measured import design_measured, gauge_for
    from lotwise.families.variables import VariablesPlan

    if gauge["measurement_sd"] == 0:  # checked, then today's design exactly
        gauge_for(VariablesPlan(n=2, k=1.0, sigma=kw["sigma"], limit=kw["limit"],
                                sigma_value=kw["sigma_value"]), 0.0,
                  sigma_is=gauge["sigma_is"], process_sd=gauge["process_sd"])
        return design_cmd(**{k: kw[k] for k in ("aql", "rql", "alpha", "beta", "sigma",
                                               "limit", "lower", "upper")},
                          sigma_value=None if kw["sigma_value"] is None
                          else repr(kw["sigma_value"]), max_n=kw["max_n"], lot=nlot,
                          model=None, per_unit=False, c=None, n=None, as_json=as_json)
    targets = Targets(aql=kw["aql"], rql=kw["rql"], alpha=kw["alpha"], beta=kw["beta"])
    try:
        plan, _d, guard = design_measured(gauge, **kw)
    except Infeasible as exc:
        common.infeasible(exc, as_json, base)
    rep = assess(plan, targets, Scope(lot_size=nlot)).to_json()
    rep["guard_banded"] = guard
    rep["statements"].append(
        f"Guard-banded alternative: keep the sample of the plan designed for a perfect gauge "
        f"(n = {guard['n']}) and raise k from {guard['k_error_free']:g} to {guard['k']:.4f}, "
        f"which holds beta ({_pct(guard['beta'])}) at the true RQL; alpha is then "
        f"{_pct(guard['alpha'])}" + ("" if guard["meets"] else " (above its target)") + ".")
    if as_json:
        common.emit_json(rep)
    else:
        from lotwise.analysis.report import render_assessment

        typer.echo(render_assessment(rep, "Variables plan holding both risks at the true "
                                          "fraction nonconforming, through the gauge"))


def _pct(x):
    from lotwise.core.quantities import format_pct

    return format_pct(x)


def render_design(rep: dict) -> str:
    from lotwise.core.quantities import format_level

    t = rep["targets"]
    lines = [f"Variables plan, {rep['method']} (smallest sample meeting both risks)"]
    if rep.get("full_inspection"):  # as a single plan says it when n reaches the lot
        lines.append(f"  100 % inspection: the plan measures {rep['n']} items, not fewer than "
                     f"the lot of {rep['lot_size']}; measure every item.")
    kr = rep["k_range"]
    plan = f"  plan      n = {rep['n']}, k = {rep['k']:g}"
    if rep.get("m") is not None:
        plan += f", M = {rep['m']:.5f} (maximum estimated fraction nonconforming)"
    lines.append(plan)
    lines.append(f"  notation  {rep['notation']}")
    lines.append(f"  targets   AQL {format_level(t['aql'])} at alpha {_pct(t['alpha'])}, "
                 f"RQL {format_level(t['rql'])} at beta {_pct(t['beta'])}")
    rows = [["exact plan", str(rep["n"]), f"{rep['k']:.4f}", probability(rep['pa_aql'], 5),
             _pct(rep["alpha"]), probability(rep['pa_rql'], 5), _pct(rep["beta"]),
             "yes" if rep["meets"] else "NO"]]
    ap = rep["approximation"]
    if rep["sigma"] == "unknown":
        rows.append(["Wallis", str(ap["n"]), f"{ap['k']:.4f}", probability(1 - ap['alpha'], 5),
                     _pct(ap["alpha"]), probability(ap['beta'], 5), _pct(ap["beta"]),
                     "yes" if ap["meets"] else "NO"])
    else:
        rows.append(["closed form", f"{ap['n']} ({ap['n_unrounded']:.2f})", f"{ap['k']:.4f}",
                     "", "", "", "", ""])
    if rep.get("attributes"):
        at = rep["attributes"]
        rows.append([f"attributes c = {at['c']}", str(at["n"]), "", "", "", "", "", "binomial"])
    lines.append("")
    lines.append(common.table(rows, ["", "n", "k", "Pa(AQL)", "alpha", "Pa(RQL)", "beta",
                                     "meets"]))
    lines.append(f"  k window at n = {rep['n']}: {kr['low']:.5f} .. {kr['high']:.5f} "
                 f"(slack {kr['slack']:.5f}; k = {rep['k']:g} is the {kr['rule']}, "
                 f"kept to {kr['decimals']} decimals)")
    if rep.get("saved"):
        s = rep["saved"]
        lines.append(f"  sample saved against attributes: {s['n']} units ({_pct(s['fraction'])})")
    lines.append("")
    for s in rep["statements"]:
        lines.append(f"  - {s}")
    return "\n".join(lines)


# --- check and oc of a given plan -------------------------------------------------

def _risks(plan, a, r):
    """Exact Pa at the AQL and RQL, the worst case for two-limit plans."""
    return float(plan.pa(a, envelope="lower")), float(plan.pa(r, envelope="upper"))


def oc_cmd(plan, *, max_p, points, at, aql, rql, csv, plot, force, as_json, style=None):
    """``lotwise oc --plan "variables: ..."``: the exact OC table (and plot)."""
    import numpy as np

    common.outputs(force, ("--csv", csv), ("--plot", plot, "figure"))
    a, r = common.levels(aql, rql, False, need=False)
    from lotwise.analysis.outputs import variables_oc

    out = variables_oc(plan, max_p=max_p, points=points, at=at, rql=r)
    header, rows = out["columns"], out["rows"]
    ps = np.array([row[0] for row in rows])
    band = "pa_lower" in header
    from lotwise.data.files import all_or_nothing, save_figure

    with all_or_nothing():  # the table and the figure, or neither
        if csv is not None:
            common.write_csv(csv, header, rows, force=force, style=style)
        if plot is not None:
            from lotwise.documents.plots.variables import variables_oc_figure

            fig = variables_oc_figure(plan, aql=a, rql=r,
                                      max_p=float(ps.max()) if len(ps) else None)
            save_figure(fig, plot, force=force, option="--plot")
    if as_json:
        common.emit_json(out)
    elif csv != "-":
        typer.echo(f"OC table for variables plan {plan.label} (model: {plan.exact_model})")
        if band:
            typer.echo("  pa = largest Pa over where the mean sits (consumer's worst case), "
                       "pa_lower = smallest (producer's)")
        if plan.exact_model in ("estimate-exact", "k-two-limit-exact"):
            typer.echo("  exact: quadrature over the law of s at the worst split of each level")
        shown = [[common.fmt_level(row[0], False)] + [probability(v, 5) for v in row[1:]]
                 for row in rows]
        typer.echo(common.table(shown, header))
        for path in (csv, plot):
            if path:
                typer.echo(f"  wrote {path}")


# --- judge -----------------------------------------------------------------------

def design_options(*, aql, rql, alpha, beta, sigma, sigma_value, limit, lower, upper, max_n,
                   lot, model, per_unit, c, n, as_json, gauge=None, **_others):
    """:func:`design_cmd` called with every design option."""
    return design_cmd(aql=aql, rql=rql, alpha=alpha, beta=beta, sigma=sigma,
                      sigma_value=sigma_value, limit=limit, lower=lower, upper=upper,
                      max_n=max_n, lot=lot, model=model, per_unit=per_unit, c=c, n=n,
                      as_json=as_json, gauge=gauge)
