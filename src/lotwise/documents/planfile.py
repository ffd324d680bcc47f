"""Plan files: one TOML file per part or characteristic group, read into a
typed request.

A plan file holds what a practitioner writes down for a part: who and what
it is, the lot, what is counted, the characteristics inspected on the same
sample with their class and their own quality levels and risks, any
constraints, and the rationale. Keys are checked strictly: an unknown key is
an error that suggests the nearest valid one, and every message names the
file, the key path, the bad value and what is allowed, e.g.::

    plans/bracket.toml: characteristic[2].rql ('8 percent') must be a number such as 0.01, 1% or 250ppm

Format
------
::

    rationale = "Why these levels: ..."          # optional, free text

    [part]
    id = "HV-2210"                               # required
    description = "Relief valve spring"
    supplier = "Example Springs"
    drawing = "D-2210-04"                        # printed on the sheet and the record form
    revision = "C"

    [lot]
    size = 1200                                  # optional: the lot size
    definition = "one delivery, one coil lot"
    counts = "items"                             # "items" (nonconforming items, default)
                                                 # or "nonconformities" (per unit)

    [sampling]                                   # all optional
    model = "hypergeometric"                     # override of the exact model
    n = 125                                      # fixed sample size (with every c: an audit)
    max_n = 200                                  # largest affordable sample
    cost_per_unit = 4.5                          # currency per inspected unit
    deliveries_per_year = 52                     # lots received per year (yearly cost)
    seed = 20261201                              # seed of the pick list
    strata = "trays=12"                          # stratified pick list
    rejected_lot = "Return to supplier ..."      # what to do with a rejected lot

    [approvals]                                  # optional: printed on the sheet;
    prepared_by = "A. Person"                    # lines to sign where not given
    approved_by = "B. Person"
    date = "2026-12-01"

    [inspection]                                 # optional: the inspection errs
    miss_rate = "10%"                            # nonconforming item judged conforming
    false_alarm = "2%"                           # conforming item judged nonconforming
    # study = "missed 4 of 50 nonconforming; flagged 2 of 50 conforming"
    #                                            # or both rates from an agreement study
    #                                            # (risks also at its 95 % upper bounds)

    [[characteristic]]                           # one or more
    id = "C1"
    description = "Free length"
    class = "critical"                           # critical, major or minor
    aql = "0.1%"
    rql = "2.5%"
    alpha = "5%"                                 # default 5 %
    beta = "5%"                                  # default 10 %
    c = 0                                        # fixed acceptance number (optional)
    # plan = "n1=50,c1=1,r1=4,n2=100,c2=3"       # or a given plan of any type (audited)
    # scheme = "double"                          # or design another kind of plan:
    #                                            #   single (default), double, sequential,
    #                                            #   chain or variables (any family with a
    #                                            #   designer), with that family's options:
    # ratio = 1.0                                #   double: n2 / n1 (default 2)
    # minimize = "asn-max"                       #   double: asn-aql (default) or asn-max
    # truncate = 150                             #   sequential: most units before deciding
    # sigma = "unknown"                          #   variables: known or unknown
    # sigma_value = 0.02                         #   variables: the known sigma
    # upper = 25.00                              #   variables: specification limit(s)
    # limit = "upper"                            #   variables: upper, lower or both

A characteristic with a ``plan`` or a ``scheme`` other than single is judged
on a plan of its own (designed by its family's designer through the
registry, with ``sampling.max_n`` as its cap where the family takes one);
the others share the part's common attributes sample. The allowed option
keys are those of :attr:`lotwise.families.base.Family.design_options`; a key
of another scheme is refused, naming the scheme it needs.

With ``[inspection]`` every characteristic is designed and judged at the true
quality (the plan sentences what the inspection flags, see
:mod:`lotwise.families.misclassified`); it applies to attribute plans.

A file may also hold a switching scheme (``[switching]``, ``[switching.rules]``)
and a table of plans by lot size (``[[table]]``), with file-level ``aql``,
``rql``, ``max_alpha`` and ``max_beta`` for them; such a file may omit
``[[characteristic]]`` (see :mod:`lotwise.documents.schemefile`).

Examples
--------
>>> req = loads('''
... [part]
... id = "P-1"
... [[characteristic]]
... id = "M1"
... class = "major"
... aql = "1%"
... rql = "8%"
... ''', "example.toml")
>>> req.characteristics[0].targets.rql
0.08
"""

