"""Consistent copies of a live SQLite database (the online backup API), restore, and checks."""
import sqlite3
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path

from sqlalchemy.engine import make_url

from server.db import make_engine, make_session_factory
from server.errors import FlarebookError
from server.records import audit

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


def check_copy(path: Path) -> CopyReport:
    """PRAGMA integrity_check and the audit chain of a database file; raises with the first problem."""
    connection = _connect(path)
    try:
        rows = [r[0] for r in connection.execute("PRAGMA integrity_check")]
        has_chain = connection.execute(
            "SELECT 1 FROM sqlite_master WHERE type='table' AND name='audit_events'").fetchone() is not None
    except sqlite3.DatabaseError as error:
        raise FlarebookError(f"{path} is not a SQLite database ({error}).") from None
    finally:
        connection.close()
    if rows != ["ok"]:
        raise FlarebookError(f"{path} fails PRAGMA integrity_check: {'; '.join(rows[:3])}")
    if not has_chain:
        raise FlarebookError(f"{path} is not a Flarebook database (it has no audit chain).")
    engine = make_engine(f"sqlite:///{path}")
    try:
        with make_session_factory(engine)() as session:
            chain = audit.verify(session)
    finally:
        engine.dispose()
    if chain.problem is not None:
        raise FlarebookError(f"{path}: the audit chain is broken at {chain.problem}")
    return CopyReport(path=path, integrity="ok", chain=chain)


def backup(database_url: str, target: Path, *, force: bool = False) -> CopyReport:
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
        report = check_copy(partial)
        partial.replace(target)
    finally:
        partial.unlink(missing_ok=True)
    return CopyReport(path=target, integrity=report.integrity, chain=report.chain)


def _holds_records(path: Path) -> bool:
    if not path.exists() or path.stat().st_size == 0:
        return False
    connection = _connect(path)
    try:
        tables = {r[0] for r in connection.execute("SELECT name FROM sqlite_master WHERE type='table'")}
        return "audit_events" in tables and connection.execute("SELECT 1 FROM audit_events LIMIT 1").fetchone() is not None
    finally:
        connection.close()


def restore(database_url: str, source: Path, *, force: bool = False) -> tuple[CopyReport, Path | None]:
    """Bring a checked backup back as the database; a database with records is kept aside first."""
    target = sqlite_path(database_url)
    source = Path(source)
    if not source.exists():
        raise FlarebookError(f"there is no backup at {source}.")
    check_copy(source)
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
    return check_copy(target), kept
