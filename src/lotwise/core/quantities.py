"""Parsing and validation of quality levels, risks and counts.

Practitioners write quality levels in several ways: ``0.01``, ``1%``,
``1.5 %`` or ``250ppm``. Every parser here returns a plain float fraction (or
an int) and raises :class:`InputError` with a message that names the option,
repeats the bad value and says what is allowed, for example::

    --aql (1.5) must be a fraction between 0 and 1, exclusive (write 1.5% for a percentage)

The command line turns :class:`InputError` into one line on stderr and exit
code 2; library users catch it as a :class:`ValueError`.

Examples
--------
>>> parse_level("250ppm", "--aql")
0.00025
>>> parse_level("1.5 %", "--rql")
0.015
"""

from __future__ import annotations

import math
import re

__all__ = [
    "InputError",
    "Infeasible",
    "TooCostly",
    "parse_fraction",
    "decimal_comma",
    "parse_level",
    "parse_risk",
    "parse_count",
    "parse_seed",
    "parse_rate",
    "MAX_COUNT",
    "MAX_RATE",
    "format_level",
    "format_pct",
]


class InputError(ValueError):
    """Malformed input: the message names the option, the value and what is allowed."""


class TooCostly(InputError):
    """A well-formed request whose computation, estimated before it starts,
    exceeds a documented budget: refused like bad input (one line, exit 2),
    the message saying what it would need and what to change."""


class Infeasible(Exception):
    """A well-formed request that no plan can meet.

    ``reachable`` carries what can be reached instead (a dict for JSON).
    """

    def __init__(self, message: str, reachable: dict | None = None):
        super().__init__(message)
        self.reachable = reachable or {}


_NUMBER = r"[+-]?(?:\d+(?:[._]\d+)*(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
_LEVEL_RE = re.compile(rf"^\s*({_NUMBER}|[+-]?\d*,\d+(?:[eE][+-]?\d+)?)\s*(%|ppm|ppb)?\s*$",
                       re.IGNORECASE)
_SCALE = {None: 1.0, "%": 1e2, "ppm": 1e6, "ppb": 1e9}  # divisors
#: A number written with a decimal comma: one comma, no dot (``0,65``, ``1,5``, ``,5``).
_COMMA_NUMBER = re.compile(r"^[+-]?\d*,\d+(?:[eE][+-]?\d+)?$")
#: The decimal-comma numbers a thousands separator could also have written (``1,500``).
_THOUSANDS_LIKE = re.compile(r"^[+-]?[1-9]\d{0,2},\d{3}$")


def decimal_comma(number: str, unit, name: str, text) -> str:
    """``number`` (the digits of a level or risk, its unit apart) with a decimal
    comma turned into a point, when the comma can only be a decimal comma.

    The rule: a number holding one comma and no dot has a decimal comma
    (``0,65%``, ``1,5 %``, ``0,01``). ``1,500`` could also be one thousand five
    hundred; with ``%`` or without a unit that reading is never a level or a risk
    (1,500 % or 1500 as a fraction), so the comma is decimal; with ``ppm`` or ``ppb``
    both readings are levels and the text is refused. Counts never take a
    decimal comma (:func:`parse_count` reads ``1,000`` as one thousand).

    >>> decimal_comma("0,65", "%", "--aql", "0,65%")
    '0.65'
    >>> decimal_comma("1,500", "ppm", "--aql", "1,500ppm")
    Traceback (most recent call last):
    ...
    lotwise.core.quantities.InputError: --aql ('1,500ppm') is ambiguous: 1.500 ppm with a decimal comma or 1500 ppm with a thousands separator; write 1.5ppm or 1500ppm
    """
    if "," not in number or not _COMMA_NUMBER.match(number):
        return number
    if unit in ("ppm", "ppb") and _THOUSANDS_LIKE.match(number):
        whole = number.replace(",", "")
        raise InputError(f"{name} ({text!r}) is ambiguous: {number.replace(',', '.')} {unit} "
                         f"with a decimal comma or {whole} {unit} with a thousands "
                         f"separator; write {float(number.replace(',', '.')):g}{unit} or "
                         f"{whole}{unit}")
    return number.replace(",", ".")


def parse_fraction(text, name: str) -> float:
    """Read ``0.01``, ``1%``, ``1.5 %``, ``250ppm`` or ``5ppb`` as a float; a
    decimal comma (``0,65%``) is read as :func:`decimal_comma` says.

    No range check: see :func:`parse_level` and :func:`parse_risk`.
    """
    if isinstance(text, bool):
        raise InputError(f"{name} ({text!r}) must be a number such as 0.01, 1% or 250ppm")
    if isinstance(text, (int, float)):
        value = float(text)
    else:
        m = _LEVEL_RE.match(str(text))
        if not m:
            raise InputError(f"{name} ({text!r}) must be a number such as 0.01, 1% or 250ppm")
        unit = m.group(2).lower() if m.group(2) else None
        number = decimal_comma(m.group(1), unit, name, text).replace("_", "")
        try:
            value = float(number) / _SCALE[unit]  # 95% -> 0.95 exactly, not 0.9500000000000001
        except ValueError:  # 1.2.3: digits and dots, but not one number
            raise InputError(f"{name} ({text!r}) must be a number such as 0.01, 1% or "
                             "250ppm") from None
    if not math.isfinite(value):
        raise InputError(f"{name} ({text!r}) must be a finite number")
    return value


