"""Command-line glue for continuous sampling plans CSP-1, CSP-2 and CSP-3.

Called from ``design --scheme csp1|csp2|csp3``, ``check``, ``oc`` (in
:mod:`lotwise.cli.design`) and ``next`` (in :mod:`lotwise.cli.next_step`)
when the plan is a CSP plan; the library side is :mod:`lotwise.families.csp`.
"""

from __future__ import annotations

import os

import typer

from . import common
from lotwise.core.numbers import probability
from lotwise.core.quantities import (Infeasible, InputError, format_pct, parse_count,
                                     parse_level, parse_seed)


#: Options of ``design`` that do not apply to CSP plans, in the order
#: :func:`lotwise.cli.design.design` passes their values.
DESIGN_UNUSED = ("--aql", "--rql", "--lot-size", "--per-unit", "--c", "--n", "--max-n",
                 "--sigma", "--sigma-value", "--limit", "--lower", "--upper", "--ratio",
                 "--truncate", "--plot")


def _refuse(scheme: str, given: dict) -> None:
    """One line naming the first option that does not apply to a CSP plan."""
    for opt, val in given.items():
        if val is not None and val is not False:
            shown = "" if val is True else f" ({val})"
            raise InputError(f"{opt}{shown} does not apply to --scheme {scheme} (a continuous "
                             "sampling plan for a flow of units, no lots)")


def _model(model) -> None:
    if model is not None and str(model).strip().lower() != "binomial":
        raise InputError(f"--model ({model}): a continuous sampling plan is judged unit by unit "
                         "with the binomial model; the hypergeometric and Poisson models do "
                         "not apply")


def _fractions(values) -> list[float]:
    from lotwise.families.csp import parse_f

    out = []
    for item in values or []:
        for part in str(item).split(","):
            if part.strip():
                out.append(parse_f(part, "--f"))
    return out


def _pct(x) -> str:
    return "-" if x is None else format_pct(x, 4)


# --- design ----------------------------------------------------------------------

def design_cmd(*, scheme, aoql, f_values, i, minimize, process_average, model, unused,
               as_json):
    """``lotwise design --scheme csp1|csp2|csp3`` (``unused``: the values of
    :data:`DESIGN_UNUSED`)."""
    from lotwise.families.csp import MAX_I, design_csp

    _refuse(scheme, dict(zip(DESIGN_UNUSED, unused)))
    _model(model)
    if aoql is None:
        raise InputError(f"--aoql is required for --scheme {scheme} (for example --aoql 2%)")
    limit = parse_level(aoql, "--aoql")
    fs = _fractions(f_values)
    ii = parse_count(i, "--i", minimum=1, maximum=MAX_I) if i is not None else None
    pbar = parse_level(process_average, "--process-average") \
        if process_average is not None else None
    if minimize is not None:
        if str(minimize).strip().lower() != "afi":
            raise InputError(f"--minimize ({minimize}) must be afi for --scheme {scheme}")
        if ii is not None:
            raise InputError(f"--i ({ii}) cannot be combined with --minimize afi (it searches "
                             "i for each f)")
        kw = {"minimize": "afi", "fractions": fs or None}
    else:
        if len(fs) > 1:
            raise InputError(f"--f is given {len(fs)} times; a list of sampling fractions "
                             "applies with --minimize afi")
        if bool(fs) == (ii is not None):
            raise InputError(f"--scheme {scheme} needs --f (to find the smallest i) or --i "
                             "(to find the smallest f), not both")
        kw = {"f": fs[0]} if fs else {"i": ii}
    base = {"scheme": scheme, "aoql_limit": limit}
    try:
        d = design_csp(scheme=scheme, aoql=limit, process_average=pbar, **kw)
    except Infeasible as exc:
        common.infeasible(exc, as_json, base)
    if as_json:
        common.emit_json(d.as_dict())
        return
    typer.echo(_render_design(d))


def _render_design(d) -> str:
    from lotwise.families.csp import SAFETY, format_f

    plan = d.plan
    what = {"i": f"the smallest clearance number i for f = {format_f(plan.f)}",
            "f": f"the smallest sampling fraction for i = {plan.i}",
            "i and f": "the least average fraction inspected at the process average"}
    lines = [f"{plan.label} ({what[d.searched]} with an AOQL of at most "
             f"{_pct(d.limit)})",
             f"  AOQL {_pct(d.aoql)}, reached at {_pct(d.aoql_p)} nonconforming"]
    if d.process_average is not None:
        lines.append(f"  At the process average {_pct(d.process_average)}: "
                     f"{_pct(d.afi_process_average)} of units inspected in the long run")
    if d.candidates:
        rows = [[str(c["i"]), format_f(c["f"]), _pct(c["afi"])] for c in d.candidates]
        lines.append(common.table(rows, ["i", "f", "AFI"]))
    lines.append(f"  {plan.procedure()}")
    lines.append(f"  {SAFETY}")
    return "\n".join(lines)


# --- check and oc ---------------------------------------------------------------------

def check_cmd(plan, *, at, run_length, model, unused, as_json):
    """``lotwise check --plan "csp1: ..."``: long-run AFI, AOQ and pa at each
    ``--at`` level (default: where the AOQL occurs), the AOQL, and with
    ``--run-length M`` the short-run figures beside them."""
    _refuse(plan.scheme, unused)
    _model(model)
    from lotwise.analysis.outputs import csp_check

    out = csp_check(plan, at=at, run_length=run_length)
    if as_json:
        common.emit_json(out)
        return
    typer.echo(_render_check(plan, out))


