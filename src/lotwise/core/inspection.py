"""Imperfect inspection: the two misclassification rates, where they came
from, and the distributions they turn a lot into.

An inspector (or a go/no-go gauge) misjudges items independently of each other:

* the **miss rate** ``e2`` is the probability that a nonconforming item is
  judged conforming;
* the **false-alarm rate** ``e1`` is the probability that a conforming item is
  judged nonconforming.

A fraction nonconforming ``p`` then *looks like* ``p_e = p (1 - e2) + (1 - p) e1``
(:func:`apparent`); a rate of nonconformities per unit ``u`` looks like
``u (1 - e2) + e1`` (each nonconformity missed with ``e2``, false calls arising
at ``e1`` per unit). Inspection carries information only while ``p_e`` rises with
``p``, i.e. ``1 - e1 - e2 > 0`` (:func:`check_rates`).

Finite lot, exactly. Each of the ``N`` items of a lot holding ``D`` nonconforming
may be thought of as carrying, before any sampling, the verdict the inspector
would give it (drawn independently for each item). The sample is drawn without
regard to those verdicts, so a plan that sentences on the verdicts of a random
sample behaves exactly as the same plan on a lot holding ``D'`` "apparently
nonconforming" items, where ``D' = B + F``, ``B ~ Bin(D, 1 - e2)`` (flagged
nonconforming items) and ``F ~ Bin(N - D, e1)`` (flagged conforming items)
independently (:func:`flagged_counts`). For a single sample this is the same as
"the true count in the sample is hypergeometric and each sampled item is then
misjudged independently" (the observed count a sum of two binomials); the lot
form also holds unchanged for plans that sample in stages or unit by unit.

Rates from a study (:func:`parse_study`): ``x`` of ``m`` known items misjudged
give the point estimate ``x/m`` and the exact one-sided 95 % upper bound of
Clopper and Pearson, the ``0.95`` quantile of ``Beta(x + 1, m - x)`` (1 when
``x = m``).

References
----------
.. [1] C. J. Clopper and E. S. Pearson, "The use of confidence or fiducial limits
   illustrated in the case of the binomial", Biometrika 26 (1934), 404-413.
.. [2] N. L. Johnson, S. Kotz and R. N. Rodriguez, "Statistical effects of
   imperfect inspection sampling", Journal of Quality Technology 18 (1986).

Examples
--------
A visual check misses 10 % of nonconforming items and flags 2 % of good ones:
a 1 % lot looks like 2.88 % nonconforming.

>>> round(apparent(0.01, miss_rate=0.10, false_alarm=0.02), 6)
0.0288
>>> r = parse_study("missed 4 of 50 nonconforming; flagged 2 of 50 conforming")
>>> (r.miss_rate, r.false_alarm, round(r.miss_rate_upper, 4))
(0.08, 0.04, 0.1738)
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

import numpy as np
from scipy import special

from lotwise.core.quantities import InputError, format_pct, parse_fraction

__all__ = ["ErrorRates", "apparent", "check_rates", "parse_rate", "parse_study",
           "clopper_pearson_upper", "binomial_window", "read_rates", "flagged_counts", "observed_cdf",
           "STUDY_LEVEL"]

#: Confidence of the one-sided upper bounds on rates from a study.
STUDY_LEVEL = 0.95


@dataclass(frozen=True, kw_only=True)
class ErrorRates:
    """Misclassification rates of an inspection and where they came from.

    Attributes
    ----------
    miss_rate : float
        ``e2``: a nonconforming item judged conforming.
    false_alarm : float
        ``e1``: a conforming item judged nonconforming.
    source : str
        ``"stated"`` or the study, in words.
    miss_rate_upper, false_alarm_upper : float or None
        One-sided 95 % Clopper-Pearson upper bounds (rates from a study only).
    study : dict or None
        ``{"missed", "nonconforming", "flagged", "conforming"}`` counts.
    """

    miss_rate: float
    false_alarm: float
    source: str = "stated"
    miss_rate_upper: float | None = None
    false_alarm_upper: float | None = None
    study: dict | None = None

    def __post_init__(self):
        check_rates(self.miss_rate, self.false_alarm)

    @property
    def zero(self) -> bool:
        """No misclassification at all (every figure equals the error-free one)."""
        return self.miss_rate == 0 and self.false_alarm == 0

    @property
    def has_bounds(self) -> bool:
        return self.miss_rate_upper is not None

    def upper(self) -> "ErrorRates":
        """The rates at both upper bounds (a study's pessimistic reading)."""
        if not self.has_bounds:
            return self
        return _unchecked(self.miss_rate_upper, self.false_alarm_upper, self.source)

    def as_dict(self) -> dict:
        """The JSON ``inspection_error`` object."""
        d = {"miss_rate": float(self.miss_rate), "false_alarm": float(self.false_alarm),
             "source": self.source}
        if self.has_bounds:
            d["miss_rate_upper"] = float(self.miss_rate_upper)
            d["false_alarm_upper"] = float(self.false_alarm_upper)
            d["confidence"] = STUDY_LEVEL
            d["study"] = dict(self.study or {})
        return d

    def describe(self) -> str:
        """One line for reports and sheets."""
        text = (f"miss rate {format_pct(self.miss_rate)}, false-alarm rate "
                f"{format_pct(self.false_alarm)}")
        if self.has_bounds:
            text += (f" (from a study: {self.source}; one-sided {STUDY_LEVEL:.0%} upper bounds "
                     f"{format_pct(self.miss_rate_upper)} and "
                     f"{format_pct(self.false_alarm_upper)}, Clopper-Pearson)")
        else:
            text += " (as stated)"
        return text


def _unchecked(miss: float, false: float, source: str) -> "ErrorRates":
    """Upper-bound rates: they may leave no information (``e1 + e2 >= 1``); the
    plan wrapper then refuses them with its own message."""
    obj = object.__new__(ErrorRates)
    for key, val in (("miss_rate", miss), ("false_alarm", false),
                     ("source", f"upper {STUDY_LEVEL:.0%} bounds of {source}"),
                     ("miss_rate_upper", None), ("false_alarm_upper", None), ("study", None)):
        object.__setattr__(obj, key, val)
    return obj


def check_rates(miss_rate: float, false_alarm: float, miss_option: str = "--miss-rate",
                false_option: str = "--false-alarm") -> None:
    """Each rate in ``[0, 1)`` and ``1 - e1 - e2 > 0`` (else inspection carries no
    information: a nonconforming item is flagged no more often than a conforming one)."""
    for name, v in ((miss_option, miss_rate), (false_option, false_alarm)):
        if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v) \
                or not 0 <= v < 1:
            raise InputError(f"{name} ({v}) must be a rate from 0 up to (not including) 1")
    if not 1.0 - miss_rate - false_alarm > 0:
        raise InputError(
            f"{miss_option} ({miss_rate:g}) plus {false_option} ({false_alarm:g}) must be below "
            "1: otherwise a nonconforming item is flagged no more often than a conforming one "
            "and inspection carries no information")


