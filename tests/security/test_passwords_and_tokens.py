"""Password resets, changing one's own password, signing with one's own secret, API tokens.

Yardsticks: OWASP ASVS 5.0 (chapter and section numbers from memory): V6 Authentication (a password
set by someone else is temporary and must be changed at first use; changing a password needs the
current one; guesses are throttled on every form that checks a password), V7 Session Management
(sessions end when the password is reset or the account disabled; idle timeout of at most 30 minutes
at level 2), V9/V8 (tokens expire and can be revoked); FAA AC 120-78A's idea that an electronic
signature is made only with the signer's own secret.
"""
import json
from datetime import timedelta

import pytest
from fastapi.testclient import TestClient
from sqlalchemy import select, update

from server.cli import main
from server.config import Settings, get_settings
from server.errors import Forbidden, Invalid
from server.logbook import service as logbook
from server.people import service as people
from server.people.models import ApiToken, Person, UserSession
from server.records.models import AuditEvent
from server.types import utcnow
from tests.conftest import sign_in
from tests.support import PASSWORD, make_sortie

TEMPORARY = "given-by-the-chief-1"


def bearer(app, token: str) -> TestClient:
    return TestClient(app, base_url="http://testserver", headers={"Authorization": f"Bearer {token}"})


def _reset_by_chief(chief_client, person_id: int, password: str = TEMPORARY):
    answer = chief_client.api("PATCH", f"/api/v1/people/{person_id}", json={"password": password})
    assert answer.status_code == 200, answer.text
    return answer


def test_a_reset_ends_every_session_and_token_and_is_audited_without_the_secret(app, world, db, chief_client):
    instructor = sign_in(app, world.instructor.email)
    token = people.issue_token(db, person=db.get(Person, world.instructor.id), label="tablet")
    db.commit()
    _reset_by_chief(chief_client, world.instructor.id)
    assert instructor.get("/").status_code == 303, "the instructor's session ended"
    assert bearer(app, token).get("/api/v1/me").status_code == 401, "their token was revoked"
    db.expire_all()
    assert db.scalars(select(UserSession).where(UserSession.person_id == world.instructor.id,
                                                UserSession.ended_at.is_(None))).all() == []
    entry = db.scalars(select(AuditEvent).where(AuditEvent.action == "password_reset")).one()
    assert entry.reason == f"password reset by {world.chief.name}" and entry.actor_id == world.chief.id
    assert entry.after["tokens_revoked"] == 1 and entry.after["sessions_ended"] >= 1
    everything = json.dumps([[e.before, e.after, e.reason] for e in db.scalars(select(AuditEvent))])
    stored_hash = db.get(Person, world.instructor.id).password_hash
    assert TEMPORARY not in everything and stored_hash not in everything


def test_a_reset_password_only_lets_its_owner_choose_a_new_one(app, world, db, chief_client):
    sortie = make_sortie(db, world, attempts=1)
    _reset_by_chief(chief_client, world.instructor.id)
    db.expire_all()
    # The chief signs in with the password they set: only "My account" opens.
    client = TestClient(app, base_url="http://testserver", follow_redirects=False)
    from tests.conftest import csrf_from
    page = client.get("/signin")
    answer = client.post("/signin", data={"email": world.instructor.email, "password": TEMPORARY,
                                          "csrf_token": csrf_from(page.text)})
    assert answer.status_code == 303 and answer.headers["location"] == "/account"
    assert client.get("/").headers["location"] == "/account"
    assert client.get(f"/sorties/{sortie.id}").headers["location"] == "/account"
    account = client.get("/account")
    assert account.status_code == 200 and "reset by someone else" in account.text
    csrf = csrf_from(account.text)
    signed = client.post(f"/api/v1/sorties/{sortie.id}/sign", json={"password": TEMPORARY},
                         headers={"X-CSRF-Token": csrf})
    assert signed.status_code == 403
    db.expire_all()
    assert db.get(type(sortie), sortie.id).state == "draft", "nothing signed with the chief's password"
    # Neither can the services be used with it: signing, acknowledging, stage checks all refuse it.
    actor = db.get(Person, world.instructor.id)
    with pytest.raises(Forbidden):
        logbook.sign_sortie(db, actor=actor, sortie=db.get(type(sortie), sortie.id), password=TEMPORARY)
    with pytest.raises(Forbidden):
        people.check_signing_password(db, person=actor, password=TEMPORARY)
    db.rollback()
    # The owner chooses their own password; then everything opens again and signing works.
    changed = client.post("/account/password", data={"current_password": TEMPORARY, "new_password": "my-own-choice-9",
                                                     "new_password_again": "my-own-choice-9", "csrf_token": csrf})
    assert changed.status_code == 303
    assert client.get("/").status_code == 200
    signed = client.post(f"/api/v1/sorties/{sortie.id}/sign", json={"password": "my-own-choice-9"},
                         headers={"X-CSRF-Token": csrf})
    assert signed.status_code == 200 and signed.json()["state"] == "signed"


