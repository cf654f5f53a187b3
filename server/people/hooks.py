"""What other areas ask to be told when a person is added, or their roles or active flag change.

Called in the same transaction as the change. People sit below currency (DEVELOPERS.md, layers):
currency registers its callable here when it is imported (`server/models.py` imports it).
"""
from collections.abc import Callable

from sqlalchemy.orm import Session

from server.people.models import Person

AFTER_PERSON_CHANGE: list[Callable[[Session, Person], None]] = []


def person_changed(session: Session, person: Person) -> None:
    for hook in AFTER_PERSON_CHANGE:
        hook(session, person)
