"""The safety digest as a chief pilot reads it: flags per 100 signed attempts, by group, with the
attempts behind each figure, a date range and a CSV export.

Expected figures are counted independently in Python from the attempts' own flags (collections.Counter
over the stored records) and, for the arranged cases, by hand; the density-altitude band is Python's
math.floor of the sortie's density altitude over 1,000 ft.
"""
import csv
import io
import math
from collections import Counter
from datetime import UTC, date, datetime

import pytest
from sqlalchemy import select

from server.logbook import service as logbook
from server.logbook.models import Attempt, Sortie
from server.logbook.schemas import AttemptFields
from server.people.models import Person
from server.safety import schemas as safety_schemas
from server.safety import service as safety
from tests.support import make_sortie

CLEAN = dict(maneuver="straight_in", termination="touchdown", descent_kias=65, nr_low_pct=95, nr_high_pct=104,
             flare_height_ft=90, touchdown_speed_kt=3, point_error_ft=20, heading_error_deg=2)
# Each one raises one flag on the invented test type (NR limits 90-108 %, touchdown max 8 kt,
# avoid region around 0-40 KIAS below 400 ft).
LOW_RPM = CLEAN | {"nr_low_pct": 84}
TAKEOVER = CLEAN | {"takeover": True}
IN_AVOID = CLEAN | {"entry_kias": 10, "entry_height_ft": 150}
FAST = CLEAN | {"touchdown_speed_kt": 14}
RANGE = {"date_from": "2026-09-01", "date_to": "2026-11-30"}


def flown(db, world, observations, *, instructor=None, pilot=None, sign=True, when=None, **conditions):
    """A sortie with these attempts, signed unless told otherwise."""
    sortie = make_sortie(db, world, instructor=instructor, pilot=pilot, flown_at=when, **conditions)
    actor = db.get(Person, sortie.instructor_id)
    for values in observations:
        logbook.add_attempt(db, actor=actor, sortie=sortie, data=AttemptFields(**values))
    db.flush()
    db.refresh(sortie)
    if sign:
        logbook.record_instructor_signature(db, actor=actor, sortie=sortie)
    db.commit()
    return sortie


@pytest.fixture
def flights(db, world):
    """Two instructors' signed sorties in two months, one draft, and one record amended and re-signed."""
    ivo = flown(db, world, [CLEAN, LOW_RPM, CLEAN, FAST], when=datetime(2026, 11, 5, 9, tzinfo=UTC))
    olga = flown(db, world, [TAKEOVER, IN_AVOID, LOW_RPM | {"takeover": True}, CLEAN, CLEAN],
                 instructor=world.other_instructor, pilot=world.other_student,
                 when=datetime(2026, 10, 12, 9, tzinfo=UTC), oat_c=35)
    draft = flown(db, world, [LOW_RPM, LOW_RPM], sign=False, when=datetime(2026, 11, 6, 9, tzinfo=UTC))
    amended = flown(db, world, [FAST], when=datetime(2026, 11, 7, 9, tzinfo=UTC))
    actor = db.get(Person, world.instructor.id)
    second = logbook.amend_sortie(db, actor=actor, sortie=amended, reason="touchdown speed re-read from the flight data log")
    db.flush()
    db.refresh(second)
    logbook.record_instructor_signature(db, actor=actor, sortie=second)
    db.commit()
    return {"ivo": ivo, "olga": olga, "draft": draft, "amended": amended, "second": second}


def counted_attempts(db, flights) -> list[Attempt]:
    """The attempts the digest should count: signed, standing versions only (not the draft, not v1)."""
    ids = [flights[k].id for k in ("ivo", "olga", "second")]
    return list(db.scalars(select(Attempt).where(Attempt.sortie_id.in_(ids))))


def expected_counts(attempts) -> Counter:
    counts = Counter()
    for a in attempts:
        codes = {f["code"] for f in a.flags} & set(safety.FLAG_CODES)
        counts.update(codes)
        counts["any"] += bool(codes)
    return counts


def test_totals_match_an_independent_count_of_the_stored_flags(chief_client, db, flights):
    body = chief_client.get("/api/v1/safety/digest", params=RANGE).json()
    attempts = counted_attempts(db, flights)
    expected = expected_counts(attempts)
    assert body["total"]["attempts"] == len(attempts) == 10
    for code in (*safety.FLAG_CODES, "any"):
        assert body["total"]["counts"][code] == expected[code], code
        assert body["total"]["per_100"][code] == pytest.approx(round(100 * expected[code] / 10, 1))
    # By hand: 2 low-RPM, 2 takeovers, 1 avoid-region entry, 2 fast touchdowns (the amended record once).
    assert [body["total"]["counts"][c] for c in safety.FLAG_CODES] == [2, 2, 1, 2]
    assert body["total"]["counts"]["any"] == 6
    assert "flight manual" in body["caution"]


