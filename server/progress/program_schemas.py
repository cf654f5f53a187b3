"""Shapes of a student's progress through their program, lesson confirmations and stage checks."""
from datetime import datetime

from pydantic import BaseModel, ConfigDict, Field

from server.training.program_schemas import EnrolmentRead


class RequirementProgressRead(BaseModel):
    requirement_id: int
    maneuver: str
    termination: str
    attempts_needed: int
    attempts_counted: int
    met: bool


class LessonProgressRead(BaseModel):
    lesson_id: int
    name: str
    requirements: list[RequirementProgressRead]
    attempts_met: bool = Field(description="every requirement met by counted attempts")
    confirmed_by_id: int | None
    confirmed_at: datetime | None


class StageProgressRead(BaseModel):
    stage_id: int
    name: str
    lessons: list[LessonProgressRead]
    check_passed: bool
    checked_by_id: int | None
    checked_at: datetime | None


class ProgressRead(BaseModel):
    enrolment: EnrolmentRead
    program_name: str
    stages: list[StageProgressRead]
    current_stage_id: int | None
    current_lesson_id: int | None


class StageCheckCreate(BaseModel):
    model_config = ConfigDict(extra="forbid")
    stage_id: int
    passed: bool
    remarks: str = Field(default="", max_length=4000)
    password: str = Field(min_length=1, max_length=1000, description="the checker's password, re-entered to sign")


class StageCheckRead(BaseModel):
    id: int
    enrolment_id: int
    stage_id: int
    checker_id: int
    passed: bool
    remarks: str
    signed_at: datetime
