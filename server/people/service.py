"""Accounts, sign-in, sessions, tokens and who may see whose records."""
from dataclasses import dataclass
from datetime import date, datetime, timedelta
from zoneinfo import ZoneInfo

from sqlalchemy import bindparam, delete, func, select, update
from sqlalchemy.orm import Session

from server.config import Settings, settings_of
from server.errors import Conflict, Forbidden, Invalid, NotFound, Unauthorized
from server.people.models import ApiToken, Person, PersonRole, School, SignInFailure, UserSession
from server.people.security import hash_password, new_secret, sha256_hex, verify_password
from server.people import hooks
from server.records import audit
from server.types import utcnow
from server.vocabulary import ROLES

# Sign-in throttling: after this many refusals for one email in the window, refuse without checking.
THROTTLE_LIMIT = 10
THROTTLE_WINDOW = timedelta(minutes=15)
# One address guessing across many emails is slowed too; set high, as a school may share one address.
CLIENT_THROTTLE_LIMIT = 100
MIN_PASSWORD_LENGTH = 8


class PasswordRefused(Invalid):
    """A wrong (or throttled) password: kept on record, so the refusal counts towards the throttle."""

    def __init__(self, message: str):
        super().__init__(message, keep_record=True)


def normalise_email(email: str) -> str:
    return email.strip().lower()


def create_person(session: Session, *, name: str, email: str, roles: list[str], password: str,
                  actor: Person | None = None) -> Person:
    """Add a person with a hashed password; refuse a duplicate email or an unknown role."""
    email = normalise_email(email)
    if not name.strip():
        raise Invalid("A name is needed.")
    if "@" not in email:
        raise Invalid("The email address needs an @.")
    unknown = sorted(set(roles) - set(ROLES))
    if unknown or not roles:
        raise Invalid(f"Roles must be chosen from: {', '.join(ROLES)}.")
    if len(password) < MIN_PASSWORD_LENGTH:
        raise Invalid(f"The password needs at least {MIN_PASSWORD_LENGTH} characters.")
    if session.scalar(select(Person.id).where(Person.email == email)) is not None:
        raise Conflict(f"Someone already signs in as {email}.")
    person = Person(name=name.strip(), email=email, password_hash=hash_password(password), active=True,
                    password_must_change=False)
    person.role_rows = [PersonRole(role=r) for r in sorted(set(roles))]
    session.add(person)
    session.flush()
    audit.append(session, actor_id=actor.id if actor else None, action="create", entity="person", entity_id=person.id,
                 after={"name": person.name, "email": person.email, "roles": person.roles})
    hooks.person_changed(session, person)
    return person


def update_person(session: Session, *, person: Person, actor: Person, name: str | None = None,
                  roles: list[str] | None = None, active: bool | None = None,
                  password: str | None = None) -> Person:
    """Change a person's name, roles or active flag; a password given here is a reset (see reset_password)."""
    before = person_snapshot(person)
    if name is not None:
        if not name.strip():
            raise Invalid("A name is needed.")
        person.name = name.strip()
    if roles is not None:
        unknown = sorted(set(roles) - set(ROLES))
        if unknown or not roles:
            raise Invalid(f"Roles must be chosen from: {', '.join(ROLES)}.")
        person.role_rows = [PersonRole(role=r) for r in sorted(set(roles))]
    if active is not None and active != person.active:
        person.active = active
        if not active:
            end_all_sessions(session, person_id=person.id)
            revoke_all_tokens(session, person_id=person.id)
    session.flush()
    if before != person_snapshot(person):
        audit.append(session, actor_id=actor.id, action="edit", entity="person", entity_id=person.id,
                     before=before, after=person_snapshot(person))
    if (before["roles"], before["active"]) != (person.roles, person.active):
        hooks.person_changed(session, person)
    if password is not None:
        reset_password(session, actor=actor, person=person, temporary=password)
    return person


def person_snapshot(person: Person) -> dict:
    return {"name": person.name, "email": person.email, "roles": person.roles, "active": person.active}


