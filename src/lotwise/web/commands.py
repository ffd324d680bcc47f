"""The web API's commands: the JSON ``lotwise design|check|oc|compare|tradeoff
--json`` prints, built from the library the way those commands build it.

Each function takes a :class:`~lotwise.web.query.Query` and returns a
:class:`Reply`. The checks run in the command line's order with the command
line's parsers, so a bad value gets the command line's message (an
:class:`~lotwise.core.quantities.InputError`, answered 400); a request that
the command line answers with exit 1 and a JSON object (no plan meets the
targets, RQL not above the AQL) raises :class:`Refused` with that object
(answered 422). ``tests/test_web.py`` holds the API to the command line's
``--json`` for every plan family.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from lotwise.core.quantities import (InputError, Infeasible, parse_count, parse_level,
                                     parse_risk)

__all__ = ["Reply", "Refused", "design", "plan_from", "bounded", "lot_size_option",
           "levels_options", "risk_options", "scope_and_model", "csp_refuse", "csp_model",
           "error_rates", "with_rates", "judged"]

@dataclass(frozen=True, kw_only=True)
class Reply:
    """A JSON body and the command line's exit code for the same request."""

    body: dict
    exit_code: int = 0
    status: int = 200


@dataclass
class Refused(Exception):
    """The command line's exit 1 with a JSON object (``payload``)."""

    message: str
    payload: dict = field(default_factory=dict)


# --- shared option readers (the command line's common helpers) ------------------------

def lot_size_option(text):
    return None if text is None else parse_count(text, "--lot-size", minimum=1,
                                                 maximum=10**12)


def levels_options(aql, rql, per_unit, need=True):
    if need:
        if aql is None:
            raise InputError("--aql is required (for example --aql 1%)")
        if rql is None:
            raise InputError("--rql is required (for example --rql 8%)")
    a = parse_level(aql, "--aql", per_unit=per_unit) if aql is not None else None
    r = parse_level(rql, "--rql", per_unit=per_unit) if rql is not None else None
    return a, r


def risk_options(alpha, beta):
    return parse_risk(alpha, "--alpha"), parse_risk(beta, "--beta")


def scope_and_model(lot, per_unit, model):
    from lotwise.core.types import Scope

    scope = Scope(lot_size=lot_size_option(lot), per_unit=per_unit)
    return scope, scope.check_model(model)


def _infeasible(exc: Infeasible, base: dict):
    payload = dict(base)
    payload.update({"feasible": False, "reason": str(exc), "reachable": exc.reachable})
    raise Refused(f"no plan: {exc}", payload)


def plan_from(plan_text, n, c, *, required=True):
    """The plan of ``--plan`` or ``--n``/``--c``."""
    from lotwise.families.base import parse_plan
    from lotwise.families.single import SinglePlan

    if plan_text is not None:
        if n is not None or c is not None:
            raise InputError("--plan cannot be combined with --n/--c; give one or the other")
        p = parse_plan(plan_text)
    elif n is None and c is None and not required:
        return None
    elif n is None or c is None:
        raise InputError("give the plan as --n and --c (for example --n 80 --c 2) "
                         "or as --plan \"n=80,c=2\"")
    else:
        nn = parse_count(n, "--n", minimum=1)
        cc = parse_count(c, "--c", minimum=0)
        if cc > nn:
            raise InputError(f"--c ({cc}) must not be greater than --n ({nn})")
        p = SinglePlan(n=nn, c=cc)
    bounded(p, plan_text or f"n={n},c={c}")
    return p


def bounded(p, text) -> None:
    from lotwise.web.query import MAX_PLAN_SAMPLE

    if p.evaluation == "flow":  # a flow of units: no sample to bound
        return
    size = p.max_sample
    if isinstance(size, (int, float)) and size > MAX_PLAN_SAMPLE:
        raise InputError(f"--plan ({text}) inspects up to {size:,} units; the web API takes "
                         f"plans of at most {MAX_PLAN_SAMPLE:,}")


# --- design ------------------------------------------------------------------------

