"""Currency (DESIGN 4.6): windows, boundaries and status, checked by hand, pandas, dateutil and properties."""

from datetime import date, timedelta

import pandas as pd
import pytest
from dateutil.relativedelta import relativedelta
from hypothesis import given, settings
from hypothesis import strategies as st

from server.compute.currency import (
    STATUS_RANK,
    add_calendar_months_end,
    evaluate_currency,
    facts_hold_on,
    format_date,
    kept_dates,
    kept_facts,
    status_from_facts,
    status_from_summary,
    window_end,
    window_start,
)


@pytest.mark.parametrize(
    ("start", "months", "expected"),
    [
        # Worked by hand from the calendar (common practice: a calendar month ends on its last day).
        (date(2025, 8, 31), 6, date(2026, 2, 28)),  # Aug + 6 = Feb, 2026 not a leap year
        (date(2027, 8, 15), 6, date(2028, 2, 29)),  # Feb 2028: leap year
        (date(2024, 2, 29), 12, date(2025, 2, 28)),  # from a 29 Feb into a common year
        (date(2024, 2, 29), 48, date(2028, 2, 29)),
        (date(2025, 11, 10), 2, date(2026, 1, 31)),  # across the year end
        (date(2025, 12, 31), 1, date(2026, 1, 31)),
        (date(2025, 12, 1), 0, date(2025, 12, 31)),  # the same month
        (date(2026, 1, 30), 1, date(2026, 2, 28)),
        (date(2025, 7, 15), 24, date(2027, 7, 31)),  # 24 calendar months
        (date(2026, 3, 15), -1, date(2026, 2, 28)),  # backwards
        (date(2026, 1, 15), -13, date(2024, 12, 31)),
    ],
)
def test_add_calendar_months_end_by_hand(start, months, expected):
    """Hand-worked month ends across month ends, leap years and year ends."""
    assert add_calendar_months_end(start, months) == expected


@settings(max_examples=300, deadline=None)
@given(st.dates(min_value=date(1901, 1, 1), max_value=date(2199, 12, 31)), st.integers(-240, 240))
def test_add_calendar_months_end_matches_pandas_and_dateutil(start, months):
    """pandas monthly Period arithmetic and dateutil relativedelta(day=31) agree on the month end."""
    by_pandas = (pd.Period(start, freq="M") + months).end_time.date()
    by_dateutil = start + relativedelta(months=months, day=31)  # day=31 is clipped to the month's end
    assert add_calendar_months_end(start, months) == by_pandas == by_dateutil


@pytest.mark.parametrize(
    ("qualifying_on", "window", "expected_end"),
    [
        # Worked by hand: 1 Jan + 31 = 1 Feb, + 28 = 1 Mar, + 31 = 1 Apr (90 days).
        (date(2026, 1, 1), {"window_days": 90, "window_months": None}, date(2026, 4, 1)),
        # Leap year: 1 Jan + 31 = 1 Feb, + 29 = 1 Mar, + 30 = 31 Mar.
        (date(2028, 1, 1), {"window_days": 90, "window_months": None}, date(2028, 3, 31)),
        # Year end: 15 Dec + 16 = 31 Dec, + 14 = 14 Jan.
        (date(2025, 12, 15), {"window_days": 30, "window_months": None}, date(2026, 1, 14)),
        (date(2025, 9, 2), {"window_days": None, "window_months": 6}, date(2026, 3, 31)),
        (date(2027, 8, 31), {"window_days": None, "window_months": 6}, date(2028, 2, 29)),
    ],
)
def test_window_end_by_hand(qualifying_on, window, expected_end):
    """DESIGN 4.6: days window = date + N days; calendar months = last day of the Nth month after."""
    assert window_end(qualifying_on, **window) == expected_end


