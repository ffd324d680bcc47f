"""A part's plan: one sample, one acceptance number per characteristic.

Characteristics listed in one plan file are judged on the same sample, each
with its own acceptance number and its own risks. :func:`resolve` turns a
:class:`~lotwise.documents.planfile.PlanRequest` into a :class:`PartPlan`:

* a characteristic with a ``plan`` keeps that plan, one with a ``scheme``
  other than single gets its family's design (through the family registry);
  both are judged on their own plan, not on the common sample;
* a file that fixes ``sampling.n`` and every ``c`` is audited as it stands;
* otherwise each single characteristic is designed on its own (smallest ``n``
  meeting its two risks, honouring a fixed ``c``); the common sample is the
  largest of those ``n``, and every characteristic then gets the smallest
  ``c`` meeting its producer's risk at the common ``n``. If a characteristic's
  consumer's risk is no longer met there (possible for discrete plans, if
  rare), ``n`` is raised one unit at a time until all are met, up to the cap.

Examples
--------
A casting carries a major and a minor characteristic on one sample:

>>> from lotwise.documents.planfile import loads
>>> req = loads('''
... [part]
... id = "K-9"
... [[characteristic]]
... id = "M1"
... class = "major"
... aql = "1%"
... rql = "6%"
... [[characteristic]]
... id = "m1"
... class = "minor"
... aql = "2.5%"
... rql = "15%"
... ''')
>>> pp = resolve(req)
>>> pp.n, [r["c"] for r in pp.reports]
(110, [3, 6])
"""

from __future__ import annotations

from dataclasses import dataclass, field

from lotwise.families.single import design_single
from lotwise.families.single import SinglePlan
from lotwise.core.quantities import Infeasible, InputError, format_pct
from lotwise.analysis.assess import assess

__all__ = ["PartPlan", "CharacteristicInfeasible", "CRITICAL_NOTE", "resolve", "PlanReference",
           "plan_from_reference", "pick_seed", "own_note", "inspection_cost"]


@dataclass(frozen=True, kw_only=True)
class PartPlan:
    """A resolved plan file.

    Attributes
    ----------
    request : PlanRequest
    n : int or None
        The common attributes sample size (None when no plan could be found);
        for a file whose characteristics all have plans of their own, the
        largest of their sample sizes.
    reports : list of dict
        One :func:`~lotwise.analysis.assess.assess` per characteristic, in file
        order, each with ``"characteristic"`` (id, description, class) added.
    designed : bool
        False when the file fixed the plan (an audit).
    problem : str
        Why no plan could be found, if so (for a part where only some
        characteristics have no plan: one sentence per such characteristic).
    plans : list
        The plan object of each characteristic that has one, in file order.
    failed : list of dict
        The characteristics no plan can meet, in file order: ``characteristic``
        (id, description, class), ``targets`` and ``reason``. The others are
        still designed, and the part is flagged (``meets`` is False).
    full : list of dict
        The characteristics inspected on every item (``inspection = "100%"``):
        ``characteristic`` (id, description, class). They carry no sample.
    """

    request: object
    n: int | None
    reports: list
    designed: bool
    problem: str = ""
    plans: list = field(default_factory=list)
    failed: list = field(default_factory=list)
    full: list = field(default_factory=list)

    @property
    def meets(self) -> bool:
        planned = self.n is not None or (self.full and not self.reports)  # 100 % only
        return bool(planned) and not self.failed and all(r["meets"] for r in self.reports)

    @property
    def model(self) -> str:
        return self.reports[0]["model"] if self.reports else ""


#: The designers' messages name command-line options; a plan file has keys.
_FILE_KEYS = (("--max-n", "sampling.max_n"), ("--n", "sampling.n"), ("--c", "c"),
              ("--lot-size", "lot.size"), ("--model", "sampling.model"))


def file_words(message: str) -> str:
    """``message`` with the command-line options it names replaced by the plan
    file's keys (``--max-n`` -> ``sampling.max_n``).

    >>> file_words("no plan with n <= 20 (--max-n) meets both risks")
    'no plan with n <= 20 (sampling.max_n) meets both risks'
    """
    import re

    for option, key in _FILE_KEYS:
        message = re.sub(rf"(?<![\w-]){re.escape(option)}(?![\w-])", key, message)
    return message


def _with_char(rep: dict, ch) -> dict:
    rep = dict(rep)
    rep["characteristic"] = {"id": ch.id, "description": ch.description, "class": ch.klass}
    return rep


