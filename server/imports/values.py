"""Turning one spreadsheet cell into a value, or a reason in words why it cannot be one.

Cells come as text from CSV and as numbers, dates, times or text from XLSX. Each parser takes either
and raises CellError with a message a person understands.
"""
import re
from datetime import date, datetime, time, timedelta

from server.vocabulary import ROLES


class CellError(ValueError):
    """Why a cell cannot be read."""


def text(cell) -> str:
    """A cell as trimmed text; whole numbers from a workbook lose their '.0'."""
    if cell is None:
        return ""
    if isinstance(cell, float) and cell.is_integer():
        return str(int(cell))
    if isinstance(cell, datetime):
        return cell.isoformat(sep=" ")
    return str(cell).strip()


def is_empty(cell) -> bool:
    return text(cell) == ""


_NUMBER = re.compile(r"^([+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+))\s*([a-z%°]*)$", re.IGNORECASE)


def number(cell, units: tuple[str, ...] = ()) -> float | None:
    """A number; a decimal comma is read as a point, and the field's own unit may follow it."""
    if isinstance(cell, bool):
        raise CellError(f"{cell!r} is not a number.")
    if isinstance(cell, (int, float)):
        return float(cell)
    raw = text(cell)
    if not raw:
        return None
    if isinstance(cell, (datetime, date, time)):
        raise CellError(f"{raw} is a date or time, not a number.")
    compact = raw.replace("\u00a0", " ").replace("\u2212", "-")
    match = _NUMBER.match(compact)
    if not match:
        if "," in compact and "." in compact:
            raise CellError(f"{raw!r} is not a number: write it without thousands separators (e.g. 1450.5).")
        raise CellError(f"{raw!r} is not a number.")
    digits, unit = match.groups()
    if unit and unit.casefold() not in {u.casefold() for u in units}:
        wanted = f" give it in {units[0]}" if units else " write the number alone"
        raise CellError(f"{raw!r}: the unit {unit!r} is not this column's;{wanted}.")
    return float(digits.replace(",", "."))


_ISO_DATE = re.compile(r"^(\d{4})[-/.](\d{1,2})[-/.](\d{1,2})(?:[ T](\d{1,2}):(\d{2})(?::(\d{2}))?)?$")
_DAY_FIRST = re.compile(r"^(\d{1,2})([./-])(\d{1,2})\2(\d{4})(?: (\d{1,2}):(\d{2})(?::(\d{2}))?)?$")


def date_and_time(cell) -> tuple[date, time | None]:
    """A date (and its time of day when the cell carries one): a spreadsheet date, or text."""
    if isinstance(cell, datetime):
        moment = cell.time()
        return cell.date(), (moment if moment != time(0, 0) else None)
    if isinstance(cell, date):
        return cell, None
    if isinstance(cell, (int, float)) and not isinstance(cell, bool):
        raise CellError(f"{text(cell)} is a number, not a date: format the column as dates, or write YYYY-MM-DD.")
    raw = text(cell)
    if not raw:
        raise CellError("The date is empty.")
    try:
        if match := _ISO_DATE.match(raw):
            year, month, day, hour, minute, second = match.groups()
            return _date(int(year), int(month), int(day)), _time(hour, minute, second)
        if match := _DAY_FIRST.match(raw):
            first, separator, second_part, year, hour, minute, second = match.groups()
            a, b = int(first), int(second_part)
            if separator == "/" and a <= 12 and b <= 12 and a != b:
                raise CellError(f"{raw!r} could be {a} {_month(b)} or {b} {_month(a)}; write dates as YYYY-MM-DD.")
            if separator == "/" and b > 12:  # month first, as written in the United States
                a, b = b, a
            return _date(int(year), b, a), _time(hour, minute, second)
    except ValueError as error:
        raise CellError(f"{raw!r} is not a date on the calendar ({error}).") from None
    raise CellError(f"{raw!r} is not a date; write dates as YYYY-MM-DD.")


def _month(number: int) -> str:
    return date(2000, number, 1).strftime("%B")


def _date(year: int, month: int, day: int) -> date:
    return date(year, month, day)


def _time(hour, minute, second) -> time | None:
    if hour is None:
        return None
    return time(int(hour), int(minute), int(second or 0))