@pytest.mark.parametrize(
    ("as_of", "window", "expected_start"),
    [
        (date(2028, 3, 31), {"window_days": 90, "window_months": None}, date(2028, 1, 1)),
        (date(2028, 2, 29), {"window_days": None, "window_months": 6}, date(2027, 8, 1)),
        (date(2026, 1, 15), {"window_days": None, "window_months": 3}, date(2025, 10, 1)),
        (date(2025, 12, 31), {"window_days": None, "window_months": 12}, date(2024, 12, 1)),
    ],
)
def test_window_start_by_hand(as_of, window, expected_start):
    """Worked by hand: the first date whose window still reaches as_of, and the day before does not."""
    assert window_start(as_of, **window) == expected_start
    assert window_end(expected_start, **window) >= as_of
    assert window_end(expected_start - timedelta(days=1), **window) < as_of


@pytest.mark.parametrize(
    "window", [{"window_days": None, "window_months": None}, {"window_days": 90, "window_months": 3}]
)
def test_window_needs_exactly_one_kind(window):
    """A rule has a window of N days or N calendar months (DESIGN 3), never both or neither."""
    with pytest.raises(ValueError):
        window_end(date(2026, 1, 1), **window)


DAYS_90 = {"window_days": 90, "window_months": None, "min_count": 3, "warn_days": 14}
# Third newest is 10 Jan 2026; 10 Jan + 90 days = 10 Apr 2026 (21 + 28 + 31 + 10, by hand).
DAYS_90_DATES = [date(2026, 3, 5), date(2025, 12, 1), date(2026, 1, 10), date(2026, 2, 1)]


@pytest.mark.parametrize(
    ("as_of", "status", "count", "needed"),
    [
        (date(2026, 3, 26), "current", 3, 0),  # 15 days left > 14
        (date(2026, 3, 27), "due_soon", 3, 0),  # 14 days left: within the warning
        (date(2026, 4, 9), "due_soon", 3, 0),  # the day before current_until
        (date(2026, 4, 10), "due_soon", 3, 0),  # the day of: still current through it
        (date(2026, 4, 11), "lapsed", 2, 1),  # the day after
    ],
)
def test_day_window_boundaries(as_of, status, count, needed):
    """Boundaries of a 90-day, 3-attempt rule with 14 days' warning, worked by hand."""
    result = evaluate_currency(DAYS_90_DATES, as_of=as_of, **DAYS_90)
    assert (result.status, result.qualifying_count, result.needed) == (status, count, needed)
    assert result.current_until == date(2026, 4, 10)


def test_day_window_remedies():
    """Plain words for the pilot: when it runs out, and how many restore it (DESIGN 4.6)."""
    current = evaluate_currency(DAYS_90_DATES, as_of=date(2026, 3, 26), **DAYS_90)
    # After 10 Apr the 1 Feb and 5 Mar attempts still count: one more keeps the pilot current.
    assert current.remedy == (
        "Current until 10 April 2026; fly 1 more qualifying autorotation by then to stay current."
    )
    lapsed = evaluate_currency(DAYS_90_DATES, as_of=date(2026, 4, 11), **DAYS_90)
    assert lapsed.remedy == (
        "Lapsed since 11 April 2026: fly 1 more qualifying autorotation to be current again."
    )


MONTHS_6 = {"window_days": None, "window_months": 6, "min_count": 2, "warn_days": 30}
# Second newest is 2 Sep 2025: 6 calendar months after September is March 2026, so 31 Mar 2026.
MONTHS_6_DATES = [date(2025, 8, 31), date(2025, 9, 15), date(2025, 9, 2)]


