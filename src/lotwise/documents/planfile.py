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
    seed = 20261201                              # seed of the pick list
    strata = "trays=12"                          # stratified pick list
    rejected_lot = "Return to supplier ..."      # what to do with a rejected lot

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
    # scheme = "variables"                       # a measured characteristic: variables plan
    # sigma = "unknown"                          #   known or unknown
    # sigma_value = 0.02                         #   the known sigma
    # upper = 25.00                              #   specification limit(s): upper, lower

A characteristic with a ``plan`` or ``scheme = "variables"`` is judged on a
plan of its own; the others share the part's common attributes sample.

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
from lotwise.core.quantities import InputError, parse_count, parse_level, parse_risk

__all__ = ["Characteristic", "PlanRequest", "load", "loads", "CLASSES"]

CLASSES = ("critical", "major", "minor")
COUNTS = ("items", "nonconformities")

_TOP = {"rationale", "part", "sampling", "lot", "characteristic"}
_PART = {"id", "description", "supplier", "drawing", "revision"}
_LOT = {"size", "definition", "counts"}
_SAMPLING = {"model", "n", "max_n", "cost_per_unit", "seed", "strata", "rejected_lot"}
_CHAR = {"id", "description", "class", "aql", "rql", "alpha", "beta", "c", "plan", "scheme",
         "sigma", "sigma_value", "lower", "upper"}
_VAR_KEYS = ("sigma", "sigma_value", "lower", "upper")


@dataclass(frozen=True, kw_only=True)
class Characteristic:
    """One characteristic (or class of characteristics) judged on the sample."""

    id: str
    description: str
    klass: str
    targets: Targets
    c: int | None = None
    plan: object | None = None
    scheme: str = "single"
    variables: dict = field(default_factory=dict)

    @property
    def own_sample(self) -> bool:
        """Judged on a plan of its own (a given plan notation, or a variables
        design) rather than on the part's common attributes sample."""
        return self.plan is not None or self.scheme != "single"


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
    raw: dict = field(default_factory=dict, repr=False, compare=False)

    @property
    def fixed(self) -> bool:
        """Every plan is given: the sheet audits instead of designing."""
        common = [ch for ch in self.characteristics if not ch.own_sample]
        own = [ch for ch in self.characteristics if ch.own_sample]
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


def _unknown(keys, allowed, where: str, path: str) -> None:
    for k in keys:
        if k not in allowed:
            near = difflib.get_close_matches(k, sorted(allowed), n=1, cutoff=0.5)
            hint = f"; did you mean '{near[0]}'?" if near else \
                f"; allowed: {', '.join(sorted(allowed))}"
            raise InputError(f"{path}: {where}{k}: unknown key{hint}")


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


