"""JSON API: the caller and the people of the school."""
from fastapi import APIRouter, Request, Response

from server.deps import ApiUser, DbSession, require_role
from server.errors import NotFound
from server.people import service as people
from server.people.models import Person
from server.people.models import ApiToken
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
        db.commit()  # a wrong current password counts towards the sign-in throttle, and is audited
        raise
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


@router.get("/people", response_model=list[PersonRead])
def list_people(db: DbSession, person: ApiUser):
    return [person_read(p) for p in people.visible_people(db, viewer=person)]


@router.post("/people", response_model=PersonRead, status_code=201)
def create_person(data: PersonCreate, db: DbSession, person: ApiUser):
    require_role(person, "chief_pilot", "admin")
    created = people.create_person(db, name=data.name, email=data.email, roles=list(data.roles),
                                   password=data.password, actor_id=person.id)
    return person_read(created)


@router.get("/people/{person_id}", response_model=PersonRead)
def get_person(person_id: int, db: DbSession, person: ApiUser):
    if not people.can_view_pilot(db, viewer=person, pilot_id=person_id):
        raise NotFound("No such person.")
    return person_read(people.get_person(db, person_id))


@router.patch("/people/{person_id}", response_model=PersonRead)
def update_person(person_id: int, data: PersonUpdate, db: DbSession, person: ApiUser):
    require_role(person, "chief_pilot", "admin")
    target = people.get_person(db, person_id)
    people.update_person(db, person=target, actor_id=person.id, **data.model_dump(exclude_unset=True))
    return person_read(target)
