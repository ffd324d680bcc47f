"""Skip-lot plans, Perry's SkSP-2 [1]_: inspect only a fraction of the
lots once a supplier has a clean record.

Rule, with a *reference plan* (any lot-by-lot plan, e.g. single sampling),
a *clearance number* ``i`` and a *sampling fraction* ``f``:

1. Start with normal inspection: every lot is inspected with the
   reference plan.
2. When ``i`` consecutive lots have been accepted, switch to skipping
   inspection: each lot is inspected with probability ``f`` (chosen at
   random); lots not inspected are accepted.
3. When an inspected lot is rejected, return to normal inspection.

With ``P`` the reference plan's acceptance probability, the long-run
fraction of lots accepted and the average fraction of lots inspected are

    ``Pa = (f P + (1 - f) P^i) / (f + (1 - f) P^i)``,
    ``F = f / (f + (1 - f) P^i)``.

Rectifying inspection (rejected lots screened) follows from these: lots not
inspected leave as they came, the others as under the reference plan, so
``AOQ = (1 - F) p + F AOQ_ref`` and ``ATI = F ATI_ref``;
:mod:`lotwise.analysis.rectifying` uses these through the plan's hooks. The average
sample per lot is ``F n_ref``.

The skip-lot rule assumes a supplier with a proven record, lots of the same
product produced under the same conditions, and the reference plan
inspecting every characteristic the contract calls for.

References
----------
.. [1] R. L. Perry, *Journal of Quality Technology* 5(3) (1973) 123-130
   (the paper that introduced SkSP-2).
.. [2] E. G. Schilling and D. V. Neubauer, 2nd ed. (CRC Press,
    2009), ch. 13.

Examples
--------
A supplier of machined brackets has passed "sample 80, accept on 2" for
months; receiving proposes to inspect one lot in four after 4 clean lots.
At 1 % nonconforming:

>>> from lotwise.families.base import Scope, SinglePlan
>>> s = SkipLotPlan(reference=SinglePlan(n=80, c=2), i=4, f=0.25)
>>> round(s.pa(0.01, "binomial", Scope()), 4), round(s.fraction_inspected(0.01, "binomial", Scope()), 3)
(0.9866, 0.287)
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from lotwise.families.base import Scope, lot_counts
from lotwise.core.quantities import InputError, format_level, format_pct

__all__ = ["SkipLotPlan", "skiplot_report", "render_skiplot", "parse_skip", "skiplot_figure"]

_TOL = 1e-12


def _combine(P, i, f):
    P = np.clip(np.asarray(P, dtype=float), 0.0, 1.0)
    Pi = np.power(P, i)
    den = f + (1.0 - f) * Pi
    pa = (f * P + (1.0 - f) * Pi) / den
    F = f / den
    return np.clip(pa, 0.0, 1.0), np.clip(F, 0.0, 1.0)


def _out(x):
    x = np.asarray(x, dtype=float)
    return float(x) if x.ndim == 0 else x


@dataclass(frozen=True, kw_only=True)
class SkipLotPlan:
    """SkSP-2 over a reference plan: clearance number ``i``, sampling fraction ``f``."""

    reference: object
    i: int
    f: float

    scheme = "skiplot"

    def __post_init__(self):
        if not isinstance(self.i, (int, np.integer)) or self.i < 1:
            raise InputError(f"i ({self.i}) must be a whole number of at least 1")
        if not (isinstance(self.f, (int, float)) and 0 < self.f <= 1):
            raise InputError(f"f ({self.f}) must be a fraction of lots above 0 and at most 1")

    @property
    def n(self) -> int:
        """Sample size of an inspected lot (the reference plan's)."""
        return self.reference.n

    @property
    def label(self) -> str:
        return f"SkSP-2 i={self.i}, f={self.f:g} over {self.reference.label}"

    def _ref(self, p, model, scope, rounding):
        if model == "hypergeometric":
            return self.reference.pa_count(lot_counts(p, scope.lot_size, rounding), scope)
        return self.reference.pa(p, model, scope)

    def pa(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """Long-run fraction of lots accepted at quality level(s) ``p``."""
        return _out(_combine(self._ref(p, model, scope, rounding), self.i, self.f)[0])

    def pa_count(self, d, scope: Scope):
        return _out(_combine(self.reference.pa_count(d, scope), self.i, self.f)[0])

    def fraction_inspected(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """Average fraction ``F`` of lots inspected at quality level(s) ``p``."""
        return _out(_combine(self._ref(p, model, scope, rounding), self.i, self.f)[1])

    def fraction_inspected_count(self, d, scope: Scope):
        return _out(_combine(self.reference.pa_count(d, scope), self.i, self.f)[1])

    def asn(self, p, model: str, scope: Scope):
        """Average units sampled per lot: ``F`` times the reference sample."""
        F = self.fraction_inspected(p, model, scope)
        ref = (np.asarray(self.reference.asn(p, model, scope)) if hasattr(self.reference, "asn")
               else float(self.reference.n))
        return _out(np.asarray(F) * ref)

    # Rectifying-inspection hooks (see lotwise.analysis.rectifying).
    def ati(self, p, model: str, scope: Scope):
        from lotwise.analysis import rectifying

        return _out(np.asarray(self.fraction_inspected(p, model, scope))
                    * np.asarray(rectifying.ati(self.reference, p, model, scope)))

    def ati_count(self, d, scope: Scope):
        from lotwise.analysis import rectifying

        return _out(np.asarray(self.fraction_inspected_count(d, scope))
                    * np.asarray(rectifying.ati_count(self.reference, d, scope)))

    def aoq(self, p, model: str, scope: Scope, formula: str = "screened"):
        from lotwise.analysis import rectifying

        if model == "hypergeometric":
            return self.aoq_count(lot_counts(p, scope.lot_size, "nearest"), scope, formula)
        p = np.asarray(p, dtype=float)
        F = np.asarray(self.fraction_inspected(p, model, scope))
        ref = np.asarray(rectifying.aoq(self.reference, p, model, scope, formula))
        return _out((1.0 - F) * p + F * ref)

    def aoq_count(self, d, scope: Scope, formula: str = "screened"):
        from lotwise.analysis import rectifying

        d = np.asarray(d, dtype=float)
        F = np.asarray(self.fraction_inspected_count(d, scope))
        ref = np.asarray(rectifying.aoq_count(self.reference, d, scope, formula))
        return _out((1.0 - F) * d / scope.lot_size + F * ref)

    def to_dict(self) -> dict:
        return {"scheme": "skiplot", "i": int(self.i), "f": float(self.f),
                "reference": self.reference.to_dict()}


def parse_skip(text: str, option: str = "--skip-lot") -> tuple[int, float]:
    """Read ``"i=4,f=0.25"`` (``f`` may be written ``1/4`` or ``25%``)."""
    from lotwise.families.base import _split_notation
    from lotwise.core.quantities import parse_count, parse_fraction

    pairs = _split_notation(text, option)
    unknown = sorted(set(pairs) - {"i", "f"})
    if unknown:
        raise InputError(f"{option} ({text!r}): unknown key {unknown[0]!r}; write for example "
                         "\"i=4,f=0.25\"")
    for key in ("i", "f"):
        if key not in pairs:
            raise InputError(f"{option} ({text!r}) lacks {key}; write for example \"i=4,f=0.25\"")
    i = parse_count(pairs["i"], f"{option} i", minimum=1)
    ftext = pairs["f"].strip()
    if "/" in ftext:
        a, _, b = ftext.partition("/")
        try:
            f = float(a) / float(b)
        except (ValueError, ZeroDivisionError):
            raise InputError(f"{option} f ({ftext}) must be a fraction such as 0.25, 1/4 or "
                             "25%") from None
    else:
        f = parse_fraction(ftext, f"{option} f")
    if not 0 < f <= 1:
        raise InputError(f"{option} f ({ftext}) must be a fraction of lots above 0 and at most 1")
    return i, f


def _parse_skiplot(pairs: dict, text: str, option: str) -> SkipLotPlan:
    from lotwise.families.base import _parse_single

    ref = {k: v for k, v in pairs.items() if k not in ("i", "f")}
    skip = {k: v for k, v in pairs.items() if k in ("i", "f")}
    if set(skip) != {"i", "f"}:
        raise InputError(f"{option} ({text!r}) needs i and f, for example "
                         "\"skiplot: n=80, c=2, i=4, f=0.25\"")
    i, f = parse_skip(",".join(f"{k}={v}" for k, v in skip.items()), option)
    return SkipLotPlan(reference=_parse_single(ref, text, option), i=i, f=f)


def skiplot_report(plan: SkipLotPlan, targets, scope: Scope, model: str) -> dict:
    """The skip-lot part of a check: ``Pa`` and ``F`` at the AQL and the RQL
    beside the reference plan's ``Pa``, under every model."""
    from lotwise.core import kernels as oc

    models = {}
    for m in scope.models:
        if m == "hypergeometric":
            d1 = oc.lot_count(targets.aql, scope.lot_size, "up")
            d2 = oc.lot_count(targets.rql, scope.lot_size, "down")
            ref = (float(plan.reference.pa_count(d1, scope)),
                   float(plan.reference.pa_count(d2, scope)))
            F = (float(plan.fraction_inspected_count(d1, scope)),
                 float(plan.fraction_inspected_count(d2, scope)))
            pa = (float(plan.pa_count(d1, scope)), float(plan.pa_count(d2, scope)))
        else:
            ref = (float(plan.reference.pa(targets.aql, m, scope)),
                   float(plan.reference.pa(targets.rql, m, scope)))
            F = (float(plan.fraction_inspected(targets.aql, m, scope)),
                 float(plan.fraction_inspected(targets.rql, m, scope)))
            pa = (float(plan.pa(targets.aql, m, scope)), float(plan.pa(targets.rql, m, scope)))
        models[m] = {"pa_aql": pa[0], "pa_rql": pa[1], "alpha": 1 - pa[0], "beta": pa[1],
                     "meets_alpha": bool(1 - pa[0] <= targets.alpha + _TOL),
                     "meets_beta": bool(pa[1] <= targets.beta + _TOL),
                     "reference_pa_aql": ref[0], "reference_pa_rql": ref[1],
                     "fraction_inspected_aql": F[0], "fraction_inspected_rql": F[1]}
        models[m]["meets"] = models[m]["meets_alpha"] and models[m]["meets_beta"]
    main = models[model]
    out = {"scheme": "skiplot", "i": plan.i, "f": plan.f, "reference": plan.reference.to_dict(),
           "model": model, **{k: main[k] for k in ("pa_aql", "pa_rql", "alpha", "beta",
                                                     "meets", "fraction_inspected_aql",
                                                     "fraction_inspected_rql")},
           "models": models}
    pu = scope.defects
    lv = lambda x: format_level(x, pu)  # noqa: E731
    n = plan.reference.n
    out["statements"] = [
        f"Skip-lot SkSP-2 over {plan.reference.label}: after {plan.i} consecutive accepted lots, "
        f"inspect {format_pct(plan.f)} of lots at random; return to every lot on a rejection.",
        f"At the AQL {lv(targets.aql)}: {format_pct(main['pa_aql'])} of lots accepted (reference "
        f"plan {format_pct(main['reference_pa_aql'])}), {format_pct(main['fraction_inspected_aql'])}"
        f" of lots inspected: {main['fraction_inspected_aql'] * n:.1f} units per lot on average "
        f"instead of {n}.",
        f"At the RQL {lv(targets.rql)}: {format_pct(main['pa_rql'])} of lots accepted (reference "
        f"plan {format_pct(main['reference_pa_rql'])}), {format_pct(main['fraction_inspected_rql'])}"
        " of lots inspected.",
        "Skip-lot inspection suits a supplier with a proven record and lots of the same product "
        "made under the same conditions; it is not for critical characteristics, which need "
        "100 % inspection or stricter plans as contracts and regulations require.",
    ]
    return out


def render_skiplot(rep: dict, per_unit: bool = False) -> str:
    from lotwise.analysis.report import table

    lines = [f"  Skip-lot SkSP-2: i = {rep['i']}, f = {rep['f']:g} over the plan above"]
    rows = []
    for m, r in rep["models"].items():
        rows.append([m + (" *" if m == rep["model"] else ""),
                     f"{r['pa_aql']:.5f}", f"{r['reference_pa_aql']:.5f}",
                     f"{r['fraction_inspected_aql']:.4f}",
                     f"{r['pa_rql']:.5f}", f"{r['reference_pa_rql']:.5f}",
                     f"{r['fraction_inspected_rql']:.4f}"])
    lines.append(table(rows, ["model", "Pa(AQL)", "ref Pa(AQL)", "F(AQL)", "Pa(RQL)",
                              "ref Pa(RQL)", "F(RQL)"], indent="    "))
    lines.append("    (F: average fraction of lots inspected)")
    lines += [f"    - {s}" for s in rep["statements"]]
    return "\n".join(lines)


def skiplot_figure(plan: SkipLotPlan, scope: Scope, ax=None, *, model=None, max_p=None,
                   points: int = 401, aql=None, rql=None, title=None):
    """OC curve of the skip-lot plan beside its reference plan's, and the
    average fraction of lots inspected ``F`` (dotted). Returns the figure."""
    from lotwise.analysis.audit import quality_at
    from lotwise.documents.plots.style import STYLE, _pct_axis, new_axes

    model = scope.check_model(model)
    fig, ax = new_axes(ax)
    pu = scope.defects
    if max_p is None:
        max_p = quality_at(plan.reference, 0.005, "poisson" if pu else "binomial", scope,
                           "consumer") * 1.1
        if not pu:
            max_p = min(max_p, 1.0)
    ps = np.linspace(0.0, max_p, points)
    ax.plot(ps, plan.pa(ps, model, scope), label=f"{plan.label}: Pa", **STYLE["exact"])
    ax.plot(ps, plan.reference.pa(ps, model, scope), label=f"reference {plan.reference.label}: Pa",
            **STYLE["poisson"])
    ax.plot(ps, plan.fraction_inspected(ps, model, scope),
            label="fraction of lots inspected F", **STYLE["binomial"])
    for level, marker, name in ((aql, "o", "AQL"), (rql, "s", "RQL")):
        if level is not None:
            y = float(plan.pa(level, model, scope))
            ax.plot([level], [y], marker=marker, markersize=7, markerfacecolor="white",
                    markeredgecolor="0.0", markeredgewidth=1.3, linestyle="none",
                    label=f"{name}: Pa {y:.3f}")
    ax.set_xlim(0, max_p)
    ax.set_ylim(0, 1.02)
    ax.set_ylabel("Probability / fraction of lots", fontsize=9.5)
    ax.set_xlabel("Quality level: nonconformities per unit" if pu
                  else "Quality level: nonconforming (%)", fontsize=9.5)
    _pct_axis(ax, pu)
    ax.set_title(title or f"Skip-lot i={plan.i}, f={plan.f:g} ({model})", fontsize=10.5,
                 loc="left")
    ax.legend(fontsize=7.5, frameon=False, loc="upper right")
    fig.tight_layout()
    return fig