@pytest.mark.parametrize(
    ("as_of", "status", "count", "needed"),
    [
        (date(2026, 2, 28), "current", 3, 0),  # 31 days left > 30 (window start 1 Aug 2025)
        (date(2026, 3, 1), "due_soon", 2, 0),  # 30 days left; August's attempt has left (start 1 Sep)
        (date(2026, 3, 31), "due_soon", 2, 0),  # the day of
        (date(2026, 4, 1), "lapsed", 0, 2),  # both September attempts leave together
    ],
)
def test_calendar_month_window_boundaries(as_of, status, count, needed):
    """A 6-calendar-month, 2-attempt rule across a month end, worked by hand."""
    result = evaluate_currency(MONTHS_6_DATES, as_of=as_of, **MONTHS_6)
    assert (result.status, result.qualifying_count, result.needed) == (status, count, needed)
    assert result.current_until == date(2026, 3, 31)


def test_calendar_month_remedy_counts_attempts_leaving_together():
    """Both September attempts leave on 1 Apr, so two more are needed by 31 Mar (worked by hand)."""
    result = evaluate_currency(MONTHS_6_DATES, as_of=date(2026, 3, 1), **MONTHS_6)
    assert result.remedy == (
        "Due soon: current until 31 March 2026; fly 2 more qualifying autorotations by then to stay current."
    )


def test_leap_day_current_until():
    """31 Aug 2027 + 6 calendar months ends 29 Feb 2028 (leap year): current that day, lapsed on 1 Mar."""
    rule = {"window_days": None, "window_months": 6, "min_count": 1, "warn_days": 0}
    on_leap_day = evaluate_currency([date(2027, 8, 31)], as_of=date(2028, 2, 29), **rule)
    assert (on_leap_day.status, on_leap_day.current_until) == ("due_soon", date(2028, 2, 29))
    day_after = evaluate_currency([date(2027, 8, 31)], as_of=date(2028, 3, 1), **rule)
    assert day_after.status == "lapsed"
    assert day_after.remedy == (
        "Lapsed since 1 March 2028: fly 1 more qualifying autorotation to be current again."
    )


def test_never_done():
    """No qualifying attempt ever, or only after the as-of date: never done (DESIGN 4.6)."""
    for dates in ([], [date(2026, 7, 1)]):
        result = evaluate_currency(dates, as_of=date(2026, 6, 30), **DAYS_90)
        summary = (result.status, result.current_until, result.qualifying_count, result.needed)
        assert summary == ("never", None, 0, 3)
        assert result.remedy == "Never done: fly 3 qualifying autorotations to be current."


def test_too_few_ever_is_lapsed_without_a_date():
    """Some attempts but never the minimum: lapsed, with no current_until to show."""
    result = evaluate_currency([date(2026, 6, 1)], as_of=date(2026, 6, 30), **DAYS_90)
    summary = (result.status, result.current_until, result.qualifying_count, result.needed)
    assert summary == ("lapsed", None, 1, 2)
    assert result.remedy == "Not yet current: fly 2 more qualifying autorotations to be current."


def test_several_attempts_on_one_day_each_count():
    """Three autorotations in one sortie count three times (common practice: each attempt is logged)."""
    result = evaluate_currency([date(2026, 6, 1)] * 3, as_of=date(2026, 6, 30), **DAYS_90)
    summary = (result.status, result.qualifying_count, result.current_until)
    assert summary == ("current", 3, date(2026, 8, 30))  # 1 Jun + 29 = 30 Jun, + 31 = 31 Jul, + 30


def test_window_shorter_than_warning_gives_due_soon_at_best():
    """A 7-day window with 14 days' warning: flying today makes the pilot due soon, and needed counts it."""
    rule = {"window_days": 7, "window_months": None, "min_count": 1, "warn_days": 14}
    before = evaluate_currency([], as_of=date(2026, 6, 30), **rule)
    assert before.needed == 1
    after = evaluate_currency([date(2026, 6, 30)], as_of=date(2026, 6, 30), **rule)
    assert (after.status, after.needed) == ("due_soon", 0)


