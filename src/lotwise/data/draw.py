"""Which units to pull: a seeded, reproducible random selection of unit numbers.

A plan's risks hold only if the sample is drawn at random from the whole lot.
:func:`draw_units` numbers the units of a lot 1 to ``N`` and picks ``n`` of
them, either by simple random sampling without replacement or stratified
across cartons, trays or pallets in proportion to their size. The seed is
recorded with the result, so an auditor can re-create the same pick list
years later.

The exact algorithm
-------------------
Everything below is fixed; changing any step changes the pick lists that
old seeds re-create, and is therefore a breaking change.

1. The generator is ``rng = numpy.random.default_rng(seed)``: numpy's
   :class:`~numpy.random.Generator` over the PCG64 bit generator, seeded
   through :class:`~numpy.random.SeedSequence` [1]_. When no seed is given a
   fresh one of at most ten digits is taken from the operating system
   (``secrets.randbelow(10**10)``) and recorded; any seed up to
   ``2**128 - 1`` is still accepted, so lists drawn with the longer seeds
   earlier versions chose are re-created.
2. *Simple random*: ``rng.choice(N, n, replace=False)`` draws ``n`` distinct
   numbers from ``0 .. N-1`` [1]_; adding 1 and sorting gives the unit
   numbers. Every set of ``n`` units is equally likely.
3. *Stratified*: the lot's units are split into consecutive strata (stratum
   1 holds units ``1 .. s_1``, stratum 2 the next ``s_2``, and so on).
   ``"cartons=40"`` means 40 strata of equal size: each holds ``N // 40``
   units and the last ``N % 40`` strata hold one unit more (a lot of 1,010
   in 40 cartons: 30 cartons of 25, then 10 of 26). ``"cartons=120,120,80"``
   gives the sizes explicitly; they must add up to ``N``.
4. *Allocation* in proportion to size by the largest-remainder (Hamilton)
   method [2]_, [3]_, in exact integer arithmetic: stratum ``k`` first gets
   ``floor(n * s_k / N)`` units; the units still unallocated go one each to
   the strata with the largest remainders ``(n * s_k) mod N``. When strata
   with equal remainders straddle the cut (say 2 units left for 5 equal
   cartons), the generator decides among them first: the tied strata, in
   stratum order, are reordered by ``rng.permutation`` of their count, and
   the first ones in that order get the units. Without such a tie the
   generator is not touched here. Every stratum thus gets its quota
   ``n * s_k / N`` rounded down or up, never more than its size, the
   allocations add up to ``n``, and no stratum is left out by its position
   in the lot (with fewer units than equal cartons, each carton is chosen
   with the same probability).
5. The strata are then visited in order and each stratum with an
   allocation ``a_k > 0`` draws ``rng.choice(s_k, a_k, replace=False)``
   from the same generator (strata with ``a_k = 0`` draw nothing); adding 1
   gives the positions within the stratum, and adding the units before the
   stratum gives the unit numbers.

numpy's policy [4]_ allows the Generator's streams to change between
releases, although they rarely do; each result therefore records the numpy
version it was drawn with, and the test suite pins one list so a change is
noticed. To re-create a list under another numpy, install the recorded
version.

References
----------
.. [1] NumPy Reference, "Random Generator", ``numpy.random.default_rng``,
   ``Generator.choice`` and ``SeedSequence``.
.. [2] W. G. Cochran, *Sampling Techniques*, 3rd ed., Wiley, 1977,
   section 5.5 (proportional allocation).
.. [3] M. L. Balinski and H. P. Young, *Fair Representation*, Yale
   University Press, 1982 (Hamilton's method of largest remainders).
.. [4] NumPy Enhancement Proposal 19, "Random number generator policy".

Examples
--------
A receiving clerk has a lot of 1,000 brackets in 3 cartons of 400, 350 and
250 and must pull 32 of them. The quotas are 12.8, 11.2 and 8.0, so the
first carton gets the spare unit:

>>> d = draw_units(lot_size=1000, n=32, seed=4711, strata="cartons=400,350,250")
>>> [(s.label, s.allocated) for s in d.strata]
[('carton 1 of 3', 13), ('carton 2 of 3', 11), ('carton 3 of 3', 8)]
>>> draw_units(lot_size=1000, n=32, seed=4711, strata="cartons=400,350,250").units == d.units
True
"""