def design(q) -> Reply:
    """``lotwise design ... --json``."""
    o = {k: q.get(k) for k in ("aql", "rql", "lot_size", "model", "c", "n", "max_n",
                               "minimize", "process_average", "aoql", "sigma", "sigma_value",
                               "limit", "lower", "upper", "ratio", "truncate", "i")}
    o.update(alpha=q.get("alpha", "5%"), beta=q.get("beta", "10%"),
             scheme=q.get("scheme", "single"), aoq_formula=q.get("aoq_formula", "screened"),
             per_unit=q.flag("per_unit"), f=q.many("f"))
    from lotwise.families.base import designable

    rates = error_rates(q)
    scheme = o["scheme"]
    if scheme not in DESIGNERS:  # a family registered with a designer of its own
        names = list(DESIGNERS) + [f for f in designable() if f not in DESIGNERS]
        if scheme not in names:
            raise InputError(f"--scheme ({scheme}) must be one of: {', '.join(names)}")
    if rates is not None:  # the true risks held under inspection errors
        return _design_with_errors(o, rates)
    return DESIGNERS.get(scheme, _design_registered)(o)


def error_rates(q):
    """The rates of ``miss_rate``, ``false_alarm`` or ``study`` (None without), read as the
    command line reads ``--miss-rate``, ``--false-alarm`` and ``--study``."""
    from lotwise.core.inspection import read_rates

    return read_rates(q.get("miss_rate"), q.get("false_alarm"), q.get("study"))


def _design_with_errors(o, rates) -> Reply:
    """``lotwise design ... --miss-rate/--false-alarm/--study --json``."""
    from lotwise.analysis.assess import assess
    from lotwise.core.types import Targets
    from lotwise.families.misclassified import (DESIGN_TAKES, design_misclassified,
                                                option_value, refuse_options)

    scheme = o["scheme"]
    refuse_options(scheme, [("csp_" + k if k in ("f", "i") else k, o.get(k))
                            for k in _SCHEME_OPTIONS])
    a, r = levels_options(o["aql"], o["rql"], o["per_unit"])
    al, be = risk_options(o["alpha"], o["beta"])
    scope, mdl = scope_and_model(o["lot_size"], o["per_unit"], o["model"])
    options = {k: option_value(k, o[k]) for k in DESIGN_TAKES.get(scheme, ())
               if o.get(k) is not None}
    targets = Targets(aql=a, rql=r, alpha=al, beta=be)
    try:
        d = design_misclassified(scheme, rates, aql=a, rql=r, alpha=al, beta=be,
                                 lot_size=scope.lot_size, model=mdl, per_unit=o["per_unit"],
                                 **options)
    except Infeasible as exc:
        _infeasible(exc, {"scheme": scheme, "model": mdl, "lot_size": scope.lot_size,
                          "targets": targets.as_dict(), "inspection_error": rates.as_dict()})
    return Reply(body=with_rates(assess(d.plan, targets, scope, d.model, design=d).to_json(),
                                 rates))


def with_rates(rep: dict, rates) -> dict:
    """``inspection_error`` in a report whose plan was not wrapped (both rates zero)."""
    if rates is not None and "inspection_error" not in rep:
        rep["inspection_error"] = rates.as_dict()
    return rep


def judged(p, rates, scope):
    """``p`` (fitted to ``scope``) judged under ``rates`` (unchanged without)."""
    if rates is None:
        return p
    from lotwise.families.misclassified import wrap

    return wrap(p, rates).for_scope(scope)


#: Options a family without a designer function of its own here cannot take.
_SCHEME_OPTIONS = ("c", "n", "max_n", "minimize", "process_average", "aoql", "sigma",
                   "sigma_value", "limit", "lower", "upper", "ratio", "truncate", "f", "i")


