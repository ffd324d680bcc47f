"""Reading the CSV files users keep (lot records, part catalogues).

:func:`read_table` reads a whole file with the standard :mod:`csv` module,
so every row keeps the line number it starts on (the header is line 1) and
rows with the wrong number of fields are reported, not silently shifted.
Blank lines are skipped without a message. UTF-8 (with or without the
byte-order mark spreadsheet programs write), UTF-16 with its mark and latin-1
are read alike (:func:`decode_text`); a header holding semicolons but no commas
makes the semicolon the delimiter, one holding only tabs the tab
(:func:`detect_delimiter`).

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
import math
import io
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from lotwise.core.quantities import InputError

__all__ = ["Row", "Table", "Columns", "read_table", "read_columns", "read_measurements",
           "normalise_name", "decode_text", "detect_delimiter", "decimal_commas",
           "measurement_file", "MISSING"]

#: Cells read as "no value" in a measurements file.
MISSING = {"", "na", "n/a", "nan", "null", "none", "-", "?"}


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
    delimiter: str = ","
    decimal: str = "."

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


def decode_text(raw: bytes) -> str:
    """The text of a file as users' programs write it: UTF-16 with its byte-order
    mark, UTF-8 with or without one, else latin-1 (every byte is a character)."""
    if raw.startswith((b"\xff\xfe", b"\xfe\xff")):
        try:
            return raw.decode("utf-16")
        except UnicodeDecodeError:
            pass
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        return raw.decode("latin-1")


def detect_delimiter(first_line: str) -> str:
    """The field separator of a table from its header line: a comma, else a
    semicolon (spreadsheets set to a decimal comma), else a tab."""
    if "," in first_line:
        return ","
    if ";" in first_line:
        return ";"
    return "\t" if "\t" in first_line else ","


def read_table(path, option: str) -> Table:
    """Read ``path`` (a file name or an open text stream) into a :class:`Table`.

    Raises :class:`InputError` naming ``option`` when the file cannot be read,
    is empty, or its header repeats a column. A file named ``*.xlsx`` is read
    as a workbook (:func:`lotwise.data.xlsx.sheet_rows`): its first sheet, lines
    being the sheet's row numbers.
    """
    from lotwise.data.xlsx import is_xlsx

    if is_xlsx(path):
        return _xlsx_table(path, option)
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
        text = decode_text(raw)
    first = text.split("\n", 1)[0]
    delimiter = detect_delimiter(first)
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
    names = _checked_names(header, source, option, f"line {header_line}")
    return Table(source=source, raw_header=header, header=names, fields=fields_out, lines=lines,
                 problems=problems, delimiter=delimiter)


def _xlsx_table(path, option: str) -> Table:
    """The first sheet of a workbook as a :class:`Table` (header: its first
    non-blank row; a row with a cell right of the header's last is a problem)."""
    from lotwise.data.xlsx import sheet_rows

    source, rows = sheet_rows(path, option)
    if not rows:
        raise InputError(f"{option} ({source}) is empty: it needs a header row and data rows")
    header_line, header = rows[0]
    header = [h.strip() for h in header]
    width = len(header)
    fields_out, lines, problems = [], [], {}
    for line, cells in rows[1:]:
        if len(cells) > width:
            problems[len(fields_out)] = f"has {len(cells)} field(s), the header has {width}"
        fields_out.append((cells + [""] * width)[:width])
        lines.append(line)
    names = _checked_names(header, source, option, f"row {header_line}")
    return Table(source=source, raw_header=header, header=names, fields=fields_out,
                 lines=lines, problems=problems, delimiter="", decimal="")


def _checked_names(header, source, option, where) -> list:
    """The normalised column names, refusing an unnamed or repeated column."""
    names = [normalise_name(h) for h in header]
    seen = set()
    for raw_name, name in zip(header, names):
        if not name:
            raise InputError(f"{option} ({source}) has an unnamed column in its header "
                             f"({where})")
        if name in seen:
            raise InputError(f"{option} ({source}) names the column {raw_name!r} twice")
        seen.add(name)
    return names


# --- whole columns, for large files ----------------------------------------------

@dataclass(frozen=True, kw_only=True)
class Columns:
    """A CSV file as whole columns: like :class:`Table`, but each column is a
    pandas ``Categorical`` of the cells as written (not stripped), so a large
    file with repeated values costs one small integer per cell. ``lines`` is
    an array of the line each row starts on."""

    source: str
    raw_header: list
    header: list
    data: dict
    lines: object
    problems: dict
    delimiter: str = ","
    decimal: str = "."
    example: str = ""

    def __len__(self) -> int:
        return int(self.lines.size)

    @property
    def note(self) -> str:
        """How the file was read, when not as a plain comma-separated CSV file
        with decimal points ('' then): the separator, and the decimal comma
        with one cell as read."""
        if self.delimiter in ("", ","):
            return ""
        sep = "semicolons" if self.delimiter == ";" else "tabs"
        mark = (f"; numbers with a decimal comma ({self.example!r} read as "
                f"{_normalised(self.example)!r})" if self.decimal == "," else
                "; numbers with a decimal point")
        return f"{self.source}: fields separated by {sep}{mark}"

    def factor(self, name: str):
        """``(codes, texts)``: column ``name`` as integer codes into an object
        array of its distinct cells (as written)."""
        cat = self.data[name]
        return np.asarray(cat.codes, dtype=np.int64), np.asarray(cat.categories, dtype=object)

    def problem_list(self) -> list:
        """The shape problem of every row ('' where none)."""
        out = [""] * len(self)
        for i, p in self.problems.items():
            out[i] = p
        return out

    @classmethod
    def of(cls, t: Table) -> "Columns":
        """A :class:`Table` as columns (the slow reader's result)."""
        import pandas as pd

        cols = list(zip(*t.fields)) if len(t) else [()] * len(t.header)
        data = {h: pd.Categorical(np.asarray(c, dtype=object) if c else
                                  np.zeros(0, dtype=object)) for h, c in zip(t.header, cols)}
        return cls(source=t.source, raw_header=t.raw_header, header=t.header, data=data,
                   lines=np.asarray(t.lines, dtype=np.int64), problems=dict(t.problems),
                   delimiter=t.delimiter, decimal=t.decimal)


def read_columns(path, option: str, *, keep=()) -> Columns:
    """Read ``path`` as :func:`read_table` does (same rows, line numbers,
    problems and errors), into :class:`Columns`.

    A file (not a stream) with plain quoting (quotes only around whole
    fields, no line end inside quotes) and plain line ends is read by the
    pandas C reader (every line one row, its fields counted on the raw
    bytes); anything else goes through :func:`read_table`. A file separated
    by semicolons or tabs may write its numbers with a decimal comma; they
    are then read as :func:`decimal_commas` says (the columns named in
    ``keep``, names and identifiers, are left as written).
    """
    from lotwise.data.xlsx import is_xlsx

    cols = None
    if not hasattr(path, "read") and not is_xlsx(path):
        cols = _fast_columns(_raw_bytes(path, option), path, str(Path(path)))
    if cols is None:
        cols = Columns.of(read_table(path, option))
    return decimal_commas(cols, option, keep=keep)


# --- decimal commas ---------------------------------------------------------------

_UNIT = r"(?:\s*(?:%|ppm|ppb))?"
#: A number whose comma can only be a decimal comma: ``0,65``, ``2,5``, ``,5``,
#: ``1.234,5`` (thousands dots), ``12,5`` -- but not ``1,500``, which a
#: thousands separator could have written.
_COMMA_DECISIVE = re.compile(
    rf"^[+-]?(?:\d{{1,3}}(?:\.\d{{3}})+,\d+|0?,\d+|\d+,(?!\d{{3}}{_UNIT}$)\d+|0\d*,\d+)"
    rf"{_UNIT}$", re.IGNORECASE)
#: A number whose point can only be a decimal point: ``0.65``, ``2.5``, ``1,234.5``
#: -- but not ``1.500``, which a thousands separator could have written.
_POINT_DECISIVE = re.compile(
    rf"^[+-]?(?:\d{{1,3}}(?:,\d{{3}})+\.\d+|0?\.\d+|\d+\.(?!\d{{3}}{_UNIT}$)\d+|0\d*\.\d+)"
    rf"(?:[eE][+-]?\d+)?{_UNIT}$", re.IGNORECASE)
#: A whole number written with thousands dots (``200.000``, ``1.060``).
_THOUSAND_DOTS = re.compile(r"^[+-]?[1-9]\d{0,2}(?:\.\d{3})+$")
#: Numbers rewritten in a decimal-comma file: a decimal comma, thousands dots or both.
_COMMA_NUMBER = re.compile(rf"^(\s*[+-]?)(\d{{1,3}}(?:\.\d{{3}})+|\d*)(?:,(\d+))?({_UNIT}\s*)$",
                           re.IGNORECASE)


def _normalised(text: str) -> str:
    """A cell of a decimal-comma file as a decimal-point cell: ``0,65%`` ->
    ``0.65%``, ``1.060`` -> ``1060``, ``1.234,5`` -> ``1234.5``; other text as is."""
    m = _COMMA_NUMBER.match(text)
    if not m or (m.group(3) is None and "." not in m.group(2)) or not (m.group(2) or m.group(3)):
        return text
    whole = m.group(2).replace(".", "")
    return m.group(1) + whole + ("." + m.group(3) if m.group(3) is not None else "") + m.group(4)


def decimal_commas(cols: Columns, option: str, *, keep=()) -> Columns:
    """``cols`` with its numbers written with decimal points when the file
    writes them with decimal commas.

    The rule (one decision for the whole file): only a file separated by
    semicolons or tabs may use decimal commas. It does when one of its cells
    (outside ``keep``) is a number whose comma can only be a decimal comma
    (``0,65%``, ``2,5``; not ``1,500``, which may be one thousand five hundred)
    and none is a number whose point can only be a decimal point (``0.65%``);
    both at once is refused, naming one of each. In a decimal-comma file, dots
    between groups of three digits are thousands separators (``1.060`` is one
    thousand and sixty); a file separated by semicolons or tabs whose only
    telling numbers are such (``200.000`` and no ``0.65``) is read so too, as
    the spreadsheets that write semicolons write thousands. Otherwise cells are left as written: a comma file
    quotes ``"0,65%"`` (read by :func:`lotwise.core.quantities.parse_fraction`)
    and ``"1,000"`` (a count, one thousand).

    >>> import io
    >>> t = read_table(io.StringIO("part;aql;lot_size\\nP-1;0,65%;1.060\\n"), "CATALOGUE")
    >>> c = decimal_commas(Columns.of(t), "CATALOGUE", keep=("part",))
    >>> [str(c.data[h][0]) for h in c.header], c.decimal
    (['P-1', '0.65%', '1060'], ',')
    """
    if cols.delimiter not in (";", "\t") or not len(cols):
        return cols
    import pandas as pd

    comma = point = dots = ""
    names = [h for h in cols.header if h not in set(keep)]
    for h in names:
        for v in cols.data[h].categories.tolist():
            v = str(v).strip()
            if not comma and _COMMA_DECISIVE.match(v):
                comma = v
            if not point and _POINT_DECISIVE.match(v):
                point = v
            if not dots and _THOUSAND_DOTS.match(v):
                dots = v
    if comma and point:
        raise InputError(f"{option} ({cols.source}) mixes decimal commas ({comma!r}) and "
                         f"decimal points ({point!r}); write every number one way")
    if point or not (comma or dots):
        return cols
    comma = comma or dots
    data = dict(cols.data)
    for h in names:
        cat = data[h]
        texts = [str(v) for v in cat.categories.tolist()]
        new = [_normalised(v.strip()) if _COMMA_NUMBER.match(v) else v for v in texts]
        if new != texts:
            codes, uniq = pd.factorize(np.array(new + [""], dtype=object))
            codes = np.asarray(codes)
            old = np.asarray(cat.codes)
            mapped = np.where(old < 0, codes[-1], codes[np.maximum(old, 0)])
            data[h] = pd.Categorical.from_codes(
                mapped, categories=pd.Index(np.asarray(uniq, dtype=object), dtype=object))
    from dataclasses import replace

    return replace(cols, data=data, decimal=",", example=comma)


def _raw_bytes(path, option) -> bytes:
    """The bytes of the file at ``path``."""
    p = Path(path)
    try:
        return p.read_bytes()
    except FileNotFoundError:
        raise InputError(f"{option} ({p}) does not exist") from None
    except IsADirectoryError:
        raise InputError(f"{option} ({p}) is a folder; give a CSV file") from None
    except OSError as exc:
        raise InputError(f"{option} ({p}) cannot be read: {exc.strerror or exc}") from None


def _field_counts(buf, delim: int):
    """Fields per physical line of ``buf`` (uint8 array) and the line count,
    or ``None`` when the quoting is not plain (a quote that does not open or
    close a whole field, a line end inside quotes). Delimiters between
    quotes do not count; worked in slices so no array of the file's size is
    made."""
    step = 1 << 23
    nl = _positions(buf, 10, step)
    ends = np.r_[nl, buf.size] if (buf.size and buf[-1] != 10) else nl
    q = _positions(buf, 34, step)
    if q.size and not _plain_quotes(buf, q, delim, ends):
        return None
    counts = np.zeros(ends.size, dtype=np.int64)
    for s in range(0, buf.size, step):
        pos = np.flatnonzero(buf[s:s + step] == delim) + s
        if q.size:
            pos = pos[np.searchsorted(q, pos) % 2 == 0]
        if pos.size:
            counts += np.diff(np.searchsorted(pos, np.r_[-1, ends]))
    return counts + 1, ends.size


def _positions(buf, byte: int, step: int):
    """Where ``byte`` occurs in ``buf``, found slice by slice."""
    kind = np.int32 if buf.size < 2**31 - 1 else np.int64
    found = [(np.flatnonzero(buf[s:s + step] == byte) + s).astype(kind)
             for s in range(0, buf.size, step)]
    return np.concatenate(found) if found else np.zeros(0, dtype=kind)


def _plain_quotes(buf, q, delim: int, ends) -> bool:
    """Whether every quote at ``q`` opens a field (at its start, or doubling
    a quote just closed) or closes one (before a delimiter, line end or a
    doubling quote), with no line end inside quotes."""
    if q.size % 2 or (np.searchsorted(q, ends) % 2).any():
        return False
    opening, closing = q[0::2], q[1::2]
    prev = np.where(opening > 0, buf[np.maximum(opening - 1, 0)], 10)
    nxt = np.where(closing + 1 < buf.size, buf[np.minimum(closing + 1, buf.size - 1)], 10)
    return bool(np.isin(prev, (delim, 10, 34)).all() and np.isin(nxt, (delim, 10, 13, 34)).all())


def _fast_columns(raw: bytes, path, source: str):
    """The pandas C reader's columns of the file at ``path`` (whose bytes are
    ``raw``, dropped once scanned: the caller keeps no reference), or None where :func:`read_table` must
    decide (quotes, carriage returns alone, a header problem, no data)."""
    if raw.startswith(b"\xef\xbb\xbf"):
        raw = raw[3:]
    if b"\x00" in raw or raw.count(b"\r") != raw.count(b"\r\n") or raw.isspace() or not raw:
        return None
    first = raw[:raw.find(b"\n")] if b"\n" in raw else raw  # no copy of the whole file
    if b"\t" in first and b"," not in first and b";" not in first:
        return None  # tab-separated: read_table
    delim = ";" if (b";" in first and b"," not in first) else ","
    buf = np.frombuffer(raw, dtype=np.uint8)
    found = _field_counts(buf, ord(delim))
    if found is None:
        return None
    counts, n_lines = found
    width_all = int(counts.max())
    del raw, buf  # the reader streams the file itself
    factors = None
    for enc in ("utf-8-sig", "latin-1"):
        try:
            factors = _read_factors(path, delim, width_all, enc)
            break
        except UnicodeDecodeError:
            continue
    if factors is None or factors[0][0].size != n_lines:
        return None
    blank = np.ones(n_lines, dtype=bool)
    for codes, texts in factors:
        blank &= np.array([not v.strip() for v in texts.tolist()], dtype=bool)[codes]
    rows = np.flatnonzero(~blank)
    if rows.size < 1:
        return None
    head = rows[0]
    header = [str(texts[codes[head]]).strip() for codes, texts in factors[:counts[head]]]
    width = len(header)
    rows = rows[1:]
    names = [normalise_name(h) for h in header]
    if _header_problem(names) or not rows.size:
        return None  # read_table words the error
    bad = np.flatnonzero(counts[rows] != width)
    problems = {int(k): f"has {counts[rows[k]]} field(s), the header has {width}" for k in bad}
    data = {name: _categorical(codes[rows], texts) for name, (codes, texts) in
            zip(names, factors)}
    return Columns(source=source, raw_header=header, header=names, data=data,
                   lines=rows.astype(np.int64) + 1, problems=problems, delimiter=delim)


def _read_factors(path, delim: str, width: int, encoding: str, rows: int = 50_000):
    """Every column of the file as ``(codes, distinct texts)``, read by the
    pandas C reader in slices of ``rows`` lines so that only one slice is
    held as Python strings at a time."""
    import pandas as pd

    parts: list = [[] for _ in range(width)]
    reader = pd.read_csv(path, sep=delim, header=None, names=list(range(width)),
                         dtype=str, na_filter=False, skip_blank_lines=False,
                         quoting=csv.QUOTE_MINIMAL, encoding=encoding, engine="c",
                         chunksize=rows)
    with reader:
        for chunk in reader:
            for j in range(width):
                codes, uniq = pd.factorize(chunk.pop(j).to_numpy(dtype=object))
                parts[j].append((codes.astype(np.int32), np.asarray(uniq, dtype=object)))
    out = []
    for pieces in parts:
        if not pieces:
            return None
        texts_all = np.concatenate([u for _, u in pieces])
        glob, texts = pd.factorize(texts_all)
        offsets = np.cumsum([0] + [len(u) for _, u in pieces[:-1]])
        codes = np.concatenate([glob[o + c] for (c, _), o in zip(pieces, offsets)])
        out.append((codes.astype(np.int32), np.asarray(texts, dtype=object)))
    return out


def _categorical(codes, texts):
    """A pandas ``Categorical`` from codes and distinct texts (checked unique)."""
    import pandas as pd

    return pd.Categorical.from_codes(codes, dtype=pd.CategoricalDtype(pd.Index(texts, dtype=object)),
                                     validate=False)


def _header_problem(names) -> bool:
    """Whether the header has an unnamed or repeated column."""
    return any(not n for n in names) or len(set(names)) != len(names)


def read_measurements(path: str) -> list[float]:
    """Numbers from a one-column measurements file (see :func:`measurement_file`)."""
    return measurement_file(path)[0]


_MEASURE_COMMA = re.compile(r"^[+-]?\d*,\d+(?:[eE][+-]?\d+)?$")
_MEASURE_POINT = re.compile(r"^[+-]?\d*\.\d+(?:[eE][+-]?\d+)?$")


def measurement_file(path: str) -> tuple[list[float], str]:
    """Numbers from a one-column measurements file (one number a line, an
    optional header; the encodings of :func:`decode_text`) and a note saying
    how it was read ('' for plain decimal points); refuses a bad row naming
    it (rows are lines, the header being row 1).

    Decimal commas: the file is one column, so a comma between digits can
    only be a decimal comma (``25,012`` is 25.012) when no number in the file
    has a decimal point; a file holding both is refused, and thousands
    separators are not read in measurements.
    """
    try:
        text = decode_text(Path(path).read_bytes())
    except FileNotFoundError:
        raise InputError(f"measurements ({path}) does not exist") from None
    except IsADirectoryError:
        raise InputError(f"measurements ({path}) is a folder; give a file") from None
    except OSError as exc:
        raise InputError(f"measurements ({path}) cannot be read: {exc.strerror}") from None
    lines = text.splitlines()
    while lines and not lines[-1].strip():
        lines.pop()
    cells = [ln.strip().rstrip(";\t").strip().strip('"').strip("'").strip() for ln in lines]
    comma = next((c for c in cells if _MEASURE_COMMA.match(c)), "")
    point = next((c for c in cells if _MEASURE_POINT.match(c)), "")
    note = ""
    if comma and point:
        raise InputError(f"measurements ({path}) mixes decimal commas ({comma!r}) and decimal "
                         f"points ({point!r}); write every number one way")
    if comma:
        lines = [ln.replace(",", ".") if _MEASURE_COMMA.match(c) else ln
                 for ln, c in zip(lines, cells)]
        note = (f"measurements ({path}): numbers with a decimal comma ({comma!r} read as "
                f"{comma.replace(',', '.')})")
    out: list[float] = []
    for i, raw in enumerate(lines, start=1):
        cell = raw.strip()
        fields = [f.strip() for f in cell.replace(";", ",").replace("\t", ",").split(",")]
        if len(fields) > 1:
            if all(f == "" for f in fields[1:]):
                fields = fields[:1]  # a trailing separator
            else:
                raise InputError(f"measurements ({path}) row {i} ({raw.strip()!r}) holds "
                                 f"{len(fields)} fields; the file must be one column of numbers")
        cell = fields[0].strip().strip('"').strip("'").strip()
        if cell.lower() in MISSING:
            raise InputError(f"measurements ({path}) row {i} is a missing value "
                             f"({raw.strip()!r}); every measurement must be there")
        try:
            v = float(cell)
        except ValueError:
            if i == 1 and not out:
                continue  # header
            raise InputError(f"measurements ({path}) row {i} ({cell!r}) is not a number") \
                from None
        if not math.isfinite(v):
            raise InputError(f"measurements ({path}) row {i} ({cell!r}) is not a finite number")
        out.append(v)
    if not out:
        raise InputError(f"measurements ({path}) holds no numbers")
    return out, note
