"""Command-line subcommands for records: backup, restore, export, audit verify, audit head."""
import argparse
import os
import tempfile
from pathlib import Path

from server.config import get_settings
from server.db import command_session
from server.errors import FlarebookError
from server.migrate import upgrade
from server.records import audit, backup, proof
from server.records.export import export_json


SHOWN_PROBLEMS = 20


def _read(fn):
    """Run fn(session) on the configured database, read-only."""
    with command_session(get_settings().database_url, writing=False) as session:
        return fn(session)


def _write_file(path: Path, text: str) -> None:
    """Write whole or not at all: a temporary file beside it, flushed to disk, then renamed."""
    path = Path(path)
    with tempfile.NamedTemporaryFile("w", dir=path.parent or ".", delete=False, suffix=".partial") as out:
        out.write(text)
        out.flush()
        os.fsync(out.fileno())
    Path(out.name).replace(path)


def cmd_backup(args) -> str:
    report = backup.backup(get_settings().database_url, Path(args.file), force=args.force,
                           record_checks=args.record_checks)
    return f"Backed up to {report.summary()}"


def cmd_restore(args) -> str:
    url = get_settings().database_url
    report, kept = backup.restore(url, Path(args.file), force=args.force, record_checks=args.record_checks)
    upgrade(url)  # a backup from an older release is brought to this one's tables
    lines = [f"Restored {args.file} to {report.summary()}"]
    if kept is not None:
        lines.append(f"The database it replaced was kept at {kept}")
    return "\n".join(lines)


def cmd_export(args) -> str:
    text = _read(export_json)
    if args.output:
        _write_file(Path(args.output), text + "\n")
        return f"Exported every record to {args.output}"
    return text


def cmd_audit_verify(args) -> str:
    try:
        kept = audit.Head.read(Path(args.head)) if args.head else None
    except ValueError as error:
        raise FlarebookError(str(error)) from None

    def check(session):
        report = audit.verify(session, kept)
        return report, (proof.check_signed(session, args.record_checks) if report.problem is None else [])

    report, signed = _read(check)
    if report.problem is not None:
        raise FlarebookError(f"the audit chain is broken: {report.problem}")
    if signed:
        shown = "\n".join(f"  {problem}" for problem in signed[:SHOWN_PROBLEMS])
        more = f"\n  ... and {len(signed) - SHOWN_PROBLEMS} more" if len(signed) > SHOWN_PROBLEMS else ""
        raise FlarebookError(f"{len(signed)} signed record problem{'s' if len(signed) > 1 else ''}: "
                             f"the chain holds, but\n{shown}{more}")
    against = f", and it reaches the exported head seq {kept.seq}" if kept else ""
    return (f"The audit chain holds: {report.entries} entries, head seq {report.head.seq} "
            f"hash {report.head.hash}{against}; every signed record matches its signatures and the chain")


def cmd_audit_head(args) -> str:
    head = _read(audit.current_head)
    if args.output:
        _write_file(Path(args.output), head.to_json())
        return f"Audit head seq {head.seq} written to {args.output}; keep it outside the database"
    return head.to_json().rstrip()


def add_commands(sub: argparse._SubParsersAction, *, record_checks=()) -> None:
    """Register the records subcommands on the `flarebook` parser; `record_checks` are the signed-record
    checks of every area (server/signed_records.py), run by audit verify, backup and restore."""
    back = sub.add_parser("backup", help="copy the live SQLite database to FILE, checked")
    back.add_argument("file")
    back.add_argument("--force", action="store_true", help="replace FILE if it exists")
    back.set_defaults(run=cmd_backup, record_checks=record_checks)

    restore = sub.add_parser("restore", help="bring back a backup FILE as the database")
    restore.add_argument("file")
    restore.add_argument("--force", action="store_true",
                         help="replace a database that holds records (a copy is kept beside it)")
    restore.set_defaults(run=cmd_restore, record_checks=record_checks)

    export = sub.add_parser("export", help="every record as JSON (no passwords or tokens)")
    export.add_argument("--output", "-o", help="write to this file instead of standard output")
    export.set_defaults(run=cmd_export)

    audit_cmd = sub.add_parser("audit", help="the audit chain").add_subparsers(dest="audit_command", required=True)
    verify = audit_cmd.add_parser("verify", help="walk the chain; exit 1 naming the first bad entry")
    verify.add_argument("--head", help="a head exported earlier, so that missing entries at the end show")
    verify.set_defaults(run=cmd_audit_verify, record_checks=record_checks)
    head = audit_cmd.add_parser("head", help="print or save the chain head (seq and hash)")
    head.add_argument("--output", "-o", help="write the head to this file")
    head.set_defaults(run=cmd_audit_head)
