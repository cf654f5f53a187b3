"""Shapes of programs (syllabi) and enrolments."""
from datetime import date

from typing import Annotated

from pydantic import BaseModel, ConfigDict, Field, StringConstraints

from server.vocabulary import Maneuver, Termination

# Surrounding spaces are dropped before the length is checked, so a blank name is refused.
Name = Annotated[str, StringConstraints(strip_whitespace=True, min_length=1, max_length=120)]
Level = Annotated[str, StringConstraints(strip_whitespace=True, min_length=1, max_length=40)]


class RequirementWrite(BaseModel):
    model_config = ConfigDict(extra="forbid")
    id: int | None = Field(default=None, description="keep an existing requirement; leave out for a new one")
    maneuver: Maneuver
    termination: Termination
    standard_id: int | None = Field(default=None, description="the standard the attempts must meet; none: as scored")
    attempts_needed: int = Field(default=3, ge=1, le=500)


class LessonWrite(BaseModel):
    model_config = ConfigDict(extra="forbid")
    id: int | None = None
    name: Name
    requirements: list[RequirementWrite] = Field(default_factory=list, max_length=20)


class StageWrite(BaseModel):
    model_config = ConfigDict(extra="forbid")
    id: int | None = None
    name: Name
    lessons: list[LessonWrite] = Field(default_factory=list, max_length=50)


class ProgramWrite(BaseModel):
    """A whole syllabus: stages in order, their lessons in order, and what each lesson asks."""

    model_config = ConfigDict(extra="forbid")
    name: Name
    level: Level = Field(default="private",
                         description="the program level that picks the standards, e.g. private or recurrent")
    description: str = Field(default="", max_length=4000)
    stages: list[StageWrite] = Field(default_factory=list, max_length=30)


class RequirementRead(BaseModel):
    id: int
    maneuver: str
    termination: str
    standard_id: int | None
    attempts_needed: int


class LessonRead(BaseModel):
    id: int
    position: int
    name: str
    requirements: list[RequirementRead]


class StageRead(BaseModel):
    id: int
    position: int
    name: str
    lessons: list[LessonRead]


class ProgramRead(BaseModel):
    id: int
    name: str
    level: str
    description: str
    stages: list[StageRead]


class EnrolmentCreate(BaseModel):
    model_config = ConfigDict(extra="forbid")
    student_id: int
    instructor_id: int | None = Field(default=None, description="the student's usual instructor")
    check_instructor_id: int | None = Field(
        default=None, description="the instructor who signs this student's stage checks (not the usual one)")
    started_on: date


class CheckInstructorAssign(BaseModel):
    model_config = ConfigDict(extra="forbid")
    check_instructor_id: int | None = Field(description="the instructor who signs stage checks; null: none assigned")


class EnrolmentRead(BaseModel):
    id: int
    program_id: int
    student_id: int
    instructor_id: int | None
    check_instructor_id: int | None = None
    started_on: date
    active: bool
