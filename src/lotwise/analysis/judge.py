"""Judging a measured sample with a variables plan (``lotwise judge``).

:func:`judge_sample` computes the verdict, the statistics and the estimated
fraction nonconforming (Lieberman-Resnikoff minimum-variance unbiased
estimates) and checks normality (Shapiro-Wilk); the command line prints it
and the validation report checks it against an independent computation.
"""

from __future__ import annotations

import math

from lotwise.core.quantities import InputError

__all__ = ["NORMALITY_LEVEL", "judge_sample", "normality", "scale_free"]

#: Shapiro-Wilk p-value below which normality is called doubtful.
NORMALITY_LEVEL = 0.05


def scale_free(x, plan, source: str = "--values") -> tuple[float, float | None, dict]:
    """Mean, standard deviation and the statistics ``q`` (distance from the
    mean to each limit in units of s, or of the known sigma) of the sample
    ``x``, computed scale-free.

    The values are divided by a power of two at least their largest
    magnitude (exactly: only the exponents change) before they are summed,
    and their deviations from the mean by another before they are squared,
    so neither values near 1e308 overflow nor subnormal values vanish; ``q``
    does not depend on the units. A result beyond the floats (a mean, s or q
    above 1.8e308) is refused. ``s`` is None for a single value.
    """
    import numpy as np

    e1 = math.frexp(float(np.max(np.abs(x))))[1]
    xs = np.ldexp(x, -e1)
    mean_s = float(xs.mean())
    dev = xs - mean_s
    e2 = math.frexp(float(np.max(np.abs(dev))))[1]
    sd2 = float(np.ldexp(dev, -e2).std(ddof=1)) if x.size > 1 else None
    if plan.sigma == "known":
        mant, exp = math.frexp(plan.sigma_value)
    else:
        mant, exp = sd2, e1 + e2
    q = {}
    try:
        xbar = math.ldexp(mean_s, e1)
        s = None if sd2 is None else math.ldexp(sd2, e1 + e2)
        for side in ("upper", "lower"):
            lim = getattr(plan, side)
            if lim is not None:
                d = math.ldexp(lim, -e1) - mean_s
                q[side] = math.ldexp((d if side == "upper" else -d) / mant, e1 - exp)
        if not all(math.isfinite(v) for v in (xbar, s or 0.0, *q.values())):
            raise OverflowError
    except (OverflowError, ZeroDivisionError):
        raise InputError(f"{source} ({x.size} values from {float(x.min()):g} to "
                         f"{float(x.max()):g}) give a mean, s or distance to a limit (in "
                         "units of s or sigma) beyond the largest number a float holds "
                         "(1.8e308); give them in other units") from None
    return xbar, s, q


def judge_sample(plan, values, source: str = "--values") -> dict:
    """Verdict, statistics, estimated fraction nonconforming and normality check."""
    import numpy as np

    from lotwise.families.variables import estimate_known, estimate_unknown

    x = np.asarray(values, dtype=float)
    n = x.size
    known = plan.sigma == "known"
    xbar, s, q = scale_free(x, plan, source)
    dev = plan.sigma_value if known else s
    out = {"scheme": "variables", "plan": plan.to_dict(), "notation": plan.notation(), "n": n,
           "xbar": xbar, "s": s, "sigma_used": dev,
           "deviation": "sigma (known)" if known else "s (sample)"}
    est = {}
    for side, qv in q.items():
        if known:
            est[side] = float(estimate_known(qv, n))
        elif n >= 3:
            est[side] = float(estimate_unknown(qv, n))
    p_hat = sum(est.values()) if len(est) == len(q) else None
    if plan.limit == "both" and not known and plan.rule == "estimate":
        accept = p_hat <= plan.m
        out["statistic"] = {"estimate_total": p_hat, "m": plan.m, "q": q,
                            "rule": "accept when the estimated fraction beyond both limits "
                                    "is at most M"}
    else:
        accept = all(v >= plan.k for v in q.values())
        out["statistic"] = {"q": q, "k": plan.k,
                            "rule": "accept when (limit distance)/" + ("sigma" if known else "s")
                                    + " >= k at every limit"}
    out["verdict"] = "accept" if accept else "reject"
    out["accept"] = bool(accept)
    out["p_hat"] = {"by_limit": est, "total": p_hat,
                    "method": "minimum-variance unbiased estimate (Lieberman-Resnikoff)"}
    out["normality"] = normality(x)
    warnings = []
    if out["normality"]["doubtful"]:
        warnings.append(out["normality"]["warning"])
    out["warnings"] = warnings
    return out


def normality(x) -> dict:
    """Shapiro-Wilk test (scipy.stats, imported here only)."""
    n = len(x)
    if n < 3:
        return {"test": "Shapiro-Wilk", "w": None, "p_value": None, "doubtful": False,
                "level": NORMALITY_LEVEL,
                "note": f"{n} value(s) are too few to check normality (3 needed)"}
    import warnings

    from scipy import stats

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        w, pv = stats.shapiro(x)
    w, pv = float(w), float(pv)
    doubtful = bool(pv < NORMALITY_LEVEL)
    d = {"test": "Shapiro-Wilk", "w": w, "p_value": pv, "doubtful": doubtful,
         "level": NORMALITY_LEVEL}
    if doubtful:
        d["warning"] = (f"Normality is doubtful (Shapiro-Wilk W = {w:.4f}, p = {pv:.4f} < "
                        f"{NORMALITY_LEVEL:g}): the plan's risks assume normally distributed "
                        "measurements and may not hold; look at the normal probability plot "
                        "(--plot), investigate the process, and do not rely on this verdict "
                        "alone (the attributes plan for the same targets needs no such "
                        "assumption).")
    else:
        d["note"] = (f"Shapiro-Wilk W = {w:.4f}, p = {pv:.4f}: no evidence against normality "
                     "at the 5 % level (a small sample shows only gross departures).")
    return d