from __future__ import annotations

import csv
import io
import re
from dataclasses import dataclass
from functools import cached_property
from typing import Sequence

import numpy as np

from lotwise.core.quantities import InputError, parse_seed

__all__ = ["Stratum", "Pick", "Draw", "draw_units", "split_strata", "allocate",
           "stratum_label", "singular", "fresh_seed", "MAX_LOT", "MAX_N", "MAX_STRATA",
           "MAX_SEED", "FRESH_DIGITS"]

#: Largest lot size accepted (the same bound as the other commands).
MAX_LOT = 10**12
#: Largest sample drawn: a pick list is for units a person pulls by hand.
MAX_N = 100_000
#: Most strata accepted.
MAX_STRATA = 100_000
#: Largest seed accepted: 2**128 - 1 (what earlier versions drew as a fresh seed).
MAX_SEED = 2**128 - 1
#: Digits of a fresh seed at most: short enough to copy from a printed pick list.
FRESH_DIGITS = 10

ALGORITHM = ("numpy.random.default_rng(seed); simple random: sorted(rng.choice(N, n, "
             "replace=False)) + 1; stratified: largest-remainder allocation, then "
             "rng.choice(size, allocated, replace=False) + 1 per stratum in order")

_NAME = re.compile(r"^[A-Za-z][A-Za-z0-9_ .-]*$")
_INT = re.compile(r"^\d+(?:_\d+)*$")
_STRATA_HELP = ('write NAME=COUNT for COUNT equal strata or NAME=SIZE,SIZE,... for sizes '
                'adding up to the lot size, for example "cartons=40" or "cartons=120,120,80"')


@dataclass(frozen=True, kw_only=True)
class Stratum:
    """One stratum: its label, where it starts, its size and its allocation."""

    label: str
    first_unit: int
    size: int
    allocated: int

    @property
    def last_unit(self) -> int:
        return self.first_unit + self.size - 1

    def as_dict(self) -> dict:
        return {"label": self.label, "size": self.size, "allocated": self.allocated,
                "first_unit": self.first_unit, "last_unit": self.last_unit}


@dataclass(frozen=True, kw_only=True)
class Pick:
    """One unit to pull: ``stratum`` and ``position`` are None for a simple random draw."""

    pick: int
    unit: int
    stratum: str | None = None
    position: int | None = None

    def as_dict(self) -> dict:
        return {"pick": self.pick, "unit": self.unit, "stratum": self.stratum,
                "position": self.position}


