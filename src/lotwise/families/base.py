"""The plan interface, the registry of plan families and plan notation.

Every plan family (single, double, multiple, sequential, chain, skip-lot,
variables, ...) is one module in :mod:`lotwise.families` holding

* a plan class derived from :class:`Plan`, which implements the few methods
  that define the family (``pa``, ``pa_count``, ``max_sample``, ``label``,
  ``notation``, ``to_dict``) and inherits generic versions of everything
  else (``asn``, ``max_asn``, ``quality_at``, ``aoq``, ``ati``, ``decide``),
  overriding them only where it has a closed form or a rule of its own;
* a module attribute ``FAMILY``, a :class:`Family` record naming the plan
  class, the notation prefix and its parser, the designer and its options,
  the extra report lines and OC columns, and the family's reference cases.

:data:`REGISTRY` maps a family name to its module; modules are imported only
when a family is used, so the command line starts fast. Adding a family is one
module plus one line in :data:`REGISTRY`.

This follows the pattern of statsmodels' power classes: a subclass
implements one probability method; the base class supplies the solvers.

Plan notation, as typed on the command line or in a plan file:
``"n=80,c=2"`` (single), ``"double: n1=50,c1=1,r1=4,n2=100,c2=3"``,
``"sequential: h1=..,h2=..,s=.."``, ... (each family documents its keys).

Examples
--------
An auditor checks a quoted plan "sample 80, accept on 2" for a lot of 500:

>>> from lotwise.core.types import Scope
>>> plan = parse_plan("n=80,c=2")
>>> round(plan.pa(0.01, "hypergeometric", Scope(lot_size=500)), 4)
0.969
>>> parse_plan(plan.notation()) == plan
True
"""

from __future__ import annotations

import importlib
import re
from abc import ABC, abstractmethod
from dataclasses import dataclass, field
from typing import Callable, ClassVar

import numpy as np

from lotwise.core import search
from lotwise.core.quantities import InputError
from lotwise.core.types import AoqFormula, Scope, lot_counts, parse_choice

__all__ = ["Plan", "Family", "Decision", "REGISTRY", "family", "families", "family_of",
           "parse_plan", "split_notation", "need_lot", "finish"]


def need_lot(scope: Scope, what: str) -> int:
    """The lot size, or an :class:`InputError` saying ``what`` needs one."""
    if not scope.lot_size:
        raise InputError(f"the {what} needs a lot size (--lot-size)")
    return int(scope.lot_size)


def finish(x, clip: bool = True):
    """A float for a scalar, an array otherwise; clipped at 0 unless ``clip`` is False."""
    x = np.asarray(x, dtype=float)
    if clip:
        x = np.clip(x, 0.0, None)
    return float(x) if x.ndim == 0 else x


# --- decisions on the bench -------------------------------------------------

@dataclass(frozen=True, kw_only=True)
class Decision:
    """What to do after ``inspected`` units with ``found`` nonconforming.

    Attributes
    ----------
    action : {'accept', 'reject', 'continue'}
    inspected, found : int
    stage : int or None
        The stage the inspection is in (1-based; None for item-by-item).
    next_decision_at : int or None
        Units inspected in all at the next point where the plan can decide.
    more_to_next : int or None
        Units still to inspect before that point.
    more_at_most : int
        Units at most still to inspect before the plan has decided.
    accept_number, reject_number : int or None
        The numbers that apply at the next decision point.
    reason : str
        The rule that applied, in plain words.
    """

    action: str
    inspected: int
    found: int
    stage: int | None
    next_decision_at: int | None
    more_to_next: int | None
    more_at_most: int
    accept_number: int | None
    reject_number: int | None
    reason: str
    certain_early: bool = False

    def as_dict(self) -> dict:
        return {"action": self.action, "inspected": self.inspected, "found": self.found,
                "stage": self.stage, "next_decision_at": self.next_decision_at,
                "more_to_next": self.more_to_next, "more_at_most": self.more_at_most,
                "accept_number": self.accept_number, "reject_number": self.reject_number,
                "certain_early": self.certain_early, "reason": self.reason}


