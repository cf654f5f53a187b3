"""The `flarebook` command line."""
import argparse
import sys

from sqlalchemy import select

from server.config import get_settings
from server.db import command_session
from server.errors import FlarebookError
from server.currency import commands as currency_commands
from server.currency import kept
from server.imports import commands as import_commands
from server.migrate import upgrade
import server.models  # noqa: F401  (every table on Base, for export)
from server.logbook import track_commands
from server.people import service as people
from server.people.models import Person
from server.records import commands as records_commands
from server.signed_records import RECORD_CHECKS
from server.vocabulary import ROLES


def _migrate() -> None:
    """The schema to the newest revision, then the readiness board's kept state if it was never built."""
    upgrade(get_settings().database_url)
    with command_session(get_settings().database_url) as session:
        kept.rebuild_if_unbuilt(session)


def cmd_init(args) -> str:
    _migrate()
    return f"Database ready: {get_settings().database_url}"


def cmd_demo(args) -> str:
    from server.demo import load_demo

    _migrate()
    with command_session(get_settings().database_url) as session:
        if session.scalar(select(Person.id).limit(1)) is not None:
            return "The database already has people in it; the demo school was not loaded."
        summary = load_demo(session)
    return summary


def cmd_serve(args) -> str:
    import uvicorn

    from server.app import create_app

    _migrate()
    print(f"Flarebook on http://{args.host}:{args.port} (stop with Ctrl+C)", flush=True)
    uvicorn.run(create_app(), host=args.host, port=args.port, log_level="info")
    return ""


def cmd_user_add(args) -> str:
    with command_session(get_settings().database_url) as session:
        person = people.create_person(session, name=args.name, email=args.email, roles=args.role,
                                      password=args.password)
        return f"Added {person.name} <{person.email}> as {', '.join(person.roles)} (id {person.id})"


def cmd_token_new(args) -> str:
    with command_session(get_settings().database_url) as session:
        person = people.find_by_email(session, args.email)
        if person is None or not person.active:
            raise FlarebookError(f"No active person signs in as {args.email}.")
        return people.issue_token(session, person=person, label=args.label, days=args.days)


def cmd_token_revoke(args) -> str:
    with command_session(get_settings().database_url) as session:
        person = people.find_by_email(session, args.email)
        if person is None:
            raise FlarebookError(f"Nobody signs in as {args.email}.")
        count = people.revoke_all_tokens(session, person_id=person.id, audited=True)
        return f"Revoked {count} API token{'' if count == 1 else 's'} of {person.name} <{person.email}>"


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(prog="flarebook", description="Practice-autorotation training records.")
    sub = parser.add_subparsers(dest="command", required=True)
    sub.add_parser("init", help="create or migrate the database").set_defaults(run=cmd_init)
    sub.add_parser("demo", help="load the invented demo school into an empty database").set_defaults(run=cmd_demo)
    serve = sub.add_parser("serve", help="serve the app")
    serve.add_argument("--host", default="127.0.0.1")
    serve.add_argument("--port", type=int, default=8000)
    serve.set_defaults(run=cmd_serve)

    user = sub.add_parser("user", help="manage people").add_subparsers(dest="user_command", required=True)
    add = user.add_parser("add", help="add a person")
    add.add_argument("--email", required=True)
    add.add_argument("--name", required=True)
    add.add_argument("--role", action="append", required=True, choices=ROLES)
    add.add_argument("--password", required=True)
    add.set_defaults(run=cmd_user_add)

    token = sub.add_parser("token", help="personal API tokens").add_subparsers(dest="token_command", required=True)
    new = token.add_parser("new", help="make a token and print it alone on standard output")
    new.add_argument("email")
    new.add_argument("--label", default="command line")
    new.add_argument("--days", type=int, default=None,
                     help="days until it expires (default: the FLAREBOOK_TOKEN_DAYS setting, 90)")
    new.set_defaults(run=cmd_token_new)
    revoke = token.add_parser("revoke", help="revoke every API token of a person at once")
    revoke.add_argument("email")
    revoke.set_defaults(run=cmd_token_revoke)
    # backup, restore, export, audit verify, audit head; with every area's signed-record check
    records_commands.add_commands(sub, record_checks=RECORD_CHECKS)
    import_commands.add_commands(sub)  # import KIND FILE
    currency_commands.add_commands(sub)  # currency verify, currency rebuild
    track_commands.add_commands(sub)  # track import
    return parser


def main(argv: list[str] | None = None) -> int:
    args = build_parser().parse_args(argv)
    try:
        output = args.run(args)
    except FlarebookError as error:
        print(f"flarebook: {error.message}", file=sys.stderr)
        return 1
    except Exception as error:  # one line for the operator, never a traceback
        print(f"flarebook: {type(error).__name__}: {error}", file=sys.stderr)
        return 1
    if output:
        print(output)
    return 0


if __name__ == "__main__":
    sys.exit(main())
