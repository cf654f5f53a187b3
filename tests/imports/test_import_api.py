"""Importing a school's earlier records through POST /api/v1/imports, as a chief pilot would.

Files are written by Python's csv module and by openpyxl (the outside references for the formats).
Checked: every bad row reported and nothing created, imported sorties signed as transcribed by the
chief pilot, scored like typed attempts, counted for trends and currency, traceable to their batch,
and the audit chain intact (server.records.audit.verify, what `flarebook audit verify` runs).
"""
import json
from datetime import UTC, date, datetime, timedelta

import pytest
from sqlalchemy import func, select

from server.imports.models import ImportBatch, ImportedRecord
from server.logbook import service as logbook
from server.logbook.models import MEANINGS, Attempt, Signature, Sortie
from server.logbook.schemas import AttemptFields
from server.people import service as people
from server.people.models import Person
from server.records import audit
from tests.conftest import sign_in
from tests.imports.test_reading import csv_bytes, xlsx_bytes

ATTEMPT_HEADER = ["Date", "Time", "Student", "Instructor", "Registration", "Site", "Manoeuvre", "Termination",
                  "Descent airspeed (kt)", "NR low (%)", "NR high (%)", "Flare height (ft)",
                  "Touchdown speed (kt)", "Distance from aim point (ft)", "Heading error", "Grade", "Remarks"]
RECENT = date.today() - timedelta(days=10)


def attempt_row(day=RECENT, *, pilot="student@school.example", instructor="Ivo Instructor", touchdown="3",
                maneuver="Straight-in", termination="Full touchdown", grade="S", when="10:30", reg="TS-WRA"):
    return [day.isoformat() if isinstance(day, date) else day, when, pilot, instructor, reg, "Test Field", maneuver,
            termination, "65", "95", "104", "90", touchdown, "20", "2", grade, "transcribed"]


def post(client, data: bytes, *, kind="attempts", name="records.csv", **form):
    fields = {"kind": kind, **{k: (json.dumps(v) if k == "mapping" else str(v).lower() if isinstance(v, bool) else v)
                               for k, v in form.items()}}
    return client.api("POST", "/api/v1/imports", files={"file": (name, data)}, data=fields)


def counts(db):
    db.expire_all()
    return (db.scalar(select(func.count()).select_from(Sortie)), db.scalar(select(func.count()).select_from(Attempt)),
            db.scalar(select(func.count()).select_from(Person)))


def test_people_from_a_semicolon_csv_with_a_bom(chief_client, db, world):
    data = csv_bytes([["Full name", "E-mail", "Role"], ["Nia Newpilot", "Nia@School.example", "Student"],
                      [], ["Oskar Oldhand", "oskar@school.example", "instructor; chief pilot"]],
                     delimiter=";", bom=True)
    checked = post(chief_client, data, kind="people", dry_run=True).json()
    assert checked["mapping"] == {"name": "Full name", "email": "E-mail", "roles": "Role"}
    assert (checked["rows"], checked["ok"], checked["errors"], checked["would_create"]["people"]) == (2, 2, [], 2)
    assert checked["created"] == {"people": 0, "sorties": 0, "attempts": 0}
    assert people.find_by_email(db, "nia@school.example") is None  # a dry run creates nothing
    done = post(chief_client, data, kind="people", dry_run=False)
    assert done.status_code == 200, done.text
    assert done.json()["created"]["people"] == 2
    oskar = people.find_by_email(db, "oskar@school.example")
    assert oskar.roles == ["chief_pilot", "instructor"]
    records = db.scalars(select(ImportedRecord).where(ImportedRecord.batch_id == done.json()["batch_id"])).all()
    assert sorted((r.row, r.person_id) for r in records) == [(2, people.find_by_email(db, "nia@school.example").id),
                                                             (4, oskar.id)]