def check_record(inspected, found, total, defects, option_n="--inspected",
                 option_d="--found"):
    """Validate a bench record: whole numbers, within the plan's largest sample."""
    if not isinstance(inspected, (int, np.integer)) or inspected < 0:
        raise InputError(f"{option_n} ({inspected}) must be a whole number of at least 0")
    if not isinstance(found, (int, np.integer)) or found < 0:
        raise InputError(f"{option_d} ({found}) must be a whole number of at least 0")
    if inspected > total:
        raise InputError(f"{option_n} ({inspected}) must not be greater than the plan's "
                         f"largest sample ({total})")
    if not defects and found > inspected:
        raise InputError(f"{option_d} ({found}) must not be greater than {option_n} "
                         f"({inspected}) when counting nonconforming items")


# --- the plan interface -----------------------------------------------------

class Plan(ABC):
    """A sampling plan: what every report, sheet, comparison and command uses.

    A family implements :meth:`pa`, :meth:`pa_count`, :attr:`max_sample`,
    :attr:`label`, :meth:`notation` and :meth:`to_dict`; everything else has
    a generic version here, overridden where the family has a closed form.

    Conventions: quality levels are fractions (or nonconformities per unit);
    ``model`` is one of ``hypergeometric``, ``binomial``, ``poisson``; under
    the hypergeometric model a level becomes a whole count of the lot with
    ``rounding`` (``nearest`` by default, ``up``/``down`` for the
    conservative producer's/consumer's side).
    """

    scheme: ClassVar[str] = ""
    #: True when the number of units inspected depends on what is found.
    varying_sample: ClassVar[bool] = False
    #: How :meth:`aoq_count` computes the finite-lot AOQ, in words for reports.
    finite_aoq_text: ClassVar[str] = "the plan's exact E[(D - X) 1{accept}] / N"

    # -- what a family must say ------------------------------------------------
    @abstractmethod
    def pa(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """Probability of accepting a lot at quality level(s) ``p``."""

    @abstractmethod
    def pa_count(self, d, scope: Scope):
        """Probability of accepting a lot of ``scope.lot_size`` holding ``d``
        nonconforming items."""

    @property
    @abstractmethod
    def max_sample(self) -> int:
        """The most units the plan may inspect from one lot."""

    @property
    @abstractmethod
    def label(self) -> str:
        """Short human label, e.g. ``n=80, c=2``."""

    @abstractmethod
    def notation(self) -> str:
        """Plan notation that :func:`parse_plan` reads back to an equal plan."""

    @abstractmethod
    def to_dict(self) -> dict:
        """The plan's own keys for JSON (``scheme`` first)."""

    # -- generic versions ------------------------------------------------------
    def check_scope(self, scope: Scope) -> None:
        """Refuse a scope the plan cannot be used in (e.g. a sample above the lot)."""
        if scope.lot_size and self.max_sample > scope.lot_size:
            raise InputError(f"the plan inspects up to {self.max_sample} units, more than "
                             f"the lot size ({scope.lot_size})")

    def for_scope(self, scope: Scope) -> "Plan":
        """The plan as meant in ``scope`` (after :meth:`check_scope`): itself,
        unless its notation left something to the scope (a sequential plan
        written with its risk points takes Poisson lines per unit)."""
        self.check_scope(scope)
        return self

    def asn(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """Average sample number at ``p`` (the fixed sample for fixed plans)."""
        return finish(np.full(np.shape(p), float(self.max_sample)), clip=False)

    def asn_count(self, d, scope: Scope):
        """Average sample number for lots holding ``d`` nonconforming items."""
        return self.asn(np.asarray(d, dtype=float) / need_lot(scope, "ASN by count"),
                        "hypergeometric", scope)

    def max_asn(self, model: str, scope: Scope) -> tuple[float, float]:
        """Largest ASN over the OC curve and the level where it occurs."""
        if not self.varying_sample:
            return float(self.max_sample), 0.0
        return search.maximise_over_levels(self.asn, self, model, scope)

    def quality_at(self, prob: float, model: str, scope: Scope, side: str = "producer") -> float:
        """Quality level where ``Pa`` equals ``prob``.

        Under the hypergeometric model the answer is a whole count over the lot
        size: ``side='producer'`` the largest ``D/N`` with ``Pa >= prob``, any
        other side the smallest ``D/N`` with ``Pa <= prob``.
        """
        if model == "hypergeometric":
            return search.count_level(self, prob, scope, side)
        return search.invert_level(self, prob, model, scope)

    def aoq(self, p, model: str, scope: Scope, *, formula: str = "screened",
            rounding: str = "nearest"):
        """Average outgoing quality under rectifying inspection (rejected lots
        screened, nonconforming items replaced); see :mod:`lotwise.analysis.rectifying`."""
        formula = parse_choice(AoqFormula, formula, "formula").value
        p = np.asarray(p, dtype=float)
        if model == "hypergeometric":
            N = need_lot(scope, "hypergeometric AOQ")
            return self.aoq_count(lot_counts(p, N, rounding), scope, formula=formula)
        pa = np.asarray(self.pa(p, model, scope), dtype=float)
        N = scope.lot_size
        if not N or formula == "simple":
            return finish(p * pa)
        used = np.asarray(self.asn(p, model, scope), dtype=float)
        return finish(p * pa * (N - used) / N)

    def aoq_count(self, d, scope: Scope, *, formula: str = "screened"):
        """AOQ (a fraction) for lots holding ``d`` nonconforming items; the
        plug-in ``(D/N) Pa(D) (N - ASN)/N`` unless the family has an exact form."""
        formula = parse_choice(AoqFormula, formula, "formula").value
        N = need_lot(scope, "hypergeometric AOQ")
        d = np.asarray(d, dtype=float)
        pa = np.asarray(self.pa_count(d, scope), dtype=float)
        if formula == "simple":
            return finish(d / N * pa)
        used = np.asarray(self.asn_count(d, scope), dtype=float)
        return finish(d / N * pa * (N - used) / N)

    def aoq_function(self, model: str, scope: Scope, *, formula: str = "screened"):
        """``p -> AOQ(p)`` on Python floats, for the many evaluations of a
        maximisation (families with a closed form return a faster one)."""
        return lambda x: float(self.aoq(x, model, scope, formula=formula))

    def ati(self, p, model: str, scope: Scope, *, rounding: str = "nearest"):
        """Average total inspection ``ASN + (1 - Pa)(N - ASN)``."""
        N = need_lot(scope, "ATI")
        p = np.asarray(p, dtype=float)
        if model == "hypergeometric":
            return self.ati_count(lot_counts(p, N, rounding), scope)
        pa = np.asarray(self.pa(p, model, scope), dtype=float)
        used = np.asarray(self.asn(p, model, scope), dtype=float)
        return finish(used + (1.0 - pa) * (N - used), clip=False)

    def ati_count(self, d, scope: Scope):
        """ATI for lots holding ``d`` nonconforming items."""
        N = need_lot(scope, "ATI")
        d = np.asarray(d, dtype=float)
        pa = np.asarray(self.pa_count(d, scope), dtype=float)
        used = np.asarray(self.asn_count(d, scope), dtype=float)
        return finish(used + (1.0 - pa) * (N - used), clip=False)

    def decide(self, inspected: int, found: int, *, defects: bool = False) -> Decision:
        """Accept, reject or continue on the bench; families without a bench
        rule refuse with a clear message."""
        raise InputError(f"--plan ({self.notation()}): a {self.scheme} plan has no "
                         "unit-by-unit bench rule; use its sheet's procedure")


# --- families and their registry --------------------------------------------

@dataclass(frozen=True, kw_only=True)
class Family:
    """What the rest of lotwise needs to know about one plan family.

    Attributes
    ----------
    name : str
        The family's name, also its notation prefix (``"double: ..."``).
    plan_class : type
        The :class:`Plan` subclass.
    parse : callable
        ``parse(pairs, text, option) -> plan`` for the notation's key=value pairs.
    keys_hint : tuple of str
        Keys that identify the family in notation written without a prefix.
    design : callable or None
        ``design(aql=, rql=, alpha=, beta=, lot_size=, model=, defects=, **options)``
        returning an object with ``.plan`` (and ``.model``); None when the family
        has no designer.
    design_options : dict
        Designer options beyond the targets: ``name -> help text``.
    extras : callable or None
        ``extras(plan, targets, scope, model) -> dict`` of family-specific report keys.
    oc_columns : callable or None
        ``oc_columns(plan, ps, model, scope) -> dict`` of extra OC-table columns.
    cases : str or None
        ``"module:function"`` returning the family's reference cases.
    """

    name: str
    plan_class: type
    parse: Callable
    keys_hint: tuple = ()
    design: Callable | None = None
    design_options: dict = field(default_factory=dict)
    extras: Callable | None = None
    oc_columns: Callable | None = None
    cases: str | None = None
    description: str = ""


#: Family name -> module holding its ``FAMILY`` record (imported when used).
REGISTRY: dict[str, str] = {
    "single": "lotwise.families.single",
    "double": "lotwise.families.double",
    "multiple": "lotwise.families.multiple",
    "sequential": "lotwise.families.sequential",
    "chain": "lotwise.families.chain",
    "skiplot": "lotwise.families.skiplot",
    "variables": "lotwise.families.variables",
}


def family(name: str, option: str = "--scheme") -> Family:
    """The :class:`Family` called ``name`` (its module imported on first use)."""
    key = str(name).strip().lower()
    if key not in REGISTRY:
        raise InputError(f"{option} ({name}) must be one of: {', '.join(REGISTRY)}")
    return importlib.import_module(REGISTRY[key]).FAMILY


def families() -> list[Family]:
    """Every registered family (imports them all)."""
    return [family(name) for name in REGISTRY]


def family_of(plan) -> Family:
    """The family of a plan object."""
    return family(plan.scheme, "plan")


_PAIR = re.compile(r"^\s*([A-Za-z][A-Za-z0-9_]*)\s*=\s*(.*?)\s*$")


def split_notation(text: str, option: str) -> dict[str, str]:
    """``key=value`` pairs of plan notation (after any ``kind:`` prefix)."""
    body = text.strip()
    if ":" in body:
        body = body.split(":", 1)[1]
    out: dict[str, str] = {}
    for part in filter(None, (s.strip() for s in re.split(r"[,;]", body))):
        m = _PAIR.match(part)
        if not m:
            raise InputError(f"{option} ({text!r}) must be written as key=value pairs, "
                             "for example \"n=80,c=2\"")
        key = m.group(1).lower()
        if key in out:
            raise InputError(f"{option} ({text!r}) gives {key} twice")
        out[key] = m.group(2)
    if not out:
        raise InputError(f"{option} ({text!r}) is empty; write for example \"n=80,c=2\"")
    return out


#: Keys that identify a notation written without a prefix: ``key -> family``.
#: Kept here (not read from every family module) so that parsing a plan
#: imports only the family it names.
KEYS_HINT: dict[str, str] = {"f": "skiplot", "k": "variables", "n1": "double", "h1": "sequential"}


def parse_plan(text: str, option: str = "--plan") -> Plan:
    """Read a plan from its notation, e.g. ``"n=80,c=2"`` or ``"single: n=80, c=2"``.

    Raises :class:`InputError` naming the option, the value and what is allowed.
    """
    if not isinstance(text, str):
        raise InputError(f"{option} ({text!r}) must be plan notation such as \"n=80,c=2\"")
    kind = text.split(":", 1)[0].strip().lower() if ":" in text else None
    pairs = split_notation(text, option)
    if kind is None:
        kind = next((KEYS_HINT[k] for k in pairs if k in KEYS_HINT), "single")
    if kind not in REGISTRY:
        raise InputError(f"{option} ({text!r}): unknown plan kind {kind!r}; known: "
                         + ", ".join(REGISTRY))
    return family(kind).parse(pairs, text, option)