def parse_rate(text, option: str) -> float:
    """A misclassification rate written like a level (``0.1``, ``10%``), in ``[0, 1)``."""
    value = parse_fraction(text, option)
    if not 0 <= value < 1:
        hint = ""
        if isinstance(text, str) and "%" not in text and 1 <= value < 100:
            hint = f" (write {text.strip()}% for a percentage)"
        raise InputError(f"{option} ({text}) must be a rate from 0 up to (not including) 1"
                         + hint)
    return value


def clopper_pearson_upper(x: int, m: int, level: float = STUDY_LEVEL) -> float:
    """Exact one-sided upper confidence bound for a binomial proportion:
    the ``level`` quantile of ``Beta(x + 1, m - x)``; 1 when ``x = m``."""
    if x >= m:
        return 1.0
    return float(special.betaincinv(x + 1.0, m - x, level))


_MISSED = re.compile(r"^\s*missed\s+(\S+)\s+of\s+(\S+)\s+nonconforming\s*$", re.IGNORECASE)
_FLAGGED = re.compile(r"^\s*flagged\s+(\S+)\s+of\s+(\S+)\s+conforming\s*$", re.IGNORECASE)
_STUDY_FORM = ('"missed 4 of 50 nonconforming; flagged 2 of 50 conforming" (whole numbers; '
               "each part may be left out when it is zero)")


