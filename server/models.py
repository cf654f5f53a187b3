"""Every table, imported in one place for Alembic and the app."""
from server.currency.models import CalendarFeed, CurrencyRule
from server.db import Base
from server.fleet.models import Aircraft, HelicopterType, Site
from server.idempotency import IdempotencyKey
from server.logbook.models import Attempt, Signature, Sortie, Track
from server.people.models import ApiToken, Person, PersonRole, School, SignInFailure, UserSession
from server.records.models import AuditEvent
from server.training.models import (
    Enrolment,
    Lesson,
    LessonCompletion,
    LessonRequirement,
    Program,
    Stage,
    StageCheck,
    Standard,
)

__all__ = [
    "Aircraft", "ApiToken", "Attempt", "AuditEvent", "Base", "CalendarFeed", "CurrencyRule",
    "Enrolment", "HelicopterType", "IdempotencyKey", "Lesson", "LessonCompletion",
    "LessonRequirement", "Person", "PersonRole", "Program", "School", "SignInFailure", "Signature",
    "Site", "Sortie", "Stage", "StageCheck", "Standard", "Track", "UserSession",
]
