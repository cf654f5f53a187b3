"""`flarebook currency verify` and `flarebook currency rebuild`: the readiness board's kept state."""
import argparse

from server.config import get_settings
from server.currency import kept, kept_check
from server.db import command_session
from server.errors import FlarebookError


def cmd_verify(args) -> str:
    with command_session(get_settings().database_url, writing=False) as session:
        equal, text = kept_check.report(session)
    if not equal:
        raise FlarebookError(text)  # the command exits 1 with the differences
    return text


def cmd_rebuild(args) -> str:
    with command_session(get_settings().database_url) as session:
        rows = kept.rebuild(session)
    return f"Readiness board kept state rebuilt: {rows} rows."


def add_commands(sub: argparse._SubParsersAction) -> None:
    currency = sub.add_parser("currency", help="the readiness board's kept state").add_subparsers(
        dest="currency_command", required=True)
    currency.add_parser("verify", help="compare the kept state with a full evaluation; exit 1 on any "
                                       "difference").set_defaults(run=cmd_verify)
    currency.add_parser("rebuild", help="recompute the kept state from the whole history").set_defaults(
        run=cmd_rebuild)
