"""The safety digest: flags per 100 signed attempts by instructor, aircraft, site, density altitude and month.

Counted set-wise in SQL. An attempt's flags are a JSON list of {code, message}; each dialect's own
JSON table function (SQLite json_each, PostgreSQL json_array_elements) turns the list into rows, so
no attempt is read into Python to be counted.
"""
from dataclasses import dataclass, field
from datetime import date, datetime, timedelta

from sqlalchemy import Integer, and_, case, cast, func, literal_column, or_, select, true
from sqlalchemy.orm import Session, selectinload

from server.csv_export import csv_text
from server.errors import Invalid
from server.fleet.models import Aircraft, Site
from server.logbook.counted import counted_sorties_clause
from server.logbook.models import Attempt, Sortie
from server.people import service as people
from server.people.models import Person

FLAG_LABELS = {
    "nr_limits": "Rotor RPM outside limits",
    "takeover": "Instructor took the controls",
    "hv_avoid": "Entry in the avoid region",
    "fast_touchdown": "Touchdown over the standard's speed",
}
FLAG_CODES = tuple(FLAG_LABELS)
ANY_FLAG = "any"
# Not a flag (the expected band is guidance beside the flight manual) but a category the digest counts:
# attempts whose flare began below or above the band expected for that day's density altitude and weight.
FLARE_BAND = "flare_band"
FLARE_BAND_LABEL = "Flare begun outside the expected band"
CATEGORIES = (*FLAG_CODES, ANY_FLAG, FLARE_BAND)  # what each digest row counts
DIMENSION_LABELS = {
    "instructor": "Instructor",
    "aircraft": "Aircraft",
    "site": "Site",
    "da_band": "Density altitude",
    "month": "Month",
}
DIMENSIONS = tuple(DIMENSION_LABELS)
DA_BAND_FT = 1000
NONE_KEY = "none"
DEFAULT_DAYS = 365
MAX_LISTED = 500


@dataclass
class DigestRow:
    key: str
    label: str
    attempts: int
    counts: dict[str, int] = field(default_factory=dict)  # per flag code, and "any"

    def per_100(self, code: str) -> float | None:
        if not self.attempts:
            return None
        return round(100 * self.counts.get(code, 0) / self.attempts, 1)


@dataclass
class Digest:
    date_from: date
    date_to: date
    total: DigestRow
    by: dict[str, list[DigestRow]]


@dataclass
class FlaggedAttempt:
    attempt: Attempt
    sortie: Sortie


# ---- the date range --------------------------------------------------------------------------

def date_range(session: Session, *, date_from: date | None, date_to: date | None) -> tuple[date, date]:
    """The range asked for; by default the last twelve months up to today at the school."""
    date_to = date_to or people.school_today(session)
    date_from = date_from or date_to - timedelta(days=DEFAULT_DAYS)
    if date_from > date_to:
        raise Invalid("The start of the date range must not be after its end.")
    return date_from, date_to