def test_custom_wording():
    """The rule's own words appear in the remedy, singular and plural (DESIGN 4.6 example)."""
    words = {"describe": "full-touchdown autorotations with an instructor",
             "describe_one": "full-touchdown autorotation with an instructor"}
    result = evaluate_currency([date(2026, 6, 1)], as_of=date(2026, 6, 30), **DAYS_90, **words)
    assert result.remedy == (
        "Not yet current: fly 2 more full-touchdown autorotations with an instructor to be current."
    )
    one = evaluate_currency([date(2026, 6, 1)] * 2, as_of=date(2026, 6, 30), **DAYS_90, **words)
    assert one.remedy.endswith("fly 1 more full-touchdown autorotation with an instructor to be current.")


def test_format_date():
    """Day, English month name, year, whatever the server's locale."""
    assert format_date(date(2027, 3, 14)) == "14 March 2027"


def test_summary_rejects_inconsistent_input():
    """The SQL summary must list the newest first and nothing after as_of."""
    base = {"as_of": date(2026, 6, 30), "count_in_window": 2, "ever": True, **DAYS_90}
    with pytest.raises(ValueError):
        status_from_summary(latest_dates_desc=[date(2026, 1, 1), date(2026, 2, 1)], **base)
    with pytest.raises(ValueError):
        status_from_summary(latest_dates_desc=[date(2026, 7, 1)], **base)


# ---- properties (hypothesis) ------------------------------------------------------------------

dates = st.dates(min_value=date(2023, 1, 1), max_value=date(2027, 12, 31))
windows = st.one_of(
    st.builds(lambda n: {"window_days": n, "window_months": None}, st.integers(1, 400)),
    st.builds(lambda n: {"window_days": None, "window_months": n}, st.integers(1, 24)),
)
rules = st.builds(
    lambda window, k, warn: {**window, "min_count": k, "warn_days": warn},
    windows, st.integers(1, 4), st.integers(0, 60),
)
date_lists = st.lists(dates, max_size=12)


def _rank(result):
    return STATUS_RANK[result.status]


@settings(max_examples=300, deadline=None)
@given(date_lists, dates, rules)
def test_summary_path_matches_direct_count(qualifying, as_of, rule):
    """The SQL path (top-k dates + count) gives the same answer; the count uses window_end directly."""
    window = {"window_days": rule["window_days"], "window_months": rule["window_months"]}
    flown = sorted((q for q in qualifying if q <= as_of), reverse=True)
    summary = status_from_summary(
        as_of=as_of,
        latest_dates_desc=flown[: rule["min_count"]],
        count_in_window=sum(1 for q in flown if as_of <= window_end(q, **window)),
        ever=bool(flown),
        **rule,
    )
    assert summary == evaluate_currency(qualifying, as_of=as_of, **rule)


@settings(max_examples=300, deadline=None)
@given(dates, dates, windows)
def test_window_start_agrees_with_window_end(qualifying_on, as_of, window):
    """An attempt on q counts on as_of iff q >= window_start(as_of) iff as_of <= window_end(q)."""
    if qualifying_on > as_of:
        qualifying_on, as_of = as_of, qualifying_on
    counts_by_start = qualifying_on >= window_start(as_of, **window)
    counts_by_end = as_of <= window_end(qualifying_on, **window)
    assert counts_by_start == counts_by_end


@settings(max_examples=300, deadline=None)
@given(date_lists, dates, dates, rules)
def test_adding_an_attempt_never_makes_a_pilot_less_current(qualifying, extra, as_of, rule):
    """Rank never < lapsed < due soon < current; an extra attempt never lowers it or current_until."""
    before = evaluate_currency(qualifying, as_of=as_of, **rule)
    after = evaluate_currency(qualifying + [extra], as_of=as_of, **rule)
    assert _rank(after) >= _rank(before)
    if before.current_until is not None:
        assert after.current_until >= before.current_until
    assert after.needed <= before.needed


