"""Database engine, declarative base and sessions."""
import threading
import weakref
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

    A transaction begins as a writer (`begin_writing`, at its start) or takes the turn late
    (`take_writers_turn`, just before its first write): its reads before that run outside any
    transaction, as pysqlite runs them, so none of them holds a snapshot that the write would have to
    upgrade.
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
        self.take_turn(connection)

    def take_turn(self, connection) -> None:
        """Hold the write lock from now on, for a connection that began as a reader."""
        if connection.info.get(self.FLAG) is not None:
            return
        dbapi_connection = connection.connection.dbapi_connection
        if dbapi_connection.in_transaction:
            # pysqlite began a transaction of its own for a write that did not take the turn first.
            raise RuntimeError("a write began before the writer's turn was taken")
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


_sqlite_writers: "weakref.WeakKeyDictionary[Engine, _SQLiteWriters]" = weakref.WeakKeyDictionary()


def begin_writing(session: Session) -> None:
    """Start the session's transaction as a writer: on SQLite it holds the write lock from here."""
    session.connection(execution_options=WRITES)


LATE_TURN = "flarebook_late_turn"  # session.info: this transaction takes the writer's turn late


def mark_late_turn(session: Session) -> None:
    """This session's writes take the writer's turn only when written (a late-turn request)."""
    session.info[LATE_TURN] = True


def take_writers_turn(session: Session) -> None:
    """Hold the writer's turn from here to the commit; nothing when the session already holds it.

    On SQLite: the process's writer lock and BEGIN IMMEDIATE. On PostgreSQL rows are locked as they
    are written (and the audit chain takes a lock of its own), so there is nothing to take.
    """
    connection = session.connection()
    writers = _sqlite_writers.get(connection.engine)
    if writers is not None:
        writers.take_turn(connection)


def _turn_before_writing(session: Session, *_args) -> None:
    # Every write through the session takes the turn first, however the transaction began.
    if session.new or session.dirty or session.deleted:
        take_writers_turn(session)


def _turn_before_statement(state) -> None:
    if state.is_insert or state.is_update or state.is_delete:
        take_writers_turn(state.session)


def make_engine(url: str) -> Engine:
    """Create an engine; for SQLite make the data folder and turn on the pragmas."""
    parsed = make_url(url)
    if parsed.get_backend_name() == "sqlite":
        if parsed.database and parsed.database != ":memory:":
            Path(parsed.database).parent.mkdir(parents=True, exist_ok=True)
        engine = create_engine(url, connect_args={"check_same_thread": False, "timeout": 10})
        event.listen(engine, "connect", _sqlite_pragmas)
        writers = _sqlite_writers[engine] = _SQLiteWriters()
        event.listen(engine, "begin", writers.begin)
        event.listen(engine.pool, "checkin", writers.done)
        event.listen(engine.pool, "invalidate", writers.done)
        return engine
    return create_engine(url, pool_pre_ping=True, pool_size=10, max_overflow=20)


def make_session_factory(engine: Engine) -> sessionmaker[Session]:
    from server.input_rules import refuse_control_characters  # above this module: it knows the errors

    factory = sessionmaker(engine, expire_on_commit=False)
    event.listen(factory, "before_flush", refuse_control_characters)
    event.listen(factory, "before_flush", _turn_before_writing)
    event.listen(factory, "do_orm_execute", _turn_before_statement)
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