@dataclass(frozen=True, kw_only=True)
class Draw:
    """A pick list: the units to pull, sorted, and how to re-create it.

    Attributes
    ----------
    lot_size, n : int
        Units in the lot, units drawn.
    seed : int
        The seed actually used (given, or freshly drawn and recorded).
    method : str
        ``"simple random"`` or ``"stratified"``.
    units : tuple of int
        The unit numbers (1-based), ascending.
    strata : tuple of Stratum or None
        The strata and their allocations, None for a simple random draw.
    numpy_version : str
        The numpy release the list was drawn with.
    strata_spec : str or None
        The strata as written (``"cartons=40"``), for the re-create command.
    positions : tuple of int or None
        For a stratified draw, each unit's position within its stratum (in the
        order of ``units``); None for a simple random draw.

    The per-unit rows (:attr:`picks`, :meth:`as_dict`, :meth:`to_csv`) are made
    from these fields when asked for, not while drawing: a pick list of 42,399
    units is drawn in a few milliseconds and its 42,399 row objects cost several
    times that.
    """

    lot_size: int
    n: int
    seed: int
    method: str
    units: tuple[int, ...]
    strata: tuple[Stratum, ...] | None
    numpy_version: str
    strata_spec: str | None = None
    positions: tuple[int, ...] | None = None

    def _rows(self):
        """(pick, unit, stratum, position) of each unit, ascending."""
        if self.strata is None:
            return zip(range(1, self.n + 1), self.units, [None] * self.n, [None] * self.n)
        labels = [s.label for s in self.strata for _ in range(s.allocated)]
        return zip(range(1, self.n + 1), self.units, labels, self.positions)

    @cached_property
    def picks(self) -> tuple[Pick, ...]:
        """One entry per unit, ascending: pick number, unit, stratum, position."""
        return tuple(Pick(pick=i, unit=u, stratum=lab, position=p)
                     for i, u, lab, p in self._rows())

    def to_csv(self) -> str:
        """The pick list as CSV: a header ``pick,unit,stratum,position`` and one row per unit."""
        buf = io.StringIO()
        w = csv.writer(buf, lineterminator="\n")
        header, rows = self.table()
        w.writerow(header)
        for row in rows:
            w.writerow(["" if v is None else v for v in row])
        return buf.getvalue()

    def table(self) -> tuple[list, list]:
        """The pick list as ``(header, rows)``: ``pick, unit, stratum, position``,
        one row per unit (None where a unit has no stratum)."""
        return (["pick", "unit", "stratum", "position"],
                [[i, u, lab, p] for i, u, lab, p in self._rows()])

    def as_dict(self) -> dict:
        return {
            "lot_size": self.lot_size,
            "n": self.n,
            "seed": self.seed,
            "method": self.method,
            "units": list(self.units),
            "strata": None if self.strata is None else [s.as_dict() for s in self.strata],
            "strata_spec": self.strata_spec,
            "picks": [{"pick": i, "unit": u, "stratum": lab, "position": p}
                      for i, u, lab, p in self._rows()],
            "algorithm": ALGORITHM,
            "numpy": self.numpy_version,
        }


def _whole(value, option: str, minimum: int, maximum: int) -> int:
    if isinstance(value, (bool, np.bool_)) or not isinstance(value, (int, np.integer)):
        raise InputError(f"{option} ({value!r}) must be a whole number from {minimum:,} "
                         f"to {maximum:,}")
    value = int(value)
    if not minimum <= value <= maximum:
        raise InputError(f"{option} ({value}) must be a whole number from {minimum:,} "
                         f"to {maximum:,}")
    return value


def fresh_seed() -> int:
    """A new seed of at most :data:`FRESH_DIGITS` digits (from the operating
    system's randomness), short enough to copy from a printed pick list.

    >>> 0 <= fresh_seed() < 10**FRESH_DIGITS
    True
    """
    import secrets

    return secrets.randbelow(10**FRESH_DIGITS)


def stratum_label(name: str, k: int, count: int) -> str:
    """A stratum's label with its index in words: ``stratum_label("trays", 1, 20)``
    is ``'tray 1 of 20'`` (a plural name is made singular by the English rules
    for regular nouns: -ies to -y; -ches, -shes, -sses, -xes, -zes lose -es;
    otherwise a final -s not after another s is dropped).

    >>> stratum_label("trays", 1, 20), stratum_label("boxes", 3, 4), stratum_label("stratum", 2, 2)
    ('tray 1 of 20', 'box 3 of 4', 'stratum 2 of 2')
    """
    return f"{singular(name)} {k} of {count}"


def singular(name: str) -> str:
    """The singular of a regular English plural (``'cartons' -> 'carton'``,
    ``'batches' -> 'batch'``, ``'trolleys' -> 'trolley'``, ``'bodies' ->
    'body'``); a name that is not such a plural is kept."""
    low = name.lower()
    if low.endswith("ies") and len(name) > 4:
        return name[:-3] + ("Y" if name[-1].isupper() else "y")
    if low.endswith(("ches", "shes", "sses", "xes", "zes")):
        return name[:-2]
    if low.endswith("s") and not low.endswith(("ss", "us", "is")) and len(name) > 2:
        return name[:-1]
    return name