@settings(max_examples=300, deadline=None)
@given(date_lists, dates, st.integers(0, 800), rules)
def test_later_as_of_never_extends_currency(qualifying, as_of, days_later, rule):
    """With no new attempts, a later as-of date never raises the status nor moves current_until."""
    flown = [q for q in qualifying if q <= as_of]
    earlier = evaluate_currency(flown, as_of=as_of, **rule)
    later = evaluate_currency(flown, as_of=as_of + timedelta(days=days_later), **rule)
    assert later.current_until == earlier.current_until
    assert _rank(later) <= _rank(earlier)


@settings(max_examples=300, deadline=None)
@given(date_lists, dates, rules)
def test_needed_attempts_restore_currency_and_no_fewer_do(qualifying, as_of, rule):
    """`needed` attempts flown on as_of make the pilot current or due soon; one fewer does not."""
    result = evaluate_currency(qualifying, as_of=as_of, **rule)
    restored = evaluate_currency(qualifying + [as_of] * result.needed, as_of=as_of, **rule)
    assert restored.status in ("current", "due_soon")
    assert restored.needed == 0
    if result.needed:
        short = evaluate_currency(qualifying + [as_of] * (result.needed - 1), as_of=as_of, **rule)
        assert short.status in ("lapsed", "never")


@settings(max_examples=300, deadline=None)
@given(date_lists, dates, rules)
def test_current_through_current_until_and_lapsed_the_day_after(qualifying, as_of, rule):
    """The boundary: with no new attempts, still current on current_until, lapsed the day after."""
    flown = [q for q in qualifying if q <= as_of]
    result = evaluate_currency(flown, as_of=as_of, **rule)
    if result.status not in ("current", "due_soon"):
        return
    on_last_day = evaluate_currency(flown, as_of=result.current_until, **rule)
    assert on_last_day.status in ("current", "due_soon")
    day_after = evaluate_currency(flown, as_of=result.current_until + timedelta(days=1), **rule)
    assert day_after.status == "lapsed"


@settings(max_examples=300, deadline=None)
@given(
    flown=st.lists(st.integers(min_value=-900, max_value=1), max_size=25),
    later=st.integers(min_value=0, max_value=800),
    window=st.one_of(st.tuples(st.integers(1, 400), st.none()), st.tuples(st.none(), st.integers(1, 24))),
    min_count=st.integers(1, 5),
    warn_days=st.integers(0, 45),
)
def test_kept_facts_decide_later_days_as_the_whole_history_does(flown, later, window, min_count, warn_days):
    """The readiness board's kept facts, written on one day, give on any later day the standing that
    the whole list of dates gives, whether they still hold alone or the kept dates are read again.
    The count on a day is checked against the boundary read straight from the rule: an attempt on q
    counts on every day from q through window_end(q) (pandas counts them)."""
    written = date(2026, 12, 2)
    day = written + timedelta(days=later)
    dates = [written + timedelta(days=d) for d in flown]
    rule = {"window_days": window[0], "window_months": window[1]}
    facts = kept_facts(dates, as_of=written, min_count=min_count, **rule)
    whole = evaluate_currency(dates, as_of=day, min_count=min_count, warn_days=warn_days, **rule)
    series = pd.Series([q for q in dates if q <= day], dtype="object")
    ends = series.map(lambda q: window_end(q, **rule))
    assert whole.qualifying_count == int(((series <= day) & (ends >= day)).sum())
    if facts_hold_on(day, counted_on=written, newest_on=facts.newest_on, counted_through=facts.counted_through):
        shown = status_from_facts(as_of=day, current_until=facts.current_until, count_in_window=facts.window_count,
                                  ever=facts.newest_on is not None, still_counting=facts.still_counting,
                                  min_count=min_count, warn_days=warn_days)
    else:
        shown = evaluate_currency(facts.dates_desc, as_of=day, min_count=min_count, warn_days=warn_days, **rule)
    assert shown == whole
    # Pruning is stable: the kept dates kept again on the same day are the same dates.
    assert kept_dates(facts.dates_desc, as_of=written, min_count=min_count, **rule) == facts.dates_desc
