"""Importing a recorded track through the API and accepting its detections into attempts.

The track is the kinematic model of tests/compute/flight_model.py (known truth), sampled with GPS-standard
noise; hashes are checked with Python's hashlib (FIPS 180-4 SHA-256)."""
import hashlib
from datetime import datetime, timezone
from functools import lru_cache

import pytest
from sqlalchemy import func, select

from server.logbook import service as logbook
from server.logbook.models import Sortie
from server.records import audit
from server.records.models import AuditEvent
from server.logbook.models import Track
from tests.compute.flight_model import FT, rows_to_csv, sample, short_sortie
from tests.support import PASSWORD, make_sortie

AIM = (50.60, -3.40)
SITE_ELEVATION_M = 500 * FT  # the test school's field


@lru_cache(maxsize=None)
def flight():
    return short_sortie()


@lru_cache(maxsize=None)
def track_file(day: int = 20) -> bytes:
    rows = sample(flight(), rate_hz=5, seed=8, elevation_m=SITE_ELEVATION_M, origin=AIM,
                  started_at=datetime(2026, 11, day, 9, 40, tzinfo=timezone.utc))
    return rows_to_csv(rows)


@pytest.fixture
def sortie(db, world):
    world.site.aim_lat_deg, world.site.aim_lon_deg = AIM
    db.add(world.site)
    db.commit()
    return make_sortie(db, world)


def upload(client, sortie_id, data=None, name="flight.csv", **form):
    return client.api("POST", f"/api/v1/sorties/{sortie_id}/tracks",
                      files={"file": (name, track_file() if data is None else data, "text/csv")}, data=form)


def stored(db):
    db.expire_all()
    return db.scalar(select(func.count()).select_from(Track)), db.scalar(select(func.count()).select_from(AuditEvent))


def test_import_finds_both_autorotations_and_keeps_the_file(instructor_client, sortie, db):
    answer = upload(instructor_client, sortie.id)
    assert answer.status_code == 201, answer.text
    body = answer.json()
    assert body["sortie_id"] == sortie.id and body["format"] == "csv"
    assert body["sample_rate_hz"] == 5.0 and body["has_doppler_speed"] is True
    assert body["ground_ref"] == "on_ground_readings"
    assert body["sha256"] == hashlib.sha256(track_file()).hexdigest()
    assert [d["termination"] for d in body["detections"]] == ["ground", "power_recovery"]
    ground, recovery = body["detections"]
    truth = flight().truths
    assert abs(ground["flare_height_ft"] - truth[0].flare_height_ft) <= ground["uncertainty"]["flare_height_ft"]
    assert abs(recovery["recovery_height_ft"] - truth[1].recovery_height_ft) <= recovery["uncertainty"]["recovery_height_ft"]
    assert recovery["touchdown_speed_kt"] is None and recovery["unmeasured"]["touchdown_speed_kt"]
    again = instructor_client.api("GET", f"/api/v1/tracks/{body['id']}")
    assert again.status_code == 200 and again.json() == body
    db.expire_all()
    assert db.get(Track, body["id"]).raw == track_file()  # kept byte for byte


def test_accepting_fills_a_new_attempt_and_typing_wins_afterwards(instructor_client, sortie):
    track = upload(instructor_client, sortie.id).json()
    refused = instructor_client.api("POST", f"/api/v1/tracks/{track['id']}/detections/1/accept",
                                    json={"maneuver": "straight_in"})
    assert refused.status_code == 422 and "touchdown or to_hover" in refused.json()["detail"]
    answer = instructor_client.api("POST", f"/api/v1/tracks/{track['id']}/detections/1/accept",
                                   json={"maneuver": "straight_in", "termination": "touchdown"})
    assert answer.status_code == 200, answer.text
    attempt = answer.json()
    detection = track["detections"][0]
    assert attempt["measured"] == ["entry_height_ft", "flare_height_ft", "point_error_ft", "touchdown_speed_kt"]
    assert attempt["flare_height_ft"] == detection["flare_height_ft"]
    assert attempt["touchdown_speed_kt"] == detection["touchdown_speed_kt"]
    assert attempt["landing_dir_deg"] == 270  # the site's direction nearest the track over the ground
    assert attempt["measured_uncertainty"]["flare_height_ft"] == detection["uncertainty"]["flare_height_ft"]
    assert attempt["score"] is not None and attempt["nr_low_pct"] is None  # rotor RPM stays typed
    typed = instructor_client.api("PATCH", f"/api/v1/attempts/{attempt['id']}", json={"flare_height_ft": 95})
    assert typed.status_code == 200, typed.text
    assert "flare_height_ft" not in typed.json()["measured"]
    assert "touchdown_speed_kt" in typed.json()["measured"]


