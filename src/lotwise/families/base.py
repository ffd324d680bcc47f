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
module plus one line in :data:`REGISTRY` (a module holding several related
families, such as :mod:`lotwise.families.csp`, gives a ``FAMILIES`` dict
instead of ``FAMILY`` and one line per family name).

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
import math
import re
from abc import ABC, abstractmethod
from enum import StrEnum
from dataclasses import dataclass, field
from typing import Callable, ClassVar

import numpy as np

from lotwise.core import search
from lotwise.core.quantities import InputError
from lotwise.core.types import TOL, AoqFormula, Scope, lot_counts, lot_targets, parse_choice

__all__ = ["Plan", "Family", "Decision", "ModelRisk", "REGISTRY", "family", "families",
           "family_of", "parse_plan", "split_notation", "need_lot", "finish", "OptionKind",
           "Option", "design_option", "designable", "option_owners"]


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


def check_record(inspected, found, total, per_unit, option_n="--inspected",
                 option_d="--found"):
    """Validate a bench record: whole numbers, within the plan's largest sample."""
    if not isinstance(inspected, (int, np.integer)) or inspected < 0:
        raise InputError(f"{option_n} ({inspected}) must be a whole number of at least 0")
    if not isinstance(found, (int, np.integer)) or found < 0:
        raise InputError(f"{option_d} ({found}) must be a whole number of at least 0")
    if inspected > total:
        raise InputError(f"{option_n} ({inspected}) must not be greater than the plan's "
                         f"largest sample ({total})")
    if not per_unit and found > inspected:
        raise InputError(f"{option_d} ({found}) must not be greater than {option_n} "
                         f"({inspected}) when counting nonconforming items")


@dataclass(frozen=True, kw_only=True)
class ModelRisk:
    """Acceptance probabilities and risks of one plan under one model."""

    model: str
    pa_aql: float
    pa_rql: float
    alpha: float
    beta: float
    meets_alpha: bool
    meets_beta: bool
    count_aql: int | None = None
    count_rql: int | None = None

    @property
    def meets(self) -> bool:
        return self.meets_alpha and self.meets_beta

    def as_dict(self) -> dict:
        d = {"pa_aql": self.pa_aql, "pa_rql": self.pa_rql, "alpha": self.alpha,
             "beta": self.beta, "meets": self.meets, "meets_alpha": self.meets_alpha,
             "meets_beta": self.meets_beta}
        if self.count_aql is not None:
            d["lot_counts"] = {"aql": self.count_aql, "rql": self.count_rql}
        return d



# --- the plan interface -----------------------------------------------------

