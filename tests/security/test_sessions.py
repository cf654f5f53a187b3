"""Session management, password storage and sign-in throttling.

Anchor: OWASP ASVS 5.0 level 2, V7 (session management: cookie attributes, new id at sign-in,
termination, idle and absolute timeouts, ending sessions of a disabled account), V6/V11 (Argon2id
parameters at or above the OWASP Password Storage Cheat Sheet floor: m=19 MiB, t=2, p=1, from memory),
V6.3 (throttling that does not reveal whether an account exists); RFC 6265bis for the __Host- prefix.
"""
from datetime import timedelta

import argon2
from fastapi.testclient import TestClient
from sqlalchemy import select, update

from server.app import create_app
from server.config import Settings
from server.people import service as people
from server.people.models import Person, SignInFailure, UserSession
from server.people.security import sha256_hex
from server.types import utcnow
from tests.conftest import csrf_from, sign_in
from tests.support import PASSWORD


def cookie_attributes(set_cookie: str) -> tuple[str, dict[str, str]]:
    first, *rest = [part.strip() for part in set_cookie.split(";")]
    attributes = {}
    for part in rest:
        key, _, value = part.partition("=")
        attributes[key.lower()] = value
    return first.split("=", 1)[0], attributes


def test_over_https_the_session_cookie_is_host_prefixed_secure_http_only_and_same_site(app, world):
    client = TestClient(app, base_url="https://testserver", follow_redirects=False)
    page = client.get("/signin")
    name, attributes = cookie_attributes(page.headers["set-cookie"])
    assert name == "__Host-flarebook"
    assert {"secure", "httponly"} <= attributes.keys()
    assert attributes["samesite"].lower() == "lax" and attributes["path"] == "/"
    assert "domain" not in attributes  # the __Host- prefix forbids it
    answer = client.post("/signin", data={"email": world.student.email, "password": PASSWORD,
                                          "csrf_token": csrf_from(page.text)})
    assert answer.status_code == 303
    name, attributes = cookie_attributes(answer.headers["set-cookie"])
    assert name == "__Host-flarebook" and "secure" in attributes
    assert client.get("/").status_code == 200


def test_plain_http_on_localhost_keeps_working_for_development(app, world):
    client = sign_in(app, world.student.email)
    assert client.get("/").status_code == 200
    assert client.cookies.get("flarebook")


def test_the_secure_cookies_setting_forces_the_prefix_behind_a_tls_proxy(database_url):
    strict = create_app(Settings(database_url=database_url, secure_cookies=True))
    try:
        answer = TestClient(strict, base_url="http://testserver").get("/signin")
        name, attributes = cookie_attributes(answer.headers["set-cookie"])
        assert name == "__Host-flarebook" and "secure" in attributes
    finally:
        strict.state.engine.dispose()


def test_a_client_cannot_claim_https_with_a_header(app, world):
    # Only uvicorn's trusted-proxy handling may change the scheme; the app ignores the raw header.
    answer = TestClient(app, base_url="http://testserver").get("/signin", headers={"X-Forwarded-Proto": "https"})
    assert cookie_attributes(answer.headers["set-cookie"])[0] == "flarebook"


def test_sign_in_replaces_the_pre_sign_in_session(app, world, db):
    client = TestClient(app, base_url="http://testserver", follow_redirects=False)
    page = client.get("/signin")
    before = client.cookies.get("flarebook")
    client.post("/signin", data={"email": world.student.email, "password": PASSWORD,
                                 "csrf_token": csrf_from(page.text)})
    after = client.cookies.get("flarebook")
    assert after != before
    old = db.get(UserSession, sha256_hex(before))
    assert old.ended_at is not None and old.person_id is None


def _age_session(db, client, **changes):
    row_id = sha256_hex(client.cookies.get("flarebook"))
    db.execute(update(UserSession).where(UserSession.id == row_id).values(**changes))
    db.commit()


def test_an_idle_session_ends(app, world, db, settings):
    client = sign_in(app, world.student.email)
    _age_session(db, client, last_seen_at=utcnow() - timedelta(minutes=settings.session_idle_minutes - 2))
    assert client.get("/").status_code == 200, "still inside the idle limit"
    _age_session(db, client, last_seen_at=utcnow() - timedelta(minutes=settings.session_idle_minutes + 1))
    answer = client.get("/")
    assert answer.status_code == 303 and answer.headers["location"] == "/signin"
    assert client.get("/api/v1/me").status_code == 401
    assert client.get("/").status_code == 303, "a timed-out session stays refused"