def _design_registered(o) -> Reply:
    """A family registered with a designer and no function in :data:`DESIGNERS` (the
    command line's ``design.registered_cmd``): its designer with the targets only."""
    from lotwise.analysis.assess import assess
    from lotwise.core.types import Targets
    from lotwise.families.base import family

    for key in _SCHEME_OPTIONS:
        if o.get(key):
            raise InputError(f"--{key.replace('_', '-')} ({o[key]}) does not apply to "
                             f"--scheme {o['scheme']}")
    a, r = levels_options(o["aql"], o["rql"], o["per_unit"])
    al, be = risk_options(o["alpha"], o["beta"])
    scope, mdl = scope_and_model(o["lot_size"], o["per_unit"], o["model"])
    targets = Targets(aql=a, rql=r, alpha=al, beta=be)
    try:
        d = family(o["scheme"]).design(aql=a, rql=r, alpha=al, beta=be,
                                       lot_size=scope.lot_size, model=mdl,
                                       per_unit=o["per_unit"])
    except Infeasible as exc:
        _infeasible(exc, {"scheme": o["scheme"], "model": mdl, "lot_size": scope.lot_size,
                          "targets": targets.as_dict()})
    return Reply(body=assess(d.plan, targets, scope, d.model, design=d).to_json())


def _single_route(o) -> Reply:
    """``--scheme single``; ``--minimize ati`` is routed from here, as on the command
    line."""
    if o["f"] or o["i"] is not None:  # the continuous plans' options
        opt, val = ("--f", ", ".join(o["f"])) if o["f"] else ("--i", o["i"])
        raise InputError(f"{opt} ({val}) applies to --scheme csp1, csp2 or csp3")
    if o["minimize"] is not None:
        return _least_ati_route(o)
    for name, val in (("--process-average", o["process_average"]), ("--aoql", o["aoql"])):
        if val is not None:
            raise InputError(f"{name} ({val}) needs --minimize ati")
    for opt, val in (("--ratio", o["ratio"]), ("--truncate", o["truncate"])):
        if val is not None:
            raise InputError(f"{opt} ({val}) applies to --scheme double, sequential or "
                             "compare-all, not single")
    return _design_single(o)


def _design_single(o) -> Reply:
    from lotwise.analysis.assess import assess
    from lotwise.core.types import Targets
    from lotwise.families.single import design_single

    a, r = levels_options(o["aql"], o["rql"], o["per_unit"])
    al, be = risk_options(o["alpha"], o["beta"])
    scope, mdl = scope_and_model(o["lot_size"], o["per_unit"], o["model"])
    cc = parse_count(o["c"], "--c", minimum=0) if o["c"] is not None else None
    nn = parse_count(o["n"], "--n", minimum=1) if o["n"] is not None else None
    cap = parse_count(o["max_n"], "--max-n", minimum=1) if o["max_n"] is not None else None
    targets = Targets(aql=a, rql=r, alpha=al, beta=be)
    base = {"scheme": "single", "model": mdl, "lot_size": scope.lot_size,
            "targets": targets.as_dict()}
    try:
        d = design_single(aql=a, rql=r, alpha=al, beta=be, lot_size=scope.lot_size, model=mdl,
                          per_unit=o["per_unit"], n=nn, c=cc, max_n=cap)
    except Infeasible as exc:
        _infeasible(exc, base)
    return Reply(body=assess(d.plan, targets, scope, mdl, design=d).to_json())


def _design_csp(o) -> Reply:
    """The command line's ``design --scheme csp1|csp2|csp3``."""
    from lotwise.families.csp import MAX_I, design_csp, parse_f

    scheme = o["scheme"]
    unused = (("--aql", o["aql"]), ("--rql", o["rql"]), ("--lot-size", o["lot_size"]),
              ("--per-unit", o["per_unit"]), ("--c", o["c"]), ("--n", o["n"]),
              ("--max-n", o["max_n"]), ("--sigma", o["sigma"]),
              ("--sigma-value", o["sigma_value"]), ("--limit", o["limit"]),
              ("--lower", o["lower"]), ("--upper", o["upper"]), ("--ratio", o["ratio"]),
              ("--truncate", o["truncate"]))
    csp_refuse(scheme, dict(unused))
    csp_model(o["model"])
    if o["aoql"] is None:
        raise InputError(f"--aoql is required for --scheme {scheme} (for example --aoql 2%)")
    limit = parse_level(o["aoql"], "--aoql")
    fs = [parse_f(part, "--f") for item in o["f"] or [] for part in str(item).split(",")
          if part.strip()]
    ii = parse_count(o["i"], "--i", minimum=1, maximum=MAX_I) if o["i"] is not None else None
    pbar = parse_level(o["process_average"], "--process-average") \
        if o["process_average"] is not None else None
    if o["minimize"] is not None:
        if str(o["minimize"]).strip().lower() != "afi":
            raise InputError(f"--minimize ({o['minimize']}) must be afi for --scheme {scheme}")
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
    try:
        d = design_csp(scheme=scheme, aoql=limit, process_average=pbar, **kw)
    except Infeasible as exc:
        _infeasible(exc, {"scheme": scheme, "aoql_limit": limit})
    return Reply(body=d.as_dict())