def get_person(session: Session, person_id: int) -> Person:
    person = session.get(Person, person_id)
    if person is None:
        raise NotFound("No such person.")
    return person


def list_people(session: Session) -> list[Person]:
    """Everyone with an account, by name: the Setup pages (chief pilots and administrators see everyone)."""
    return list(session.scalars(select(Person).order_by(Person.name, Person.id)))


def find_by_email(session: Session, email: str) -> Person | None:
    return session.scalar(select(Person).where(Person.email == normalise_email(email)))


def _failures_since(session: Session, *, email: str, client: str) -> tuple[int, int]:
    """Refused sign-ins and signing passwords in the throttle window, for this email and this address."""
    since = utcnow() - THROTTLE_WINDOW
    by_email = session.scalar(select(func.count()).select_from(SignInFailure)
                              .where(SignInFailure.email == email, SignInFailure.at >= since))
    by_client = session.scalar(select(func.count()).select_from(SignInFailure)
                               .where(SignInFailure.client == client[:64], SignInFailure.at >= since)) if client else 0
    return by_email, by_client


def _throttle_message(by_email: int, by_client: int) -> str | None:
    if by_email >= THROTTLE_LIMIT:
        return "Too many failed sign-ins for this email. Wait 15 minutes and try again."
    if by_client >= CLIENT_THROTTLE_LIMIT:
        return "Too many failed sign-ins from this address. Wait 15 minutes and try again."
    return None


@dataclass(frozen=True)
class SignInCheck:
    """What a password check found, before anything is written."""

    email: str
    client: str
    person_id: int | None
    refusal: str | None


def check_sign_in(session: Session, *, email: str, password: str, client: str = "") -> SignInCheck:
    """Read and verify only: the slow password hash runs outside any writing transaction."""
    email = normalise_email(email)
    throttled = _throttle_message(*_failures_since(session, email=email, client=client))
    person = find_by_email(session, email)
    ok = (throttled is None and verify_password(person.password_hash if person else None, password)
          and person is not None and person.active)
    if ok:
        return SignInCheck(email=email, client=client, person_id=person.id, refusal=None)
    return SignInCheck(email=email, client=client, person_id=None,
                       refusal=throttled or "That email and password do not match an active account.")


def record_sign_in(session: Session, *, check: SignInCheck) -> Person:
    """Write what check_sign_in found: the refusal (throttle and audit) or the sign-in."""
    if check.refusal is not None:
        session.add(SignInFailure(email=check.email, client=check.client[:64]))
        audit.append(session, actor_id=None, action="sign_in_refused", entity="person",
                     entity_id=None, after={"email": check.email})
        raise Unauthorized(check.refusal, keep_record=True)
    person = session.get(Person, check.person_id)
    audit.append(session, actor_id=person.id, action="sign_in", entity="person", entity_id=person.id)
    return person


def authenticate(session: Session, *, email: str, password: str, client: str = "") -> Person:
    """Check a password and record the outcome; the refusal never says whether the account exists."""
    return record_sign_in(session, check=check_sign_in(session, email=email, password=password, client=client))


def check_signing_password(session: Session, *, person: Person, password: str, client: str = "") -> None:
    """A signature needs the signer's own password, typed again: throttled with the sign-ins.

    A password someone else set (a reset) is refused: it only lets its owner choose a new one.
    Raises Invalid for a wrong password (the caller keeps the refusal on record) and Forbidden
    for a password the signer did not choose.
    """
    require_own_password(person)
    throttled = _throttle_message(*_failures_since(session, email=person.email, client=client))
    if throttled is None and verify_password(person.password_hash, password):
        return
    session.add(SignInFailure(email=person.email, client=client[:64]))
    if throttled:
        raise PasswordRefused(throttled.replace("sign-ins", "password entries"))
    raise PasswordRefused("That password is not right.")


def require_own_password(person: Person) -> None:
    if person.password_must_change:
        raise Forbidden("Your password was reset by someone else: choose your own password (My account) "
                        "before you sign, acknowledge or check anything.")


# ---- passwords ------------------------------------------------------------------------------

