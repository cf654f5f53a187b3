"""Shapes of tracks and their detections in the API."""
from datetime import datetime
from typing import Literal

from pydantic import BaseModel, ConfigDict, Field, model_validator

from server.logbook.schemas import Maneuver, Termination


class DetectionRead(BaseModel):
    """One practice autorotation found in a track; a figure that could not be measured is null, with the
    reason in `unmeasured`; `uncertainty` holds the 95 % ± of each measured figure."""

    index: int
    start_at: datetime
    end_at: datetime
    flare_at: datetime | None
    termination: Literal["power_recovery", "ground"]
    entry_height_ft: float | None
    entry_groundspeed_kt: float | None
    descent_groundspeed_kt: float | None
    descent_rate_fpm: float | None
    flare_height_ft: float | None
    recovery_height_ft: float | None
    touchdown_speed_kt: float | None
    point_error_ft: float | None
    track_error_deg: float | None
    landing_dir_deg: float | None
    uncertainty: dict[str, float]
    unmeasured: dict[str, str]


class TrackRead(BaseModel):
    id: int
    sortie_id: int
    filename: str
    format: Literal["gpx", "nmea", "igc", "csv"]
    sha256: str
    size_bytes: int
    points: int
    sample_rate_hz: float
    started_at: datetime
    ended_at: datetime
    has_doppler_speed: bool
    ground_ref: Literal["on_ground_readings", "site_elevation"]
    notes: list[str]
    detections: list[DetectionRead]


class AcceptRequest(BaseModel):
    """Fill an existing attempt (`attempt_id`) or a new one (`maneuver`; `termination` for an end at the ground)."""

    model_config = ConfigDict(extra="forbid")
    attempt_id: int | None = None
    maneuver: Maneuver | None = None
    termination: Termination | None = Field(default=None)

    @model_validator(mode="after")
    def _which(self):
        if self.attempt_id is None and self.maneuver is None:
            raise ValueError("give attempt_id to fill an attempt, or maneuver (and termination) for a new one")
        return self