def csp_refuse(scheme: str, given: dict) -> None:
    for opt, val in given.items():
        if val is not None and val is not False:
            shown = "" if val is True else f" ({val})"
            raise InputError(f"{opt}{shown} does not apply to --scheme {scheme} (a continuous "
                             "sampling plan for a flow of units, no lots)")


def csp_model(model) -> None:
    if model is not None and str(model).strip().lower() != "binomial":
        raise InputError(f"--model ({model}): a continuous sampling plan is judged unit by unit "
                         "with the binomial model; the hypergeometric and Poisson models do "
                         "not apply")


def _number(text, option: str):
    if text is None:
        return None
    try:
        v = float(str(text).strip())
    except ValueError:
        raise InputError(f"{option} ({text!r}) must be a number such as 25.4") from None
    if not math.isfinite(v):
        raise InputError(f"{option} ({text!r}) must be a finite number")
    return v


def _variables_options(o):
    """Check the variables options in the command line's order."""
    for opt, val in (("--model", o["model"]), ("--c", o["c"]), ("--n", o["n"])):
        if val is not None:
            raise InputError(f"{opt} ({val}) does not apply to --scheme variables")
    if o["per_unit"]:
        raise InputError("--per-unit does not apply to --scheme variables: a variables plan "
                         "judges a fraction nonconforming from measurements")
    if o["sigma"] is None:
        raise InputError("--sigma is required with --scheme variables: known or unknown")
    sigma = o["sigma"].strip().lower()
    if sigma not in ("known", "unknown"):
        raise InputError(f"--sigma ({sigma}) must be 'known' or 'unknown'")
    limit = (o["limit"] or "").strip().lower() or None
    lo, up = _number(o["lower"], "--lower"), _number(o["upper"], "--upper")
    if limit is None:
        limit = "both" if (lo is not None and up is not None) else (
            "lower" if lo is not None else "upper")
    if limit not in ("upper", "lower", "both"):
        raise InputError(f"--limit ({limit}) must be one of: upper, lower, both")
    sv = _number(o["sigma_value"], "--sigma-value")
    if sv is not None and not sv > 0:
        raise InputError(f"--sigma-value ({o['sigma_value']}) must be a positive number")
    if lo is not None and up is not None and not lo < up:
        raise InputError(f"--lower ({lo:g}) must be below --upper ({up:g})")
    return sigma, limit, lo, up, sv


def _design_variables(o) -> Reply:
    from lotwise.analysis.assess import assess
    from lotwise.core.types import Scope
    from lotwise.families.variables import design_variables

    sigma, limit, lo, up, sv = _variables_options(o)
    a, r = levels_options(o["aql"], o["rql"], False)
    al, be = risk_options(o["alpha"], o["beta"])
    cap = parse_count(o["max_n"], "--max-n", minimum=1) if o["max_n"] is not None else None
    nlot = lot_size_option(o["lot_size"])
    base = {"scheme": "variables", "sigma": sigma, "limit": limit,
            "targets": {"aql": a, "alpha": al, "rql": r, "beta": be}}
    try:
        d = design_variables(aql=a, rql=r, alpha=al, beta=be, sigma=sigma, limit=limit,
                             sigma_value=sv, lower=lo, upper=up, max_n=cap)
    except Infeasible as exc:
        _infeasible(exc, base)
    rep = assess(d.plan, d.targets, Scope(lot_size=nlot), design=d).to_json()
    if nlot is not None and d.n >= nlot:
        rep["full_inspection"] = True
        rep["statements"].insert(0, f"The sample ({d.n}) is not smaller than the lot of {nlot}: "
                                    "measure every item.")
    return Reply(body=rep)


