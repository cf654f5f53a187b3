"""Every table, imported in one place for Alembic and the app."""
# Importing kept fills the logbook's, people's and fleet's hook lists: every process that imports the
# tables (app, command line, demo, tests, migrations) keeps the readiness board's state in step.
from server.currency import kept  # noqa: F401
from server.currency.models import CalendarFeed, CurrencyRule, KeptStanding
from server.db import Base
from server.fleet.models import Aircraft, HelicopterType, Site
from server.idempotency import IdempotencyKey
from server.imports.models import ImportBatch, ImportedRecord
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
    "Enrolment", "HelicopterType", "IdempotencyKey", "ImportBatch", "ImportedRecord", "KeptStanding", "Lesson",
    "LessonCompletion",
    "LessonRequirement", "Person", "PersonRole", "Program", "School", "SignInFailure", "Signature",
    "Site", "Sortie", "Stage", "StageCheck", "Standard", "Track", "UserSession",
]
