"""Query parameters of the web API, read like the command line's options.

A parameter is named as the command-line option without its leading dashes,
``-`` written ``_`` (``lot_size``, ``max_n``, ``process_average``); a flag is
``per_unit=1``; a repeatable option is repeated
(``at=1%&at=2%``). Values are passed on as the text the command line would
receive, so the same parser gives the same value and the same message.

The web API also bounds what one request may ask for (:data:`LIMITS`):
a bad or oversized parameter is an :class:`~lotwise.core.quantities.InputError`
naming the parameter, the value and what is allowed.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from lotwise.core.quantities import InputError

__all__ = ["Query", "LIMITS", "MAX_QUERY", "MAX_VALUE", "option_of"]

#: Longest query string accepted, in bytes.
MAX_QUERY = 4096
#: Longest single parameter value, in characters.
MAX_VALUE = 256
#: Largest whole number the web API takes per parameter (the command line
#: takes more; a local page has no use for it and a request must stay cheap).
LIMITS = {
    "lot_size": 10**9, "n": 10**6, "max_n": 10**6, "truncate": 10**6, "points": 2000,
    "run_length": 10**6, "deliveries_per_year": 10**5, "i": 10**6,
}
#: Largest number of values of a repeatable parameter (``at``, ``plan``, ``f``).
MAX_REPEAT = {"at": 200, "plan": 8, "f": 20}
#: Largest number of units a plan given in notation may inspect.
MAX_PLAN_SAMPLE = 10**6

ALIASES = {"ltpd": "rql"}
#: Spellings that were renamed, refused with a message naming the new one.
RENAMED = {"defects": "per_unit"}
FLAGS = ("per_unit", "designed")

_WHOLE = re.compile(r"^\s*\d+(?:[_,]\d{3})*\s*$")


def option_of(name: str) -> str:
    """The command-line option of a parameter: ``lot_size`` -> ``--lot-size``."""
    return "--" + name.replace("_", "-")


def _flag(name: str, value: str) -> bool:
    v = value.strip().lower()
    if v in ("1", "true", "yes", "on"):
        return True
    if v in ("0", "false", "no", "off", ""):
        return False
    raise InputError(f"{name} ({value}) must be 1 or 0 (a flag, like {option_of(name)})")


@dataclass(frozen=True, kw_only=True)
class Query:
    """The parameters of one request, checked against what the endpoint takes.

    Parameters
    ----------
    values : dict
        Parameter name -> list of values (in the order given).
    """

    values: dict

    @classmethod
    def parse(cls, pairs, allowed, repeatable=(), endpoint: str = "") -> "Query":
        """Check ``pairs`` (``(name, value)`` in order) against ``allowed``
        names; apply the web limits."""
        out: dict[str, list[str]] = {}
        for raw, value in pairs:
            if raw in RENAMED:
                raise InputError(f"{raw} ({value[:40]}) was renamed {RENAMED[raw]} "
                                 f"(nonconformities per unit); use {RENAMED[raw]}={value[:40]}")
            name = ALIASES.get(raw, raw)
            if name not in allowed:
                raise InputError(f"{raw} ({value[:40]}) is not a parameter of {endpoint}; "
                                 f"allowed: {', '.join(sorted(allowed))}")
            if len(value) > MAX_VALUE:
                raise InputError(f"{raw} ({value[:40]}...) is {len(value)} characters long; "
                                 f"at most {MAX_VALUE}")
            out.setdefault(name, []).append(value)
        for name, vals in out.items():
            if len(vals) > 1 and name in repeatable:
                cap = MAX_REPEAT.get(name, 20)
                if len(vals) > cap:
                    raise InputError(f"{name} is given {len(vals)} times; at most {cap}")
            if name in LIMITS:
                for v in vals:
                    _check_limit(name, v)
            if name == "at":
                count = sum(len([p for p in v.split(",") if p.strip()]) for v in vals)
                if count > MAX_REPEAT["at"]:
                    raise InputError(f"at gives {count} levels; at most {MAX_REPEAT['at']}")
        return cls(values=out)

    def get(self, name: str, default=None):
        """The value of a single-valued option (the last given wins, as on the
        command line), or ``default``."""
        vals = self.values.get(name)
        return vals[-1] if vals else default

    def many(self, name: str):
        """The values of a repeatable option, or None."""
        return list(self.values[name]) if name in self.values else None

    def flag(self, name: str) -> bool:
        vals = self.values.get(name)
        return _flag(name, vals[-1]) if vals else False


def _check_limit(name: str, value: str) -> None:
    """Refuse a whole number above the web limit (malformed values are left to
    the command's own parser, which names them the command line's way)."""
    if not _WHOLE.match(value):
        return
    v = int(value.strip().replace("_", "").replace(",", ""))
    if v > LIMITS[name]:
        raise InputError(f"{option_of(name)} ({v}) must be at most {LIMITS[name]:,} "
                         "in the web API")