from __future__ import annotations

import difflib
import hashlib
import json
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

from lotwise.core.types import Targets
from lotwise.core.types import Scope
from lotwise.core.quantities import (MAX_COUNT, InputError, parse_count, parse_level,
                                     parse_risk, parse_seed)
from lotwise.documents.schemefile import parse_extras

__all__ = ["Characteristic", "PlanRequest", "load", "loads", "CLASSES"]

CLASSES = ("critical", "major", "minor")
COUNTS = ("items", "nonconformities")

_TOP = {"rationale", "part", "sampling", "lot", "characteristic", "switching", "table",
        "aql", "rql", "max_alpha", "max_beta", "inspection", "approvals"}
_APPROVALS = {"prepared_by", "approved_by", "date"}
_INSPECTION = {"miss_rate", "false_alarm", "study"}
_PART = {"id", "description", "supplier", "drawing", "revision"}
_LOT = {"size", "definition", "counts"}
_SAMPLING = {"model", "n", "max_n", "cost_per_unit", "deliveries_per_year", "seed", "strata",
             "rejected_lot"}
_CHAR_BASE = {"id", "description", "class", "aql", "rql", "alpha", "beta", "c", "plan", "scheme",
              "inspection"}
#: ``characteristic.inspection``: sampling (the default) or every item.
INSPECTIONS = ("sampling", "100%")
#: Designer options that live in [sampling] (the part's, not a characteristic's).
_PART_OPTIONS = {"n", "c", "max_n"}


@dataclass(frozen=True, kw_only=True)
class Characteristic:
    """One characteristic (or class of characteristics) judged on the sample."""

    id: str
    description: str
    klass: str
    targets: Targets | None  # None with inspection = "100%"
    c: int | None = None
    plan: object | None = None
    scheme: str = "single"
    options: dict = field(default_factory=dict)
    #: Only the RQL and beta were given, with c = 0 (no AQL; ``targets.aql`` is 0): the
    #: producer's side is stated as the quality level where Pa = 1 - alpha.
    rql_only: bool = False
    #: ``inspection = "100%"``: every item is inspected for it; no sample, no targets.
    full_inspection: bool = False

    @property
    def own_sample(self) -> bool:
        """Judged on a plan of its own (a given plan notation, or a design of
        another scheme than single) rather than on the part's common
        attributes sample."""
        from lotwise.families.base import family

        return self.plan is not None or not family(self.scheme).plan_class.common_sample


