"""Today's readiness board kept in memory while nothing it shows has changed.

Every change the board can show writes a new random token into `currency_board_version` in its own
transaction: kept rows rewritten (`server/currency/kept.py` calls `changed`), and any person, role,
rule or helicopter type written through the ORM (a flush listener below). The token is written just
before commit, after the transaction's other locks (the audit chain's first), so it adds no new order
of locks. A board made for today is kept under (token, today, what was asked); a request reads the
token first, then, only if it differs from every kept one, the board. Reading the token first makes a
board made meanwhile at least as new as its token, so across several app processes a kept board is
never older than the database it is served for.
"""
import threading
import uuid
from collections import OrderedDict
from collections.abc import Callable, Hashable

from sqlalchemy import event, insert, select, update
from sqlalchemy.orm import Session

from server.currency.models import BoardVersion, CurrencyRule, KeptStanding
from server.fleet.models import HelicopterType
from server.people.models import Person, PersonRole

SHOWN_ON_THE_BOARD = (Person, PersonRole, CurrencyRule, HelicopterType, KeptStanding)
_CHANGED = "flarebook_board_changed"  # the flag in Session.info until commit or rollback


def changed(session: Session) -> None:
    """This transaction moves what the board shows: a new token is written before it commits."""
    session.info[_CHANGED] = True


def token(session: Session) -> str | None:
    """The token now in force (None without the row: nothing is kept then)."""
    return session.scalar(select(BoardVersion.token).where(BoardVersion.id == 1))


@event.listens_for(Session, "before_flush")
def _note_board_objects(session: Session, _context, _instances) -> None:
    if _CHANGED in session.info:
        return
    if any(isinstance(obj, SHOWN_ON_THE_BOARD) for obj in session.new) or any(
            isinstance(obj, SHOWN_ON_THE_BOARD) for obj in session.deleted) or any(
            isinstance(obj, SHOWN_ON_THE_BOARD) and session.is_modified(obj) for obj in session.dirty):
        changed(session)


@event.listens_for(Session, "before_commit")
def _write_token(session: Session) -> None:
    session.flush()  # a last flush may mark the change
    if not session.info.pop(_CHANGED, False):
        return
    table = BoardVersion.__table__
    written = session.connection().execute(update(table).where(table.c.id == 1).values(token=uuid.uuid4().hex))
    if written.rowcount == 0:
        session.connection().execute(insert(table).values(id=1, token=uuid.uuid4().hex))


@event.listens_for(Session, "after_rollback")
def _forget(session: Session) -> None:
    session.info.pop(_CHANGED, None)


class BoardCache:
    """The few boards asked for last (whole boards are megabytes), shared by the threads of one app."""

    def __init__(self, entries: int = 8):
        self.entries = entries
        self._kept: OrderedDict[Hashable, object] = OrderedDict()
        self._lock = threading.Lock()

    def get(self, key: Hashable, make: Callable[[], object]) -> object:
        with self._lock:
            if key in self._kept:
                self._kept.move_to_end(key)
                return self._kept[key]
        value = make()  # outside the lock: two threads may both make it, neither waits on the other
        with self._lock:
            self._kept[key] = value
            while len(self._kept) > self.entries:
                self._kept.popitem(last=False)
        return value


_MAKING = threading.Lock()


def kept_for_today(app, session: Session, key: tuple, make: Callable[[], object]) -> object:
    """make() of a board for the school's today (key says which one), kept in the app under the token
    now in force; made afresh without a token row."""
    current = token(session)  # first: see the module's note
    if current is None:
        return make()
    cache = getattr(app.state, "board_cache", None)
    if cache is None:
        with _MAKING:
            cache = getattr(app.state, "board_cache", None)
            if cache is None:
                cache = app.state.board_cache = BoardCache()
    return cache.get((current, *key), make)
