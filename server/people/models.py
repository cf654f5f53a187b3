"""Tables for the school, its people, their roles, sign-in sessions and personal API tokens."""
from datetime import datetime

from sqlalchemy import Boolean, ForeignKey, Integer, String
from sqlalchemy.orm import Mapped, mapped_column, relationship

from server.db import Base
from server.types import UTCDateTime, utcnow

class School(Base):
    """The one school this database serves; its time zone decides which local date a flight counts on."""

    __tablename__ = "school"

    id: Mapped[int] = mapped_column(primary_key=True)
    name: Mapped[str] = mapped_column(String(120), default="Flight school")
    timezone: Mapped[str] = mapped_column(String(64), default="UTC")
    # The invented demo school prints its sign-ins on the sign-in page; a real school never does.
    demo: Mapped[bool] = mapped_column(Boolean, default=False)


class Person(Base):
    __tablename__ = "people"

    id: Mapped[int] = mapped_column(primary_key=True)
    name: Mapped[str] = mapped_column(String(120))
    email: Mapped[str] = mapped_column(String(254), unique=True)
    password_hash: Mapped[str] = mapped_column(String(255))
    active: Mapped[bool] = mapped_column(Boolean, default=True)
    created_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)

    role_rows: Mapped[list["PersonRole"]] = relationship(
        back_populates="person", cascade="all, delete-orphan", lazy="selectin"
    )

    @property
    def roles(self) -> list[str]:
        return sorted(r.role for r in self.role_rows)

    def has_role(self, *roles: str) -> bool:
        return any(r.role in roles for r in self.role_rows)

    @property
    def sees_everyone(self) -> bool:
        return self.has_role("chief_pilot", "admin")


class PersonRole(Base):
    __tablename__ = "person_roles"

    person_id: Mapped[int] = mapped_column(ForeignKey("people.id", ondelete="CASCADE"), primary_key=True)
    role: Mapped[str] = mapped_column(String(20), primary_key=True)

    person: Mapped[Person] = relationship(back_populates="role_rows")


class UserSession(Base):
    """A browser session; kept in the database so any app server can serve any request."""

    __tablename__ = "user_sessions"

    id: Mapped[str] = mapped_column(String(64), primary_key=True)  # SHA-256 of the cookie value
    person_id: Mapped[int | None] = mapped_column(ForeignKey("people.id", ondelete="CASCADE"), index=True)
    csrf_token: Mapped[str] = mapped_column(String(64))
    created_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)
    last_seen_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)
    ended_at: Mapped[datetime | None] = mapped_column(UTCDateTime)


class ApiToken(Base):
    """A personal bearer token for scripts; only its hash is stored."""

    __tablename__ = "api_tokens"

    id: Mapped[int] = mapped_column(primary_key=True)
    person_id: Mapped[int] = mapped_column(ForeignKey("people.id", ondelete="CASCADE"), index=True)
    token_sha256: Mapped[str] = mapped_column(String(64), unique=True)
    label: Mapped[str] = mapped_column(String(120), default="")
    created_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)
    revoked_at: Mapped[datetime | None] = mapped_column(UTCDateTime)


class SignInFailure(Base):
    """One refused sign-in, kept to slow down password guessing across app servers."""

    __tablename__ = "sign_in_failures"

    id: Mapped[int] = mapped_column(primary_key=True)
    email: Mapped[str] = mapped_column(String(254), index=True)
    client: Mapped[str] = mapped_column(String(64), default="")
    at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow, index=True)
    count: Mapped[int] = mapped_column(Integer, default=1)
