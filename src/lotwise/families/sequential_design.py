"""Design of an item-by-item sequential plan for two risk points.

Wald's SPRT lines come straight from the risk points (see
:mod:`lotwise.families.sequential`): ``p1 = AQL`` with producer's risk ``alpha``,
``p2 = RQL`` with consumer's risk ``beta``. What the designer adds is the
truncation point and the honest numbers: Wald's approximate OC and ASN of
the untruncated test beside the exact OC and ASN of the truncated plan
under the chosen model (hypergeometric with a lot size, binomial otherwise,
Poisson for nonconformities per unit), and whether the exact plan still
meets the risks.

Truncation point: ``truncate`` if given; otherwise three times the sample
size of the single plan for the same risks under the same model (common
practice, no source), and at most the lot size.

References
----------
.. [1] A. Wald, *Sequential Analysis*, Wiley, 1947.
.. [2] D. C. Montgomery, *Introduction to Statistical Quality Control*,
   section 15.4.

Examples
--------
Relays, destructive test, AQL 1 % at alpha 5 %, RQL 6 % at beta 10 %,
truncated at 300 units:

>>> d = design_sequential(aql=0.01, rql=0.06, truncate=300)
>>> round(d.plan.h1, 3), round(d.plan.h2, 3), round(d.plan.s, 4)
(1.221, 1.568, 0.0281)
>>> round(d.exact["asn_aql"], 1) < round(d.wald["asn_aql"], 1) + 10
True
"""

from __future__ import annotations

from dataclasses import dataclass

from lotwise.core import kernels as oc
from lotwise.families.base import Scope
from lotwise.core.quantities import InputError, Infeasible
from lotwise.families.sequential import SequentialPlan, sprt_lines
from lotwise.families.single import Targets, _check_lot, _check_targets, design_single, lot_targets

__all__ = ["SequentialDesign", "design_sequential", "TRUNCATE_FACTOR"]

#: Default truncation: this many times the single plan's sample size.
TRUNCATE_FACTOR = 3


@dataclass(frozen=True, kw_only=True)
class SequentialDesign:
    """Result of :func:`design_sequential`.

    Attributes
    ----------
    plan : SequentialPlan
    model, scope, targets
    wald : dict
        ``pa_aql, pa_rql, asn_aql, asn_rql`` from Wald's approximations.
    exact : dict
        The same for the truncated plan, exactly, plus ``alpha``, ``beta``,
        ``meets`` and the curtailed ASN.
    truncate_source : str
        ``"given"`` or how the default was found.
    single_n : int or None
        Sample size of the single plan for the same risks.
    """

    plan: SequentialPlan
    model: str
    scope: Scope
    targets: Targets
    wald: dict
    exact: dict
    truncate_source: str
    single_n: int | None = None

    def numbers(self) -> dict:
        """Acceptance and rejection numbers for each n (``None`` where impossible)."""
        ns, a, r = self.plan.numbers()
        per_unit = self.scope.defects
        return {"n": [int(v) for v in ns],
                "accept": [int(v) if v >= 0 else None for v in a],
                "reject": [int(rv) if (per_unit or rv <= n) else None for n, rv in zip(ns, r)]}

    def report_extra(self) -> dict:
        return {"feasible": True, "h1": self.plan.h1, "h2": self.plan.h2, "s": self.plan.s,
                "truncate": self.plan.truncate, "truncate_source": self.truncate_source,
                "single_n": self.single_n, "wald": self.wald, "exact": self.exact,
                "numbers": self.numbers()}


def design_sequential(*, aql: float, rql: float, alpha: float = 0.05, beta: float = 0.10,
                      lot_size: int | None = None, model: str | None = None,
                      defects: bool = False, truncate: int | None = None) -> SequentialDesign:
    """Wald's sequential plan for the two risk points, truncated and evaluated exactly.

    Raises
    ------
    Infeasible
        When the risk points are out of order or the lot cannot tell them apart.
    InputError
        For a truncation point beyond the lot size or below 1.
    """
    scope = Scope(lot_size=lot_size, defects=defects)
    model = scope.check_model(model)
    targets = Targets(aql=aql, rql=rql, alpha=alpha, beta=beta)
    _check_targets(targets, defects)
    if model == "hypergeometric":
        _check_lot(targets, lot_size, lot_targets(targets, lot_size))
    h1, h2, s = sprt_lines(aql, alpha, rql, beta, defects=defects)
    single_n = None
    try:
        single_n = design_single(aql=aql, rql=rql, alpha=alpha, beta=beta, lot_size=lot_size,
                                 model=model, defects=defects).n
    except Infeasible:
        single_n = None
    if truncate is not None:
        if isinstance(truncate, bool) or not isinstance(truncate, int) or truncate < 1:
            raise InputError(f"--truncate ({truncate}) must be a whole number of at least 1")
        if lot_size is not None and truncate > lot_size:
            raise InputError(f"--truncate ({truncate}) must not be greater than the lot size "
                             f"({lot_size})")
        source = "given"
    else:
        if single_n is None:
            if lot_size is None:
                raise Infeasible("no single plan meets the risks, so there is no default "
                                 "truncation point; give --truncate")
            truncate, source = lot_size, "the lot size (no single plan meets the risks)"
        else:
            truncate = TRUNCATE_FACTOR * single_n
            source = f"{TRUNCATE_FACTOR} x the single plan's n = {single_n}"
            if lot_size is not None and truncate > lot_size:
                truncate, source = lot_size, source + ", capped at the lot size"
    plan = SequentialPlan(h1=h1, h2=h2, s=s, truncate=int(truncate))
    wald = {"pa_aql": float(plan.wald_pa(aql, defects)),
            "pa_rql": float(plan.wald_pa(rql, defects)),
            "asn_aql": float(plan.wald_asn(aql, defects)),
            "asn_rql": float(plan.wald_asn(rql, defects))}
    if model == "hypergeometric":
        d1, d2 = (oc.lot_count(aql, lot_size, "up"), oc.lot_count(rql, lot_size, "down"))
        la, lr = d1 / lot_size, d2 / lot_size
    else:
        la, lr = aql, rql
    pa, asn = plan.oc_asn([la, lr], model, scope)
    cur = plan.asn_curtailed([la, lr], model, scope)
    tol = 1e-12
    exact = {"pa_aql": float(pa[0]), "pa_rql": float(pa[1]),
             "asn_aql": float(asn[0]), "asn_rql": float(asn[1]),
             "asn_curtailed_aql": float(cur[0]), "asn_curtailed_rql": float(cur[1]),
             "alpha": 1.0 - float(pa[0]), "beta": float(pa[1]), "model": model,
             "meets": bool(1.0 - pa[0] <= alpha + tol and pa[1] <= beta + tol)}
    return SequentialDesign(plan=plan, model=model, scope=scope, targets=targets, wald=wald,
                            exact=exact, truncate_source=source, single_n=single_n)