def test_a_session_ends_at_its_absolute_limit_even_when_busy(app, world, db, settings):
    client = sign_in(app, world.student.email)
    _age_session(db, client, created_at=utcnow() - timedelta(hours=settings.session_absolute_hours, minutes=1),
                 last_seen_at=utcnow())
    assert client.get("/").status_code == 303


def test_sign_out_ends_the_session_for_the_api_too(app, world):
    client = sign_in(app, world.student.email)
    cookie = client.cookies.get("flarebook")
    client.form_post("/signout")
    replay = TestClient(app, base_url="http://testserver", cookies={"flarebook": cookie})
    assert replay.get("/api/v1/me").status_code == 401


def test_disabling_a_person_ends_their_sessions_and_tokens(app, world, db, chief_client):
    student = sign_in(app, world.student.email)
    token = people.issue_token(db, person=db.get(Person, world.student.id))
    db.commit()
    assert student.get("/").status_code == 200
    answer = chief_client.api("PATCH", f"/api/v1/people/{world.student.id}", json={"active": False})
    assert answer.status_code == 200 and answer.json()["active"] is False
    assert student.get("/").status_code == 303
    assert student.get("/api/v1/me").status_code == 401
    scripted = TestClient(app, base_url="http://testserver")
    assert scripted.get("/api/v1/me", headers={"Authorization": f"Bearer {token}"}).status_code == 401
    live = db.scalars(select(UserSession).where(UserSession.person_id == world.student.id,
                                                UserSession.ended_at.is_(None))).all()
    assert live == []


def test_stored_password_hashes_are_argon2id_above_the_floor(production_password_hashes, db, world):
    stored = db.get(Person, world.student.id).password_hash
    parameters = argon2.extract_parameters(stored)
    assert parameters.type is argon2.Type.ID
    assert parameters.memory_cost >= 19456  # KiB
    assert parameters.time_cost >= 2
    assert parameters.parallelism >= 1
    assert parameters.salt_len >= 16


def _try(client, email, password):
    page = client.get("/signin")
    return client.post("/signin", data={"email": email, "password": password, "csrf_token": csrf_from(page.text)})


def test_the_eleventh_failure_is_refused_even_with_the_right_password(anonymous, world, db):
    for _ in range(10):
        assert _try(anonymous, world.student.email, "wrong-password").status_code == 401
    right = _try(anonymous, world.student.email, PASSWORD)
    assert right.status_code == 401
    assert "Too many failed sign-ins" in right.text
    assert anonymous.get("/").status_code == 303, "not signed in"
    # Another account is not locked by this one's failures.
    assert _try(anonymous, world.other_student.email, PASSWORD).status_code == 303


def test_throttling_answers_alike_for_known_and_unknown_emails(app, world):
    known = TestClient(app, base_url="http://testserver", follow_redirects=False)
    unknown = TestClient(app, base_url="http://testserver", follow_redirects=False)
    answers = {"known": [], "unknown": []}
    for _ in range(11):
        answers["known"].append(_try(known, world.student.email, "wrong-password"))
        answers["unknown"].append(_try(unknown, "nobody-here@school.example", "wrong-password"))
    for k, u in zip(answers["known"], answers["unknown"], strict=True):
        assert k.status_code == u.status_code == 401
        assert error_text(k.text) == error_text(u.text)
    assert "Too many failed sign-ins" in error_text(answers["unknown"][-1].text)


def error_text(html: str) -> str:
    import re

    match = re.search(r'<p[^>]*class="[^"]*error[^"]*"[^>]*>(.*?)</p>', html, re.DOTALL)
    assert match, "the sign-in page shows the refusal"
    return match.group(1).strip()


def test_one_address_failing_across_many_emails_is_slowed_too(anonymous, world, db):
    # TestClient requests come from the address "testclient".
    db.add_all([SignInFailure(email=f"guess{n}@school.example", client="testclient")
                for n in range(people.CLIENT_THROTTLE_LIMIT)])
    db.commit()
    answer = _try(anonymous, world.student.email, PASSWORD)
    assert answer.status_code == 401 and "Too many failed sign-ins" in answer.text