def test_past_attempts_from_xlsx_are_signed_as_transcribed_and_traceable(chief_client, db, world):
    day = datetime(RECENT.year, RECENT.month, RECENT.day, 9, 15)  # a real spreadsheet date and time
    rows = [ATTEMPT_HEADER, [day, None, "Sam Student", "instructor@school.example", "TS-WRA", "Test Field", "180° turn",
                             "Power recovery", 65, 95, 104, 90, None, None, None, "Satisfactory", None],
            [None] * 17,
            [day, None, "Sam Student", "instructor@school.example", "TS-WRA", "Test Field", "Straight-in", "Full touchdown",
             "65", "95", "104", "88", "4", "-30", "1", "U", "numbers typed as text"],
            attempt_row(RECENT - timedelta(days=3))]
    response = post(chief_client, xlsx_bytes(rows), name="old-sheet.xlsx", dry_run=False)
    assert response.status_code == 200, response.text
    body = response.json()
    assert (body["rows"], body["ok"], body["errors"]) == (3, 3, [])
    assert body["created"] == {"people": 0, "sorties": 2, "attempts": 3}
    batch = db.get(ImportBatch, body["batch_id"])
    assert batch.file_name == "old-sheet.xlsx" and batch.file_format == "xlsx" and batch.imported_by_id == world.chief.id
    assert len(batch.file_sha256) == 64 and batch.mapping["pilot"] == "Student"
    sorties = db.scalars(select(Sortie).order_by(Sortie.flown_at)).all()
    assert [s.state for s in sorties] == ["signed", "signed"]
    assert all(s.instructor_id == world.instructor.id and s.pilot_id == world.student.id for s in sorties)
    assert "Transcribed from earlier records" in sorties[1].remarks
    assert [len(s.attempts) for s in sorties] == [1, 2]
    later = sorties[1]
    assert later.flown_at.astimezone(UTC).hour == 9 and later.flown_at.minute == 15  # school zone is UTC here
    assert [a.touchdown_speed_kt for a in later.attempts] == [None, 4.0]
    for sortie in sorties:
        (signature,) = db.scalars(select(Signature).where(Signature.sortie_id == sortie.id)).all()
        assert signature.signer_id == world.chief.id and signature.meaning == "transcribed_from_records"
        assert signature.statement == MEANINGS["transcribed_from_records"]
        assert signature.content_sha256 == logbook.content_hash(sortie)
    links = db.scalars(select(ImportedRecord).where(ImportedRecord.batch_id == batch.id).order_by(ImportedRecord.row))
    assert [(r.row, r.sortie_id) for r in links] == [(2, later.id), (4, later.id), (5, sorties[0].id)]
    assert audit.verify(db).ok  # the chain holds with the imported records in it
    listed = chief_client.get("/api/v1/imports").json()
    assert [b["id"] for b in listed] == [batch.id]
    detail = chief_client.get(f"/api/v1/imports/{batch.id}").json()
    assert [r["row"] for r in detail["records"]] == [2, 4, 5]


def test_imported_attempts_are_scored_as_typed_ones(chief_client, db, world):
    """The same observation typed on the sortie sheet and imported gets the same score and parts."""
    response = post(chief_client, csv_bytes([ATTEMPT_HEADER, attempt_row(touchdown="9.5", grade="")]), dry_run=False)
    assert response.status_code == 200, response.text
    imported = db.scalars(select(Attempt)).one()
    typed_sortie = imported.sortie
    sortie = logbook.create_sortie(db, actor=db.get(Person, world.instructor.id), data=__import__(
        "server.logbook.schemas", fromlist=["SortieCreate"]).SortieCreate(
        flown_at=typed_sortie.flown_at, aircraft_id=world.aircraft.id, pilot_id=world.student.id,
        site_id=world.site.id))
    typed = logbook.add_attempt(db, actor=db.get(Person, world.instructor.id), sortie=sortie, data=AttemptFields(
        maneuver="straight_in", termination="touchdown", descent_kias=65, nr_low_pct=95, nr_high_pct=104,
        flare_height_ft=90, touchdown_speed_kt=9.5, point_error_ft=20, heading_error_deg=2, remarks="transcribed"))
    assert imported.score == typed.score and imported.score < 100
    assert imported.parts == typed.parts and imported.flags == typed.flags


def test_imported_records_count_for_trends_and_currency(chief_client, db, world):
    rows = [ATTEMPT_HEADER] + [attempt_row(RECENT - timedelta(days=d)) for d in range(6)]
    assert post(chief_client, csv_bytes(rows), dry_run=False).status_code == 200
    rule = chief_client.api("POST", "/api/v1/rules", json={
        "name": "Touchdowns every 30 days", "applies_to_roles": ["student"], "terminations": ["touchdown"],
        "window_days": 30, "min_count": 3, "warn_days": 7}).json()
    currency = chief_client.get(f"/api/v1/people/{world.student.id}/currency").json()
    status = next(r for r in currency if r["rule_id"] == rule["id"]) if isinstance(currency, list) else next(
        r for r in currency["rules"] if r["rule_id"] == rule["id"])
    assert status["status"] in ("current", "due_soon") and status["qualifying_count"] == 6
    trends = chief_client.get(f"/api/v1/people/{world.student.id}/trends",
                              params={"maneuver": "straight_in", "termination": "touchdown"}).json()
    assert len(trends["metrics"]["touchdown_speed_kt"]["values"]) == 6


