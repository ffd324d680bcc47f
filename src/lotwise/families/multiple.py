"""Multiple sampling by attributes: up to k stages, each with an acceptance
and a rejection number for the running count.

Evaluated exactly by the stage recursion of :mod:`lotwise.core.stages`;
curtailed inspection, the bench rule and the notation are shared with double
plans (:mod:`lotwise.families.staged`).

References
----------
.. [1] D. C. Montgomery, *Introduction to Statistical Quality Control*,
   section 15.3 (double, multiple and sequential sampling).

Examples
--------
A three-stage plan for potting compound; the first stage cannot accept:

>>> from lotwise.core.types import Scope
>>> plan = MultiplePlan(n=(20, 20, 20), c=(None, 1, 3), r=(2, 3, 4))
>>> plan.notation()
'multiple: n=20/20/20; c=-/1/3; r=2/3/4'
>>> round(plan.pa(0.02, "binomial", Scope()), 4)
0.9125
"""

from __future__ import annotations

from dataclasses import dataclass

from lotwise.core.quantities import InputError
from lotwise.families.base import Family
from lotwise.families.staged import StagedPlan, build_staged, whole

__all__ = ["MultiplePlan", "FAMILY"]


@dataclass(frozen=True, kw_only=True)
class MultiplePlan(StagedPlan):
    """Multiple sampling by attributes over ``k >= 2`` stages.

    ``n`` are the stage sample sizes, ``c`` the cumulative acceptance
    numbers (``None`` where the stage cannot accept) and ``r`` the
    cumulative rejection numbers; the last stage decides, so
    ``r[-1] = c[-1] + 1`` (given or filled in).

    Examples
    --------
    Three stages of 20 on a bearing lot; stage 1 cannot accept:

    >>> p = MultiplePlan(n=(20, 20, 20), c=(None, 1, 3), r=(2, 3, 4))
    >>> p.notation()
    'multiple: n=20/20/20; c=-/1/3; r=2/3/4'
    """

    n: tuple
    c: tuple
    r: tuple | None = None

    scheme = "multiple"

    def __post_init__(self):
        n = tuple(self.n)
        c = tuple(self.c)
        k = len(n)
        if k < 2:
            raise InputError(f"a multiple plan needs at least 2 stages ({k} given); "
                             "a single stage is a single plan")
        if len(c) != k:
            raise InputError(f"c has {len(c)} acceptance numbers for {k} stages")
        for i, v in enumerate(n):
            whole(v, f"n{i + 1}", 1)
        for i, v in enumerate(c):
            if v is not None:
                whole(v, f"c{i + 1}", 0)
        if c[-1] is None:
            raise InputError(f"c{k} (the last stage's acceptance number) must be given: the "
                             "last stage decides")
        r = self.r
        if r is None:
            r = tuple([None] * (k - 1) + [c[-1] + 1])
        r = tuple(r)
        if len(r) != k:
            raise InputError(f"r has {len(r)} rejection numbers for {k} stages")
        r = r[:-1] + ((c[-1] + 1) if r[-1] is None else r[-1],)
        for i, v in enumerate(r):
            if v is None:
                raise InputError(f"r{i + 1} (the rejection number of stage {i + 1}) must be "
                                 "given")
            whole(v, f"r{i + 1}", 1)
        if r[-1] != c[-1] + 1:
            raise InputError(f"r{k} ({r[-1]}) must be c{k} + 1 ({c[-1] + 1}): the last stage "
                             "decides")
        prev_a, prev_r = -1, 0
        for i in range(k):
            a = -1 if c[i] is None else c[i]
            if a < prev_a:
                raise InputError(f"c{i + 1} ({a}) must not be smaller than an earlier "
                                 f"acceptance number ({prev_a})")
            if r[i] < prev_r:
                raise InputError(f"r{i + 1} ({r[i]}) must not be smaller than r{i} ({prev_r})")
            if i < k - 1 and r[i] < a + 2:
                raise InputError(f"r{i + 1} ({r[i]}) must be at least c{i + 1} + 2 ({a + 2}): "
                                 "otherwise no lot ever reaches the later stages")
            if r[i] > c[-1] + 1:
                raise InputError(f"r{i + 1} ({r[i]}) must not be greater than c{k} + 1 "
                                 f"({c[-1] + 1})")
            prev_a, prev_r = a, r[i]
        object.__setattr__(self, "n", tuple(int(v) for v in n))
        object.__setattr__(self, "c", tuple(None if v is None else int(v) for v in c))
        object.__setattr__(self, "r", tuple(int(v) for v in r))

    @property
    def sizes(self):
        return self.n

    @property
    def acc(self):
        return tuple(-1 if v is None else v for v in self.c)

    @property
    def rej(self):
        return self.r

    @property
    def label(self) -> str:
        return self.notation().split(": ", 1)[1].replace("; ", ", ")

    def describe(self) -> list[str]:
        from lotwise.core.text import table

        rows = [[str(i + 1), str(n), str(m), "-" if a is None else str(a), str(r)]
                for i, (n, m, a, r) in enumerate(zip(self.sizes, self.cumulative, self.c,
                                                     self.rej))]
        return ["plan      multiple sampling, cumulative counts:",
                table(rows, ["stage", "units", "in all", "accept on <=", "reject on >="],
                      indent="          ")]

    def notation(self) -> str:
        cs = "/".join("-" if v is None else str(v) for v in self.c)
        return (f"multiple: n={'/'.join(map(str, self.n))}; c={cs}; "
                f"r={'/'.join(map(str, self.r))}")

    def to_dict(self) -> dict:
        return {"scheme": "multiple", "n": list(self.n), "c": list(self.c), "r": list(self.r)}


def parse_multiple(pairs: dict, text: str, option: str):
    """Multiple-plan notation (two stages written ``multiple: ...`` stay multiple)."""
    return build_staged(pairs, text, option)


FAMILY = Family(
    name="multiple", plan_class=MultiplePlan, parse=parse_multiple,
    description="multiple sampling: up to k stages with acceptance and rejection numbers",
)