def test_by_instructor_per_100_attempts(chief_client, db, world, flights):
    rows = {r["label"]: r for r in chief_client.get("/api/v1/safety/digest", params=RANGE).json()["by"]["instructor"]}
    ivo, olga = rows[world.instructor.name], rows[world.other_instructor.name]
    # Ivo: 4 + 1 (amended record, counted once) attempts; 1 low RPM, 2 fast touchdowns.
    assert ivo["attempts"] == 5 and ivo["counts"]["nr_limits"] == 1 and ivo["counts"]["fast_touchdown"] == 2
    assert ivo["per_100"]["fast_touchdown"] == 40.0 and ivo["per_100"]["takeover"] == 0.0
    # Olga: 5 attempts; 2 takeovers, 1 low RPM, 1 avoid-region entry; 3 attempts flagged at all.
    assert olga["attempts"] == 5 and olga["per_100"]["takeover"] == 40.0 and olga["per_100"]["hv_avoid"] == 20.0
    assert olga["counts"]["any"] == 3 and olga["per_100"]["any"] == 60.0


def test_by_aircraft_site_month_and_density_altitude_band(chief_client, db, world, flights):
    by = chief_client.get("/api/v1/safety/digest", params=RANGE).json()["by"]
    assert [(r["label"], r["attempts"]) for r in by["aircraft"]] == [(world.aircraft.registration, 10)]
    assert [(r["label"], r["attempts"]) for r in by["site"]] == [(world.site.name, 10)]
    assert [(r["key"], r["label"], r["attempts"]) for r in by["month"]] == [
        ("2026-10", "October 2026", 5), ("2026-11", "November 2026", 5)]
    bands = {}
    for sortie in (flights["ivo"], flights["olga"], flights["second"]):
        db.refresh(sortie)
        low = math.floor(sortie.density_altitude_ft / 1000) * 1000
        bands[str(low)] = bands.get(str(low), 0) + len(sortie.attempts)
    assert {r["key"]: r["attempts"] for r in by["da_band"]} == bands
    assert len(bands) == 2, "the hot day sits in a higher band"


def test_a_density_altitude_below_sea_level_falls_in_the_band_below_zero(chief_client, db, world):
    cold = flown(db, world, [LOW_RPM], when=datetime(2026, 11, 2, 9, tzinfo=UTC), oat_c=-35, altimeter_hpa=1045)
    db.refresh(cold)
    assert cold.density_altitude_ft < -1000
    expected = math.floor(cold.density_altitude_ft / 1000) * 1000
    rows = chief_client.get("/api/v1/safety/digest", params=RANGE).json()["by"]["da_band"]
    assert [(r["key"], r["attempts"]) for r in rows] == [(str(expected), 1)]
    assert rows[0]["label"] == f"{expected:,} to {expected + 999:,} ft"


def test_the_date_range_limits_what_is_counted(chief_client, flights):
    november = chief_client.get("/api/v1/safety/digest", params={"date_from": "2026-11-01", "date_to": "2026-11-30"})
    assert november.json()["total"]["attempts"] == 5
    backwards = chief_client.get("/api/v1/safety/digest", params={"date_from": "2026-12-01", "date_to": "2026-11-01"})
    assert backwards.status_code == 422 and "date range" in backwards.json()["detail"]


def test_each_figure_opens_the_attempts_behind_it(chief_client, db, world, flights):
    page = chief_client.get("/safety", params=RANGE)
    assert page.status_code == 200
    link = f"by=instructor&amp;key={world.other_instructor.id}&amp;flag=takeover"
    assert link in page.text
    listed = chief_client.get("/safety/attempts", params={**RANGE, "by": "instructor",
                                                          "key": world.other_instructor.id, "flag": "takeover"})
    assert listed.status_code == 200
    olga = flights["olga"]
    takeovers = [a for a in olga.attempts if a.takeover]
    assert len(takeovers) == 2
    for a in takeovers:
        assert f'href="http://testserver/sorties/{olga.id}#attempt-{a.id}"' in listed.text
    others = [a for a in olga.attempts if not a.takeover]
    for a in others:
        assert f"#attempt-{a.id}\"" not in listed.text
    assert "Caution." in listed.text