@dataclass(frozen=True, kw_only=True)
class PlanRequest:
    """A plan file, validated.

    ``fixed`` is True when the file fixes the whole plan (``sampling.n`` and
    every characteristic's ``c``): the sheet then audits instead of designing.
    """

    path: str
    part_id: str
    part_description: str = ""
    supplier: str = ""
    drawing: str = ""
    revision: str = ""
    approvals: dict = field(default_factory=dict)  # prepared_by, approved_by, date (text)
    deliveries_per_year: float | None = None
    lot_definition: str = ""
    scope: Scope = field(default_factory=Scope)
    model: str | None = None
    n: int | None = None
    max_n: int | None = None
    cost_per_unit: float | None = None
    seed: int | None = None
    strata: str | None = None
    rejected_lot: str = ""
    rationale: str = ""
    characteristics: tuple[Characteristic, ...] = ()
    switching: object | None = None   # a Scheme (see lotwise.documents.schemefile)
    table: tuple = ()                 # TableRow per [[table]] row
    limits: object | None = None      # AuditLimits of [switching] and [[table]]
    inspection: object | None = None  # ErrorRates of [inspection], or None
    raw: dict = field(default_factory=dict, repr=False, compare=False)

    @property
    def sampled(self) -> tuple:
        """The characteristics judged by sampling (not ``inspection = "100%"``)."""
        return tuple(ch for ch in self.characteristics if not ch.full_inspection)

    @property
    def fixed(self) -> bool:
        """Every plan is given: the sheet audits instead of designing."""
        common = [ch for ch in self.sampled if not ch.own_sample]
        own = [ch for ch in self.sampled if ch.own_sample]
        return (all(ch.plan is not None for ch in own)
                and (not common or (self.n is not None and all(ch.c is not None for ch in common))))

    @property
    def stem(self) -> str:
        return Path(self.path).stem

    def fingerprint(self) -> str:
        """SHA-256 (first 16 hex digits) of the file's parsed content in a
        canonical form: the same inputs give the same fingerprint whatever
        the comments, key order or layout."""
        blob = json.dumps(self.raw, sort_keys=True, separators=(",", ":"), default=str)
        return hashlib.sha256(blob.encode("utf-8")).hexdigest()[:16]


def option_keys() -> dict[str, list[str]]:
    """Characteristic keys that are designer options: ``key -> schemes using it``
    (read from the family registry; ``n``, ``c`` and ``max_n`` are the part's)."""
    from lotwise.families.base import option_owners

    return option_owners(tuple(_PART_OPTIONS))


def _char_keys() -> set:
    return _CHAR_BASE | set(option_keys())


def _scheme_options(ch: dict, w: str, path: str, per_unit: bool, c, plan) -> tuple[str, dict]:
    """The characteristic's scheme and its designer options, checked.

    ``scheme`` names any family with a designer (default ``single``); its
    options are the family's ``design_options`` written as keys of the
    characteristic. A given ``plan`` fixes the plan instead.
    """
    from lotwise.families.base import design_option, designable, family

    owners = option_keys()
    given = [k for k in ch if k in owners]
    scheme = ch.get("scheme", "single")
    if plan is not None:  # a fixed plan: nothing to design
        if given:
            raise InputError(f"{path}: {w}plan cannot be combined with "
                             + ", ".join(f"{w}{k}" for k in given)
                             + f": the plan notation fixes the plan ({w}scheme and its keys "
                             "design one instead)")
        if "scheme" in ch and str(scheme).strip().lower() != plan.scheme:
            raise InputError(f"{path}: {w}scheme ({scheme!r}) does not match {w}plan (a "
                             f"{plan.scheme} plan); give one of them")
        return plan.scheme, {}
    names = designable()
    if not isinstance(scheme, str) or scheme.strip().lower() not in names:
        raise InputError(f"{path}: {w}scheme ({scheme!r}) must be one of: {', '.join(names)} "
                         f"(a plan of another kind is given as {w}plan = \"...\")")
    scheme = scheme.strip().lower()
    fam = family(scheme)
    if c is not None and not fam.plan_class.common_sample:
        raise InputError(f"{path}: {w}c ({c}) applies to scheme single; {w}scheme ({scheme}) "
                         "designs its own acceptance numbers")
    options = {}
    for key in given:
        if key not in fam.design_options:
            raise InputError(f"{path}: {w}{key} needs {w}scheme = "
                             + " or ".join(f'"{s}"' for s in owners[key])
                             + f" (it is {scheme!r})")
        options[key] = design_option(fam, key, ch[key], f"{path}: {w}{key}")
    if fam.check_options is not None:
        try:
            fam.check_options(options, per_unit=per_unit, key=lambda name: f"{w}{name}")
        except InputError as exc:
            raise InputError(f"{path}: {exc}") from None
    return scheme, options


