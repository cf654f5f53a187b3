"""The one CSV writer of every file the app hands out (RFC 4180), with formula cells neutralised.

A spreadsheet runs a cell that starts with =, +, -, @, a tab or a line break as a formula (OWASP:
"CSV Injection"). Text that starts so gets a leading apostrophe, which spreadsheets show as text;
numbers stay numbers, so a negative figure is still a number.
"""
import csv
import io
from collections.abc import Iterable, Sequence

FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r", "\n")
# A byte-order mark lets common spreadsheet programs read the file as UTF-8.
BOM = "\ufeff"


def neutral_cell(value) -> str | int | float:
    """A value as one cell: empty for None, text that cannot run as a formula."""
    if value is None:
        return ""
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, int | float):
        return value
    text = str(value)
    return "'" + text if text.startswith(FORMULA_STARTS) else text


def csv_text(header: Sequence[str], rows: Iterable[Sequence], *, bom: bool = False) -> str:
    """Header and rows as CSV: CRLF line ends and quoting as RFC 4180 says, every cell neutralised."""
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\r\n")
    writer.writerow([neutral_cell(h) for h in header])
    writer.writerows([neutral_cell(v) for v in row] for row in rows)
    return (BOM if bom else "") + out.getvalue()
