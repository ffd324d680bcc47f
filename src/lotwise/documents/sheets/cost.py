"""The sheet section of a least-cost plan (``design --minimize cost --sheet FILE.md``).

Built from the same JSON object ``--json`` prints, so the sheet shows the
numbers the command line reports: the costs, the prior and where it came
from, the expected cost per lot (and per year, with the deliveries), the
comparison with no inspection, 100 % inspection and the two-point plan, and
the plan's posterior risks.
"""

from __future__ import annotations

from lotwise.core.quantities import format_pct

__all__ = ["cost_section"]


def _money(x: float) -> str:
    return f"{x:,.2f}"


def _pct(x) -> str:
    return "-" if x is None else format_pct(x)


def _prior_source(prior: dict) -> str:
    hist = prior.get("history")
    if not hist:
        return "stated by the user (`--prior`)"
    who = f", supplier {hist['supplier']}" if hist.get("supplier") else ""
    span = f", {hist['first_date']} to {hist['last_date']}" if hist.get("first_date") else ""
    fit = prior["fit"]
    hl = f", half-life {fit['half_life']:g} lots" if fit.get("half_life") else ""
    return (f"fitted by maximum likelihood to {hist['lots']} lots of part {hist['part']}{who} "
            f"in {hist['source']}{span}{hl}")


def cost_section(out: dict, prior: dict, *, deliveries_per_year: float | None = None) -> str:
    """Markdown for a cost design.

    Parameters
    ----------
    out : dict
        The ``design --minimize cost --json`` object.
    prior : dict
        The prior's description (``a``, ``b``, ``mean``, ``range_90`` and, when
        fitted, ``fit`` and ``history``).
    deliveries_per_year : float, optional
        Lots a year, for the yearly cost.
    """
    c, post = out["costs"], out["posterior"]
    rej = (f"returned at {_money(c['reject_lot'])} per lot" if c["reject_lot"] is not None
           else f"remainder screened at {_money(c['inspect'])} per unit")
    if out["no_inspection"]:
        plan = "no inspection: every lot accepted unseen"
    elif out["full_inspection"]:
        plan = f"100 % inspection ({out['n']} units)"
    else:
        plan = f"inspect n = {out['n']}, accept on c = {out['c']}, reject on {out['c'] + 1}"
    rows = [("this plan", out["expected_cost"]), ("no inspection", out["expected_cost_none"]),
            ("100 % inspection", out["expected_cost_all"])]
    two = out.get("two_point")
    if two and two.get("feasible"):
        rows.append((f"two-point plan n = {two['n']}, c = {two['c']}", two["expected_cost"]))
    year = deliveries_per_year
    head = "| plan | per lot |" + (" per year |" if year else "")
    table = [head, "|---|---|" + ("---|" if year else "")]
    table += [f"| {name} | {_money(v)} |" + (f" {_money(v * year)} |" if year else "")
              for name, v in rows]
    r = prior["range_90"]
    lines = [
        "## Least-cost plan (Hald's cost model)", "",
        f"**Plan:** {plan}, lots of {out['lot_size']:,}.", "",
        f"- **Costs:** {_money(c['inspect'])} per unit inspected; {_money(c['escape'])} per "
        f"nonconforming item passed on in an accepted lot; rejected lots {rej}.",
        f"- **Prior:** Beta({prior['a']:.4g}, {prior['b']:.4g}), mean {_pct(prior['mean'])}, "
        f"90 % of lots between {_pct(r['lower'])} and {_pct(r['upper'])}; "
        f"{_prior_source(prior)}.",
        f"- **Break-even:** Deming's S/A = {_pct(out['breakeven_p'])}.",
    ]
    if out.get("constraint"):
        k = out["constraint"]
        lines.append(f"- **Also holds:** Pa(RQL {_pct(k['rql'])}) <= {_pct(k['beta'])} "
                     f"({k['model']}).")
    lines += ["", "Expected cost" + (f" ({year:g} lots a year)" if year else "") + ":", "",
              *table, "",
              "Posterior risks (lots drawn from the prior):", "",
              f"- lots rejected: {_pct(post['p_reject'])}",
              f"- accepted lots worse than the RQL: {_pct(post['consumer_risk'])}",
              f"- rejected lots at or better than the AQL: {_pct(post['producer_risk'])}",
              f"- nonconforming items left per accepted lot: {post['expected_left']:.4g}", "",
              "The costs hold only as far as the prior describes the lots to come. Sampling "
              "cannot guarantee a lot free of nonconforming items; critical characteristics "
              "need 100 % inspection.", ""]
    return "\n".join(lines)