def _common_sample(req, chars, floor: int = 0) -> tuple[int, list]:
    """The common attributes sample for ``chars`` and each one's single plan.

    ``floor``: the sample is at least this large (the largest plan of its own
    among the part's other characteristics, so that every unit sampled serves
    every characteristic). Raises :class:`Infeasible` when no common sample
    meets every risk.
    """
    scope, model = req.scope, req.model
    if req.fixed:
        return req.n, [judged(SinglePlan(n=req.n, c=ch.c), req, ch) for ch in chars]
    cap = req.max_n
    if scope.lot_size is not None:
        cap = scope.lot_size if cap is None else min(cap, scope.lot_size)
    if req.n is not None:
        n = req.n
    else:
        n = max(_own_size(req, ch, cap) for ch in chars)
        n = max(n, min(floor, cap) if cap is not None else floor)
    while True:
        plans, short = [], None
        for ch in chars:
            t = ch.targets
            if ch.c is not None:
                plan = judged(SinglePlan(n=n, c=ch.c), req, ch)
                risk = assess(plan, t, scope, model, verdict=False, rectifying=False).to_json()
                mr = risk["models"][risk["model"]]
                if not mr["meets_alpha"]:
                    # A larger sample only lowers Pa at the AQL further.
                    raise CharacteristicInfeasible(ch.id,
                        f"at the common sample n = {n}, characteristic {ch.id} with its fixed "
                        f"c = {ch.c} carries alpha {format_pct(mr['alpha'])} (target "
                        f"{format_pct(t.alpha)}); relax its AQL or inspect it on a sample "
                        "of its own")
                if not mr["meets_beta"]:
                    short = ch
                    break
            else:
                try:
                    plan = _design_single(req, t, n=n).plan
                except Infeasible:
                    short = ch
                    break
            plans.append(plan)
        if short is None:
            return n, plans
        if req.n is not None or (cap is not None and n >= cap):
            raise CharacteristicInfeasible(short.id, f"no common sample size up to {n} meets "
                                           f"the risks of characteristic {short.id}")
        n += 1


class CharacteristicInfeasible(Infeasible):
    """No plan meets one characteristic's targets (``cid``); the part's other
    characteristics may still be designed without it."""

    def __init__(self, cid: str, message: str, reachable=None):
        super().__init__(message, reachable)
        self.cid = cid


def _own_size(req, ch, cap) -> int:
    """The sample size of ``ch``'s own single design (the common sample is at
    least the largest of these)."""
    try:
        return _design_single(req, ch.targets, c=ch.c, max_n=cap).plan.max_sample
    except Infeasible as exc:
        raise CharacteristicInfeasible(ch.id, str(exc), exc.reachable) from None


def _design_single(req, t, **options):
    """The single design for targets ``t`` (holding them at the true quality when the
    file states inspection errors)."""
    kw = dict(aql=t.aql, rql=t.rql, alpha=t.alpha, beta=t.beta, lot_size=req.scope.lot_size,
              model=req.model, per_unit=req.scope.per_unit, **options)
    if req.inspection is None:
        return design_single(**kw)
    from lotwise.families.misclassified import design_misclassified

    return design_misclassified("single", req.inspection, **kw)


def judged(plan, req, ch):
    """``plan`` as the inspection of the file judges it: wrapped with the rates of
    ``[inspection]`` (unchanged without), refused for plans they do not apply to."""
    rates = getattr(req, "inspection", None)
    if rates is None:
        return plan
    from lotwise.families.misclassified import wrap

    if plan.error_free is not None:  # judged with its errors already
        return plan
    if not plan.attribute_plan or plan.evaluation != "lot":
        raise InputError(f"{req.path}: [inspection] (miss_rate, false_alarm, study) applies to "
                         f"attribute plans judged lot by lot; characteristic {ch.id} has a "
                         f"{plan.scheme} plan (state a gauge's error for variables plans with "
                         "--measurement-sd on the command line)")
    try:
        return wrap(plan, rates).for_scope(req.scope)
    except InputError as exc:
        raise InputError(f"{req.path}: [inspection] with characteristic {ch.id}: {exc}") from None


def largest_sample(plan) -> int | None:
    """Most units a plan may inspect in one lot (its sample size, when fixed)."""
    return int(plan.max_sample)


