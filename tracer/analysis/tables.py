"""Plain-text and CSV tables shared by the analysis outputs.

A table is a list of column titles and a list of rows of already formatted strings;
:func:`format_table` aligns them for a terminal, :func:`write_csv` writes raw values.

>>> print(format_table(["rank", "path"], [["1", "plate(front:T back:T)"]], align="r<"))
rank  path
   1  plate(front:T back:T)
"""

from __future__ import annotations

import csv
import io
import math

__all__ = ["format_table", "csv_text", "fmt_sci", "fmt_fraction", "fmt_length_mm", "finite_or_none"]


def format_table(header: list[str], rows: list[list[str]], *, align: str | None = None,
                 indent: str = "") -> str:
    """Align ``rows`` under ``header``.

    Parameters
    ----------
    header : list of str
    rows : list of list of str
    align : str, optional
        One character per column, ``"<"`` (left) or ``"r"``/``">"`` (right); default
        right for every column but the last.
    indent : str
        Prefix of every line.
    """
    ncol = len(header)
    if align is None:
        align = "r" * (ncol - 1) + "<"
    widths = [len(h) for h in header]
    for row in rows:
        for i, cell in enumerate(row):
            widths[i] = max(widths[i], len(cell))
    lines = []
    for row in [header, *rows]:
        cells = []
        for i, cell in enumerate(row):
            last = i == ncol - 1
            if align[i] == "<":
                cells.append(cell if last else cell.ljust(widths[i]))
            else:
                cells.append(cell.rjust(widths[i]))
        lines.append(indent + "  ".join(cells).rstrip())
    return "\n".join(lines)


def csv_text(header: list[str], rows: list[list]) -> str:
    """CSV text (RFC 4180 quoting, ``\\n`` line ends) of raw values (``None`` -> empty)."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(header)
    for row in rows:
        w.writerow(["" if v is None else (repr(v) if isinstance(v, float) else v) for v in row])
    return buf.getvalue()


def fmt_sci(x: float | None, digits: int = 3) -> str:
    """``1.23e-04`` style, ``-`` for None, ``inf`` kept.

    >>> fmt_sci(0.000123456), fmt_sci(None), fmt_sci(0.0)
    ('1.235e-04', '-', '0')
    """
    if x is None:
        return "-"
    if x == 0:
        return "0"
    if not math.isfinite(x):
        return str(x)
    return f"{x:.{digits}e}"


def fmt_fraction(x: float | None, digits: int = 3) -> str:
    """A fraction as a percentage: fixed decimals from 0.1 %, scientific below.

    >>> fmt_fraction(0.92), fmt_fraction(1.5e-6), fmt_fraction(None), fmt_fraction(0.0)
    ('92.0 %', '1.500e-04 %', '-', '0 %')
    """
    if x is None:
        return "-"
    if x == 0:
        return "0 %"
    if not math.isfinite(x):
        return str(x)
    if abs(x) >= 1e-3:
        return f"{100 * x:.{max(digits - 2, 1)}f} %"
    return f"{100 * x:.{digits}e} %"


def fmt_length_mm(x: float | None, digits: int = 3) -> str:
    """A length [m] in millimetres with fixed decimals, ``-`` for None.

    >>> fmt_length_mm(0.0012)
    '1.200'
    """
    if x is None:
        return "-"
    text = f"{1e3 * x:.{digits}f}"
    return text[1:] if text.lstrip("-0.") == "" and text.startswith("-") else text


def finite_or_none(x):
    """``float(x)`` when finite, else ``None`` (JSON has no inf or NaN)."""
    if x is None:
        return None
    x = float(x)
    return x if math.isfinite(x) else None