def _unknown(keys, allowed, where: str, path: str) -> None:
    """Refuse the unknown keys of one table (all of them, in one message)."""
    bad = []
    for k in keys:
        if k not in allowed:
            near = difflib.get_close_matches(k, sorted(allowed), n=1, cutoff=0.5)
            hint = f"; did you mean '{near[0]}'?" if near else \
                f"; allowed: {', '.join(sorted(allowed))}"
            bad.append(f"{where}{k}: unknown key{hint}")
    if bad:
        raise InputError(f"{path}: " + "; ".join(bad))


def _table(doc: dict, key: str, path: str, required: bool = False) -> dict:
    value = doc.get(key)
    if value is None:
        if required:
            raise InputError(f"{path}: [{key}] is missing; it is required")
        return {}
    if not isinstance(value, dict):
        raise InputError(f"{path}: {key} ({value!r}) must be a table, written [{key}]")
    return value


def _text(table: dict, key: str, where: str, path: str, required: bool = False) -> str:
    value = table.get(key)
    if value is None:
        if required:
            raise InputError(f"{path}: {where}{key} is missing; it is required")
        return ""
    if not isinstance(value, str):
        raise InputError(f"{path}: {where}{key} ({value!r}) must be text in quotes")
    if required and not value.strip():
        raise InputError(f"{path}: {where}{key} ('') must not be empty")
    return value


def _choice(value):
    """An enumeration's value as written, compared without case or surrounding spaces
    (``"Major"`` is ``"major"``); anything but text is returned as it is."""
    return value.strip().lower() if isinstance(value, str) else value


def _scope(lot: dict, path: str) -> Scope:
    """The scope of ``[lot]``: ``counts`` (items or nonconformities) and ``size``."""
    counts = _choice(lot.get("counts", "items"))
    if counts not in COUNTS:
        raise InputError(f"{path}: lot.counts ({counts!r}) must be one of: "
                         + ", ".join(repr(c) for c in COUNTS))
    per_unit = counts == "nonconformities"
    size = None
    if "size" in lot:
        if not isinstance(lot["size"], int) or isinstance(lot["size"], bool):
            raise InputError(f"{path}: lot.size ({lot['size']!r}) must be a whole number of at "
                             "least 1, written without quotes")
        size = parse_count(lot["size"], f"{path}: lot.size", minimum=1)
    return Scope(lot_size=size, per_unit=per_unit)


def _model(smp: dict, scope: Scope, path: str):
    """``sampling.model`` checked against the scope, or None."""
    model = smp.get("model")
    if model is not None:
        if not isinstance(model, str):
            raise InputError(f"{path}: sampling.model ({model!r}) must be text in quotes")
        model = scope.check_model(model, f"{path}: sampling.model")
    return model


def _sampling_count(smp: dict, key: str, minimum: int, path: str):
    """A whole number ``sampling.<key>`` of at least ``minimum``, or None."""
    if key not in smp:
        return None
    v = smp[key]
    if not isinstance(v, int) or isinstance(v, bool):
        raise InputError(f"{path}: sampling.{key} ({v!r}) must be a whole number of at least "
                         f"{minimum}")
    return parse_count(v, f"{path}: sampling.{key}", minimum=minimum)


def _seed(smp: dict, path: str):
    """``sampling.seed`` (the pick list's: a whole number from 0 to 2**128 - 1), or None."""
    if "seed" not in smp:
        return None
    v = smp["seed"]
    if not isinstance(v, int) or isinstance(v, bool):
        raise InputError(f"{path}: sampling.seed ({v!r}) must be a whole number from 0 to "
                         "2**128 - 1, written without quotes")
    return parse_seed(v, f"{path}: sampling.seed", bits=128)


def _strata(smp: dict, size, path: str):
    """``sampling.strata``, checked against ``lot.size`` as the pick list will
    use it, or None."""
    strata = _text(smp, "strata", "sampling.", path) or None
    if strata is None:
        return None
    from lotwise.data.draw import split_strata

    key = {"option": f"{path}: sampling.strata", "lot_option": "lot.size"}
    if size is not None:
        split_strata(size, strata, **key)
    elif "," not in strata:  # a count of strata: its form and range (sizes need the lot)
        split_strata(MAX_COUNT, strata, **key)
    return strata