def _check_new_password(password: str) -> None:
    if len(password) < MIN_PASSWORD_LENGTH:
        raise Invalid(f"The password needs at least {MIN_PASSWORD_LENGTH} characters.")


def reset_password(session: Session, *, actor: Person, person: Person, temporary: str | None = None) -> str:
    """Someone else sets a one-time password: every session and API token of the person ends, and the
    new password only lets its owner sign in to choose their own. Returns the password.
    (Calendar links belong to currency, above people: the reset page revokes them too.)"""
    if actor.id == person.id:
        raise Invalid("Change your own password with your current one (My account), not by a reset.")
    temporary = temporary if temporary is not None else new_secret()[:20]
    _check_new_password(temporary)
    person.password_hash = hash_password(temporary)
    person.password_must_change = True
    sessions = end_all_sessions(session, person_id=person.id)
    tokens = revoke_all_tokens(session, person_id=person.id)
    session.flush()
    audit.append(session, actor_id=actor.id, action="password_reset", entity="person", entity_id=person.id,
                 reason=f"password reset by {actor.name}",
                 after={"by": actor.id, "sessions_ended": sessions, "tokens_revoked": tokens,
                        "must_choose_own": True})
    return temporary


def change_own_password(session: Session, *, person: Person, current_password: str, new_password: str,
                        client: str = "", keep_session_id: str | None = None) -> None:
    """A person sets their own password with their current one; their other sessions end."""
    throttled = _throttle_message(*_failures_since(session, email=person.email, client=client))
    if throttled is not None or not verify_password(person.password_hash, current_password):
        session.add(SignInFailure(email=person.email, client=client[:64]))
        audit.append(session, actor_id=person.id, action="password_change_refused", entity="person",
                     entity_id=person.id, reason="throttled" if throttled else "wrong current password")
        raise PasswordRefused(throttled or "The current password is not right; the password was not changed.")
    _check_new_password(new_password)
    if new_password == current_password:
        raise Invalid("Choose a new password that differs from the current one.")
    person.password_hash = hash_password(new_password)
    was_reset, person.password_must_change = person.password_must_change, False
    ended = 0
    for row in session.scalars(select(UserSession).where(UserSession.person_id == person.id,
                                                         UserSession.ended_at.is_(None))):
        if row.id != keep_session_id:
            row.ended_at = utcnow()
            ended += 1
    session.flush()
    audit.append(session, actor_id=person.id, action="password_changed", entity="person", entity_id=person.id,
                 after={"after_reset": was_reset, "other_sessions_ended": ended})


def start_session(session: Session, *, person: Person | None) -> tuple[str, UserSession]:
    """Open a new session with a fresh id (never reuse the id from before sign-in)."""
    cookie_value = new_secret()
    row = UserSession(id=sha256_hex(cookie_value), person_id=person.id if person else None,
                      csrf_token=new_secret())
    session.add(row)
    session.flush()
    return cookie_value, row


def load_session(session: Session, *, cookie_value: str, settings: Settings) -> UserSession | None:
    """The live session for a cookie, or None when unknown, ended or timed out."""
    row = session.get(UserSession, sha256_hex(cookie_value))
    if row is None or row.ended_at is not None:
        return None
    now = utcnow()
    if (now - row.last_seen_at > timedelta(minutes=settings.session_idle_minutes)
            or now - row.created_at > timedelta(hours=settings.session_absolute_hours)):
        row.ended_at = now
        return None
    # Touch at most once a minute to keep reads cheap.
    if now - row.last_seen_at > timedelta(minutes=1):
        row.last_seen_at = now
    return row


def end_session(session: Session, *, row: UserSession) -> None:
    row.ended_at = utcnow()


def end_all_sessions(session: Session, *, person_id: int) -> int:
    """End every live session of a person; how many there were."""
    rows = list(session.scalars(select(UserSession).where(UserSession.person_id == person_id,
                                                          UserSession.ended_at.is_(None))))
    for row in rows:
        row.ended_at = utcnow()
    return len(rows)


