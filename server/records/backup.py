"""Consistent copies of a live SQLite database (the online backup API), restore, and checks."""
import sqlite3
from collections.abc import Iterable
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path

from sqlalchemy.engine import make_url
from sqlalchemy.exc import SQLAlchemyError

from server.db import make_engine, make_session_factory
from server.errors import FlarebookError
from server.records import audit, proof
from server.records.export import SKIPPED_TABLES
from server.records.models import AuditEvent
from server.records.proof import RecordCheck

PG_DUMP_HELP = (
    "For PostgreSQL use its own tools: `pg_dump --format=custom --file=FILE DBNAME` takes a consistent "
    "copy of a live database, and `pg_restore --clean --if-exists --dbname=DBNAME FILE` brings it back; "
    "then run `flarebook audit verify`."
)


@dataclass(frozen=True)
class CopyReport:
    path: Path
    integrity: str
    chain: audit.ChainReport

    def summary(self) -> str:
        head = self.chain.head
        return (f"{self.path}: integrity check ok; audit chain holds, {self.chain.entries} entries, "
                f"head seq {head.seq} hash {head.hash}")


def sqlite_path(database_url: str) -> Path:
    """The file behind a SQLite URL; other databases are refused with the pg_dump advice."""
    url = make_url(database_url)
    if url.get_backend_name() != "sqlite":
        raise FlarebookError(f"backup and restore copy SQLite files. {PG_DUMP_HELP}")
    if not url.database or url.database == ":memory:":
        raise FlarebookError("the database is in memory; there is no file to copy.")
    return Path(url.database)


def _connect(path: Path) -> sqlite3.Connection:
    connection = sqlite3.connect(path, timeout=10, isolation_level=None)
    connection.execute("PRAGMA busy_timeout=10000")
    return connection


def _copy(source: Path, target: Path) -> None:
    """Copy every page in one step: the source is read in one transaction, so the copy is consistent
    (SQLite docs: "Using the SQLite Online Backup API"); in WAL mode writers carry on meanwhile."""
    src, dst = _connect(source), _connect(target)
    try:
        src.backup(dst, pages=-1)
    finally:
        dst.close()
        src.close()


# Tables that hold no records: what the export leaves out (sign-in state, secrets), and Alembic's own.
NOT_RECORDS = frozenset(SKIPPED_TABLES | {"alembic_version"})


def _tables_with_rows(connection: sqlite3.Connection) -> list[str]:
    names = [r[0] for r in connection.execute(
        "SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite_%' ORDER BY name")]
    return [name for name in names if name not in NOT_RECORDS and connection.execute(
        f"SELECT 1 FROM {_identifier(name)} LIMIT 1").fetchone() is not None]  # nosec B608: quoted identifier


def _identifier(name: str) -> str:
    """A table name from the file itself, quoted as an SQL identifier (a hostile file may name one oddly)."""
    return '"' + name.replace('"', '""') + '"'



def _look_alike(connection: sqlite3.Connection) -> str | None:
    """What is wrong with an audit_events table that is not Flarebook's, or None when it is."""
    columns = {r[1] for r in connection.execute("PRAGMA table_info(audit_events)")}
    missing = sorted({c.name for c in AuditEvent.__table__.columns} - columns)
    return f"its audit_events table is not Flarebook's (no column {', '.join(missing)})" if missing else None


