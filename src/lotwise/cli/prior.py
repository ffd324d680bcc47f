"""``check --prior`` and ``design --minimize cost``: plans judged against the
supplier's history (the options are declared here and added to ``design``
and ``check`` in :mod:`lotwise.cli.design`)."""

from __future__ import annotations

import math
import sys

import typer

from . import common
from lotwise.core.quantities import InputError

PRIOR = typer.Option(None, "--prior", help='Lot-to-lot prior of the fraction nonconforming, e.g. "beta: a=2,b=98".')
PRIOR_FROM = typer.Option(None, "--prior-from", help="Fit the prior to a lot log (CSV with part, sample_size, found; date orders the lots).")
PART = typer.Option(None, "--part", help="With --prior-from: the part whose lots are used.")
SUPPLIER = typer.Option(None, "--supplier", help="With --prior-from: only this supplier's lots.")
HALF_LIFE = typer.Option(None, "--half-life", help="With --prior-from: weight 0.5^(age/H) for a lot H lots older than the newest.")
COST_INSPECT = typer.Option(None, "--cost-inspect", help="--minimize cost: cost of inspecting one unit (S).")
COST_ESCAPE = typer.Option(None, "--cost-escape", help="--minimize cost: cost of one nonconforming item passed on in an accepted lot (A).")
SHEET = typer.Option(None, "--sheet", help="--minimize cost: write the plan's cost sheet section to PATH.md.")
DELIVERIES = typer.Option(None, "--deliveries-per-year", help="--minimize cost: lots a year, for the yearly cost on the sheet and in --json.")
COST_REJECT = typer.Option(None, "--cost-reject-lot", help="--minimize cost: cost of returning a rejected lot (R); default: its remainder is screened at S per unit.")

#: Options that only make sense with a prior, as ``parameter -> option``.
PRIOR_OPTIONS = {"prior": "--prior", "prior_from": "--prior-from", "part": "--part",
                 "supplier": "--supplier", "half_life": "--half-life"}
COST_OPTIONS = {"cost_inspect": "--cost-inspect", "cost_escape": "--cost-escape",
                "cost_reject_lot": "--cost-reject-lot", "sheet": "--sheet",
                "deliveries": "--deliveries-per-year"}


def given(opts: dict, names=None) -> list:
    """The options among ``names`` (default: prior and cost options) that were given."""
    names = names or {**PRIOR_OPTIONS, **COST_OPTIONS}
    return [opt for key, opt in names.items() if opts.get(key) is not None]


def _number(text, option: str, *, zero: bool = False) -> float:
    try:
        v = float(str(text).replace("_", ""))
    except ValueError:
        v = float("nan")
    if not math.isfinite(v) or v < 0 or (v == 0 and not zero):
        what = "zero or a positive number" if zero else "a positive number"
        raise InputError(f"{option} ({text}) must be {what}")
    return v


def load_prior(*, prior=None, prior_from=None, part=None, supplier=None, half_life=None,
               as_json: bool = False):
    """The prior the options ask for: ``(BetaPrior, info)`` or ``(None, None)``.

    ``info`` is the JSON ``prior`` object (the fit and the history when fitted).
    A history too short to carry a prior ends the command (exit 1).
    """
    from lotwise.analysis.prior import fit_prior, parse_prior

    if prior is not None and prior_from is not None:
        raise InputError("--prior and --prior-from cannot be combined; give one")
    if prior_from is None:
        for key in ("part", "supplier", "half_life"):
            val = {"part": part, "supplier": supplier, "half_life": half_life}[key]
            if val is not None:
                raise InputError(f"{PRIOR_OPTIONS[key]} ({val}) applies with --prior-from")
        if prior is None:
            return None, None
        p = parse_prior(prior, "--prior")
        return p, {**p.to_dict(), "fit": None, "history": None}
    if part is None:
        raise InputError(f"--prior-from ({prior_from}) needs --part (the part whose lots "
                         "are used)")
    h = _number(half_life, "--half-life") if half_life is not None else None
    from lotwise.data.history import read_history

    hist = read_history(prior_from, part=part, supplier=supplier, option="--prior-from")
    for b in hist.bad_rows:
        print(f"lotwise: {b.message(hist.source)}", file=sys.stderr)
    fit = fit_prior(hist.sample_sizes, hist.found, half_life=h)
    info = {"fit": fit.to_dict(), "history": hist.as_dict()}
    if not fit.usable:
        common.fail(f"--prior-from ({prior_from}): the history of part {part} is too short to "
                    f"carry a prior: {fit.reason}; state one with --prior \"beta: a=..,b=..\"",
                    1, {"feasible": False, "reason": "history too short for a prior",
                        "prior": info}, as_json)
    return fit.prior, {**fit.prior.to_dict(), **info}


