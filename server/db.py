"""Database engine, declarative base and sessions."""
import threading
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path

from sqlalchemy import MetaData, create_engine, event
from sqlalchemy.engine import Engine, make_url
from sqlalchemy.orm import DeclarativeBase, Session, sessionmaker

# Stable constraint names so that Alembic migrations (and SQLite batch mode) can refer to them.
NAMING = {
    "ix": "ix_%(column_0_label)s",
    "uq": "uq_%(table_name)s_%(column_0_name)s",
    "ck": "ck_%(table_name)s_%(constraint_name)s",
    "fk": "fk_%(table_name)s_%(column_0_name)s_%(referred_table_name)s",
    "pk": "pk_%(table_name)s",
}


class Base(DeclarativeBase):
    metadata = MetaData(naming_convention=NAMING)


def _sqlite_pragmas(dbapi_connection, _record) -> None:
    # WAL for readers beside one writer; FULL so a signed record survives power loss.
    cursor = dbapi_connection.cursor()
    cursor.execute("PRAGMA journal_mode=WAL")
    cursor.execute("PRAGMA synchronous=FULL")
    cursor.execute("PRAGMA foreign_keys=ON")
    cursor.execute("PRAGMA busy_timeout=10000")
    cursor.close()


# Execution option that marks a connection whose transactions write (see _SQLiteWriters).
WRITES = {"flarebook_writes": True}


class _SQLiteWriters:
    """Writing transactions begin with BEGIN IMMEDIATE, and take turns inside this process.

    BEGIN IMMEDIATE takes SQLite's one write lock when the transaction starts, so a writer never fails
    with SQLITE_BUSY when it upgrades a read (SQLite docs: "BEGIN IMMEDIATE", WAL; SQLAlchemy docs:
    pysqlite "serializable isolation"). Waiters on SQLite's lock poll with growing sleeps, which
    starves some of them under load; threads of this process wait on a lock of ours instead, handed
    on when the connection goes back to the pool. Other processes still meet busy_timeout.
    """

    FLAG = "flarebook_writer"

    def __init__(self):
        self.lock = threading.Lock()

    def begin(self, connection) -> None:
        dbapi_connection = connection.connection.dbapi_connection
        if not connection.get_execution_options().get("flarebook_writes"):
            # pysqlite's own behaviour: reads see the latest commit, BEGIN comes before the first change.
            dbapi_connection.isolation_level = ""
            return
        connection.info[self.FLAG] = self.lock.acquire(timeout=10)
        dbapi_connection.isolation_level = None
        try:
            connection.exec_driver_sql("BEGIN IMMEDIATE")
        except BaseException:
            self._release(connection.info)
            raise

    def done(self, _dbapi_connection, record, *_exception) -> None:
        """The connection is back in the pool (committed or rolled back) or thrown away."""
        self._release(record.info)

    def _release(self, info: dict) -> None:
        if info.pop(self.FLAG, False):
            self.lock.release()


def begin_writing(session: Session) -> None:
    """Start the session's transaction as a writer: on SQLite it holds the write lock from here."""
    session.connection(execution_options=WRITES)


def make_engine(url: str) -> Engine:
    """Create an engine; for SQLite make the data folder and turn on the pragmas."""
    parsed = make_url(url)
    if parsed.get_backend_name() == "sqlite":
        if parsed.database and parsed.database != ":memory:":
            Path(parsed.database).parent.mkdir(parents=True, exist_ok=True)
        engine = create_engine(url, connect_args={"check_same_thread": False, "timeout": 10})
        event.listen(engine, "connect", _sqlite_pragmas)
        writers = _SQLiteWriters()
        event.listen(engine, "begin", writers.begin)
        event.listen(engine.pool, "checkin", writers.done)
        event.listen(engine.pool, "invalidate", writers.done)
        return engine
    return create_engine(url, pool_pre_ping=True, pool_size=10, max_overflow=20)


def make_session_factory(engine: Engine) -> sessionmaker[Session]:
    from server.input_rules import refuse_control_characters  # above this module: it knows the errors

    factory = sessionmaker(engine, expire_on_commit=False)
    event.listen(factory, "before_flush", refuse_control_characters)
    return factory


@contextmanager
def transaction(factory: sessionmaker[Session]) -> Iterator[Session]:
    """One unit of work: commit on success, roll back on error."""
    with factory() as session:
        begin_writing(session)
        try:
            yield session
            session.commit()
        except BaseException:
            session.rollback()
            raise


@contextmanager
def command_session(url: str, *, writing: bool = True) -> Iterator[Session]:
    """A command's one unit of work (or read) on the database at `url`, with an engine of its own that
    is closed afterwards: a command run keeps no pool of connections open behind it."""
    engine = make_engine(url)
    try:
        if writing:
            with transaction(make_session_factory(engine)) as session:
                yield session
        else:
            with make_session_factory(engine)() as session:
                yield session
    finally:
        engine.dispose()
