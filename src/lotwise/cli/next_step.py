"""``lotwise next``: accept, reject or continue on the bench, for any plan with a
bench rule (a plan in notation or a plan file's characteristic)."""

from __future__ import annotations

from typing import Optional

import typer

from . import app, common
from lotwise.core.quantities import InputError, parse_count


def _fits_lot(p, scope):
    if scope.lot_size is not None and p.n_max > scope.lot_size:
        raise InputError(f"--plan ({p.label}) inspects up to {p.n_max} units, more than "
                         f"--lot-size ({scope.lot_size})")


#: Exit code of each decision on the bench (README, "Exit codes"): accept 0, reject 1
#: (as ``judge`` and ``check``), continue 3 (more units are needed before the plan decides).
EXIT = {"accept": 0, "reject": 1, "continue": 3}


# --- next -------------------------------------------------------------------

@app.command("next")
def next_unit(
    plan: Optional[str] = typer.Option(None, "--plan",
                                       help='Plan notation: "n1=50,c1=1,r1=4,n2=100,c2=3", '
                                            '"multiple: n=20/20/20; c=-/1/3; r=2/3/4", '
                                            '"sequential: h1=..,h2=..,s=..,truncate=.." '
                                            'or "n=80,c=2"; or a plan file\'s characteristic, '
                                            'plans/part.toml#M1.'),
    inspected: Optional[str] = typer.Option(None, "--inspected",
                                            help="Units inspected so far (all stages)."),
    found: Optional[str] = typer.Option(None, "--found",
                                        help="Nonconforming items (or nonconformities) found "
                                             "so far, all stages together."),
    per_unit: bool = common.PER_UNIT,
    history: Optional[str] = typer.Option(None, "--history", help="csp1/2/3 plans: results so far (ok, bad, - for a unit passed uninspected; comma, space or newline separated) or a file of them."),
    seed: Optional[str] = typer.Option(None, "--seed", help="csp1/2/3 plans: seed of the random choice of units to inspect."),
    clean_lots: Optional[str] = typer.Option(None, "--clean-lots", help="Chain plans: lots in a row just before this one whose samples held no nonconforming item."),
    systematic: bool = typer.Option(False, "--systematic", help="csp1/2/3 plans: inspect every m-th unit (f = 1/m) instead of a random choice."),
    plan_file: Optional[str] = typer.Option(None, "--plan-file", help="Take the plan from this plan file's [[table]] row for --lot-size (or its [switching])."),
    lot: Optional[str] = common.LOT,
    severity: str = typer.Option("normal", "--severity", help="With --plan-file: normal, tightened or reduced."),
    as_json: bool = common.JSON,
):
    """On the bench: accept, reject or continue, and how many more units at most.

    Exit 0 accept, 1 reject, 3 continue (inspect more units), 2 bad input.

    For a continuous sampling plan (csp1/2/3): the phase, the conforming units
    still needed to clear it and the next units to inspect, from --history.
    """
    from lotwise.documents.partplan import plan_from_reference
    from lotwise.families.base import parse_plan

    if plan_file is not None:  # the plan of a user's table (see cli.scheme)
        from .scheme import plan_from_file

        plan = plan_from_file(plan_file, plan, lot, severity)
    if plan is None:
        raise InputError("--plan is required, for example --plan \"n1=50,c1=1,n2=100,c2=3\"")
    flow = parse_plan(plan) if not plan.endswith(".toml") and "#" not in plan else None
    if flow is not None and flow.evaluation == "flow":  # continuous sampling: a history
        from .csp import next_cmd

        return next_cmd(flow, history=history, seed=seed, systematic=systematic,
                        as_json=as_json, unused={"--inspected": inspected, "--found": found,
                                                 "--per-unit": per_unit or None,
                                                 "--clean-lots": clean_lots})
    for opt, val in (("--history", history), ("--seed", seed), ("--systematic", systematic)):
        if val is not None and val is not False:
            raise InputError(f"{opt} ({val!r}) applies to continuous sampling plans (csp1, csp2, "
                             "csp3)")
    if inspected is None:
        raise InputError("--inspected is required (units inspected so far, for example 50)")
    if found is None:
        raise InputError("--found is required (nonconforming found so far, for example 2)")
    n = parse_count(inspected, "--inspected", minimum=0)
    d = parse_count(found, "--found", minimum=0)
    from lotwise.core.types import Scope

    ref = plan_from_reference(plan)
    per_unit = bool(per_unit or ref.per_unit)
    p = ref.plan.for_scope(Scope(per_unit=per_unit))  # c > n, sequential lines: per the scope
    state = {}
    if p.bench_state == "clean_lots":
        # (the decision says when it is missing)
        state["clean_lots"] = (None if clean_lots is None else
                               parse_count(clean_lots, "--clean-lots", minimum=0))
    elif clean_lots is not None:
        raise InputError(f"--clean-lots ({clean_lots}) applies to chain plans; a {p.scheme} plan "
                         "decides on this lot's counts alone")
    dec = p.decide(n, d, per_unit=per_unit, **state)
    if as_json:
        out = {"scheme": p.scheme, "plan": p.to_dict(), "notation": p.notation()}
        out.update(dec.as_dict())
        if "clean_lots" in state:
            out["clean_lots"] = state["clean_lots"]
        common.emit_json(out)
        raise typer.Exit(EXIT[dec.action])
    head = {"accept": "ACCEPT the lot", "reject": "REJECT the lot",
            "continue": "CONTINUE inspecting"}[dec.action]
    typer.echo(f"{head}  ({p.scheme} plan {p.label}; {n} inspected, {d} found)")
    typer.echo(f"  {dec.reason}.")
    if dec.action == "continue":
        typer.echo(f"  Next decision point after {dec.more_to_next} more unit(s) "
                   f"(n = {dec.next_decision_at}); at most {dec.more_at_most} more unit(s) "
                   "before the plan has decided.")
    raise typer.Exit(EXIT[dec.action])
