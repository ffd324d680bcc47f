"""The Python API for notebooks and scripts.

Fractions in, fractions out: quality levels and risks are plain fractions
(``0.01`` for 1 %), or nonconformities per unit with ``per_unit=True``.

* :func:`design` -- the plan of a family with the smallest sample meeting
  both risks, assessed;
* :func:`check` -- any plan (an object or plan notation) assessed against
  the targets;
* :func:`parse_plan` -- a plan from its notation.

Both return a :class:`Result`: the :class:`~lotwise.analysis.assess.Assessment`
(``.plan``, ``.meets``, ``.to_json()`` equal to the command line's
``--json``, ``.oc(p)`` as a pandas DataFrame) with ``.plot(ax=None)`` (a
matplotlib figure of the exact and Poisson OC curves) and an HTML view for
Jupyter.

Examples
--------
A buyer of relief-valve springs and the spring maker agree AQL 1 % at 5 %
producer's risk and RQL 6 % at 10 % consumer's risk; lots are large:

>>> import lotwise
>>> r = lotwise.design(aql=0.01, rql=0.06)
>>> r.plan
SinglePlan(n=110, c=3)
>>> round(r.to_json()["beta"], 4)
0.098

The supplier proposes inspecting 89 springs and accepting on 2; in lots of
1,000 that falls short on the producer's side:

>>> q = lotwise.check("n=89,c=2", aql=0.01, rql=0.06, lot_size=1000)
>>> q.meets, round(q.alpha, 4)
(False, 0.0516)
>>> q.oc([0.01, 0.06])[["p", "hypergeometric", "poisson"]].round(4).values.tolist()
[[0.01, 0.9484, 0.9388], [0.06, 0.0819, 0.0988]]
"""

from __future__ import annotations

from dataclasses import dataclass

from lotwise.analysis.assess import Assessment, assess
from lotwise.core.quantities import InputError
from lotwise.core.types import Scope, Targets
from lotwise.families.base import Plan, family, parse_plan

__all__ = ["design", "check", "parse_plan", "Result"]


@dataclass(frozen=True, kw_only=True)
class Result(Assessment):
    """An :class:`~lotwise.analysis.assess.Assessment` with a plot and an HTML view."""

    def plot(self, ax=None):
        """The exact OC curve (and the Poisson one for attribute plans), with the
        AQL and RQL marked; drawn into ``ax`` if given. Returns the figure."""
        from lotwise.documents.plots.style import oc_figure

        models = self.report["models"]
        return oc_figure([(self.plan, self.scope)], models=tuple(models), aql=self.targets.aql,
                         rql=self.targets.rql, ax=ax)

    def _repr_html_(self) -> str:
        import base64
        import html
        import io

        from lotwise.core.numbers import percent, probability

        rep = self.report
        rows = "".join(
            f"<tr><td>{html.escape(m)}{' *' if m == rep['model'] else ''}</td>"
            f"<td>{probability(r['pa_aql'], 5)}</td><td>{html.escape(percent(r['alpha']))}</td>"
            f"<td>{probability(r['pa_rql'], 5)}</td><td>{html.escape(percent(r['beta']))}</td>"
            f"<td>{'yes' if r['meets'] else 'NO'}</td></tr>"
            for m, r in rep["models"].items())
        verdict = "meets both targets" if self.meets else "FALLS SHORT"
        statements = "".join(f"<li>{html.escape(s)}</li>" for s in rep["statements"])
        fig = self.plot()
        buf = io.BytesIO()
        fig.savefig(buf, format="png", dpi=90)
        img = base64.b64encode(buf.getvalue()).decode("ascii")
        return (f"<div><p><b>{html.escape(rep['label'])}</b> ({html.escape(rep['scheme'])}): "
                f"{verdict}</p><table><tr><th>model</th><th>Pa(AQL)</th><th>alpha</th>"
                f"<th>Pa(RQL)</th><th>beta</th><th>meets</th></tr>{rows}</table>"
                f"<ul>{statements}</ul><img src='data:image/png;base64,{img}'/></div>")


def _result(a: Assessment) -> Result:
    return Result(plan=a.plan, targets=a.targets, scope=a.scope, model=a.model,
                  design=a.design, report=a.report)


def design(*, aql: float, rql: float, alpha: float = 0.05, beta: float = 0.10,
           lot_size: int | None = None, scheme: str = "single", model: str | None = None,
           per_unit: bool = False, **options) -> Result:
    """Design the plan of ``scheme`` with the smallest sample meeting both risks.

    Parameters
    ----------
    aql, rql : float
        Acceptable and rejectable quality levels (fractions, or per unit).
    alpha, beta : float
        Producer's risk at the AQL, consumer's risk at the RQL.
    lot_size : int, optional
        Lot size (the exact model becomes hypergeometric).
    scheme : str
        A plan family with a designer: single, double, sequential, chain, variables.
    model : str, optional
        Override of the exact model.
    per_unit : bool
        Quality levels are nonconformities per unit (Poisson is exact).
    **options
        The family's design options (``c``, ``n``, ``max_n`` for single;
        ``ratio``, ``minimize`` for double; ``truncate`` for sequential;
        ``sigma``, ``upper``, ``lower``, ... for variables).

    Raises
    ------
    lotwise.core.quantities.Infeasible
        When no plan meets both risks (its message says what can be reached).
    """
    fam = family(scheme, "scheme")
    if fam.design is None:
        raise InputError(f"scheme ({scheme}) has no designer; check a plan of it instead")
    kw = dict(aql=aql, rql=rql, alpha=alpha, beta=beta, **options)
    if fam.plan_class.attribute_plan:
        kw.update(lot_size=lot_size, model=model, per_unit=per_unit)
    d = fam.design(**kw)
    scope = Scope(lot_size=lot_size, per_unit=per_unit)
    targets = Targets(aql=aql, rql=rql, alpha=alpha, beta=beta)
    redesign = {k: v for k, v in options.items() if k in ("ratio", "minimize")}
    return _result(assess(d.plan, targets, scope, d.model, design=d,
                          design_options=redesign))


def check(plan: Plan | str, *, aql: float, rql: float, alpha: float = 0.05,
          beta: float = 0.10, lot_size: int | None = None, model: str | None = None,
          per_unit: bool = False, aoq_formula: str | None = None) -> Result:
    """Assess ``plan`` (a plan object or plan notation) against the targets."""
    p = parse_plan(plan, "plan") if isinstance(plan, str) else plan
    if not isinstance(p, Plan):
        raise InputError(f"plan ({plan!r}) must be a lotwise plan or plan notation")
    scope = Scope(lot_size=lot_size, per_unit=per_unit)
    p.check_scope(scope)
    targets = Targets(aql=aql, rql=rql, alpha=alpha, beta=beta)
    return _result(assess(p, targets, scope, model, aoq_formula=aoq_formula))