def test_acknowledging_refuses_a_password_the_pilot_did_not_choose(app, world, db, chief_client):
    sortie = make_sortie(db, world, attempts=1, sign=True)
    _reset_by_chief(chief_client, world.student.id)
    db.expire_all()
    with pytest.raises(Forbidden):
        logbook.acknowledge_sortie(db, actor=db.get(Person, world.student.id), sortie=db.get(type(sortie), sortie.id))


def test_the_reset_page_shows_a_one_time_password_once_and_only_to_chief_pilots(app, world, db, chief_client,
                                                                               instructor_client):
    url = f"/setup/people/{world.student.id}/reset-password"
    assert instructor_client.get(url).status_code == 403
    assert instructor_client.form_post(url).status_code == 403
    page = chief_client.get(url)
    assert page.status_code == 200 and "signs Sam Student out everywhere" in page.text
    done = chief_client.form_post(url)
    assert done.status_code == 200
    import re
    temporary = re.search(r'<code class="one-time">([^<]+)</code>', done.text).group(1)
    db.expire_all()
    student = db.get(Person, world.student.id)
    assert student.password_must_change
    assert people.check_sign_in(db, email=student.email, password=temporary).refusal is None
    assert people.check_sign_in(db, email=student.email, password=PASSWORD).refusal is not None
    assert chief_client.form_post(f"/setup/people/{world.chief.id}/reset-password").status_code == 422, \
        "one's own password is changed with the current one, not reset"


def test_changing_ones_own_password_needs_the_current_one(app, world, db):
    client = sign_in(app, world.student.email)
    other_device = sign_in(app, world.student.email)
    wrong = client.api("POST", "/api/v1/me/password", json={"current_password": "not-it", "new_password": "new-pass-123"})
    assert wrong.status_code == 422
    short = client.api("POST", "/api/v1/me/password", json={"current_password": PASSWORD, "new_password": "short"})
    assert short.status_code == 422
    done = client.api("POST", "/api/v1/me/password", json={"current_password": PASSWORD, "new_password": "new-pass-123"})
    assert done.status_code == 204, done.text
    assert client.get("/").status_code == 200, "this device stays signed in"
    assert other_device.get("/").status_code == 303, "other devices are signed out"
    db.expire_all()
    assert people.check_sign_in(db, email=world.student.email, password="new-pass-123").refusal is None
    assert people.check_sign_in(db, email=world.student.email, password=PASSWORD).refusal is not None
    actions = db.scalars(select(AuditEvent.action).where(AuditEvent.entity == "person")).all()
    assert "password_change_refused" in actions and "password_changed" in actions


def test_signing_password_guesses_count_with_the_sign_in_throttle(app, world, db):
    sortie = make_sortie(db, world, attempts=1)
    client = sign_in(app, world.instructor.email)
    for _ in range(people.THROTTLE_LIMIT):
        wrong = client.api("POST", f"/api/v1/sorties/{sortie.id}/sign", json={"password": "guess"})
        assert wrong.status_code == 422
    right = client.api("POST", f"/api/v1/sorties/{sortie.id}/sign", json={"password": PASSWORD})
    assert right.status_code == 422 and "Too many failed password entries" in right.json()["detail"]
    db.expire_all()
    assert db.get(type(sortie), sortie.id).state == "draft"
    # The same count closes the sign-in form too.
    assert people.check_sign_in(db, email=world.instructor.email, password=PASSWORD).refusal.startswith("Too many")


