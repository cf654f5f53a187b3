"""Currency of a pilot under one rule on an as-of date (DESIGN 4.6). Pure computation.

Boundary, everywhere in this module: a qualifying attempt flown on date q counts on every date from
q through `window_end(q)` inclusive, and no longer. A pilot is current THROUGH `current_until`
inclusive and lapsed from the day after. Dates are the school's local dates.

Windows are either N days (q + N days, as in "within the preceding 90 days") or N calendar months
(to the last day of the month N months after q's month: the usual reading of "calendar months" in
aviation rules, e.g. a flight review within the preceding 24 calendar months; from memory).
"""

from __future__ import annotations

import calendar
from collections.abc import Sequence
from dataclasses import dataclass
from datetime import date, timedelta

DEFAULT_DESCRIBE = "qualifying autorotations"
DEFAULT_DESCRIBE_ONE = "qualifying autorotation"
_MONTH_NAMES = (
    "January", "February", "March", "April", "May", "June",
    "July", "August", "September", "October", "November", "December",
)  # fixed English names: strftime("%B") would follow the server's locale

STATUS_RANK = {"never": 0, "lapsed": 1, "due_soon": 2, "current": 3}


def add_calendar_months_end(d: date, months: int) -> date:
    """The last day of the month `months` months after d's month."""
    year, month_index = divmod(d.year * 12 + (d.month - 1) + months, 12)
    month = month_index + 1
    return date(year, month, calendar.monthrange(year, month)[1])


def window_end(qualifying_on: date, *, window_days: int | None, window_months: int | None) -> date:
    """The last date on which an attempt flown on `qualifying_on` still counts."""
    if _window_kind(window_days, window_months) == "days":
        return qualifying_on + timedelta(days=window_days)
    return add_calendar_months_end(qualifying_on, window_months)


def window_start(as_of: date, *, window_days: int | None, window_months: int | None) -> date:
    """The earliest qualifying date that still counts on `as_of` (q counts iff as_of <= window_end(q))."""
    if _window_kind(window_days, window_months) == "days":
        return as_of - timedelta(days=window_days)
    # window_end(q) >= as_of exactly when q's month is no earlier than window_months before as_of's.
    first_counting_month_end = add_calendar_months_end(as_of, -window_months)
    return first_counting_month_end.replace(day=1)


@dataclass(frozen=True)
class CurrencyStatus:
    """One person's standing under one currency rule on an as-of date."""

    status: str  # "current", "due_soon", "lapsed", "never"
    current_until: date | None
    qualifying_count: int
    needed: int
    remedy: str


def evaluate_currency(
    qualifying_dates: Sequence[date],
    *,
    as_of: date,
    window_days: int | None,
    window_months: int | None,
    min_count: int,
    warn_days: int,
    describe: str = DEFAULT_DESCRIBE,
    describe_one: str | None = None,
) -> CurrencyStatus:
    """Currency from every qualifying attempt's date (any order, repeats allowed; later dates ignored)."""
    flown = sorted((q for q in qualifying_dates if q <= as_of), reverse=True)
    start = window_start(as_of, window_days=window_days, window_months=window_months)
    return status_from_summary(
        as_of=as_of,
        latest_dates_desc=flown[:min_count],
        count_in_window=sum(1 for q in flown if q >= start),
        ever=bool(flown),
        window_days=window_days,
        window_months=window_months,
        min_count=min_count,
        warn_days=warn_days,
        describe=describe,
        describe_one=describe_one,
    )


def status_from_summary(
    *,
    as_of: date,
    latest_dates_desc: Sequence[date],
    count_in_window: int,
    ever: bool,
    window_days: int | None,
    window_months: int | None,
    min_count: int,
    warn_days: int,
    describe: str = DEFAULT_DESCRIBE,
    describe_one: str | None = None,
) -> CurrencyStatus:
    """Currency from a summary: the min_count newest qualifying dates <= as_of, the count in window, ever.

    `needed` is how many more qualifying attempts flown on `as_of` bring the status to current or due
    soon (with a window shorter than warn_days, even a fresh attempt is only due soon).
    """
    _window_kind(window_days, window_months)
    if min_count < 1:
        raise ValueError("min_count must be at least 1")
    if count_in_window < 0 or warn_days < 0:
        raise ValueError("count_in_window and warn_days cannot be negative")
    latest = list(latest_dates_desc)[:min_count]
    if any(q > as_of for q in latest):
        raise ValueError("qualifying dates after as_of do not count yet")
    if any(newer < older for newer, older in zip(latest, latest[1:])):
        raise ValueError("latest_dates_desc must be newest first")
    if latest and not ever:
        raise ValueError("qualifying dates given but ever is false")

    window = {"window_days": window_days, "window_months": window_months}
    current_until = window_end(latest[-1], **window) if len(latest) == min_count else None
    return status_from_facts(
        as_of=as_of, current_until=current_until, count_in_window=count_in_window, ever=ever,
        still_counting=still_counting_after(latest, current_until, **window), min_count=min_count,
        warn_days=warn_days, describe=describe, describe_one=describe_one,
    )


def still_counting_after(latest_dates_desc: Sequence[date], current_until: date | None, *,
                         window_days: int | None, window_months: int | None) -> int:
    """How many of the newest qualifying dates still count the day after current_until (0 without one)."""
    if current_until is None:
        return 0
    return sum(1 for q in latest_dates_desc
               if window_end(q, window_days=window_days, window_months=window_months) > current_until)