def test_a_bad_file_reports_every_bad_row_and_creates_nothing(chief_client, db, world):
    rows = [ATTEMPT_HEADER,
            attempt_row(),
            attempt_row(pilot="nobody@school.example"),
            attempt_row(touchdown="fast"),
            attempt_row("31/02/2024"),
            attempt_row(maneuver="barrel roll", termination="splash"),
            attempt_row(instructor="Sam Student"),
            attempt_row(date.today() + timedelta(days=3)),
            attempt_row(reg="XX-NONE"),
            attempt_row(touchdown="140")]
    before = counts(db)
    checked = post(chief_client, csv_bytes(rows), dry_run=True).json()
    by_row = {}
    for error in checked["errors"]:
        by_row.setdefault(error["row"], []).append((error["column"], error["message"]))
    assert sorted(by_row) == [3, 4, 5, 6, 7, 8, 9, 10]
    assert by_row[3] == [("Student", "No one signs in as nobody@school.example; import the people first.")]
    assert by_row[4][0][0] == "Touchdown speed (kt)" and "not a number" in by_row[4][0][1]
    assert by_row[5][0][0] == "Date" and "not a date on the calendar" in by_row[5][0][1]
    assert {c for c, _ in by_row[6]} == {"Manoeuvre", "Termination"}
    assert "not an instructor" in by_row[7][0][1]
    assert "in the future" in by_row[8][0][1]
    assert by_row[9][0][0] == "Registration"
    assert by_row[10] == [("Touchdown speed (kt)", "140 is above the highest value accepted here, 100.")]
    assert (checked["rows"], checked["ok"]) == (9, 1)
    refused = post(chief_client, csv_bytes(rows), dry_run=False)
    assert refused.status_code == 422
    assert len(refused.json()["errors"]) == len(checked["errors"]) and "nothing was created" in refused.json()["detail"]
    assert counts(db) == before
    assert db.scalar(select(func.count()).select_from(ImportBatch)) == 0


def test_only_the_clean_rows_when_the_person_chooses(chief_client, db, world):
    rows = [ATTEMPT_HEADER, attempt_row(), attempt_row(touchdown="fast"), attempt_row(when="14:00")]
    body = post(chief_client, csv_bytes(rows), dry_run=False, only_clean=True).json()
    assert body["created"] == {"people": 0, "sorties": 2, "attempts": 2}
    assert [e["row"] for e in body["errors"]] == [3]
    assert db.get(ImportBatch, body["batch_id"]).rows_left_out == 1


def test_the_same_file_twice_is_refused(chief_client, db, world):
    data = csv_bytes([ATTEMPT_HEADER, attempt_row()])
    assert post(chief_client, data, dry_run=False).status_code == 200
    again = post(chief_client, data, dry_run=True).json()
    assert again["earlier_batch_id"] is not None
    second = post(chief_client, data, dry_run=False)
    assert second.status_code == 409 and "imported already" in second.json()["detail"]
    assert counts(db)[0] == 1


def test_a_header_the_guess_misses_is_mapped_by_hand(chief_client, db, world):
    header = ["Flown", "Trainee", "Check pilot", "Aircraft", "Area", "What", "How", "TD kt"]
    row = [RECENT.isoformat(), "Sam Student", "Ivo Instructor", "TS-WRA", "Test Field", "360", "to a hover", "2"]
    data = csv_bytes([header, row])
    guessed = post(chief_client, data, dry_run=True).json()
    missing = {e["column"] for e in guessed["errors"] if e["row"] == 1}
    assert {"Date flown", "Instructor (email or name)", "Maneuver", "Termination"} <= missing
    mapping = {"date": "Flown", "pilot": "Trainee", "instructor": "Check pilot", "maneuver": "What",
               "termination": "How", "touchdown_speed_kt": "TD kt", "site": "Area"}
    mapped = post(chief_client, data, dry_run=False, mapping=mapping).json()
    assert mapped["errors"] == [] and mapped["created"]["attempts"] == 1
    attempt = db.scalars(select(Attempt)).one()
    assert (attempt.maneuver, attempt.termination, attempt.touchdown_speed_kt) == ("turn_360", "to_hover", 2.0)
    bad = post(chief_client, data, dry_run=True, mapping={"pilot": "Nope"})
    assert bad.status_code == 422 and "does not have" in bad.json()["detail"]


def test_who_may_import(app, world, db, instructor_client, student_client):
    data = csv_bytes([ATTEMPT_HEADER, attempt_row()])
    assert post(instructor_client, data, dry_run=True).status_code == 403
    assert post(student_client, data, dry_run=True).status_code == 403
    people.create_person(db, name="Ada Administrator", email="admin@school.example", roles=["admin"],
                         password="test-password-1")
    db.commit()
    admin = sign_in(app, "admin@school.example")
    assert post(admin, data, dry_run=True).status_code == 200  # an administrator may check a file ...
    refused = post(admin, data, dry_run=False)  # ... but only a chief pilot signs transcribed sorties
    assert refused.status_code == 403 and "chief pilot" in refused.json()["detail"]
    people_file = csv_bytes([["Name", "Email"], ["Pia Pupil", "pia@school.example"]])
    assert post(admin, people_file, kind="people", dry_run=False).json()["created"]["people"] == 1


def test_files_that_cannot_be_read(chief_client):
    assert post(chief_client, b"", dry_run=True).status_code == 422
    response = post(chief_client, b"\xd0\xcf\x11\xe0" + b"\x00" * 64, name="old.xls", dry_run=True)
    assert response.status_code == 422 and "xlsx" in response.json()["detail"]
    assert post(chief_client, csv_bytes([["a"]]), kind="planes", dry_run=True).status_code == 422