def own_report(plan, ch, scope, model=None, design=None) -> dict:
    """Report for a characteristic judged on a plan of its own (any plan type):
    the keys of :func:`~lotwise.analysis.assess.assess` that apply."""
    from lotwise.analysis.compare import row_for

    row = row_for(plan.label, plan, ch.targets, scope, model)
    t = ch.targets
    mr = {"pa_aql": row["pa_aql"], "pa_rql": row["pa_rql"], "alpha": row["alpha"],
          "beta": row["beta"], "meets_alpha": bool(row["alpha"] <= t.alpha + 1e-12),
          "meets_beta": bool(row["beta"] <= t.beta + 1e-12)}
    mr["meets"] = mr["meets_alpha"] and mr["meets_beta"]
    rep = {"scheme": plan.scheme, "plan": plan.to_dict(), "label": plan.label,
           "short_label": plan.short_label,
           "notation": plan.notation(), "n": largest_sample(plan), "model": row["model"],
           "lot_size": scope.lot_size, "per_unit": scope.per_unit, "targets": row["targets"],
           "models": {row["model"]: mr}, "meets": mr["meets"],
           "plan_quality": row["plan_quality"], "own_sample": True,
           "varying_sample": bool(plan.varying_sample),
           "designed": design is not None, "note": own_note(plan, design is not None)}
    for key in ("asn", "plan_quality_counts", "plan_quality_pa"):
        if key in row:
            rep[key] = row[key]
    if design is not None:  # what the design adds that a sheet shows
        d = design.report_extra()
        for key in ("attributes", "approximation", "k_range"):
            if key in d:
                rep[key] = d[key]
    return _with_char(rep, ch)


def own_note(plan, designed: bool) -> str:
    """What the sheet and ``check`` say of a characteristic on a plan of its own."""
    how = "designed" if designed else "given"
    return (f"own {plan.scheme} plan ({how}), not the common sample: judged on its own "
            f"plan {plan.label}")


def _own_plan(ch, req):
    """The given plan of a characteristic, or its design by the family its
    ``scheme`` names (through the registry)."""
    if ch.plan is not None:
        return judged(ch.plan, req, ch), None
    from lotwise.families.base import family

    fam = family(ch.scheme)
    opts = dict(ch.options)
    if req.max_n is not None and "max_n" in fam.design_options:
        opts.setdefault("max_n", req.max_n)
    t = ch.targets
    design = fam.design
    if req.inspection is not None:
        from functools import partial

        from lotwise.families.misclassified import design_misclassified

        cls = fam.plan_class
        if not cls.attribute_plan or cls.evaluation != "lot":
            raise InputError(f"{req.path}: [inspection] (miss_rate, false_alarm, study) "
                             f"applies to attribute plans judged lot by lot; characteristic "
                             f"{ch.id} designs a {ch.scheme} plan")
        design = partial(design_misclassified, ch.scheme, req.inspection)
    try:
        d = design(aql=t.aql, rql=t.rql, alpha=t.alpha, beta=t.beta,
                   lot_size=req.scope.lot_size, model=req.model,
                   per_unit=req.scope.per_unit, **opts)
    except InputError as exc:
        where = f"characteristic[{req.characteristics.index(ch) + 1}]."
        msg = str(exc)
        for key in fam.design_options:
            msg = msg.replace(f"--{key.replace('_', '-')} ", f"{where}{key} ")
        raise InputError(f"{req.path}: {where}scheme ({ch.scheme}): {msg}") from None
    except Infeasible as exc:
        raise CharacteristicInfeasible(ch.id, f"{ch.scheme} design: {exc}",
                                       exc.reachable) from None
    return d.plan, d


