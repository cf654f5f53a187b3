"""Accounts, sign-in, sessions, tokens and who may see whose records."""
from datetime import date, datetime, timedelta
from zoneinfo import ZoneInfo

from sqlalchemy import delete, func, select
from sqlalchemy.orm import Session

from server.config import Settings
from server.errors import Conflict, Invalid, NotFound, Unauthorized
from server.people.models import ApiToken, Person, PersonRole, School, SignInFailure, UserSession
from server.people.security import hash_password, new_secret, sha256_hex, verify_password
from server.records import audit
from server.types import utcnow
from server.vocabulary import ROLES

# Sign-in throttling: after this many refusals for one email in the window, refuse without checking.
THROTTLE_LIMIT = 10
THROTTLE_WINDOW = timedelta(minutes=15)
# One address guessing across many emails is slowed too; set high, as a school may share one address.
CLIENT_THROTTLE_LIMIT = 100
MIN_PASSWORD_LENGTH = 8


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
    person = Person(name=name.strip(), email=email, password_hash=hash_password(password), active=True)
    person.role_rows = [PersonRole(role=r) for r in sorted(set(roles))]
    session.add(person)
    session.flush()
    audit.append(session, actor_id=actor.id if actor else None, action="create", entity="person", entity_id=person.id,
                 after={"name": person.name, "email": person.email, "roles": person.roles})
    return person


def update_person(session: Session, *, person: Person, actor: Person, name: str | None = None,
                  roles: list[str] | None = None, active: bool | None = None,
                  password: str | None = None) -> Person:
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
    if password is not None:
        if len(password) < MIN_PASSWORD_LENGTH:
            raise Invalid(f"The password needs at least {MIN_PASSWORD_LENGTH} characters.")
        person.password_hash = hash_password(password)
    if active is not None and active != person.active:
        person.active = active
        if not active:
            end_all_sessions(session, person_id=person.id)
    session.flush()
    audit.append(session, actor_id=actor.id, action="edit", entity="person", entity_id=person.id,
                 before=before, after=person_snapshot(person))
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


def authenticate(session: Session, *, email: str, password: str, client: str = "") -> Person:
    """Check a password; the refusal never says whether the account exists."""
    email = normalise_email(email)
    since = utcnow() - THROTTLE_WINDOW
    recent = session.scalar(
        select(func.count()).select_from(SignInFailure)
        .where(SignInFailure.email == email, SignInFailure.at >= since)
    )
    from_client = session.scalar(
        select(func.count()).select_from(SignInFailure)
        .where(SignInFailure.client == client[:64], SignInFailure.at >= since)
    ) if client else 0
    person = find_by_email(session, email)
    ok = (
        recent < THROTTLE_LIMIT
        and from_client < CLIENT_THROTTLE_LIMIT
        and verify_password(person.password_hash if person else None, password)
        and person is not None
        and person.active
    )
    if not ok:
        session.add(SignInFailure(email=email, client=client[:64]))
        audit.append(session, actor_id=None, action="sign_in_refused", entity="person",
                     entity_id=None, after={"email": email})
        if recent >= THROTTLE_LIMIT:
            raise Unauthorized("Too many failed sign-ins for this email. Wait 15 minutes and try again.", keep_record=True)
        if from_client >= CLIENT_THROTTLE_LIMIT:
            raise Unauthorized("Too many failed sign-ins from this address. Wait 15 minutes and try again.", keep_record=True)
        raise Unauthorized("That email and password do not match an active account.", keep_record=True)
    audit.append(session, actor_id=person.id, action="sign_in", entity="person", entity_id=person.id)
    return person


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


def end_all_sessions(session: Session, *, person_id: int) -> None:
    for row in session.scalars(select(UserSession).where(UserSession.person_id == person_id,
                                                         UserSession.ended_at.is_(None))):
        row.ended_at = utcnow()


def purge_old_sessions(session: Session, *, settings: Settings) -> None:
    cutoff = utcnow() - timedelta(hours=settings.session_absolute_hours)
    session.execute(delete(UserSession).where(UserSession.created_at < cutoff))


def issue_token(session: Session, *, person: Person, label: str = "") -> str:
    """Make a personal API token; only its hash is kept, so it is shown once."""
    token = new_secret("fbk_")
    session.add(ApiToken(person_id=person.id, token_sha256=sha256_hex(token), label=label))
    audit.append(session, actor_id=person.id, action="create", entity="api_token", after={"label": label})
    return token


def person_for_token(session: Session, token: str) -> Person | None:
    row = session.scalar(select(ApiToken).where(ApiToken.token_sha256 == sha256_hex(token),
                                                ApiToken.revoked_at.is_(None)))
    if row is None:
        return None
    person = session.get(Person, row.person_id)
    return person if person is not None and person.active else None


def school(session: Session) -> School:
    """The school row, made on first use (a new database starts in UTC)."""
    row = session.get(School, 1)
    if row is None:
        row = School(id=1, name="Flight school", timezone="UTC")
        session.add(row)
        session.flush()
    return row


def school_zone(session: Session) -> ZoneInfo:
    """The school's time zone: it decides which local date a flight counts on."""
    return ZoneInfo(school(session).timezone)


def school_today(session: Session) -> date:
    """Today's date at the school: currency, trends and digests count the school's local dates."""
    return datetime.now(school_zone(session)).date()


def local_date(session: Session, moment: datetime) -> date:
    """The school's local date of a moment."""
    return moment.astimezone(school_zone(session)).date()