def test_tokens_expire_after_the_configured_days(app, world, db):
    token = people.issue_token(db, person=db.get(Person, world.instructor.id))
    db.commit()
    row = db.scalars(select(ApiToken)).one()
    assert row.expires_at - row.created_at == pytest.approx(timedelta(days=90), abs=timedelta(seconds=5))
    assert Settings().token_days == 90
    assert bearer(app, token).get("/api/v1/me").status_code == 200
    db.execute(update(ApiToken).values(expires_at=utcnow() - timedelta(seconds=1)))
    db.commit()
    assert bearer(app, token).get("/api/v1/me").status_code == 401
    people.issue_token(db, person=db.get(Person, world.instructor.id), days=7)
    db.commit()
    newest = db.scalars(select(ApiToken).order_by(ApiToken.id.desc())).first()
    assert newest.expires_at - newest.created_at == pytest.approx(timedelta(days=7), abs=timedelta(seconds=5))


def test_a_person_lists_and_revokes_their_own_tokens(app, world, db):
    token = people.issue_token(db, person=db.get(Person, world.instructor.id), label="hangar tablet")
    other = people.issue_token(db, person=db.get(Person, world.other_instructor.id), label="not yours")
    db.commit()
    client = sign_in(app, world.instructor.email)
    listed = client.get("/api/v1/me/tokens").json()
    assert [t["label"] for t in listed] == ["hangar tablet"] and "token_sha256" not in listed[0]
    page = client.get("/account")
    assert "hangar tablet" in page.text and "not yours" not in page.text
    other_id = db.scalars(select(ApiToken.id).where(ApiToken.label == "not yours")).one()
    assert client.form_post(f"/account/tokens/{other_id}/revoke").status_code == 404
    assert client.form_post(f"/account/tokens/{listed[0]['id']}/revoke").status_code == 303
    assert bearer(app, token).get("/api/v1/me").status_code == 401
    assert bearer(app, other).get("/api/v1/me").status_code == 200
    assert client.get("/api/v1/me/tokens").json()[0]["revoked"] is True


def test_deactivation_revokes_tokens_for_good(app, world, db, chief_client):
    token = people.issue_token(db, person=db.get(Person, world.student.id))
    db.commit()
    chief_client.api("PATCH", f"/api/v1/people/{world.student.id}", json={"active": False})
    chief_client.api("PATCH", f"/api/v1/people/{world.student.id}", json={"active": True})
    assert bearer(app, token).get("/api/v1/me").status_code == 401, "reactivation does not bring a token back"


def test_token_revoke_on_the_command_line(app, world, db, database_url, monkeypatch, capsys):
    token = people.issue_token(db, person=db.get(Person, world.instructor.id))
    people.issue_token(db, person=db.get(Person, world.instructor.id))
    db.commit()
    monkeypatch.setenv("FLAREBOOK_DATABASE_URL", database_url)
    get_settings.cache_clear()
    try:
        assert main(["token", "revoke", world.instructor.email]) == 0
        assert "Revoked 2 API tokens" in capsys.readouterr().out
        assert main(["token", "revoke", "nobody@school.example"]) == 1
    finally:
        get_settings.cache_clear()
    assert bearer(app, token).get("/api/v1/me").status_code == 401


def test_idle_sessions_end_after_30_minutes_by_default(app, world, db):
    assert Settings().session_idle_minutes == 30  # OWASP ASVS 5.0 V7.3, level 2 (from memory)
    client = sign_in(app, world.student.email)
    db.execute(update(UserSession).where(UserSession.person_id == world.student.id)
               .values(last_seen_at=utcnow() - timedelta(minutes=31)))
    db.commit()
    assert client.get("/").status_code == 303