def resolve(req, *, verdict: bool = True) -> PartPlan:
    """Design (or audit) the plan a plan file asks for."""
    scope, model = req.scope, req.model
    full = [{"characteristic": {"id": ch.id, "description": ch.description,
                                "class": ch.klass}, "inspection": "100%"}
            for ch in req.characteristics if ch.full_inspection]
    chars = req.sampled
    if not chars:  # a switching scheme or a plan table only (see documents.schemefile),
        # or every characteristic inspected on every item
        sw = getattr(req, "switching", None)
        return PartPlan(request=req, n=None if sw is None else sw.normal.max_sample,
                        reports=[], designed=False, full=full)
    failed = {}  # id -> reason: characteristics no plan can meet; the others go on
    own = {}
    for ch in chars:
        if ch.own_sample:
            try:
                own[ch.id] = _own_plan(ch, req)
            except CharacteristicInfeasible as exc:
                failed[ch.id] = str(exc)
    floor = max((largest_sample(p) or 0 for p, _ in own.values()), default=0)
    common = [ch for ch in chars if not ch.own_sample]
    n, common_plans = None, []
    while common:
        try:
            n, common_plans = _common_sample(req, common, floor)
            break
        except CharacteristicInfeasible as exc:  # design the others without it
            failed[exc.cid] = str(exc)
            common = [ch for ch in common if ch.id != exc.cid]
        except Infeasible as exc:  # (no single characteristic to blame: all of them)
            failed.update({ch.id: str(exc) for ch in common})
            common = []
    failures = [{"characteristic": {"id": ch.id, "description": ch.description,
                                    "class": ch.klass},
                 "targets": ch.targets.as_dict(),
                 "reason": file_words(failed[ch.id])} for ch in chars if ch.id in failed]
    problem = "; ".join(f"characteristic {f['characteristic']['id']}: {f['reason']}"
                        for f in failures)
    if len(failed) == len(chars):
        return PartPlan(request=req, n=None, reports=[], designed=not req.fixed,
                        problem=problem, failed=failures, full=full)
    by_id = dict(zip((ch.id for ch in common), common_plans))
    reps, plans = [], []
    for ch in chars:
        if ch.id in failed:
            continue
        if ch.id in by_id:
            p = by_id[ch.id]
            rep = _with_char(assess(p, ch.targets, scope, model, verdict=verdict, rectifying=False).to_json(), ch)
            rep["full_inspection"] = bool(scope.lot_size and p.max_sample >= scope.lot_size)
            _add_rectifying([rep], [p], [ch], scope)
        else:
            p, design = own[ch.id]
            rep = own_report(p, ch, scope, model, design)
        if ch.rql_only:  # no AQL stated: the producer's side as a quality level
            rep["rql_only"] = True
        if ch.klass == "critical":
            rep["safety"] = CRITICAL_NOTE
        if req.inspection is not None and "inspection_error" not in rep:
            rep["inspection_error"] = req.inspection.as_dict()
        reps.append(rep)
        plans.append(p)
    if n is None:
        n = max((r["n"] or 0) for r in reps) or None
    if req.cost_per_unit is not None or req.deliveries_per_year is not None:
        for rep in reps:
            if rep.get("n") is None:  # 100 % inspection or no plan: no sample to count
                continue
            rep["inspection_cost"] = inspection_cost(rep, req.cost_per_unit,
                                                     req.deliveries_per_year)
    return PartPlan(request=req, n=n, reports=reps, plans=plans, designed=not req.fixed,
                    problem=problem, failed=failures, full=full)


#: Said wherever a plan guards a critical characteristic.
CRITICAL_NOTE = ("critical characteristic: sampling cannot guarantee a lot free of "
                 "nonconforming items; use 100 % inspection or stricter plans as contract and "
                 "regulation require")


def inspection_cost(rep: dict, per_unit: float | None, deliveries_per_year=None) -> dict:
    """What inspecting one characteristic's plan costs at the AQL, in units
    inspected and (with a cost per unit) in money.

    The expected units inspected per lot are the ATI where rejected lots are
    screened (``rep`` has ``ati``: a known lot size, attributes), else the ASN
    of a plan whose sample varies, else its sample size; ``units_per_year``
    is that times ``deliveries_per_year``; ``per_lot`` is the units per lot
    times ``per_unit``, ``per_year`` that times ``deliveries_per_year``
    (each None without the numbers it needs).

    Examples
    --------
    A receiving bay gets 52 deliveries of a bracket a year and pays 2.00 a
    unit inspected; at the AQL the plan screens 95.5 units per lot on average:

    >>> cost = inspection_cost({"n": 80, "ati": {"aql": 95.5, "rql": 900.0}}, 2.0, 52)
    >>> cost["per_year"], cost["units_per_year"]
    (9932.0, 4966.0)
    >>> load = inspection_cost({"n": 80}, None, 52)  # no cost per unit: units only
    >>> load["units_per_year"], load["per_lot"]
    (4160.0, None)
    """
    if "ati" in rep:
        units, basis = float(rep["ati"]["aql"]), "ati"
    elif "asn" in rep:
        units, basis = float(rep["asn"]["aql"]), "asn"
    else:
        units, basis = float(rep["n"]), "sample"
    per_lot = None if per_unit is None else per_unit * units
    yearly = deliveries_per_year is not None
    return {"per_unit": per_unit, "per_lot": per_lot,
            "per_year": per_lot * deliveries_per_year if yearly and per_lot is not None
            else None,
            "deliveries_per_year": deliveries_per_year, "units_per_lot": units,
            "units_per_year": units * deliveries_per_year if yearly else None,
            "basis": basis, "at": "aql"}


