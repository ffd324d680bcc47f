"""Tables written for spreadsheets: CSV with a chosen separator and decimal
mark, or an ``.xlsx`` workbook (chosen by the file name).

A spreadsheet set to a decimal comma reads ``0.0912`` as text, or as 912;
``--decimal-comma`` writes numbers as ``0,0912`` and, since the comma then
marks decimals, separates fields with semicolons (``--csv-sep ;``, the
default with a decimal comma; ``tab`` also serves). Only numbers change:
text (part numbers, plan notation, the input columns echoed by ``batch``)
is written as it is, quoted where it holds the separator. A name ending in
``.xlsx`` writes a workbook instead, whose cells hold numbers as numbers,
so it needs neither option.

Examples
--------
>>> s = csv_style(None, True)
>>> s.sep, s.decimal
(';', ',')
>>> print(rows_text(["p", "pa", "plan"], [[0.01, 0.9475, "n=80,c=2"]], s), end="")
p;pa;plan
0,01;0,9475;n=80,c=2
>>> print(rows_text(["p", "pa"], [[0.01, 0.9475]], CsvStyle()), end="")
p,pa
0.01,0.9475
"""

from __future__ import annotations

import csv
import io
from dataclasses import dataclass

from lotwise.core.quantities import InputError

__all__ = ["CsvStyle", "csv_style", "number_text", "rows_text", "write_rows", "SEPARATORS"]

#: ``--csv-sep`` values and the separator each writes.
SEPARATORS = {",": ",", "comma": ",", ";": ";", "semicolon": ";", "tab": "\t", "\\t": "\t",
              "\t": "\t"}


@dataclass(frozen=True, kw_only=True)
class CsvStyle:
    """How a CSV table is written: the field separator and the decimal mark."""

    sep: str = ","
    decimal: str = "."

    @property
    def plain(self) -> bool:
        """Whether this is plain CSV (commas, decimal points)."""
        return self.sep == "," and self.decimal == "."


def csv_style(sep, decimal_comma: bool) -> CsvStyle:
    """The :class:`CsvStyle` of ``--csv-sep`` (None: a comma, or a semicolon with
    a decimal comma) and ``--decimal-comma``; a comma separator with a decimal
    comma is refused."""
    if sep is None:
        return CsvStyle(sep=";" if decimal_comma else ",", decimal="," if decimal_comma else ".")
    key = str(sep).strip().lower() if str(sep).strip() else str(sep)
    if key not in SEPARATORS:
        raise InputError(f"--csv-sep ({sep!r}) must be one of , ; tab")
    chosen = SEPARATORS[key]
    if decimal_comma and chosen == ",":
        raise InputError(f"--csv-sep ({sep}) cannot be a comma with --decimal-comma: the "
                         "decimal commas would split the fields; use ; or tab")
    return CsvStyle(sep=chosen, decimal="," if decimal_comma else ".")


def check_destination(dest, style: CsvStyle, option: str) -> None:
    """Refuse ``--csv-sep``/``--decimal-comma`` for a workbook (``.xlsx``)."""
    from lotwise.data.xlsx import is_xlsx

    if is_xlsx(dest) and not style.plain:
        raise InputError(f"{option} ({dest}) is an .xlsx workbook, which holds numbers as "
                         "numbers: --csv-sep and --decimal-comma apply to CSV files only")


def number_text(text: str, style: CsvStyle) -> str:
    """A number already written with a decimal point, in ``style``'s decimal mark."""
    return text.replace(".", style.decimal) if style.decimal != "." else text


def rows_text(header, rows, style: CsvStyle, cell=None) -> str:
    """``header`` and ``rows`` as CSV text in ``style``: numbers through ``cell``
    (default :func:`lotwise.analysis.outputs.csv_cell`) and the decimal mark,
    text as it is; fields quoted only where they must be."""
    if cell is None:
        from lotwise.analysis.outputs import csv_cell as cell
    buf = io.StringIO()
    w = csv.writer(buf, delimiter=style.sep, lineterminator="\n")
    w.writerow([str(h) for h in header])
    for row in rows:
        w.writerow([("" if v is None else v) if isinstance(v, str) or v is None
                    else number_text(cell(v), style) for v in row])
    return buf.getvalue()


def write_rows(dest, header, rows, *, style: CsvStyle, force: bool, option: str,
               cell=None):
    """Write a table to ``dest``: a workbook when it ends in ``.xlsx``, else CSV
    in ``style``. ``dest`` ``-`` writes nothing and returns the CSV text
    (for stdout); otherwise returns None."""
    from lotwise.data.files import write_bytes
    from lotwise.data.xlsx import is_xlsx, rows_xlsx

    if is_xlsx(dest):
        write_bytes(dest, rows_xlsx(header, rows, option=option), force=force, option=option)
        return None
    text = rows_text(header, rows, style, cell)
    if dest == "-":
        return text
    write_bytes(dest, text.encode("utf-8"), force=force, option=option)
    return None