def check_copy(path: Path, record_checks: Iterable[RecordCheck] = ()) -> CopyReport:
    """PRAGMA integrity_check, the audit chain and every signed record of a database file; raises with
    the first problem, in one line."""
    connection = _connect(path)
    try:
        rows = [r[0] for r in connection.execute("PRAGMA integrity_check")]
        has_chain = connection.execute(
            "SELECT 1 FROM sqlite_master WHERE type='table' AND name='audit_events'").fetchone() is not None
        look_alike = _look_alike(connection) if has_chain and rows == ["ok"] else None
        with_rows = _tables_with_rows(connection) if rows == ["ok"] else []
    except sqlite3.DatabaseError as error:
        raise FlarebookError(f"{path} is not a SQLite database ({error}).") from None
    finally:
        connection.close()
    if rows != ["ok"]:
        raise FlarebookError(f"{path} fails PRAGMA integrity_check: {'; '.join(rows[:3])}")
    if not has_chain:
        raise FlarebookError(f"{path} is not a Flarebook database (it has no audit chain).")
    if look_alike:
        raise FlarebookError(f"{path} is not a Flarebook database: {look_alike}.")
    engine = make_engine(f"sqlite:///{path}")
    try:
        with make_session_factory(engine)() as session:
            chain = audit.verify(session)
            signed = proof.check_signed(session, record_checks) if chain.problem is None else []
    except SQLAlchemyError as error:
        reason = str(getattr(error, "orig", error)).splitlines()[0]
        raise FlarebookError(f"{path} cannot be read as a Flarebook database ({reason}).") from None
    finally:
        engine.dispose()
    if chain.problem is not None:
        raise FlarebookError(f"{path}: the audit chain is broken at {chain.problem}")
    records = [name for name in with_rows if name != "audit_events"]
    if chain.entries == 0 and records:
        raise FlarebookError(f"{path} holds records ({', '.join(records[:4])}) but no audit chain for them: "
                             "a backup without its chain cannot be proven, so it is refused.")
    if signed:
        more = f" (and {len(signed) - 1} more)" if len(signed) > 1 else ""
        raise FlarebookError(f"{path}: a signed record does not hold: {signed[0]}{more}")
    return CopyReport(path=path, integrity="ok", chain=chain)


def backup(database_url: str, target: Path, *, force: bool = False,
           record_checks: Iterable[RecordCheck] = ()) -> CopyReport:
    """Copy the live database to `target`, check the copy, then move it into place."""
    source = sqlite_path(database_url)
    if not source.exists():
        raise FlarebookError(f"there is no database at {source} to back up.")
    target = Path(target)
    if target.exists() and not force:
        raise FlarebookError(f"{target} exists already; choose a new name or add --force to replace it.")
    partial = target.with_name(target.name + ".partial")
    partial.unlink(missing_ok=True)
    try:
        _copy(source, partial)
        report = check_copy(partial, record_checks)
        partial.replace(target)
    finally:
        partial.unlink(missing_ok=True)
    return CopyReport(path=target, integrity=report.integrity, chain=report.chain)


def _holds_records(path: Path) -> bool:
    """Whether any table holds a row (sign-in state aside): then a restore must not replace it unasked."""
    if not path.exists() or path.stat().st_size == 0:
        return False
    connection = _connect(path)
    try:
        return bool(_tables_with_rows(connection))
    except sqlite3.DatabaseError:
        return True  # something is there that we cannot read: keep it unless told otherwise
    finally:
        connection.close()


def restore(database_url: str, source: Path, *, force: bool = False,
            record_checks: Iterable[RecordCheck] = ()) -> tuple[CopyReport, Path | None]:
    """Bring a checked backup back as the database; a database with records is kept aside first."""
    target = sqlite_path(database_url)
    source = Path(source)
    if not source.exists():
        raise FlarebookError(f"there is no backup at {source}.")
    check_copy(source, record_checks)
    kept = None
    if _holds_records(target):
        if not force:
            raise FlarebookError(f"the database at {target} already holds records; add --force to replace it "
                                 "(a copy of it is kept beside it first).")
        stamp = datetime.now(UTC).strftime("%Y%m%dT%H%M%SZ")
        kept = target.with_name(f"{target.name}.before-restore-{stamp}")
        _copy(target, kept)
    target.parent.mkdir(parents=True, exist_ok=True)
    _copy(source, target)
    return check_copy(target, record_checks), kept
