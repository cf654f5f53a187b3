"""Tables for currency rules, calendar feed links and the readiness board's kept state."""
from datetime import date, datetime

from sqlalchemy import JSON, BigInteger, Boolean, Date, Float, ForeignKey, Integer, String
from sqlalchemy.orm import Mapped, mapped_column

from server.db import Base
from server.types import UTCDateTime, utcnow


class CurrencyRule(Base):
    """What a pilot must fly, how often, to stay current. Empty lists mean "any"."""

    __tablename__ = "currency_rules"

    id: Mapped[int] = mapped_column(primary_key=True)
    name: Mapped[str] = mapped_column(String(120))
    applies_to_roles: Mapped[list] = mapped_column(JSON, default=list)
    applies_to_people: Mapped[list] = mapped_column(JSON, default=list)
    maneuvers: Mapped[list] = mapped_column(JSON, default=list)
    terminations: Mapped[list] = mapped_column(JSON, default=list)
    type_ids: Mapped[list] = mapped_column(JSON, default=list)
    with_instructor: Mapped[bool | None] = mapped_column(Boolean)
    min_score: Mapped[float | None] = mapped_column(Float)
    require_satisfactory: Mapped[bool] = mapped_column(Boolean, default=True)
    window_days: Mapped[int | None] = mapped_column(Integer)
    window_months: Mapped[int | None] = mapped_column(Integer)
    min_count: Mapped[int] = mapped_column(Integer, default=1)
    warn_days: Mapped[int] = mapped_column(Integer, default=14)
    active: Mapped[bool] = mapped_column(Boolean, default=True)
    created_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)


class CalendarFeed(Base):
    """A secret link to a due-date calendar; person_id None is the whole school's feed."""

    __tablename__ = "calendar_feeds"

    id: Mapped[int] = mapped_column(primary_key=True)
    owner_id: Mapped[int] = mapped_column(ForeignKey("people.id", ondelete="CASCADE"), index=True)
    person_id: Mapped[int | None] = mapped_column(ForeignKey("people.id", ondelete="CASCADE"))
    token_sha256: Mapped[str] = mapped_column(String(64), unique=True)
    created_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)
    revoked_at: Mapped[datetime | None] = mapped_column(UTCDateTime)


class KeptStanding(Base):
    """The readiness board's kept state: one row per active person and active rule that applies to them.

    Written in the same transaction as every change that can move it (`server/currency/kept.py`);
    the board for today reads these rows instead of the whole history. The facts are those of
    `server.compute.currency.kept_facts`, computed on `counted_on`.
    """

    __tablename__ = "currency_kept_standings"

    pilot_id: Mapped[int] = mapped_column(ForeignKey("people.id", ondelete="CASCADE"), primary_key=True)
    rule_id: Mapped[int] = mapped_column(ForeignKey("currency_rules.id", ondelete="CASCADE"), primary_key=True,
                                         index=True)
    counted_on: Mapped[date] = mapped_column(Date)
    dates: Mapped[list] = mapped_column(JSON, default=list)  # ISO dates, newest first, repeats kept
    newest_on: Mapped[date | None] = mapped_column(Date)
    current_until: Mapped[date | None] = mapped_column(Date)
    still_counting: Mapped[int] = mapped_column(Integer, default=0)
    window_count: Mapped[int] = mapped_column(Integer, default=0)
    counted_through: Mapped[date | None] = mapped_column(Date)
    # When the row was last written (microseconds since 1970, the writing process's clock): a board made
    # afresh reads only the rows written since its last read (`server/currency/today_cells.py`). Not
    # indexed: that read scans the rows for their count anyway, and an index on a column every signature
    # rewrites would cost each signature an index entry per row (PostgreSQL could no longer update in place).
    written_at_us: Mapped[int] = mapped_column(BigInteger, default=0, server_default="0")


class BoardVersion(Base):
    """One row: a token written anew, in the transaction itself, by every change that can move what
    the readiness board shows (kept rows, people, their roles, rules, helicopter types). Today's board
    kept in memory (`server/currency/board_cache.py`) is good while the token is the one it was made
    under; random rather than counted, so a restored backup can never bring back a token in use."""

    __tablename__ = "currency_board_version"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)  # always 1
    token: Mapped[str] = mapped_column(String(32))
