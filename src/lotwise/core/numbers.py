"""Numbers as every output writes them: one formatter for quality levels,
probabilities and table cells.

The terminal text, the sheets (PDF and Markdown), the CSV files, the figures'
labels and the page (``web/static/app.js`` mirrors :func:`percent`,
:func:`level` and :func:`probability`) all call these functions, so one
quantity reads the same everywhere.

Conventions (common practice, no source):

* A fraction (quality level, risk, rejection rate) is written in percent
  with ``digits`` significant figures while it rounds to 0.1 % or more, and
  in parts per million below: ``0.0123 -> '1.23 %'``, ``3.6e-4 -> '360 ppm'``,
  ``3.6e-8 -> '0.0360 ppm'``. Below 0.001 ppm the ppm figure is written in
  powers of ten (``'3.60e-06 ppm'``), so a cell never grows past a dozen
  characters.
* A probability written as a decimal (``Pa``) has four decimals; a nonzero
  one that would print as ``0.0000`` is written with two significant
  figures instead (``'3.6e-07'``).
* A number in a file meant for other programs (CSV) has at most ten
  significant digits: ``0.006500000000000001 -> '0.0065'``; whole numbers
  plainly.

Examples
--------
>>> percent(0.0123), percent(3.6e-4), percent(3.6e-8), percent(0.1)
('1.23 %', '360 ppm', '0.0360 ppm', '10.0 %')
>>> level(0.01), level(0.0025, digits=4), level(0.5, per_unit=True)
('1 %', '0.25 %', '0.5 per unit')
>>> probability(0.95), probability(3.6e-7), probability(0.0)
('0.9500', '3.6e-07', '0.0000')
>>> significant(0.006500000000000001), csv_number(80), csv_number(float("nan"))
('0.0065', '80', '')
"""

from __future__ import annotations

import math
from numbers import Integral

__all__ = ["significant", "csv_number", "percent", "level", "probability", "MAX_DIGITS"]

#: Most significant digits a number in a CSV file carries.
MAX_DIGITS = 10


def _missing(x) -> bool:
    return x is None or (isinstance(x, float) and math.isnan(x))


def significant(x: float, digits: int = MAX_DIGITS) -> str:
    """The shortest text of ``x`` rounded to ``digits`` significant figures
    (Python's round-trip ``repr`` of the rounded float: ``'0.0065'``,
    ``'1e-05'``, ``'12.5'``; ``'0'`` for zero, ``'inf'`` as Python writes it).

    >>> significant(0.1 + 0.2), significant(2 / 3, 4), significant(-0.0)
    ('0.3', '0.6667', '0')
    """
    x = float(x)
    if x == 0:
        return "0"
    if not math.isfinite(x):
        return repr(x)
    text = repr(float(f"{x:.{digits}g}"))
    return text[:-2] if text.endswith(".0") else text


def csv_number(v) -> str:
    """A CSV cell: empty for a missing value, whole numbers and booleans
    plainly, floats to at most :data:`MAX_DIGITS` significant digits."""
    if _missing(v):
        return ""
    if isinstance(v, bool) or type(v).__name__ == "bool_":
        return str(bool(v))
    if isinstance(v, Integral):
        return str(int(v))
    if isinstance(v, str):
        return v
    return significant(float(v))


def _fixed(v: float, digits: int, trim: bool) -> str:
    """``v`` in fixed notation with ``digits`` significant figures."""
    mag = math.floor(math.log10(abs(v)))
    text = f"{v:.{max(0, digits - 1 - mag)}f}"
    if trim and "." in text:
        text = text.rstrip("0").rstrip(".")
    return text


def percent(x, digits: int = 3, *, trim: bool = False) -> str:
    """A fraction in percent, or in ppm below 0.1 % (see the module's
    conventions); ``'-'`` for a missing value. ``trim`` drops trailing zeros
    (``'1 %'`` rather than ``'1.00 %'``).

    >>> percent(0.05), percent(0.000999), percent(0.0009999), percent(1e-12)
    ('5.00 %', '999 ppm', '0.100 %', '1.00e-06 ppm')
    """
    if _missing(x):
        return "-"
    x = float(f"{float(x):.{digits}g}")  # round first: the unit follows the rounded value
    if x == 0:
        return "0 %"
    if abs(x) >= 1e-3:
        return _fixed(100.0 * x, digits, trim) + " %"
    v = x * 1e6
    if abs(v) >= 1e-3:
        return _fixed(v, digits, trim) + " ppm"
    return _expo(v, digits, trim) + " ppm"


def _expo(v: float, digits: int, trim: bool) -> str:
    """``v`` in powers of ten with ``digits`` significant figures
    (``'3.60e-06'``; ``'3.6e-06'`` with ``trim``)."""
    mant, exp = f"{v:.{digits - 1}e}".split("e")
    if trim and "." in mant:
        mant = mant.rstrip("0").rstrip(".")
    return f"{mant}e{exp}"


def level(x, per_unit: bool = False, digits: int = 4) -> str:
    """A quality level as a practitioner writes it: percent from 0.1 %, ppm
    below, and nonconformities per unit (``per_unit``); trailing zeros
    dropped.

    >>> level(0.0065), level(2.5e-4), level(0.0123456), level(3.0, per_unit=True)
    ('0.65 %', '250 ppm', '1.235 %', '3 per unit')
    """
    if _missing(x):
        return "-"
    if per_unit:
        return f"{significant(x, digits + 2)} per unit"
    return percent(x, digits, trim=True)


def probability(x, decimals: int = 4) -> str:
    """A probability as a decimal (``Pa``): ``decimals`` places, a tiny
    nonzero value with two significant figures rather than all zeros.

    >>> probability(0.953452), probability(0.00012), probability(4e-9, 3)
    ('0.9535', '0.0001', '4e-09')
    >>> probability(1e-4, 3)
    '1e-04'
    """
    if _missing(x):
        return "-"
    x = float(x)
    if 0 < abs(x) < 0.5 * 10.0 ** -decimals:
        return _expo(x, 2, True)
    return f"{x:.{decimals}f}"
