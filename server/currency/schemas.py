"""Shapes of currency rules, currency answers and calendar feed links (DESIGN section 6)."""
from datetime import date
from typing import Literal

from pydantic import BaseModel, ConfigDict, Field, model_validator

from server.people.schemas import Role
from server.vocabulary import Maneuver, Termination

Status = Literal["current", "due_soon", "lapsed", "never"]


class RuleFields(BaseModel):
    """Everything a chief pilot says about a rule; empty lists mean "any", None means "no condition"."""

    name: str = Field(min_length=1, max_length=120)
    applies_to_roles: list[Role] = Field(default_factory=list)
    applies_to_people: list[int] = Field(default_factory=list)
    maneuvers: list[Maneuver] = Field(default_factory=list)
    terminations: list[Termination] = Field(default_factory=list)
    type_ids: list[int] = Field(default_factory=list)
    with_instructor: bool | None = None
    min_score: float | None = Field(default=None, ge=0, le=100)
    require_satisfactory: bool = True
    window_days: int | None = Field(default=None, ge=1, le=3660)
    window_months: int | None = Field(default=None, ge=1, le=120)
    min_count: int = Field(default=1, ge=1, le=100)
    warn_days: int = Field(default=14, ge=0, le=365)


class RuleCreate(RuleFields):
    model_config = ConfigDict(extra="forbid")

    @model_validator(mode="after")
    def _one_window(self):
        if (self.window_days is None) == (self.window_months is None):
            raise ValueError("give the window in days (window_days) or in calendar months (window_months), "
                             "exactly one of the two")
        if not self.name.strip():
            raise ValueError("a rule needs a name")
        return self


class RuleUpdate(BaseModel):
    """Any subset of the fields; setting one window kind clears the other."""

    model_config = ConfigDict(extra="forbid")
    name: str | None = Field(default=None, min_length=1, max_length=120)
    applies_to_roles: list[Role] | None = None
    applies_to_people: list[int] | None = None
    maneuvers: list[Maneuver] | None = None
    terminations: list[Termination] | None = None
    type_ids: list[int] | None = None
    with_instructor: bool | None = None
    min_score: float | None = Field(default=None, ge=0, le=100)
    require_satisfactory: bool | None = None
    window_days: int | None = Field(default=None, ge=1, le=3660)
    window_months: int | None = Field(default=None, ge=1, le=120)
    min_count: int | None = Field(default=None, ge=1, le=100)
    warn_days: int | None = Field(default=None, ge=0, le=365)


class RuleRead(RuleFields):
    id: int
    describe: str = Field(description="the qualifying attempts in words")


class CurrencyRead(BaseModel):
    """One person's standing under one rule on the as-of date."""

    rule_id: int
    rule_name: str
    status: Status
    current_until: date | None
    qualifying_count: int
    needed: int
    remedy: str


class BoardRowRead(CurrencyRead):
    person_id: int
    name: str
    roles: list[str]


class PersonCurrencyRead(BaseModel):
    person_id: int
    as_of: date
    rules: list[CurrencyRead]


class BoardRead(BaseModel):
    as_of: date
    rows: list[BoardRowRead]


class FeedCreate(BaseModel):
    model_config = ConfigDict(extra="forbid")
    person_id: int | None = Field(default=None, description="whose due dates; null for the whole school")


class FeedRead(BaseModel):
    id: int
    person_id: int | None
    person_name: str | None
    created_at: str
    revoked: bool
    url: str | None = Field(default=None, description="shown once, when the link is made")