def parse_study(text, option: str = "--study") -> ErrorRates:
    """Rates from an attribute agreement study written in words.

    ``"missed X of M nonconforming; flagged Y of K conforming"``: ``X`` of ``M``
    known nonconforming items were passed, ``Y`` of ``K`` known conforming items
    were flagged. Either part may be left out (its rate is then 0, with no bound).
    """
    if not isinstance(text, str) or not text.strip():
        raise InputError(f"{option} ({text!r}) must be written as {_STUDY_FORM}")
    counts = {}
    for part in filter(None, (s.strip() for s in re.split(r"[;,]", text))):
        for key, rx in (("missed", _MISSED), ("flagged", _FLAGGED)):
            m = rx.match(part)
            if m:
                if key in counts:
                    raise InputError(f"{option} ({text!r}) gives the {key} count twice")
                counts[key] = (_whole(m.group(1), option, text), _whole(m.group(2), option, text))
                break
        else:
            raise InputError(f"{option} ({text!r}): cannot read {part!r}; write {_STUDY_FORM}")
    for key, (x, m) in counts.items():
        if m < 1 or x > m:
            raise InputError(f"{option} ({text!r}): {key} {x} of {m} must have at least one "
                             "item studied and no more misjudged than studied")
    mx, mm = counts.get("missed", (0, 0))
    fx, fm = counts.get("flagged", (0, 0))
    e2 = mx / mm if mm else 0.0
    e1 = fx / fm if fm else 0.0
    if not 1.0 - e1 - e2 > 0:
        raise InputError(f"{option} ({text!r}): the miss rate ({e2:g}) plus the false-alarm rate "
                         f"({e1:g}) must be below 1, otherwise inspection carries no information")
    return ErrorRates(miss_rate=e2, false_alarm=e1, source=text.strip(),
                      miss_rate_upper=clopper_pearson_upper(mx, mm) if mm else 0.0,
                      false_alarm_upper=clopper_pearson_upper(fx, fm) if fm else 0.0,
                      study={"missed": mx, "nonconforming": mm, "flagged": fx,
                             "conforming": fm})


def read_rates(miss_rate=None, false_alarm=None, study=None, *,
               names=("--miss-rate", "--false-alarm", "--study"),
               prefix: str = "") -> ErrorRates | None:
    """The rates given as a miss rate and/or a false-alarm rate, or as a study (not
    both); None when none is given. ``names`` spell the three inputs as the caller's
    user wrote them (options, plan-file keys, form fields), ``prefix`` goes before
    every message (e.g. the file)."""
    miss_name, false_name, study_name = (prefix + k for k in names)
    if study is not None:
        if miss_rate is not None or false_alarm is not None:
            opt, val = ((miss_name, miss_rate) if miss_rate is not None
                        else (false_name, false_alarm))
            raise InputError(f"{opt} ({val}) cannot be combined with {names[2]} (the study "
                             "gives both rates)")
        return parse_study(study, study_name)
    if miss_rate is None and false_alarm is None:
        return None
    e2 = parse_rate(miss_rate, miss_name) if miss_rate is not None else 0.0
    e1 = parse_rate(false_alarm, false_name) if false_alarm is not None else 0.0
    check_rates(e2, e1, miss_name, names[1])
    return ErrorRates(miss_rate=e2, false_alarm=e1)


def _whole(word: str, option: str, text: str) -> int:
    if not word.isdigit():
        raise InputError(f"{option} ({text!r}): {word!r} must be a whole number")
    return int(word)


def apparent(p, miss_rate: float, false_alarm: float, per_unit: bool = False):
    """The level inspection sees: ``p (1 - e2) + (1 - p) e1`` for a fraction, or
    ``u (1 - e2) + e1`` for nonconformities per unit."""
    p = np.asarray(p, dtype=float)
    if per_unit:
        out = p * (1.0 - miss_rate) + false_alarm
    else:
        out = p * (1.0 - miss_rate) + (1.0 - p) * false_alarm
    return float(out) if out.ndim == 0 else out


def binomial_window(size: int, prob: float) -> tuple[int, np.ndarray]:
    """``(lo, pmf)``: ``Bin(size, prob)`` masses at ``lo, lo + 1, ...``, over a window
    holding all but a negligible tail (beyond 12 standard deviations plus 30: far
    below 1e-20 of mass for any size and probability)."""
    size = int(size)
    if prob <= 0.0 or size == 0:
        return 0, np.ones(1)
    if prob >= 1.0:
        return size, np.ones(1)
    mean = size * prob
    sd = math.sqrt(mean * (1.0 - prob))
    lo = max(0, int(math.floor(mean - 12.0 * sd - 30.0)))
    hi = min(size, int(math.ceil(mean + 12.0 * sd + 30.0)))
    k = np.arange(lo, hi + 1, dtype=float)
    logp = (special.gammaln(size + 1.0) - special.gammaln(k + 1.0)
            - special.gammaln(size - k + 1.0) + special.xlogy(k, prob)
            + special.xlog1py(size - k, -prob))
    return lo, np.exp(logp)