def _add_rectifying(reps, plans, chars, scope) -> None:
    """AOQL and ATI (rejected lots screened 100 %) when the lot size is known."""
    if not scope.lot_size or scope.per_unit:
        return
    from lotwise.analysis.rectifying import rectifying_summary

    for rep, plan, ch in zip(reps, plans, chars):
        if plan.max_sample < scope.lot_size:
            rep.update(rectifying_summary(plan, scope, rep["model"], ch.targets))


# --- a plan named on the command line ------------------------------------------

@dataclass(frozen=True, kw_only=True)
class PlanReference:
    """A plan named by notation or by ``FILE.toml#CHAR_ID``.

    Attributes
    ----------
    plan : Plan
        The plan (as the file's sheet states it, for a file reference).
    text : str
        The reference as given.
    path, characteristic : str or None
        The plan file and the characteristic's id (None for notation).
    lot_size, seed : int or None
        The file's lot size and the seed its sheet's pick list is drawn with.
    strata : str or None
        The file's strata of the pick list.
    per_unit : bool
        The file counts nonconformities per unit (False for notation).
    """

    plan: object
    text: str
    path: str | None = None
    characteristic: str | None = None
    lot_size: int | None = None
    seed: int | None = None
    strata: str | None = None
    per_unit: bool = False


def pick_seed(req) -> int:
    """The seed of a plan file's pick list: ``sampling.seed``, else the first
    eight hex digits of its fingerprint (so the same file draws the same units)."""
    return req.seed if req.seed is not None else int(req.fingerprint()[:8], 16)


def plan_from_reference(text, option: str = "--plan") -> PlanReference:
    """Read ``--plan``: plan notation, or ``FILE.toml#CHAR_ID`` naming one
    characteristic of a plan file (``FILE.toml`` alone when it has one).

    The file is resolved as ``lotwise sheet`` resolves it, so the plan is the
    one its sheet states. Raises :class:`InputError` naming ``option``, the
    reference and what is allowed.

    Examples
    --------
    >>> plan_from_reference("n=80,c=2").plan.label
    'n=80, c=2'
    """
    from lotwise.families.base import parse_plan

    if not isinstance(text, str) or not text.strip():
        raise InputError(f"{option} ({text!r}) must be plan notation such as \"n=80,c=2\" or "
                         "a plan file and characteristic such as plans/part.toml#M1")
    body = text.strip()
    if "#" not in body and not body.lower().endswith(".toml"):
        return PlanReference(plan=parse_plan(body, option), text=body)
    from lotwise.documents.planfile import load

    path, _, cid = body.rpartition("#") if "#" in body else (body, "", "")
    try:
        req = load(path)
    except InputError as exc:
        raise InputError(f"{option} ({body}): {exc}") from None
    pp = resolve(req, verdict=False)
    ids = [ch.id for ch in req.characteristics]
    if not cid:
        if len(ids) > 1:
            raise InputError(f"{option} ({body}): the file holds {len(ids)} characteristics "
                             f"({', '.join(ids)}); name one, e.g. {path}#{ids[0]}")
        cid = ids[0]
    if cid not in ids:
        raise InputError(f"{option} ({body}): no characteristic {cid!r} in {path}; it holds "
                         + ", ".join(ids))
    if any(f["characteristic"]["id"] == cid for f in pp.full):
        raise InputError(f"{option} ({body}): characteristic {cid} is inspected on every item "
                         "(inspection = \"100%\"); it has no sampling plan")
    why = next((f["reason"] for f in pp.failed if f["characteristic"]["id"] == cid), None)
    if why is not None:
        raise InputError(f"{option} ({body}): characteristic {cid} of the plan file has no "
                         f"plan: {why}")
    if pp.n is None:
        raise InputError(f"{option} ({body}): the plan file yields no plan: {pp.problem}")
    have = [r["characteristic"]["id"] for r in pp.reports]
    return PlanReference(plan=pp.plans[have.index(cid)], text=body, path=str(path),
                         characteristic=cid, lot_size=req.scope.lot_size, seed=pick_seed(req),
                         strata=req.strata, per_unit=req.scope.per_unit)
