"""Shapes of the safety digest in the API."""
from datetime import date
from typing import Literal

from pydantic import BaseModel

from server.logbook.schemas import FlagRead

# The same names as server.safety.service.DIMENSIONS and FLAG_CODES (a test keeps them equal).
Dimension = Literal["instructor", "aircraft", "site", "da_band", "month"]
FlagCode = Literal["nr_limits", "takeover", "hv_avoid", "fast_touchdown"]
# What a list of attempts can be asked for: a flag, or flares begun outside the expected band.
Category = Literal["nr_limits", "takeover", "hv_avoid", "fast_touchdown", "flare_band"]


class DigestRowRead(BaseModel):
    key: str
    label: str
    attempts: int
    counts: dict[str, int]
    per_100: dict[str, float | None]


class DigestRead(BaseModel):
    date_from: date
    date_to: date
    flag_labels: dict[str, str]
    total: DigestRowRead
    by: dict[str, list[DigestRowRead]]
    caution: str


class FlaggedAttemptRead(BaseModel):
    attempt_id: int
    sortie_id: int
    sequence: int
    flown_on: date
    pilot_id: int
    pilot_name: str
    instructor_id: int | None
    instructor_name: str | None
    aircraft_registration: str
    site_name: str
    density_altitude_ft: float | None
    maneuver: str
    termination: str
    score: float | None
    flags: list[FlagRead]


class FlaggedAttemptsRead(BaseModel):
    attempts: list[FlaggedAttemptRead]
    truncated: bool