def flagged_counts(d: int, lot_size: int, miss_rate: float, false_alarm: float):
    """Distribution of the number ``D'`` of items in a lot of ``lot_size`` holding
    ``d`` nonconforming that the inspection would flag (see the module notes).

    Returns
    -------
    lo : int
        The first count of the window.
    pmf : ndarray
        ``P(D' = lo + j)``.
    flagged_bad : ndarray
        ``E[B; D' = lo + j]``, ``B`` the truly nonconforming among the flagged
        (for the outgoing quality of rectifying inspection).
    """
    lo_b, pb = binomial_window(d, 1.0 - miss_rate)
    lo_f, pf = binomial_window(lot_size - d, false_alarm)
    b = lo_b + np.arange(pb.size, dtype=float)
    pmf = np.convolve(pb, pf)
    bad = np.convolve(b * pb, pf)
    return lo_b + lo_f, pmf, bad


def _binomial_rows(sizes: np.ndarray, prob: float, top: int) -> np.ndarray:
    """``P(Bin(size, prob) = j)`` for each size (rows) and ``j = 0..top`` (columns):
    the log mass at 0 (or at ``size`` when ``prob = 1``) and the cumulated log ratios
    ``log P(j + 1) - log P(j) = log((size - j) / (j + 1)) + log(prob / (1 - prob))``."""
    m = sizes.astype(float)[:, None]
    j = np.arange(top + 1, dtype=float)[None, :]
    if prob <= 0.0 or prob >= 1.0:
        at = np.zeros_like(m) if prob <= 0.0 else m
        return (j == at).astype(float)
    odds = math.log(prob) - math.log1p(-prob)
    with np.errstate(all="ignore"):
        steps = np.log(np.maximum(m - j[:, :-1], 0.0)) - np.log(j[:, 1:]) + odds
        logp = np.concatenate([np.broadcast_to(m * math.log1p(-prob), m.shape),
                               steps], axis=1)
        out = np.exp(np.cumsum(logp, axis=1))
    return np.where(j <= m, out, 0.0)


def _sample_window(m: int, d: int, N: int) -> tuple[int, int]:
    """``(lo, hi + 1)``: the true counts of a sample of ``m`` worth summing."""
    mean = m * d / N
    spread = 12.0 * math.sqrt(mean * (1.0 - d / N)) + 30.0
    return (max(0, m - (N - d), int(math.floor(mean - spread))),
            min(m, d, int(math.ceil(mean + spread))) + 1)


def observed_cdf(n, d: int, lot_size: int, miss_rate: float, false_alarm: float,
                 top: int) -> np.ndarray:
    """``P(X <= k)`` for ``k = 0..top``: ``X`` the flagged count of a sample of ``n``
    from a lot of ``lot_size`` holding ``d`` nonconforming items (sample form); one
    row per sample size when ``n`` is an array.

    The true count ``T`` of the sample is hypergeometric; given ``T`` the flagged
    count is ``Bin(T, 1 - e2) + Bin(n - T, e1)``. Only masses up to ``top`` are
    needed, so each convolution is cut there. ``T`` is summed over its mean plus or
    minus 12 binomial standard deviations and 30 (a hypergeometric count is less
    spread than the binomial one, whose tails beyond that are far below 1e-20:
    Hoeffding, JASA 58, 1963, section 6), and masses below 1e-20 are dropped (at most
    ``n`` of them: no probability moves by more than 1e-15).
    The same law as the lot form (:func:`flagged_counts`) for a single sample.
    """
    from lotwise.core.kernels import hypergeometric_pmf

    sizes = np.atleast_1d(np.asarray(n, dtype=np.int64))
    d, N, top = int(d), int(lot_size), int(top)
    parts = [np.arange(*_sample_window(m, d, N)) for m in sizes.tolist()]
    owner = np.repeat(np.arange(sizes.size), [p.size for p in parts])
    t = np.concatenate(parts)
    h = np.asarray(hypergeometric_pmf(t, sizes[owner], N, d), dtype=float)
    keep = h > 1e-20
    t, h, owner = t[keep], h[keep], owner[keep]
    a = _binomial_rows(t, 1.0 - miss_rate, top)
    b = _binomial_rows(sizes[owner] - t, false_alarm, top)
    conv = np.zeros_like(a)
    for j in range(top + 1):
        conv[:, j:] += a[:, j:j + 1] * b[:, :top + 1 - j]
    pmf = np.zeros((sizes.size, top + 1))
    firsts = np.flatnonzero(np.r_[True, owner[1:] != owner[:-1]])
    pmf[owner[firsts]] = np.add.reduceat(h[:, None] * conv, firsts, axis=0)
    out = np.minimum(np.cumsum(pmf, axis=1), 1.0)
    return out if np.ndim(n) else out[0]
