"""GET /api/v1/people/{id}/trends on stored attempts, checked against pandas, scipy and the NIST formula."""
import numpy as np
import pandas as pd
import pytest
from scipy.stats import theilslopes
from sqlalchemy import select

from server.logbook import service as logbook
from server.logbook.models import Attempt
from server.people.models import Person
from tests.progress.helpers import GOOD, POOR, fly

URL = "/api/v1/people/{}/trends?maneuver=straight_in&termination=touchdown&as_of={}"
# Invented test flights: touchdown speeds falling, flare heights wandering in and out of the band.
TOUCHDOWNS = [11.0, 9.5, 10.0, 8.5, 7.0, 7.5, 6.0, 5.0, 5.5, 4.0, 3.5, 3.0]
FLARES = [55.0, 130.0, 80.0, 62.0, 95.0, 120.0, 88.0, 90.0, 100.0, 85.0, 92.0, 90.0]


def _fly_series(db, world):
    for sortie in range(4):
        fly(db, world, [GOOD | {"touchdown_speed_kt": t, "flare_height_ft": f}
                        for t, f in zip(TOUCHDOWNS[3 * sortie:3 * sortie + 3], FLARES[3 * sortie:3 * sortie + 3])],
            day=2 * sortie)


def _stored(db, world) -> list[Attempt]:
    db.expire_all()
    return list(db.scalars(select(Attempt).where(Attempt.pilot_id == world.student.id)
                           .order_by(Attempt.flown_on, Attempt.sequence)))


def test_touchdown_trend_matches_pandas_ewm_nist_limits_and_scipy_theilslopes(db, world, student_client):
    _fly_series(db, world)
    body = student_client.get(URL.format(world.student.id, "2026-09-30")).json()
    metric = body["metrics"]["touchdown_speed_kt"]
    stored = [a.touchdown_speed_kt for a in _stored(db, world)]
    assert metric["values"] == stored == TOUCHDOWNS
    # pandas ewm(alpha=0.3, adjust=False) seeded with the centre line, as NIST 6.3.2.4 seeds EWMA_0.
    center = float(np.mean(stored))
    expected = pd.Series([center, *stored]).ewm(alpha=0.3, adjust=False).mean().iloc[1:]
    assert metric["ewma"] == pytest.approx(list(expected), abs=1e-9)
    # NIST/SEMATECH 6.3.2.4: limits centre ± 3 s sqrt(lam/(2-lam) (1-(1-lam)^(2t))), s the sample deviation.
    s = pd.Series(stored).std(ddof=1)
    t = np.arange(1, len(stored) + 1)
    half = 3 * s * np.sqrt(0.3 / 1.7 * (1 - 0.7 ** (2 * t)))
    assert metric["ucl"] == pytest.approx(list(center + half), abs=1e-9)
    assert metric["lcl"] == pytest.approx(list(center - half), abs=1e-9)
    # scipy.stats.theilslopes over the last 20 attempts (here all 12), per attempt.
    assert metric["slope_per_attempt"] == pytest.approx(theilslopes(stored, range(len(stored))).slope)
    assert metric["direction"] == "improving"  # falling touchdown speed is better (common practice)


def test_flare_deviation_is_signed_distance_outside_each_attempts_stored_band(db, world, student_client):
    _fly_series(db, world)
    body = student_client.get(URL.format(world.student.id, "2026-09-30")).json()
    expected = []
    for a in _stored(db, world):
        low, high = a.flare_band_low_ft, a.flare_band_high_ft
        expected.append(a.flare_height_ft - low if a.flare_height_ft < low
                        else a.flare_height_ft - high if a.flare_height_ft > high else 0.0)
    values = body["metrics"]["flare_height_dev_ft"]["values"]
    assert values == pytest.approx(expected)
    assert values[0] < 0 < values[1]  # 55 ft is a late flare, 130 ft an early one
    assert values[-1] == 0.0


def test_trend_score_is_pandas_ewm_of_stored_touchdown_and_flare_subscores(db, world, student_client):
    _fly_series(db, world)
    body = student_client.get(URL.format(world.student.id, "2026-09-30")).json()
    inputs = [np.mean([a.parts["touchdown_speed"]["subscore"], a.parts["flare_height"]["subscore"]])
              for a in _stored(db, world)]
    # pandas ewm with adjust=False starts from the first value: the trend score's EWMA_0.
    expected = 100 * pd.Series(inputs).ewm(alpha=0.3, adjust=False).mean().iloc[-1]
    assert body["trend_score"] == pytest.approx(expected, abs=1e-9)
    assert body["attempts"] == 12 and set(body["metrics"]) == {
        "touchdown_speed_kt", "flare_height_dev_ft", "point_error_ft", "nr_dev_pct", "score"}


