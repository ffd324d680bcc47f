"""The closed sets of names and the small value types every layer shares.

* :class:`Model`, :class:`Side`, :class:`Rounding`, :class:`AoqFormula`: the
  names a user may type, as ``StrEnum`` (each member *is* its string, so JSON
  and comparisons with plain strings keep working);
* :class:`Scope`: what is sampled (a lot of known size or a process; items or
  nonconformities per unit) and hence which models apply;
* :class:`Targets`: the two agreed points of the OC curve and their risks.

A scope decides which models apply:

=====================  ==============================================
scope                  models (the first is the exact one)
=====================  ==============================================
lot size known         hypergeometric, binomial, poisson
process / large lot    binomial, poisson
nonconformities/unit   poisson
=====================  ==============================================

Examples
--------
A receiving inspector sentences lots of 500 housings:

>>> Scope(lot_size=500).models
('hypergeometric', 'binomial', 'poisson')
>>> Scope(per_unit=True).exact_model
'poisson'
"""

from __future__ import annotations

from dataclasses import dataclass
from enum import StrEnum

import numpy as np

from lotwise.core.kernels import lot_count
from lotwise.core.quantities import InputError

__all__ = ["Model", "Side", "Rounding", "AoqFormula", "Scope", "Targets", "lot_counts",
           "lot_targets", "table_counts", "TOL"]

#: Slack for floating-point ties at a risk boundary.
TOL = 1e-12


class Model(StrEnum):
    """The probability model of a count in the sample."""

    HYPERGEOMETRIC = "hypergeometric"
    BINOMIAL = "binomial"
    POISSON = "poisson"


class Side(StrEnum):
    """Which of the plan's own quality levels is meant."""

    PRODUCER = "producer"
    INDIFFERENCE = "indifference"
    CONSUMER = "consumer"


class Rounding(StrEnum):
    """How a fraction of a finite lot becomes a whole count of items."""

    UP = "up"
    DOWN = "down"
    NEAREST = "nearest"


class AoqFormula(StrEnum):
    """Rectifying-inspection convention for the average outgoing quality."""

    SCREENED = "screened"
    SIMPLE = "simple"


def _choice(enum, value, option: str):
    try:
        return enum(str(value).lower())
    except ValueError:
        raise InputError(f"{option} ({value}) must be one of: "
                         + ", ".join(m.value for m in enum)) from None


def parse_choice(enum, value, option: str):
    """``value`` as a member of ``enum`` (case-insensitive), or an
    :class:`InputError` naming ``option``, the value and the allowed names."""
    return _choice(enum, value, option)


@dataclass(frozen=True, kw_only=True)
class Scope:
    """What is sampled: a lot of ``lot_size`` items, or a process (``None``);
    ``per_unit`` for nonconformities per unit."""

    lot_size: int | None = None
    per_unit: bool = False

    @property
    def exact_model(self) -> str:
        if self.per_unit:
            return Model.POISSON.value
        return (Model.HYPERGEOMETRIC if self.lot_size else Model.BINOMIAL).value

    @property
    def models(self) -> tuple[str, ...]:
        if self.per_unit:
            return ("poisson",)
        if self.lot_size:
            return ("hypergeometric", "binomial", "poisson")
        return ("binomial", "poisson")

    def check_model(self, model: str | None, option: str = "--model") -> str:
        """The model to use: ``model`` if it applies here, else the exact one."""
        if model is None:
            return self.exact_model
        model = _choice(Model, model, option).value
        if model not in self.models:
            if model == "hypergeometric" and not self.per_unit:
                raise InputError(f"{option} ({model}) needs a lot size (--lot-size)")
            raise InputError(f"{option} ({model}) does not apply to nonconformities per unit; "
                             "the Poisson model is exact there")
        return model


@dataclass(frozen=True, kw_only=True)
class Targets:
    """Quality levels and risks agreed between buyer and supplier."""

    aql: float
    rql: float
    alpha: float = 0.05
    beta: float = 0.10

    def as_dict(self) -> dict:
        return {"aql": self.aql, "alpha": self.alpha, "rql": self.rql, "beta": self.beta}


def lot_counts(p, lot_size: int, rounding: str):
    """Whole counts of nonconforming items for fractions ``p`` of a lot
    (vectorised :func:`lotwise.core.kernels.lot_count`)."""
    p = np.asarray(p, dtype=float)
    x = p * float(lot_size)
    r = np.round(x)
    whole = np.abs(x - r) <= 1e-9 * np.maximum(1.0, np.abs(x))
    if rounding == "up":
        out = np.where(whole, r, np.ceil(x))
    elif rounding == "down":
        out = np.where(whole, r, np.floor(x))
    else:
        out = r
    return np.clip(out, 0, lot_size)


def lot_targets(targets: Targets, lot_size: int) -> tuple[int, int]:
    """Whole counts ``(D1, D2)`` of nonconforming items at the AQL (rounded up)
    and at the RQL (rounded down) for a lot of ``lot_size``."""
    return (lot_count(targets.aql, lot_size, "up"), lot_count(targets.rql, lot_size, "down"))


def table_counts(p, lot_size: int, split: int, *, aql: float | None = None,
                 rql: float | None = None):
    """Whole counts for the levels ``p`` of an OC table of a finite lot, rounded
    the conservative way design rounds the targets (:func:`lot_targets`: up at
    the AQL, down at the RQL): ``p N`` is rounded **up** on the producer's side
    of the curve -- below ``split`` (the plan's indifference count) and at any
    level up to ``aql`` -- and **down** on the consumer's side -- from ``split``
    on and at any level from ``rql`` on. A level that is a whole count (within
    1e-9) is that count.

    Examples
    --------
    >>> table_counts([0.01, 0.02, 0.025], 150, 3, aql=0.01, rql=0.025).tolist()
    [2.0, 3.0, 3.0]
    """
    p = np.asarray(p, dtype=float)
    use_up = p * float(lot_size) < split
    if aql is not None:
        use_up = use_up | (p <= aql)
    if rql is not None:
        use_up = use_up & ~(p >= rql)
    return np.where(use_up, lot_counts(p, lot_size, "up"), lot_counts(p, lot_size, "down"))