def add_posterior(rep: dict, plan, prior, info, targets, scope, skip_lot=None) -> dict:
    """Add ``prior``, ``posterior`` and ``posterior_notes`` to a check report (and
    ``skip_lot.posterior`` for a skip-lot scheme over the plan)."""
    from lotwise.analysis.prior import posterior_risks

    if prior is None:
        return rep
    if scope.per_unit:
        raise InputError("--prior describes a fraction nonconforming; it does not apply with "
                         "--per-unit")
    post = posterior_risks(plan, prior, aql=targets.aql, rql=targets.rql,
                           lot_size=scope.lot_size)
    if skip_lot is not None and "skip_lot" in rep:
        from lotwise.families.skiplot import SkipLotPlan, parse_skip

        i, f = parse_skip(skip_lot) if isinstance(skip_lot, str) else skip_lot
        rep["skip_lot"]["posterior"] = posterior_risks(
            SkipLotPlan(reference=plan, i=i, f=f), prior, aql=targets.aql, rql=targets.rql,
            lot_size=scope.lot_size).to_json()
    rep["prior"] = info
    rep["posterior"] = post.to_json()
    rep["posterior_notes"] = {**post.notes(), "lots": "each lot's fraction nonconforming "
                              "drawn from the prior; its sample count is binomial given it"}
    return rep


def _pct(x) -> str:
    from lotwise.core.quantities import format_pct

    return "-" if x is None else format_pct(x)


def prior_line(info: dict) -> str:
    r = info["range_90"]
    src = "stated" if info["source"] == "given" else (
        f"fitted to {info['history']['lots']} lots of {info['history']['part']} in "
        f"{info['history']['source']}")
    return (f"  prior       Beta({info['a']:.4g}, {info['b']:.4g}) ({src}): mean "
            f"{_pct(info['mean'])}, 90 % of lots between {_pct(r['lower'])} and "
            f"{_pct(r['upper'])}")


def fit_lines(info: dict) -> list:
    fit = info.get("fit")
    if not fit:
        return []
    se = "" if fit["se_a"] is None else \
        f" (standard errors {fit['se_a']:.3g} and {fit['se_b']:.3g})"
    lines = [f"  fit         maximum likelihood of the beta-binomial{se}"]
    lot = fit["lot_to_lot"]
    lines.append(f"  lot to lot  {lot['test']}: {lot['statistic']:.3g}, p = {lot['p_value']:.3g}")
    g = fit["goodness_of_fit"]
    if g and g.get("p_value") is not None:
        lines.append(f"  fit check   {g['test']}: {g['statistic']:.3g} on {g['df']} df, "
                     f"p = {g['p_value']:.3g}")
    elif g:
        lines.append("  fit check   too few classes for the chi-square test "
                     f"({len(g['classes'])} class(es) of at least 5 expected lots)")
    return lines


def posterior_lines(post: dict, notes: dict, lot_size) -> list:
    if notes["expected_left_per"] == "lot":
        left = (f"nonconforming items left per accepted lot (among the units not inspected): "
                f"{post['expected_left']:.4g}")
    else:
        left = (f"fraction nonconforming of the units an accepted lot still holds: "
                f"{_pct(post['expected_left'])} (give --lot-size for items per lot)")
    parts = [f"lots rejected {_pct(post['p_reject'])}"]
    if post["consumer_risk"] is not None:
        parts.append(f"accepted lots worse than the RQL {_pct(post['consumer_risk'])}")
    if post["producer_risk"] is not None:
        parts.append(f"rejected lots at or better than the AQL {_pct(post['producer_risk'])}")
    return [f"  posterior   {'; '.join(parts)}", f"              {left}"]


def render(rep: dict) -> str:
    """Terminal lines for a check report's prior and posterior (empty without)."""
    if "posterior" not in rep:
        return ""
    lines = ["", "", "Against the supplier's history", prior_line(rep["prior"])]
    lines += fit_lines(rep["prior"])
    lines += posterior_lines(rep["posterior"], rep["posterior_notes"], rep.get("lot_size"))
    sk = rep.get("skip_lot", {}).get("posterior")
    if sk:
        lines.append(f"  skip-lot    lots rejected {_pct(sk['p_reject'])}; accepted lots worse "
                     f"than the RQL {_pct(sk['consumer_risk'])}")
    return "\n".join(lines)