def _render_check(plan, out) -> str:
    from lotwise.families.csp import SAFETY

    M = out.get("run_length")
    header = ["p", "AFI", "AOQ", "pa", "100 % run", "sampling run"]
    if plan.burst_units:
        header.append("burst run")
    if M:
        header += [f"AFI ({M} units)", f"AOQ ({M} units)"]
    rows = []
    for lv in out["levels"]:
        runs = lv["runs"]
        row = [_pct(lv["p"]), _pct(lv["afi"]), _pct(lv["aoq"]), probability(lv["pa"]),
               _units(runs["full"]), _units(runs["sampling"])]
        if plan.burst_units:
            row.append(_units(runs["burst"]))
        if M:
            row += [_pct(lv["run_afi"]), _pct(lv["run_aoq"])]
        rows.append(row)
    lines = [f"{plan.label}: AOQL {_pct(out['aoql'])} at "
             f"{_pct(out['aoql_p'])} nonconforming",
             common.table(rows, header),
             "  AFI: long-run fraction of units inspected; AOQ: fraction nonconforming going "
             "out (units found nonconforming are replaced); pa: fraction of units passed "
             "under sampling; runs: average units per spell of each phase.",
             f"  {plan.procedure()}", f"  {SAFETY}"]
    if M:
        lines.insert(3, f"  Short run: the first {M} units after a start in 100 % inspection "
                        "(exact expectations).")
    return "\n".join(lines)


def _units(x) -> str:
    return "never ends" if x is None else f"{x:,.1f}"


def oc_cmd(plan, *, max_p, points, at, csv, plot, model, unused, force, as_json, style=None):
    """``lotwise oc --plan "csp1: ..."``: columns ``p``, ``afi``, ``aoq``, ``pa``."""
    _refuse(plan.scheme, unused)
    _model(model)
    if plot is not None:
        raise InputError(f"--plot ({plot}) is not available for continuous sampling plans; "
                         "use --csv and a plotting tool of your choice")
    from lotwise.analysis.outputs import csp_grid, csp_oc

    out = csp_oc(plan, csp_grid(plan, max_p=max_p, points=points, at=at))
    header, rows, value, where = out["columns"], out["rows"], out["aoql"], out["aoql_p"]
    if csv is not None:
        common.write_csv(csv, header, rows, force=force, style=style)
    if as_json:
        common.emit_json(out)
    elif csv != "-":
        shown = [[_pct(r[0]), _pct(r[1]), _pct(r[2]), probability(r[3], 5)] for r in rows]
        typer.echo(f"AFI and AOQ table for {plan.label} (AOQL "
                   f"{_pct(value)} at {_pct(where)})")
        typer.echo(common.table(shown, header))
        if csv:
            typer.echo(f"  wrote {csv}")


# --- next ---------------------------------------------------------------------------------

def _history_text(history: str) -> str:
    if os.path.isfile(history):
        try:
            with open(history, encoding="utf-8-sig") as fh:
                return fh.read()
        except (OSError, UnicodeDecodeError) as exc:
            raise InputError(f"--history ({history}) could not be read: "
                             f"{type(exc).__name__}") from None
    return history


def next_cmd(plan, *, history, seed, systematic, unused, as_json):
    """``lotwise next --plan "csp1: ..." --history FILE_OR_LIST``."""
    from lotwise.families.csp import SAFETY, next_units, parse_history

    for opt, val in unused.items():
        if val is not None:
            raise InputError(f"{opt} ({val}) does not apply to a continuous sampling plan; "
                             "give the results so far with --history")
    if history is None:
        raise InputError("--history is required: the results so far as ok, bad or - "
                         "(passed without inspection), or a file of them; \"\" for a new run")
    marks = parse_history(_history_text(history))
    sd = parse_seed(seed, "--seed") if seed is not None else None
    res = next_units(plan, marks, seed=sd, systematic=systematic)
    if as_json:
        common.emit_json({"scheme": plan.scheme, "plan": plan.to_dict(),
                          "notation": plan.notation(), **res.as_dict()})
        return
    head = {"full": "INSPECT EVERY UNIT", "burst": "INSPECT EVERY UNIT (burst)",
            "sampling": "SAMPLE", "probation": "SAMPLE (on probation)"}[res.phase.value]
    typer.echo(f"{head}  ({plan.label}; {res.units} units so far, "
               f"{res.inspected} inspected, {res.found} nonconforming)")
    typer.echo(f"  {res.reason}.")
    nums = ", ".join(str(u) for u in res.next_units)
    how = "every unit now, then " if res.inspect_every_unit else ""
    typer.echo(f"  Next units to inspect if each is conforming: {nums} ({how}{res.selection}"
               + (f" choice, seed {res.seed}" if res.seed is not None else " choice") + ").")
    typer.echo(f"  {SAFETY}")


def design_options(*, scheme, aql, rql, lot, per_unit, c, n, max_n, sigma, sigma_value, limit,
                   lower, upper, ratio, truncate, plot, aoql, csp_f, csp_i, minimize,
                   process_average, model, as_json, **_others):
    """:func:`design_cmd` called with every design option."""
    given = (aql, rql, lot, per_unit, c, n, max_n, sigma, sigma_value, limit, lower, upper,
             ratio, truncate, plot)
    return design_cmd(scheme=scheme, aoql=aoql, f_values=csp_f, i=csp_i, minimize=minimize,
                      process_average=process_average, model=model, as_json=as_json,
                      unused=given)
