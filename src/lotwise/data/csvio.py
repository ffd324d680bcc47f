"""Reading the CSV files users keep (lot records, part catalogues).

:func:`read_table` reads a whole file with the standard :mod:`csv` module,
so every row keeps the line number it starts on (the header is line 1) and
rows with the wrong number of fields are reported, not silently shifted.
Blank lines are skipped without a message. A UTF-8 byte-order mark (as
spreadsheet programs write) is ignored, and a header holding semicolons but
no commas makes the semicolon the delimiter.

Examples
--------
A receiving clerk exports the lot log; the second data row lost a field:

>>> import io
>>> t = read_table(io.StringIO("part,lot_size\\nA-1,500\\nA-2\\n"), "lots.csv")
>>> t.header, t.lines[1], t.problems[1]
(['part', 'lot_size'], 3, 'has 1 field(s), the header has 2')
"""

from __future__ import annotations

import csv
import io
from dataclasses import dataclass
from pathlib import Path

from lotwise.core.quantities import InputError

__all__ = ["Row", "Table", "read_table", "normalise_name"]


@dataclass(frozen=True, kw_only=True)
class Row:
    """One data row: its fields (padded to the header's length), the line it
    starts on, and what is wrong with its shape (empty when nothing)."""

    line: int
    fields: list
    problem: str = ""


@dataclass(frozen=True, kw_only=True)
class Table:
    """A CSV file: the header as written, the normalised column names, and the
    data as ``fields`` (one list per row, padded or cut to the header's
    length, not yet stripped), ``lines`` (the line each row starts on) and ``problems``
    (row index -> what is wrong with its shape)."""

    source: str
    raw_header: list
    header: list
    fields: list
    lines: list
    problems: dict

    @property
    def rows(self) -> list:
        """The rows as :class:`Row` objects."""
        return [Row(line=ln, fields=f, problem=self.problems.get(i, ""))
                for i, (ln, f) in enumerate(zip(self.lines, self.fields))]

    def __len__(self) -> int:
        return len(self.fields)

    def column(self, name: str) -> list:
        """The values of column ``name``, stripped."""
        i = self.header.index(name)
        return [f[i].strip() for f in self.fields]

    def problem_list(self) -> list:
        """The shape problem of every row ('' where none)."""
        out = [""] * len(self.fields)
        for i, p in self.problems.items():
            out[i] = p
        return out


def normalise_name(name: str) -> str:
    """Column name as matched: trimmed, lower case, spaces and hyphens as ``_``."""
    return "_".join(str(name).strip().lower().replace("-", " ").split())


def read_table(path, option: str) -> Table:
    """Read ``path`` (a file name or an open text stream) into a :class:`Table`.

    Raises :class:`InputError` naming ``option`` when the file cannot be read,
    is empty, or its header repeats a column.
    """
    if hasattr(path, "read"):
        text = path.read()
        source = option
    else:
        p = Path(path)
        source = str(p)
        try:
            raw = p.read_bytes()
        except FileNotFoundError:
            raise InputError(f"{option} ({p}) does not exist") from None
        except IsADirectoryError:
            raise InputError(f"{option} ({p}) is a folder; give a CSV file") from None
        except OSError as exc:
            raise InputError(f"{option} ({p}) cannot be read: {exc.strerror or exc}") from None
        try:
            text = raw.decode("utf-8-sig")
        except UnicodeDecodeError:
            text = raw.decode("latin-1")
    first = text.split("\n", 1)[0]
    delimiter = ";" if (";" in first and "," not in first) else ","
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter)
    header = None
    fields_out: list = []
    lines: list = []
    problems: dict = {}
    start = 1
    try:
        for fields in reader:
            line = start
            start = reader.line_num + 1
            if not fields or (not fields[0].strip() and all(not f.strip() for f in fields)):
                continue  # blank lines and lines of empty fields
            if header is None:
                header = [f.strip() for f in fields]
                header_line = line
                width = len(header)
                continue
            if len(fields) != width:
                problems[len(fields_out)] = (f"has {len(fields)} field(s), the header has "
                                             f"{width}")
                fields = (fields + [""] * width)[:width]
            fields_out.append(fields)
            lines.append(line)
    except csv.Error as exc:
        raise InputError(f"{option} ({source}) is not a readable CSV file near line "
                         f"{reader.line_num}: {exc}") from None
    if header is None:
        raise InputError(f"{option} ({source}) is empty: it needs a header line and data rows")
    names = [normalise_name(h) for h in header]
    seen = set()
    for raw_name, name in zip(header, names):
        if not name:
            raise InputError(f"{option} ({source}) has an unnamed column in its header "
                             f"(line {header_line})")
        if name in seen:
            raise InputError(f"{option} ({source}) names the column {raw_name!r} twice")
        seen.add(name)
    return Table(source=source, raw_header=header, header=names, fields=fields_out, lines=lines,
                 problems=problems)
