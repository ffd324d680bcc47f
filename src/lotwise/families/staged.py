"""Shared machinery of plans that inspect in stages (double and multiple
plans, and a single plan read as one stage): evaluation by the stage
recursion, curtailed inspection, bench decisions and the notation both use.

See :mod:`lotwise.families.double` and :mod:`lotwise.families.multiple`.
"""

from __future__ import annotations

import math
import re

import numpy as np

from lotwise.core.quantities import InputError, parse_count
from lotwise.core.stages import (NO_REJECTION, StageResult, finish_shape, level_to_x,
                                 stage_recursion, unit_walk)
from lotwise.core.types import Scope
from lotwise.families.base import Decision, Plan, check_record

__all__ = ["StagedPlan", "parse_staged", "build_staged", "whole", "split_list", "count_or_none"]


# --- staged plans -----------------------------------------------------------

class StagedPlan(Plan):
    """Shared machinery of double and multiple plans (``sizes``, ``acc``,
    ``rej`` as tuples; ``acc`` uses -1 for "no acceptance at this stage")."""

    sizes: tuple
    acc: tuple
    rej: tuple

    @property
    def k(self) -> int:
        return len(self.sizes)

    @property
    def cumulative(self) -> tuple:
        out, t = [], 0
        for n in self.sizes:
            t += n
            out.append(t)
        return tuple(out)

    @property
    def n_max(self) -> int:
        """Largest number of units the plan can inspect."""
        return int(sum(self.sizes))

    varying_sample = True
    has_curtailment = True

    @classmethod
    def single(cls, plan) -> "StagedPlan":
        """A single plan ``(n, c)`` read as a one-stage plan (for its bench rule)."""
        return _OneStage(plan)

    @property
    def max_sample(self) -> int:
        return self.n_max

    # public evaluation -----------------------------------------------------
    def _x(self, p, model, scope, rounding):
        return level_to_x(p, model, scope, rounding, self.n_max)

    def _stages(self, x, model, scope, track_found=False) -> StageResult:
        return stage_recursion(self.sizes, self.acc, self.rej, model, x,
                               scope.lot_size, track_found=track_found)

    def pa(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """Acceptance probability at quality level(s) ``p`` under ``model``."""
        x = self._x(p, model, scope, rounding)
        res = self._stages(x, model, scope)
        return finish_shape(np.sum(res.accept, axis=0), np.shape(p))

    def pa_count(self, d, scope: Scope):
        """Acceptance probability for a lot holding ``d`` nonconforming items."""
        x = np.asarray(d, dtype=float)
        res = self._stages(x, "hypergeometric", scope)
        return finish_shape(np.sum(res.accept, axis=0), np.shape(d))

    def asn(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """Average sample number with every stage inspected in full."""
        x = self._x(p, model, scope, rounding)
        res = self._stages(x, model, scope)
        out = sum(n * r for n, r in zip(self.sizes, res.reach))
        return finish_shape(out, np.shape(p))

    def _curtail_bounds(self, model: str, stages: str, accept: bool, per_unit: bool):
        """Acceptance and rejection numbers unit by unit of the curtailed plan
        (index ``m``: after ``m`` units; index 0: before the first).

        The plan's own curtailment rule, the one :meth:`decide` applies on the
        bench, works within the stage being inspected: reject as soon as the
        count reaches the stage's rejection number; accept as soon as the
        count plus every unit left in the stage, all nonconforming, would
        stay within its acceptance number. A stage boundary is also the start
        of the next stage, so a lot whose count is within the next stage's
        acceptance number even with that whole stage nonconforming is
        accepted there without inspecting it (before the first unit when
        ``c1 >= n1``). ``stages='last'`` curtails only the last stage;
        acceptance is curtailed only when counting items (a unit may carry
        any number of nonconformities).
        """
        if stages not in ("all", "last"):
            raise InputError(f"stages ({stages!r}) must be 'all' or 'last'")
        M = self.n_max
        accn = np.full(M + 1, -1, dtype=np.int64)
        rejn = np.full(M + 1, NO_REJECTION, dtype=np.int64)
        early_accept = accept and model != "poisson" and not per_unit
        start = 0
        for i, (n, a, r) in enumerate(zip(self.sizes, self.acc, self.rej)):
            end = start + n
            if n == 0:  # an empty stage (n2 = 0) decides with the stage before
                accn[end] = max(accn[end], a)
                rejn[end] = min(rejn[end], r)
                continue
            curtail = stages == "all" or i == self.k - 1
            if curtail and early_accept and a >= 0:
                for m in range(start, end):  # from the stage's start (a boundary)
                    accn[m] = max(accn[m], a - (end - m))
            for m in range(start + 1, end + 1):
                if curtail:
                    rejn[m] = r
                if m == end:
                    rejn[m] = min(rejn[m], r)
                    accn[m] = max(accn[m], a)
            start = end
        return accn, rejn

    def _walk(self, p, model, scope, rounding, stages, accept):
        """Curtailed ``(pa, asn)``; a plan whose acceptance is certain before
        the first unit accepts every lot without inspecting any."""
        x = self._x(p, model, scope, rounding)
        accn, rejn = self._curtail_bounds(model, stages, accept, scope.per_unit)
        if accn[0] >= 0:
            return np.ones(np.shape(x)), np.zeros(np.shape(x))
        res = unit_walk(accn, rejn, model, x, scope.lot_size)
        return res.pa, res.asn

    def asn_curtailed(self, p, model: str, scope: Scope, rounding: str = "nearest", *,
                      stages: str = "all", accept: bool = True):
        """Average sample number when inspection stops as soon as the
        decision is certain within the stage being inspected (the rule of
        :meth:`_curtail_bounds` and of :meth:`decide`)."""
        _, asn = self._walk(p, model, scope, rounding, stages, accept)
        return finish_shape(asn, np.shape(p))

    def pa_curtailed(self, p, model: str, scope: Scope, rounding: str = "nearest", *,
                     stages: str = "all", accept: bool = True):
        """``Pa`` from the curtailed dynamic program (equal to :meth:`pa`;
        kept as an independent check)."""
        pa, _ = self._walk(p, model, scope, rounding, stages, accept)
        return finish_shape(pa, np.shape(p))

    def _lot(self, scope: Scope) -> int:
        if not scope.lot_size:
            raise InputError("AOQ and ATI need a lot size (--lot-size)")
        return int(scope.lot_size)

    def aoq(self, p, model: str, scope: Scope, *, formula: str = "screened",
            rounding: str = "nearest"):
        """Average outgoing quality under rectifying inspection (fraction):
        exact, with the nonconforming items left in accepted lots summed over
        the stages (``formula='simple'``: ``p Pa``)."""
        if formula != "screened" or not scope.lot_size:
            return super().aoq(p, model, scope, formula=formula, rounding=rounding)
        return self._aoq_at(self._x(p, model, scope, rounding), model, scope, np.shape(p))

    def aoq_count(self, d, scope: Scope, *, formula: str = "screened"):
        if formula != "screened":
            return super().aoq_count(d, scope, formula=formula)
        return self._aoq_at(np.asarray(d, dtype=float), "hypergeometric", scope, np.shape(d))

    def _aoq_at(self, x, model, scope, shape):
        N = self._lot(scope)
        res = self._stages(x, model, scope, track_found=model == "hypergeometric")
        if model == "hypergeometric":
            left = sum(a * x - f for a, f in zip(res.accept, res.accept_found))
        else:
            left = sum(a * x * (N - m) for a, m in zip(res.accept, self.cumulative))
        return finish_shape(left / N, shape)

    def ati(self, p, model: str, scope: Scope, *, rounding: str = "nearest"):
        """Average total inspection per lot (rejected lots inspected in full)."""
        return self._ati_at(self._x(p, model, scope, rounding), model, scope, np.shape(p))

    def ati_count(self, d, scope: Scope):
        return self._ati_at(np.asarray(d, dtype=float), "hypergeometric", scope, np.shape(d))

    def _ati_at(self, x, model, scope, shape):
        N = self._lot(scope)
        res = self._stages(x, model, scope)
        pa = np.sum(res.accept, axis=0)
        out = sum(a * m for a, m in zip(res.accept, self.cumulative)) + N * (1.0 - pa)
        return finish_shape(out, shape)

    def decide(self, inspected: int, found: int, *, per_unit: bool = False) -> Decision:
        """Accept, reject or continue after ``inspected`` units (cumulative)
        holding ``found`` nonconforming (cumulative)."""
        check_record(inspected, found, self.n_max, per_unit)
        cum = self.cumulative
        stage = next(i for i, m in enumerate(cum) if inspected <= m) if inspected > 0 else 0
        if inspected == 0:
            stage = 0
        end = cum[stage]
        a, r = self.acc[stage], self.rej[stage]
        total_left = self.n_max - inspected
        an = a if a >= 0 else None
        # A count at or below an earlier stage's acceptance number was accepted there.
        for j in range(stage):
            if self.acc[j] >= 0 and found <= self.acc[j]:
                return Decision(action="accept", inspected=inspected, found=found,
                                stage=j + 1, next_decision_at=None, more_to_next=0,
                                more_at_most=0, accept_number=self.acc[j],
                                reject_number=self.rej[j],
                                reason=(f"the count after stage {j + 1} ({cum[j]} units) could "
                                        f"not have exceeded {found}, which is within its "
                                        f"acceptance number {self.acc[j]}: the lot was "
                                        "accepted there"))
        if inspected == end:
            if a >= 0 and found <= a:
                return Decision(action="accept", inspected=inspected, found=found,
                                stage=stage + 1, next_decision_at=None, more_to_next=0,
                                more_at_most=0, accept_number=an, reject_number=r,
                                reason=f"stage {stage + 1} complete: {found} <= acceptance "
                                       f"number {a}")
            if found >= r:
                return Decision(action="reject", inspected=inspected, found=found,
                                stage=stage + 1, next_decision_at=None, more_to_next=0,
                                more_at_most=0, accept_number=an, reject_number=r,
                                reason=f"stage {stage + 1} complete: {found} >= rejection "
                                       f"number {r}")
            nxt = stage + 1
            na = self.acc[nxt]
            if self.sizes[nxt] == 0:  # an empty last stage (n2 = 0) decides now
                act = "accept" if found <= na else "reject"
                return Decision(action=act, inspected=inspected, found=found, stage=nxt + 1,
                                next_decision_at=None, more_to_next=0, more_at_most=0,
                                accept_number=na, reject_number=self.rej[nxt],
                                reason=f"the second sample is empty (n2 = 0): {found} "
                                       f"{'<=' if act == 'accept' else '>'} {na}")
            if not per_unit and na >= 0 and found + self.sizes[nxt] <= na:
                return Decision(action="accept", inspected=inspected, found=found,
                                stage=nxt + 1, next_decision_at=cum[nxt],
                                more_to_next=self.sizes[nxt], more_at_most=0,
                                accept_number=na, reject_number=self.rej[nxt],
                                certain_early=True,
                                reason=f"even if all {self.sizes[nxt]} units of stage "
                                       f"{nxt + 1} were nonconforming the count would stay "
                                       f"within {na}: the lot is accepted without taking "
                                       "them (curtailed)")
            return Decision(action="continue", inspected=inspected, found=found,
                            stage=nxt + 1, next_decision_at=cum[nxt],
                            more_to_next=self.sizes[nxt], more_at_most=total_left,
                            accept_number=na if na >= 0 else None, reject_number=self.rej[nxt],
                            reason=f"stage {stage + 1} complete: {found} lies between the "
                                   f"acceptance number "
                                   f"{a if a >= 0 else '(none)'} and the rejection number {r}; "
                                   f"take stage {nxt + 1} ({self.sizes[nxt]} units)")
        # Inside a stage: the decision waits for the stage's end unless it is certain.
        if found >= r:
            why = f"{found} has reached the rejection number {r} of stage {stage + 1}"
            return Decision(action="reject", inspected=inspected, found=found, stage=stage + 1,
                            next_decision_at=end, more_to_next=end - inspected, more_at_most=0,
                            accept_number=an, reject_number=r, certain_early=True,
                            reason=why + "; the count can only grow, so the lot is rejected "
                                         f"now (curtailed: the other {end - inspected} units "
                                         "of the stage cannot change it)")
        if not per_unit and a >= 0 and found + (end - inspected) <= a:
            return Decision(action="accept", inspected=inspected, found=found, stage=stage + 1,
                            next_decision_at=end, more_to_next=end - inspected, more_at_most=0,
                            accept_number=an, reject_number=r, certain_early=True,
                            reason=f"even if all {end - inspected} remaining units of stage "
                                   f"{stage + 1} were nonconforming the count would stay "
                                   f"within {a}: the lot is accepted (curtailed)")
        return Decision(action="continue", inspected=inspected, found=found, stage=stage + 1,
                        next_decision_at=end, more_to_next=end - inspected,
                        more_at_most=total_left, accept_number=an, reject_number=r,
                        reason=f"finish stage {stage + 1}: {end - inspected} more unit(s) to "
                               f"{end} in all, then accept on at most "
                               f"{a if a >= 0 else '(no acceptance at this stage)'}"
                               f", reject on {r} or more")


def whole(v, name, minimum):
    if isinstance(v, bool) or not isinstance(v, (int, np.integer)):
        raise InputError(f"{name} ({v!r}) must be a whole number of at least {minimum}")
    if v < minimum:
        raise InputError(f"{name} ({v}) must be at least {minimum}")
    return int(v)


# --- notation ---------------------------------------------------------------

_INDEXED = re.compile(r"^([ncr])(\d+)$")
_NONE = {"-", "#", "*", "none", "x"}


def split_list(value: str, key: str, option: str, text: str) -> list:
    parts = [s for s in re.split(r"[/\s]+", value.strip()) if s]
    if not parts:
        raise InputError(f"{option} ({text!r}): {key} is empty; write for example "
                         f"{key}=20/20/20")
    return parts


def count_or_none(v: str, name: str, allow_none: bool):
    if allow_none and v.strip().lower() in _NONE:
        return None
    return parse_count(v, name, minimum=0)


def parse_staged(pairs: dict, text: str, option: str):
    """Double or multiple plan notation, indexed or as lists: ``(kind, keywords)``.

    Indexed: ``n1=50,c1=1,r1=4,n2=100,c2=3`` (``r1`` optional, default
    ``c2 + 1``; more stages ``n3, c3, r3`` ... make a multiple plan; ``ci=-``
    for a stage that cannot accept). Lists: ``multiple: n=20/20/20;
    c=-/1/3; r=2/3/4`` (slashes or spaces between the stages).
    """
    head = text.split(":", 1)[0].strip().lower() if ":" in text else None
    keys = set(pairs)
    if keys & {"n", "c", "r"}:
        bad = sorted(keys - {"n", "c", "r"})
        if bad:
            raise InputError(f"{option} ({text!r}): unknown key {bad[0]!r}; the list form takes "
                             "n, c and r, for example \"multiple: n=20/20/20; c=-/1/3; "
                             "r=2/3/4\"")
        for key in ("n", "c"):
            if key not in pairs:
                raise InputError(f"{option} ({text!r}) lacks {key}; write for example "
                                 "\"multiple: n=20/20/20; c=-/1/3; r=2/3/4\"")
        ns = [parse_count(v, f"{option} n (stage {i + 1})", minimum=1)
              for i, v in enumerate(split_list(pairs["n"], "n", option, text))]
        k = len(ns)
        cs_t = split_list(pairs["c"], "c", option, text)
        if len(cs_t) != k:
            raise InputError(f"{option} ({text!r}): c gives {len(cs_t)} acceptance numbers "
                             f"for {k} stages")
        cs = [count_or_none(v, f"{option} c (stage {i + 1})", i < k - 1)
              for i, v in enumerate(cs_t)]
        rs = None
        if "r" in pairs:
            rs_t = split_list(pairs["r"], "r", option, text)
            if len(rs_t) not in (k, k - 1):
                raise InputError(f"{option} ({text!r}): r gives {len(rs_t)} rejection numbers "
                                 f"for {k} stages")
            rs = [parse_count(v, f"{option} r (stage {i + 1})", minimum=1)
                  for i, v in enumerate(rs_t)]
            if len(rs) == k - 1:
                rs.append(None)
    else:
        stages: dict[int, dict[str, str]] = {}
        for key, value in pairs.items():
            m = _INDEXED.match(key)
            if not m:
                raise InputError(f"{option} ({text!r}): unknown key {key!r}; a double plan "
                                 "takes n1, c1, r1, n2, c2 (for example "
                                 "\"n1=50,c1=1,r1=4,n2=100,c2=3\")")
            stages.setdefault(int(m.group(2)), {})[m.group(1)] = value
        k = max(stages) if stages else 0
        if sorted(stages) != list(range(1, k + 1)):
            missing = next(i for i in range(1, k + 1) if i not in stages)
            raise InputError(f"{option} ({text!r}) lacks stage {missing} (n{missing}, "
                             f"c{missing})")
        ns, cs, rs = [], [], []
        for i in range(1, k + 1):
            st = stages[i]
            for key in ("n", "c"):
                if key not in st:
                    raise InputError(f"{option} ({text!r}) lacks {key}{i}; write for example "
                                     "\"n1=50,c1=1,r1=4,n2=100,c2=3\"")
            ns.append(parse_count(st["n"], f"{option} n{i}", minimum=0 if i == 2 and k == 2
                                  else 1))
            cs.append(count_or_none(st["c"], f"{option} c{i}", i < k))
            rs.append(parse_count(st["r"], f"{option} r{i}", minimum=1) if "r" in st else None)
    k = len(ns)
    if k < 2:
        raise InputError(f"{option} ({text!r}) gives one stage; a single plan is written "
                         "\"n=80,c=2\"")
    if head == "double" and k != 2:
        raise InputError(f"{option} ({text!r}): a double plan has 2 stages, not {k}; write "
                         "\"multiple: ...\" for more")
    if k == 2 and head != "multiple":
        if cs[0] is None:
            raise InputError(f"{option} c1 ({pairs.get('c1', '-')!r}) must be a whole number "
                             "for a double plan; write \"multiple: ...\" for a first stage "
                             "that cannot accept")
        if rs[1] is not None and rs[1] != cs[1] + 1:
            raise InputError(f"{option} r2 ({rs[1]}) must be c2 + 1 ({cs[1] + 1}): the second "
                             "sample decides")
        return "double", dict(n1=ns[0], c1=cs[0], r1=rs[0], n2=ns[1], c2=cs[1])
    if rs is None:
        rs = [None] * k
    if any(v is None for v in rs[:-1]):
        i = next(j for j, v in enumerate(rs[:-1]) if v is None)
        raise InputError(f"{option} ({text!r}) lacks r{i + 1}, the rejection number of stage "
                         f"{i + 1}")
    return "multiple", dict(n=tuple(ns), c=tuple(cs), r=tuple(rs))


def build_staged(pairs: dict, text: str, option: str):
    """The double or multiple plan a staged notation describes (its family's
    class looked up in the registry, so neither module imports the other)."""
    from lotwise.families.base import family

    kind, kw = parse_staged(pairs, text, option)
    return family(kind).plan_class(**kw)


class _OneStage(StagedPlan):
    """A single plan as one stage: its bench rule is the staged one."""

    scheme = "single"

    def __init__(self, plan):
        self.sizes, self.acc, self.rej = (int(plan.n),), (int(plan.c),), (int(plan.c) + 1,)
        self._plan = plan

    @property
    def label(self) -> str:
        return self._plan.label

    def notation(self) -> str:
        return self._plan.notation()

    def to_dict(self) -> dict:
        return self._plan.to_dict()
