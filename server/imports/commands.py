"""`flarebook import KIND FILE [--dry-run]`: the same import as the page and the API, from a terminal."""
import argparse
import json
from pathlib import Path

from sqlalchemy import select

from server.config import get_settings
from server.db import command_session
from server.errors import FlarebookError
from server.imports import columns, service
from server.people import service as people
from server.people.models import Person, PersonRole

MAX_LISTED_ERRORS = 200


def _importer(session, email: str | None) -> Person:
    """The person the import is made by: --by EMAIL, or the school's only active chief pilot."""
    if email:
        person = people.find_by_email(session, email)
        if person is None or not person.active:
            raise FlarebookError(f"No active person signs in as {email}.")
        return person
    chiefs = list(session.scalars(select(Person).join(PersonRole).where(
        PersonRole.role == "chief_pilot", Person.active.is_(True))))
    if len(chiefs) != 1:
        raise FlarebookError("Say who imports with --by EMAIL (a chief pilot; the school has "
                             f"{len(chiefs)} active chief pilots).")
    return chiefs[0]


def report(outcome: service.Outcome) -> str:
    lines = [f"{outcome.rows} rows read ({outcome.file_description}); {outcome.ok} can be imported."]
    for error in outcome.errors[:MAX_LISTED_ERRORS]:
        lines.append(f"row {error.row}, {error.column}: {error.message}")
    if len(outcome.errors) > MAX_LISTED_ERRORS:
        lines.append(f"... and {len(outcome.errors) - MAX_LISTED_ERRORS} more problems")
    would, made = outcome.would_create, outcome.created
    if outcome.dry_run:
        lines.append(f"Dry run: would create {would['people']} people, {would['sorties']} sorties, "
                     f"{would['attempts']} attempts; nothing was created.")
    elif outcome.batch_id is not None:
        lines.append(f"Import {outcome.batch_id}: created {made['people']} people, {made['sorties']} sorties, "
                     f"{made['attempts']} attempts.")
    return "\n".join(lines)


def cmd_import(args) -> str:
    mapping = None
    if args.mapping:
        try:
            mapping = json.loads(args.mapping)
        except ValueError:
            raise FlarebookError("--mapping is not JSON: give an object from field names to column headers.") from None
    try:
        data = Path(args.file).read_bytes()
    except OSError as error:
        raise FlarebookError(f"cannot read {args.file}: {error.strerror}") from None
    with command_session(get_settings().database_url) as session:
        outcome = service.run_import(session, actor=_importer(session, args.by), kind=args.kind, data=data,
                                     file_name=Path(args.file).name, mapping=mapping, dry_run=args.dry_run,
                                     only_clean=args.only_clean)
        text = report(outcome)
        if outcome.refused or (outcome.dry_run and outcome.errors):
            print(text, flush=True)  # the rows and their problems; the one-line reason goes to stderr
            raise FlarebookError(outcome.refused or f"{len(outcome.errors)} problems in the file; nothing was created.")
        return text


def add_commands(sub: argparse._SubParsersAction) -> None:
    """Register `import` on the `flarebook` parser."""
    command = sub.add_parser("import", help="import people or past practice autorotations from a CSV or XLSX file")
    command.add_argument("kind", choices=columns.KINDS)
    command.add_argument("file")
    command.add_argument("--dry-run", action="store_true", help="check every row and create nothing")
    command.add_argument("--only-clean", action="store_true", help="import the clean rows even if others have problems")
    command.add_argument("--mapping", help='JSON from field to column header, e.g. \'{"pilot": "Student"}\'')
    command.add_argument("--by", help="email of the chief pilot who imports (default: the only one)")
    command.set_defaults(run=cmd_import)
