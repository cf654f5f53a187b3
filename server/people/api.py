"""JSON API: the caller and the people of the school."""
from fastapi import APIRouter, Request, Response

from server.deps import DbSession
from server.people import service as people
from server.people.deps import ApiUser, SetupApiUser
from server.people.models import ApiToken, Person
from server.people.schemas import MeRead, PasswordChange, PersonCreate, PersonRead, PersonUpdate, TokenRead

router = APIRouter(tags=["people"])


def person_read(person: Person) -> PersonRead:
    return PersonRead(id=person.id, name=person.name, email=person.email, roles=person.roles, active=person.active)


@router.get("/me", response_model=MeRead)
def me(person: ApiUser):
    return MeRead(id=person.id, name=person.name, roles=person.roles)


@router.post("/me/password", status_code=204)
def change_my_password(data: PasswordChange, request: Request, db: DbSession, person: ApiUser):
    """Set your own password with your current one; your other sign-in sessions end."""
    user_session = getattr(request.state, "user_session", None)
    try:
        people.change_own_password(db, person=person, current_password=data.current_password,
                                   new_password=data.new_password,
                                   client=request.client.host if request.client else "",
                                   keep_session_id=user_session.id if user_session else None)
    except people.PasswordRefused:
        raise  # kept on record (keep_record): it counts towards the sign-in throttle, and is audited
    return Response(status_code=204)


def token_read(row: ApiToken) -> TokenRead:
    return TokenRead(id=row.id, label=row.label, created_at=row.created_at, expires_at=row.expires_at,
                     revoked=row.revoked_at is not None)


@router.get("/me/tokens", response_model=list[TokenRead])
def my_tokens(db: DbSession, person: ApiUser):
    """Your personal API tokens (never their value), newest first."""
    return [token_read(row) for row in people.list_tokens(db, person=person)]


@router.delete("/me/tokens/{token_id}", status_code=204)
def revoke_my_token(token_id: int, db: DbSession, person: ApiUser):
    people.revoke_token(db, actor=person, token_id=token_id)
    return Response(status_code=204)


@router.post("/people", response_model=PersonRead, status_code=201)
def create_person(data: PersonCreate, db: DbSession, person: SetupApiUser):
    created = people.create_person(db, name=data.name, email=data.email, roles=list(data.roles),
                                   password=data.password, actor=person)
    return person_read(created)


@router.patch("/people/{person_id}", response_model=PersonRead)
def update_person(person_id: int, data: PersonUpdate, db: DbSession, person: SetupApiUser):
    target = people.get_person(db, person_id)
    people.update_person(db, person=target, actor=person, **data.model_dump(exclude_unset=True))
    return person_read(target)