def test_the_api_lists_the_same_attempts_as_the_figure(chief_client, db, world, flights):
    body = chief_client.get("/api/v1/safety/attempts", params={**RANGE, "by": "month", "key": "2026-11",
                                                               "flag": "fast_touchdown"}).json()
    ids = sorted(a["attempt_id"] for a in body["attempts"])
    expected = sorted(a.id for a in counted_attempts(db, flights)
                      if a.flown_on.month == 11 and any(f["code"] == "fast_touchdown" for f in a.flags))
    assert ids == expected and len(ids) == 2
    assert flights["amended"].attempts[0].id not in ids, "the superseded signed version is not listed"
    bad = chief_client.get("/api/v1/safety/attempts", params={"by": "month", "key": "November"})
    assert bad.status_code == 422


def test_drafts_are_not_counted(chief_client, flights):
    body = chief_client.get("/api/v1/safety/attempts", params=RANGE).json()
    assert not {a["sortie_id"] for a in body["attempts"]} & {flights["draft"].id}


def test_csv_export_holds_what_the_page_shows(chief_client, flights):
    answer = chief_client.get("/safety/digest.csv", params=RANGE)
    assert answer.status_code == 200
    assert answer.headers["content-type"].startswith("text/csv")
    assert "attachment" in answer.headers["content-disposition"]
    rows = list(csv.DictReader(io.StringIO(answer.text)))
    shown = chief_client.get("/api/v1/safety/digest", params=RANGE).json()
    assert len(rows) == 1 + sum(len(v) for v in shown["by"].values())
    total = rows[0]
    assert total["dimension"] == "all" and int(total["attempts"]) == shown["total"]["attempts"]
    for r in rows[1:]:
        match = next(x for x in shown["by"][r["dimension"]] if x["label"] == r["group"])
        assert int(r["attempts"]) == match["attempts"]
        for code in (*safety.FLAG_CODES, "any"):
            assert int(r[f"{code}_count"]) == match["counts"][code]
            assert float(r[f"{code}_per_100"]) == match["per_100"][code]


def test_csv_cells_cannot_run_as_spreadsheet_formulas(chief_client, db, world):
    # OWASP "CSV Injection": a cell starting with = + - @ is run by spreadsheets.
    db.get(Person, world.instructor.id).name = "=HYPERLINK(\"http://example.invalid\")"
    db.commit()
    flown(db, world, [FAST], when=datetime(2026, 11, 3, 9, tzinfo=UTC))
    rows = list(csv.reader(io.StringIO(chief_client.get("/safety/digest.csv", params=RANGE).text)))
    instructor_row = next(r for r in rows if r[0] == "instructor")
    assert instructor_row[1].startswith("'=")


def test_the_page_shows_the_caution_and_the_chief_sees_the_nav_link(chief_client, instructor_client, flights):
    page = chief_client.get("/safety", params=RANGE)
    assert "Caution." in page.text and "flight manual" in page.text
    assert 'href="http://testserver/safety"' in chief_client.get("/").text
    assert "/safety\"" not in instructor_client.get("/").text


def test_the_date_filter_returns_only_the_tables_to_htmx(chief_client, flights):
    answer = chief_client.get("/safety", params=RANGE, headers={"HX-Request": "true"})
    assert answer.status_code == 200
    assert "<html" not in answer.text and "By instructor" in answer.text
    assert "HX-Request" in answer.headers["vary"]


@pytest.mark.parametrize("url", ["/safety", "/safety/attempts", "/safety/digest.csv"])
def test_instructors_and_students_are_refused(instructor_client, student_client, url):
    assert instructor_client.get(url).status_code == 403
    assert student_client.get(url).status_code == 403


def test_the_api_refuses_everyone_but_chief_pilots(instructor_client, student_client, anonymous, world):
    for client in (instructor_client, student_client):
        assert client.get("/api/v1/safety/digest").status_code == 403
        assert client.get("/api/v1/safety/attempts").status_code == 403
    assert anonymous.get("/api/v1/safety/digest").status_code == 401


def test_the_api_names_match_the_service():
    assert safety_schemas.Dimension.__args__ == safety.DIMENSIONS
    assert safety_schemas.FlagCode.__args__ == safety.FLAG_CODES


def test_an_empty_period_says_so(chief_client, world):
    page = chief_client.get("/safety", params={"date_from": "2020-01-01", "date_to": "2020-01-31"})
    assert page.status_code == 200 and "No signed attempts in this period." in page.text
