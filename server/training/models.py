"""Tables for standards, programs, stages, lessons, enrolment and sign-offs."""
from datetime import date, datetime

from sqlalchemy import JSON, Boolean, Date, Float, ForeignKey, Integer, String, Text
from sqlalchemy.orm import Mapped, mapped_column, relationship

from server.db import Base
from server.types import UTCDateTime, utcnow

class Standard(Base):
    """Tolerances for one maneuver kind at one program level.

    A standard is never edited in place once attempts were scored with it: a change makes a new row
    that supersedes it, so signed history keeps the standard that applied.
    """

    __tablename__ = "standards"

    id: Mapped[int] = mapped_column(primary_key=True)
    name: Mapped[str] = mapped_column(String(120))
    level: Mapped[str] = mapped_column(String(40), default="private")
    maneuver: Mapped[str | None] = mapped_column(String(20))  # None: every maneuver kind
    airspeed_tol_kt: Mapped[float] = mapped_column(Float, default=5.0)
    touchdown_speed_max_kt: Mapped[float | None] = mapped_column(Float)  # None: the type's maximum
    touchdown_point_ft: Mapped[float] = mapped_column(Float, default=200.0)
    heading_tol_deg: Mapped[float] = mapped_column(Float, default=10.0)
    consecutive_needed: Mapped[int] = mapped_column(Integer, default=3)
    threshold: Mapped[float] = mapped_column(Float, default=80.0)
    decay_days: Mapped[int] = mapped_column(Integer, default=90)
    weights: Mapped[dict] = mapped_column(JSON, default=dict)  # empty: the default weights
    active: Mapped[bool] = mapped_column(Boolean, default=True)
    supersedes_id: Mapped[int | None] = mapped_column(ForeignKey("standards.id"))
    created_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)


class Program(Base):
    __tablename__ = "programs"

    id: Mapped[int] = mapped_column(primary_key=True)
    name: Mapped[str] = mapped_column(String(120), unique=True)
    level: Mapped[str] = mapped_column(String(40), default="private")
    description: Mapped[str] = mapped_column(Text, default="")

    stages: Mapped[list["Stage"]] = relationship(
        back_populates="program", order_by="Stage.position", cascade="all, delete-orphan"
    )


class Stage(Base):
    __tablename__ = "stages"

    id: Mapped[int] = mapped_column(primary_key=True)
    program_id: Mapped[int] = mapped_column(ForeignKey("programs.id", ondelete="CASCADE"), index=True)
    position: Mapped[int] = mapped_column(Integer)
    name: Mapped[str] = mapped_column(String(120))

    program: Mapped[Program] = relationship(back_populates="stages")
    lessons: Mapped[list["Lesson"]] = relationship(
        back_populates="stage", order_by="Lesson.position", cascade="all, delete-orphan"
    )


class Lesson(Base):
    __tablename__ = "lessons"

    id: Mapped[int] = mapped_column(primary_key=True)
    stage_id: Mapped[int] = mapped_column(ForeignKey("stages.id", ondelete="CASCADE"), index=True)
    position: Mapped[int] = mapped_column(Integer)
    name: Mapped[str] = mapped_column(String(120))

    stage: Mapped[Stage] = relationship(back_populates="lessons")
    requirements: Mapped[list["LessonRequirement"]] = relationship(
        back_populates="lesson", cascade="all, delete-orphan"
    )


class LessonRequirement(Base):
    """What a lesson asks: so many attempts of one kind and termination at a standard."""

    __tablename__ = "lesson_requirements"

    id: Mapped[int] = mapped_column(primary_key=True)
    lesson_id: Mapped[int] = mapped_column(ForeignKey("lessons.id", ondelete="CASCADE"), index=True)
    maneuver: Mapped[str] = mapped_column(String(20))
    termination: Mapped[str] = mapped_column(String(20))
    standard_id: Mapped[int | None] = mapped_column(ForeignKey("standards.id"))
    attempts_needed: Mapped[int] = mapped_column(Integer, default=3)

    lesson: Mapped[Lesson] = relationship(back_populates="requirements")


class Enrolment(Base):
    __tablename__ = "enrolments"

    id: Mapped[int] = mapped_column(primary_key=True)
    program_id: Mapped[int] = mapped_column(ForeignKey("programs.id"), index=True)
    student_id: Mapped[int] = mapped_column(ForeignKey("people.id"), index=True)
    instructor_id: Mapped[int | None] = mapped_column(ForeignKey("people.id"), index=True)  # usual instructor
    # The instructor a chief pilot assigned to sign this student's stage checks; they see the student's records.
    check_instructor_id: Mapped[int | None] = mapped_column(ForeignKey("people.id"), index=True, default=None)
    started_on: Mapped[date] = mapped_column(Date)
    active: Mapped[bool] = mapped_column(Boolean, default=True)


class LessonCompletion(Base):
    __tablename__ = "lesson_completions"

    id: Mapped[int] = mapped_column(primary_key=True)
    enrolment_id: Mapped[int] = mapped_column(ForeignKey("enrolments.id", ondelete="CASCADE"), index=True)
    lesson_id: Mapped[int] = mapped_column(ForeignKey("lessons.id"))
    confirmed_by_id: Mapped[int] = mapped_column(ForeignKey("people.id"))
    confirmed_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)


class StageCheck(Base):
    """A stage check, signed by a chief pilot or the enrolment's assigned check instructor."""

    __tablename__ = "stage_checks"

    id: Mapped[int] = mapped_column(primary_key=True)
    enrolment_id: Mapped[int] = mapped_column(ForeignKey("enrolments.id", ondelete="CASCADE"), index=True)
    stage_id: Mapped[int] = mapped_column(ForeignKey("stages.id"))
    checker_id: Mapped[int] = mapped_column(ForeignKey("people.id"))
    passed: Mapped[bool] = mapped_column(Boolean)
    remarks: Mapped[str] = mapped_column(Text, default="")
    signed_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)