def test_a_power_recovery_fills_an_existing_attempt_of_the_same_kind(instructor_client, sortie):
    track = upload(instructor_client, sortie.id).json()
    logged = instructor_client.api("POST", f"/api/v1/sorties/{sortie.id}/attempts",
                                   json={"maneuver": "turn_180", "termination": "power_recovery", "nr_low_pct": 94,
                                         "grade": "satisfactory"}).json()
    answer = instructor_client.api("POST", f"/api/v1/tracks/{track['id']}/detections/2/accept",
                                   json={"attempt_id": logged["id"]})
    assert answer.status_code == 200, answer.text
    attempt = answer.json()
    assert attempt["id"] == logged["id"] and attempt["maneuver"] == "turn_180"
    assert attempt["measured"] == ["entry_height_ft", "flare_height_ft"]
    assert attempt["nr_low_pct"] == 94 and attempt["grade"] == "satisfactory"
    touchdown = instructor_client.api("POST", f"/api/v1/sorties/{sortie.id}/attempts",
                                      json={"maneuver": "straight_in", "termination": "touchdown"}).json()
    wrong = instructor_client.api("POST", f"/api/v1/tracks/{track['id']}/detections/2/accept",
                                  json={"attempt_id": touchdown["id"]})
    assert wrong.status_code == 422 and "power recovery" in wrong.json()["detail"]
    missing = instructor_client.api("POST", f"/api/v1/tracks/{track['id']}/detections/9/accept",
                                    json={"attempt_id": touchdown["id"]})
    assert missing.status_code == 404


def test_the_signed_content_carries_the_track_hash_once_an_attempt_uses_it(instructor_client, sortie, db):
    track = upload(instructor_client, sortie.id).json()
    instructor_client.api("POST", f"/api/v1/tracks/{track['id']}/detections/1/accept",
                          json={"maneuver": "straight_in", "termination": "to_hover"})
    signed = instructor_client.api("POST", f"/api/v1/sorties/{sortie.id}/sign", json={"password": PASSWORD})
    assert signed.status_code == 200, signed.text
    db.expire_all()
    record = logbook.sortie_record(db.get(Sortie, sortie.id))
    assert record["track_sha256s"] == [hashlib.sha256(track_file()).hexdigest()]
    expected = hashlib.sha256(audit.canonical_json(record).encode()).hexdigest()
    assert signed.json()["signatures"][0]["content_sha256"] == expected
    late = upload(instructor_client, sortie.id)
    assert late.status_code == 409  # a signed sortie takes no more tracks


def test_a_sortie_without_measured_attempts_signs_as_before(db, world):
    sortie = make_sortie(db, world, attempts=1)
    assert "track_sha256s" not in logbook.sortie_record(sortie)


@pytest.mark.parametrize("data, words", [
    (b"", "empty"),
    (b"hello,world\n1,2\n", "not a track"),
    (track_file()[: track_file().index(b",", len(track_file()) // 2) + 1], "cut short"),
    (track_file(day=21), "recorded on 2026-11-21, but the sortie was flown on 2026-11-20"),
])
def test_a_bad_file_is_refused_with_a_reason_and_nothing_is_stored(instructor_client, sortie, db, data, words):
    before = stored(db)
    answer = upload(instructor_client, sortie.id, data)
    assert answer.status_code == 422
    assert words in answer.json()["detail"]
    assert stored(db) == before


def test_a_file_over_the_track_upload_limit_is_refused_and_says_the_limit(instructor_client, sortie, db, app, monkeypatch):
    monkeypatch.setattr(app.state.settings, "track_upload_max_bytes", 100_000)
    before = stored(db)
    answer = upload(instructor_client, sortie.id)
    assert answer.status_code == 422 and "0 MB" in answer.json()["detail"] and "limit" in answer.json()["detail"]
    assert stored(db) == before


def test_only_the_sorties_instructor_imports_and_others_do_not_see_the_track(
        instructor_client, other_instructor_client, student_client, other_student_client, sortie):
    assert upload(student_client, sortie.id).status_code == 403
    assert upload(other_instructor_client, sortie.id).status_code in (403, 404)
    track = upload(instructor_client, sortie.id).json()
    assert student_client.api("GET", f"/api/v1/tracks/{track['id']}").status_code == 200  # the pilot sees it
    assert other_student_client.api("GET", f"/api/v1/tracks/{track['id']}").status_code == 404


def test_sites_take_an_aim_point_both_or_neither(chief_client):
    made = chief_client.api("POST", "/api/v1/sites", json={"name": "Aim Field", "elevation_ft": 300,
                                                          "landing_dirs_deg": [90], "aim_lat_deg": 50.6,
                                                          "aim_lon_deg": -3.4})
    assert made.status_code == 201, made.text
    assert (made.json()["aim_lat_deg"], made.json()["aim_lon_deg"]) == (50.6, -3.4)
    half = chief_client.api("POST", "/api/v1/sites", json={"name": "Half Field", "elevation_ft": 300,
                                                          "aim_lat_deg": 50.6})
    assert half.status_code == 422 and "both" in half.text


def test_the_export_carries_the_track_file_byte_for_byte(instructor_client, sortie, db):
    import base64
    import json

    from server.records.export import export_json

    upload(instructor_client, sortie.id)
    db.expire_all()
    exported = json.loads(export_json(db))
    (row,) = exported["tables"]["tracks"]
    assert base64.b64decode(row["raw"]) == track_file()  # RFC 4648 base64, decoded by the standard library
    assert row["sha256"] == hashlib.sha256(track_file()).hexdigest()


def test_the_same_file_sent_again_is_the_same_track(instructor_client, sortie, db):
    first = upload(instructor_client, sortie.id)
    again = upload(instructor_client, sortie.id, name="resent.csv")
    assert first.status_code == 201 and again.status_code == 200
    assert again.json()["id"] == first.json()["id"]
    db.expire_all()
    assert db.scalar(select(func.count()).select_from(Track)) == 1