def time_of_day(cell) -> time | None:
    """A time of day: a spreadsheet time, HH:MM, HH:MM:SS or HHMM."""
    if isinstance(cell, datetime):
        return cell.time()
    if isinstance(cell, time):
        return cell
    if isinstance(cell, timedelta):
        return (datetime.min + cell).time()
    if isinstance(cell, float) and 0 <= cell < 1:  # a spreadsheet time kept as a fraction of the day
        seconds = round(cell * 86400)
        return time(seconds // 3600, seconds % 3600 // 60, seconds % 60)
    raw = text(cell)
    if not raw:
        return None
    match = re.match(r"^(\d{1,2})[:.h](\d{2})(?::(\d{2}))?$", raw) or re.match(r"^(\d{2})(\d{2})()$", raw)
    if match:
        hour, minute, second = int(match[1]), int(match[2]), int(match[3] or 0)
        if hour < 24 and minute < 60 and second < 60:
            return time(hour, minute, second)
    raise CellError(f"{raw!r} is not a time of day; write it as HH:MM (24-hour clock).")


_YES = {"yes", "y", "true", "1", "x", "ja", "oui", "took over", "takeover"}
_NO = {"no", "n", "false", "0", "", "-", "none"}


def yes_no(cell) -> bool:
    if isinstance(cell, bool):
        return cell
    raw = text(cell).casefold()
    if raw in _YES:
        return True
    if raw in _NO:
        return False
    raise CellError(f"{text(cell)!r}: write yes or no.")


def _key(raw: str) -> str:
    return " ".join(re.findall(r"[a-z0-9]+", raw.casefold().replace("°", " ")))


_GRADES = {
    "satisfactory": "satisfactory", "sat": "satisfactory", "s": "satisfactory", "pass": "satisfactory",
    "passed": "satisfactory", "ok": "satisfactory", "good": "satisfactory",
    "unsatisfactory": "unsatisfactory", "unsat": "unsatisfactory", "u": "unsatisfactory", "fail": "unsatisfactory",
    "failed": "unsatisfactory", "not satisfactory": "unsatisfactory", "repeat": "unsatisfactory",
}


def grade(cell) -> str | None:
    raw = text(cell)
    if not raw:
        return None
    found = _GRADES.get(_key(raw))
    if found is None:
        raise CellError(f"{raw!r} is not a grade; write satisfactory or unsatisfactory (or S / U), or leave it empty.")
    return found


_MANEUVERS = {
    "straight in": "straight_in", "straightin": "straight_in", "straight": "straight_in", "straight ahead": "straight_in",
    "0": "straight_in", "si": "straight_in",
    "180": "turn_180", "180 turn": "turn_180", "turn 180": "turn_180", "180 deg": "turn_180",
    "180 deg turn": "turn_180", "180 degree turn": "turn_180", "180 degrees": "turn_180",
    "360": "turn_360", "360 turn": "turn_360", "turn 360": "turn_360", "360 deg": "turn_360",
    "360 deg turn": "turn_360", "360 degree turn": "turn_360", "360 degrees": "turn_360",
    "hovering": "hovering", "hover": "hovering", "hovering auto": "hovering", "hovering autorotation": "hovering",
    "hover auto": "hovering",
}
_TERMINATIONS = {
    "power recovery": "power_recovery", "recovery": "power_recovery", "power": "power_recovery",
    "pr": "power_recovery", "recover": "power_recovery", "go around": "power_recovery",
    "to a hover": "to_hover", "to hover": "to_hover", "hover": "to_hover", "terminate to hover": "to_hover",
    "termination to hover": "to_hover", "power to hover": "to_hover",
    "touchdown": "touchdown", "full touchdown": "touchdown", "full down": "touchdown", "full": "touchdown",
    "td": "touchdown", "landing": "touchdown", "touch down": "touchdown", "full touch down": "touchdown",
}


def _choice(cell, table: dict, what: str, allowed: str) -> str:
    raw = text(cell)
    if not raw:
        raise CellError(f"The {what} is empty.")
    key = _key(raw)
    found = table.get(key) or table.get(key.replace(" ", "_")) or table.get(key.removesuffix(" autorotation"))
    if found is None and raw in table.values():
        found = raw
    if found is None:
        raise CellError(f"{raw!r} is not a {what} Flarebook knows; write one of: {allowed}.")
    return found


def maneuver(cell) -> str:
    return _choice(cell, _MANEUVERS, "maneuver", "straight-in, 180° turn, 360° turn, hovering")


def termination(cell) -> str:
    return _choice(cell, _TERMINATIONS, "termination", "power recovery, to a hover, full touchdown")


_ROLES = {
    "student": "student", "trainee": "student", "pupil": "student", "pilot": "student", "students": "student",
    "instructor": "instructor", "flight instructor": "instructor", "fi": "instructor", "cfi": "instructor",
    "instructors": "instructor",
    "chief pilot": "chief_pilot", "chief": "chief_pilot", "head of training": "chief_pilot", "chief_pilot": "chief_pilot",
    "admin": "admin", "administrator": "admin", "office": "admin",
}


def roles(cell) -> list[str]:
    raw = text(cell)
    if not raw:
        return ["student"]
    found = []
    for part in re.split(r"[,;/|+&]| and ", raw):
        part = part.strip()
        if not part:
            continue
        role = _ROLES.get(_key(part)) or (part if part in ROLES else None)
        if role is None:
            raise CellError(f"{part!r} is not a role; write student, instructor, chief pilot or administrator.")
        if role not in found:
            found.append(role)
    return found or ["student"]