#: The last generic inversions, by (plan, Pa, model, scope): a report asks for
#: the same level more than once (the top of the largest-ASN search, the Poisson
#: comparison) and asks for it with its quality levels (:meth:`Plan.quality_levels`).
_INVERTED: dict = {}


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
    #: True when the plan counts nonconforming items or nonconformities (attributes),
    #: so lot sizes, the Poisson approximation and rectifying inspection apply.
    attribute_plan: ClassVar[bool] = True
    #: True when each lot is sentenced on its own sample alone (a skip-lot
    #: scheme may be built over such a plan); False for plans that carry
    #: state from lot to lot (chain, skip-lot).
    lot_by_lot: ClassVar[bool] = True
    #: What the plan's figures are per: ``"lot"`` (risks at the AQL and RQL of lots),
    #: ``"process"`` (a measured process: variables plans) or ``"flow"`` (long-run
    #: figures of units flowing past a station: continuous sampling).
    evaluation: ClassVar[str] = "lot"
    #: True when the plan has a curtailed-inspection ASN (``asn_curtailed``).
    has_curtailment: ClassVar[bool] = False
    #: True when several characteristics of one part may be judged on one common
    #: sample of this family (each with its own acceptance number): a part's plan
    #: file, sheet and pick list then draw that sample once.
    common_sample: ClassVar[bool] = False
    #: True when rejected lots are screened by an inspection that misses
    #: nonconforming items (the AOQ rises again; the AOQL is its first peak).
    imperfect_screening: ClassVar[bool] = False
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

    @property
    def error_free(self) -> "Plan | None":
        """The plan as a perfect inspection or gauge would judge it, when this plan
        is judged with inspection or measurement errors; None otherwise."""
        return None

    @property
    def sole_acceptance_number(self) -> int | None:
        """The plan's one acceptance number, if it has one (a single plan's c)."""
        return None

    @property
    def short_label(self) -> str:
        """The label cut to what tells plans apart in a legend (default: :attr:`label`)."""
        return self.label

    @abstractmethod
    def to_dict(self) -> dict:
        """The plan's own keys for JSON (``scheme`` first)."""

    # -- generic versions ------------------------------------------------------
    def models_for(self, scope: Scope) -> tuple[str, ...]:
        """The models the plan is evaluated under in ``scope`` (exact one first)."""
        return scope.models

    def judging_model(self, scope: Scope, model: str | None = None) -> str:
        """The model the plan is judged by: ``model`` if it applies, else the exact one."""
        return scope.check_model(model)

    def check_scope(self, scope: Scope) -> None:
        """Refuse a scope the plan cannot be used in (e.g. a sample above the lot)."""
        if scope.lot_size and self.max_sample > scope.lot_size:
            raise InputError(f"the plan inspects up to {self.max_sample} units, more than "
                             f"--lot-size ({scope.lot_size})")

    def risks(self, targets, scope: Scope, model: str) -> ModelRisk:
        """Acceptance probabilities and risks at the targets under ``model``; under
        the hypergeometric model at whole counts, rounded up at the AQL and down
        at the RQL (the conservative way for each risk)."""
        ca = cr = None
        if model == "hypergeometric":
            ca, cr = lot_targets(targets, need_lot(scope, "hypergeometric model"))
            pa_aql = float(self.pa_count(ca, scope))
            pa_rql = float(self.pa_count(cr, scope))
        else:
            # One call at both levels (a plan evaluated by a walk walks once).
            pa_aql, pa_rql = (float(v) for v in np.ravel(
                self.pa(np.array([targets.aql, targets.rql]), model, scope)))
        alpha = 1.0 - pa_aql
        return ModelRisk(model=model, pa_aql=pa_aql, pa_rql=pa_rql, alpha=alpha, beta=pa_rql,
                         meets_alpha=bool(alpha <= targets.alpha + TOL),
                         meets_beta=bool(pa_rql <= targets.beta + TOL),
                         count_aql=ca, count_rql=cr)

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

    def check_cost(self) -> None:
        """Refuse (:class:`~lotwise.core.quantities.TooCostly`), before any work,
        a plan whose full report would exceed the documented budget; the
        default does nothing (a family whose evaluation grows with its inputs
        overrides it)."""

    def quality_at(self, prob: float, model: str, scope: Scope, side: str = "producer") -> float:
        """Quality level where ``Pa`` equals ``prob``.

        Under the hypergeometric model the answer is a whole count over the lot
        size, ``D/N`` with ``D`` from :meth:`quality_count`.
        """
        if model == "hypergeometric":
            return search.count_level(self, prob, scope, side)
        return self.quality_levels((prob,), model, scope, (side,))[0]

    def quality_levels(self, probs, model: str, scope: Scope, sides) -> list[float]:
        """:meth:`quality_at` at several ``(prob, side)`` pairs; where a family
        keeps the generic inversion, every bracket shares each pass's call of
        :meth:`pa` (:func:`lotwise.core.search.invert_levels`)."""
        if model == "hypergeometric" or type(self).quality_at is not Plan.quality_at:
            return [float(self.quality_at(pr, model, scope, s)) for pr, s in zip(probs, sides)]
        keys = [(self, float(pr), model, scope) for pr in probs]
        try:
            known = [_INVERTED.get(k) for k in keys]
        except TypeError:  # a plan that cannot be hashed is not remembered
            return search.invert_levels(self, probs, model, scope)
        todo = [i for i, q in enumerate(known) if q is None]
        if todo:
            found = search.invert_levels(self, [probs[i] for i in todo], model, scope)
            for i, q in zip(todo, found):
                known[i] = q
                if len(_INVERTED) >= 32:
                    _INVERTED.pop(next(iter(_INVERTED)))
                _INVERTED[keys[i]] = q
        return known

    def quality_count(self, prob: float, scope: Scope, side: str = "producer") -> int:
        """The plan's own quality level as a whole count ``D`` of a lot of
        ``scope.lot_size``: ``side='producer'`` the largest ``D`` with
        ``Pa(D) >= prob``, ``'indifference'`` the ``D`` whose ``Pa`` is nearest
        ``prob`` (the smaller on a tie), ``'consumer'`` the smallest ``D`` with
        ``Pa(D) <= prob`` (see :func:`lotwise.core.search.count_at`)."""
        need_lot(scope, "whole-count quality level")
        return search.count_at(self, prob, scope, side)

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

    def count_rule(self) -> tuple[int, int] | None:
        """``(n, c)`` when the plan accepts a lot exactly when a fixed sample of ``n``
        holds at most ``c`` nonconforming (so its risks are finite sums over the
        count's distribution); None otherwise."""
        return None

    def audit_parts(self):
        """``(plan, skip)``: the plan a check judges and a skip-lot layer
        ``(i, f)`` over it (None); a skip-lot plan answers with its reference."""
        return self, None

    def family_record(self) -> "Family":
        """The :class:`Family` whose hooks (extras, OC columns, Poisson redesign)
        describe this plan: its scheme's, unless the plan wraps another."""
        return family(self.scheme, "plan")

    def describe(self) -> list[str]:
        """The plan's rule in words, one or more lines for reports."""
        return [f"plan      {self.label}"]

    #: The record of earlier lots a bench rule needs besides this lot's counts,
    #: named as ``lotwise next`` asks for it (``"clean_lots"``: the lots in a row
    #: just before this one whose samples held nothing nonconforming), or None.
    bench_state: str | None = None

    def decide(self, inspected: int, found: int, *, per_unit: bool = False) -> Decision:
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
        ``design(aql=, rql=, alpha=, beta=, lot_size=, model=, per_unit=, **options)``
        returning an object with ``.plan`` (and ``.model``); None when the family
        has no designer.
    design_options : dict
        Designer options beyond the targets: ``name -> help text``.
    option_types : dict
        ``name -> Option``: what each designer option accepts (used to check
        plan-file keys and catalogue columns before designing, see
        :func:`design_option`).
    extras : callable or None
        ``extras(plan, targets, scope, model, report) -> dict`` of family-specific
        report keys (``report`` holds the common keys already computed); a
        ``"statements"`` list is added to the plain-words sentences.
    oc_columns : callable or None
        ``oc_columns(plan, ps, model, scope, counts=) -> dict`` of extra OC-table
        columns; ``counts`` are the table's whole counts in a finite lot (None
        otherwise), for columns taken at the same counts as the exact ``Pa``.
    cases : str or None
        ``"module:function"`` returning the family's reference cases.
    check_options : callable or None
        ``check_options(options, per_unit=, key=)``: the rules tying the designer
        options together (raises InputError); None when each option stands alone.
    design_many : str or None
        ``"module:function"`` designing arrays of problems under one model
        (``design_many(model=, aql=, rql=, alpha=, beta=, lot_size=, fixed_c=)`` ->
        arrays ``n, c, alpha, beta``, ``n = -1`` where the row is left to
        :attr:`design`), for catalogues of thousands of parts.
    """

    name: str
    plan_class: type
    parse: Callable
    keys_hint: tuple = ()
    design: Callable | None = None
    design_options: dict = field(default_factory=dict)
    #: Show the plan a Poisson-based design of this family would choose
    #: (families whose designer is fast enough to run on every report).
    poisson_redesign: bool = False
    option_types: dict = field(default_factory=dict)
    extras: Callable | None = None
    oc_columns: Callable | None = None
    cases: str | None = None
    description: str = ""
    #: ``"module:function"`` of an array search designing many problems of this family
    #: at once (catalogues), or None; see :meth:`array_designer`.
    design_many: str | None = None
    #: ``check_options(options, per_unit=, key=)`` raises InputError when designer
    #: options that each pass their own type check do not fit together (``key(name)``
    #: spells an option's name as the caller's user wrote it).
    check_options: Callable | None = None

    def array_designer(self) -> Callable | None:
        """The function :attr:`design_many` names (imported now), or None."""
        if self.design_many is None:
            return None
        module, func = self.design_many.split(":")
        return getattr(importlib.import_module(module), func)


class OptionKind(StrEnum):
    """What a designer option accepts."""

    WHOLE = "whole"
    NUMBER = "number"
    CHOICE = "choice"


@dataclass(frozen=True, kw_only=True)
class Option:
    """One designer option: its kind and the values it allows.

    ``minimum``/``maximum`` bound a whole number or a number (inclusive);
    ``positive`` asks a number to be above 0; ``choices`` lists the words a
    choice allows.
    """

    kind: OptionKind
    minimum: float | None = None
    maximum: float | None = None
    positive: bool = False
    choices: tuple = ()

    def allowed(self) -> str:
        """What the option allows, in words (for messages)."""
        if self.kind is OptionKind.CHOICE:
            return "one of: " + ", ".join(self.choices)
        what = "a whole number" if self.kind is OptionKind.WHOLE else "a number"
        if self.positive:
            return what + " above 0"
        if self.minimum is not None and self.maximum is not None:
            return f"{what} from {self.minimum:g} to {self.maximum:g}"
        if self.minimum is not None:
            return f"{what} of at least {self.minimum:g}"
        return what


def design_option(fam: "Family", name: str, value, where: str, *, text: bool = False):
    """Check one designer option of family ``fam`` and return it typed.

    Parameters
    ----------
    fam : Family
    name : str
        The option (a key of ``fam.design_options``).
    value
        As written: a TOML value, or text when ``text`` is True (a CSV cell).
    where : str
        The key path or column for messages, e.g. ``"plans/a.toml: characteristic[2].ratio"``.

    Raises
    ------
    InputError
        Naming ``where``, the value and what is allowed.

    Examples
    --------
    >>> design_option(family("double"), "ratio", "1.5", "ratio", text=True)
    1.5
    """
    if name not in fam.design_options:
        allowed = ", ".join(fam.design_options) or "none"
        raise InputError(f"{where}: {name} does not apply to a {fam.name} design "
                         f"(its options: {allowed})")
    spec = fam.option_types.get(name)
    if spec is None:  # an option the family leaves to its designer to check
        return value
    bad = InputError(f"{where} ({value!r}) must be {spec.allowed()}")
    if spec.kind is OptionKind.CHOICE:
        if not isinstance(value, str):
            raise bad
        word = value.strip().lower()
        if spec.choices and word not in spec.choices:
            raise bad
        return word
    if isinstance(value, str) and text:
        try:
            value = int(value.strip()) if spec.kind is OptionKind.WHOLE else float(value.strip())
        except ValueError:
            raise bad from None
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise bad
    if spec.kind is OptionKind.WHOLE and not isinstance(value, int):
        raise bad
    if not math.isfinite(value) or (spec.positive and not value > 0) \
            or (spec.minimum is not None and value < spec.minimum) \
            or (spec.maximum is not None and value > spec.maximum):
        raise bad
    return int(value) if spec.kind is OptionKind.WHOLE else float(value)


#: Family name -> module holding its ``FAMILY`` record (imported when used).
REGISTRY: dict[str, str] = {
    "single": "lotwise.families.single",
    "double": "lotwise.families.double",
    "multiple": "lotwise.families.multiple",
    "sequential": "lotwise.families.sequential",
    "chain": "lotwise.families.chain",
    "skiplot": "lotwise.families.skiplot",
    "variables": "lotwise.families.variables",
    "csp1": "lotwise.families.csp", "csp2": "lotwise.families.csp", "csp3": "lotwise.families.csp",
}


def family(name: str, option: str = "--scheme") -> Family:
    """The :class:`Family` called ``name`` (its module imported on first use)."""
    key = str(name).strip().lower()
    if key not in REGISTRY:
        raise InputError(f"{option} ({name}) must be one of: {', '.join(REGISTRY)}")
    module = importlib.import_module(REGISTRY[key])
    # a module holding several families (csp) names them in FAMILIES
    return getattr(module, "FAMILIES", {}).get(key) or module.FAMILY


def families() -> list[Family]:
    """Every registered family (imports them all)."""
    return [family(name) for name in REGISTRY]


def option_owners(exclude=("n", "c", "max_n")) -> dict[str, list[str]]:
    """Designer options of the families other than single: ``option ->
    families taking it``, leaving out ``exclude`` (the options a plan file or
    a catalogue gives for the whole part or row)."""
    out: dict[str, list[str]] = {}
    for fam in families():
        if fam.design is None or fam.name == "single":
            continue
        for key in fam.design_options:
            if key not in exclude:
                out.setdefault(key, []).append(fam.name)
    return out


def designable() -> list[str]:
    """Names of the families that have a designer, in registry order."""
    return [f.name for f in families() if f.design is not None]


def family_of(plan) -> Family:
    """The family of a plan object (as the plan itself says, see
    :meth:`Plan.family_record`)."""
    own = getattr(plan, "family_record", None)
    return own() if own is not None else family(plan.scheme, "plan")


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