def _seed(seed) -> int:
    if seed is None:
        return fresh_seed()
    if isinstance(seed, np.integer) and not isinstance(seed, np.bool_):
        seed = int(seed)
    return parse_seed(seed, "--seed", bits=128)


def split_strata(lot_size: int, strata, *, option: str = "--strata",
                 lot_option: str = "--lot-size") -> tuple[str, list[int]]:
    """Read a strata specification: returns the name and the list of sizes.

    ``strata`` is ``"NAME=COUNT"`` (COUNT equal consecutive strata, the last
    ``lot_size % COUNT`` of them one unit larger), ``"NAME=SIZE,SIZE,..."``
    (sizes adding up to ``lot_size``), either without ``NAME=`` (the name is
    then ``"stratum"``), an int (a count) or a sequence of ints (sizes).
    Messages name ``option`` and ``lot_option`` (the option or file key).

    >>> split_strata(1010, "cartons=40")[1][28:32]
    [25, 25, 26, 26]
    >>> split_strata(300, "trays=120,100,80")
    ('trays', [120, 100, 80])
    """
    name = "stratum"
    shown = strata
    if isinstance(strata, str):
        text = strata.strip()
        if "=" in text:
            name, text = (s.strip() for s in text.split("=", 1))
            if not _NAME.match(name):
                raise InputError(f"{option} ({strata!r}): the name ({name!r}) must start with "
                                 "a letter and hold only letters, digits, spaces, '_', '-' "
                                 f"or '.'; {_STRATA_HELP}")
        parts = [p.strip() for p in text.split(",")]
        if not text or any(not _INT.match(p) for p in parts):
            raise InputError(f"{option} ({strata!r}) is not a strata specification; "
                             f"{_STRATA_HELP}")
        values = [int(p.replace("_", "")) for p in parts]
        if len(values) == 1:
            count = values[0]
            sizes = None
        else:
            count, sizes = None, values
    elif isinstance(strata, (int, np.integer)) and not isinstance(strata, (bool, np.bool_)):
        count, sizes = int(strata), None
    elif isinstance(strata, Sequence) and all(
            isinstance(v, (int, np.integer)) and not isinstance(v, (bool, np.bool_))
            for v in strata):
        count, sizes = None, [int(v) for v in strata]
        shown = ",".join(str(v) for v in sizes)
        if len(sizes) == 0:
            raise InputError(f"{option} ({strata!r}) is empty; {_STRATA_HELP}")
    else:
        raise InputError(f"{option} ({strata!r}) is not a strata specification; {_STRATA_HELP}")

    if sizes is None:
        if count < 1:
            raise InputError(f"{option} ({shown}) asks for {count} strata; give at least 1")
        if count > lot_size:
            raise InputError(f"{option} ({shown}) asks for {count:,} strata but {lot_option} is "
                             f"{lot_size:,}; each stratum needs at least one unit")
        if count > MAX_STRATA:
            raise InputError(f"{option} ({shown}) asks for {count:,} strata; at most "
                             f"{MAX_STRATA:,} are allowed")
        q, r = divmod(lot_size, count)
        return name, [q] * (count - r) + [q + 1] * r
    if len(sizes) > MAX_STRATA:
        raise InputError(f"{option} gives {len(sizes):,} sizes; at most {MAX_STRATA:,} "
                         "strata are allowed")
    for k, s in enumerate(sizes, 1):
        if s < 1:
            raise InputError(f"{option} ({shown}): the size of stratum {k} ({s}) must be "
                             "at least 1")
    total = sum(sizes)
    if total != lot_size:
        raise InputError(f"{option} ({shown}): the sizes add up to {total:,} but {lot_option} "
                         f"is {lot_size:,}; they must be equal")
    return name, sizes


