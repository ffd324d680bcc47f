"""A one-limit variables plan judged through a gauge that errs: a plan wrapped with
a measurement error is a plan.

Each item's measured value is ``y = x + e``: the true value ``x`` from the normal
process ``N(mu, sigma^2)`` and the gauge's error ``e`` from ``N(0, sigma_m^2)``,
independent, so measured values are ``N(mu, sigma^2 + sigma_m^2)``. The **true**
fraction nonconforming beyond an upper limit ``U`` is ``p = Phi(-(U - mu)/sigma)``;
the fraction of *measured* values beyond it is the apparent

    p' = Phi(r Phi^-1(p)),   r = sigma / sqrt(sigma^2 + sigma_m^2)

(``z_p' = r z_p``). Every figure is stated at the true ``p``:

* **sigma unknown** (the s-method, ``s`` from the measured values): the plan sees a
  normal population at ``p'``, so ``Pa(p) = Pa_plan(p')`` exactly (noncentral t).
  The map from ``p`` to ``p'`` needs the process ``sigma``: the user states it
  (``--process-sd``); the figures hold at that sigma.
* **sigma known**, the plan's sigma being the **process's** (``--sigma-is
  process``): accept when ``(U - ybar)/sigma >= k``; ``ybar ~ N(mu, (sigma^2 +
  sigma_m^2)/n)``, so ``Pa(p) = Phi(sqrt(n) r (z_p - k))``, the error-free plan
  with ``k`` replaced by ``r k`` at ``p'``.
* **sigma known**, the plan's sigma being the **observed** one (it was estimated
  from measured values, gauge included: ``--sigma-is observed``): the process
  sigma is ``sqrt(sigma_plan^2 - sigma_m^2)`` and ``Pa(p) = Phi(sqrt(n)(r z_p -
  k)) = Pa_plan(p')``.

With ``sigma_m = 0``, ``r = 1`` and every figure is the plan's own (the wrapper is
not even built: :func:`measured` returns the plan). A lower limit is the mirror
image. Two-limit plans are not covered here (the split of ``p`` between the tails
moves with the gauge's spread); they are refused with that reason.

Design (:func:`design_measured`): the error-free designer at the apparent AQL and
RQL, exact because ``Pa`` at true ``p`` is the plan's ``Pa`` at ``p'`` (with
``k' = r k`` for a process sigma) and ``p'`` rises with ``p``. The guard-banded
alternative keeps the error-free plan's sample and raises its ``k`` (moves the
acceptance limit on the mean inward) until beta holds at the true RQL, showing the
producer's risk that costs.

References
----------
.. [1] E. G. Schilling and D. V. Neubauer, 2nd ed., CRC Press, 2009 (measurement
   error and variables plans).

Examples
--------
A gauge with half the process's spread turns a true 1 % into an apparent 1.87 %:

>>> round(apparent_fraction(0.01, 1.0 / (1.0 + 0.25) ** 0.5), 4)
0.0187
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np
from scipy import special

from lotwise.core.quantities import InputError, format_pct
from lotwise.core.types import Scope
from lotwise.families.base import Family, Plan, family

__all__ = ["GaugeError", "MeasuredPlan", "measured", "apparent_fraction", "design_measured",
           "guard_band", "SIGMA_IS"]

#: What the plan's known sigma is: the process's, or the spread of measured values.
SIGMA_IS = ("process", "observed")


def apparent_fraction(p, ratio: float):
    """``Phi(r Phi^-1(p))``: the fraction of measured values beyond a limit when the
    true fraction beyond it is ``p`` (``ratio`` = sigma / observed sigma)."""
    p = np.asarray(p, dtype=float)
    with np.errstate(all="ignore"):
        out = special.ndtr(ratio * special.ndtri(np.clip(p, 0.0, 1.0)))
    out = np.where(p <= 0.0, 0.0, np.where(p >= 1.0, 1.0, out))
    return float(out) if out.ndim == 0 else out


@dataclass(frozen=True, kw_only=True)
class GaugeError:
    """A gauge's standard deviation and the process sigma the figures are stated at.

    Attributes
    ----------
    measurement_sd : float
        The gauge's standard deviation (units of the limits).
    process_sd : float
        The process's own sigma (true values).
    sigma_is : str or None
        For a known-sigma plan: whether its sigma is the process's or the observed
        one; None for sigma unknown.
    """

    measurement_sd: float
    process_sd: float
    sigma_is: str | None = None

    @property
    def observed_sd(self) -> float:
        return math.hypot(self.process_sd, self.measurement_sd)

    @property
    def ratio(self) -> float:
        """``r = sigma / sqrt(sigma^2 + sigma_m^2)``."""
        return self.process_sd / self.observed_sd

    def as_dict(self) -> dict:
        return {"measurement_sd": self.measurement_sd, "process_sd": self.process_sd,
                "observed_sd": self.observed_sd, "sigma_is": self.sigma_is,
                "ratio": self.ratio}

    def describe(self) -> str:
        return (f"gauge standard deviation {self.measurement_sd:g} against a process sigma of "
                f"{self.process_sd:g} (measured values spread {self.observed_sd:.4g}; "
                f"r = {self.ratio:.4f})")


def gauge_for(plan, measurement_sd: float, *, sigma_is: str | None = None,
              process_sd: float | None = None) -> GaugeError:
    """The :class:`GaugeError` of ``plan`` (a one-limit variables plan), checked:
    sigma known needs ``sigma_is``; sigma unknown needs ``process_sd``."""
    if not (isinstance(measurement_sd, (int, float)) and math.isfinite(measurement_sd)
            and measurement_sd >= 0):
        raise InputError(f"--measurement-sd ({measurement_sd}) must be a number of at least 0 "
                         "(the gauge's standard deviation, in the units of the limits)")
    if plan.limit == "both":
        raise InputError(f"--measurement-sd ({measurement_sd:g}) applies to one-limit variables "
                         "plans here (with two limits the gauge also moves the split of p "
                         "between the tails); judge each limit as a one-limit plan")
    if plan.sigma == "known":
        if process_sd is not None:
            raise InputError(f"--process-sd ({process_sd:g}) applies to sigma unknown; with "
                             "sigma known say what the plan's sigma is with --sigma-is")
        if sigma_is not in SIGMA_IS:
            raise InputError(f"--sigma-is ({sigma_is}) must be one of: process, observed (is "
                             "the known sigma the process's own, or the spread of measured "
                             "values, gauge included?)")
        if plan.sigma_value is None:
            raise InputError("--measurement-sd with sigma known needs the plan's sigma "
                             "(sigma_value in the plan notation, or --sigma-value)")
        sv = float(plan.sigma_value)
        if sigma_is == "process":
            return GaugeError(measurement_sd=float(measurement_sd), process_sd=sv,
                              sigma_is="process")
        if not sv > measurement_sd:
            raise InputError(f"--measurement-sd ({measurement_sd:g}) must be below the "
                             f"observed sigma ({sv:g}): the measured spread includes the "
                             "gauge's")
        return GaugeError(measurement_sd=float(measurement_sd),
                          process_sd=math.sqrt(sv * sv - measurement_sd * measurement_sd),
                          sigma_is="observed")
    if sigma_is is not None:
        raise InputError(f"--sigma-is ({sigma_is}) applies to sigma known; with sigma unknown "
                         "give the process sigma with --process-sd")
    if process_sd is None or not (math.isfinite(process_sd) and process_sd > 0):
        raise InputError(f"--process-sd ({process_sd}) must be a positive number: with sigma "
                         "unknown the true fraction nonconforming depends on the process sigma "
                         "the figures are stated at")
    return GaugeError(measurement_sd=float(measurement_sd), process_sd=float(process_sd))


def measured(plan, gauge: GaugeError | None):
    """``plan`` judged through ``gauge``: the plan itself when there is no gauge error."""
    if gauge is None or gauge.measurement_sd == 0:
        return plan
    return MeasuredPlan(inner=plan, gauge=gauge)


@dataclass(frozen=True, kw_only=True)
class MeasuredPlan(Plan):
    """A one-limit variables plan judged through a gauge with ``gauge``."""

    inner: Plan
    gauge: GaugeError

    scheme = "variables"
    attribute_plan = False
    evaluation = "process"

    @property
    def error_free(self) -> Plan:
        return self.inner

    @property
    def _seen(self) -> Plan:
        """The error-free plan whose ``Pa`` at ``p'`` is this plan's at ``p``."""
        if self.gauge.sigma_is == "process":
            return replace(self.inner, k=self.gauge.ratio * float(self.inner.k))
        return self.inner

    def pa(self, p, model: str | None = None, scope=None, rounding: str = "nearest", **kw):
        """``Pa`` at true fraction(s) nonconforming ``p``."""
        return self._seen.pa(apparent_fraction(p, self.gauge.ratio), model, scope, rounding)

    def pa_count(self, d, scope):
        if not scope or not scope.lot_size:
            raise InputError("pa_count needs a lot size")
        return self.pa(np.asarray(d, dtype=float) / float(scope.lot_size))

    @property
    def max_sample(self) -> int:
        return self.inner.max_sample

    @property
    def label(self) -> str:
        return self.inner.label

    @property
    def exact_model(self) -> str:
        return self.inner.exact_model

    @property
    def limit(self) -> str:
        return self.inner.limit

    @property
    def sigma(self) -> str:
        return self.inner.sigma

    @property
    def width(self):
        return self.inner.width

    @property
    def method(self) -> str:
        return self.inner.method

    def notation(self) -> str:
        return self.inner.notation()

    def to_dict(self) -> dict:
        return self.inner.to_dict()

    def models_for(self, scope) -> tuple[str, ...]:
        return self.inner.models_for(scope)

    def judging_model(self, scope, model: str | None = None) -> str:
        return self.inner.judging_model(scope, model)

    def check_scope(self, scope) -> None:
        self.inner.check_scope(scope)

    def risks(self, targets, scope, model: str):
        from lotwise.core.types import TOL
        from lotwise.families.base import ModelRisk

        pa_aql, pa_rql = float(self.pa(targets.aql, model)), float(self.pa(targets.rql, model))
        return ModelRisk(model=model, pa_aql=pa_aql, pa_rql=pa_rql, alpha=1.0 - pa_aql,
                         beta=pa_rql, meets_alpha=bool(1.0 - pa_aql <= targets.alpha + TOL),
                         meets_beta=bool(pa_rql <= targets.beta + TOL))

    def quality_at(self, prob: float, model: str, scope, side: str = "producer") -> float:
        from lotwise.core.search import invert_level

        return invert_level(self, prob, model, scope)

    def family_record(self) -> Family:
        """The variables family with the gauge's report keys in place of the family's
        own (those describe the error-free plan) and the error-free OC beside."""
        return replace(family("variables", "plan"), extras=report_keys, oc_columns=None)


def report_keys(plan: MeasuredPlan, targets, scope, model, report: dict) -> dict:
    """``measurement_error``: the gauge, the risks the same plan would carry with a
    perfect gauge, and the guard-banded alternative."""
    g = plan.gauge
    info = g.as_dict()
    free = plan.inner.risks(targets, scope, model)
    info["error_free"] = {"pa_aql": free.pa_aql, "pa_rql": free.pa_rql, "alpha": free.alpha,
                          "beta": free.beta, "meets": free.meets}
    m = report["models"][model]
    says = [f"Measurement error: {g.describe()}. Every figure above is at the true fraction "
            "nonconforming.",
            f"With a perfect gauge the same plan would carry alpha {format_pct(free.alpha)} "
            f"and beta {format_pct(free.beta)}; through this gauge alpha is "
            f"{format_pct(m['alpha'])} and beta {format_pct(m['beta'])}."]
    return {"measurement_error": info, "statements": says}


def guard_band(plan: Plan, gauge: GaugeError, targets) -> dict:
    """The guard-banded alternative: the same ``n``, ``k`` raised until beta holds at the
    true RQL (bisection on ``k``; ``Pa`` falls as ``k`` grows), and the producer's risk
    that leaves at the true AQL. In units, the acceptance limit on the mean moves
    inward by ``(k_g - k) sigma_plan`` (sigma known)."""
    k0 = float(plan.inner.k if isinstance(plan, MeasuredPlan) else plan.k)
    base = plan.inner if isinstance(plan, MeasuredPlan) else plan

    def pa_rql(k):
        return float(MeasuredPlan(inner=replace(base, k=k), gauge=gauge).pa(targets.rql))

    lo, hi = k0, k0 + 10.0  # a gauge's spread only lowers Pa at the RQL's true p ... or not
    if pa_rql(lo) <= targets.beta:
        lo = k0 - 10.0
    for _ in range(100):
        mid = 0.5 * (lo + hi)
        if pa_rql(mid) > targets.beta:
            lo = mid
        else:
            hi = mid
    kg = hi
    gb = MeasuredPlan(inner=replace(base, k=kg), gauge=gauge)
    r = gb.risks(targets, Scope(), base.exact_model)
    out = {"n": int(base.n), "k": kg, "k_error_free": k0, "alpha": r.alpha, "beta": r.beta,
           "meets": r.meets}
    if base.sigma == "known" and base.sigma_value is not None:
        out["guard_band"] = (kg - k0) * float(base.sigma_value)
        limit = base.upper if base.limit == "upper" else base.lower
        if limit is not None:
            sign = -1.0 if base.limit == "upper" else 1.0
            out["acceptance_limit"] = float(limit) + sign * kg * float(base.sigma_value)
    return out


def design_measured(gauge_args: dict, *, aql: float, rql: float, alpha: float, beta: float,
                    **options):
    """The smallest one-limit variables plan meeting both risks at the true AQL and RQL
    through a gauge (``gauge_args``: ``measurement_sd``, ``sigma_is``, ``process_sd``;
    ``options`` those of :func:`lotwise.families.variables.design_variables`).

    Returns ``(plan, design, guard)``: the wrapped plan, the error-free designer's
    result at the apparent levels, and the guard-banded alternative built on the
    plan designed for a perfect gauge.
    """
    from lotwise.core.types import Targets
    from lotwise.families.variables import VariablesPlan, design_variables

    probe = VariablesPlan(n=2, k=1.0, sigma=options.get("sigma", "unknown"),
                          limit=options.get("limit", "upper"),
                          sigma_value=options.get("sigma_value"))
    gauge = gauge_for(probe, gauge_args["measurement_sd"], sigma_is=gauge_args.get("sigma_is"),
                      process_sd=gauge_args.get("process_sd"))
    r = gauge.ratio
    d = design_variables(aql=apparent_fraction(aql, r), rql=apparent_fraction(rql, r),
                         alpha=alpha, beta=beta, **options)
    k = float(d.plan.k) / r if gauge.sigma_is == "process" else float(d.plan.k)
    plan = measured(replace(d.plan, k=k), gauge)
    free = design_variables(aql=aql, rql=rql, alpha=alpha, beta=beta,
                            **{**options, "attributes": False})
    guard = guard_band(free.plan, gauge, Targets(aql=aql, rql=rql, alpha=alpha, beta=beta)) \
        if gauge.measurement_sd > 0 else None
    return plan, d, guard
