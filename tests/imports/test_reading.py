"""Reading spreadsheet files as a school would send them: files written by Python's csv module and by
openpyxl (the references for RFC 4180 CSV and for XLSX), with byte-order marks, semicolons, blank
rows, real spreadsheet dates and numbers typed as text."""
import codecs
import csv
import io
from datetime import date, datetime, time

import pytest
from openpyxl import Workbook

from server.errors import Invalid
from server.imports import columns, values
from server.imports.reading import read_table

HEADER = ["Date", "Student", "Instructor", "Manoeuvre", "Termination", "Touchdown speed (kt)", "Remarks"]


def csv_bytes(rows, *, delimiter=",", encoding="utf-8", bom=False, quoting=csv.QUOTE_MINIMAL) -> bytes:
    out = io.StringIO(newline="")
    csv.writer(out, delimiter=delimiter, quoting=quoting).writerows(rows)  # Python's csv: RFC 4180 quoting
    data = out.getvalue().encode(encoding)
    return (codecs.BOM_UTF8 + data) if bom else data


def xlsx_bytes(rows) -> bytes:
    book = Workbook()
    sheet = book.active
    for row in rows:
        sheet.append(row)
    buffer = io.BytesIO()
    book.save(buffer)
    return buffer.getvalue()


def test_comma_csv_with_quotes_newlines_and_a_bom():
    rows = [HEADER, ["2025-03-04", "Sam Student", "Ivo Instructor", "Straight-in", "Full touchdown", "3",
                     'Flare "a touch" late,\nthen level']]
    table = read_table(csv_bytes(rows, bom=True))
    assert table.header == HEADER  # the BOM does not stick to the first heading
    assert table.delimiter == "," and table.encoding == "UTF-8"
    assert table.rows == [(2, rows[1])]


@pytest.mark.parametrize("delimiter", [";", "\t", "|"])
def test_other_delimiters_are_sniffed(delimiter):
    rows = [HEADER, ["04.03.2025", "Sam Student", "Ivo Instructor", "180", "power recovery", "2,5", "ok; calm"]]
    table = read_table(csv_bytes(rows, delimiter=delimiter))
    assert table.delimiter == delimiter
    assert table.rows[0][1][5] == "2,5" and table.rows[0][1][6] == "ok; calm"


def test_blank_rows_are_left_out_and_rows_keep_their_file_numbers():
    rows = [HEADER, ["2025-03-04"] + ["x"] * 6, [], ["", "", ""], ["2025-03-05"] + ["y"] * 6]
    table = read_table(csv_bytes(rows))
    assert [number for number, _ in table.rows] == [2, 5]


def test_windows_1252_and_utf16_text():
    rows = [["Name", "Email"], ["Zoë Lámbert", "zoe@school.example"]]
    assert read_table(csv_bytes(rows, encoding="cp1252")).rows[0][1][0] == "Zoë Lámbert"
    utf16 = codecs.BOM_UTF16_LE + csv_bytes(rows, delimiter="\t").decode().encode("utf-16-le")
    table = read_table(utf16)
    assert table.encoding == "UTF-16" and table.rows[0][1] == ["Zoë Lámbert", "zoe@school.example"]


def test_xlsx_keeps_real_dates_and_numbers():
    rows = [HEADER, [datetime(2025, 3, 4, 9, 30), "Sam Student", "Ivo Instructor", "360", "to a hover", 4.5, None],
            [None] * 7, [date(2025, 3, 5), "Sam Student", "Ivo Instructor", "hover", "touchdown", "3", "typed as text"]]
    table = read_table(xlsx_bytes(rows))
    assert table.file_format == "xlsx"
    assert table.header == HEADER
    (first_no, first), (second_no, second) = table.rows
    assert (first_no, second_no) == (2, 4)
    assert first[0] == datetime(2025, 3, 4, 9, 30) and first[5] == 4.5
    assert values.date_and_time(first[0]) == (date(2025, 3, 4), time(9, 30))
    assert values.date_and_time(second[0])[0] == date(2025, 3, 5)
    assert values.number(second[5], ("kt",)) == 3.0


def test_files_that_are_not_tables_are_refused_in_words():
    with pytest.raises(Invalid, match="empty"):
        read_table(b"")
    with pytest.raises(Invalid, match="old-style .xls"):
        read_table(b"\xd0\xcf\x11\xe0" + b"\x00" * 100)
    with pytest.raises(Invalid, match="workbook cannot be read"):
        read_table(b"PK\x03\x04 not really a zip")
    with pytest.raises(Invalid, match="Two columns are headed"):
        read_table(csv_bytes([["Date", "date"], ["1", "2"]]))