def preset_range(session: Session, preset: str) -> tuple[date, date]:
    """The dates of a named period ending today at the school: last 7 or 30 days, this quarter, 12 months."""
    today = people.school_today(session)
    if preset == "7d":
        return today - timedelta(days=6), today
    if preset == "30d":
        return today - timedelta(days=29), today
    if preset == "quarter":
        return date(today.year, 3 * ((today.month - 1) // 3) + 1, 1), today
    if preset == "12m":
        return today - timedelta(days=DEFAULT_DAYS), today
    raise Invalid("The period must be one of: 7d, 30d, quarter, 12m.")


# ---- SQL pieces ------------------------------------------------------------------------------

def _dialect(session: Session) -> str:
    return session.get_bind().dialect.name


def _standing_signed(date_from: date, date_to: date):
    """Signed attempts in the range, from the standing version of each record (`counted_sorties_clause`)."""
    return and_(counted_sorties_clause(), Attempt.flown_on >= date_from, Attempt.flown_on <= date_to)


def _dimension(session: Session, name: str):
    """The SQL expression that groups attempts for one dimension."""
    if name == "instructor":
        return Sortie.instructor_id
    if name == "aircraft":
        return Sortie.aircraft_id
    if name == "site":
        return Sortie.site_id
    if name == "da_band":
        return _band_floor(session)
    if name == "month":
        if _dialect(session) == "postgresql":
            return func.to_char(Attempt.flown_on, literal_column("'YYYY-MM'"))
        return func.strftime(literal_column("'%Y-%m'"), Attempt.flown_on)
    raise Invalid(f"Group by one of: {', '.join(DIMENSIONS)}.")


def _band_floor(session: Session):
    """The lower edge of the sortie's 1,000 ft density-altitude band (floor, also below sea level)."""
    # Constants are written into the SQL (not bound), so PostgreSQL sees the SELECT and GROUP BY
    # expressions as the same one.
    altitude, band = Sortie.density_altitude_ft, literal_column(str(DA_BAND_FT))
    if _dialect(session) == "postgresql":
        return cast(func.floor(altitude / band), Integer) * band
    # SQLite's CAST truncates toward zero; shifted far above zero, truncation is the floor.
    offset = literal_column("100")
    return (cast((altitude + offset * band) / band, Integer) - offset) * band


def _flag_code_rows(session: Session):
    """A table-valued join giving one row per flag of each attempt, and the flag code column."""
    if _dialect(session) == "postgresql":
        elements = func.json_array_elements(Attempt.flags).table_valued("value").alias("flag")
        return elements, elements.c.value.op("->>")(literal_column("'code'"))
    elements = func.json_each(Attempt.flags).table_valued("value").alias("flag")
    return elements, func.json_extract(elements.c.value, literal_column("'$.code'"))


def _base(session: Session, *columns, date_from: date, date_to: date):
    return (select(*columns).select_from(Attempt).join(Sortie, Attempt.sortie_id == Sortie.id)
            .where(_standing_signed(date_from, date_to)))


def _flare_outside_band():
    """The flare began below or above the band stored on the attempt (both recorded)."""
    return and_(Attempt.flare_height_ft.is_not(None), Attempt.flare_band_low_ft.is_not(None),
                Attempt.flare_band_high_ft.is_not(None),
                or_(Attempt.flare_height_ft < Attempt.flare_band_low_ft,
                    Attempt.flare_height_ft > Attempt.flare_band_high_ft))


def _with_flags(session: Session, query, codes=FLAG_CODES):
    elements, code = _flag_code_rows(session)
    return query.join(elements, true()).where(code.in_(codes)), code


# ---- the digest ------------------------------------------------------------------------------

def digest(session: Session, *, date_from: date | None = None, date_to: date | None = None) -> Digest:
    """Flags per 100 standing signed attempts, overall and by each dimension."""
    date_from, date_to = date_range(session, date_from=date_from, date_to=date_to)
    total = DigestRow(key="all", label="All signed attempts", attempts=0)
    by: dict[str, list[DigestRow]] = {}
    for name in DIMENSIONS:
        by[name] = _table(session, name, date_from, date_to)
        if name == DIMENSIONS[0]:
            total.attempts = sum(row.attempts for row in by[name])
            for code in CATEGORIES:
                total.counts[code] = sum(row.counts.get(code, 0) for row in by[name])
    return Digest(date_from=date_from, date_to=date_to, total=total, by=by)


def _table(session: Session, name: str, date_from: date, date_to: date) -> list[DigestRow]:
    """One grouped query per dimension: attempts, attempts with each flag, attempts with any of them."""
    key = _dimension(session, name).label("key")
    elements, code = _flag_code_rows(session)
    counts = [func.count(Attempt.id.distinct())]
    counts += [func.count(case((code == flag, Attempt.id)).distinct()) for flag in FLAG_CODES]
    counts.append(func.count(case((code.in_(FLAG_CODES), Attempt.id)).distinct()))
    counts.append(func.count(case((_flare_outside_band(), Attempt.id)).distinct()))
    # The outer join keeps attempts without flags: one row each, with a NULL code.
    query = (_base(session, key, *counts, date_from=date_from, date_to=date_to)
             .outerjoin(elements, true()).group_by(key))
    rows = {}
    for value, attempts, *flagged in session.execute(query):
        row = DigestRow(key=_key_text(value), label="", attempts=attempts,
                        counts=dict(zip(CATEGORIES, flagged, strict=True)))
        rows[row.key] = row
    labels = _labels(session, name, list(rows))
    for row in rows.values():
        row.label = labels.get(row.key, row.key)
    return sorted(rows.values(), key=lambda r: _sort_key(name, r))


def _key_text(value) -> str:
    if value is None:
        return NONE_KEY
    if isinstance(value, float):
        value = int(value)
    return str(value)


def _sort_key(name: str, row: DigestRow):
    if name in ("da_band", "month"):
        # Bands and months in their natural order; the unknown last.
        if row.key == NONE_KEY:
            return (1, 0, "")
        return (0, int(row.key) if name == "da_band" else 0, row.key)
    return (0, 0, row.label.lower())


def _labels(session: Session, name: str, keys: list[str]) -> dict[str, str]:
    ids = [int(k) for k in keys if k != NONE_KEY and k.lstrip("-").isdigit()]
    if name == "instructor":
        found = {str(i): n for i, n in session.execute(select(Person.id, Person.name).where(Person.id.in_(ids)))}
        return {NONE_KEY: "No instructor (solo)", **found}
    if name == "aircraft":
        return {str(i): r for i, r in session.execute(select(Aircraft.id, Aircraft.registration)
                                                       .where(Aircraft.id.in_(ids)))}
    if name == "site":
        return {str(i): n for i, n in session.execute(select(Site.id, Site.name).where(Site.id.in_(ids)))}
    if name == "da_band":
        labels = {str(low): f"{low:,} to {low + DA_BAND_FT - 1:,} ft" for low in ids}
        return {NONE_KEY: "Not recorded", **labels}
    if name == "month":
        return {k: datetime.strptime(k, "%Y-%m").strftime("%B %Y") for k in keys if k != NONE_KEY}
    return {}


def months_to(session: Session, *, end: date, months: int = 12) -> list[DigestRow]:
    """The digest by month for the `months` calendar months ending with `end`'s month; empty months count 0."""
    first = date(end.year, end.month, 1)
    for _ in range(months - 1):
        first = date(first.year - (first.month == 1), (first.month - 2) % 12 + 1, 1)
    found = {row.key: row for row in _table(session, "month", first, end)}
    rows, month = [], first
    while month <= end:
        key = month.strftime("%Y-%m")
        rows.append(found.get(key) or DigestRow(key=key, label=month.strftime("%B %Y"), attempts=0,
                                                counts=dict.fromkeys(CATEGORIES, 0)))
        month = date(month.year + (month.month == 12), month.month % 12 + 1, 1)
    return rows


def group_label(session: Session, name: str, key: str) -> str:
    """How the digest names one group, for the heading of the attempts behind it."""
    if name not in DIMENSIONS:
        raise Invalid(f"Group by one of: {', '.join(DIMENSIONS)}.")
    return _labels(session, name, [key]).get(key, key)


# ---- the attempts behind a count ---------------------------------------------------------------

def _parse_key(name: str, key: str):
    if key == NONE_KEY and name in ("instructor", "da_band"):
        return None
    if name == "month":
        try:
            datetime.strptime(key, "%Y-%m")
        except ValueError:
            raise Invalid("A month is written YYYY-MM.") from None
        return key
    try:
        return int(key)
    except ValueError:
        raise Invalid(f"That {DIMENSION_LABELS[name].lower()} is not one the digest shows.") from None


def flagged_attempts(session: Session, *, by: str | None = None, key: str | None = None, flag: str | None = None,
                     date_from: date | None = None, date_to: date | None = None) -> tuple[list[FlaggedAttempt], bool]:
    """The flagged attempts behind one count of the digest, newest first; True when the list was cut."""
    date_from, date_to = date_range(session, date_from=date_from, date_to=date_to)
    if flag is not None and flag not in (*FLAG_CODES, FLARE_BAND):
        raise Invalid(f"The flag must be one of: {', '.join((*FLAG_CODES, FLARE_BAND))}.")
    query = _base(session, Attempt.id, date_from=date_from, date_to=date_to)
    if flag == FLARE_BAND:
        query = query.where(_flare_outside_band())
    else:
        query, _ = _with_flags(session, query, codes=(flag,) if flag else FLAG_CODES)
    if by is not None:
        if by not in DIMENSIONS:
            raise Invalid(f"Group by one of: {', '.join(DIMENSIONS)}.")
        if key is None:
            raise Invalid("Say which group's attempts to list.")
        value = _parse_key(by, key)
        expression = _dimension(session, by)
        query = query.where(expression.is_(None) if value is None else expression == value)
    ids = list(session.scalars(query.distinct()))
    attempts = list(session.scalars(
        select(Attempt).where(Attempt.id.in_(ids)).options(selectinload(Attempt.sortie))
        .order_by(Attempt.flown_on.desc(), Attempt.sortie_id.desc(), Attempt.sequence).limit(MAX_LISTED)
    ))
    return [FlaggedAttempt(attempt=a, sortie=a.sortie) for a in attempts], len(ids) > MAX_LISTED


# ---- CSV ------------------------------------------------------------------------------------

def digest_csv(result: Digest) -> str:
    """The digest as shown: one line per group of each dimension, counts and rates per 100 attempts."""
    header = ["dimension", "group", "date_from", "date_to", "attempts"]
    for code in CATEGORIES:
        header += [f"{code}_count", f"{code}_per_100"]
    lines = []
    tables = [("all", [result.total])] + [(name, rows) for name, rows in result.by.items()]
    for name, rows in tables:
        for row in rows:
            line = [name, row.label, result.date_from.isoformat(), result.date_to.isoformat(), row.attempts]
            for code in CATEGORIES:
                rate = row.per_100(code)
                line += [row.counts.get(code, 0), "" if rate is None else f"{rate:.1f}"]
            lines.append(line)
    return csv_text(header, lines)
