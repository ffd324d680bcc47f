"""Lot records: what the plans promised against what the inspections found.

An inspection department logs every lot it inspects. :func:`read_records`
reads such a log, :func:`summarise` checks each disposition against the
lot's plan and reports, per supplier and part, the acceptance rate, the
process average with an exact interval, a run chart of the lot fractions and
an auditor's cross-check of the acceptance rate against the plan's OC curve.

Columns of the log (names matched without regard to case; spaces and
hyphens count as ``_``):

================ ======== =====================================================
column           required meaning
================ ======== =====================================================
``date``         yes      inspection date, ``YYYY-MM-DD`` (a time may follow)
``supplier``     yes      supplier name or code
``part``         yes      part number
``lot_size``     yes      items in the lot
``sample_size``  yes      items inspected
``found``        yes      nonconforming items found in the sample
``plan``         one of   plan notation, e.g. ``n=80,c=2`` (as ``--plan``)
``plan_file``    one of   a plan file name, looked up in ``--plans DIR``
``disposition``  yes      ``accept`` or ``reject`` (also ``accepted``,
                          ``rejected``, ``A``, ``R``)
``lot_id``       no       the lot's own number, quoted in the findings
================ ======== =====================================================

A row with a missing field, a count that is not a whole number, ``found``
above ``sample_size``, ``sample_size`` above ``lot_size``, an unreadable
date or plan, or the wrong number of fields is a *bad row*: it is reported
with its line number (the header is line 1) and skipped; the rest is used.

What is computed, per supplier and part
---------------------------------------
* lots, accepted and rejected lots, the acceptance rate;
* the process average ``p = sum(found) / sum(sample_size)`` with its exact
  Clopper-Pearson interval [1]_ (``beta`` quantiles via
  ``scipy.special.betaincinv``);
* the run chart: each lot's fraction ``found / sample_size`` against exact
  binomial probability limits at the process average for that lot's sample
  size; a lot is flagged when its count lies beyond the limits, whose tail
  probabilities are 0.135 % on each side (those of three-sigma limits on a
  normal curve; common practice, no source);
* the cross-check: for lots drawn from a process running at ``p`` the count
  in a sample is binomial whatever the lot size, so lot ``i`` is accepted
  with probability ``Pa_i(p)``, the plan's type B OC curve at ``p``. The
  number of accepted lots then follows the distribution of a sum of
  independent Bernoulli trials (one binomial per plan, convolved). Its two
  tail probabilities at the observed count say how unlikely the observed
  acceptance rate is; the rate is called *consistent* when twice the
  smaller tail (the two-sided probability) is at least the significance
  level (5 % by default). The process average is estimated from the same
  lots, which makes the check a little lenient;
* dispositions that disagree with the plan (for a single plan: accept when
  ``found <= c``) and samples whose size differs from the plan's.
* the run rules (common practice, no source): 8 or more lots in a row on
  one side of the centre line (the process average) and 6 or more lots in a
  row each rising or each falling, in inspection order; each signal carries
  a bound on the chance that a stable process at the process average shows
  as much anywhere in the history
  (:func:`lotwise.analysis.supplier.run_p_value`,
  :func:`~lotwise.analysis.supplier.trend_p_value`), and a signal whose bound
  is below the significance level *counts*: the group is then not
  ``consistent`` whatever the OC cross-check says.

JSON (``lotwise records --json``)
--------------------------------
``{"source", "rows_read", "rows_used", "bad_rows": [{"line", "reason"}],
"confidence", "significance", "limit_tail", "groups": [...], "findings":
[...], "plot"}``; each group ``{"supplier", "part", "lots", "accepted",
"rejected", "acceptance_rate", "units_inspected", "nonconforming",
"process_average", "interval": {"lower", "upper", "confidence", "method"},
"oc_check": {"expected_acceptance_rate", "expected_accepted",
"p_at_most_observed", "p_at_least_observed", "two_sided", "consistent"},
"plans": [{"plan", "scheme", "lots", "accepted", "pa_at_process_average"}],
"first_date", "last_date", "out_of_limits", "disposition_mismatches",
"sample_deviations", "dispositions_unchecked", "consistent", "signals": [{"rule",
"description", "direction", "length", "lots": [{"line", "lot_id", "date"}],
"p_value", "counts"}], "beyond_limits": [{"line", "lot_id", "date", "found",
"sample_size", "lower", "upper"}]}``; each finding ``{"line",
"supplier", "part", "lot_id", "date", "plan", "sample_size", "found",
"recorded", "expected", "finding"}``.

References
----------
.. [1] C. J. Clopper and E. S. Pearson, "The use of confidence or fiducial
   limits illustrated in the case of the binomial", *Biometrika* 26 (1934),
   404-413.
.. [2] D. C. Montgomery, *Introduction to Statistical Quality Control*,
   section 7.2 (control charts for fraction nonconforming, probability
   limits).

Examples
--------
A supplier of housings delivered four lots, each sampled with n = 80, c = 2;
one lot was rejected on 3 nonconforming:

>>> import io
>>> log = io.StringIO(
...     "date,supplier,part,lot_size,sample_size,found,plan,disposition\\n"
...     "2024-01-08,Acme,H-100,1000,80,0,\\"n=80,c=2\\",accept\\n"
...     "2024-01-15,Acme,H-100,1000,80,1,\\"n=80,c=2\\",accept\\n"
...     "2024-01-22,Acme,H-100,1000,80,3,\\"n=80,c=2\\",reject\\n"
...     "2024-01-29,Acme,H-100,1000,80,1,\\"n=80,c=2\\",accept\\n")
>>> s = summarise(read_records(log))
>>> g = s.groups[0]
>>> g.lots, g.accepted, round(g.process_average, 4)
(4, 3, 0.0156)
>>> round(g.interval[0], 4), round(g.interval[1], 4)
(0.0051, 0.0361)
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
from scipy import special

from lotwise.core import kernels as oc
from lotwise.core.types import Scope
from lotwise.families.base import parse_plan
from lotwise.core.quantities import MAX_COUNT, InputError

__all__ = ["REQUIRED", "LIMIT_TAIL", "BadRow", "LotRecords", "GroupSummary",
           "RecordsSummary", "read_records", "records_frame", "summarise",
           "clopper_pearson", "binomial_limits", "accepted_tails", "resolve_plan_file",
           "expected_disposition"]

REQUIRED = ("date", "supplier", "part", "lot_size", "sample_size", "found", "disposition")

#: Tail probability on each side of the run chart's limits.
LIMIT_TAIL = 0.00135

_ACCEPT = {"accept": True, "accepted": True, "a": True, "acc": True,
           "reject": False, "rejected": False, "r": False, "rej": False}


@dataclass(frozen=True, kw_only=True)
class BadRow:
    """A skipped row: its line in the file and what is wrong with it."""

    line: int
    reason: str

    def message(self, source: str) -> str:
        return f"{source}: line {self.line}: {self.reason}; row skipped"


@dataclass(frozen=True, kw_only=True)
class LotRecords:
    """Parsed lot records.

    Attributes
    ----------
    frame : pandas.DataFrame
        One row per good lot: ``line, date, supplier, part, lot_id, lot_size,
        sample_size, found, plan_key, accepted`` (``accepted`` is the recorded
        disposition as a bool), in file order.
    plans : dict
        ``plan_key -> plan``.
    bad_rows : list of BadRow
    source : str
    note : str
        How the file was read when it is not plain CSV ('' otherwise).
    """

    frame: object
    plans: dict
    bad_rows: list
    source: str = "records"
    note: str = ""  # how a file not in plain CSV was read (separator, decimal comma)

    @property
    def rows_read(self) -> int:
        return len(self.frame) + len(self.bad_rows)


def clopper_pearson(x, m, confidence: float = 0.95):
    """Exact (Clopper-Pearson) interval for a binomial proportion ``x / m``.

    ``lower = B^{-1}((1 - conf)/2; x, m - x + 1)`` (0 when ``x = 0``) and
    ``upper = B^{-1}((1 + conf)/2; x + 1, m - x)`` (1 when ``x = m``), with
    ``B^{-1}`` the beta quantile [1]_. Vectorised.

    >>> [round(v, 4) for v in clopper_pearson(0, 59, 0.90)]
    [0.0, 0.0495]
    """
    x = np.asarray(x, dtype=float)
    m = np.asarray(m, dtype=float)
    a = (1.0 - confidence) / 2.0
    with np.errstate(all="ignore"):
        lo = np.where(x > 0, special.betaincinv(np.maximum(x, 1e-300), m - x + 1.0, a), 0.0)
        hi = np.where(x < m, special.betaincinv(x + 1.0, np.maximum(m - x, 1e-300), 1.0 - a),
                      1.0)
    if lo.ndim == 0:
        return float(lo), float(hi)
    return lo, hi


def binomial_quantile(n, p, q):
    """Smallest ``k`` with ``P(X <= k) >= q``, ``X ~ Binomial(n, p)``
    (integer bisection on the CDF, which rises in ``k``). Vectorised."""
    n, p, q = np.broadcast_arrays(np.asarray(n, dtype=float), np.asarray(p, dtype=float),
                                  np.asarray(q, dtype=float))
    lo = np.full(n.shape, -1.0)  # P(X <= -1) = 0 < q
    hi = n.copy()                # P(X <= n) = 1 >= q
    act = hi - lo > 1
    while act.any():
        mid = np.floor((lo + hi) / 2.0)
        good = np.asarray(oc.pa_binomial(n, np.maximum(mid, 0.0), p)) >= q
        good &= mid >= 0
        hi = np.where(act & good, mid, hi)
        lo = np.where(act & ~good, mid, lo)
        act = hi - lo > 1
    return hi.astype(np.int64)


def binomial_limits(n, p, tail: float = LIMIT_TAIL):
    """Exact binomial probability limits, as counts, for samples of ``n`` at
    ``p``: ``(lower, upper)`` with ``P(X < lower) <= tail`` and
    ``P(X > upper) <= tail``, each as tight as the whole counts allow.

    A count below ``lower`` or above ``upper`` is out of limits.

    >>> binomial_limits(80, 0.0156)
    (0, 6)
    """
    lower = binomial_quantile(n, p, tail)
    # P(X < lower) = P(X <= lower - 1) < tail by the quantile's definition
    upper = binomial_quantile(n, p, 1.0 - tail)
    if np.ndim(lower) == 0:
        return int(lower), int(upper)
    return lower, upper


def _binom_pmf(L: int, q: float):
    """Binomial(L, q) probabilities, trimmed to where they exceed 1e-300:
    ``(first index, array)``."""
    k = np.arange(L + 1, dtype=float)
    if q <= 0.0:
        return 0, np.array([1.0])
    if q >= 1.0:
        return L, np.array([1.0])
    logp = (special.gammaln(L + 1.0) - special.gammaln(k + 1.0) - special.gammaln(L - k + 1.0)
            + special.xlogy(k, q) + special.xlog1py(L - k, -q))
    keep = np.flatnonzero(logp > -690.0)
    lo, hi = int(keep[0]), int(keep[-1])
    return lo, np.exp(logp[lo:hi + 1])


def accepted_tails(groups, observed: int):
    """Tail probabilities of the number of accepted lots.

    ``groups`` is a list of ``(lots, pa)``: ``lots`` lots each accepted with
    probability ``pa``. Returns ``(P(A <= observed), P(A >= observed),
    expected)``. With one group the tails are incomplete-beta values; with
    several, the binomial distributions are convolved (trimmed below 1e-300).

    >>> [round(v, 4) for v in accepted_tails([(20, 0.95)], 16)]
    [0.0159, 0.9974, 19.0]
    """
    groups = [(int(L), float(p)) for L, p in groups if int(L) > 0]
    expected = float(sum(L * p for L, p in groups))
    total = sum(L for L, _ in groups)
    if not groups:
        return 1.0, 1.0, 0.0
    if len(groups) == 1:
        L, p = groups[0]
        low = float(oc.pa_binomial(L, observed, p)) if observed < L else 1.0
        high = 1.0 - float(oc.pa_binomial(L, observed - 1, p)) if observed > 0 else 1.0
        return low, high, expected
    start, pmf = 0, np.array([1.0])
    for L, p in groups:
        s, q = _binom_pmf(L, p)
        pmf = np.convolve(pmf, q)
        start += s
        keep = np.flatnonzero(pmf > 1e-300)
        pmf = pmf[keep[0]:keep[-1] + 1]
        start += int(keep[0])
    ks = start + np.arange(pmf.size)
    low = float(min(1.0, pmf[ks <= observed].sum()))
    high = float(min(1.0, pmf[ks >= observed].sum()))
    if observed >= total:
        low = 1.0
    if observed <= 0:
        high = 1.0
    return low, high, expected


def resolve_plan_file(name: str, plans_dir) -> object:
    """The plan stored in the plan file ``name`` inside ``plans_dir``.

    The name must stay inside the folder (no absolute paths or ``..``). A
    TOML plan file (see :mod:`lotwise.documents.planfile`) is designed or audited as
    ``lotwise sheet`` would; a file with several characteristics needs the
    one meant after a ``#``: ``qp-1104-relief-spring.toml#M1``. Any other
    file is read as plan notation (its first line that is neither blank nor a
    ``#`` comment, e.g. ``n=80,c=2``).

    Raises :class:`InputError` saying why the plan cannot be had.
    """
    if plans_dir is None:
        raise InputError(f"plan_file ({name}) needs the plans folder: give --plans DIR")
    base = Path(plans_dir)
    name, _, which = str(name).partition("#")
    rel = Path(name)
    if rel.is_absolute() or ".." in rel.parts:
        raise InputError(f"plan_file ({name}) must be a file name inside the plans folder "
                         f"({base})")
    path = base / rel
    if not path.is_file():
        for ext in (".plan", ".toml", ".json", ".txt"):
            if (base / (name + ext)).is_file():
                path = base / (name + ext)
                break
        else:
            raise InputError(f"plan_file ({name}) is not in the plans folder ({base})")
    if path.suffix == ".toml":
        return _plan_from_toml(path, name, which)
    try:
        text = path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"plan_file ({name}) cannot be read: {exc}") from None
    for line in text.splitlines():
        s = line.strip()
        if s and not s.startswith("#"):
            return parse_plan(s, f"plan_file {name}")
    raise InputError(f"plan_file ({name}) holds no plan")


def _plan_from_toml(path, name: str, which: str):
    from lotwise.documents.partplan import resolve
    from lotwise.documents.planfile import load

    pp = resolve(load(path), verdict=False)
    if pp.n is None:
        raise InputError(f"plan_file ({name}) yields no plan: {pp.problem}")
    ids = [r["characteristic"]["id"] for r in pp.reports]
    if not which:
        if len(ids) > 1:
            raise InputError(f"plan_file ({name}) holds {len(ids)} characteristics "
                             f"({', '.join(ids)}); name one, e.g. {name}#{ids[0]}")
        which = ids[0]
    why = next((f["reason"] for f in pp.failed if f["characteristic"]["id"] == which), None)
    if why is not None:
        raise InputError(f"plan_file ({name}#{which}): characteristic {which} has no plan: {why}")
    if which not in ids:
        raise InputError(f"plan_file ({name}#{which}): no characteristic {which!r}; it holds "
                         + ", ".join(ids))
    return pp.plans[ids.index(which)]  # any family: the plan the sheet states


def expected_disposition(plan, lot_size: int, sample_size: int, found: int):
    """What the plan says for a lot: ``(accept, note)``.

    ``accept`` is True or False, or None when the plan cannot decide from
    one cumulative count (then ``note`` says why). For a single plan the lot
    is accepted when ``found <= c``; ``note`` flags a sample whose size is
    not the plan's (``n``, or the whole lot when ``n`` exceeds it). Other
    plan types decide through their method ``disposition(sample_size,
    found) -> "accept" | "reject" | None``, when they offer one.
    """
    rule = plan.count_rule()
    if rule is not None:
        n, c = rule
        want = min(n, lot_size)
        note = "" if sample_size == want else \
            f"sample_size ({sample_size}) differs from the plan's n ({want})"
        return found <= c, note
    try:  # the plan's bench rule on the whole sample taken
        d = plan.decide(int(min(sample_size, plan.max_sample)), int(found))
    except InputError:
        return None, f"{plan.label}: dispositions not checked for this plan type"
    if d.action == "continue":
        return None, f"{plan.label}: no decision at sample_size {sample_size}"
    return d.action == "accept", ""


def read_records(path, *, plans_dir=None, option: str = "RECORDS") -> LotRecords:
    """Read a lot log (see the module's column table).

    ``path`` is a file name (CSV, or an ``.xlsx`` workbook) or an open text
    stream. Bad rows are collected
    in ``bad_rows``, never raised; a file that cannot be read or lacks a
    required column raises :class:`InputError`.
    """
    from lotwise.data.csvio import read_columns

    t = read_columns(path, option, keep=("supplier", "part", "lot_id", "plan", "plan_file",
                                          "date", "disposition"))
    missing = [c for c in REQUIRED if c not in t.header]
    if "plan" not in t.header and "plan_file" not in t.header:
        missing.append("plan (or plan_file)")
    if missing:
        raise InputError(f"{option} ({t.source}) lacks the column(s) {', '.join(missing)}; "
                         f"required: {', '.join(REQUIRED)} and plan or plan_file")
    from dataclasses import replace

    return replace(records_frame(t, plans_dir=plans_dir), note=t.note)


class _Cells:
    """The text cells of a lot-records table and the problems found in its rows
    (a working object of :func:`records_frame`). Each column is held as
    codes into its distinct texts, and every check runs once per text."""

    def __init__(self, t):
        from lotwise.data.csvio import Columns

        t = t if isinstance(t, Columns) else Columns.of(t)
        self.m = len(t)
        self._t = t
        self._factors: dict = {}
        self.reasons: dict[int, list] = {}

    def factor(self, name):
        """``(codes, texts)``: column ``name`` as codes into its distinct
        stripped texts (all '' where the column is missing)."""
        if name not in self._factors:
            if name in self._t.header:
                codes, texts = self._t.factor(name)
                texts = np.array([v.strip() for v in texts.tolist()] + [""], dtype=object)
                self._factors[name] = (np.where(codes < 0, texts.size - 1, codes), texts)
            else:
                self._factors[name] = (np.zeros(self.m, dtype=np.int64),
                                       np.array([""], dtype=object))
        return self._factors[name]

    def sorted_categorical(self, name, rows):
        """Column ``name`` at the rows ``rows`` (a mask) as a pandas
        ``Categorical`` whose categories are in sorted order (so sorting by
        it sorts by the text)."""
        import pandas as pd

        codes, texts = self.factor(name)
        cats, where = np.unique(texts.astype(str), return_inverse=True)
        return pd.Categorical.from_codes(where[codes[rows]],
                                         categories=pd.Index(cats.astype(object), dtype=object))

    def get(self, name):
        """Column ``name`` as stripped text (an array of str)."""
        codes, texts = self.factor(name)
        return texts[codes]

    def note(self, mask, message):
        """Record ``message(i)`` (or a fixed text) for each row ``i`` in ``mask``."""
        for i in np.flatnonzero(mask):
            self.reasons.setdefault(int(i), []).append(message(i) if callable(message)
                                                       else message)

    def whole(self, name, minimum):
        """Whole numbers of column ``name`` and where they are valid."""
        import pandas as pd

        codes, texts = self.factor(name)
        plain = pd.Series(texts, dtype=object).str.strip()
        grouped = plain.str.fullmatch(r"\d{1,3}(?:[,_]\d{3})+")  # 1,000 as --lot-size takes it
        plain = plain.where(~grouped.fillna(False), plain.str.replace(",", "", regex=False))
        num = pd.to_numeric(plain.str.replace("_", "", regex=False),
                            errors="coerce").to_numpy(dtype=float)
        v = num[codes]
        txt = self.get(name)
        with np.errstate(invalid="ignore"):
            badnum = ~np.isfinite(v) | (v != np.floor(v))
        self.note(badnum & (txt != ""), lambda i: f"{name} ({txt[i]!r}) must be a whole number")
        low = ~badnum & (np.where(badnum, minimum, v) < minimum)
        self.note(low, lambda i: f"{name} ({txt[i]}) must be at least {minimum}")
        high = ~badnum & (np.where(badnum, 0, v) > MAX_COUNT)  # beyond int64 too
        self.note(high, lambda i: f"{name} ({txt[i]}) must be at most {MAX_COUNT:,}")
        return np.where(badnum | high, 0, v).astype(np.int64), ~badnum & ~low & ~high


def _counts_checked(cells: _Cells):
    """``lot_size``, ``sample_size`` and ``found`` as whole numbers, with
    samples above the lot and counts above the sample noted."""
    lot, lot_ok = cells.whole("lot_size", 1)
    sample, sample_ok = cells.whole("sample_size", 1)
    found, found_ok = cells.whole("found", 0)
    cells.note(found_ok & sample_ok & (found > sample),
               lambda i: f"found ({found[i]}) is more than sample_size ({sample[i]})")
    cells.note(sample_ok & lot_ok & (sample > lot),
               lambda i: f"sample_size ({sample[i]}) is more than lot_size ({lot[i]})")
    return lot, sample, found


def _dates_checked(cells: _Cells):
    import pandas as pd

    codes, texts = cells.factor("date")
    parsed = pd.to_datetime(pd.Series(texts, dtype=object), format="ISO8601", errors="coerce")
    dates = pd.Series(parsed.to_numpy()[codes])
    dtxt = texts[codes]
    cells.note(dates.isna().to_numpy() & (dtxt != ""),
               lambda i: f"date ({dtxt[i]!r}) must be a date written YYYY-MM-DD")
    return dates


def _dispositions_checked(cells: _Cells):
    import pandas as pd

    codes, texts = cells.factor("disposition")
    disp_txt = texts[codes]
    disp = pd.Series(np.array([_ACCEPT.get(v.lower()) for v in texts.tolist()],
                              dtype=object)[codes])
    cells.note(disp.isna().to_numpy() & (disp_txt != ""),
               lambda i: f"disposition ({disp_txt[i]!r}) must be accept or reject")
    return disp


def _plans_checked(cells: _Cells, plans_dir):
    """Each distinct plan text parsed (or plan file resolved) once:
    ``(plans, key of each row)`` with ``plans`` keyed ``plan:...``/``file:...``."""
    import pandas as pd

    (pc, pt), (fc, ft) = cells.factor("plan"), cells.factor("plan_file")
    pair, first = pd.factorize(pc.astype(np.int64) * ft.size + fc)
    first = np.asarray(first, dtype=np.int64)
    pair_key = [f"plan:{a}" if a != "" else f"file:{b}"
                for a, b in zip(pt[first // ft.size].tolist(), ft[first % ft.size].tolist())]
    uniq, pair_inv = np.unique(np.array(pair_key, dtype=str), return_inverse=True)
    inv = pair_inv[pair]
    key = uniq.astype(object)[inv]
    plans: dict = {}
    plan_err: dict = {}
    failed = np.zeros(uniq.size, dtype=bool)
    for j, k in enumerate(uniq):
        kind, _, txt = k.partition(":")
        if not txt:
            continue
        try:
            plans[k] = parse_plan(txt, "plan") if kind == "plan" else \
                resolve_plan_file(txt, plans_dir)
        except InputError as exc:
            plan_err[k] = str(exc)
            failed[j] = True
    cells.note(failed[inv], lambda i: plan_err[str(key[i])])
    return plans, key


def records_frame(t, *, plans_dir=None) -> LotRecords:
    """Parse a :class:`lotwise.data.csvio.Table` of lot records (vectorised; the
    messages are written only for the rows that need them)."""
    import pandas as pd

    cells = _Cells(t)
    line = np.asarray(t.lines, dtype=np.int64)
    for name in REQUIRED:
        cells.note(cells.get(name) == "", f"missing {name}")
    plan_txt, file_txt = cells.get("plan"), cells.get("plan_file")
    cells.note((plan_txt == "") & (file_txt == ""), "missing plan (give plan or plan_file)")
    cells.note((plan_txt != "") & (file_txt != ""), "give plan or plan_file, not both")
    lot, sample, found = _counts_checked(cells)
    dates = _dates_checked(cells)
    disp = _dispositions_checked(cells)
    plans, plan_key = _plans_checked(cells, plans_dir)

    reasons = cells.reasons
    for i, problem in t.problems.items():
        reasons[i] = [f"the line {problem}"]  # its fields are unreliable
    bad = np.zeros(cells.m, dtype=bool)
    bad[list(reasons)] = True
    bad_rows = [BadRow(line=int(line[i]), reason="; ".join(reasons[i])) for i in sorted(reasons)]
    good = ~bad
    frame = pd.DataFrame({
        "line": line[good],
        "date": dates[good].reset_index(drop=True),
        "supplier": cells.sorted_categorical("supplier", good),
        "part": cells.sorted_categorical("part", good),
        "lot_id": cells.get("lot_id")[good],
        "lot_size": lot[good],
        "sample_size": sample[good],
        "found": found[good],
        "plan_key": plan_key[good].astype(object),
        "accepted": disp[good].astype(bool).reset_index(drop=True),
    })
    used = set(frame["plan_key"].unique())
    return LotRecords(frame=frame, plans={k: v for k, v in plans.items() if k in used},
                      bad_rows=bad_rows, source=t.source)


@dataclass(frozen=True, kw_only=True)
class GroupSummary:
    """One supplier and part.

    ``interval`` is the Clopper-Pearson interval of the process average at
    ``confidence``; ``tails`` are ``P(accepted <= observed)`` and
    ``P(accepted >= observed)`` under the plans' type B OC at the process
    average; ``two_sided`` is ``min(1, 2 * min(tails))``.
    """

    supplier: str
    part: str
    lots: int
    accepted: int
    units_inspected: int
    nonconforming: int
    process_average: float
    interval: tuple
    confidence: float
    expected_accepted: float
    tails: tuple
    two_sided: float
    consistent: bool
    plans: list
    first_date: str
    last_date: str
    out_of_limits: int
    disposition_mismatches: int
    sample_deviations: int
    unchecked: int
    chart: object = None  # DataFrame of the run chart (date order)
    oc_consistent: bool | None = None  # the OC cross-check alone (None: as consistent)
    signals: list = field(default_factory=list)
    beyond_limits: list = field(default_factory=list)

    @property
    def rejected(self) -> int:
        return self.lots - self.accepted

    @property
    def acceptance_rate(self) -> float:
        return self.accepted / self.lots

    @property
    def expected_acceptance_rate(self) -> float:
        return self.expected_accepted / self.lots

    def sentence(self) -> str:
        """How unlikely the observed acceptance rate is, in words."""
        from lotwise.core.quantities import format_pct

        low, high = self.tails
        if self.accepted <= self.expected_accepted:
            what, prob = f"{self.accepted} or fewer", low
        else:
            what, prob = f"{self.accepted} or more", high
        oc_ok = self.consistent if self.oc_consistent is None else self.oc_consistent
        verdict = "consistent with" if oc_ok else "NOT consistent with"
        text = (f"{self.supplier} / {self.part}: {self.accepted} of {self.lots} lots accepted "
                f"({format_pct(self.acceptance_rate)}); the plans' OC at the process average "
                f"{format_pct(self.process_average)} expects {format_pct(self.expected_acceptance_rate)}. "
                f"Seeing {what} accepted lots has probability {_prob(prob)} "
                f"(two-sided {_prob(self.two_sided)}): {verdict} the OC curve.")
        counted = [g for g in self.signals if g["counts"]]
        if counted:
            text += (" The history shifted or drifted: " + "; ".join(
                signal_text(g) for g in counted[:3])
                + (f"; and {len(counted) - 3} more" if len(counted) > 3 else "")
                + ", so no single process average describes it.")
        return text

    def as_dict(self) -> dict:
        return {
            "supplier": self.supplier, "part": self.part, "lots": self.lots,
            "accepted": self.accepted, "rejected": self.rejected,
            "acceptance_rate": self.acceptance_rate,
            "units_inspected": self.units_inspected, "nonconforming": self.nonconforming,
            "process_average": self.process_average,
            "interval": {"lower": self.interval[0], "upper": self.interval[1],
                         "confidence": self.confidence, "method": "Clopper-Pearson"},
            "oc_check": {"expected_acceptance_rate": self.expected_acceptance_rate,
                         "expected_accepted": self.expected_accepted,
                         "p_at_most_observed": self.tails[0],
                         "p_at_least_observed": self.tails[1],
                         "two_sided": self.two_sided,
                         "consistent": self.consistent if self.oc_consistent is None
                         else self.oc_consistent},
            "consistent": self.consistent,
            "signals": self.signals,
            "beyond_limits": self.beyond_limits,
            "plans": self.plans,
            "first_date": self.first_date, "last_date": self.last_date,
            "out_of_limits": self.out_of_limits,
            "disposition_mismatches": self.disposition_mismatches,
            "sample_deviations": self.sample_deviations,
            "dispositions_unchecked": self.unchecked,
        }


def signal_text(sig: dict) -> str:
    """One run-rule signal in words: its lots (lot ids, else lines), what they
    did and how often a stable process does as much."""
    lots = sig["lots"]
    name = lambda x: x["lot_id"] or f"line {x['line']}"  # noqa: E731
    span = f"{name(lots[0])} to {name(lots[-1])} ({lots[0]['date']} to {lots[-1]['date']})"
    what = {"above": "above the centre line", "below": "below the centre line",
            "rising": "each rising", "falling": "each falling"}[sig["direction"]]
    return (f"{sig['length']} lots in a row {what}, {span}; a stable process shows as much "
            f"with probability at most {_prob(sig['p_value'])}")


def _prob(p: float) -> str:
    """A probability in a sentence (:func:`lotwise.core.numbers.probability`)."""
    from lotwise.core.numbers import probability

    return probability(p)


@dataclass(frozen=True, kw_only=True)
class RecordsSummary:
    """Result of :func:`summarise`: per-group summaries and per-lot findings."""

    groups: list
    findings: list = field(default_factory=list)
    bad_rows: list = field(default_factory=list)
    rows_read: int = 0
    rows_used: int = 0
    confidence: float = 0.95
    significance: float = 0.05
    source: str = ""

    def as_dict(self) -> dict:
        return {
            "source": self.source,
            "rows_read": self.rows_read,
            "rows_used": self.rows_used,
            "bad_rows": [{"line": b.line, "reason": b.reason} for b in self.bad_rows],
            "confidence": self.confidence,
            "significance": self.significance,
            "limit_tail": LIMIT_TAIL,
            "groups": [g.as_dict() for g in self.groups],
            "findings": self.findings,
        }


def summarise(records: LotRecords, *, confidence: float = 0.95,
              significance: float = 0.05, supplier: str | None = None,
              part: str | None = None, charts: bool = True) -> RecordsSummary:
    """Summarise lot records per supplier and part (see the module notes).

    ``supplier``/``part`` restrict the summary to one supplier or part.
    ``charts`` keeps each group's run chart (needed for plots). The work is
    done on whole columns: per-group sums by ``bincount``, the limits once
    per distinct (group, sample size), ``Pa`` once per (plan, group).
    """
    df = records.frame
    if supplier is not None:
        df = df[df["supplier"] == supplier]
    if part is not None:
        df = df[df["part"] == part]
    plans = records.plans
    done = dict(bad_rows=list(records.bad_rows), rows_read=records.rows_read,
                confidence=confidence, significance=significance, source=records.source)
    if not len(df):
        return RecordsSummary(groups=[], findings=[], rows_used=0, **done)
    # Inspection order within each supplier and part.
    df = df.sort_values(["supplier", "part", "date", "line"], kind="stable")
    df = df.reset_index(drop=True)
    lots = _Lots.of(df)
    pkeys, pinv = _sorted_codes(lots.keys)
    expect, deviation, notes = _expected_dispositions(lots, plans, pkeys, pinv)
    mismatch = (expect >= 0) & (expect != lots.accepted.astype(np.int8))
    findings = _findings(df, plans, expect, mismatch, deviation, notes)
    # Groups: supplier and part, in sorted order (df is sorted by them).
    gid = df.groupby(["supplier", "part"], sort=True).ngroup().to_numpy()
    G = int(gid.max()) + 1
    stats = _group_sums(lots, gid, G, confidence)
    checks = {"mismatches": mismatch, "deviations": deviation, "unchecked": expect < 0}
    counts = {k: np.bincount(gid, weights=v, minlength=G).astype(np.int64)
              for k, v in checks.items()}
    pairs = _PlanPairs.of(lots, gid, G, pinv, pkeys, plans, stats)
    l_cnt, u_cnt = _run_chart_limits(lots, gid, stats["p"])
    out = (lots.found < l_cnt) | (lots.found > u_cnt)
    counts["out"] = np.bincount(gid, weights=out, minlength=G).astype(np.int64)
    signals, in_signal = _run_signals(df, lots, gid, stats["p"], significance)
    beyond = _lot_list(df, np.flatnonzero(out), gid[out], extra=lambda i: {
        "found": int(lots.found[i]), "sample_size": int(lots.sample[i]),
        "lower": int(l_cnt[i]), "upper": int(u_cnt[i])})
    first = np.flatnonzero(np.r_[True, gid[1:] != gid[:-1]])
    last = np.r_[first[1:] - 1, len(df) - 1]
    dates = df["date"].dt.strftime("%Y-%m-%d").to_numpy()[np.r_[first, last]]
    names = {"supplier": df["supplier"].to_numpy()[first], "part": df["part"].to_numpy()[first],
             "first_date": dates[:G], "last_date": dates[G:]}
    groups = []
    for g in range(G):
        chart = None
        if charts:
            a, b = first[g], last[g] + 1
            s = lots.sample[a:b]
            chart = {"line": df["line"].to_numpy()[a:b], "fraction": lots.found[a:b] / s,
                     "lower": l_cnt[a:b] / s, "upper": u_cnt[a:b] / s,
                     "out": out[a:b], "accepted": lots.accepted[a:b],
                     "lot_id": df["lot_id"].to_numpy()[a:b],
                     "date": df["date"].to_numpy()[a:b], "signal": in_signal[a:b]}
        groups.append(_group_summary(g, names, stats, counts, pairs, pkeys, plans,
                                     confidence=confidence, significance=significance,
                                     chart=chart, signals=signals.get(g, []),
                                     beyond=beyond.get(g, [])))
    return RecordsSummary(groups=groups, findings=findings, rows_used=len(df), **done)


def _sorted_codes(values):
    """``np.unique(values.astype(str), return_inverse=True)`` without a
    fixed-width copy of every value: the distinct values found by hashing,
    then sorted."""
    import pandas as pd

    codes, uniq = pd.factorize(values)
    uniq = np.asarray(uniq, dtype=object).astype(str)
    order = np.argsort(uniq, kind="stable")
    rank = np.empty(order.size, dtype=np.int64)
    rank[order] = np.arange(order.size)
    return uniq[order], rank[codes]


@dataclass(frozen=True, kw_only=True)
class _Lots:
    """The columns of the sorted records :func:`summarise` works on."""

    lot: np.ndarray
    sample: np.ndarray
    found: np.ndarray
    accepted: np.ndarray
    keys: np.ndarray

    @classmethod
    def of(cls, df) -> "_Lots":
        return cls(lot=df["lot_size"].to_numpy(), sample=df["sample_size"].to_numpy(),
                   found=df["found"].to_numpy(), accepted=df["accepted"].to_numpy(dtype=bool),
                   keys=df["plan_key"].to_numpy())


def _expected_dispositions(lots: _Lots, plans, pkeys, pinv):
    """What each lot's plan says: ``(expect, deviation, notes)`` with ``expect``
    1 accept, 0 reject, -1 unknown; vectorised for single plans, per lot
    otherwise."""
    lot, sample, found = lots.lot, lots.sample, lots.found
    expect = np.full(lot.size, -1, dtype=np.int8)
    deviation = np.zeros(lot.size, dtype=bool)
    notes: dict[int, str] = {}
    for j, key in enumerate(pkeys):
        plan = plans[key]
        idx = np.flatnonzero(pinv == j)
        rule = plan.count_rule()
        if rule is not None:
            want = np.minimum(rule[0], lot[idx])
            expect[idx] = (found[idx] <= rule[1]).astype(np.int8)
            dev = sample[idx] != want
            deviation[idx] = dev
            for i, w in zip(idx[dev], want[dev]):
                notes[int(i)] = f"sample_size ({sample[i]}) differs from the plan's n ({w})"
        else:
            for i in idx:
                acc, nt = expected_disposition(plan, int(lot[i]), int(sample[i]),
                                               int(found[i]))
                expect[i] = -1 if acc is None else int(acc)
                if nt:
                    notes[int(i)] = nt
    return expect, deviation, notes


def _group_sums(lots: _Lots, gid, G: int, confidence: float) -> dict:
    """Per group: lots, accepted, units inspected, nonconforming, the process
    average and its Clopper-Pearson interval."""
    count = lambda w=None: np.bincount(gid, weights=w, minlength=G)  # noqa: E731
    n_tot = np.rint(count(lots.sample.astype(float))).astype(np.int64)
    d_tot = np.rint(count(lots.found.astype(float))).astype(np.int64)
    lo, hi = clopper_pearson(d_tot, n_tot, confidence)
    return {"lots": np.bincount(gid, minlength=G),
            "acc": np.rint(count(lots.accepted.astype(float))).astype(np.int64),
            "n_tot": n_tot, "d_tot": d_tot, "p": d_tot / n_tot,
            "lo": np.atleast_1d(lo), "hi": np.atleast_1d(hi)}


@dataclass(frozen=True, kw_only=True)
class _PlanPairs:
    """Each (group, plan) pair, sorted by group: its lots, accepted lots and
    ``Pa`` at the group's process average (type B: lots from the process);
    and per group the expected accepted lots, the two tails of the observed
    count and the two-sided probability; ``start``/``stop`` delimit each
    group's pairs."""

    pg: np.ndarray
    pp: np.ndarray
    lots: np.ndarray
    acc: np.ndarray
    pa: np.ndarray
    expected: np.ndarray
    low: np.ndarray
    high: np.ndarray
    two: np.ndarray
    start: np.ndarray
    stop: np.ndarray

    @classmethod
    def of(cls, lots: _Lots, gid, G: int, pinv, pkeys, plans, stats) -> "_PlanPairs":
        p = stats["p"]
        pair = gid.astype(np.int64) * len(pkeys) + pinv
        upair, pair_inv = np.unique(pair, return_inverse=True)
        pg, pp = upair // len(pkeys), upair % len(pkeys)
        pair_lots = np.bincount(pair_inv)
        pair_acc = np.bincount(pair_inv, weights=lots.accepted).astype(np.int64)
        pair_pa = np.empty(upair.size)
        for j in np.unique(pp):
            sel = pp == j
            pair_pa[sel] = np.asarray(plans[pkeys[j]].pa(p[pg[sel]], "binomial", Scope()),
                                      dtype=float)
        expected = np.bincount(pg, weights=pair_lots * pair_pa, minlength=G)
        low, high = _acceptance_tails(pg, pair_lots, pair_pa, stats["lots"], stats["acc"], G)
        return cls(pg=pg, pp=pp, lots=pair_lots, acc=pair_acc, pa=pair_pa,
                   expected=expected, low=low, high=high,
                   two=np.minimum(1.0, 2.0 * np.minimum(low, high)),
                   start=np.searchsorted(pg, np.arange(G)),
                   stop=np.searchsorted(pg, np.arange(G), side="right"))


def _acceptance_tails(pg, pair_lots, pair_pa, lots, acc, G: int):
    """``P(accepted <= observed)`` and ``P(accepted >= observed)`` per group."""
    multi = np.bincount(pg, minlength=G) > 1
    low = np.empty(G)
    high = np.empty(G)
    one = ~multi
    if one.any():
        # One plan: the number accepted is binomial; tails by the incomplete beta.
        sel = np.flatnonzero(one)
        at = np.searchsorted(pg, sel)  # the group's single pair (pg is sorted)
        L, a, q = lots[sel], acc[sel], pair_pa[at]
        low[sel] = np.where(a >= L, 1.0, oc.pa_binomial(L, np.minimum(a, L), q))
        high[sel] = np.where(a <= 0, 1.0, 1.0 - np.asarray(
            oc.pa_binomial(L, np.maximum(a - 1, 0), q)))
    for g in np.flatnonzero(multi):
        sel = pg == g
        low[g], high[g], _ = accepted_tails(list(zip(pair_lots[sel], pair_pa[sel])),
                                            int(acc[g]))
    return low, high


def _run_chart_limits(lots: _Lots, gid, p):
    """Each lot's probability limits (counts) at its group's process average,
    computed once per distinct (group, sample size)."""
    sample = lots.sample
    gs = gid.astype(np.int64) * (int(sample.max()) + 1) + sample
    ugs, gs_inv = np.unique(gs, return_inverse=True)
    l_u, u_u = binomial_limits(ugs % (int(sample.max()) + 1), p[ugs // (int(sample.max()) + 1)])
    return np.atleast_1d(l_u)[gs_inv], np.atleast_1d(u_u)[gs_inv]


def _lot_list(df, idx, keys, extra=None) -> dict:
    """Lots ``idx`` (indices into the sorted records) as ``{key: [{"line",
    "lot_id", "date", ...}]}``, ``keys[k]`` being the key of lot ``idx[k]``;
    each list in the order of ``idx``."""
    out: dict = {}
    if not len(idx):
        return out
    lines = df["line"].to_numpy()[idx]
    ids = df["lot_id"].to_numpy()[idx]
    dates = df["date"].iloc[idx].dt.strftime("%Y-%m-%d").to_numpy()
    for k, i in enumerate(np.asarray(idx).tolist()):
        item = {"line": int(lines[k]), "lot_id": str(ids[k]), "date": str(dates[k])}
        if extra is not None:
            item.update(extra(i))
        out.setdefault(int(keys[k]), []).append(item)
    return out


def _run_signals(df, lots: _Lots, gid, p, significance: float):
    """The run rules applied to every group's lots in inspection order:
    ``({group: [signal]}, in_signal)``, ``in_signal`` marking the lots of a
    signal that counts. A signal is ``{"rule", "description", "direction", "length",
    "lots", "p_value", "counts"}``; it counts against the history's
    consistency when ``p_value`` (the chance of as much from a stable process
    at the group's process average, a bound) is below ``significance``."""
    from lotwise.analysis.supplier import (RUN_RULES, monotone_runs, run_p_values, side_runs,
                                           side_probabilities, trend_p_value)

    found, sample = lots.found, lots.sample
    in_signal = np.zeros(found.size, dtype=bool)
    found_runs = [("run", side_runs(found, sample, p[gid], gid)),
                  ("trend", monotone_runs(found / sample, gid))]
    if not any(r[0].size for _, r in found_runs):
        return {}, in_signal
    first = np.searchsorted(gid, np.arange(int(gid.max()) + 1))
    last = np.searchsorted(gid, np.arange(int(gid.max()) + 1), side="right")
    chance: dict = {}
    starts, lengths, _ = found_runs[0][1]
    for g in np.unique(gid[starts]).tolist():  # each group's side chances once
        a, b = int(first[g]), int(last[g])
        lens = sorted(set(lengths[gid[starts] == g].tolist()))
        for ln, pv in zip(lens, run_p_values(*side_probabilities(sample[a:b], p[g]), lens)):
            chance[("run", g, ln)] = pv
    items = []
    for rule, (starts, lengths, signs) in found_runs:
        for st, ln, sg in zip(starts.tolist(), lengths.tolist(), signs.tolist()):
            g = int(gid[st])
            key = (rule, g, ln)
            if key not in chance:  # a trend: the chance depends on the lots alone
                chance[key] = trend_p_value(int(last[g] - first[g]), ln)
            direction = ({1: "above", -1: "below"} if rule == "run" else
                         {1: "rising", -1: "falling"})[sg]
            in_signal[st:st + ln] |= chance[key] < significance
            items.append((g, st, ln, {"rule": rule, "description": RUN_RULES[rule],
                                      "direction": direction, "length": int(ln),
                                      "p_value": chance[key],
                                      "counts": bool(chance[key] < significance)}))
    items.sort(key=lambda t: (t[0], t[1]))
    idx = np.concatenate([np.arange(st, st + ln) for _, st, ln, _ in items])
    listed = _lot_list(df, idx, np.repeat(np.arange(len(items)), [ln for _, _, ln, _ in items]))
    out: dict = {}
    for k, (g, _, _, sig) in enumerate(items):
        sig["lots"] = listed[k]
        out.setdefault(g, []).append(sig)
    return out, in_signal


def _group_summary(g, names, stats, counts, pairs: _PlanPairs, pkeys, plans, *,
                   confidence, significance, chart, signals=(), beyond=()) -> GroupSummary:
    """The :class:`GroupSummary` of group ``g``."""
    by_plan = []
    for k in range(pairs.start[g], pairs.stop[g]):
        plan = plans[pkeys[pairs.pp[k]]]
        by_plan.append({"plan": plan.label, "scheme": plan.scheme,
                        "lots": int(pairs.lots[k]), "accepted": int(pairs.acc[k]),
                        "pa_at_process_average": float(pairs.pa[k])})
    two = pairs.two[g]
    return GroupSummary(
        supplier=str(names["supplier"][g]), part=str(names["part"][g]),
        lots=int(stats["lots"][g]),
        accepted=int(stats["acc"][g]), units_inspected=int(stats["n_tot"][g]),
        nonconforming=int(stats["d_tot"][g]), process_average=float(stats["p"][g]),
        interval=(float(stats["lo"][g]), float(stats["hi"][g])),
        confidence=confidence, expected_accepted=float(pairs.expected[g]),
        tails=(float(pairs.low[g]), float(pairs.high[g])), two_sided=float(two),
        consistent=bool(two >= significance) and not any(x["counts"] for x in signals),
        oc_consistent=bool(two >= significance), signals=list(signals),
        beyond_limits=list(beyond), plans=by_plan,
        first_date=str(names["first_date"][g]), last_date=str(names["last_date"][g]),
        out_of_limits=int(counts["out"][g]), disposition_mismatches=int(counts["mismatches"][g]),
        sample_deviations=int(counts["deviations"][g]), unchecked=int(counts["unchecked"][g]),
        chart=chart)


def _findings(df, plans, expect, mismatch, deviation, notes) -> list:
    """Per-lot findings, in file order: wrong dispositions and off-plan samples."""
    out = []
    idx = np.flatnonzero(mismatch | deviation)
    idx = idx[np.argsort(df["line"].to_numpy()[idx], kind="stable")]
    for j in idx:
        row = df.iloc[j]
        plan = plans[row["plan_key"]]
        item = {"line": int(row["line"]), "supplier": row["supplier"], "part": row["part"],
                "lot_id": row["lot_id"], "date": row["date"].date().isoformat(),
                "plan": plan.label, "sample_size": int(row["sample_size"]),
                "found": int(row["found"]),
                "recorded": "accept" if row["accepted"] else "reject"}
        note = notes.get(int(j), "")
        if mismatch[j]:
            item["expected"] = "accept" if expect[j] else "reject"
            item["finding"] = (f"recorded {item['recorded']}, but the plan {plan.label} "
                               f"says {item['expected']} on {item['found']} found")
            if note:
                item["finding"] += f"; {note}"
        else:
            item["expected"] = item["recorded"]
            item["finding"] = note
        out.append(item)
    return out