def _cost(smp: dict, path: str):
    """``sampling.cost_per_unit`` (a number of at least 0), or None."""
    if "cost_per_unit" not in smp:
        return None
    v = smp["cost_per_unit"]
    if isinstance(v, bool) or not isinstance(v, (int, float)) or not v >= 0:
        raise InputError(f"{path}: sampling.cost_per_unit ({v!r}) must be a number of at "
                         "least 0")
    return float(v)


def _deliveries(smp: dict, path: str):
    """``sampling.deliveries_per_year`` (a number above 0), or None."""
    if "deliveries_per_year" not in smp:
        return None
    v = smp["deliveries_per_year"]
    if isinstance(v, bool) or not isinstance(v, (int, float)) or not 0 < v <= 1e6:
        raise InputError(f"{path}: sampling.deliveries_per_year ({v!r}) must be a number above "
                         "0 and at most 1000000 (lots received per year)")
    return float(v)


def _approvals(doc: dict, path: str) -> dict:
    """``[approvals]``: prepared_by, approved_by and date as text (a TOML date
    is written as it stands); the sheet leaves lines to sign for those missing."""
    import datetime as _dt

    ap = _table(doc, "approvals", path)
    _unknown(ap, _APPROVALS, "approvals.", path)
    out = {}
    for key in sorted(_APPROVALS):
        if key == "date" and isinstance(ap.get(key), _dt.date):
            out[key] = ap[key].isoformat()
        elif key in ap:
            out[key] = _text(ap, key, "approvals.", path).strip()
    return out


def _targets(ch: dict, w: str, path: str, per_unit: bool) -> Targets:
    """A characteristic's AQL, RQL and risks. Only the RQL and beta may be given when
    ``c = 0`` (a critical characteristic: no AQL, ``aql`` is then 0)."""
    if "rql" not in ch:
        raise InputError(f"{path}: {w}rql is missing; it is required")
    if "aql" not in ch:
        if ch.get("c") != 0 or isinstance(ch.get("c"), bool) or "plan" in ch or \
                _choice(ch.get("scheme", "single")) != "single":
            raise InputError(f"{path}: {w}aql is missing; it is required (or give only "
                             f"{w}rql and beta with {w}c = 0, an accept-on-zero plan)")
    aql = parse_level(ch["aql"], f"{path}: {w}aql", per_unit=per_unit) if "aql" in ch else 0.0
    rql = parse_level(ch["rql"], f"{path}: {w}rql", per_unit=per_unit)
    if "aql" in ch and not rql > aql:
        raise InputError(f"{path}: {w}rql ({ch['rql']}) must be above {w}aql ({ch['aql']})")
    alpha = parse_risk(ch.get("alpha", 0.05), f"{path}: {w}alpha")
    beta = parse_risk(ch.get("beta", 0.10), f"{path}: {w}beta")
    if alpha + beta >= 1:
        raise InputError(f"{path}: {w}alpha + beta ({alpha:g} + {beta:g}) must be below 1")
    return Targets(aql=aql, rql=rql, alpha=alpha, beta=beta)


def _fixed_c(ch: dict, w: str, path: str, n, per_unit: bool = False):
    """A characteristic's fixed acceptance number (at most ``sampling.n`` when
    items are counted; per unit it may exceed it), or None."""
    if "c" not in ch:
        return None
    v = ch["c"]
    if not isinstance(v, int) or isinstance(v, bool) or v < 0:
        raise InputError(f"{path}: {w}c ({v!r}) must be a whole number of at least 0")
    if n is not None and v > n and not per_unit:
        raise InputError(f"{path}: {w}c ({v}) must not be greater than sampling.n ({n})")
    return v


