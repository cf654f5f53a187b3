"""The safety digest page: period presets, the month-by-month chart, rate and count apart, and flares
begun outside the expected band as a category of their own.

Expected figures are counted independently: flares outside the band from each stored attempt's
flare height and band with plain Python comparisons; the presets' dates with Python's datetime and
the calendar quarters (January, April, July, October: common practice); bar heights as the rate's
share of the axis, which starts at zero (honest axes, common practice in charting).
"""
import re

import pytest
from datetime import UTC, date, datetime, timedelta

from server.people import service as people
from server.safety import service as safety
from server.safety.chart import HEIGHT, BOTTOM, TOP, MonthBar, months_chart_svg
from tests.safety.test_digest import CLEAN, FAST, RANGE, counted_attempts, expected_counts, flights, flown  # noqa: F401
from tests.support import cell_texts, parsed, read_text

EARLY_FLARE = CLEAN | {"flare_height_ft": 160}  # above the test type's 70-110 ft band at the test field
LATE_FLARE = CLEAN | {"flare_height_ft": 40}


def _school_today(db):
    return people.school_today(db)


def test_presets_choose_the_period_and_mark_it(chief_client, db, world):
    today = _school_today(db)
    quarter_start = date(today.year, [1, 4, 7, 10][(today.month - 1) // 3], 1)
    for preset, first in (("7d", today - timedelta(days=6)), ("30d", today - timedelta(days=29)),
                          ("quarter", quarter_start), ("12m", today - timedelta(days=365))):
        page = parsed(chief_client.get("/safety", params={"period": preset}))
        assert page.find("input", attrs={"name": "date_from"})["value"] == first.isoformat(), preset
        assert page.find("input", attrs={"name": "date_to"})["value"] == today.isoformat()
        marked = page.find("nav", attrs={"aria-label": "Period"}).find_all("a", attrs={"aria-current": "page"})
        assert [a["href"].rsplit("=", 1)[1] for a in marked] == [preset]
    # Opened plainly, the page shows the last 30 days, not a whole year.
    plain = parsed(chief_client.get("/safety"))
    assert plain.find("input", attrs={"name": "date_from"})["value"] == (today - timedelta(days=29)).isoformat()
    # Chosen dates mark no preset; an unknown preset is refused.
    chosen = parsed(chief_client.get("/safety", params=RANGE))
    assert chosen.find("nav", attrs={"aria-label": "Period"}).find("a", attrs={"aria-current": "page"}) is None
    assert chief_client.get("/safety", params={"period": "fortnight"}).status_code == 422


def test_each_figure_reads_as_a_rate_with_its_count_beneath(chief_client, db, flights):
    counted = counted_attempts(db, flights)
    low = expected_counts(counted)["nr_limits"]
    page = parsed(chief_client.get("/safety", params=RANGE))
    table = page.find("section", attrs={"aria-labelledby": "by-all"}).find("table")
    headers = [read_text(th) for th in table.find("thead").find_all("th")]
    low_rpm = headers.index("Rotor RPM outside limits")
    cell = table.find("tbody").find_all(["th", "td"])[low_rpm]
    rate = f"{100 * low / len(counted):.1f}"
    assert cell.find(class_="rate").get_text() == rate
    assert cell.find(class_="of").get_text() == f"{low} of {len(counted)}"
    assert read_text(cell) == f"{rate} per 100 {low} of {len(counted)}"
    assert not re.search(r"\d\(\d", page.get_text()), "a rate runs into its count"


def test_flares_outside_the_expected_band_are_counted_and_listed(chief_client, db, world):
    flown(db, world, [EARLY_FLARE, LATE_FLARE, CLEAN, FAST], when=datetime(2026, 11, 5, 9, tzinfo=UTC))
    attempts = [a for a in counted_attempts_of(db)]
    outside = [a for a in attempts if a.flare_height_ft is not None
               and not a.flare_band_low_ft <= a.flare_height_ft <= a.flare_band_high_ft]
    assert len(outside) == 2
    body = chief_client.get("/api/v1/safety/digest", params=RANGE).json()
    assert body["total"]["counts"]["flare_band"] == len(outside)
    assert body["total"]["counts"]["any"] == 1  # not a flag: the four flags' count is unchanged
    page = parsed(chief_client.get("/safety", params=RANGE))
    table = page.find("section", attrs={"aria-labelledby": "by-all"}).find("table")
    headers = [read_text(th) for th in table.find("thead").find_all("th")]
    cell = table.find("tbody").find_all(["th", "td"])[headers.index("Flare begun outside the expected band")]
    assert read_text(cell) == "50.0 per 100 2 of 4"
    listed = parsed(chief_client.get(cell.find("a")["href"]))
    shown = {a["href"].rsplit("#attempt-", 1)[1] for a in listed.find("table").find_all("a")}
    assert shown == {str(a.id) for a in outside}


def counted_attempts_of(db):
    from sqlalchemy import select

    from server.logbook.models import Attempt, Sortie

    return db.scalars(select(Attempt).join(Sortie).where(Sortie.state == "signed"))


def test_the_month_chart_covers_twelve_months_and_links_each_bar(chief_client, db, world, flights):
    page = parsed(chief_client.get("/safety", params=RANGE))
    svg = page.find("svg", class_="months-chart")
    assert svg.find("title").get_text() == "Flagged attempts per 100, month by month"
    links = svg.find_all("a")
    labels = [a["aria-label"] for a in links]
    expected = []
    for month in (10, 11):
        of_month = [a for a in counted_attempts(db, flights) if a.flown_on.month == month]
        flagged = expected_counts(of_month)["any"]
        rate = f"{100 * flagged / len(of_month):.1f}".removesuffix(".0")
        expected.append(f"{date(2026, month, 1):%b %Y}: {rate} flagged per 100 ({flagged} of {len(of_month)} attempts)")
    assert labels == expected
    months = [t.get_text() for t in svg.find_all("text") if t.get_text() in
              ("Dec", "Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov")]
    assert len(months) == 12 and months[-1] == "Nov"
    listed = parsed(chief_client.get(links[1]["href"].replace("&amp;", "&")))
    november = [a for a in counted_attempts(db, flights) if a.flown_on.month == 11]
    assert len(listed.find("table").find("tbody").find_all("tr")) == expected_counts(november)["any"]
    assert "style=" not in str(svg)  # presentation attributes only, under the strict CSP


def test_bars_start_at_zero_and_scale_with_the_rate():
    svg = months_chart_svg([MonthBar("Oct 2026", 10, 5, "/a"), MonthBar("Nov 2026", 20, 5, "/b"),
                            MonthBar("Dec 2026", 0, 0, None)])
    heights = [float(h) for h in re.findall(r'class="bar"[^>]*height="([\d.]+)"', svg)]
    assert len(heights) == 2
    assert heights[0] / heights[1] == pytest.approx(2.0, abs=0.01)  # 50 per 100 against 25, to a tenth of a pixel
    axis_bottom = HEIGHT - BOTTOM
    ys = [float(y) for y in re.findall(r'class="bar"[^>]*y="([\d.]+)"', svg)]
    assert [y + h for y, h in zip(ys, heights, strict=True)] == pytest.approx([axis_bottom, axis_bottom], abs=0.1)
    assert TOP <= min(ys)
    assert "none flown" in svg and ">0<" in svg