def _ratio(text) -> float:
    if text is None:
        return 2.0
    try:
        v = float(str(text).strip())
    except ValueError:
        v = float("nan")
    if not 0.1 <= v <= 10:
        raise InputError(f"--ratio ({text}) must be a number from 0.1 to 10 (n2 / n1)")
    return v


def _minimize(text) -> str:
    from lotwise.families.double import MINIMIZE

    if text is None:
        return "asn-aql"
    t = str(text).strip().lower()
    if t not in MINIMIZE:
        raise InputError(f"--minimize ({text}) must be one of: {', '.join(MINIMIZE)}")
    return t


def _not_for(scheme, **given):
    for opt, val in given.items():
        if val is not None and val is not False:
            raise InputError(f"--{opt.replace('_', '-')} ({val}) does not apply to --scheme "
                             f"{scheme}")


def _truncate(text):
    return parse_count(text, "--truncate", minimum=1, maximum=10_000_000) \
        if text is not None else None


def _other_targets(o):
    from lotwise.core.types import Targets

    _not_for(o["scheme"], n=o["n"], c=o["c"])
    a, r = levels_options(o["aql"], o["rql"], o["per_unit"])
    al, be = risk_options(o["alpha"], o["beta"])
    scope, mdl = scope_and_model(o["lot_size"], o["per_unit"], o["model"])
    targets = Targets(aql=a, rql=r, alpha=al, beta=be)
    base = {"scheme": o["scheme"], "model": mdl, "lot_size": scope.lot_size,
            "targets": targets.as_dict()}
    kw = dict(aql=a, rql=r, alpha=al, beta=be, lot_size=scope.lot_size, model=mdl,
              per_unit=scope.per_unit)
    return targets, scope, mdl, base, kw


def _design_double(o) -> Reply:
    from lotwise.analysis.assess import assess
    from lotwise.families.double import design_double

    targets, scope, mdl, base, kw = _other_targets(o)
    _not_for(o["scheme"], truncate=o["truncate"])
    cap = parse_count(o["max_n"], "--max-n", minimum=2) if o["max_n"] is not None else None
    ratio, minimize = _ratio(o["ratio"]), _minimize(o["minimize"])
    base.update({"ratio": ratio, "minimize": minimize})
    try:
        d = design_double(**kw, ratio=ratio, minimize=minimize, max_n=cap)
    except Infeasible as exc:
        _infeasible(exc, base)
    return Reply(body=assess(d.plan, targets, scope, mdl, design=d,
                             design_options={"ratio": ratio, "minimize": minimize}).to_json())


def _design_sequential(o) -> Reply:
    from lotwise.analysis.assess import assess
    from lotwise.families.sequential import design_sequential

    targets, scope, mdl, base, kw = _other_targets(o)
    _not_for(o["scheme"], ratio=o["ratio"], minimize=o["minimize"], max_n=o["max_n"])
    t = _truncate(o["truncate"])
    try:
        d = design_sequential(**kw, truncate=t)
    except Infeasible as exc:
        _infeasible(exc, base)
    return Reply(body=assess(d.plan, targets, scope, mdl, design=d).to_json())


def _compare_all(o) -> Reply:
    """Single, double and sequential side by side (``compare-all``)."""
    from lotwise.analysis.tradeoff import asn_tradeoff

    targets, scope, mdl, _base, _kw = _other_targets(o)
    _not_for(o["scheme"], max_n=o["max_n"])
    t = _truncate(o["truncate"])
    ratio, minimize = _ratio(o["ratio"]), _minimize(o["minimize"])
    if t is not None and scope.lot_size is not None and t > scope.lot_size:
        raise InputError(f"--truncate ({t}) must not be greater than the lot size "
                         f"({scope.lot_size})")
    res = asn_tradeoff(targets, scope, model=mdl, ratio=ratio, minimize=minimize, truncate=t)
    return Reply(body=res.as_dict())


def _least_ati_route(o) -> Reply:
    """``--minimize ati`` (least inspection)."""
    if o["minimize"] not in ("ati",):
        raise InputError(f"--minimize ({o['minimize']}) must be one of: ati")
    for name, val in (("--c", o["c"]), ("--n", o["n"]), ("--max-n", o["max_n"])):
        if val is not None:
            raise InputError(f"{name} ({val}) cannot be combined with --minimize ati")
    return _least_ati(o)