def _own_plan(ch: dict, w: str, path: str, c, size=None):
    """A characteristic's own plan notation, parsed, or None; it may not
    inspect more than the lot (``size``, when given)."""
    if "plan" not in ch:
        return None
    from lotwise.families.base import parse_plan

    text = _text(ch, "plan", w, path, required=True)
    plan = parse_plan(text, f"{path}: {w}plan")
    if size is not None and plan.max_sample > size:
        raise InputError(f"{path}: {w}plan ({text}) inspects up to {plan.max_sample:,} units, "
                         f"more than lot.size ({size:,})")
    if c is not None:
        raise InputError(f"{path}: {w}c ({c}) cannot be combined with {w}plan; the plan "
                         "notation holds the acceptance numbers")
    return plan


def _inspection(doc: dict, path: str):
    """``[inspection]``: the misclassification rates (stated, or from a study), or None."""
    from lotwise.core.inspection import read_rates

    insp = _table(doc, "inspection", path)
    _unknown(insp, _INSPECTION, "inspection.", path)
    if "study" in insp and not isinstance(insp["study"], str):
        raise InputError(f"{path}: inspection.study ({insp['study']!r}) must be text in quotes, "
                         'e.g. "missed 4 of 50 nonconforming; flagged 2 of 50 conforming"')
    for key in ("miss_rate", "false_alarm"):
        if isinstance(insp.get(key), bool):
            raise InputError(f"{path}: inspection.{key} ({insp[key]!r}) must be a rate such as "
                             "0.1 or \"10%\"")
    return read_rates(insp.get("miss_rate"), insp.get("false_alarm"), insp.get("study"),
                      names=("inspection.miss_rate", "inspection.false_alarm",
                             "inspection.study"), prefix=f"{path}: ")


def _characteristic(ch: dict, i: int, path: str, *, per_unit: bool, n, seen: set, size=None,
                    err: "_Errors | None" = None):
    """``[[characteristic]]`` number ``i`` (from 1), validated; its id is added
    to ``seen``. Its errors go to ``err`` (all of them; None when any), or the
    first is raised when ``err`` is None."""
    own = err is None
    err = _Errors(path) if own else err
    before = len(err.messages)
    w = f"characteristic[{i}]."
    err.take(_unknown, ch, _char_keys(), w, path)
    cid = err.take(_text, ch, "id", w, path, required=True, default="")
    if cid and cid in seen:
        err.take(_refuse, f"{path}: {w}id ({cid!r}) is used twice; ids must be unique")
    seen.add(cid)
    klass = _choice(ch.get("class"))
    if klass not in CLASSES:
        err.take(_refuse, f"{path}: {w}class ({ch.get('class')!r}) must be one of: "
                 + ", ".join(CLASSES))
    insp = _choice(ch.get("inspection", "sampling"))
    insp = insp.replace(" ", "") if isinstance(insp, str) else insp
    if insp not in INSPECTIONS:
        err.take(_refuse, f"{path}: {w}inspection ({ch['inspection']!r}) must be one of: "
                 + ", ".join(f'"{v}"' for v in INSPECTIONS))
    description = err.take(_text, ch, "description", w, path, default="")
    if insp == "100%":  # every item inspected: nothing to sample, no targets
        for k in ch:
            if k not in ("id", "description", "class", "inspection") and k in _char_keys():
                err.take(_refuse, f"{path}: {w}{k} does not apply with {w}inspection = "
                                  "\"100%\" (every item is inspected: no sample, no AQL or "
                                  "RQL); remove it or inspect by sampling")
        result = Characteristic(id=cid, description=description, klass=klass,
                                targets=None, full_inspection=True)
    else:
        targets = err.take(_targets, ch, w, path, per_unit)
        c = err.take(_fixed_c, ch, w, path, n, per_unit)
        plan = err.take(_own_plan, ch, w, path, c, size)
        scheme, options = err.take(_scheme_options, ch, w, path, per_unit, c, plan,
                                   default=("single", {}))
        result = Characteristic(id=cid, description=description,
                                klass=klass, targets=targets, c=c, plan=plan,
                                scheme=scheme, options=options, rql_only="aql" not in ch)
    if own:
        if err.messages:
            raise InputError(err.messages[0])
        return result
    return None if len(err.messages) > before else result