def purge_old_sessions(session: Session, *, settings: Settings) -> None:
    cutoff = utcnow() - timedelta(hours=settings.session_absolute_hours)
    session.execute(delete(UserSession).where(UserSession.created_at < cutoff))


def issue_token(session: Session, *, person: Person, label: str = "", days: int | None = None) -> str:
    """Make a personal API token that expires after `days` (the token_days setting); shown once."""
    days = settings_of(session).token_days if days is None else days
    if days < 1:
        raise Invalid("A token lives at least one day.")
    token = new_secret("fbk_")
    expires_at = utcnow() + timedelta(days=days)
    session.add(ApiToken(person_id=person.id, token_sha256=sha256_hex(token), label=label, expires_at=expires_at))
    audit.append(session, actor_id=person.id, action="create", entity="api_token",
                 after={"label": label, "expires_at": expires_at})
    return token


def person_for_token(session: Session, token: str) -> Person | None:
    """The active person a live (not revoked, not expired) token belongs to."""
    return session.scalar(_PERSON_FOR_TOKEN, {"token_sha256": sha256_hex(token), "now": utcnow()})


# Every API request asks this first: one query, built once (building a statement and its cache key
# costs about as much as running it; measured with yappi on the attempt route).
_PERSON_FOR_TOKEN = (
    select(Person).join(ApiToken, ApiToken.person_id == Person.id)
    .where(ApiToken.token_sha256 == bindparam("token_sha256"), ApiToken.revoked_at.is_(None),
           ApiToken.expires_at.is_(None) | (ApiToken.expires_at > bindparam("now")), Person.active.is_(True))
)


def list_tokens(session: Session, *, person: Person) -> list[ApiToken]:
    """A person's tokens, newest first, live and past."""
    return list(session.scalars(select(ApiToken).where(ApiToken.person_id == person.id)
                                .order_by(ApiToken.id.desc())))


def revoke_token(session: Session, *, actor: Person, token_id: int) -> ApiToken:
    """Stop one of one's own tokens at once."""
    row = session.get(ApiToken, token_id)
    if row is None or row.person_id != actor.id:
        raise NotFound("No such token.")
    if row.revoked_at is None:
        row.revoked_at = utcnow()
        audit.append(session, actor_id=actor.id, action="revoke", entity="api_token", entity_id=row.id,
                     after={"label": row.label})
    return row


def revoke_all_tokens(session: Session, *, person_id: int, actor_id: int | None = None, audited: bool = False) -> int:
    """Revoke every live token of a person; how many there were."""
    count = session.execute(update(ApiToken).where(ApiToken.person_id == person_id, ApiToken.revoked_at.is_(None))
                            .values(revoked_at=utcnow())).rowcount
    if audited:
        audit.append(session, actor_id=actor_id, action="revoke_all", entity="api_token", entity_id=None,
                     after={"person_id": person_id, "tokens_revoked": count})
    return count


NEW_SCHOOL_TIMEZONE = "UTC"  # a new database starts in UTC


def school(session: Session) -> School:
    """The school row, made on first use."""
    row = session.get(School, 1)
    if row is None:
        row = School(id=1, name="Flight school", timezone=NEW_SCHOOL_TIMEZONE)
        session.add(row)
        session.flush()
    return row


def school_zone(session: Session) -> ZoneInfo:
    """The school's time zone: it decides which local date a flight counts on.

    Read only: a request that only needs the date (logging an attempt) writes no school row.
    """
    # Through the connection: a plain read, without the ORM's statement handling (every attempt logged
    # and every signature asks for the school's date).
    timezone = session.connection().scalar(_SCHOOL_TIMEZONE)
    return ZoneInfo(timezone or NEW_SCHOOL_TIMEZONE)


_SCHOOL_TIMEZONE = select(School.timezone).where(School.id == 1)


def school_today(session: Session) -> date:
    """Today's date at the school: currency, trends and digests count the school's local dates."""
    return datetime.now(school_zone(session)).date()


def local_date(session: Session, moment: datetime) -> date:
    """The school's local date of a moment."""
    return moment.astimezone(school_zone(session)).date()
