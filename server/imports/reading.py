"""Reading a spreadsheet file into a header and numbered rows: CSV (RFC 4180) or XLSX.

CSV: the byte-order mark is dropped (UTF-8 or UTF-16), text that is not UTF-8 is read as Windows-1252
(what older spreadsheet programs write), and the delimiter is whatever Python's `csv.Sniffer` finds
among comma, semicolon, tab and bar. XLSX: the first worksheet through openpyxl, with cell values as
the spreadsheet holds them (real dates stay dates, numbers stay numbers).

Row numbers are those a person sees in a spreadsheet program: the header is row 1. Blank rows are
left out without an error.
"""
import codecs
import csv
import io
import zipfile
from dataclasses import dataclass, field


from server.errors import Invalid

MAX_BYTES = 20 * 1024 * 1024
MAX_ROWS = 50_000
SNIFF_BYTES = 64 * 1024
DELIMITERS = ",;\t|"
DELIMITER_NAMES = {",": "comma", ";": "semicolon", "\t": "tab", "|": "bar"}


@dataclass
class Table:
    """What a file holds: its header, and its data rows with their row numbers in the file."""

    file_format: str  # csv or xlsx
    header: list[str]
    rows: list[tuple[int, list]] = field(default_factory=list)
    delimiter: str | None = None
    encoding: str | None = None

    def describe(self) -> str:
        if self.file_format == "xlsx":
            return "an XLSX workbook (its first sheet)"
        return f"CSV, {DELIMITER_NAMES.get(self.delimiter, repr(self.delimiter))}-separated, {self.encoding}"


def read_table(data: bytes) -> Table:
    """The header and data rows of a CSV or XLSX file; a clear Invalid for anything else."""
    if not data:
        raise Invalid("The file is empty.")
    if len(data) > MAX_BYTES:
        raise Invalid(f"The file is larger than {MAX_BYTES // (1024 * 1024)} MB; split it and import the parts.")
    if data.startswith(b"PK\x03\x04"):
        return _read_xlsx(data)
    if data.startswith(b"\xd0\xcf\x11\xe0"):
        raise Invalid("This is an old-style .xls workbook; save it as .xlsx or as CSV and import that.")
    return _read_csv(data)


def _decode(data: bytes) -> tuple[str, str]:
    if data.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
        return data.decode("utf-16"), "UTF-16"
    try:
        return data.decode("utf-8-sig"), "UTF-8"
    except UnicodeDecodeError:
        return data.decode("cp1252", errors="replace"), "Windows-1252"


def _read_csv(data: bytes) -> Table:
    text, encoding = _decode(data)
    if "\x00" in text:
        raise Invalid("This does not look like a CSV or XLSX file.")
    delimiter = _delimiter(text)
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter, quotechar='"', doublequote=True,
                        strict=False)
    try:
        records = list(_numbered(reader))
    except csv.Error as error:
        raise Invalid(f"The CSV file cannot be read: {error}.") from None
    return _table("csv", records, delimiter=delimiter, encoding=encoding)


def _delimiter(text: str) -> str:
    """csv.Sniffer's choice, checked by parsing: the delimiter that splits the most rows like the header.

    The sniffer alone stumbles on a few rows with a delimiter inside quotes; a parse of the sample with
    each candidate settles it. One column, or too little text to tell: RFC 4180's comma.
    """
    sample = text[:SNIFF_BYTES]
    if len(text) > SNIFF_BYTES:
        sample = sample[: sample.rfind("\n") + 1] or sample  # whole lines only
    try:
        sniffed = csv.Sniffer().sniff(sample, delimiters=DELIMITERS).delimiter
    except csv.Error:
        sniffed = None
    scores = {d: _fit(sample, d) for d in DELIMITERS}
    best = max(DELIMITERS, key=lambda d: (scores[d], d == sniffed))
    if sniffed is not None and scores[sniffed] >= scores[best]:
        return sniffed
    return best if scores[best] > (0, 0) else ","


def _fit(sample: str, delimiter: str) -> tuple[int, int]:
    """(rows split into as many fields as the header, header fields); nothing when the header is one field."""
    try:
        records = [r for r in csv.reader(io.StringIO(sample, newline=""), delimiter=delimiter) if any(r)]
    except csv.Error:
        return (0, 0)
    if not records or len(records[0]) < 2:
        return (0, 0)
    width = len(records[0])
    return (sum(1 for r in records if len(r) == width), width)


def _numbered(rows):
    for number, row in enumerate(rows, start=1):
        if number > MAX_ROWS + 1:
            raise Invalid(f"The file has more than {MAX_ROWS:,} rows; split it and import the parts.")
        yield number, list(row)


def _read_xlsx(data: bytes) -> Table:
    from openpyxl import load_workbook  # here: every command and app process would import it at start
    try:
        workbook = load_workbook(io.BytesIO(data), read_only=True, data_only=True)
    except (zipfile.BadZipFile, KeyError, OSError, ValueError) as error:
        raise Invalid(f"The workbook cannot be read ({type(error).__name__}); save it again as .xlsx or CSV.") from None
    try:
        sheet = workbook.worksheets[0]
        records = list(_numbered(sheet.iter_rows(values_only=True)))
    finally:
        workbook.close()
    return _table("xlsx", records)


def _blank(row: list) -> bool:
    return all(cell is None or (isinstance(cell, str) and not cell.strip()) for cell in row)


def _table(file_format: str, records: list[tuple[int, list]], **details) -> Table:
    filled = [(number, row) for number, row in records if not _blank(row)]
    if not filled:
        raise Invalid("The file has no rows.")
    width = max(len(row) for _, row in filled)
    padded = [(number, (list(row) + [None] * width)[:width]) for number, row in filled]
    # Drop trailing columns that hold nothing at all, header included (spreadsheets often carry them).
    while width and all(_blank(row[width - 1:width]) for _, row in padded):
        width -= 1
    padded = [(number, row[:width]) for number, row in padded]
    header = [_header_text(cell, index) for index, cell in enumerate(padded[0][1])]
    seen: dict[str, int] = {}
    for index, name in enumerate(header):
        key = name.casefold()
        if key in seen:
            raise Invalid(f"Two columns are headed {name!r} (columns {seen[key] + 1} and {index + 1}); "
                          "rename one of them.")
        seen[key] = index
    return Table(file_format=file_format, header=header, rows=padded[1:], **details)


def _header_text(cell, index: int) -> str:
    text = "" if cell is None else str(cell).strip()
    return text or f"(column {index + 1})"