def _chain_route(o) -> Reply:
    """``--scheme chain``."""
    if o["minimize"] is not None:
        raise InputError(f"--minimize ({o['minimize']}) does not apply to --scheme chain (it "
                         "designs the smallest sample)")
    for name, val in (("--process-average", o["process_average"]), ("--aoql", o["aoql"])):
        if val is not None:
            raise InputError(f"{name} ({val}) needs --minimize ati")
    for name, val in (("--c", o["c"]), ("--n", o["n"])):
        if val is not None:
            raise InputError(f"{name} ({val}) does not apply to --scheme chain (its plan is "
                             "n and i)")
    return _chain(o)


def _least_ati(o) -> Reply:
    from lotwise.analysis.least_ati import design_least_ati
    from lotwise.analysis.rectifying import check_formula
    from lotwise.core.types import Scope

    per_unit = o["per_unit"]
    if o["lot_size"] is None:
        raise InputError("--minimize ati needs --lot-size (the ATI is counted per lot)")
    if o["process_average"] is None:
        raise InputError("--minimize ati needs --process-average (for example "
                         "--process-average 0.5%)")
    N = parse_count(o["lot_size"], "--lot-size", minimum=2, maximum=10**12)
    pbar = parse_level(o["process_average"], "--process-average", per_unit=per_unit)
    if (o["rql"] is None) == (o["aoql"] is None):
        raise InputError("--minimize ati needs either --rql (with --beta) or --aoql")
    r = parse_level(o["rql"], "--rql", per_unit=per_unit) if o["rql"] is not None else None
    lim = parse_level(o["aoql"], "--aoql", per_unit=per_unit) if o["aoql"] is not None else None
    be = parse_risk(o["beta"], "--beta")
    al = parse_risk(o["alpha"], "--alpha")
    a = parse_level(o["aql"], "--aql", per_unit=per_unit) if o["aql"] is not None else None
    check_formula(o["aoq_formula"])
    mdl = Scope(lot_size=N, per_unit=per_unit).check_model(o["model"])
    base = {"scheme": "single", "minimize": "ati", "model": mdl, "lot_size": N,
            "process_average": pbar}
    try:
        d = design_least_ati(lot_size=N, process_average=pbar, rql=r, beta=be, aoql=lim,
                             model=mdl, per_unit=per_unit, formula=o["aoq_formula"], aql=a,
                             alpha=al)
    except Infeasible as exc:
        _infeasible(exc, base)
    return Reply(body=d.report())


def _chain(o) -> Reply:
    from lotwise.analysis.assess import assess
    from lotwise.core.types import Scope, Targets
    from lotwise.families.chain import design_chain

    a, r = levels_options(o["aql"], o["rql"], o["per_unit"])
    al, be = risk_options(o["alpha"], o["beta"])
    N = lot_size_option(o["lot_size"])
    mdl = Scope(lot_size=N, per_unit=o["per_unit"]).check_model(o["model"])
    cap = parse_count(o["max_n"], "--max-n", minimum=1) if o["max_n"] is not None else None
    base = {"scheme": "chain", "model": mdl, "lot_size": N,
            "targets": Targets(aql=a, rql=r, alpha=al, beta=be).as_dict()}
    try:
        d = design_chain(aql=a, rql=r, alpha=al, beta=be, lot_size=N, model=mdl,
                         per_unit=o["per_unit"], max_n=cap)
    except Infeasible as exc:
        _infeasible(exc, base)
    return Reply(body=assess(d.plan, d.targets, d.scope, d.model, design=d).to_json())


#: ``--scheme`` -> its designer, in the command line's order
#: (:data:`lotwise.cli.design.SCHEMES`).
DESIGNERS = {"single": _single_route, "double": _design_double,
             "sequential": _design_sequential, "compare-all": _compare_all,
             "chain": _chain_route, "variables": _design_variables, "csp1": _design_csp,
             "csp2": _design_csp, "csp3": _design_csp}