def loads(text: str, path: str = "<plan>") -> PlanRequest:
    """Validate plan-file text; ``path`` is used in messages."""
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"{path}: not valid TOML ({exc})") from None
    _unknown(doc, _TOP, "", path)
    part = _table(doc, "part", path, required=True)
    _unknown(part, _PART, "part.", path)
    lot = _table(doc, "lot", path)
    _unknown(lot, _LOT, "lot.", path)
    smp = _table(doc, "sampling", path)
    _unknown(smp, _SAMPLING, "sampling.", path)

    part_id = _text(part, "id", "part.", path, required=True)
    counts = lot.get("counts", "items")
    if counts not in COUNTS:
        raise InputError(f"{path}: lot.counts ({counts!r}) must be one of: "
                         + ", ".join(repr(c) for c in COUNTS))
    defects = counts == "nonconformities"
    size = None
    if "size" in lot:
        if not isinstance(lot["size"], int) or isinstance(lot["size"], bool):
            raise InputError(f"{path}: lot.size ({lot['size']!r}) must be a whole number of at "
                             "least 1, written without quotes")
        size = parse_count(lot["size"], f"{path}: lot.size", minimum=1)
    scope = Scope(lot_size=size, defects=defects)

    model = smp.get("model")
    if model is not None:
        if not isinstance(model, str):
            raise InputError(f"{path}: sampling.model ({model!r}) must be text in quotes")
        model = scope.check_model(model, f"{path}: sampling.model")

    def count(key, minimum):
        if key not in smp:
            return None
        v = smp[key]
        if not isinstance(v, int) or isinstance(v, bool):
            raise InputError(f"{path}: sampling.{key} ({v!r}) must be a whole number of at least "
                             f"{minimum}")
        return parse_count(v, f"{path}: sampling.{key}", minimum=minimum)

    n = count("n", 1)
    max_n = count("max_n", 1)
    seed = count("seed", 0)
    if size is not None and n is not None and n > size:
        raise InputError(f"{path}: sampling.n ({n}) must not be greater than lot.size ({size})")
    cost = None
    if "cost_per_unit" in smp:
        v = smp["cost_per_unit"]
        if isinstance(v, bool) or not isinstance(v, (int, float)) or not v >= 0:
            raise InputError(f"{path}: sampling.cost_per_unit ({v!r}) must be a number of at "
                             "least 0")
        cost = float(v)
    strata = _text(smp, "strata", "sampling.", path) or None
    rejected = _text(smp, "rejected_lot", where="sampling.", path=path)
    rationale = _text(doc, "rationale", "", path)

    chars_raw = doc.get("characteristic")
    if chars_raw is None:
        raise InputError(f"{path}: no [[characteristic]] given; at least one is required")
    if not isinstance(chars_raw, list) or not all(isinstance(c, dict) for c in chars_raw):
        raise InputError(f"{path}: characteristic must be an array of tables, written "
                         "[[characteristic]]")
    if not chars_raw:
        raise InputError(f"{path}: no [[characteristic]] given; at least one is required")
    chars = []
    seen = set()
    for i, ch in enumerate(chars_raw, 1):
        w = f"characteristic[{i}]."
        _unknown(ch, _CHAR, w, path)
        cid = _text(ch, "id", w, path, required=True)
        if cid in seen:
            raise InputError(f"{path}: {w}id ({cid!r}) is used twice; ids must be unique")
        seen.add(cid)
        klass = ch.get("class")
        if klass not in CLASSES:
            raise InputError(f"{path}: {w}class ({klass!r}) must be one of: "
                             + ", ".join(CLASSES))
        for key in ("aql", "rql"):
            if key not in ch:
                raise InputError(f"{path}: {w}{key} is missing; it is required")
        aql = parse_level(ch["aql"], f"{path}: {w}aql", per_unit=defects)
        rql = parse_level(ch["rql"], f"{path}: {w}rql", per_unit=defects)
        if not rql > aql:
            raise InputError(f"{path}: {w}rql ({ch['rql']}) must be above {w}aql ({ch['aql']})")
        alpha = parse_risk(ch.get("alpha", 0.05), f"{path}: {w}alpha")
        beta = parse_risk(ch.get("beta", 0.10), f"{path}: {w}beta")
        if alpha + beta >= 1:
            raise InputError(f"{path}: {w}alpha + beta ({alpha:g} + {beta:g}) must be below 1")
        c = None
        if "c" in ch:
            v = ch["c"]
            if not isinstance(v, int) or isinstance(v, bool) or v < 0:
                raise InputError(f"{path}: {w}c ({v!r}) must be a whole number of at least 0")
            c = v
            if n is not None and c > n and not defects:  # per unit c may exceed n
                raise InputError(f"{path}: {w}c ({c}) must not be greater than sampling.n ({n})")
        plan = None
        if "plan" in ch:
            from lotwise.families.base import parse_plan

            plan = parse_plan(_text(ch, "plan", w, path, required=True), f"{path}: {w}plan")
            if c is not None:
                raise InputError(f"{path}: {w}c ({c}) cannot be combined with {w}plan; the plan "
                                 "notation holds the acceptance numbers")
        scheme = ch.get("scheme", "single")
        if scheme not in ("single", "variables"):
            raise InputError(f"{path}: {w}scheme ({scheme!r}) must be 'single' or 'variables'")
        var = {}
        for key in _VAR_KEYS:
            if key in ch:
                if scheme != "variables":
                    raise InputError(f"{path}: {w}{key} needs {w}scheme = \"variables\"")
                v = ch[key]
                if key == "sigma":
                    if v not in ("known", "unknown"):
                        raise InputError(f"{path}: {w}sigma ({v!r}) must be 'known' or 'unknown'")
                elif isinstance(v, bool) or not isinstance(v, (int, float)):
                    raise InputError(f"{path}: {w}{key} ({v!r}) must be a number")
                var[key] = v
        if scheme == "variables":
            if defects:
                raise InputError(f"{path}: {w}scheme (variables) does not apply to "
                                 "nonconformities per unit")
            if "lower" not in var and "upper" not in var:
                raise InputError(f"{path}: {w}scheme (variables) needs {w}upper and/or "
                                 f"{w}lower (specification limits)")
            var.setdefault("sigma", "known" if "sigma_value" in var else "unknown")
            if var["sigma"] == "known" and "sigma_value" not in var:
                raise InputError(f"{path}: {w}sigma (known) needs {w}sigma_value")
            if c is not None or plan is not None:
                raise InputError(f"{path}: {w}scheme (variables) cannot be combined with "
                                 f"{w}c or {w}plan")
        chars.append(Characteristic(id=cid, description=_text(ch, "description", w, path),
                                    klass=klass, targets=Targets(aql=aql, rql=rql, alpha=alpha,
                                                                 beta=beta), c=c, plan=plan,
                                    scheme=scheme, variables=var))
    return PlanRequest(
        path=str(path), part_id=part_id, part_description=_text(part, "description", "part.", path),
        supplier=_text(part, "supplier", "part.", path),
        lot_definition=_text(lot, "definition", "lot.", path), scope=scope, model=model, n=n,
        max_n=max_n, cost_per_unit=cost, seed=seed, strata=strata, rejected_lot=rejected,
        rationale=rationale, characteristics=tuple(chars), raw=doc)


def load(path) -> PlanRequest:
    """Read and validate one plan file."""
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8")
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

