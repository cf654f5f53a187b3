"""Shapes of standards in the API and the standards form: tolerances and weights per maneuver and level."""
from datetime import datetime

from pydantic import BaseModel, ConfigDict, Field, field_validator, model_validator

from server.compute.scoring import DEFAULT_WEIGHTS, Tolerances
from server.vocabulary import Maneuver


class StandardBase(BaseModel):
    name: str = Field(min_length=1, max_length=120)
    level: str = Field(min_length=1, max_length=40, description="program level, e.g. private or recurrent")
    maneuver: Maneuver | None = Field(default=None, description="null: every maneuver kind at this level")
    airspeed_tol_kt: float = Field(default=5.0, ge=0, le=30)
    touchdown_speed_max_kt: float | None = Field(default=None, ge=0, le=40,
                                                 description="null: the helicopter type's maximum")
    touchdown_point_ft: float = Field(default=200.0, ge=0, le=2000)
    heading_tol_deg: float = Field(default=10.0, ge=0, le=90)
    consecutive_needed: int = Field(default=3, ge=1, le=20)
    threshold: float = Field(default=80.0, ge=0, le=100, description="trend score needed to be at standard")
    decay_days: int = Field(default=90, ge=1, le=730)
    weights: dict[str, float] = Field(default_factory=lambda: dict(DEFAULT_WEIGHTS),
                                      description="per metric; metrics left out keep the default weight")

    @field_validator("level")
    @classmethod
    def _level(cls, level: str) -> str:
        return level.strip().lower()

    @model_validator(mode="after")
    def _weights(self):
        # The scoring core knows the metrics and their rules; asking it keeps one set of rules.
        self.weights = DEFAULT_WEIGHTS | self.weights
        Tolerances(airspeed_kt=self.airspeed_tol_kt, touchdown_speed_max_kt=self.touchdown_speed_max_kt,
                   touchdown_point_ft=self.touchdown_point_ft, heading_deg=self.heading_tol_deg,
                   weights=self.weights)
        return self


class StandardCreate(StandardBase):
    model_config = ConfigDict(extra="forbid")


class StandardUpdate(BaseModel):
    """Fields to change; the edit becomes a new standard that supersedes this one."""

    model_config = ConfigDict(extra="forbid")
    name: str | None = None
    level: str | None = None
    maneuver: Maneuver | None = None
    airspeed_tol_kt: float | None = None
    touchdown_speed_max_kt: float | None = None
    touchdown_point_ft: float | None = None
    heading_tol_deg: float | None = None
    consecutive_needed: int | None = None
    threshold: float | None = None
    decay_days: int | None = None
    weights: dict[str, float] | None = None


class StandardRead(StandardBase):
    id: int
    active: bool
    supersedes_id: int | None
    superseded_by_id: int | None
    created_at: datetime