#: design options that have no meaning for a least-cost plan.
_NOT_FOR_COST = {"c": "--c", "n": "--n", "max_n": "--max-n", "process_average":
                 "--process-average", "aoql": "--aoql", "sigma": "--sigma",
                 "sigma_value": "--sigma-value", "limit": "--limit", "lower": "--lower",
                 "upper": "--upper", "ratio": "--ratio", "truncate": "--truncate",
                 "plot": "--plot", "csp_i": "--i"}


def design_cost(**opts):
    """``lotwise design --minimize cost``: the least-cost single plan under a prior."""
    from lotwise.analysis.cost import Costs, least_cost_single
    from lotwise.core.quantities import Infeasible, parse_level
    from lotwise.core.types import Scope

    as_json = opts["as_json"]
    if opts.get("minimize") != "cost":
        raise InputError(f"{given(opts)[0]} ({opts[option_key(given(opts)[0])]}) applies to "
                         "check, or to design with --minimize cost")
    for key, opt in _NOT_FOR_COST.items():
        if opts.get(key):
            raise InputError(f"{opt} ({opts[key]}) does not apply to --minimize cost")
    if opts.get("per_unit"):
        raise InputError("--per-unit does not apply to --minimize cost (the prior is of a "
                         "fraction nonconforming)")
    if opts.get("lot") is None:
        raise InputError("--minimize cost needs --lot-size (the costs are counted per lot)")
    N = common.lot_size(opts["lot"])
    for key, opt in (("cost_inspect", "--cost-inspect"), ("cost_escape", "--cost-escape")):
        if opts.get(key) is None:
            raise InputError(f"--minimize cost needs {opt} (for example {opt} 1.5)")
    costs = Costs(inspect=_number(opts["cost_inspect"], "--cost-inspect"),
                  escape=_number(opts["cost_escape"], "--cost-escape"),
                  reject_lot=None if opts.get("cost_reject_lot") is None else
                  _number(opts["cost_reject_lot"], "--cost-reject-lot", zero=True))
    if opts.get("prior") is None and opts.get("prior_from") is None:
        raise InputError("--minimize cost needs a prior: --prior \"beta: a=2,b=98\" or "
                         "--prior-from lots.csv --part ID")
    aql, rql = opts.get("aql"), opts.get("rql")
    if aql is not None and rql is None:
        raise InputError(f"--aql ({aql}) needs --rql with --minimize cost (the two-point "
                         "plan is compared beside the least-cost one)")
    a = parse_level(aql, "--aql") if aql is not None else None
    r = parse_level(rql, "--rql") if rql is not None else None
    al, be = common.risks(opts.get("alpha", "5%"), opts.get("beta", "10%"))
    if a is not None and not r > a:
        raise InputError(f"--rql ({rql}) must be above --aql ({aql})")
    model = Scope(lot_size=N).check_model(opts.get("model"))
    _check_sheet(opts.get("sheet"), force=opts.get("force", False))
    prior, info = load_prior(prior=opts.get("prior"), prior_from=opts.get("prior_from"),
                             part=opts.get("part"), supplier=opts.get("supplier"),
                             half_life=opts.get("half_life"), as_json=as_json)
    try:
        d = least_cost_single(lot_size=N, prior=prior, costs=costs, rql=r, beta=be,
                              model=model, aql=a)
    except Infeasible as exc:
        common.infeasible(exc, as_json, {"scheme": "single", "lot_size": N})
    out = d.to_json()
    out["prior_fit"] = {k: info[k] for k in ("fit", "history")} if info.get("fit") else None
    out["two_point"] = _two_point(d, a, r, al, be, model) if a is not None else None
    out["statements"] = _cost_statements(d, out["two_point"])
    year = _number(opts["deliveries"], "--deliveries-per-year") \
        if opts.get("deliveries") is not None else None
    out["deliveries_per_year"] = year
    out["expected_cost_per_year"] = None if year is None else d.expected_cost * year
    if opts.get("sheet") is not None:
        _write_sheet(opts["sheet"], out, info, year, force=opts.get("force", False))
        out["sheet"] = opts["sheet"]
    if as_json:
        common.emit_json(out)
    else:
        typer.echo(_render_cost(d, out, info))


def _check_sheet(path, *, force):
    """``--sheet`` names a Markdown file that may be written (checked before the work)."""
    from pathlib import Path

    if path is None:
        return
    if Path(str(path)).suffix.lower() != ".md":
        raise InputError(f"--sheet ({path}) must be a file name ending in .md")
    common.outputs(force, ("--sheet", path))