def status_from_facts(
    *,
    as_of: date,
    current_until: date | None,
    count_in_window: int,
    ever: bool,
    still_counting: int,
    min_count: int,
    warn_days: int,
    describe: str = DEFAULT_DESCRIBE,
    describe_one: str | None = None,
) -> CurrencyStatus:
    """The status and its words from the facts that decide it (status_from_summary derives them).

    current_until comes from the min_count newest dates (None with fewer), still_counting from
    `still_counting_after`; the readiness board's kept state stores both, so today's board needs no dates.
    """
    needed = max(0, min_count - count_in_window)
    if needed == 0:
        # count >= min_count puts the min_count-th newest date inside the window: current_until >= as_of.
        days_left = (current_until - as_of).days
        status = "due_soon" if days_left <= warn_days else "current"
    else:
        status = "lapsed" if ever else "never"

    words = _Words(describe, describe_one)
    if needed == 0:
        # Attempts still counting the day after current_until keep the pilot current past it.
        to_stay = min_count - still_counting
        prefix = "Due soon: current" if status == "due_soon" else "Current"
        remedy = (
            f"{prefix} until {format_date(current_until)}; "
            f"fly {words.more(to_stay)} by then to stay current."
        )
    elif status == "never":
        remedy = f"Never done: fly {words.count(needed)} to be current."
    elif current_until is not None:
        remedy = (
            f"Lapsed since {format_date(current_until + timedelta(days=1))}: "
            f"fly {words.more(needed)} to be current again."
        )
    else:
        remedy = f"Not yet current: fly {words.more(needed)} to be current."
    return CurrencyStatus(
        status=status,
        current_until=current_until,
        qualifying_count=count_in_window,
        needed=needed,
        remedy=remedy,
    )


@dataclass(frozen=True)
class KeptFacts:
    """What the readiness board keeps per pilot and rule, computed on `counted_on` (see `kept_facts`)."""

    dates_desc: tuple[date, ...]  # every qualifying date that can still matter on counted_on or later
    newest_on: date | None
    current_until: date | None  # from the min_count newest of dates_desc
    still_counting: int
    window_count: int  # dates_desc inside the window on counted_on (later dates included)
    counted_through: date | None  # window_count holds through this date; None: it is 0 and stays 0


def kept_dates(qualifying_dates: Sequence[date], *, as_of: date, window_days: int | None,
               window_months: int | None, min_count: int) -> tuple[date, ...]:
    """The qualifying dates that can still matter on as_of or any later day, newest first: every date
    inside the window on as_of or after it, and the min_count newest by as_of. An older date can never
    count again: the window only moves forward, and min_count newer dates stand before it."""
    start = window_start(as_of, window_days=window_days, window_months=window_months)
    kept, rank = [], 0  # rank: how many dates by as_of are newer than this one
    for q in sorted(qualifying_dates, reverse=True):
        if q > as_of:
            kept.append(q)
            continue
        if q >= start or rank < min_count:
            kept.append(q)
        rank += 1
    return tuple(kept)


def kept_facts(qualifying_dates: Sequence[date], *, as_of: date, window_days: int | None,
               window_months: int | None, min_count: int) -> KeptFacts:
    """The kept facts of one pilot under one rule on as_of (the day they are written).

    On a later day T they decide the status without the dates, through status_from_facts, while
    T <= counted_through and no date is after T (`facts_hold_on`); otherwise evaluate_currency
    reads dates_desc, which still holds every date that can count on T.
    """
    window = {"window_days": window_days, "window_months": window_months}
    dates = kept_dates(qualifying_dates, as_of=as_of, min_count=min_count, **window)
    latest = dates[:min_count]
    current_until = window_end(latest[-1], **window) if len(latest) == min_count else None
    start = window_start(as_of, **window)
    in_window = [q for q in dates if q >= start]
    return KeptFacts(
        dates_desc=dates,
        newest_on=dates[0] if dates else None,
        current_until=current_until,
        still_counting=still_counting_after(latest, current_until, **window),
        window_count=len(in_window),
        counted_through=window_end(in_window[-1], **window) if in_window else None,
    )


def facts_hold_on(day: date, *, counted_on: date, newest_on: date | None, counted_through: date | None) -> bool:
    """Whether kept facts written on counted_on decide the status on `day` as they stand."""
    if day < counted_on or (newest_on is not None and newest_on > day):
        return False
    return counted_through is None or day <= counted_through


def format_date(d: date) -> str:
    """A date in plain words, e.g. 14 March 2027."""
    return f"{d.day} {_MONTH_NAMES[d.month - 1]} {d.year}"


@dataclass(frozen=True)
class _Words:
    """Singular and plural wording for the qualifying attempts of a rule."""

    many: str
    one: str | None

    def _noun(self, n: int) -> str:
        if n != 1:
            return self.many
        if self.one is not None:
            return self.one
        return DEFAULT_DESCRIBE_ONE if self.many == DEFAULT_DESCRIBE else self.many

    def count(self, n: int) -> str:
        return f"{n} {self._noun(n)}"

    def more(self, n: int) -> str:
        return f"{n} more {self._noun(n)}"


def _window_kind(window_days: int | None, window_months: int | None) -> str:
    """"days" or "months"; exactly one of the two must be given, and not negative."""
    if (window_days is None) == (window_months is None):
        raise ValueError("give exactly one of window_days and window_months")
    size = window_days if window_days is not None else window_months
    if size < 0:
        raise ValueError("a currency window cannot be negative")
    return "days" if window_days is not None else "months"
