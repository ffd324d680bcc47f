"""Plan types and the inspection scope they are evaluated in.

A :class:`Scope` says what is being sampled: a finite lot (``lot_size``) or a
process, and whether the count is of nonconforming items or of
nonconformities per unit (``defects``). It decides which models apply:

=====================  ==============================================
scope                  models (the first is the exact one)
=====================  ==============================================
lot size known         hypergeometric, binomial, poisson
process / large lot    binomial, poisson
nonconformities/unit   poisson
=====================  ==============================================

A plan knows its acceptance probability under any applicable model at any
quality level; later plan types (double, multiple, sequential, ...) add the
same ``pa`` method so every report can treat them alike.

Plan notation, as typed on the command line: ``"n=80,c=2"`` (the rejection
number ``r`` may be given and must be ``c + 1``).

Examples
--------
An auditor checks a quoted plan "sample 80, accept on 2" for a lot of 500:

>>> plan = SinglePlan(n=80, c=2)
>>> scope = Scope(lot_size=500)
>>> round(plan.pa(0.01, "hypergeometric", scope), 4)
0.969
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

from lotwise.core import kernels as oc
from lotwise.core.quantities import InputError, parse_count

__all__ = ["Scope", "SinglePlan", "parse_plan", "lot_counts"]


@dataclass(frozen=True, kw_only=True)
class Scope:
    """What is sampled: a lot of ``lot_size`` items, or a process (``None``);
    ``defects`` for nonconformities per unit."""

    lot_size: int | None = None
    defects: bool = False

    @property
    def exact_model(self) -> str:
        if self.defects:
            return "poisson"
        return "hypergeometric" if self.lot_size else "binomial"

    @property
    def models(self) -> tuple[str, ...]:
        if self.defects:
            return ("poisson",)
        if self.lot_size:
            return ("hypergeometric", "binomial", "poisson")
        return ("binomial", "poisson")

    def check_model(self, model: str | None, option: str = "--model") -> str:
        """The model to use: ``model`` if it applies here, else the exact one."""
        if model is None:
            return self.exact_model
        if model not in oc.MODELS:
            raise InputError(f"{option} ({model}) must be one of: {', '.join(oc.MODELS)}")
        if model not in self.models:
            if model == "hypergeometric" and not self.defects:
                raise InputError(f"{option} ({model}) needs a lot size (--lot-size)")
            raise InputError(f"{option} ({model}) does not apply to nonconformities per unit; "
                             "the Poisson model is exact there")
        return model


def lot_counts(p, lot_size: int, rounding: str):
    """Vectorised :func:`lotwise.core.kernels.lot_count` (whole nonconforming items in the lot)."""
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


@dataclass(frozen=True, kw_only=True)
class SinglePlan:
    """Single sampling by attributes: inspect ``n`` units, accept the lot when
    at most ``c`` are nonconforming, reject it on ``c + 1`` or more."""

    n: int
    c: int

    def __post_init__(self):
        if not isinstance(self.n, (int, np.integer)) or self.n < 1:
            raise InputError(f"n ({self.n}) must be a whole number of at least 1")
        if not isinstance(self.c, (int, np.integer)) or self.c < 0:
            raise InputError(f"c ({self.c}) must be a whole number of at least 0")
        if self.c > self.n:
            raise InputError(f"c ({self.c}) must not be greater than n ({self.n})")

    scheme = "single"

    @property
    def r(self) -> int:
        """Rejection number."""
        return self.c + 1

    @property
    def label(self) -> str:
        return f"n={self.n}, c={self.c}"

    def pa(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """Acceptance probability at quality level(s) ``p`` under ``model``.

        Under the hypergeometric model ``p`` is turned into a whole count of
        nonconforming items in the lot with ``rounding`` (see
        :func:`lot_counts`).
        """
        if model == "hypergeometric":
            if not scope.lot_size:
                raise InputError("the hypergeometric model needs a lot size")
            if self.n > scope.lot_size:
                raise InputError(f"n ({self.n}) must not be greater than the lot size "
                                 f"({scope.lot_size})")
            d = lot_counts(p, scope.lot_size, rounding)
            return oc.pa_hypergeometric(self.n, self.c, scope.lot_size, d)
        if model == "binomial":
            return oc.pa_binomial(self.n, self.c, p)
        if model == "poisson":
            return oc.pa_poisson(self.n, self.c, p)
        raise InputError(f"model ({model}) must be one of: {', '.join(oc.MODELS)}")

    def pa_count(self, d, scope: Scope):
        """Acceptance probability for a lot holding ``d`` nonconforming items."""
        return oc.pa_hypergeometric(self.n, self.c, scope.lot_size, d)

    def to_dict(self) -> dict:
        return {"scheme": "single", "n": int(self.n), "c": int(self.c)}


_PAIR = re.compile(r"^\s*([A-Za-z][A-Za-z0-9_]*)\s*=\s*(.*?)\s*$")


def _split_notation(text: str, option: str) -> dict[str, str]:
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


#: Plan notations by kind: ``kind -> "module:function"`` (imported when used,
#: so the command line loads only what it needs). Each function takes the
#: ``key -> text`` pairs, the original text and the option name, and returns
#: a plan. A notation without a ``kind:`` prefix is recognised by its keys
#: (see :data:`KEYS_HINT`).
NOTATIONS: dict[str, str] = {
    "single": "lotwise.families.base:_parse_single",
    "chain": "lotwise.families.chain:_parse_chain",
    "skiplot": "lotwise.families.skiplot:_parse_skiplot",
    "variables": "lotwise.families.variables:_parse_variables",
    "double": "lotwise.families.multistage:_parse_double",
    "multiple": "lotwise.families.multistage:_parse_multiple",
    "sequential": "lotwise.families.sequential:_parse_sequential",
}

#: Keys that identify a notation written without a prefix: ``key -> kind``.
KEYS_HINT: dict[str, str] = {
    "f": "skiplot",
    "k": "variables",
    "n1": "double",
    "h1": "sequential",
}


def _parse_single(pairs: dict, text: str, option: str) -> SinglePlan:
    allowed = {"n", "c", "r"}
    unknown = sorted(set(pairs) - allowed)
    if unknown:
        raise InputError(f"{option} ({text!r}): unknown key {unknown[0]!r}; "
                         "a single plan takes n, c and optionally r = c + 1")
    for key in ("n", "c"):
        if key not in pairs:
            raise InputError(f"{option} ({text!r}) lacks {key}; write for example \"n=80,c=2\"")
    n = parse_count(pairs["n"], f"{option} n", minimum=1)
    c = parse_count(pairs["c"], f"{option} c", minimum=0)
    if c > n:
        raise InputError(f"{option} c ({c}) must not be greater than n ({n})")
    if "r" in pairs:
        r = parse_count(pairs["r"], f"{option} r", minimum=1)
        if r != c + 1:
            raise InputError(f"{option} r ({r}) must be c + 1 ({c + 1}) for a single plan")
    return SinglePlan(n=n, c=c)


def parse_plan(text: str, option: str = "--plan"):
    """Read a plan from its notation, e.g. ``"n=80,c=2"`` or ``"single: n=80, c=2"``.

    Raises :class:`InputError` naming the option, the value and what is allowed.
    """
    import importlib

    if not isinstance(text, str):
        raise InputError(f"{option} ({text!r}) must be plan notation such as \"n=80,c=2\"")
    kind = text.split(":", 1)[0].strip().lower() if ":" in text else None
    pairs = _split_notation(text, option)
    if kind is None:
        kind = next((KEYS_HINT[k] for k in pairs if k in KEYS_HINT), "single")
    if kind not in NOTATIONS:
        raise InputError(f"{option} ({text!r}): unknown plan kind {kind!r}; known: "
                         + ", ".join(NOTATIONS))
    module, func = NOTATIONS[kind].split(":")
    return getattr(importlib.import_module(module), func)(pairs, text, option)