def _write_sheet(path, out, info, year, *, force):
    from lotwise.data.files import write_text
    from lotwise.documents.sheets.cost import cost_section

    _check_sheet(path, force=force)
    write_text(path, cost_section(out, info, deliveries_per_year=year), force=force,
               option="--sheet")


def option_key(option: str) -> str:
    return {**{v: k for k, v in PRIOR_OPTIONS.items()},
            **{v: k for k, v in COST_OPTIONS.items()}}[option]


def _two_point(d, aql, rql, alpha, beta, model) -> dict:
    """The smallest plan meeting both risks, its expected cost and posterior risks."""
    from lotwise.analysis.cost import expected_cost
    from lotwise.analysis.prior import single_posterior
    from lotwise.core.quantities import Infeasible
    from lotwise.families.single import design_single

    try:
        s = design_single(aql=aql, rql=rql, alpha=alpha, beta=beta, lot_size=d.lot_size,
                          model=model)
    except Infeasible as exc:
        return {"feasible": False, "reason": str(exc)}
    post = single_posterior(s.n, s.c, d.prior, aql=aql, rql=rql, lot_size=d.lot_size)
    return {"feasible": True, "n": s.n, "c": s.c,
            "expected_cost": expected_cost(s.n, s.c, lot_size=d.lot_size, prior=d.prior,
                                           costs=d.costs),
            "posterior": post.to_json()}


def _money(x: float) -> str:
    return f"{x:,.2f}"


def _cost_statements(d, two) -> list:
    from lotwise.analysis.assess import SAFETY

    out = []
    if d.no_inspection:
        out.append("No inspection costs least: at this prior an escape costs less on average "
                   "than finding it.")
    elif d.full_inspection:
        out.append("100 % inspection costs least: at this prior sampling cannot pay for itself.")
    else:
        save = min(d.expected_cost_none, d.expected_cost_all) - d.expected_cost
        out.append(f"Sampling n = {d.n}, accepting on c = {d.c}, saves {_money(save)} per lot "
                   "against the cheaper of no inspection and 100 % inspection.")
    if d.costs.reject_lot is not None and d.costs.reject_lot < d.expected_cost:
        out.append(f"Returning every lot unseen ({_money(d.costs.reject_lot)} per lot) would "
                   "cost less than any plan: the prior calls for another source.")
    if two and two.get("feasible"):
        out.append(f"The two-point plan n = {two['n']}, c = {two['c']} would cost "
                   f"{_money(two['expected_cost'])} per lot under the same prior.")
    out.append("The costs hold only as far as the prior describes the lots to come; refit it "
               "as records accumulate.")
    return out + [SAFETY]


def _render_cost(d, out: dict, info: dict) -> str:
    c = d.costs
    rej = "returned at " + _money(c.reject_lot) + " per lot" if c.reject_lot is not None else \
        f"screened (the remainder at {_money(c.inspect)} per unit)"
    lines = [f"Least-cost single plan (Hald's cost model), lots of {d.lot_size:,}",
             prior_line(info), *fit_lines(info),
             f"  costs       {_money(c.inspect)} per unit inspected; {_money(c.escape)} per "
             f"nonconforming item passed on; rejected lots {rej}"]
    if d.no_inspection:
        plan = "no inspection (n = 0): accept every lot"
    elif d.full_inspection:
        plan = f"100 % inspection (n = {d.n})"
    else:
        plan = f"n = {d.n}, accept on c = {d.c}, reject on {d.c + 1}"
    lines.append(f"  plan        {plan}: expected cost {_money(d.expected_cost)} per lot")
    if d.rql is not None:
        lines.append(f"              holding Pa(RQL {_pct(d.rql)}) <= {_pct(d.beta)} "
                     f"({d.model})")
    lines.append(f"  compare     no inspection {_money(d.expected_cost_none)}; 100 % inspection "
                 f"{_money(d.expected_cost_all)}; break-even p = S/A = {_pct(d.breakeven_p)}")
    lines += posterior_lines(out["posterior"], d.posterior.notes(), d.lot_size)
    if out["expected_cost_per_year"] is not None:
        lines.append(f"  per year    {_money(out['expected_cost_per_year'])} for "
                     f"{out['deliveries_per_year']:g} lots")
    lines += [""] + [f"  - {s}" for s in out["statements"]]
    if out.get("sheet"):
        lines.append(f"  wrote {out['sheet']}")
    return "\n".join(lines)