@pytest.mark.parametrize(("cell", "expected"), [
    ("12", 12.0), ("12.5", 12.5), ("12,5", 12.5), ("-40", -40.0), ("3 kt", 3.0), ("95%", 95.0), (7, 7.0),
    ("", None), (None, None),
])
def test_numbers_as_text(cell, expected):
    assert values.number(cell, ("kt", "%")) == expected


@pytest.mark.parametrize(("cell", "message"), [
    ("fast", "not a number"), ("1,234.5", "thousands separators"), ("12 km", "unit 'km'"), (True, "not a number"),
])
def test_numbers_that_are_not(cell, message):
    with pytest.raises(values.CellError, match=message):
        values.number(cell, ("kt",))


@pytest.mark.parametrize(("cell", "expected"), [
    ("2025-03-04", (date(2025, 3, 4), None)), ("2025-03-04 14:05", (date(2025, 3, 4), time(14, 5))),
    ("04.03.2025", (date(2025, 3, 4), None)), ("25/03/2025", (date(2025, 3, 25), None)),
    ("03/25/2025", (date(2025, 3, 25), None)), ("05/05/2025", (date(2025, 5, 5), None)),
])
def test_dates_as_text(cell, expected):
    assert values.date_and_time(cell) == expected


def test_ambiguous_and_impossible_dates_are_explained():
    with pytest.raises(values.CellError, match="could be 3 May or 5 March"):
        values.date_and_time("03/05/2025")
    with pytest.raises(values.CellError, match="not a date on the calendar"):
        values.date_and_time("2025-02-30")
    with pytest.raises(values.CellError, match="YYYY-MM-DD"):
        values.date_and_time("last Tuesday")


@pytest.mark.parametrize(("cell", "expected"), [
    ("Straight-in", "straight_in"), ("180°", "turn_180"), ("180 turn", "turn_180"), ("360° turn", "turn_360"),
    ("Hovering autorotation", "hovering"), ("straight_in", "straight_in"),
])
def test_maneuver_words(cell, expected):
    assert values.maneuver(cell) == expected


@pytest.mark.parametrize(("cell", "expected"), [
    ("Power recovery", "power_recovery"), ("to a hover", "to_hover"), ("Full touchdown", "touchdown"),
    ("TD", "touchdown"), ("to_hover", "to_hover"),
])
def test_termination_words(cell, expected):
    assert values.termination(cell) == expected


def test_grades_roles_and_yes_no():
    assert [values.grade(g) for g in ("S", "unsat", "Pass", "")] == ["satisfactory", "unsatisfactory",
                                                                     "satisfactory", None]
    assert values.roles("Instructor, Chief pilot") == ["instructor", "chief_pilot"]
    assert values.roles("") == ["student"]
    assert values.yes_no("Yes") is True and values.yes_no("") is False
    with pytest.raises(values.CellError, match="not a role"):
        values.roles("pilot in command; astronaut")


def test_mapping_is_guessed_from_headers():
    header = ["Date", "Time", "Student", "Instructor", "Reg", "Location", "Manoeuvre", "Termination",
              "Flare height (ft)", "Touchdown speed (kt)", "TOW (kg)", "QNH", "Grade", "Notes", "Something else"]
    mapping = columns.guess_mapping("attempts", header)
    assert mapping["pilot"] == "Student" and mapping["aircraft"] == "Reg" and mapping["site"] == "Location"
    assert mapping["maneuver"] == "Manoeuvre" and mapping["flare_height_ft"] == "Flare height (ft)"
    assert mapping["touchdown_speed_kt"] == "Touchdown speed (kt)"
    assert mapping["takeoff_weight_kg"] == "TOW (kg)" and mapping["takeoff_weight_lb"] is None
    assert mapping["altimeter_hpa"] == "QNH" and mapping["remarks"] == "Notes"
    assert "Something else" not in mapping.values()


def test_a_corrected_mapping_wins_and_bad_ones_are_refused():
    header = ["Date", "Pilot", "Student"]
    mapping = columns.check_mapping("attempts", header, {"pilot": "student"})
    assert mapping["pilot"] == "Student"
    with pytest.raises(Invalid, match="does not have"):
        columns.check_mapping("attempts", header, {"pilot": "Trainee"})
    with pytest.raises(Invalid, match="does not have: colour"):
        columns.check_mapping("attempts", header, {"colour": "Pilot"})
    with pytest.raises(Invalid, match="mapped to both"):
        columns.check_mapping("attempts", header, {"pilot": "Pilot", "instructor": "Pilot"})