def test_last_three_touchdowns_inside_tolerance_make_the_student_at_standard(db, world, student_client):
    fly(db, world, [POOR, POOR], day=0)
    fly(db, world, [GOOD, GOOD], day=1)
    url = URL.format(world.student.id, "2026-09-02")
    before = student_client.get(url).json()
    assert before["state"] == "practising"
    assert before["forecast_attempts"] >= 1
    fly(db, world, [GOOD], day=1)
    after = student_client.get(url).json()
    # Defaults of a school with no standard: 3 in a row inside every tolerance, trend score 80, 90 days.
    assert after["standard"]["consecutive_needed"] == 3 and after["trend_score"] >= 80
    assert after["state"] == "at_standard" and after["forecast_attempts"] == 0


def test_no_satisfactory_attempt_within_the_decay_window_makes_the_student_rusty(db, world, student_client):
    fly(db, world, [GOOD, GOOD, GOOD], day=0)  # 1 Sep 2026
    inside = student_client.get(URL.format(world.student.id, "2026-11-30")).json()  # 90 days later
    lapsed = student_client.get(URL.format(world.student.id, "2026-12-01")).json()  # 91 days later
    assert inside["state"] == "at_standard"
    assert lapsed["state"] == "rusty"


def test_a_kind_never_flown_is_not_started(world, student_client):
    body = student_client.get(f"/api/v1/people/{world.student.id}/trends?maneuver=hovering&termination=to_hover").json()
    assert body["state"] == "not_started" and body["attempts"] == 0 and body["trend_score"] is None
    assert body["metrics"]["touchdown_speed_kt"]["direction"] == "too_few"


def test_drafts_do_not_count_and_an_amendment_counts_once_signed(db, world, student_client):
    signed = fly(db, world, [GOOD | {"touchdown_speed_kt": 5.0}], day=0)
    fly(db, world, [GOOD | {"touchdown_speed_kt": 1.0}], day=1, sign=False)
    url = URL.format(world.student.id, "2026-09-30")
    assert student_client.get(url).json()["metrics"]["touchdown_speed_kt"]["values"] == [5.0]
    # An amendment in draft leaves the signed version counting...
    instructor = db.get(Person, world.instructor.id)
    amendment = logbook.amend_sortie(db, actor=instructor, sortie=db.get(type(signed), signed.id),
                                     reason="touchdown speed misread")
    attempt = amendment.attempts[0]
    attempt.touchdown_speed_kt = 6.0
    db.commit()
    assert student_client.get(url).json()["metrics"]["touchdown_speed_kt"]["values"] == [5.0]
    # ...and once signed it replaces it: the attempt counts once, with the amended value.
    logbook.record_instructor_signature(db, actor=instructor, sortie=amendment)
    db.commit()
    assert student_client.get(url).json()["metrics"]["touchdown_speed_kt"]["values"] == [6.0]


def test_only_the_pilot_their_instructors_and_chief_pilots_may_read_trends(
        db, world, student_client, other_student_client, instructor_client, other_instructor_client, chief_client):
    fly(db, world, [GOOD], day=0)
    url = URL.format(world.student.id, "2026-09-30")
    assert student_client.get(url).status_code == 200
    assert instructor_client.get(url).status_code == 200  # flew with the student
    assert chief_client.get(url).status_code == 200
    # Others get the same answer as for a person who does not exist.
    assert other_student_client.get(url).status_code == 404
    assert other_instructor_client.get(url).status_code == 404
    assert student_client.get(URL.format(999999, "2026-09-30")).status_code == 404


def test_an_unknown_maneuver_is_refused_in_words(world, student_client):
    answer = student_client.get(f"/api/v1/people/{world.student.id}/trends?maneuver=loop&termination=touchdown")
    assert answer.status_code == 422
    assert "maneuver" in answer.json()["detail"]


def test_rotor_rpm_deviation_is_negative_for_a_droop_and_positive_for_an_overspeed(db, world, student_client):
    # The test type's power-off limits are 90-108 % NR; %NR counts from normal rotor speed, 100 % (common practice).
    fly(db, world, [GOOD | {"nr_low_pct": 86, "nr_high_pct": 104}, GOOD | {"nr_low_pct": 95, "nr_high_pct": 110},
                    GOOD, GOOD | {"point_error_ft": -35}], day=0)
    metrics = student_client.get(URL.format(world.student.id, "2026-09-30")).json()["metrics"]
    assert metrics["nr_dev_pct"]["values"] == [-4.0, 2.0, 0.0, 0.0]
    assert metrics["nr_dev_pct"]["tolerance"] == 9.0  # half the 90-108 range, as the score uses it
    assert metrics["point_error_ft"]["values"] == [20.0, 20.0, 20.0, -35.0]  # + long, - short, as recorded
