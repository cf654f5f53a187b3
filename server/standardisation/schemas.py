"""Shapes of the standardisation report in the API."""
from datetime import date
from typing import Literal

from pydantic import BaseModel, ConfigDict, Field

from server.compute.standardisation import ENOUGH_GRADED, Tally

# An empty value (as a form's "every maneuver" choice sends it) means any.
ManeuverOrAny = Literal["straight_in", "turn_180", "turn_360", "hovering", ""] | None
TerminationOrAny = Literal["power_recovery", "to_hover", "touchdown", ""] | None
Show = Literal["attempts", "graded", "agree", "lenient", "strict"]
Scope = Literal["all", "shared", "peers"]
TOO_FEW = f"Too few to judge: fewer than {ENOUGH_GRADED} graded attempts with figures to compare."


class TallyRead(BaseModel):
    attempts: int
    graded: int = Field(description="graded satisfactory or unsatisfactory, with figures to compare")
    agree: int
    lenient: int = Field(description="graded satisfactory although not inside every tolerance")
    strict: int = Field(description="graded unsatisfactory although inside every tolerance")
    agreement_pct: float | None
    lenient_pct: float | None
    strict_pct: float | None
    mean_score: float | None
    mean_score_ci95: list[float] | None = Field(description="Student-t 95 % interval of the mean score")
    scored: int = Field(description="attempts with a score, which the mean rests on")
    graded_no_figures: int = Field(description="graded without any recorded figure: nothing to compare")
    enough_to_judge: bool
    note: str | None = None

    @classmethod
    def of(cls, result: Tally) -> "TallyRead":
        interval = result.mean_score_ci95
        return cls(
            attempts=result.attempts, graded=result.graded, agree=result.agree, lenient=result.lenient,
            strict=result.strict, agreement_pct=result.agreement_pct, lenient_pct=result.lenient_pct,
            strict_pct=result.strict_pct,
            mean_score=None if result.mean_score is None else round(result.mean_score, 1),
            mean_score_ci95=None if interval is None else [round(interval[0], 1), round(interval[1], 1)],
            scored=result.scored, graded_no_figures=result.graded_no_figures, enough_to_judge=result.enough,
            note=None if result.enough else TOO_FEW,
        )


class CellRead(BaseModel):
    maneuver: str
    termination: str
    level: str


class InstructorRowRead(TallyRead):
    instructor_id: int
    name: str
    shared: TallyRead = Field(description="this instructor on the kinds and levels shared with another")
    peers_shared: TallyRead = Field(description="the other instructors on those same kinds and levels")
    shared_cells: list[CellRead]


class StandardisationRead(BaseModel):
    model_config = ConfigDict(validate_by_name=True, validate_by_alias=True)

    date_from: date = Field(serialization_alias="from", validation_alias="from")
    date_to: date = Field(serialization_alias="to", validation_alias="to")
    maneuver: str | None
    termination: str | None
    min_graded_to_judge: int = ENOUGH_GRADED
    school: TallyRead
    rows: list[InstructorRowRead]
    caution: str


class AttemptBehindRead(BaseModel):
    attempt_id: int
    sortie_id: int
    flown_on: date
    pilot_id: int
    pilot_name: str
    instructor_id: int | None
    instructor_name: str | None
    maneuver: str
    termination: str
    grade: str | None
    score: float | None
    within_tolerances: bool
    takeover: bool
    outcome: str | None


class AttemptsBehindRead(BaseModel):
    attempts: list[AttemptBehindRead]
    truncated: bool
