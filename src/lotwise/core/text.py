"""Plain-text tables for the terminal and for plan descriptions."""

from __future__ import annotations

__all__ = ["table"]


def table(rows: list[list[str]], header: list[str], indent: str = "  ") -> str:
    """A compact left-aligned text table.

    >>> print(table([["80", "2"]], ["n", "c"]))
      n   c
      --  -
      80  2
    """
    cols = [header] + rows
    widths = [max(len(str(r[i])) for r in cols) for i in range(len(header))]

    def fmt(r):
        return indent + "  ".join(str(v).ljust(w) for v, w in zip(r, widths)).rstrip()

    return "\n".join([fmt(header), indent + "  ".join("-" * w for w in widths)]
                     + [fmt(r) for r in rows])