def parse_level(text, name: str, *, per_unit: bool = False) -> float:
    """A quality level: a fraction nonconforming in (0, 1), or with
    ``per_unit`` a positive number of nonconformities per unit."""
    value = parse_fraction(text, name)
    if per_unit:
        if not value > 0:
            raise InputError(f"{name} ({text}) must be a positive number of nonconformities "
                             "per unit (1% means 1 per 100 units)")
        return value
    if not 0 < value < 1:
        hint = ""
        if isinstance(text, str) and "%" not in text and 1 <= value < 100:
            hint = f" (write {text.strip()}% for a percentage)"
        raise InputError(f"{name} ({text}) must be a fraction nonconforming between 0 and 1, "
                         f"exclusive{hint}")
    return value


def parse_risk(text, name: str) -> float:
    """A risk (alpha, beta) or a probability strictly between 0 and 1."""
    value = parse_fraction(text, name)
    if not 0 < value < 1:
        hint = ""
        if isinstance(text, str) and "%" not in text and 1 <= value < 100:
            hint = f" (write {text.strip()}% for a percentage)"
        raise InputError(f"{name} ({text}) must be a probability between 0 and 1, exclusive{hint}")
    return value


_COUNT_RE = re.compile(r"^\s*\d+(?:[_,]\d{3})*\s*$")

#: Largest count or size the computations honour (sample sizes, lot sizes,
#: acceptance numbers): beyond it the float arithmetic of the kernels no
#: longer tells one unit from the next.
MAX_COUNT = 10**12
#: Largest rate (lots or deliveries a year).
MAX_RATE = 10**9


def parse_count(text, name: str, *, minimum: int = 0, maximum: int | None = MAX_COUNT) -> int:
    """A whole number such as ``1000``, ``1_000`` or ``1,000`` within bounds
    (at most :data:`MAX_COUNT` unless ``maximum`` says otherwise)."""
    if isinstance(text, bool):
        raise InputError(f"{name} ({text!r}) must be a whole number")
    if isinstance(text, int):
        value = text
    elif isinstance(text, float):
        if not (math.isfinite(text) and text == int(text)):
            raise InputError(f"{name} ({text}) must be a whole number")
        value = int(text)
    else:
        s = str(text)
        if not _COUNT_RE.match(s):
            raise InputError(f"{name} ({text!r}) must be a whole number of at least {minimum}")
        value = int(s.strip().replace("_", "").replace(",", ""))
    if value < minimum:
        raise InputError(f"{name} ({value}) must be at least {minimum}")
    if maximum is not None and value > maximum:
        raise InputError(f"{name} ({value}) must be at most {maximum:,}")
    return value


_SEED_RE = re.compile(r"^\s*\d+(?:_\d+)*\s*$")


def parse_seed(text, name: str, *, bits: int = 63) -> int:
    """A seed: a whole number from 0 to ``2**bits - 1`` (default 2**63 - 1,
    what a 64-bit signed integer holds)."""
    allowed = f"a whole number from 0 to 2**{bits} - 1"
    if isinstance(text, bool) or not isinstance(text, (int, str)):
        raise InputError(f"{name} ({text!r}) must be {allowed}")
    if isinstance(text, str):
        if not _SEED_RE.match(text):
            raise InputError(f"{name} ({text!r}) must be {allowed} (digits only)")
        text = int(text.strip().replace("_", ""))
    if not 0 <= text <= 2**bits - 1:
        raise InputError(f"{name} ({text}) must be {allowed}")
    return text


def parse_rate(text, name: str, *, minimum: int = 0, whole: bool = False) -> int | float:
    """A rate of lots (deliveries) a year, from ``minimum`` to :data:`MAX_RATE`;
    with ``whole`` a whole number (returned as an int)."""
    what = "a whole number of lots per year" if whole else "a number of lots per year"
    allowed = f"{what} from {minimum} to {MAX_RATE:,}"
    if isinstance(text, bool):
        raise InputError(f"{name} ({text!r}) must be {allowed}")
    if isinstance(text, (int, float)):
        value = float(text)
    else:
        try:
            value = float(str(text).strip().replace("_", ""))
        except ValueError:
            raise InputError(f"{name} ({text!r}) must be {allowed}") from None
    if not (math.isfinite(value) and minimum <= value <= MAX_RATE):
        raise InputError(f"{name} ({text}) must be {allowed}")
    if whole:
        if value != int(value):
            raise InputError(f"{name} ({text}) must be {allowed}")
        return int(value)
    return value


def format_pct(x: float, digits: int = 3) -> str:
    """``0.0123 -> '1.23 %'`` with ``digits`` significant figures, ppm below
    0.1 % (:func:`lotwise.core.numbers.percent`)."""
    from lotwise.core.numbers import percent

    return percent(x, digits)


def format_risk(x: float) -> str:
    """:func:`format_pct` of ``x`` rounded to 12 decimals (0.0999999999999999 prints 10.0 %)."""
    return format_pct(round(float(x), 12))


def format_risk_vs(x: float, target: float) -> str:
    """:func:`format_risk`, with more digits when rounding would make a risk that
    misses its target look equal to it."""
    a = format_risk(x)
    if a == format_risk(target) and abs(x - target) > 1e-9:
        return format_pct(x, 6)
    return a


def format_level(x: float, per_unit: bool = False) -> str:
    """A quality level as a practitioner writes it: percent from 0.1 %, ppm
    below, and per-unit counts for nonconformities
    (:func:`lotwise.core.numbers.level`)."""
    from lotwise.core.numbers import level

    return level(x, per_unit)