#: Largest plan file read (characters): a plan file is a page of text.
MAX_CHARS = 1_000_000
#: Deepest nesting of arrays and inline tables in a plan file.
MAX_DEPTH = 16


def _nesting(text: str) -> int:
    """The deepest nesting of ``[`` and ``{`` in TOML ``text``, outside strings
    and comments (an upper bound: a ``[table]`` header counts as one level)."""
    depth = deepest = i = 0
    size = len(text)
    while i < size:
        ch = text[i]
        if ch == "#":
            j = text.find("\n", i)
            i = size if j < 0 else j
        elif ch in "\"'":
            quote = text[i:i + 3] if text[i:i + 3] in ('"""', "'''") else ch
            j = i + len(quote)
            while j < size and text[j:j + len(quote)] != quote:
                j += 2 if ch == '"' and text[j] == "\\" else 1
                if len(quote) == 1 and j < size and text[j] == "\n":
                    break
            i = j + len(quote)
            continue
        elif ch in "[{":
            depth += 1
            deepest = max(deepest, depth)
        elif ch in "]}":
            depth = max(0, depth - 1)
        i += 1
    return deepest


def _bounded(text: str, path: str) -> None:
    """Refuse a file too large or too deeply nested to be a plan file, before parsing."""
    if len(text) > MAX_CHARS:
        raise InputError(f"{path}: the file ({len(text):,} characters) is too large for a plan "
                         f"file; at most {MAX_CHARS:,} characters are read")
    depth = _nesting(text)
    if depth > MAX_DEPTH:
        raise InputError(f"{path}: arrays or inline tables nested {depth} deep; a plan file "
                         f"nests them at most {MAX_DEPTH} deep")


class _Errors:
    """Every error of one plan file, gathered so the file is reported at once.

    ``take(fn, *args, default=...)`` runs one check and returns its value, or
    ``default`` after noting its :class:`InputError`; ``raise_all`` raises one
    :class:`InputError` whose single line lists them all (the first message as
    it stands when there is only one).
    """

    def __init__(self, path: str):
        self.path = str(path)
        self.messages: list[str] = []

    def take(self, fn, *args, default=None, **kw):
        try:
            return fn(*args, **kw)
        except InputError as exc:
            self.messages.append(str(exc))
            return default

    def raise_all(self) -> None:
        if not self.messages:
            return
        if len(self.messages) == 1:
            raise InputError(self.messages[0])
        head = f"{self.path}: "
        parts = [m[len(head):] if m.startswith(head) else m for m in self.messages]
        raise InputError(f"{self.path}: {len(parts)} errors: " + "; ".join(parts))