def allocate(n: int, sizes: Sequence[int], rng=None) -> list[int]:
    """Allocate ``n`` units to strata in proportion to ``sizes`` (largest remainders).

    Exact integer arithmetic: stratum ``k`` gets ``floor(n * s_k / N)``, the
    rest go one each to the largest remainders ``(n * s_k) mod N``. Strata
    tied on the remainder at the cut are taken in stratum order, or, with a
    generator ``rng``, in the order of ``rng.permutation`` of the tied group
    (see the module's recipe, step 4).

    >>> allocate(4, [10, 10, 10])
    [2, 1, 1]
    """
    total = sum(sizes)
    if not 0 <= n <= total:
        raise InputError(f"--n ({n}) must not be greater than the lot size ({total})")
    base = [n * s // total for s in sizes]
    rem = [n * s % total for s in sizes]
    left = n - sum(base)
    order = sorted(range(len(sizes)), key=lambda k: (-rem[k], k))
    if rng is not None and 0 < left < len(order) and rem[order[left - 1]] == rem[order[left]]:
        cut = rem[order[left]]
        tied = [k for k in order if rem[k] == cut]
        start = order.index(tied[0])
        order[start:start + len(tied)] = [tied[i] for i in rng.permutation(len(tied))]
    for k in order[:left]:
        base[k] += 1
    return base


def draw_units(*, lot_size, n, seed=None, strata=None) -> Draw:
    """Draw ``n`` of the ``lot_size`` units at random, reproducibly from ``seed``.

    Parameters
    ----------
    lot_size : int
        Units in the lot, numbered 1 to ``lot_size``.
    n : int
        Units to pull (at most ``lot_size``).
    seed : int or str of digits, optional
        0 to 2**128 - 1. When omitted a fresh seed of at most ten digits is
        drawn and recorded.
    strata : str, int or sequence of int, optional
        ``"cartons=40"`` (40 equal consecutive strata) or
        ``"cartons=120,120,80"`` (explicit sizes), see :func:`split_strata`.
        Omitted: simple random sampling from the whole lot.

    Returns
    -------
    Draw

    Raises
    ------
    InputError
        Naming the option, the value and what is allowed.

    Examples
    --------
    Twenty housings out of a lot of 800:

    >>> d = draw_units(lot_size=800, n=20, seed=12)
    >>> d.method, len(set(d.units)), d.units == tuple(sorted(d.units))
    ('simple random', 20, True)
    >>> 1 <= min(d.units) and max(d.units) <= 800
    True
    """
    N = _whole(lot_size, "--lot-size", 1, MAX_LOT)
    if isinstance(n, (int, np.integer)) and not isinstance(n, (bool, np.bool_)) and n > N:
        raise InputError(f"--n ({int(n)}) must not be greater than --lot-size ({N})")
    n = _whole(n, "--n", 1, min(MAX_N, N))
    s = _seed(seed)
    rng = np.random.default_rng(s)
    if strata is None:
        units = np.sort(rng.choice(N, n, replace=False)) + 1
        return Draw(lot_size=N, n=n, seed=s, method="simple random",
                    units=tuple(units.tolist()), strata=None, numpy_version=np.__version__)

    name, sizes = split_strata(N, strata)
    alloc = allocate(n, sizes, rng)
    units: list[int] = []
    positions: list[int] = []
    out: list[Stratum] = []
    first = 1
    for k, (size, a) in enumerate(zip(sizes, alloc), 1):
        label = stratum_label(name, k, len(sizes))
        out.append(Stratum(label=label, first_unit=first, size=size, allocated=a))
        if a > 0:
            pos = np.sort(rng.choice(size, a, replace=False)) + 1
            positions.extend(pos.tolist())
            units.extend((pos + (first - 1)).tolist())
        first += size
    if isinstance(strata, str):
        spec = strata.strip()
    elif isinstance(strata, (int, np.integer)):
        spec = f"{name}={int(strata)}"
    else:
        spec = f"{name}=" + ",".join(map(str, sizes))
    return Draw(lot_size=N, n=n, seed=s, method="stratified",
                units=tuple(units), strata=tuple(out), numpy_version=np.__version__,
                strata_spec=spec, positions=tuple(positions))