def loads(text: str, path: str = "<plan>") -> PlanRequest:
    """Validate plan-file text; ``path`` is used in messages.

    Every error of the file is reported at once, in one :class:`InputError`
    (its message one line, listing each error with its key path)."""
    _bounded(text, path)
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"{path}: not valid TOML ({exc})") from None
    err = _Errors(path)
    err.take(_unknown, doc, _TOP, "", path)
    part = err.take(_table, doc, "part", path, required=True)
    missing_part = part is None  # (then part.id is not reported again)
    part = part or {}
    err.take(_unknown, part, _PART, "part.", path)
    lot = err.take(_table, doc, "lot", path, default={})
    err.take(_unknown, lot, _LOT, "lot.", path)
    smp = err.take(_table, doc, "sampling", path, default={})
    err.take(_unknown, smp, _SAMPLING, "sampling.", path)

    part_id = "" if missing_part else err.take(_text, part, "id", "part.", path,
                                               required=True, default="")
    scope = err.take(_scope, lot, path, default=Scope())
    per_unit, size = scope.per_unit, scope.lot_size
    model = err.take(_model, smp, scope, path)
    n = err.take(_sampling_count, smp, "n", 1, path)
    max_n = err.take(_sampling_count, smp, "max_n", 1, path)
    seed = err.take(_seed, smp, path)
    if size is not None and n is not None and n > size:
        err.take(_refuse, f"{path}: sampling.n ({n}) must not be greater than lot.size ({size})")
    cost = err.take(_cost, smp, path)
    strata = err.take(_strata, smp, size, path)
    rejected = err.take(_text, smp, "rejected_lot", where="sampling.", path=path, default="")
    rationale = err.take(_text, doc, "rationale", "", path, default="")
    inspection = err.take(_inspection, doc, path)

    # [switching], [[table]]: a file with them may omit [[characteristic]]
    extras = parse_extras(doc, scope, path, _unknown, err=err)  # (its errors go to err)
    chars_raw = doc.get("characteristic",
                        [] if "switching" in doc or "table" in doc else None)
    chars = []
    if chars_raw is None:
        err.take(_refuse, f"{path}: no [[characteristic]] given; at least one is required")
    elif not isinstance(chars_raw, list) or not all(isinstance(c, dict) for c in chars_raw):
        err.take(_refuse, f"{path}: characteristic must be an array of tables, written "
                          "[[characteristic]]")
    elif not chars_raw and "characteristic" in doc:
        err.take(_refuse, f"{path}: no [[characteristic]] given; at least one is required")
    else:
        seen = set()
        for i, ch in enumerate(chars_raw, 1):
            one = _characteristic(ch, i, path, per_unit=per_unit, n=n, seen=seen, size=size,
                                  err=err)
            if one is not None:
                chars.append(one)
    descriptions = [err.take(_text, part, key, "part.", path, default="")
                    for key in ("description", "supplier")]
    definition = err.take(_text, lot, "definition", "lot.", path, default="")
    drawing, revision = (err.take(_text, part, key, "part.", path, default="")
                         for key in ("drawing", "revision"))
    approvals = err.take(_approvals, doc, path, default={})
    deliveries = err.take(_deliveries, smp, path)
    err.raise_all()
    return PlanRequest(
        path=str(path), part_id=part_id, part_description=descriptions[0],
        supplier=descriptions[1], drawing=drawing, revision=revision,
        approvals=approvals, deliveries_per_year=deliveries, lot_definition=definition,
        scope=scope, model=model, n=n,
        max_n=max_n, cost_per_unit=cost, seed=seed, strata=strata, rejected_lot=rejected,
        rationale=rationale, characteristics=tuple(chars), raw=doc, inspection=inspection,
        **extras)


def _refuse(message: str):
    raise InputError(message)


def load(path) -> PlanRequest:
    """Read and validate one plan file."""
    p = Path(path)
    try:
        if p.is_file() and p.stat().st_size > 4 * MAX_CHARS:
            raise InputError(f"{path}: the file ({p.stat().st_size:,} bytes) is too large for "
                             f"a plan file; at most {MAX_CHARS:,} characters are read")
        raw = p.read_bytes()
        text = raw.decode("utf-16") if raw.startswith((b"\xff\xfe", b"\xfe\xff")) \
            else raw.decode("utf-8-sig")  # a byte-order mark, as editors may write, is not TOML
    except FileNotFoundError:
        raise InputError(f"{path}: no such plan file") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"{path}: cannot be read ({exc})") from None
    return loads(text, str(path))


def plan_files(paths) -> list[Path]:
    """Expand folders to their ``*.toml`` files (sorted); keep files as given."""
    out = []
    for item in paths:
        p = Path(item)
        if p.is_dir():
            found = sorted(p.glob("*.toml"))
            if not found:
                raise InputError(f"{item}: the folder holds no plan files (*.toml)")
            out.extend(found)
        elif p.exists():
            out.append(p)
        else:
            raise InputError(f"{item}: no such plan file or folder")
    return out

